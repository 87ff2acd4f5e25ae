package app

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/microphys"
)

// writeRandomSwath writes a processed-like swath (the layout of 'warmrain process'
// outputs: time = 1, y, x with 2-D latitude and longitude) of random columns around
// (lat0, lon0), longitudes in 0..360 when east360, with time_bnds when bnds. Random
// test data, not physics: the tests check the binning, not the values.
func writeRandomSwath(t *testing.T, path string, seed uint64, ny, nx int, lat0, lon0, t0 float64, east360, bnds bool) {
	t.Helper()
	rng := rand.New(rand.NewPCG(seed, 99))
	n := ny * nx
	lat, lon := make([]float64, n), make([]float64, n)
	lwp, nd, pop, rate, crit := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
	qc := make([]int16, n)
	for y := 0; y < ny; y++ {
		for x := 0; x < nx; x++ {
			k := y*nx + x
			la := lat0 + 0.05*float64(y) + 0.015*float64(x)
			lo := math.Mod(lon0+0.06*float64(x)-0.01*float64(y)+540, 360) - 180
			if east360 && lo < 0 {
				lo += 360
			}
			lat[k], lon[k] = la, lo
			lwp[k] = 40 + 150*rng.Float64()
			nd[k] = 20 + 300*rng.Float64()
			pop[k] = rng.Float64()
			rate[k] = 2 * rng.ExpFloat64()
			crit[k] = 60 + 60*rng.Float64()
			switch {
			case k%31 == 0:
				lat[k], lon[k] = math.NaN(), math.NaN() // a pixel without geolocation
			case k%13 == 0:
				qc[k] = int16(microphys.QCThinCloud)
			case k%17 == 0:
				qc[k] = int16(microphys.QCPossibleIce)
			case k%19 == 0:
				nd[k] = math.NaN()
			}
		}
	}
	var masks []int16
	var words []string
	for _, f := range microphys.QCFlags {
		if f.Bit <= 1<<14 {
			masks = append(masks, int16(f.Bit))
			words = append(words, f.Name)
		}
	}
	a := func(name string, v any) grid.Attr { return grid.Attr{Name: name, Value: v} }
	dims := []string{"time", "y", "x"}
	fvar := func(name, units string, d []float64) grid.VarSpec {
		return grid.VarSpec{Name: name, Dims: dims, Type: grid.Float, Data: d,
			Attrs: []grid.Attr{a("_FillValue", []float32{-999}), a("units", units), a("coordinates", "lat lon")}}
	}
	tattrs := []grid.Attr{a("standard_name", "time"), a("units", "seconds since 1970-01-01 00:00:00"), a("calendar", "standard")}
	ds := &grid.Dataset{
		Dims: []grid.DimSpec{{Name: "time", Len: 1}, {Name: "y", Len: ny}, {Name: "x", Len: nx}, {Name: "nv", Len: 2}},
		Vars: []grid.VarSpec{
			{Name: "lat", Dims: []string{"y", "x"}, Type: grid.Double, Data: lat, Attrs: []grid.Attr{a("_FillValue", []float64{-999}), a("standard_name", "latitude"), a("units", "degrees_north")}},
			{Name: "lon", Dims: []string{"y", "x"}, Type: grid.Double, Data: lon, Attrs: []grid.Attr{a("_FillValue", []float64{-999}), a("standard_name", "longitude"), a("units", "degrees_east")}},
			fvar("liquid_water_path", "g m-2", lwp),
			fvar("droplet_number", "cm-3", nd),
			fvar("drizzle_probability", "1", pop),
			fvar("cloud_base_drizzle_rate", "mm day-1", rate),
			fvar("critical_lwp", "g m-2", crit),
			{Name: "warm_rain_qc", Dims: dims, Type: grid.Short, Data: qc,
				Attrs: []grid.Attr{a("standard_name", "quality_flag"), a("flag_masks", masks), a("flag_meanings", strings.Join(words, " "))}},
		},
		Globals: []grid.Attr{a("Conventions", "CF-1.13 ACDD-1.3"), a("warmrain_parameter_autoconversion", "KK2000")},
	}
	if bnds {
		tattrs = append(tattrs, a("bounds", "time_bnds"))
		ds.Vars = append(ds.Vars, grid.VarSpec{Name: "time_bnds", Dims: []string{"time", "nv"}, Type: grid.Double, Data: []float64{t0 - 150, t0 + 150}})
	}
	ds.Vars = append(ds.Vars, grid.VarSpec{Name: "time", Dims: []string{"time"}, Type: grid.Double, Data: []float64{t0}, Attrs: tattrs})
	if err := grid.WriteDataset(path, ds, false); err != nil {
		t.Fatal(err)
	}
}

