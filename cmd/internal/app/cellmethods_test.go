package app

import (
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"github.com/warmrain/warmrain/grid"
)

// cellMethodsCDL is a small daily product (invented values) whose LWP and r_e carry the
// cell_methods given; CF §7.3 syntax, "where cloud" with the area type cloud (§7.3.3).
func cellMethodsCDL(lwpCM, reCM string) string {
	attr := func(v, cm string) string {
		if cm == "" {
			return ""
		}
		return "\t\t" + v + ":cell_methods = \"" + cm + "\" ;\n"
	}
	return `netcdf daily {
dimensions:
	time = 2 ;
	lat = 2 ;
	lon = 3 ;
	nv = 2 ;
variables:
	double time(time) ;
		time:units = "days since 2020-01-01" ;
		time:standard_name = "time" ;
		time:bounds = "time_bnds" ;
	double time_bnds(time, nv) ;
	float lat(lat) ;
		lat:units = "degrees_north" ;
		lat:standard_name = "latitude" ;
	float lon(lon) ;
		lon:units = "degrees_east" ;
		lon:standard_name = "longitude" ;
	float lwp(time, lat, lon) ;
		lwp:standard_name = "atmosphere_mass_content_of_cloud_liquid_water" ;
		lwp:units = "g m-2" ;
		lwp:_FillValue = -999.f ;
` + attr("lwp", lwpCM) + `	float re(time, lat, lon) ;
		re:standard_name = "effective_radius_of_cloud_liquid_water_particles_at_liquid_water_cloud_top" ;
		re:units = "um" ;
		re:_FillValue = -999.f ;
` + attr("re", reCM) + `data:
	time = 0.5, 1.5 ;
	time_bnds = 0, 1, 1, 2 ;
	lat = 10, 11 ;
	lon = -20, -19, -18 ;
	lwp = 80, 120, 150, 200, 60, 90, 110, 140, 170, 95, 130, 160 ;
	re = 10, 12, 14, 16, 9, 11, 13, 15, 17, 12, 14, 18 ;
}
`
}

// TestCellMethodsInherited: the diagnostics' cell_methods follow the inputs' time part (and
// its "where cloud"), from files written by ncgen; disagreeing inputs follow the documented
// rule (a method other than point wins) with a warning on stderr.
func TestCellMethodsInherited(t *testing.T) {
	ncgen := requireTool(t, "ncgen")
	cases := []struct {
		name, lwp, re, want string
		warn, short         bool // short: also in the fast tier
	}{
		{"daily means where cloud", "time: mean where cloud", "time: mean where cloud", "time: mean where cloud", false, true},
		{"instantaneous", "time: point", "time: point", "time: point", false, false},
		{"nothing said", "", "", "time: point", false, true},
		{"in-cloud area mean of daily means", "area: mean where cloud time: mean", "area: mean where cloud time: mean", "area: mean where cloud time: mean", false, false},
		{"daily means of in-cloud area means", "time: mean area: mean where cloud", "time: mean area: mean where cloud", "time: mean area: mean where cloud", false, false},
		{"grid-box mean: area part not inherited", "time: mean area: mean", "time: mean", "time: mean", false, false},
		{"LWP point, r_e mean", "time: point", "time: mean", "time: mean", true, true},
		{"only r_e says", "", "time: maximum", "time: maximum", false, false},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if testing.Short() && !c.short {
				t.Skip("full tier only (make check); go test -short runs three of the cases")
			}
			dir := t.TempDir()
			cdl := filepath.Join(dir, "daily.cdl")
			if err := os.WriteFile(cdl, []byte(cellMethodsCDL(c.lwp, c.re)), 0o644); err != nil {
				t.Fatal(err)
			}
			in, out := filepath.Join(dir, "daily.nc"), filepath.Join(dir, "out.nc")
			if b, err := exec.Command(ncgen, "-k", "nc4", "-o", in, cdl).CombinedOutput(); err != nil {
				t.Fatalf("ncgen: %v\n%s", err, b)
			}
			code, _, stderr := runProc(t, "process", in, "-o", out, "-q", "--outputs", "droplet_number,drizzle_probability")
			if code != 0 {
				t.Fatalf("process: %d\n%s", code, stderr)
			}
			fi, err := grid.Describe(out)
			if err != nil {
				t.Fatal(err)
			}
			for _, name := range []string{"droplet_number", "drizzle_probability"} {
				v := fi.Var(name)
				if got := v.Text("cell_methods"); got != c.want {
					t.Errorf("%s: cell_methods %q, want %q", name, got, c.want)
				}
				mean := !strings.HasSuffix(c.want, "point")
				if has := strings.Contains(v.Text("comment"), "time statistics"); has != mean {
					t.Errorf("%s: comment %q: says time statistics %v, want %v", name, v.Text("comment"), has, mean)
				}
			}
			if q := fi.Var(qcName); q.Text("cell_methods") != "" {
				t.Errorf("QC: cell_methods %q on a flag variable", q.Text("cell_methods"))
			}
			warned := strings.Contains(stderr, "cell_methods disagree")
			if warned != c.warn {
				t.Errorf("warning %v, want %v; stderr:\n%s", warned, c.warn, stderr)
			}
			if c.warn && (!strings.Contains(stderr, `"time: point"`) || !strings.Contains(stderr, `"time: mean"`)) {
				t.Errorf("the warning must quote both inputs' cell_methods:\n%s", stderr)
			}
		})
	}
}

