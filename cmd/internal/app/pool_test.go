package app

// Batch runs in supervised worker processes: a crash inside the C libraries
// fails that file alone, a huge record never blocks the parent, "--" and
// --jobs work together, and the manifest stays whole.

import (
	"bytes"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// runProcTimeout is runProc that fails the test instead of hanging.
func runProcTimeout(t *testing.T, limit time.Duration, args ...string) (code int, stderr string) {
	t.Helper()
	type res struct {
		code int
		e    string
	}
	ch := make(chan res, 1)
	go func() {
		var o, e bytes.Buffer
		c := Run(args, &o, &e)
		ch <- res{c, e.String()}
	}()
	select {
	case r := <-ch:
		return r.code, r.e
	case <-time.After(limit):
		t.Fatalf("warmrain %v: still running after %v", args, limit)
	}
	return 0, ""
}

// nczarrScalar writes an NCZarr store (ncgen) holding a scalar variable beside
// LWP and r_e: opening it makes libnetcdf crash with a segmentation fault.
func nczarrScalar(t *testing.T, dir string) string {
	t.Helper()
	ncgen := requireTool(t, "ncgen")
	cdl := filepath.Join(dir, "scalar.cdl")
	os.WriteFile(cdl, []byte(`netcdf scalar {
dimensions: y = 3 ; x = 4 ;
variables:
  float lwp(y, x) ; lwp:units = "g m-2" ; lwp:standard_name = "atmosphere_mass_content_of_cloud_liquid_water" ;
  float re(y, x) ; re:units = "um" ; re:standard_name = "effective_radius_of_cloud_liquid_water_particles_at_liquid_water_cloud_top" ;
  int station ;
data:
  lwp = 100, 100, 100, 100, 100, 100, 100, 100, 100, 100, 100, 100 ;
  re = 12, 12, 12, 12, 12, 12, 12, 12, 12, 12, 12, 12 ;
  station = 5 ;
}
`), 0o644)
	url := "file://" + filepath.Join(dir, "scalar.zarr") + "#mode=nczarr,file"
	if b, err := exec.Command(ncgen, "-k", "nc4", "-o", url, cdl).CombinedOutput(); err != nil {
		t.Fatalf("ncgen nczarr: %v\n%s", err, b)
	}
	return url
}

func TestProcessCrashIsolation(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	src := samplePath(t)
	dir := t.TempDir()
	for _, n := range []string{"a.nc", "crash_b.nc", "c.nc", "d.nc"} {
		copyFile(t, src, filepath.Join(dir, n))
	}
	store := nczarrScalar(t, dir)
	t.Setenv(testCrashEnv, "crash_") // inherited by the worker processes
	for _, jobs := range []string{"1", "2"} {
		t.Run("jobs"+jobs, func(t *testing.T) {
			out := filepath.Join(t.TempDir(), "out")
			os.Mkdir(out, 0o755)
			ins := []string{filepath.Join(dir, "a.nc"), filepath.Join(dir, "crash_b.nc"), store, filepath.Join(dir, "c.nc"), filepath.Join(dir, "d.nc")}
			code, stderr := runProcTimeout(t, 3*time.Minute, append(append([]string{"process"}, ins...), "-o", out, "--jobs", jobs, "--no-collector", "--name", "{stem}_{index}.nc")...)
			if code != ExitFailure || !strings.Contains(stderr, "2 of 5 files failed") {
				t.Fatalf("exit %d:\n%s", code, stderr)
			}
			for _, n := range []string{"a_0.nc", "c_3.nc", "d_4.nc"} {
				if !fileExists(filepath.Join(out, n)) {
					t.Errorf("%s missing: a crash took a sibling with it\n%s", n, stderr)
				}
			}
			recs := manifest(t, filepath.Join(out, "warmrain-manifest.jsonl"))
			if len(recs) != 5 {
				t.Fatalf("%d records: %v", len(recs), recs)
			}
			byIn := map[string]map[string]any{}
			for _, r := range recs {
				byIn[r["input"].(string)] = r
			}
			crashed := byIn[ins[1]]
			if crashed["status"] != "failed" || crashed["signal"] != "SIGSEGV" || !strings.Contains(crashed["error"].(string), "crashed") {
				t.Errorf("crashed file's record: %v", crashed)
			}
			if !strings.Contains(stderr, "crash_b.nc: failed") || strings.Contains(stderr, "goroutine ") {
				t.Errorf("stderr does not name the crashed file plainly:\n%s", stderr)
			}
			// The NCZarr store with a scalar variable: a libnetcdf segfault, or a
			// clear refusal once it is recognised; either way that file alone fails.
			if r := byIn[store]; r["status"] != "failed" {
				t.Errorf("NCZarr store with a scalar: %v", r)
			} else {
				t.Logf("NCZarr store with a scalar: %v", r["error"])
			}
			if tmp := tmpFiles(t, out); len(tmp) != 0 {
				t.Errorf("temporary files left: %v", tmp)
			}
		})
	}
}

// TestProcessDoubleDashJobs: "--" before the inputs with --jobs (the workers'
// own options once landed after it and each worker started a batch of its own).
func TestProcessDoubleDashJobs(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	src := samplePath(t)
	dir := t.TempDir()
	a, b := filepath.Join(dir, "a.nc"), filepath.Join(dir, "b.nc")
	copyFile(t, src, a)
	copyFile(t, src, b)
	out := filepath.Join(dir, "out") + "/"
	os.Mkdir(out, 0o755)
	code, stderr := runProcTimeout(t, 2*time.Minute, "process", "-o", out, "--jobs", "2", "--no-collector", "--", a, b)
	if code != 0 || !fileExists(filepath.Join(out, "a_warmrain.nc")) || !fileExists(filepath.Join(out, "b_warmrain.nc")) {
		t.Fatalf("exit %d:\n%s", code, stderr)
	}
}

// TestProcessHugeRecord: a file whose error quotes a 5 MiB attribute, in a
// batch with --jobs 2: the run ends, the manifest keeps a cut error text and
// stderr the whole of it.
func TestProcessHugeRecord(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	py := requireTool(t, "/usr/bin/python3")
	dir := t.TempDir()
	huge := filepath.Join(dir, "huge.nc")
	script := `import sys, netCDF4
d = netCDF4.Dataset(sys.argv[1], "w")
d.createDimension("y", 3); d.createDimension("x", 4)
v = d.createVariable("lwp", "f4", ("y", "x")); v.units = "g m-2 " + "x" * (5 << 20)
v.standard_name = "atmosphere_mass_content_of_cloud_liquid_water"; v[:] = 100
v = d.createVariable("re", "f4", ("y", "x")); v.units = "um"
v.standard_name = "effective_radius_of_cloud_liquid_water_particles_at_liquid_water_cloud_top"; v[:] = 12
d.close()
`
	if b, err := exec.Command(py, "-c", script, huge).CombinedOutput(); err != nil {
		t.Fatalf("python: %v\n%s", err, b)
	}
	good := filepath.Join(dir, "good.nc")
	copyFile(t, samplePath(t), good)
	out := filepath.Join(dir, "out")
	os.Mkdir(out, 0o755)
	code, stderr := runProcTimeout(t, 2*time.Minute, "process", huge, good, "-o", out, "--jobs", "2", "--no-collector")
	if code != ExitFailure || !fileExists(filepath.Join(out, "good_warmrain.nc")) || len(stderr) < 5<<20 {
		t.Fatalf("exit %d, %d bytes of stderr: %.500s", code, len(stderr), stderr)
	}
	for _, r := range manifest(t, filepath.Join(out, "warmrain-manifest.jsonl")) {
		if e, _ := r["error"].(string); len(e) > 2000 || (r["input"] == huge && !strings.Contains(e, "full text on stderr")) {
			t.Errorf("record of %v: %d bytes of error", r["input"], len(e))
		}
	}
}