// threeSwaths writes three swaths on different pixel grids crossing 180° (longitudes
// in 0..360, -180..180 and -180..180) into dir.
func threeSwaths(t *testing.T, dir string) []string {
	t.Helper()
	var out []string
	for k, c := range []struct {
		ny, nx     int
		lat0, lon0 float64
		e360       bool
	}{{40, 30, -22, 178.5, true}, {35, 45, -21.5, -179.2, false}, {25, 20, -20.8, 179.6, false}} {
		p := filepath.Join(dir, "swath"+itoa(k)+".nc")
		writeRandomSwath(t, p, uint64(k+1), c.ny, c.nx, c.lat0, c.lon0, 1.79e9+float64(k)*3600, c.e360, k != 2)
		out = append(out, p)
	}
	return out
}

func mustRun(t *testing.T, args ...string) string {
	t.Helper()
	code, stdout, stderr := runCmd(args...)
	if code != 0 {
		t.Fatalf("warmrain %s: exit %d\n%s", strings.Join(args, " "), code, stderr)
	}
	return stdout
}

// gridSummaryVars reads every gridded variable of a summary file.
func gridSummaryVars(t *testing.T, path string) map[string][]float64 {
	t.Helper()
	fi, err := grid.Describe(path)
	if err != nil {
		t.Fatal(err)
	}
	out := map[string][]float64{}
	for _, v := range fi.Vars {
		if len(v.Dims) == 2 && v.Dims[0] == "lat" && v.Dims[1] == "lon" || v.Name == "lat" || v.Name == "lon" {
			out[v.Name] = readVar(t, path, v.Name)
		}
	}
	return out
}

