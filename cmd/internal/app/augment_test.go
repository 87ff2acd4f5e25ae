package app

// Exact copies: int64 coordinates and variables keep their type and every bit
// (default mode and --augment), and --augment keeps the input's global
// attributes, adding warmrain's.

import (
	"encoding/json"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
)

func TestProcessExactCopies(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	py := requireTool(t, "/usr/bin/python3")
	dir := t.TempDir()
	in := filepath.Join(dir, "ids.nc")
	// netCDF4-python writes the input: an int64 nanosecond time coordinate whose
	// values no double holds exactly, 600 distinct int64 ids near 2^60, and the
	// provider's title and comment.
	script := `import sys, numpy as np, netCDF4
d = netCDF4.Dataset(sys.argv[1], "w")
d.title = "provider title"
d.comment = "do not use for science"
d.createDimension("time", 2); d.createDimension("y", 20); d.createDimension("x", 30)
t = d.createVariable("time", "i8", ("time",)); t.units = "nanoseconds since 2019-01-01"
t[:] = np.array([1546300800123456789, 1546300801123456789], dtype=np.int64)
i = d.createVariable("cell_id", "i8", ("y", "x"))
i[:] = (np.int64(1) << 60) + np.arange(600, dtype=np.int64).reshape(20, 30)
v = d.createVariable("lwp", "f4", ("time", "y", "x")); v.units = "g m-2"
v.standard_name = "atmosphere_mass_content_of_cloud_liquid_water"; v[:] = 120
v = d.createVariable("re", "f4", ("time", "y", "x")); v.units = "um"
v.standard_name = "effective_radius_of_cloud_liquid_water_particles_at_liquid_water_cloud_top"; v[:] = 14
d.close()
`
	if b, err := exec.Command(py, "-c", script, in).CombinedOutput(); err != nil {
		t.Fatalf("python: %v\n%s", err, b)
	}
	read := `import sys, json, numpy as np, netCDF4
d = netCDF4.Dataset(sys.argv[1])
out = {"time_type": str(d["time"].dtype), "time": [str(x) for x in d["time"][:]], "title": d.title, "comment": d.comment}
if "cell_id" in d.variables:
    c = d["cell_id"][:]
    out["id_type"], out["ids"] = str(c.dtype), len(np.unique(c))
    out["id_ok"] = bool((c == (np.int64(1) << 60) + np.arange(600, dtype=np.int64).reshape(20, 30)).all())
print(json.dumps(out))
`
	check := func(t *testing.T, out string, augment bool) {
		b, err := exec.Command(py, "-c", read, out).CombinedOutput()
		if err != nil {
			t.Fatalf("python: %v\n%s", err, b)
		}
		var got struct {
			TimeType string `json:"time_type"`
			Time     []string
			Title    string
			Comment  string
			IDType   string `json:"id_type"`
			IDs      int
			IDOK     bool `json:"id_ok"`
		}
		if err := json.Unmarshal(b, &got); err != nil {
			t.Fatalf("%v: %s", err, b)
		}
		if got.TimeType != "int64" || strings.Join(got.Time, ",") != "1546300800123456789,1546300801123456789" {
			t.Errorf("time coordinate: %s %v", got.TimeType, got.Time)
		}
		if !augment {
			return
		}
		if got.IDType != "int64" || got.IDs != 600 || !got.IDOK {
			t.Errorf("ids: %s, %d distinct, exact %v", got.IDType, got.IDs, got.IDOK)
		}
		if !strings.HasPrefix(got.Title, "provider title") || !strings.Contains(got.Title, "warmrain") ||
			!strings.HasPrefix(got.Comment, "do not use for science") || !strings.Contains(got.Comment, "Research diagnostics") {
			t.Errorf("globals: title %q, comment %q", got.Title, got.Comment)
		}
	}
	for _, augment := range []bool{false, true} {
		out := filepath.Join(dir, map[bool]string{false: "new.nc", true: "aug.nc"}[augment])
		args := []string{"process", in, "-o", out, "--no-collector"}
		if augment {
			args = append(args, "--augment")
		}
		if code, _, stderr := runProc(t, args...); code != 0 {
			t.Fatalf("%v: exit %d: %s", args, code, stderr)
		}
		check(t, out, augment)
		lintClean(t, out)
	}
}

// TestProcessAugmentSubGroups: a variable of a sub-group survives --augment
// (outputs are flat files: it is copied under its plain name, value intact).
func TestProcessAugmentSubGroups(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	py := requireTool(t, "/usr/bin/python3")
	dir := t.TempDir()
	in := filepath.Join(dir, "groups.nc")
	script := `import sys, netCDF4
d = netCDF4.Dataset(sys.argv[1], "w")
d.createDimension("y", 4); d.createDimension("x", 5)
v = d.createVariable("lwp", "f4", ("y", "x")); v.units = "g m-2"
v.standard_name = "atmosphere_mass_content_of_cloud_liquid_water"; v[:] = 120
v = d.createVariable("re", "f4", ("y", "x")); v.units = "um"
v.standard_name = "effective_radius_of_cloud_liquid_water_particles_at_liquid_water_cloud_top"; v[:] = 14
g = d.createGroup("instrument_state"); g.createVariable("gain", "i8", ()); g["gain"][...] = (1 << 60) + 7
d.close()
`
	if b, err := exec.Command(py, "-c", script, in).CombinedOutput(); err != nil {
		t.Fatalf("python: %v\n%s", err, b)
	}
	out := filepath.Join(dir, "aug.nc")
	if code, _, stderr := runProc(t, "process", in, "-o", out, "--no-collector", "--augment"); code != 0 {
		t.Fatalf("--augment with a sub-group: exit %d: %s", code, stderr)
	}
	b, err := exec.Command(py, "-c", `import sys, netCDF4
d = netCDF4.Dataset(sys.argv[1])
print(d["gain"].dtype, int(d["gain"][...]))`, out).CombinedOutput()
	if err != nil || strings.TrimSpace(string(b)) != "int64 1152921504606846983" {
		t.Fatalf("the group's variable in the copy: %v %s", err, b)
	}
}
