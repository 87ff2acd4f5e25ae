package app

import (
	"encoding/json"
	"image"
	"image/color"
	"image/png"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/warmrain/warmrain/cmd/internal/plots"
	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/grid/cflint"
	"github.com/warmrain/warmrain/microphys"
)

// Invented POP and rate laws for the synthetic processed file (demo data, not physics):
//
//	POP = 0.05 (LWP/100 g m-2)^0.5 (N_d/100 cm-3)^-sPOP
//	R   = 0.37 mm day-1 (LWP/100 g m-2)^1.75 (N_d/100 cm-3)^-sRate
//
// With N_d log-uniform inside each N_d bin, the bin mean of N_d^-s is proportional to
// N_c^-s (the geometric bin centre), so the binned fit returns s exactly up to sampling
// noise [derived; summary package documentation]. S_I = S_R - S_POP [derived, Terai et
// al. 2012 decomposition, from memory].
const (
	sPOP  = 0.6
	sRate = 1.3
	// tolSusc bounds the sampling error of the fitted slopes for ~600 quasi-random
	// columns per bin (derived: the R2 sequence fills each bin evenly; measured error
	// below 0.01, the tolerance leaves a margin).
	tolSusc = 0.03
)

// synthColumn is one column of the synthetic scenario, in file units.
type synthColumn struct {
	lwp, nd, pop, rate, surf float64 // g m-2, cm-3, 1, mm day-1, mm day-1 (NaN = fill)
	qc                       int16
}

// synthColumnAt gives column k: LWP log-uniform in 50..400 g m-2 and N_d log-uniform
// in 20..500 cm-3 from the additive R2 low-discrepancy sequence (independent in the
// two coordinates). Every 13th column is screened (thin_cloud) but keeps finite,
// misleading values so that a summary ignoring the QC flag would be wrong; every
// 17th has only an informational bit (air_state_assumed), which must not exclude it.
func synthColumnAt(k int) synthColumn {
	const g1, g2 = 0.7548776662466927, 0.5698402909980532 // R2 sequence constants (derived: 1/phi2, 1/phi2^2)
	u1 := math.Mod(0.5+float64(k)*g1, 1)
	u2 := math.Mod(0.5+float64(k)*g2, 1)
	c := synthColumn{lwp: 50 * math.Pow(8, u1), nd: 20 * math.Pow(25, u2)}
	c.pop = 0.05 * math.Sqrt(c.lwp/100) * math.Pow(c.nd/100, -sPOP)
	c.rate = 0.37 * math.Pow(c.lwp/100, 1.75) * math.Pow(c.nd/100, -sRate)
	switch k % 4 { // surface drizzle rate
	case 0:
		c.surf = 0 // all evaporated below cloud base
	case 1:
		c.surf = 0.6 * c.rate
	case 2:
		c.surf = math.NaN()
	default:
		c.surf = 0.1 * c.rate * c.lwp / 100 // more of it survives under thicker clouds
	}
	if k%17 == 0 {
		c.qc |= int16(microphys.QCAirStateAssumed)
	}
	if k%13 == 0 {
		c.qc |= int16(microphys.QCThinCloud)
		c.pop, c.nd, c.surf = 1, 300, 20*c.rate // inside the bins: would bias the fits
	}
	return c
}

const synthNT, synthNY, synthNX = 2, 60, 80

