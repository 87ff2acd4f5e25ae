package app

import (
	"bytes"
	"encoding/json"
	"flag"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"github.com/warmrain/warmrain/grid"
)

// update rewrites the golden files of testdata/ (go test -run Inspect -update).
var update = flag.Bool("update", false, "rewrite the golden files in testdata/")

// sampleFile is the committed sample scenario (read-only: opened, never written).
const sampleFile = "../../../samples/data/stratocumulus_demo.nc"

// runCmd runs the warmrain command line and returns its exit code and streams.
func runCmd(args ...string) (code int, stdout, stderr string) {
	var o, e bytes.Buffer
	code = Run(args, &o, &e)
	return code, o.String(), e.String()
}

// requireTool skips when an outside tool is missing, or fails when CI=true.
func requireTool(t *testing.T, name string) string {
	t.Helper()
	p, err := exec.LookPath(name)
	if err != nil {
		skipOrFailMissing(t, name)
	}
	return p
}

// skipOrFailMissing skips the test for a missing outside tool or file, or fails when CI=true.
func skipOrFailMissing(t *testing.T, what string) {
	t.Helper()
	if os.Getenv("CI") == "true" {
		t.Fatalf("%s is required in CI but missing", what)
	}
	t.Skipf("%s missing", what)
}

// ncgenTestdata compiles testdata/NAME.cdl into a netCDF-4 file in a temp dir.
func ncgenTestdata(t *testing.T, name string) string {
	t.Helper()
	ncgen := requireTool(t, "ncgen")
	out := filepath.Join(t.TempDir(), name+".nc")
	cmd := exec.Command(ncgen, "-k", "nc4", "-o", out, filepath.Join("testdata", name+".cdl"))
	if b, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("ncgen %s: %v\n%s", name, err, b)
	}
	return out
}

// checkGolden compares got with testdata/name; on a mismatch it writes
// name.got in a new folder under os.TempDir (kept for a diff) and fails; -update rewrites the golden file.
func checkGolden(t *testing.T, name, got string) {
	t.Helper()
	path := filepath.Join("testdata", name)
	if *update {
		if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test -run %s -update to create it)", err, t.Name())
	}
	if string(want) == got {
		return
	}
	gl, wl := strings.Split(got, "\n"), strings.Split(string(want), "\n")
	for i := 0; i < len(gl) || i < len(wl); i++ {
		var g, w string
		if i < len(gl) {
			g = gl[i]
		}
		if i < len(wl) {
			w = wl[i]
		}
		if g != w {
			// Kept after the test (outside the source tree) for a diff.
			dump := name + ".got (not written)"
			if dir, err := os.MkdirTemp("", "warmrain-golden-"); err == nil {
				dump = filepath.Join(dir, name+".got")
				_ = os.WriteFile(dump, []byte(got), 0o644)
			}
			t.Fatalf("%s differs at line %d:\n want %q\n  got %q\n(whole output in %s; -update to accept)", path, i+1, w, g, dump)
		}
	}
}

func inspectJSON(t *testing.T, args ...string) (inspectReport, int, string) {
	t.Helper()
	code, out, errs := runCmd(append([]string{"inspect", "--json"}, args...)...)
	var rep inspectReport
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatalf("inspect --json output is not JSON: %v\n%s\nstderr: %s", err, out, errs)
	}
	return rep, code, errs
}

func roleOf(rep inspectReport, r grid.Role) roleReport {
	for _, x := range rep.Roles {
		if x.Role == string(r) {
			return x
		}
	}
	return roleReport{}
}

