package app

import (
	"bytes"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
	"time"

	"github.com/warmrain/warmrain/cmd/internal/batch"
	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/microphys"
	"github.com/warmrain/warmrain/samples"
)

// samplePath is the committed sample scenario (read only).
func samplePath(t testing.TB) string {
	t.Helper()
	_, file, _, _ := runtime.Caller(0)
	p := filepath.Join(filepath.Dir(file), "..", "..", "..", "samples", "data", "stratocumulus_demo.nc")
	if _, err := os.Stat(p); err != nil {
		t.Fatalf("sample file missing: %v", err)
	}
	return p
}

func runProc(t testing.TB, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	var o, e bytes.Buffer
	code = Run(args, &o, &e)
	return code, o.String(), e.String()
}

func readVar(t testing.TB, path, name string) []float64 {
	t.Helper()
	d, _, err := grid.ReadVariable(path, name)
	if err != nil {
		t.Fatalf("read %s: %v", name, err)
	}
	return d
}

// sampleInputs reads the sample's inputs through grid (in file units) and
// converts them to SI for microphys: the units are those the sample declares
// (LWP and its sd g m-2, r_e um, ctp hPa); the conversion is written out here
// rather than taken from grid, so the test checks grid's conversion too.
func sampleInputs(t testing.TB, path string) (lwp, re, tau, ctt, ctp, cth, sd []float64) {
	scale := func(x []float64, f float64) []float64 {
		for i := range x {
			x[i] *= f
		}
		return x
	}
	lwp = scale(readVar(t, path, "lwp"), 1e-3)
	re = scale(readVar(t, path, "re"), 1e-6)
	tau = readVar(t, path, "cot")
	ctt = readVar(t, path, "ctt")
	ctp = scale(readVar(t, path, "ctp"), 100)
	cth = readVar(t, path, "cth")
	sd = scale(readVar(t, path, "lwp_std"), 1e-3)
	return
}

// close reports whether a float32 file value equals the float64 value x.
func close32(file, x float64) bool {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return math.IsNaN(file)
	}
	return math.Abs(file-float64(float32(x))) <= 1e-6*math.Abs(x)+1e-30
}

func TestProcessSampleEqualsMicrophys(t *testing.T) {
	in := samplePath(t)
	out := filepath.Join(t.TempDir(), "demo_wr.nc")
	code, _, stderr := runProc(t, "process", in, "-o", out)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	if !strings.Contains(stderr, "30000 columns") || !strings.Contains(stderr, "screened") {
		t.Errorf("summary line missing: %q", stderr)
	}
	lwp, re, tau, ctt, ctp, cth, sd := sampleInputs(t, in)
	m, err := microphys.NewModel(microphys.DefaultParams())
	if err != nil {
		t.Fatal(err)
	}
	qcFile := readVar(t, out, qcName)
	files := map[string][]float64{}
	defs, _ := selectOutputs("all", microphys.DefaultParams())
	for _, d := range defs {
		files[d.name] = readVar(t, out, d.name)
	}
	checked := 0
	for i := 0; i < len(lwp); i += 7 {
		inp := microphys.Inputs{LWP: lwp[i], Re: re[i], Tau: tau[i], CTT: ctt[i], CTP: ctp[i], CTH: cth[i], LWPStd: sd[i], SurfaceRH: math.NaN()}
		var o microphys.Outputs
		m.Column(&inp, &o)
		if uint16(qcFile[i]) != o.QC {
			t.Fatalf("column %d: QC %d in file, %d direct (%v)", i, int(qcFile[i]), o.QC, microphys.QCNames(o.QC))
		}
		for _, d := range defs {
			var want float64
			if d.get != nil {
				want = d.get(&o) * d.scale
			} else {
				want = lwp[i] * d.scale
			}
			if got := files[d.name][i]; !close32(got, want) {
				t.Fatalf("column %d: %s = %g in file, %g direct", i, d.name, got, want)
			}
		}
		checked++
	}
	if checked < 4000 {
		t.Fatalf("only %d columns checked", checked)
	}
}