// writeSynthProcessed writes a processed-like file (the layout of 'warmrain process'
// outputs) into dir and returns its path and the columns.
func writeSynthProcessed(t *testing.T, dir string) (string, []synthColumn) {
	t.Helper()
	n := synthNT * synthNY * synthNX
	cols := make([]synthColumn, n)
	lwp, nd, pop, rate, surf := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
	qc := make([]int16, n)
	for k := range cols {
		c := synthColumnAt(k)
		cols[k] = c
		lwp[k], nd[k], pop[k], rate[k], surf[k], qc[k] = c.lwp, c.nd, c.pop, c.rate, c.surf, c.qc
	}
	lat := make([]float64, synthNY)
	lon := make([]float64, synthNX)
	for i := range lat {
		lat[i] = -30 + 0.25*float64(i)
	}
	for i := range lon {
		lon[i] = 260 + 0.25*float64(i) // 0..360 convention
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
	fvar := func(name, units, long string, d []float64) grid.VarSpec {
		return grid.VarSpec{Name: name, Dims: []string{"time", "lat", "lon"}, Type: grid.Float, Data: d,
			Attrs: []grid.Attr{a("_FillValue", []float32{-999}), a("long_name", long), a("units", units), a("cell_methods", "time: point")}}
	}
	ds := &grid.Dataset{
		Dims: []grid.DimSpec{{Name: "time", Len: synthNT}, {Name: "lat", Len: synthNY}, {Name: "lon", Len: synthNX}},
		Vars: []grid.VarSpec{
			{Name: "time", Dims: []string{"time"}, Type: grid.Double, Data: []float64{12, 18},
				Attrs: []grid.Attr{a("standard_name", "time"), a("units", "hours since 2026-07-01 00:00:00"), a("calendar", "standard")}},
			{Name: "lat", Dims: []string{"lat"}, Type: grid.Double, Data: lat, Attrs: []grid.Attr{a("standard_name", "latitude"), a("units", "degrees_north")}},
			{Name: "lon", Dims: []string{"lon"}, Type: grid.Double, Data: lon, Attrs: []grid.Attr{a("standard_name", "longitude"), a("units", "degrees_east")}},
			fvar("liquid_water_path", "g m-2", "liquid water path", lwp),
			fvar("droplet_number", "cm-3", "cloud droplet number concentration", nd),
			fvar("drizzle_probability", "1", "probability that the column drizzles", pop),
			fvar("cloud_base_drizzle_rate", "mm day-1", "drizzle rate at cloud base", rate),
			fvar("surface_drizzle_rate", "mm day-1", "drizzle rate at the surface", surf),
			{Name: "warm_rain_qc", Dims: []string{"time", "lat", "lon"}, Type: grid.Short, Data: qc,
				Attrs: []grid.Attr{a("standard_name", "quality_flag"), a("flag_masks", masks), a("flag_meanings", strings.Join(words, " "))}},
		},
		Globals: []grid.Attr{a("Conventions", "CF-1.13 ACDD-1.3"), a("history", "2026-07-02T00:00:00Z: synthetic test file"),
			a("warmrain_parameter_onset_effective_radius", "1.4e-05"), a("warmrain_parameter_gamma_shape", "2"),
			a("warmrain_parameter_autoconversion", "KK2000")},
	}
	// Retrieval standard errors linked through ancillary_variables (doc/netcdf.md):
	// constant, 0.02 for POP and 0.1 mm day-1 for the rate, so every bin's mean is known.
	sePOP, seRate := make([]float64, n), make([]float64, n)
	for k := range sePOP {
		sePOP[k], seRate[k] = synthSEPOP, synthSERate
	}
	for i := range ds.Vars {
		switch ds.Vars[i].Name {
		case "drizzle_probability", "cloud_base_drizzle_rate":
			ds.Vars[i].Attrs = append(ds.Vars[i].Attrs, a("ancillary_variables", ds.Vars[i].Name+"_standard_error"))
		}
	}
	ds.Vars = append(ds.Vars, fvar("drizzle_probability_standard_error", "1", "retrieval standard error of the drizzle probability", sePOP),
		fvar("cloud_base_drizzle_rate_standard_error", "mm day-1", "retrieval standard error of the cloud-base drizzle rate", seRate))
	path := filepath.Join(dir, "processed.nc")
	if err := grid.WriteDataset(path, ds, false); err != nil {
		t.Fatal(err)
	}
	return path, cols
}

// The retrieval standard errors of the synthetic file (invented).
const synthSEPOP, synthSERate = 0.02, 0.1 // 1, mm day-1

// surfaceRatioPython returns the flux-weighted surface fraction Σ R_sfc / Σ R_CB of a
// processed file, computed by Debian's netCDF4-python over the columns with QC & mask
// == 0, finite positive LWP and N_d, finite POP, both rates finite and R_CB > 0.
func surfaceRatioPython(t *testing.T, path string, mask int) float64 {
	t.Helper()
	py := "/usr/bin/python3"
	if exec.Command(py, "-c", "import netCDF4, numpy").Run() != nil {
		skipOrFailMissing(t, "/usr/bin/python3 with netCDF4 (Debian python3-netcdf4)")
	}
	script := `
import sys, numpy as np, netCDF4
ds = netCDF4.Dataset(sys.argv[1])
def get(n):
    return np.ma.filled(ds[n][:].astype(float), np.nan).ravel()
qc = np.ma.filled(ds["warm_rain_qc"][:], 0).astype(np.int64).ravel()
lwp, nd, pop = get("liquid_water_path"), get("droplet_number"), get("drizzle_probability")
cb, sfc = get("cloud_base_drizzle_rate"), get("surface_drizzle_rate")
ok = ((qc & int(sys.argv[2])) == 0) & (lwp > 0) & np.isfinite(lwp) & (nd > 0) & np.isfinite(nd) & np.isfinite(pop)
ok &= np.isfinite(cb) & (cb > 0) & np.isfinite(sfc) & (sfc >= 0)
print(repr(sfc[ok].sum() / cb[ok].sum()))
`
	out, err := exec.Command(py, "-c", script, path, strconv.Itoa(mask)).CombinedOutput()
	if err != nil {
		t.Fatalf("netCDF4-python on %s: %v\n%s", path, err, out)
	}
	v, err := strconv.ParseFloat(strings.TrimSpace(string(out)), 64)
	if err != nil {
		t.Fatalf("netCDF4-python output %q: %v", out, err)
	}
	return v
}

// summaryJSON reads what the tests check from a summary file with Debian's xarray
// (an outside reader); it skips when xarray is missing (fails with CI=true).
func summaryJSON(t *testing.T, path string) map[string]any {
	t.Helper()
	py := ""
	for _, p := range []string{"/usr/bin/python3", "python3"} {
		if exec.Command(p, "-c", "import xarray, netCDF4").Run() == nil {
			py = p
			break
		}
	}
	if py == "" {
		skipOrFailMissing(t, "python3 with xarray and netCDF4 (Debian python3-xarray python3-netcdf4)")
	}
	script := `
import sys, json, math, xarray as xr
ds = xr.open_dataset(sys.argv[1])
def clean(v):
    return [None if (isinstance(x, float) and math.isnan(x)) else x for x in v]
out = {k: clean(ds[k].values.ravel().tolist()) for k in ["susceptibility_pop", "susceptibility_rate", "susceptibility_conditional_rate", "column_count", "lwp_bin", "surface_drizzle_fraction"]}
for k in ["drizzle_probability_mean_retrieval_error", "cloud_base_drizzle_rate_mean_retrieval_error", "susceptibility_pop_lower_limit", "susceptibility_pop_upper_limit", "drizzle_probability_mean_tile_standard_error", "drizzle_probability_mean_standard_error"]:
    if k in ds:
        out[k] = clean(ds[k].values.ravel().tolist())
if "susceptibility_pop_lower_limit" in ds:
    out["confidence_level"] = float(ds["susceptibility_pop_lower_limit"].attrs["confidence_level"])
out["pop_mean_map_units"] = ds["drizzle_probability_time_mean"].attrs.get("units")
out["pop_mean_map_shape"] = list(ds["drizzle_probability_time_mean"].shape)
out["pop_count_map_sum"] = int(ds["drizzle_probability_time_mean_count"].values.sum())
out["lat_first"] = float(ds["lat"].values[0])
out["lwp_bounds_shape"] = list(ds["lwp_bin_bounds"].shape)
out["cell_methods"] = ds["drizzle_probability_time_mean"].attrs.get("cell_methods")
out["history"] = ds.attrs["history"]
out["surface_all"] = ds.attrs["surface_fraction_all"]
out["rate_map_01"] = float(ds["cloud_base_drizzle_rate_time_mean"].values[0, 1])
out["rate_map_units"] = ds["cloud_base_drizzle_rate_time_mean"].attrs.get("units")
print(json.dumps(out))
`
	cmd := exec.Command(py, "-c", script, path)
	var stderr strings.Builder
	cmd.Stderr = &stderr
	b, err := cmd.Output()
	if err != nil {
		t.Fatalf("xarray: %v\n%s", err, stderr.String())
	}
	var m map[string]any
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatalf("%v: %s", err, b)
	}
	return m
}