// TestSummaryGridSwaths bins three random swaths on different grids across 180° with
// --grid and compares counts, means, standard deviations, screened fractions and the
// drizzle frequency with numpy reading the processed files itself; the file passes the
// CF lint, keeps the per-column units, never summarises latitude or longitude, and its
// time bounds are the union of the inputs'. The same files in another order, and
// partial summaries merged, give bit-identical gridded variables.
func TestSummaryGridSwaths(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	dir := t.TempDir()
	in := threeSwaths(t, dir)
	out := filepath.Join(dir, "g.nc")
	pics := filepath.Join(dir, "p")
	mustRun(t, append(append([]string{"summary"}, in...), "--grid", "0.5", "--drizzle-pop", "0.3", "-o", out, "--plots", pics)...)
	lintSummary(t, out)
	g := gridSummaryVars(t, out)
	for name := range g {
		if strings.HasPrefix(name, "lat_") || strings.HasPrefix(name, "lon_") {
			t.Errorf("%s: latitude or longitude summarised as a diagnostic", name)
		}
	}
	fi, _ := grid.Describe(out)
	if u := fi.Var("droplet_number_cell_mean").Text("units"); u != "cm-3" {
		t.Errorf("droplet_number_cell_mean units %q, want the per-column file's cm-3", u)
	}
	if u := fi.Var("nd_bin").Text("units"); u != "cm-3" {
		t.Errorf("nd_bin units %q, want cm-3", u)
	}
	tb := readVar(t, out, "time_bnds")
	// swaths 0 and 1 have time_bnds t0 ± 150 s; swath 2 has none and one step: an
	// instant at its time (the union is then 1.79e9-150 .. 1.79e9+7200).
	if tb[0] != 1.79e9-150 || tb[1] != 1.79e9+7200 {
		t.Errorf("time_bnds %v, want [%v %v]", tb, 1.79e9-150, 1.79e9+7200.0)
	}
	if lon := g["lon"]; lon[0] > 180 || lon[len(lon)-1] < 180 || len(lon) > 20 {
		t.Errorf("lon %v: want the short arc of cells across 180°", lon)
	}
	checkPNG(t, filepath.Join(pics, "map_drizzle_probability_mean.png"), 900, 600)

	// numpy, reading the processed files.
	py := `import sys, json, numpy as np, netCDF4
step = 0.5; thin = int(sys.argv[1]); ice = int(sys.argv[2]); out = {}
cols = {}
for p in sys.argv[3:]:
    ds = netCDF4.Dataset(p); ds.set_auto_mask(False)
    g = lambda n: ds[n][:].astype(float).ravel()
    lat, lon, qc = g("lat"), g("lon"), ds["warm_rain_qc"][:].astype(np.int64).ravel()
    lat[lat == -999] = np.nan; lon[lon == -999] = np.nan
    d = {n: g(n) for n in ("liquid_water_path", "droplet_number", "drizzle_probability")}
    for v in d.values(): v[v == -999] = np.nan
    for k in ["lat", "lon", "qc"] + list(d): cols.setdefault(k, []).append({"lat": lat, "lon": lon, "qc": qc}.get(k, d.get(k)))
c = {k: np.concatenate(v) for k, v in cols.items()}
ok = np.isfinite(c["lat"]) & np.isfinite(c["lon"])
row = np.minimum(np.floor((c["lat"] + 90) / step), 359)
col = np.floor(np.mod(c["lon"] + 180, 360) / step)
cell = np.where(ok, row * 720 + col, -1)
for k in np.unique(cell[ok]):
    m = cell == k; valid = m & ((c["qc"] & (thin | ice)) == 0)
    r = {"columns": int(m.sum()), "thin": float((m & ((c["qc"] & thin) != 0)).sum() / m.sum())}
    for n in ("liquid_water_path", "droplet_number", "drizzle_probability"):
        v = c[n][valid]; v = v[np.isfinite(v)]
        r[n] = [int(v.size), float(v.mean()) if v.size else None, float(v.std(ddof=1)) if v.size > 1 else None]
    p = c["drizzle_probability"][valid]; p = p[np.isfinite(p)]
    r["freq"] = float((p > 0.3).mean()) if p.size else None
    out["%g %g" % (-90 + (row[m][0] + 0.5) * step, -180 + (col[m][0] + 0.5) * step)] = r
json.dump(out, sys.stdout)`
	if exec.Command("/usr/bin/python3", "-c", "import netCDF4, numpy").Run() != nil {
		skipOrFailMissing(t, "/usr/bin/python3 with numpy and netCDF4")
	}
	b, err := exec.Command("/usr/bin/python3", append([]string{"-c", py, itoa(int(microphys.QCThinCloud)), itoa(int(microphys.QCPossibleIce))}, in...)...).Output()
	if err != nil {
		t.Fatalf("numpy: %v", err)
	}
	var want map[string]map[string]any
	if err := json.Unmarshal(b, &want); err != nil {
		t.Fatal(err)
	}
	lat, lon := g["lat"], g["lon"]
	cells := 0
	for i := range lat {
		for j := range lon {
			o := i*len(lon) + j
			if g["cell_column_count"][o] == 0 {
				continue
			}
			cells++
			l := lon[j]
			if l >= 180 {
				l -= 360
			}
			key := strings.TrimSpace(formatG(lat[i]) + " " + formatG(l))
			w, ok := want[key]
			if !ok {
				t.Fatalf("cell %s has %g columns; numpy has none there", key, g["cell_column_count"][o])
			}
			if w["columns"].(float64) != g["cell_column_count"][o] {
				t.Errorf("cell %s: %g columns, numpy %v", key, g["cell_column_count"][o], w["columns"])
			}
			if got := g["screened_fraction_thin_cloud"][o]; math.Abs(got-w["thin"].(float64)) > 1e-6 {
				t.Errorf("cell %s: thin_cloud fraction %g, numpy %v", key, got, w["thin"])
			}
			for _, n := range []string{"liquid_water_path", "droplet_number", "drizzle_probability"} {
				wv := w[n].([]any)
				if g[n+"_cell_count"][o] != wv[0].(float64) {
					t.Errorf("cell %s %s: count %g, numpy %v", key, n, g[n+"_cell_count"][o], wv[0])
				}
				// float32 storage of the summary: 1e-6 relative (common practice).
				if wv[1] != nil && math.Abs(g[n+"_cell_mean"][o]-wv[1].(float64)) > 1e-6*math.Abs(wv[1].(float64)) {
					t.Errorf("cell %s %s: mean %g, numpy %v", key, n, g[n+"_cell_mean"][o], wv[1])
				}
				if wv[2] != nil && math.Abs(g[n+"_cell_standard_deviation"][o]-wv[2].(float64)) > 1e-5*math.Abs(wv[2].(float64)) {
					t.Errorf("cell %s %s: sd %g, numpy %v", key, n, g[n+"_cell_standard_deviation"][o], wv[2])
				}
			}
			if w["freq"] != nil && math.Abs(g["drizzle_frequency_pop"][o]-w["freq"].(float64)) > 1e-6 {
				t.Errorf("cell %s: drizzle frequency %g, numpy %v", key, g["drizzle_frequency_pop"][o], w["freq"])
			}
		}
	}
	if cells != len(want) || cells < 20 {
		t.Errorf("%d cells with columns, numpy %d", cells, len(want))
	}

	// Another order, and partial summaries merged: bit-identical gridded variables.
	rev := filepath.Join(dir, "rev.nc")
	mustRun(t, "summary", in[2], in[0], in[1], "--grid", "0.5", "--drizzle-pop", "0.3", "-o", rev)
	p1, p2, merged := filepath.Join(dir, "p1.nc"), filepath.Join(dir, "p2.nc"), filepath.Join(dir, "m.nc")
	mustRun(t, "summary", in[1], "--grid", "0.5", "--drizzle-pop", "0.3", "--partial", "-o", p1)
	mustRun(t, "summary", in[2], in[0], "--grid", "0.5", "--drizzle-pop", "0.3", "--partial", "-o", p2)
	mustRun(t, "summary", "--merge", p2, p1, "-o", merged)
	lintSummary(t, merged)
	for _, other := range []string{rev, merged} {
		h := gridSummaryVars(t, other)
		if len(h) != len(g) {
			t.Fatalf("%s: %d gridded variables, single pass %d", other, len(h), len(g))
		}
		for name, d := range g {
			for i := range d {
				if math.Float64bits(d[i]) != math.Float64bits(h[name][i]) {
					t.Fatalf("%s: %s[%d] = %v, single pass in the given order %v", filepath.Base(other), name, i, h[name][i], d[i])
				}
			}
		}
	}
	// The tile bootstrap merges too: its weights follow from the seed, the file and the
	// tile, not from the order (cmd/internal/summary tiles).
	b1, b2, bm := filepath.Join(dir, "b1.nc"), filepath.Join(dir, "b2.nc"), filepath.Join(dir, "bm.nc")
	bs := filepath.Join(dir, "bs.nc")
	boot := []string{"--bootstrap", "40", "--tile", "4", "--min-count", "5"}
	mustRun(t, append([]string{"summary", in[0], in[1], in[2], "-o", bs}, boot...)...)
	mustRun(t, append([]string{"summary", in[2], "--partial", "-o", b1}, boot...)...)
	mustRun(t, append([]string{"summary", in[1], in[0], "--partial", "-o", b2}, boot...)...)
	mustRun(t, "summary", "--merge", b1, b2, "-o", bm, "--min-count", "5")
	for _, name := range []string{"susceptibility_pop", "susceptibility_pop_bootstrap_standard_error", "susceptibility_pop_bootstrap_count"} {
		a, b := readVar(t, bs, name), readVar(t, bm, name)
		finite := 0
		for i := range a {
			if !math.IsNaN(a[i]) {
				finite++
			}
			if !(math.IsNaN(a[i]) && math.IsNaN(b[i])) && math.Abs(a[i]-b[i]) > 1e-9*math.Abs(a[i]) {
				t.Errorf("%s[%d]: merged %v, single pass %v", name, i, b[i], a[i])
			}
		}
		if finite == 0 {
			t.Errorf("%s: no finite value; the bootstrap comparison checks nothing", name)
		}
	}

	// The joint statistics of the merge agree with the single pass (to rounding).
	for _, name := range []string{"column_count", "drizzle_probability_mean", "cloud_base_drizzle_rate_mean"} {
		a, b := readVar(t, out, name), readVar(t, merged, name)
		for i := range a {
			if !(math.IsNaN(a[i]) && math.IsNaN(b[i])) && math.Abs(a[i]-b[i]) > 1e-12*math.Abs(a[i]) {
				t.Errorf("%s[%d]: merged %v, single pass %v", name, i, b[i], a[i])
			}
		}
	}
}