// TestProcessSampleIsPhysicallySensible checks the scenario's known structure
// (samples package): the polluted line has more droplets and a lower drizzle
// probability than the deck around it, and the open-cell pocket drizzles most.
func TestProcessSampleIsPhysicallySensible(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	in := samplePath(t)
	out := filepath.Join(t.TempDir(), "demo_wr.nc")
	if code, _, stderr := runProc(t, "process", in, "-o", out, "--no-collector"); code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	cfg := samples.DefaultConfig()
	nd := readVar(t, out, "droplet_number")
	pop := readVar(t, out, "drizzle_probability")
	type acc struct{ nd, pop, n float64 }
	stats := map[samples.RegionKind]*acc{}
	near := &acc{} // deck cells within 0.5 degree of a polluted-line cell
	for k := 0; k < cfg.NTime; k++ {
		for i := 0; i < cfg.NLat; i++ {
			for j := 0; j < cfg.NLon; j++ {
				idx := (k*cfg.NLat+i)*cfg.NLon + j
				if math.IsNaN(nd[idx]) || math.IsNaN(pop[idx]) {
					continue
				}
				r := cfg.RegionAt(k, i, j)
				a := stats[r]
				if a == nil {
					a = &acc{}
					stats[r] = a
				}
				a.nd += nd[idx]
				a.pop += pop[idx]
				a.n++
				if r == samples.RegionDeck {
					for di := -5; di <= 5; di++ {
						for dj := -5; dj <= 5; dj++ {
							ii, jj := i+di, j+dj
							if ii >= 0 && ii < cfg.NLat && jj >= 0 && jj < cfg.NLon && cfg.RegionAt(k, ii, jj) == samples.RegionPollutedLine {
								near.nd += nd[idx]
								near.pop += pop[idx]
								near.n++
								di, dj = 99, 99
							}
						}
					}
				}
			}
		}
	}
	mean := func(a *acc) (float64, float64) { return a.nd / a.n, a.pop / a.n }
	deckND, deckPOP := mean(stats[samples.RegionDeck])
	lineND, linePOP := mean(stats[samples.RegionPollutedLine])
	openND, openPOP := mean(stats[samples.RegionOpenCells])
	nearND, nearPOP := mean(near)
	t.Logf("N_d cm-3 / POP: deck %.0f/%.3f, near line %.0f/%.3f, line %.0f/%.3f, open cells %.0f/%.3f (n %v %v %v)",
		deckND, deckPOP, nearND, nearPOP, lineND, linePOP, openND, openPOP, stats[samples.RegionDeck].n, stats[samples.RegionPollutedLine].n, stats[samples.RegionOpenCells].n)
	if near.n < 100 || stats[samples.RegionPollutedLine].n < 100 || stats[samples.RegionOpenCells].n < 100 {
		t.Fatal("too few valid columns in a region")
	}
	if !(lineND > 1.5*nearND) || !(linePOP < nearPOP) {
		t.Errorf("polluted line: N_d %.0f vs deck around it %.0f, POP %.3f vs %.3f", lineND, nearND, linePOP, nearPOP)
	}
	for r, a := range stats {
		if r == samples.RegionOpenCells {
			continue
		}
		if _, p := mean(a); p >= openPOP {
			t.Errorf("region %v has POP %.3f >= open cells %.3f", r, p, openPOP)
		}
	}
	if !(openND < deckND) {
		t.Errorf("open cells N_d %.0f not below deck %.0f", openND, deckND)
	}
}