func floats(t *testing.T, v any) []float64 {
	t.Helper()
	l, ok := v.([]any)
	if !ok {
		t.Fatalf("not a list: %v", v)
	}
	out := make([]float64, len(l))
	for i, x := range l {
		if x == nil {
			out[i] = math.NaN()
		} else {
			out[i] = x.(float64)
		}
	}
	return out
}

// lintSummary runs the project's CF lint on a file: no Error finding allowed. Without
// the standard name table the standard-name rules are skipped (not in CI).
func lintSummary(t *testing.T, path string) {
	t.Helper()
	opt := cflint.Options{Ours: true}
	if p, err := cflint.FindTable(); err == nil {
		tab, err := cflint.LoadTable(p)
		if err != nil {
			t.Fatal(err)
		}
		opt.Table = tab
	} else if os.Getenv("CI") == "true" {
		t.Fatalf("the CF standard name table is required in CI: %v", err)
	} else {
		t.Logf("no CF standard name table (%v): standard names not checked", err)
	}
	fs, err := cflint.Check(path, opt)
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range cflint.Errors(fs) {
		t.Errorf("CF lint: %s", f)
	}
}

func TestSummarySyntheticLaw(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	dir := t.TempDir()
	in, cols := writeSynthProcessed(t, dir)
	out := filepath.Join(dir, "summary.nc")
	pics := filepath.Join(dir, "pictures")
	code, stdout, stderr := runCmd("summary", in, "-o", out, "--plots", pics, "--plot-size", "640x480",
		"--lwp-bins", "50:400:3", "--nd-bins", "20:500:5", "--min-count", "100", "--bootstrap", "50", "--seed", "7")
	if code != 0 {
		t.Fatalf("exit %d\n%s", code, stderr)
	}
	// Expected counts, by counting the synthetic columns (derived).
	var valid, masked, surfN, surfR int
	for _, c := range cols {
		if c.qc&int16(microphys.QCScreenMask) != 0 {
			masked++
			continue
		}
		valid++
		if !math.IsNaN(c.surf) {
			surfN++
			if c.surf > 0 {
				surfR++
			}
		}
	}
	if !strings.Contains(stdout, "Columns: 9600 seen") || !strings.Contains(stdout, " "+itoa(masked)+" QC-masked") || !strings.Contains(stdout, " "+itoa(valid)+" valid") {
		t.Errorf("table counts: want 9600 seen, %d masked, %d valid; table:\n%s", masked, valid, stdout)
	}
	lintSummary(t, out)
	m := summaryJSON(t, out)
	sp := floats(t, m["susceptibility_pop"])
	sr := floats(t, m["susceptibility_rate"])
	si := floats(t, m["susceptibility_conditional_rate"])
	if len(sp) != 3 {
		t.Fatalf("susceptibility_pop has %d LWP bins, want 3", len(sp))
	}
	// Retrieval errors: the mean of a constant is that constant, in the per-column
	// file's units (mm day-1); bootstrap limits bracket the estimate.
	cnt := floats(t, m["column_count"])
	ep, er := floats(t, m["drizzle_probability_mean_retrieval_error"]), floats(t, m["cloud_base_drizzle_rate_mean_retrieval_error"])
	for b := range cnt {
		if cnt[b] > 0 && (math.Abs(ep[b]-synthSEPOP) > 1e-6 || math.Abs(er[b]-synthSERate) > 1e-6) {
			t.Errorf("bin %d: mean retrieval errors %g, %g mm day-1; want %g, %g", b, ep[b], er[b], synthSEPOP, synthSERate)
		}
	}
	lo, hi := floats(t, m["susceptibility_pop_lower_limit"]), floats(t, m["susceptibility_pop_upper_limit"])
	for i := range sp {
		if !(lo[i] <= sp[i] && sp[i] <= hi[i]) {
			t.Errorf("LWP bin %d: S_POP %.4f outside its interval %.4f..%.4f", i, sp[i], lo[i], hi[i])
		}
	}
	if m["confidence_level"] != 0.95 {
		t.Errorf("confidence_level %v, want 0.95", m["confidence_level"])
	}
	for i := range sp {
		// The invented laws (this file's header): S_POP = 0.6, S_R = 1.3, S_I = 0.7 (derived).
		if math.Abs(sp[i]-sPOP) > tolSusc || math.Abs(sr[i]-sRate) > tolSusc || math.Abs(si[i]-(sRate-sPOP)) > tolSusc {
			t.Errorf("LWP bin %d: S_POP %.4f S_R %.4f S_I %.4f; want %.2f %.2f %.2f ± %.2f", i, sp[i], sr[i], si[i], sPOP, sRate, sRate-sPOP, tolSusc)
		}
	}
	var sum float64
	for _, c := range floats(t, m["column_count"]) {
		sum += c
	}
	if int(sum) != valid {
		t.Errorf("bin counts add up to %g, want the %d valid columns", sum, valid)
	}
	// The summary file uses the units of the per-column file: LWP in g m-2.
	if got := floats(t, m["lwp_bin"]); math.Abs(got[0]-math.Sqrt(50*100)) > 1e-9 {
		t.Errorf("lwp_bin[0] = %g g m-2, want the geometric centre %g (derived)", got[0], math.Sqrt(50*100))
	}
	// Surface fraction: Σ R_sfc / Σ R_CB over the valid columns with both rates finite
	// and R_CB > 0, computed by netCDF4-python from the processed file itself (an outside
	// reader; the screened columns' large surface rates must not count).
	want := surfaceRatioPython(t, in, int(microphys.QCScreenMask))
	if got, err := strconv.ParseFloat(m["surface_all"].(string), 64); err != nil || math.Abs(got-want) > 1e-5*want {
		t.Errorf("surface_fraction_all = %v (%v), want %g", m["surface_all"], err, want)
	}
	if sf := floats(t, m["surface_drizzle_fraction"]); len(sf) != 3 || !(sf[0] < sf[2]) {
		t.Errorf("surface_drizzle_fraction per LWP bin %v: want 3 bins rising with LWP (the synthetic surface rates)", sf)
	}
	t.Logf("S_POP %.4f, S_R %.4f, S_I %.4f", sp, sr, si)
	// The rate map is in the per-column file's units (mm day-1, microphys.OutputDecls);
	// cell (0, 1) holds columns 1 and 1+NY*NX, neither screened.
	if m["rate_map_units"] != nil && m["rate_map_units"] != mustOutput(rateVarName).Units {
		t.Errorf("rate map units %v, want %s", m["rate_map_units"], mustOutput(rateVarName).Units)
	}
	wantRate := (cols[1].rate + cols[1+synthNY*synthNX].rate) / 2
	if got, ok := m["rate_map_01"].(float64); !ok || math.Abs(got-wantRate) > 1e-6*wantRate {
		t.Errorf("rate map (0, 1) = %v, want %g mm day-1", m["rate_map_01"], wantRate)
	}
	if s := m["pop_mean_map_shape"].([]any); len(s) != 2 || s[0].(float64) != synthNY || s[1].(float64) != synthNX {
		t.Errorf("map shape %v, want [%d %d]", s, synthNY, synthNX)
	}
	if got := int(m["pop_count_map_sum"].(float64)); got != valid {
		t.Errorf("POP count map sums to %d, want %d valid values", got, valid)
	}
	if m["cell_methods"] != "time: mean" || m["pop_mean_map_units"] != "1" {
		t.Errorf("map attributes: cell_methods %v units %v", m["cell_methods"], m["pop_mean_map_units"])
	}
	h := m["history"].(string)
	if !strings.Contains(strings.SplitN(h, "\n", 2)[0], "warmrain "+Version()+" summary ") || !strings.Contains(h, "synthetic test file") {
		t.Errorf("history %q: want our line first, then the input's", h)
	}
	// Pictures: decode, requested size, more than a handful of colours.
	for _, name := range []string{"map_drizzle_probability_mean.png", "map_cloud_base_drizzle_rate_mean.png", "map_droplet_number_mean.png",
		"map_liquid_water_path_mean.png", "map_surface_drizzle_rate_mean.png", "pop_vs_lwp.png", "susceptibility_vs_lwp.png"} {
		checkPNG(t, filepath.Join(pics, name), 640, 480)
	}
	// A second run refuses to overwrite without --force, and leaves the file alone.
	before, _ := os.ReadFile(out)
	code, _, stderr = runCmd("summary", in, "-o", out)
	if code != ExitFailure || !strings.Contains(stderr, "already exists") {
		t.Errorf("overwrite without --force: exit %d, %s", code, stderr)
	}
	if after, _ := os.ReadFile(out); string(after) != string(before) {
		t.Error("the existing summary file was changed")
	}
	code, _, stderr = runCmd("summary", in, "--plots", pics)
	if code != ExitFailure || !strings.Contains(stderr, "already holds pictures") {
		t.Errorf("pictures without --force: exit %d, %s", code, stderr)
	}
	if code, _, stderr = runCmd("summary", in, "--plots", pics, "--force", "--plot-size", "640x480"); code != 0 {
		t.Errorf("pictures with --force: exit %d, %s", code, stderr)
	}
}