// TestCellMethodsXarray: an input written by xarray with daily-mean cell_methods gives
// outputs that xarray reads back with the inherited cell_methods, and the QC variable is an
// unsigned integer without _FillValue on which bit tests work as written in the README.
func TestCellMethodsXarray(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	py := requireTool(t, "/usr/bin/python3")
	dir := t.TempDir()
	in, out := filepath.Join(dir, "daily_xr.nc"), filepath.Join(dir, "out.nc")
	mk := `
import sys, numpy as np, xarray as xr
t = np.array([0.5, 1.5])
lwp = np.linspace(40, 220, 2*3*4, dtype=np.float32).reshape(2, 3, 4)
lwp[0, 0, 0] = np.nan  # a missing column: input_missing
re = np.linspace(8, 20, 2*3*4, dtype=np.float32).reshape(2, 3, 4)
cm = "time: mean where cloud"
ds = xr.Dataset(
    {"lwp": (("time", "lat", "lon"), lwp, {"standard_name": "atmosphere_mass_content_of_cloud_liquid_water", "units": "g m-2", "cell_methods": cm}),
     "re": (("time", "lat", "lon"), re, {"standard_name": "effective_radius_of_cloud_liquid_water_particles_at_liquid_water_cloud_top", "units": "um", "cell_methods": cm}),
     "time_bnds": (("time", "nv"), np.array([[0, 1], [1, 2]], dtype=float))},
    coords={"time": ("time", t, {"units": "days since 2020-01-01", "standard_name": "time", "bounds": "time_bnds"}),
            "lat": ("lat", np.array([10, 11, 12], dtype=np.float32), {"units": "degrees_north", "standard_name": "latitude"}),
            "lon": ("lon", np.array([1, 2, 3, 4], dtype=np.float32), {"units": "degrees_east", "standard_name": "longitude"})})
enc = {v: {"_FillValue": np.float32(-999)} for v in ("lwp", "re")}
ds.to_netcdf(sys.argv[1], encoding=enc)
`
	if b, err := exec.Command(py, "-c", mk, in).CombinedOutput(); err != nil {
		t.Fatalf("xarray write: %v\n%s", err, b)
	}
	if code, _, stderr := runProc(t, "process", in, "-o", out, "-q"); code != 0 {
		t.Fatalf("process: %d\n%s", code, stderr)
	}
	qc := readVar(t, out, qcName)
	var want []string
	for _, x := range qc {
		bit := "0"
		if uint32(x)&4 != 0 {
			bit = "1"
		}
		want = append(want, bit)
	}
	check := `
import sys, numpy as np, xarray as xr
ds = xr.open_dataset(sys.argv[1])
q = ds["warm_rain_qc"]
assert q.dtype.kind == "u" and q.dtype.itemsize == 4, q.dtype
assert "_FillValue" not in q.attrs and q.encoding.get("_FillValue") is None, (q.attrs, q.encoding)
masks = q.attrs["flag_masks"]
assert masks.dtype == q.dtype, (masks.dtype, q.dtype)
words = q.attrs["flag_meanings"].split()
assert len(words) == len(masks)
assert (((q & int(masks[words.index("input_missing")])) != 0).values[0, 0, 0])
print(" ".join(str(int(x)) for x in ((q & 4) != 0).values.ravel()))
print(ds["droplet_number"].attrs["cell_methods"])
`
	b, err := exec.Command(py, "-c", check, out).CombinedOutput()
	if err != nil {
		t.Fatalf("xarray check: %v\n%s", err, b)
	}
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	if len(lines) != 2 {
		t.Fatalf("xarray check printed %q", b)
	}
	if got := strings.Fields(lines[0]); strings.Join(got, " ") != strings.Join(want, " ") {
		t.Errorf("xarray (q & 4) != 0 = %v; through grid %v", got, want)
	}
	if lines[1] != "time: mean where cloud" {
		t.Errorf("droplet_number cell_methods through xarray %q", lines[1])
	}
}