func TestProcessUsageErrors(t *testing.T) {
	in := samplePath(t)
	dir := t.TempDir()
	cases := []struct {
		name string
		args []string
		code int
		msg  string
	}{
		{"no command", nil, 2, "Usage"},
		{"unknown command", []string{"frobnicate"}, 2, `unknown command "frobnicate"`},
		{"no input", []string{"process", "-o", dir}, 2, "no input given"},
		{"no output", []string{"process", in}, 2, "no output given"},
		{"unknown flag", []string{"process", in, "-o", dir, "--bogus"}, 2, "unknown flag: --bogus"},
		{"bad scheme", []string{"process", in, "-o", dir, "--autoconversion", "magic"}, 2, "--autoconversion"},
		{"bad fad", []string{"process", in, "-o", dir, "--adiabatic-fraction", "1.5"}, 2, "--adiabatic-fraction must be above 0 and at most 1 (got 1.5)"},
		{"bad range", []string{"process", in, "-o", dir, "--re-range", "4"}, 2, "--re-range"},
		{"force and redo", []string{"process", in, "-o", dir, "--force", "--redo"}, 2, "cannot be combined"},
		{"bad shard", []string{"process", in, "-o", dir, "--shard", "3/3"}, 2, "shard"},
		{"bad bind", []string{"process", in, "-o", dir, "--bind", "colour=x"}, 2, "--bind"},
		{"unknown output", []string{"process", in, "-o", dir, "--outputs", "nonsense"}, 2, "unknown output"},
		{"missing input", []string{"process", filepath.Join(dir, "none.nc"), "-o", filepath.Join(dir, "o.nc")}, 1, "none.nc"},
		{"missing folder", []string{"process", in, "-o", filepath.Join(dir, "nofolder", "o.nc")}, 1, "does not exist"},
		{"many inputs to a file", []string{"process", in, in + "x", "-o", filepath.Join(dir, "o.nc")}, 1, "need a folder"},
		{"help", []string{"process", "--help"}, 0, ""},
		{"version", []string{"--version"}, 0, ""},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			code, stdout, stderr := runProc(t, c.args...)
			if code != c.code {
				t.Fatalf("exit %d, want %d; stderr %q", code, c.code, stderr)
			}
			if c.msg != "" && !strings.Contains(stderr, c.msg) {
				t.Errorf("stderr %q does not contain %q", stderr, c.msg)
			}
			if c.code == 0 && stdout == "" {
				t.Errorf("nothing on stdout")
			}
		})
	}
	// An existing output is never overwritten without --force.
	out := filepath.Join(dir, "exists.nc")
	os.WriteFile(out, []byte("user data"), 0o644)
	code, _, stderr := runProc(t, "process", in, "-o", out)
	if code != 1 || !strings.Contains(stderr, "exists") {
		t.Fatalf("existing output: exit %d, %q", code, stderr)
	}
	if b, _ := os.ReadFile(out); string(b) != "user data" {
		t.Fatal("existing output was changed")
	}
}

func copyFile(t testing.TB, from, to string) {
	t.Helper()
	b, err := os.ReadFile(from)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(to, b, 0o644); err != nil {
		t.Fatal(err)
	}
}