func itoa(n int) string { return strconv.Itoa(n) }

// checkPNG decodes a picture and checks its size and that it is not blank.
func checkPNG(t *testing.T, path string, w, h int) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Error(err)
		return
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Errorf("%s: %v", path, err)
		return
	}
	if b := img.Bounds(); b.Dx() != w || b.Dy() != h {
		t.Errorf("%s: %dx%d px, want %dx%d", path, b.Dx(), b.Dy(), w, h)
	}
	if n := distinctColours(img, 64); n < 16 {
		t.Errorf("%s: only %d distinct colours; expected a picture with content", path, n)
	}
}

func distinctColours(img image.Image, limit int) int {
	seen := map[[4]uint32]bool{}
	b := img.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y += 2 {
		for x := b.Min.X; x < b.Max.X; x += 2 {
			r, g, bl, a := img.At(x, y).RGBA()
			seen[[4]uint32{r, g, bl, a}] = true
			if len(seen) >= limit {
				return len(seen)
			}
		}
	}
	return len(seen)
}

func TestSummaryWindowAndRegion(t *testing.T) {
	dir := t.TempDir()
	in, cols := writeSynthProcessed(t, dir)
	// Only the second time step (18 UTC) lies in [15 UTC, 21 UTC); only latitudes
	// -30..-25 (rows 0..20) in the box.
	code, stdout, stderr := runCmd("summary", in, "--from", "2026-07-01T15:00", "--to", "2026-07-01T21:00Z",
		"--region", "-30,-25,-100,-80", "--lwp-bins", "50:400:3", "--nd-bins", "20:500:5")
	if code != 0 {
		t.Fatalf("exit %d\n%s", code, stderr)
	}
	var selected, valid int
	for k, c := range cols {
		tt, y := k/(synthNY*synthNX), (k/synthNX)%synthNY
		if tt != 1 || -30+0.25*float64(y) > -25 {
			continue
		}
		selected++
		if c.qc&int16(microphys.QCScreenMask) == 0 {
			valid++
		}
	}
	want := itoa(selected) + " selected"
	if !strings.Contains(stdout, want) || !strings.Contains(stdout, " "+itoa(valid)+" valid") {
		t.Errorf("want %q and %d valid in:\n%s", want, valid, stdout)
	}
}