func formatG(v float64) string {
	b, _ := json.Marshal(v)
	return string(b)
}

// TestSummaryInputLists: @list, a quoted glob and a batch manifest select the same
// files as naming them.
func TestSummaryInputLists(t *testing.T) {
	dir := t.TempDir()
	in := threeSwaths(t, dir)
	want := reColumns.FindStringSubmatch(mustRun(t, append([]string{"summary"}, in...)...))
	list := filepath.Join(dir, "files.txt")
	os.WriteFile(list, []byte("# processed swaths\nswath0.nc\n\nswath1.nc\nswath2.nc\n"), 0o644)
	man := filepath.Join(dir, "warmrain-manifest.jsonl")
	var lines []string
	for i, p := range in {
		status := "done"
		if i == 1 {
			status = "skipped" // a complete output found by a resumed run
		}
		b, _ := json.Marshal(map[string]any{"input": "in" + itoa(i), "output": filepath.Base(p), "status": status})
		lines = append(lines, string(b))
	}
	b, _ := json.Marshal(map[string]any{"input": "bad", "output": "missing.nc", "status": "failed"})
	lines = append(lines, string(b))
	os.WriteFile(man, []byte(strings.Join(lines, "\n")+"\n"), 0o644)
	for _, args := range [][]string{{"@" + list}, {filepath.Join(dir, "swath*.nc")}, {"--manifest", man}} {
		got := reColumns.FindStringSubmatch(mustRun(t, append([]string{"summary"}, args...)...))
		if got == nil || want == nil || got[0] != want[0] {
			t.Errorf("summary %v: %v, naming the files %v", args, got, want)
		}
	}
	if code, _, stderr := runCmd("summary", filepath.Join(dir, "none*.nc")); code != 2 || !strings.Contains(stderr, "matches no file") {
		t.Errorf("a glob matching nothing: exit %d %q", code, stderr)
	}
}