func TestProcessBatchResume(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	src := samplePath(t)
	dir := t.TempDir()
	inDir, outDir := filepath.Join(dir, "in"), filepath.Join(dir, "out")
	os.Mkdir(inDir, 0o755)
	os.Mkdir(outDir, 0o755)
	for _, n := range []string{"a.nc", "b.nc", "c.nc"} {
		copyFile(t, src, filepath.Join(inDir, n))
	}
	args := []string{"process", filepath.Join(inDir, "*.nc"), "-o", outDir, "--no-collector"}
	if code, _, stderr := runProc(t, args...); code != 0 {
		t.Fatalf("first run: exit %d: %s", code, stderr)
	}
	st1, _ := os.Stat(filepath.Join(outDir, "b_warmrain.nc"))
	// Rerun: everything is complete and skipped.
	code, _, stderr := runProc(t, args...)
	if code != 0 || strings.Count(stderr, "exists, skipped") != 3 {
		t.Fatalf("rerun: exit %d, %q", code, stderr)
	}
	// A changed input is redone; a changed parameter redoes everything.
	later := time.Now().Add(2 * time.Second)
	os.Chtimes(filepath.Join(inDir, "b.nc"), later, later)
	code, _, stderr = runProc(t, args...)
	if code != 0 || strings.Count(stderr, "exists, skipped") != 2 || !strings.Contains(stderr, "b.nc ->") {
		t.Fatalf("after touching b.nc: exit %d, %q", code, stderr)
	}
	st2, _ := os.Stat(filepath.Join(outDir, "b_warmrain.nc"))
	if os.SameFile(st1, st2) {
		t.Error("b's output was not rewritten")
	}
	// Other parameters are refused before any work (the outputs are kept), and
	// --redo replaces them.
	code, _, stderr = runProc(t, append(args, "--gamma-shape", "2")...)
	if code != ExitFailure || !strings.Contains(stderr, "3 of 3 outputs are in the way") {
		t.Fatalf("new parameters without --redo: exit %d, %q", code, stderr)
	}
	code, _, stderr = runProc(t, append(args, "--gamma-shape", "2", "--redo")...)
	if code != 0 || strings.Contains(stderr, "exists, skipped") {
		t.Fatalf("new parameters: exit %d, %q", code, stderr)
	}
	// The manifest has one line per file and run.
	f, err := os.Open(filepath.Join(outDir, "warmrain-manifest.jsonl"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, _, err := batch.ReadManifest(f)
	if err != nil || len(recs) != 12 {
		t.Fatalf("manifest: %d records, %v", len(recs), err)
	}
	for _, r := range recs[:3] {
		if r.Status != "done" || r.Columns != 30000 || r.ScreenedFraction <= 0 || r.ScreenedFraction >= 1 {
			t.Errorf("record %+v", r)
		}
	}
	// Shards split the files; shard outputs and the whole agree.
	if code, _, stderr := runProc(t, "process", filepath.Join(inDir, "*.nc"), "-o", outDir, "--no-collector", "--shard", "1/2", "--redo"); code != 0 || strings.Count(stderr, " -> ") != 1 {
		t.Fatalf("shard 1/2: exit %d, %q", code, stderr)
	}
}

// TestProcessFailedFileDoesNotStopBatch: one bad input among good ones gives
// exit 1, the others are still written and the manifest says why.
func TestProcessFailedFileDoesNotStopBatch(t *testing.T) {
	dir := t.TempDir()
	inDir, outDir := filepath.Join(dir, "in"), filepath.Join(dir, "out")
	os.Mkdir(inDir, 0o755)
	os.Mkdir(outDir, 0o755)
	copyFile(t, samplePath(t), filepath.Join(inDir, "good.nc"))
	os.WriteFile(filepath.Join(inDir, "bad.nc"), []byte("not a netCDF file"), 0o644)
	code, _, stderr := runProc(t, "process", filepath.Join(inDir, "*.nc"), "-o", outDir, "--no-collector")
	if code != 1 || !strings.Contains(stderr, "1 of 2 files failed") || !strings.Contains(stderr, "bad.nc") {
		t.Fatalf("exit %d, %q", code, stderr)
	}
	if _, err := os.Stat(filepath.Join(outDir, "good_warmrain.nc")); err != nil {
		t.Fatal("good file not processed")
	}
	if _, err := os.Stat(filepath.Join(outDir, "bad_warmrain.nc")); err == nil {
		t.Fatal("output written for a bad file")
	}
}

// TestProcessXarrayInput processes a swath written by xarray (Debian's
// python3-xarray, h5netcdf engine: NC_STRING attributes; packed int16 LWP in
// kg m-2; r_e in m; 2-D lat/lon) and compares with microphys directly.
func TestProcessXarrayInput(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	py := "/usr/bin/python3"
	if exec.Command(py, "-c", "import xarray, h5netcdf").Run() != nil {
		if os.Getenv("CI") == "true" {
			t.Fatal("python3-xarray and python3-h5netcdf are required in CI")
		}
		t.Skip("python3-xarray/h5netcdf not installed")
	}
	dir := t.TempDir()
	in := filepath.Join(dir, "swath.nc")
	script := `
import sys, numpy as np, xarray as xr
ny, nx = 40, 50
y, x = np.meshgrid(np.arange(ny), np.arange(nx), indexing="ij")
lwp = 0.04 + 0.12 * (x / nx) + 0.02 * np.sin(y / 5.0)          # kg m-2
re = (8 + 10 * (y / ny)) * 1e-6                                  # m
lwp[0, :5] = np.nan
ds = xr.Dataset(
    {"cwp": (("y", "x"), lwp, {"standard_name": "atmosphere_mass_content_of_cloud_liquid_water", "units": "kg m-2"}),
     "reff": (("y", "x"), re.astype("float32"), {"standard_name": "effective_radius_of_cloud_liquid_water_particles_at_liquid_water_cloud_top", "units": "m"}),
     "t_top": (("y", "x"), (286 - 0.05 * x).astype("float32"), {"standard_name": "air_temperature_at_cloud_top", "units": "K"})},
    coords={"latitude": (("y", "x"), -20 + 0.05 * y + 0.01 * x, {"standard_name": "latitude", "units": "degrees_north"}),
            "longitude": (("y", "x"), -80 + 0.05 * x, {"standard_name": "longitude", "units": "degrees_east"})})
enc = {"cwp": {"dtype": "int16", "scale_factor": 1e-4, "add_offset": 0.0, "_FillValue": -32767}}
ds.to_netcdf(sys.argv[1], engine="h5netcdf", encoding=enc)
`
	if b, err := exec.Command(py, "-c", script, in).CombinedOutput(); err != nil {
		t.Fatalf("xarray writer: %v\n%s", err, b)
	}
	out := filepath.Join(dir, "swath_wr.nc")
	if code, _, stderr := runProc(t, "process", in, "-o", out); code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	// Inputs as stored (packed LWP decoded by grid, checked against xarray below).
	lwp := readVar(t, in, "cwp")
	re := readVar(t, in, "reff")
	ctt := readVar(t, in, "t_top")
	m, _ := microphys.NewModel(microphys.DefaultParams())
	nd := readVar(t, out, "droplet_number")
	pop := readVar(t, out, "drizzle_probability")
	rad := readVar(t, out, "collector_exit_radius")
	for i := range lwp {
		in := microphys.Inputs{LWP: lwp[i], Re: re[i], Tau: math.NaN(), CTT: ctt[i], CTP: math.NaN(), CTH: math.NaN(), LWPStd: math.NaN(), SurfaceRH: math.NaN()}
		var o microphys.Outputs
		m.Column(&in, &o)
		if !close32(nd[i], o.Nd*1e-6) || !close32(pop[i], o.POP) || !close32(rad[i], o.CollectorRadius*1e6) {
			t.Fatalf("column %d: file N_d %g POP %g R %g; direct %g %g %g", i, nd[i], pop[i], rad[i], o.Nd*1e-6, o.POP, o.CollectorRadius*1e6)
		}
	}
	// xarray reads our output: fill decoded to NaN, 2-D coordinates attached.
	check := `
import sys, numpy as np, xarray as xr
d = xr.open_dataset(sys.argv[1])
v = d["droplet_number"]
assert "latitude" in v.coords and "longitude" in v.coords, v.coords
assert np.isnan(v.values[0, 0]) and np.isfinite(v.values[5, 5]), v.values[0, :3]
assert d["warm_rain_qc"].attrs["flag_meanings"].split()[0] == "input_missing"
print("ok")
`
	if b, err := exec.Command(py, "-c", check, out).CombinedOutput(); err != nil || !strings.Contains(string(b), "ok") {
		t.Fatalf("xarray check: %v\n%s", err, b)
	}
}

// TestProcessPack: with --pack the bounded outputs are CF-packed int16 whose unpacked values
// (through grid, and through xarray/netCDF4 as an outside reader) lie within half a packing
// step of the float32 run's values, with the same missing columns; the other outputs are
// unchanged. The sample is the invented demo scenario.
func TestProcessPack(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	dir := t.TempDir()
	in := samplePath(t)
	plain, packed := filepath.Join(dir, "plain.nc"), filepath.Join(dir, "packed.nc")
	if code, _, e := runProc(t, "process", in, "-o", plain, "-q"); code != 0 {
		t.Fatalf("process: %d %s", code, e)
	}
	if code, _, e := runProc(t, "process", in, "-o", packed, "-q", "--pack"); code != 0 {
		t.Fatalf("process --pack: %d %s", code, e)
	}
	defs, err := selectOutputs("all", microphys.DefaultParams())
	if err != nil {
		t.Fatal(err)
	}
	fi, err := grid.Describe(packed)
	if err != nil {
		t.Fatal(err)
	}
	npacked := 0
	for _, d := range defs {
		a, b := readVar(t, plain, d.name), readVar(t, packed, d.name)
		if len(a) != len(b) {
			t.Fatalf("%s: %d vs %d values", d.name, len(a), len(b))
		}
		tol := 0.0
		if d.packable {
			npacked++
			// The step follows from the declaration alone, not from the code's packing:
			// the declared valid range over the 65534 steps of int16 -32767..32767 (CF
			// §8.1 packing; -32768 is the fill value).
			decl := microphys.OutputByName(d.name)
			step := (decl.ValidMax - decl.ValidMin) / 65534
			if sf, ok := fi.Var(d.name).Attr("scale_factor"); !ok || math.Abs(sf.Float64s()[0]-step) > 1e-6*step {
				t.Errorf("%s: scale_factor %v in the file, want %g from the declared range [%g, %g]", d.name, sf.Value, step, decl.ValidMin, decl.ValidMax)
			}
			tol = step/2 + 1e-6*math.Max(math.Abs(decl.ValidMin), math.Abs(decl.ValidMax))
		}
		nvalid := 0
		for i := range a {
			if math.IsNaN(a[i]) != math.IsNaN(b[i]) {
				t.Fatalf("%s[%d]: missing in one run only (%g vs %g)", d.name, i, a[i], b[i])
			}
			if math.IsNaN(a[i]) {
				continue
			}
			nvalid++
			if math.Abs(a[i]-b[i]) > tol {
				t.Fatalf("%s[%d]: packed %g, float32 %g (tolerance %g)", d.name, i, b[i], a[i], tol)
			}
		}
		if nvalid == 0 {
			t.Errorf("%s: no valid value in the sample (the test would not check it)", d.name)
		}
	}
	if npacked != 7 { // the seven of README's storage paragraph
		t.Errorf("%d packable outputs, want 7", npacked)
	}
	// The stored type and attributes, and an outside reader's unpacking.
	py := "/usr/bin/python3"
	if exec.Command(py, "-c", "import netCDF4, xarray").Run() != nil {
		if os.Getenv("CI") == "true" {
			t.Fatal("python3-netcdf4 and python3-xarray are required in CI")
		}
		t.Skip("python3-netcdf4/xarray not installed")
	}
	check := `
import sys, netCDF4, xarray, numpy as np
p, f = sys.argv[1], sys.argv[2]
ds = netCDF4.Dataset(p)
v = ds["drizzle_probability"]
assert v.dtype == np.int16, v.dtype
assert v._FillValue == -32768
assert hasattr(v, "scale_factor") and hasattr(v, "add_offset")
a = xarray.open_dataset(p)["drizzle_probability"].values
b = xarray.open_dataset(f)["drizzle_probability"].values
assert a.dtype.kind == "f"
assert (np.isnan(a) == np.isnan(b)).all()
m = ~np.isnan(a)
assert m.any()
step = float(v.scale_factor)
assert np.nanmax(np.abs(a[m] - b[m])) <= step / 2 + 1e-6, np.nanmax(np.abs(a[m] - b[m]))
print("ok")
`
	if out, err := exec.Command(py, "-c", check, packed, plain).CombinedOutput(); err != nil || !strings.Contains(string(out), "ok") {
		t.Fatalf("outside reader: %v\n%s", err, out)
	}
}

// TestProcessDeveloperOptions: the hidden --pipeline-stats prints one stage line per file on
// stderr (nothing on stdout), and --cpu-profile writes a profile that go tool pprof reads.
func TestProcessDeveloperOptions(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	dir := t.TempDir()
	prof := filepath.Join(dir, "cpu.prof")
	code, stdout, stderr := runProc(t, "process", samplePath(t), "-o", filepath.Join(dir, "out.nc"), "-q",
		"--pipeline-stats", "--cpu-profile", prof)
	if code != 0 {
		t.Fatalf("process: %d %s", code, stderr)
	}
	if stdout != "" {
		t.Errorf("stdout not empty: %q", stdout)
	}
	if n := strings.Count(stderr, ": pipeline "); n != 1 || !strings.Contains(stderr, "I/O thread") || !strings.Contains(stderr, "slabs") {
		t.Errorf("stderr: %d stage lines, want 1:\n%s", n, stderr)
	}
	st, err := os.Stat(prof)
	if err != nil || st.Size() == 0 {
		t.Fatalf("profile %s: %v", prof, err)
	}
	if out, err := exec.Command("go", "tool", "pprof", "-raw", prof).CombinedOutput(); err != nil {
		t.Errorf("go tool pprof cannot read the profile: %v\n%.500s", err, out)
	}
	// A profile that cannot be created is a clear error before any work.
	code, _, stderr = runProc(t, "process", samplePath(t), "-o", filepath.Join(dir, "out2.nc"),
		"--cpu-profile", filepath.Join(dir, "missing", "cpu.prof"))
	if code == 0 || !strings.Contains(stderr, "--cpu-profile") {
		t.Errorf("unwritable profile: exit %d, stderr %q", code, stderr)
	}
	if _, err := os.Stat(filepath.Join(dir, "out2.nc")); err == nil {
		t.Error("output written although the profile could not be created")
	}
}