func TestSummaryUsage(t *testing.T) {
	dir := t.TempDir()
	in, _ := writeSynthProcessed(t, dir)
	for _, c := range []struct {
		args []string
		code int
		msg  string
	}{
		{[]string{"summary"}, ExitUsage, "no processed files"},
		{[]string{"summary", in, "--region", "1,2,3"}, ExitUsage, "four numbers"},
		{[]string{"summary", in, "--from", "yesterday"}, ExitUsage, "UTC time"},
		{[]string{"summary", in, "--from", "2026-07-02", "--to", "2026-07-01"}, ExitUsage, "not after"},
		{[]string{"summary", in, "--lwp-bins", "400:50:3"}, ExitUsage, "HI must exceed LO"},
		{[]string{"summary", in, "--nd-bins", "10,5,20"}, ExitUsage, "increase"},
		{[]string{"summary", in, "--plot-size", "big"}, ExitUsage, "WxH"},
		{[]string{"summary", in, "--map-of", "last"}, ExitUsage, "mean or first"},
		{[]string{"summary", in, "--range", "droplet_number=500:20"}, ExitUsage, "--range"},
		{[]string{"summary", in, "--range", "droplet_number=0:500:log"}, ExitUsage, "--range"},
		{[]string{"summary", in, "--range", "droplet_number"}, ExitUsage, "--range"},
		{[]string{"summary", in, "-o", in, "--force"}, ExitUsage, "refusing to overwrite an input"},
		{[]string{"summary", filepath.Join(dir, "none.nc")}, ExitFailure, "none.nc"},
		{[]string{"summary", "--help"}, ExitOK, ""},
	} {
		code, stdout, stderr := runCmd(c.args...)
		if code != c.code || !strings.Contains(stderr, c.msg) {
			t.Errorf("%v: exit %d (want %d), stderr %q (want %q)", c.args, code, c.code, stderr, c.msg)
		}
		if c.code == ExitOK && !strings.Contains(stdout, "Usage: warmrain summary") {
			t.Errorf("--help printed %q", stdout)
		}
	}
	// A file without the diagnostics names itself and what was expected.
	bad := filepath.Join(dir, "bad.nc")
	ds := &grid.Dataset{Dims: []grid.DimSpec{{Name: "x", Len: 2}}, Vars: []grid.VarSpec{{Name: "v", Dims: []string{"x"}, Type: grid.Float, Data: []float64{1, 2}}}}
	if err := grid.WriteDataset(bad, ds, false); err != nil {
		t.Fatal(err)
	}
	code, _, stderr := runCmd("summary", bad)
	if code != ExitFailure || !strings.Contains(stderr, bad) || !strings.Contains(stderr, "droplet_number") {
		t.Errorf("bad file: exit %d, %s", code, stderr)
	}
}

