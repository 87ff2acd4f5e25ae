package samples

import (
	"encoding/json"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"testing"
)

// python3 returns a Python interpreter that imports xarray (Debian's
// python3-xarray lives under /usr/bin/python3, which another python3 on PATH
// may shadow).
func python3(t *testing.T) string {
	t.Helper()
	for _, p := range []string{"python3", "/usr/bin/python3"} {
		if exec.Command(p, "-c", "import xarray, netCDF4").Run() == nil {
			return p
		}
	}
	if os.Getenv("CI") == "true" {
		t.Fatal("python3 with xarray and netCDF4 (Debian python3-xarray, python3-netcdf4) is required in CI")
	}
	t.Skip("python3 with xarray and netCDF4 not found")
	return ""
}

// TestSampleXarrayDecode opens the committed sample with xarray (an outside
// reader): fill values decode to NaN, packed LWP unpacks to float32 g m-2,
// times decode to the configured days, and values equal the generator's.
func TestSampleXarrayDecode(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	py := python3(t)
	const script = `
import json, sys, warnings
warnings.simplefilter("ignore")
import numpy as np, xarray as xr
d = xr.open_dataset(sys.argv[1])
out = {
  "lwp_dtype": str(d.lwp.dtype),
  "lwp": [None if np.isnan(x) else float(x) for x in d.lwp.values.ravel()[::97]],
  "re": [None if np.isnan(x) else float(x) for x in d.re.values.ravel()[::97]],
  "time": [str(x)[:19] for x in d.time.values],
  "lat0": float(d.lat[0]), "latn": float(d.lat[-1]),
  "units": d.lwp.attrs.get("units"),
}
json.dump(out, sys.stdout)
`
	b, err := exec.Command(py, "-c", script, filepath.Join("data", sampleFile)).Output()
	if err != nil {
		t.Fatalf("xarray: %v", err)
	}
	var got struct {
		LWPDtype string     `json:"lwp_dtype"`
		LWPRaw   []*float64 `json:"lwp"`
		ReRaw    []*float64 `json:"re"`
		Time     []string
		Lat0     float64 `json:"lat0"`
		LatN     float64 `json:"latn"`
		Units    string
	}
	if err := json.Unmarshal(b, &got); err != nil {
		t.Fatalf("%v: %s", err, b)
	}
	f, err := DefaultConfig().Fields()
	if err != nil {
		t.Fatal(err)
	}
	if got.LWPDtype != "float32" || got.Units != "g m-2" {
		t.Errorf("lwp decoded as %s in %q, want float32 in g m-2 (doc/netcdf.md#packing)", got.LWPDtype, got.Units)
	}
	wantTimes := []string{"2026-09-21T12:00:00", "2026-09-22T12:00:00", "2026-09-23T12:00:00"}
	for i, w := range wantTimes {
		if i >= len(got.Time) || got.Time[i] != w {
			t.Errorf("time %d = %v, want %s", i, got.Time, w)
			break
		}
	}
	if !(got.Lat0 > got.LatN) {
		t.Errorf("latitude not descending: %g .. %g", got.Lat0, got.LatN)
	}
	nMissing := 0
	for n, k := 0, 0; k < len(f.LWP); n, k = n+1, k+97 {
		for _, c := range []struct {
			name string
			x    *float64
			want float64
			tol  float64
		}{{"lwp", got.LWPRaw[n], f.LWP[k], 0.051}, {"re", got.ReRaw[n], f.Re[k], 1e-5}} {
			switch {
			case c.x == nil && math.IsNaN(c.want):
				nMissing++
			case c.x == nil || math.IsNaN(c.want):
				t.Fatalf("cell %d %s: xarray %v, generator %g", k, c.name, c.x, c.want)
			case math.Abs(*c.x-c.want) > c.tol:
				t.Fatalf("cell %d %s: xarray %g, generator %g", k, c.name, *c.x, c.want)
			}
		}
	}
	if nMissing == 0 {
		t.Error("no missing cell among the sampled ones: fill decoding untested")
	}
}
