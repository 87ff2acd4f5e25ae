package grid

import (
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"testing"

	"github.com/warmrain/warmrain/grid/gridtest"
)

// need skips (or, with CI=true, fails) when a tool is missing (gridtest.Need).
func need(t testing.TB, what string, ok bool) {
	t.Helper()
	gridtest.Need(t, what, ok)
}

// ncgen compiles testdata/<name>.cdl into t.TempDir() with the given kind
// ("classic", "nc4", ...).
func ncgen(t testing.TB, name, kind string) string {
	t.Helper()
	_, err := exec.LookPath("ncgen")
	need(t, "ncgen (Debian netcdf-bin)", err == nil)
	out := filepath.Join(t.TempDir(), strings.TrimSuffix(name, ".cdl")+"."+kind+".nc")
	cmd := exec.Command("ncgen", "-k", kind, "-o", out, filepath.Join("testdata", name))
	if b, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("ncgen %s: %v\n%s", name, err, b)
	}
	return out
}

// ncgenText compiles CDL given as text.
func ncgenText(t testing.TB, cdl, kind string) string {
	t.Helper()
	_, err := exec.LookPath("ncgen")
	need(t, "ncgen (Debian netcdf-bin)", err == nil)
	dir := t.TempDir()
	src := filepath.Join(dir, "in.cdl")
	if err := os.WriteFile(src, []byte(cdl), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "in.nc")
	if b, err := exec.Command("ncgen", "-k", kind, "-o", out, src).CombinedOutput(); err != nil {
		t.Fatalf("ncgen: %v\n%s", err, b)
	}
	return out
}

var (
	pyOnce sync.Once
	pyPath string
)

// python returns a python3 that imports xarray, netCDF4 and h5netcdf (Debian's
// /usr/bin/python3 first: a pyenv python on PATH may lack them).
func python(t testing.TB) string {
	t.Helper()
	pyOnce.Do(func() {
		for _, p := range []string{"/usr/bin/python3", "python3"} {
			if exec.Command(p, "-c", "import xarray, netCDF4, h5netcdf, numpy").Run() == nil {
				pyPath = p
				return
			}
		}
	})
	need(t, "python3 with xarray, netCDF4 and h5netcdf (Debian python3-xarray python3-netcdf4 python3-h5netcdf)", pyPath != "")
	return pyPath
}

// runPy runs a python script with args and returns its stdout.
func runPy(t testing.TB, script string, args ...string) string {
	t.Helper()
	py := python(t)
	cmd := exec.Command(py, append([]string{"-c", script}, args...)...)
	var stderr strings.Builder
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("python: %v\n%s", err, stderr.String())
	}
	return string(out)
}