// TestSummarySwath checks a (y, x) file with 2-D latitude and longitude: the maps keep
// the swath's dimensions and coordinates, and the first-time-step pictures are drawn.
func TestSummarySwath(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	dir := t.TempDir()
	const ny, nx = 30, 40
	n := ny * nx
	lat, lon := make([]float64, n), make([]float64, n)
	lwp, nd, pop := make([]float64, n), make([]float64, n), make([]float64, n)
	for k := 0; k < n; k++ {
		y, x := k/nx, k%nx
		lat[k] = 10 + 0.1*float64(y) + 0.02*float64(x) // a tilted swath
		lon[k] = -40 + 0.1*float64(x)
		c := synthColumnAt(k)
		lwp[k], nd[k], pop[k] = c.lwp*1e-3, c.nd, c.pop // LWP stored in kg m-2 here
	}
	a := func(name string, v any) grid.Attr { return grid.Attr{Name: name, Value: v} }
	fvar := func(name, units string, d []float64) grid.VarSpec {
		return grid.VarSpec{Name: name, Dims: []string{"y", "x"}, Type: grid.Float, Data: d,
			Attrs: []grid.Attr{a("_FillValue", []float32{-999}), a("units", units), a("coordinates", "lat lon")}}
	}
	ds := &grid.Dataset{
		Dims: []grid.DimSpec{{Name: "y", Len: ny}, {Name: "x", Len: nx}},
		Vars: []grid.VarSpec{
			{Name: "lat", Dims: []string{"y", "x"}, Type: grid.Double, Data: lat, Attrs: []grid.Attr{a("standard_name", "latitude"), a("units", "degrees_north")}},
			{Name: "lon", Dims: []string{"y", "x"}, Type: grid.Double, Data: lon, Attrs: []grid.Attr{a("standard_name", "longitude"), a("units", "degrees_east")}},
			// The LWP found by its standard name (no liquid_water_path variable).
			{Name: "lwp_in", Dims: []string{"y", "x"}, Type: grid.Float, Data: lwp, Attrs: []grid.Attr{a("_FillValue", []float32{-999}),
				a("units", "kg m-2"), a("standard_name", "atmosphere_mass_content_of_cloud_liquid_water"), a("coordinates", "lat lon")}},
			fvar("droplet_number", "cm-3", nd),
			fvar("drizzle_probability", "1", pop),
		},
		Globals: []grid.Attr{a("Conventions", "CF-1.13 ACDD-1.3")},
	}
	in := filepath.Join(dir, "swath.nc")
	if err := grid.WriteDataset(in, ds, false); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "s.nc")
	pics := filepath.Join(dir, "p")
	code, stdout, stderr := runCmd("summary", in, "-o", out, "--plots", pics, "--map-of", "first", "--min-count", "5")
	if code != 0 {
		t.Fatalf("exit %d\n%s", code, stderr)
	}
	if !strings.Contains(stdout, "Columns: "+itoa(n)+" seen") || !strings.Contains(stdout, " "+itoa(n)+" valid") {
		t.Errorf("counts: want %d seen and valid:\n%s", n, stdout)
	}
	lintSummary(t, out)
	fi, err := grid.Describe(out)
	if err != nil {
		t.Fatal(err)
	}
	v := fi.Var("lwp_in_time_mean")
	if v == nil || !slices.Equal(v.Dims, []string{"y", "x"}) || v.Text("coordinates") != "lat lon" {
		t.Fatalf("lwp_in_time_mean: %+v; want (y, x) with coordinates \"lat lon\"", v)
	}
	got, _, err := grid.ReadVariable(out, "lat")
	if err != nil || len(got) != n || got[n-1] != lat[n-1] {
		t.Errorf("2-D lat not copied: %v", err)
	}
	for _, name := range []string{"map_drizzle_probability_first.png", "map_droplet_number_first.png", "map_lwp_in_first.png"} {
		checkPNG(t, filepath.Join(pics, name), 900, 600)
	}
}

