package cflint

import (
	"os"
	"os/exec"
	"path/filepath"
	"testing"
)

// pythonXarray returns a Python interpreter that imports xarray and
// h5netcdf (Debian python3-xarray, python3-h5netcdf live under
// /usr/bin/python3, which another python3 on PATH may shadow).
func pythonXarray(t *testing.T) string {
	t.Helper()
	for _, p := range []string{"python3", "/usr/bin/python3"} {
		if exec.Command(p, "-c", "import xarray, h5netcdf").Run() == nil {
			return p
		}
	}
	if inCI() {
		t.Fatal("python3 with xarray and h5netcdf is required in CI")
	}
	t.Skip("python3 with xarray and h5netcdf not found")
	return ""
}

// xarrayScript writes a small file with xarray's h5netcdf engine, which
// stores every text attribute as NC_STRING (doc/netcdf.md#go-netcdf).
const xarrayScript = `
import sys, warnings
warnings.simplefilter("ignore")
import numpy as np, xarray as xr
lat = np.array([-15.05, -15.15]); lon = np.array([-84.95, -84.85, -84.75])
ds = xr.Dataset(
  {"re": (("lat", "lon"), np.full((2, 3), 10.5, dtype="float32"),
          {"standard_name": "effective_radius_of_cloud_liquid_water_particles_at_liquid_water_cloud_top", "units": "um"}),
   "ctp": (("lat", "lon"), np.full((2, 3), 880.0, dtype="float32"),
          {"standard_name": "air_pressure_at_cloud_top", "units": sys.argv[2]}),
   "qc": (("lat", "lon"), np.zeros((2, 3), dtype="int8"),
          {"flag_masks": np.array([1, 2], dtype="int8"), "flag_meanings": sys.argv[3]})},
  coords={"lat": ("lat", lat, {"standard_name": "latitude", "units": "degrees_north"}),
          "lon": ("lon", lon, {"standard_name": "longitude", "units": "degrees_east"})},
  attrs={"Conventions": "CF-1.13 ACDD-1.3", "history": "2026-12-01T00:00:00Z: written by xarray in a test"})
enc = {v: {"_FillValue": np.float32(-999)} for v in ["re", "ctp"]}
enc["qc"] = {"_FillValue": None}
ds.to_netcdf(sys.argv[1], engine="h5netcdf", encoding=enc)
`

// TestXarrayStringAttributes lints files whose text attributes are
// NC_STRING: a clean one, and one with "mb" and a bad flag_meanings.
func TestXarrayStringAttributes(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	tab := needTable(t)
	py := pythonXarray(t)
	for _, c := range []struct {
		name, units, meanings string
		want                  []string
	}{
		{"clean", "hPa", "input_missing not_liquid", nil},
		{"faulty", "mb", "input_missing", []string{RuleUnitsMb, RuleCanonical, RuleFlagMeanings}},
	} {
		p := filepath.Join(t.TempDir(), c.name+".nc")
		if b, err := exec.Command(py, "-c", xarrayScript, p, c.units, c.meanings).CombinedOutput(); err != nil {
			t.Fatalf("xarray writer: %v\n%s", err, b)
		}
		if _, err := os.Stat(p); err != nil {
			t.Fatal(err)
		}
		fs, err := Check(p, Options{Table: tab, Ours: true})
		if err != nil {
			t.Fatal(err)
		}
		got := map[string]bool{}
		for _, f := range fs {
			got[f.Rule] = true
			if !hasWord(c.want, f.Rule) {
				t.Errorf("%s: unexpected finding %v", c.name, f)
			}
		}
		for _, r := range c.want {
			if !got[r] {
				t.Errorf("%s: no %s finding; got %v", c.name, r, fs)
			}
		}
	}
}