// TestSummaryEmptySelection: a region or window that selects nothing is an error
// (exit 1) naming the data's extent; a box typed longitude-first gets the swap hint.
func TestSummaryEmptySelection(t *testing.T) {
	dir := t.TempDir()
	in := filepath.Join(dir, "s.nc")
	writeRandomSwath(t, in, 5, 20, 20, 30, 10, 1.79e9, false, true) // 30..31.3 N, 10..11.2 E
	code, stdout, stderr := runCmd("summary", in, "--region", "-10,0,10,20")
	if code != 1 || !strings.Contains(stderr, "selects no column") || !strings.Contains(stderr, "latitudes 30.") || stdout != "" {
		t.Errorf("a region beside the data: exit %d\n%s\n%s", code, stderr, stdout)
	}
	// LONMIN,LONMAX,LATMIN,LATMAX typed by mistake: 10,12 are longitudes, 29,32 latitudes.
	code, _, stderr = runCmd("summary", in, "--region", "10,12,29,32")
	if code != 1 || !strings.Contains(stderr, "try --region 29,32,10,12") {
		t.Errorf("a longitude-first box: exit %d\n%s", code, stderr)
	}
	// Longitudes out of the latitude range: refused at parsing, with the hint.
	code, _, stderr = runCmd("summary", in, "--region", "100,120,29,32")
	if code != 2 || !strings.Contains(stderr, "try --region 29,32,100,120") {
		t.Errorf("latitudes beyond 90: exit %d\n%s", code, stderr)
	}
	code, _, stderr = runCmd("summary", in, "--from", "2030-01-01")
	if code != 1 || !strings.Contains(stderr, "the data cover 2026-09-21T14:13:20Z") {
		t.Errorf("a window after the data: exit %d\n%s", code, stderr)
	}
	mustRun(t, "summary", in, "--region", "29,32,10,12") // the right box works
	// A batch task's share outside the region writes an empty partial summary (with a
	// note); merging only empty partial summaries is the error.
	part := filepath.Join(dir, "part.nc")
	code, _, stderr = runCmd("summary", in, "--region", "-10,0,10,20", "--partial", "-o", part)
	if code != 0 || !strings.Contains(stderr, "the partial summary is empty") {
		t.Errorf("an empty task share: exit %d\n%s", code, stderr)
	}
	code, _, stderr = runCmd("summary", "--merge", part)
	if code != 1 || !strings.Contains(stderr, "hold no selected column") {
		t.Errorf("merging empty partial summaries: exit %d\n%s", code, stderr)
	}
}