// TestSummarySampleEndToEnd processes the committed sample scenario into a temporary
// folder and summarises it: the counts of the summary equal those of the processed
// file read directly, the summary passes the CF lint and the pictures decode.
func TestSummarySampleEndToEnd(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	if _, err := os.Stat(sampleFile); err != nil {
		skipOrFailMissing(t, "the committed sample "+sampleFile)
	}
	dir := t.TempDir()
	proc := filepath.Join(dir, "demo_processed.nc")
	if code, _, stderr := runCmd("process", sampleFile, "-o", proc); code != 0 {
		t.Fatalf("process: exit %d\n%s", code, stderr)
	}
	out := filepath.Join(dir, "demo_summary.nc")
	pics := filepath.Join(dir, "pictures")
	code, stdout, stderr := runCmd("summary", proc, "-o", out, "--plots", pics, "--bootstrap", "20")
	if code != 0 {
		t.Fatalf("summary: exit %d\n%s", code, stderr)
	}
	// Direct count: columns with no screening bit and finite positive LWP, N_d and a
	// finite POP (the summary package's definition of valid).
	qc, _, err := grid.ReadVariable(proc, "warm_rain_qc")
	if err != nil {
		t.Fatal(err)
	}
	lwp, _, err := grid.ReadVariable(proc, "liquid_water_path")
	if err != nil {
		t.Fatal(err)
	}
	nd, _, _ := grid.ReadVariable(proc, "droplet_number")
	pop, _, _ := grid.ReadVariable(proc, "drizzle_probability")
	var valid, masked int
	for k := range qc {
		if !math.IsNaN(qc[k]) && uint16(int64(qc[k]))&microphys.QCScreenMask != 0 {
			masked++
			continue
		}
		if lwp[k] > 0 && nd[k] > 0 && !math.IsNaN(pop[k]) && !math.IsInf(lwp[k], 0) && !math.IsInf(nd[k], 0) {
			valid++
		}
	}
	if !strings.Contains(stdout, " "+itoa(masked)+" QC-masked") || !strings.Contains(stdout, " "+itoa(valid)+" valid") {
		t.Errorf("want %d QC-masked and %d valid columns in:\n%s", masked, valid, stdout)
	}
	lintSummary(t, out)
	m := summaryJSON(t, out)
	if s := m["pop_mean_map_shape"].([]any); len(s) != 2 {
		t.Errorf("map shape %v", s)
	}
	for _, name := range []string{"map_drizzle_probability_mean.png", "map_cloud_base_drizzle_rate_mean.png", "map_valid_count.png", "pop_vs_lwp.png", "susceptibility_vs_lwp.png"} {
		checkPNG(t, filepath.Join(pics, name), 900, 600)
	}
}

// TestSummaryWithoutSurfaceRate: a processed file of an older version (no
// surface_drizzle_rate; here renamed away by netCDF4-python) still summarises, and the
// surface section says the file has no surface drizzle rate.
func TestSummaryWithoutSurfaceRate(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	dir := t.TempDir()
	in, _ := writeSynthProcessed(t, dir)
	py := "/usr/bin/python3"
	if exec.Command(py, "-c", "import netCDF4").Run() != nil {
		skipOrFailMissing(t, "/usr/bin/python3 with netCDF4 (Debian python3-netcdf4)")
	}
	if out, err := exec.Command(py, "-c", `import sys, netCDF4
ds = netCDF4.Dataset(sys.argv[1], "a")
ds.renameVariable("surface_drizzle_rate", "older_product")
ds.close()`, in).CombinedOutput(); err != nil {
		t.Fatalf("netCDF4-python: %v\n%s", err, out)
	}
	out := filepath.Join(dir, "summary.nc")
	code, stdout, stderr := runCmd("summary", in, "-o", out, "--lwp-bins", "50:400:3", "--nd-bins", "20:500:5")
	if code != 0 {
		t.Fatalf("exit %d\n%s", code, stderr)
	}
	if !strings.Contains(stdout, "the processed files have no surface drizzle rate") {
		t.Errorf("surface section does not say the file has no surface rate:\n%s", stdout)
	}
	r, err := grid.OpenReader(out)
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	if r.Info().Var("surface_drizzle_fraction") != nil {
		t.Error("summary file has surface_drizzle_fraction without a surface rate in the input")
	}
}