// The report on the sample agrees with grid.Open and Input.Stats called directly.
func TestInspectSampleMatchesGrid(t *testing.T) {
	rep, code, errs := inspectJSON(t, sampleFile)
	if code != ExitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	in, err := grid.Open(sampleFile, grid.OpenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer in.Close()
	stats, err := in.Stats()
	if err != nil {
		t.Fatal(err)
	}
	if rep.Format != string(in.Format) || rep.Layout == nil || rep.Layout.Columns != in.Layout.Columns {
		t.Fatalf("format/layout: got %q %+v, want %q columns %d", rep.Format, rep.Layout, in.Format, in.Layout.Columns)
	}
	L := rep.Layout
	if L.Y != in.Layout.Y.Name || L.X != in.Layout.X.Name || L.Lat != in.Layout.Lat || L.Lon != in.Layout.Lon ||
		L.LatDescending != in.Layout.LatDescending || L.GridMapping != in.Layout.GridMapping || len(L.Dimensions) != len(in.Layout.Dims) {
		t.Errorf("layout %+v does not match grid's %+v", L, in.Layout)
	}
	for _, s := range stats {
		rr := roleOf(rep, s.Role)
		b, _ := in.Binding(s.Role)
		if !rr.Found || rr.Variable != b.Var || rr.Reason != b.Reason || rr.Packing != b.Packing || rr.Conversion != b.Conv.String() {
			t.Errorf("role %s: got %+v, want binding %+v", s.Role, rr, b)
			continue
		}
		du := displayUnits[s.Role]
		if b.Relative { // a standard error given in percent is shown in percent
			du.scale = 100
		}
		const tol = 1e-9 // JSON carries 10 significant digits
		for _, c := range []struct {
			name      string
			got, want float64
		}{{"min", float64(rr.Stats.Min), s.Min * du.scale}, {"max", float64(rr.Stats.Max), s.Max * du.scale}, {"mean", float64(rr.Stats.Mean), s.Mean * du.scale}} {
			if math.Abs(c.got-c.want) > tol*math.Abs(c.want) {
				t.Errorf("role %s %s: got %g, want %g", s.Role, c.name, c.got, c.want)
			}
		}
		if rr.Stats.FillFraction != s.FillFraction || rr.Stats.Missing != s.Missing {
			t.Errorf("role %s fill fraction %g (%d), want %g (%d)", s.Role, rr.Stats.FillFraction, rr.Stats.Missing, s.FillFraction, s.Missing)
		}
	}
	// The sample has every role but a surface humidity (no such input role),
	// which the default well-mixed sub-cloud layer does not use: no output uses a
	// default. (Common practice: the generator writes ctt, ctp, cth and lwp_std.)
	for _, d := range rep.Diagnostics {
		if !d.Computable {
			t.Errorf("%s not computable on the sample: %v", d.Output, d.Missing)
		}
		if len(d.Defaults) > 0 {
			t.Errorf("%s defaults %v", d.Output, d.Defaults)
		}
	}
	if roleOf(rep, grid.RoleLWP).Stats.Units != "g m-2" || roleOf(rep, grid.RoleRe).Stats.Units != "um" || roleOf(rep, grid.RoleCTP).Stats.Units != "hPa" {
		t.Errorf("readable units: lwp %q re %q ctp %q", roleOf(rep, grid.RoleLWP).Stats.Units, roleOf(rep, grid.RoleRe).Stats.Units, roleOf(rep, grid.RoleCTP).Stats.Units)
	}
}

// The text report of the sample is pinned by a golden file (the sample is
// committed and deterministic; numbers printed at 5 significant digits).
func TestInspectSampleGolden(t *testing.T) {
	code, out, errs := runCmd("inspect", sampleFile)
	if code != ExitOK || errs != "" {
		t.Fatalf("exit %d, stderr %q", code, errs)
	}
	checkGolden(t, "inspect_sample.golden", out)
}

// A swath with common names and no air state: the defaults are reported, the
// 2-D latitude/longitude found, the missing roles' searches listed.
func TestInspectSwathDefaults(t *testing.T) {
	f := ncgenTestdata(t, "inspect_swath")
	rep, code, errs := inspectJSON(t, f)
	if code != ExitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if !rep.Layout.LatLon2D || rep.Layout.Lat != "latitude" || rep.Layout.Lon != "longitude" {
		t.Errorf("2-D lat/lon not reported: %+v", rep.Layout)
	}
	if rr := roleOf(rep, grid.RoleRe); rr.Variable != "CER" || rr.Conversion != "x*1e-06 (micrometer -> m)" {
		t.Errorf("re: %+v", rr)
	}
	// LWP 0.05 ... 0.2 kg m-2 in the CDL (2 of 12 missing): 50 ... 200 g m-2.
	if s := roleOf(rep, grid.RoleLWP).Stats; math.Abs(float64(s.Min)-50) > 1e-4 || math.Abs(float64(s.Max)-200) > 1e-4 || s.Missing != 2 {
		t.Errorf("lwp stats %+v", s)
	}
	if rr := roleOf(rep, grid.RoleCTT); rr.Found || rr.Searched == nil || len(rr.Searched.StandardNames) == 0 {
		t.Errorf("ctt: %+v", rr)
	}
	for _, d := range rep.Diagnostics {
		if !d.Computable || len(d.Defaults) == 0 || !strings.Contains(d.Defaults[0], "air_state_assumed") {
			t.Errorf("%s: %+v", d.Output, d)
		}
	}
	_, text, _ := runCmd("inspect", f)
	for _, want := range []string{"latitude (2-D)", "not found; searched standard_name: air_temperature_at_cloud_top",
		"air state: default CTT", "(QC bit air_state_assumed)", "for every output", "(QC bit gamma_shape_assumed)\n      for drizzle_probability"} {
		if !strings.Contains(text, want) {
			t.Errorf("text report lacks %q:\n%s", want, text)
		}
	}
}

// --bind takes a variable with no units attribute, declaring its units.
func TestInspectBind(t *testing.T) {
	f := ncgenTestdata(t, "inspect_swath")
	rep, code, errs := inspectJSON(t, f, "--bind", "lwp=odd_path:g m-2")
	if code != ExitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	rr := roleOf(rep, grid.RoleLWP)
	if rr.Variable != "odd_path" || rr.UnitsFrom != "override" || !strings.Contains(rr.Reason, "--bind lwp=odd_path:g m-2") {
		t.Errorf("lwp: %+v", rr)
	}
	// odd_path holds the same LWP as LWP, in g m-2 (see the CDL).
	if s := rr.Stats; math.Abs(float64(s.Max)-200) > 1e-4 {
		t.Errorf("odd_path max %v g m-2, want 200", s.Max)
	}
	for _, bad := range [][]string{{"--bind", "lwp"}, {"--bind", "wind=odd_path"}, {"--bind", "lwp=odd_path:furlongs"}} {
		code, _, errs := runCmd(append([]string{"inspect", f}, bad...)...)
		if code != ExitUsage || !strings.Contains(errs, "--bind") {
			t.Errorf("%v: exit %d, stderr %q", bad, code, errs)
		}
	}
	code, _, errs = runCmd("inspect", f, "--bind", "lwp=nosuch")
	if code != ExitFailure || !strings.Contains(errs, "nosuch") {
		t.Errorf("bind to a missing variable: exit %d, stderr %q", code, errs)
	}
}

// A file without LWP: a partial report, every diagnostic missing lwp, exit 1.
func TestInspectMissingLWP(t *testing.T) {
	f := ncgenTestdata(t, "inspect_nolwp")
	rep, code, errs := inspectJSON(t, f)
	if code != ExitFailure || !strings.Contains(errs, "liquid water path") {
		t.Fatalf("exit %d, stderr %q", code, errs)
	}
	if rep.Problem == "" || len(rep.Diagnostics) == 0 {
		t.Fatalf("partial report %+v", rep)
	}
	for _, d := range rep.Diagnostics {
		if d.Computable || len(d.Missing) != 1 || !strings.HasPrefix(d.Missing[0], "lwp") {
			t.Errorf("%s: %+v", d.Output, d)
		}
	}
}

func TestInspectUsage(t *testing.T) {
	code, out, errs := runCmd("inspect", "--help")
	if code != ExitOK || errs != "" || !strings.Contains(out, "Usage:\n  warmrain inspect FILE") || !strings.Contains(out, "Example:") || !strings.Contains(out, "--bind") {
		t.Errorf("--help: exit %d stdout %q stderr %q", code, out, errs)
	}
	for _, args := range [][]string{{}, {"--nosuch", sampleFile}, {"absent*.nc", sampleFile}} {
		code, out, errs := runCmd(append([]string{"inspect"}, args...)...)
		if code != ExitUsage || out != "" || errs == "" {
			t.Errorf("%v: exit %d stdout %q stderr %q", args, code, out, errs)
		}
	}
	// Several files are an archive (study_test.go): absent ones cannot be read.
	code, out, errs = runCmd("inspect", "a.nc", "b.nc")
	if code != ExitFailure || !strings.Contains(out, "a.nc: cannot be read") || !strings.Contains(errs, "2 of 2 files") {
		t.Errorf("two absent files: exit %d stdout %q stderr %q", code, out, errs)
	}
	code, out, errs = runCmd("inspect", filepath.Join(t.TempDir(), "absent.nc"))
	if code != ExitFailure || out != "" || !strings.Contains(errs, "absent.nc") {
		t.Errorf("absent file: exit %d stdout %q stderr %q", code, out, errs)
	}
}

// A file written by an outside library (xarray, Debian's python3) is read the same.
func TestInspectXarrayFile(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	// Debian's python3 (the first python3 on PATH may be one without xarray).
	py := "/usr/bin/python3"
	if err := exec.Command(py, "-c", "import xarray, netCDF4").Run(); err != nil {
		skipOrFailMissing(t, py+" with python3-xarray and python3-netcdf4")
	}
	f := filepath.Join(t.TempDir(), "xr.nc")
	script := `
import sys, numpy as np, xarray as xr
lat = np.array([10.0, 9.0, 8.0]); lon = np.array([100.0, 101.0])
lwp = np.array([[80.0, 120.0], [np.nan, 60.0], [150.0, 90.0]])  # g m-2, invented
re = np.array([[10.0, 14.0], [np.nan, 9.0], [16.0, 12.0]])       # um, invented
ds = xr.Dataset({
  "clwp": (("lat", "lon"), lwp, {"units": "g m-2", "standard_name": "atmosphere_mass_content_of_cloud_liquid_water"}),
  "reff": (("lat", "lon"), re, {"units": "um"}),
}, coords={"lat": ("lat", lat, {"units": "degrees_north"}), "lon": ("lon", lon, {"units": "degrees_east"})})
ds.to_netcdf(sys.argv[1], encoding={"clwp": {"zlib": True, "complevel": 3, "chunksizes": (1, 2)}})
`
	if b, err := exec.Command(py, "-c", script, f).CombinedOutput(); err != nil {
		t.Fatalf("xarray writer: %v\n%s", err, b)
	}
	rep, code, errs := inspectJSON(t, f)
	if code != ExitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	lwp := roleOf(rep, grid.RoleLWP)
	if lwp.Variable != "clwp" || lwp.Deflate != 3 || len(lwp.Chunks) != 2 || lwp.Chunks[0] != 1 {
		t.Errorf("clwp storage: %+v", lwp)
	}
	// Values written above: min 60, max 150, mean 100 g m-2 over 5 valid cells.
	if s := lwp.Stats; float64(s.Min) != 60 || float64(s.Max) != 150 || math.Abs(float64(s.Mean)-100) > 1e-9 || s.Missing != 1 {
		t.Errorf("clwp stats %+v", s)
	}
	if !rep.Layout.LatDescending || rep.Layout.LatLon2D {
		t.Errorf("layout %+v", rep.Layout)
	}
}