// TestSummaryMapClasses: a swath whose latitude and longitude are found by their
// standard names (no coordinates attribute), with columns screened for a missing input
// and for thin cloud. Latitude and longitude get no map; the maps show both no-data
// classes in their colours, and a --range for a variable without a map is reported.
func TestSummaryMapClasses(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	dir := t.TempDir()
	const ny, nx = 40, 50
	n := ny * nx
	lat, lon := make([]float64, n), make([]float64, n)
	lwp, nd, pop, qc := make([]float64, n), make([]float64, n), make([]float64, n), make([]int32, n)
	for k := 0; k < n; k++ {
		y, x := k/nx, k%nx
		lat[k] = -20 + 0.1*float64(y) + 0.02*float64(x)
		lon[k] = -100 + 0.1*float64(x)
		c := synthColumnAt(k)
		lwp[k], nd[k], pop[k] = c.lwp, c.nd, c.pop
		switch {
		case x < 12 && y < 12:
			qc[k] = 1 // input_missing
		case x > 35 && y > 25:
			qc[k] = 4 // thin_cloud
		}
		if qc[k] != 0 {
			lwp[k], nd[k], pop[k] = -999, -999, -999
		}
	}
	a := func(name string, v any) grid.Attr { return grid.Attr{Name: name, Value: v} }
	fvar := func(name, units string, d []float64) grid.VarSpec {
		return grid.VarSpec{Name: name, Dims: []string{"y", "x"}, Type: grid.Float, Data: d,
			Attrs: []grid.Attr{a("_FillValue", []float32{-999}), a("units", units)}}
	}
	ds := &grid.Dataset{
		Dims: []grid.DimSpec{{Name: "y", Len: ny}, {Name: "x", Len: nx}},
		Vars: []grid.VarSpec{
			{Name: "lat", Dims: []string{"y", "x"}, Type: grid.Double, Data: lat, Attrs: []grid.Attr{a("standard_name", "latitude"), a("units", "degrees_north")}},
			{Name: "lon", Dims: []string{"y", "x"}, Type: grid.Double, Data: lon, Attrs: []grid.Attr{a("standard_name", "longitude"), a("units", "degrees_east")}},
			fvar("liquid_water_path", "g m-2", lwp),
			fvar("droplet_number", "cm-3", nd),
			fvar("drizzle_probability", "1", pop),
			{Name: "warm_rain_qc", Dims: []string{"y", "x"}, Type: grid.Int, Data: qc,
				Attrs: []grid.Attr{a("flag_masks", []int32{1, 2, 4}), a("flag_meanings", "input_missing input_invalid thin_cloud")}},
		},
		Globals: []grid.Attr{a("Conventions", "CF-1.13"), a("warmrain_parameter_onset_radius", "14 um"), a("warmrain_parameter_onset_width", "4 um"),
			a("warmrain_parameter_gamma_shape", "4"), a("warmrain_parameter_autoconversion", "kk2000"), a("warmrain_parameter_extinction_efficiency", "2")},
	}
	in := filepath.Join(dir, "swath.nc")
	if err := grid.WriteDataset(in, ds, false); err != nil {
		t.Fatal(err)
	}
	pics := filepath.Join(dir, "p")
	code, _, stderr := runCmd("summary", in, "--plots", pics, "--map-of", "first", "--min-count", "5",
		"--range", "droplet_number=20:500:log", "--range", "cloud_thickness=0:800")
	if code != 0 {
		t.Fatalf("exit %d\n%s", code, stderr)
	}
	if !strings.Contains(stderr, "--range cloud_thickness: no map shows") {
		t.Errorf("no note about the --range without a map:\n%s", stderr)
	}
	ents, _ := os.ReadDir(pics)
	for _, e := range ents {
		if strings.Contains(e.Name(), "_lat") || strings.Contains(e.Name(), "_lon") {
			t.Errorf("%s: latitude or longitude mapped as a diagnostic", e.Name())
		}
	}
	for _, name := range []string{"map_droplet_number_first.png", "map_liquid_water_path_first.png"} {
		path := filepath.Join(pics, name)
		checkPNG(t, path, 900, 600)
		f, err := os.Open(path)
		if err != nil {
			t.Fatal(err)
		}
		img, err := png.Decode(f)
		f.Close()
		if err != nil {
			t.Fatal(err)
		}
		count := func(c color.NRGBA) int {
			k := 0
			b := img.Bounds()
			for y := b.Min.Y; y < b.Max.Y; y++ {
				for x := b.Min.X; x < b.Max.X; x++ {
					r, g, bl, _ := img.At(x, y).RGBA()
					if uint8(r>>8) == c.R && uint8(g>>8) == c.G && uint8(bl>>8) == c.B {
						k++
					}
				}
			}
			return k
		}
		if m, s := count(plots.MissingInput.Colour()), count(plots.Screened.Colour()); m < 1000 || s < 1000 {
			t.Errorf("%s: %d input-missing and %d screened pixels; want the two classes drawn", name, m, s)
		}
	}
}

// TestSummaryWithoutCoastlines: without the coastline files the maps are still drawn
// and stderr says once that coastlines are off and which package provides them.
func TestSummaryWithoutCoastlines(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	old := plots.CoastlineDir
	plots.CoastlineDir = t.TempDir()
	defer func() { plots.CoastlineDir = old }()
	dir := t.TempDir()
	in, _ := writeSynthProcessed(t, dir)
	pics := filepath.Join(dir, "p")
	code, _, stderr := runCmd("summary", in, "--plots", pics)
	if code != 0 {
		t.Fatalf("exit %d\n%s", code, stderr)
	}
	if n := strings.Count(stderr, "without coastlines"); n != 1 || !strings.Contains(stderr, "gmt-gshhg-low") {
		t.Errorf("want one note naming gmt-gshhg-low, got %d in:\n%s", n, stderr)
	}
	checkPNG(t, filepath.Join(pics, "map_drizzle_probability_mean.png"), 900, 600)
}
