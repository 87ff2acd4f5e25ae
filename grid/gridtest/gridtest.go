// Package gridtest writes the real-product fixtures of warmrain's tests with
// the real tools of each format: HDF4 files from CDL with ncgen-hdf (Debian
// hdf4-tools), netCDF-4 granules with groups with netCDF4-python, and
// one-variable-per-file model output from CDL with ncgen. It also reads values
// back through those outside tools for independent checks. Tests only.
package gridtest

import (
	"encoding/json"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"sync"
	"testing"
)

// Need skips (or, with CI=true, fails) when a tool is missing.
func Need(t testing.TB, what string, ok bool) {
	t.Helper()
	if ok {
		return
	}
	if os.Getenv("CI") == "true" {
		t.Fatalf("%s is required in CI but missing", what)
	}
	t.Skipf("%s not available", what)
}

var (
	pyOnce sync.Once
	pyPath string
)

// Python runs script with args under Debian's python3 (with netCDF4 and
// numpy) and returns its stdout.
func Python(t testing.TB, script string, args ...string) string {
	t.Helper()
	pyOnce.Do(func() {
		for _, p := range []string{"/usr/bin/python3", "python3"} {
			if exec.Command(p, "-c", "import netCDF4, numpy").Run() == nil {
				pyPath = p
				return
			}
		}
	})
	Need(t, "python3 with netCDF4 and numpy (Debian python3-netcdf4)", pyPath != "")
	cmd := exec.Command(pyPath, append([]string{"-c", script}, args...)...)
	var stderr strings.Builder
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("python: %v\n%s", err, stderr.String())
	}
	return string(out)
}

// Floats turns JSON numbers and nulls (missing) into float64 and NaN.
func Floats(v []*float64) []float64 {
	out := make([]float64, len(v))
	for i, p := range v {
		out[i] = math.NaN()
		if p != nil {
			out[i] = *p
		}
	}
	return out
}

// HDF4Decode is HDF4's calibration (HDF4 User's Guide, SDsetcal): value =
// scale_factor * (stored - add_offset); fill and values outside valid_range
// (stored units) are missing.
func HDF4Decode(stored []float64, scale, offset, fill, lo, hi float64) []float64 {
	out := make([]float64, len(stored))
	for i, s := range stored {
		if math.IsNaN(s) || s == fill || s < lo || s > hi {
			out[i] = math.NaN()
			continue
		}
		out[i] = scale * (s - offset)
	}
	return out
}

// HDF4 fixtures are written from CDL by ncgen-hdf (Debian hdf4-tools). CDL as
// ncgen-hdf reads it cannot spell a name with blanks, so for those the CDL is
// compiled to C (ncgen-hdf -c), the names' string literals are replaced, and
// the program is built against libmfhdf and run: the file is still written by
// the HDF4 library from the same CDL.

// NCGenHDF writes cdl (whose "netcdf NAME {" line names the file) as an HDF4
// file in dir and returns its path. rename maps names in the CDL to the names
// the file gets.
func NCGenHDF(t testing.TB, dir, cdl string, rename map[string]string) string {
	t.Helper()
	if len(rename) == 0 {
		_, err := exec.LookPath("ncgen-hdf")
		Need(t, "ncgen-hdf (Debian hdf4-tools)", err == nil)
		src, name := writeCDL(t, dir, cdl)
		out := filepath.Join(dir, name+".hdf")
		if b, err := exec.Command("ncgen-hdf", "-o", out, src).CombinedOutput(); err != nil {
			t.Fatalf("ncgen-hdf: %v\n%s", err, b)
		}
		return out
	}
	return NCGenC(t, dir, cdl, rename, "", false)
}

func writeCDL(t testing.TB, dir, cdl string) (path, name string) {
	t.Helper()
	m := regexp.MustCompile(`netcdf\s+(\w+)\s*\{`).FindStringSubmatch(cdl)
	if m == nil {
		t.Fatal("CDL has no netcdf NAME { line")
	}
	src := filepath.Join(dir, m[1]+".cdl")
	if err := os.WriteFile(src, []byte(cdl), 0o644); err != nil {
		t.Fatal(err)
	}
	return src, m[1]
}

// NCGenC compiles cdl to C with ncgen-hdf -c, renames names (string literals),
// adds body (C statements using the generated ncid and NAME_id variables)
// before the file is closed, builds the program and runs it. Built against
// libmfhdf it writes an HDF4 file (NAME.hdf); with netcdf3 it is built against
// libnetcdf's netCDF-2 interface instead and writes the same contents as a
// netCDF-3 classic file (NAME.nc), for side-by-side comparisons.
func NCGenC(t testing.TB, dir, cdl string, rename map[string]string, body string, netcdf3 bool) string {
	t.Helper()
	_, err := exec.LookPath("ncgen-hdf")
	Need(t, "ncgen-hdf (Debian hdf4-tools)", err == nil)
	src, name := writeCDL(t, dir, cdl)
	out := filepath.Join(dir, name+".hdf")
	if netcdf3 {
		out = filepath.Join(dir, name+".nc")
	}
	code, err := exec.Command("ncgen-hdf", "-c", src).Output()
	if err != nil {
		t.Fatalf("ncgen-hdf -c: %v", err)
	}
	c := strings.Replace(string(code), `nccreate("`+name+`"`, `nccreate("`+out+`"`, 1)
	for from, to := range rename {
		if !strings.Contains(c, `"`+from+`"`) {
			t.Fatalf("generated C does not name %q", from)
		}
		c = strings.ReplaceAll(c, `"`+from+`"`, `"`+to+`"`)
	}
	if body != "" {
		i := strings.LastIndex(c, "ncclose (ncid);")
		if i < 0 {
			t.Fatal("generated C has no ncclose")
		}
		c = c[:i] + "{\n" + body + "\n}\n   " + c[i:]
	}
	if netcdf3 { // libnetcdf's netcdf.h declares the same netCDF-2 interface
		if i := strings.Index(c, "\nint\nmain"); i >= 0 {
			c = "#include <netcdf.h>\n" + c[i:]
		}
	}
	csrc := filepath.Join(dir, name+"-gen.c")
	if err := os.WriteFile(csrc, []byte(c), 0o644); err != nil {
		t.Fatal(err)
	}
	exe := filepath.Join(dir, name+"-gen")
	args := []string{"-O1", "-I/usr/include/hdf", "-o", exe, csrc, "-L/usr/lib", "-lmfhdf", "-ldf", "-ltirpc"}
	if netcdf3 {
		args = []string{"-O1", "-o", exe, csrc, "-lnetcdf"}
	}
	if b, err := exec.Command("cc", args...).CombinedOutput(); err != nil {
		Need(t, "a C compiler with libhdf4-dev and libnetcdf-dev to build the generated writer ("+strings.TrimSpace(string(b))+")", false)
	}
	run := exec.Command(exe)
	run.Dir = dir
	if b, err := run.CombinedOutput(); err != nil {
		t.Fatalf("generated writer: %v\n%s", err, b)
	}
	return out
}

// NCDumpHDF returns the stored values of one variable as ncdump-hdf prints them
// (no decoding: the HDF4 tool prints the numbers in the file). A value printed
// as "_" (ncdump's fill) is NaN.
func NCDumpHDF(t testing.TB, path, name string) []float64 {
	t.Helper()
	b, err := exec.Command("ncdump-hdf", "-v", name, path).Output()
	if err != nil {
		t.Fatalf("ncdump-hdf -v %q: %v", name, err)
	}
	s := string(b)
	i := strings.Index(s, "\ndata:")
	if i < 0 {
		t.Fatalf("ncdump-hdf printed no data section:\n%s", s)
	}
	s = s[i:]
	j := strings.Index(s, " "+name+" =")
	if j < 0 {
		t.Fatalf("ncdump-hdf printed no data for %q:\n%s", name, s)
	}
	s = s[j+len(name)+3:]
	s = s[:strings.Index(s, ";")]
	var out []float64
	for _, f := range strings.FieldsFunc(s, func(r rune) bool { return r == ',' || r == ' ' || r == '\n' || r == '\t' }) {
		if f == "_" {
			out = append(out, math.NaN())
			continue
		}
		x, err := strconv.ParseFloat(strings.TrimRight(f, "sbfLd"), 64)
		if err != nil {
			t.Fatalf("ncdump-hdf value %q: %v", f, err)
		}
		out = append(out, x)
	}
	return out
}

// hdf4SwathCDL mimics a level-2 cloud product of a polar imager: a swath with
// 2-D latitude and longitude, 16-bit integers calibrated the HDF4 way
// (SDsetcal's attributes: scale_factor, scale_factor_err, add_offset,
// add_offset_err, calibrated_nt), fill values and valid ranges in stored units,
// and an r_e data set whose name has blanks (written as Effective_Radius and
// renamed). Invented numbers.
const hdf4SwathCDL = `netcdf swath_l2 {
dimensions:
	Cell_Along_Swath = 4 ;
	Cell_Across_Swath = 5 ;
variables:
	float Latitude(Cell_Along_Swath, Cell_Across_Swath) ;
		Latitude:units = "degrees_north" ;
		Latitude:long_name = "Geodetic Latitude" ;
	float Longitude(Cell_Along_Swath, Cell_Across_Swath) ;
		Longitude:units = "degrees_east" ;
		Longitude:long_name = "Geodetic Longitude" ;
	short Cloud_Water_Path(Cell_Along_Swath, Cell_Across_Swath) ;
		Cloud_Water_Path:long_name = "Column Water Path, liquid phase" ;
		Cloud_Water_Path:units = "g/m^2" ;
		Cloud_Water_Path:valid_range = 0s, 10000s ;
		Cloud_Water_Path:_FillValue = -9999s ;
		Cloud_Water_Path:scale_factor = 0.5 ;
		Cloud_Water_Path:scale_factor_err = 0. ;
		Cloud_Water_Path:add_offset = -40. ;
		Cloud_Water_Path:add_offset_err = 0. ;
		Cloud_Water_Path:calibrated_nt = 5 ;
	short Effective_Radius(Cell_Along_Swath, Cell_Across_Swath) ;
		Effective_Radius:long_name = "Cloud Particle Effective Radius, liquid phase" ;
		Effective_Radius:units = "micron" ;
		Effective_Radius:valid_range = 0s, 10000s ;
		Effective_Radius:_FillValue = -9999s ;
		Effective_Radius:scale_factor = 0.01 ;
		Effective_Radius:scale_factor_err = 0. ;
		Effective_Radius:add_offset = 100. ;
		Effective_Radius:add_offset_err = 0. ;
		Effective_Radius:calibrated_nt = 5 ;
	short Cloud_Optical_Thickness(Cell_Along_Swath, Cell_Across_Swath) ;
		Cloud_Optical_Thickness:long_name = "Cloud Optical Thickness, liquid phase" ;
		Cloud_Optical_Thickness:units = "none" ;
		Cloud_Optical_Thickness:valid_range = 0s, 15000s ;
		Cloud_Optical_Thickness:_FillValue = -9999s ;
		Cloud_Optical_Thickness:scale_factor = 0.01 ;
		Cloud_Optical_Thickness:add_offset = 0. ;
	short Cloud_Top_Temperature(Cell_Along_Swath, Cell_Across_Swath) ;
		Cloud_Top_Temperature:long_name = "Temperature from Ambient Pressure Height" ;
		Cloud_Top_Temperature:units = "K" ;
		Cloud_Top_Temperature:valid_range = 0s, 20000s ;
		Cloud_Top_Temperature:_FillValue = -32768s ;
		Cloud_Top_Temperature:scale_factor = 0.01 ;
		Cloud_Top_Temperature:add_offset = -15000. ;
data:
 Latitude = -20.0, -20.1, -20.2, -20.3, -20.4, -20.5, -20.6, -20.7, -20.8, -20.9,
  -21.0, -21.1, -21.2, -21.3, -21.4, -21.5, -21.6, -21.7, -21.8, -21.9 ;
 Longitude = -80.0, -80.1, -80.2, -80.3, -80.4, -80.5, -80.6, -80.7, -80.8, -80.9,
  -81.0, -81.1, -81.2, -81.3, -81.4, -81.5, -81.6, -81.7, -81.8, -81.9 ;
 Cloud_Water_Path = 60, 120, 200, -9999, 360, 80, 140, 220, 300, 400,
  20000, 100, 160, 240, 320, 90, 130, 170, 210, 250 ;
 Effective_Radius = 900, 1000, 1200, 1400, 1600, 1100, -9999, 1300, 1500, 1700,
  1200, 1300, 1400, 1500, 1600, 1000, 1100, 1200, 1300, 1400 ;
 Cloud_Optical_Thickness = 500, 800, 1200, 1500, 2000, 700, 900, 1300, 1700, 2400,
  600, 1000, 1400, 1800, 2200, 650, 950, 1250, 1550, 1850 ;
 Cloud_Top_Temperature = 13600, 13650, 13700, 13750, 13800, 13550, 13600, 13650, 13700, 13750,
  13500, 13550, 13600, 13650, 13700, 11500, 13500, 13550, 13600, 13650 ;
}
`

// HDF4Swath writes the level-2 swath fixture into dir.
func HDF4Swath(t testing.TB, dir string) string {
	return NCGenHDF(t, dir, hdf4SwathCDL, map[string]string{"Effective_Radius": "Cloud Effective Radius"})
}

// pyGroups writes a granule laid out like the level-2 cloud products of newer
// imagers (netCDF-4 groups: geophysical_data, navigation_data,
// processing_control), with two retrievals of each quantity (1.6 and 2.1 um)
// so that the roles are ambiguous until bound by group path, CF packing, and
// coordinates given by relative group paths. It prints the decoded values
// netCDF4-python reads back. Invented numbers.
const pyGroups = `
import sys, json, numpy as np, netCDF4
ny, nx = 6, 5
rng = np.random.default_rng(7)
ds = netCDF4.Dataset(sys.argv[1], "w")
ds.createDimension("number_of_lines", ny)
ds.createDimension("pixels_per_line", nx)
ds.title = "invented level-2 cloud granule"
nav = ds.createGroup("navigation_data")
geo = ds.createGroup("geophysical_data")
pc = ds.createGroup("processing_control")
pc.software_name = "test"
yy, xx = np.meshgrid(np.arange(ny), np.arange(nx), indexing="ij")
lat = nav.createVariable("latitude", "f4", ("number_of_lines", "pixels_per_line"))
lat.standard_name = "latitude"; lat.units = "degrees_north"
lat[:] = -15 - 0.1 * yy
lon = nav.createVariable("longitude", "f4", ("number_of_lines", "pixels_per_line"))
lon.standard_name = "longitude"; lon.units = "degrees_east"
lon[:] = -90 + 0.1 * xx
vals = {}
for band in ("16", "21"):
    cwp = geo.createVariable("cwp_" + band, "i2", ("number_of_lines", "pixels_per_line"), fill_value=-32767)
    cwp.standard_name = "atmosphere_mass_content_of_cloud_liquid_water"
    cwp.units = "g m-2"; cwp.scale_factor = 0.1; cwp.add_offset = 0.0
    cwp.coordinates = "../navigation_data/longitude ../navigation_data/latitude"
    w = rng.uniform(30, 300, (ny, nx)); w[0, 0] = np.nan
    cwp[:] = np.ma.masked_invalid(w)
    cer = geo.createVariable("cer_" + band, "i2", ("number_of_lines", "pixels_per_line"), fill_value=-32767)
    cer.standard_name = "effective_radius_of_cloud_liquid_water_particles_at_liquid_water_cloud_top"
    cer.units = "um"; cer.scale_factor = 0.01; cer.add_offset = 0.0
    r = rng.uniform(6, 22, (ny, nx)); r[1, 2] = np.nan
    cer[:] = np.ma.masked_invalid(r)
cot = geo.createVariable("cot_21", "f4", ("number_of_lines", "pixels_per_line"), fill_value=np.float32(-999))
cot.standard_name = "atmosphere_optical_thickness_due_to_cloud"; cot.units = "1"
cot[:] = rng.uniform(4, 40, (ny, nx))
ds.close()
back = netCDF4.Dataset(sys.argv[1])
f = lambda v: [None if np.ma.is_masked(x) else float(x) for x in np.ma.masked_invalid(v[:]).ravel()]
g = back["geophysical_data"]
print(json.dumps({"cwp_21": f(g["cwp_21"]), "cer_21": f(g["cer_21"]), "cot_21": f(g["cot_21"]),
                  "lat": f(back["navigation_data"]["latitude"])}))
`

// PyGroups writes the group fixture into dir and returns the path and the
// values netCDF4-python decodes (file units).
func PyGroups(t testing.TB, dir string) (string, map[string][]float64) {
	t.Helper()
	path := filepath.Join(dir, "granule_l2.nc")
	var raw map[string][]*float64
	if err := json.Unmarshal([]byte(Python(t, pyGroups, path)), &raw); err != nil {
		t.Fatal(err)
	}
	out := map[string][]float64{}
	for k, v := range raw {
		out[k] = Floats(v)
	}
	return path, out
}

// cmipCDL is one variable of a monthly model output file the CMIP/CFMIP way
// (one variable per file, the grid and time repeated in each). Invented values.
func cmipCDL(name, varDef, data string, nlat int, lat string) string {
	return `netcdf ` + name + ` {
dimensions:
	time = UNLIMITED ;
	lat = ` + strconv.Itoa(nlat) + ` ;
	lon = 4 ;
	bnds = 2 ;
variables:
	double time(time) ;
		time:units = "days since 2019-01-01" ;
		time:calendar = "standard" ;
		time:standard_name = "time" ;
		time:bounds = "time_bnds" ;
	double time_bnds(time, bnds) ;
	double lat(lat) ;
		lat:units = "degrees_north" ;
		lat:standard_name = "latitude" ;
		lat:bounds = "lat_bnds" ;
	double lat_bnds(lat, bnds) ;
	double lon(lon) ;
		lon:units = "degrees_east" ;
		lon:standard_name = "longitude" ;
	` + varDef + `
// global attributes:
		:Conventions = "CF-1.7 CMIP-6.2" ;
		:variable_id = "` + strings.SplitN(name, "_", 2)[0] + `" ;
data:
 time = 15.5, 45 ;
 time_bnds = 0, 31, 31, 59 ;
 lat = ` + lat + ` ;
 lat_bnds = ` + latBnds(lat) + ` ;
 lon = 0, 90, 180, 270 ;
 ` + data + `
}
`
}

func latBnds(lat string) string {
	var b []string
	for _, f := range strings.Split(lat, ",") {
		x, _ := strconv.ParseFloat(strings.TrimSpace(f), 64)
		b = append(b, strconv.FormatFloat(x-5, 'f', -1, 64), strconv.FormatFloat(x+5, 'f', -1, 64))
	}
	return strings.Join(b, ", ")
}

// CMIPPair writes an lwp file and a reffclwtop file of one model grid into dir
// (3 latitudes, or nlatRe for the r_e file) and returns their paths.
func CMIPPair(t testing.TB, dir string, nlatRe int, latRe string) (lwpPath, rePath string) {
	t.Helper()
	lwp := cmipCDL("lwp_AERmon_TOY_amip_r1i1p1f1_gn_201901-201902",
		`float lwp(time, lat, lon) ;
		lwp:standard_name = "atmosphere_mass_content_of_cloud_liquid_water" ;
		lwp:units = "kg m-2" ;
		lwp:_FillValue = 1.e+20f ;
		lwp:cell_methods = "area: time: mean" ;`,
		`lwp = 0.05, 0.08, 0.12, 0.15, 0.06, 1e20, 0.11, 0.2, 0.04, 0.07, 0.09, 0.13,
  0.055, 0.085, 0.125, 0.155, 0.065, 0.095, 0.115, 0.21, 0.045, 0.075, 0.095, 0.135 ;`, 3, "-30, -20, -10")
	re := cmipCDL("reffclwtop_AERmon_TOY_amip_r1i1p1f1_gn_201901-201902",
		`float reffclwtop(time, lat, lon) ;
		reffclwtop:standard_name = "effective_radius_of_cloud_liquid_water_particles_at_liquid_water_cloud_top" ;
		reffclwtop:units = "m" ;
		reffclwtop:_FillValue = 1.e+20f ;`,
		`reffclwtop = `+reValues(2*nlatRe*4)+` ;`, nlatRe, latRe)
	write := func(name, cdl string) string {
		src := filepath.Join(dir, name+".cdl")
		out := filepath.Join(dir, name+".nc")
		os.WriteFile(src, []byte(cdl), 0o644)
		_, err := exec.LookPath("ncgen")
		Need(t, "ncgen (Debian netcdf-bin)", err == nil)
		if b, err := exec.Command("ncgen", "-k", "nc4", "-o", out, src).CombinedOutput(); err != nil {
			t.Fatalf("ncgen: %v\n%s", err, b)
		}
		return out
	}
	return write("lwp_AERmon_TOY_amip_r1i1p1f1_gn_201901-201902", lwp), write("reffclwtop_AERmon_TOY_amip_r1i1p1f1_gn_201901-201902", re)
}

func reValues(n int) string {
	v := make([]string, n)
	for i := range v {
		v[i] = strconv.FormatFloat(8e-6+float64(i%9)*1e-6, 'g', -1, 64)
	}
	v[2] = "1e20"
	return strings.Join(v, ", ")
}

// pySplit writes one granule of a split level-2 product (the geostationary
// layout: particle size and optical depth in separate files) with its own 2-D
// latitude and longitude, shifted by argv[3] degrees. Invented values.
const pySplit = `
import sys, numpy as np, netCDF4
kind, shift = sys.argv[2], float(sys.argv[3])
ny, nx = 5, 6
yy, xx = np.meshgrid(np.arange(ny), np.arange(nx), indexing="ij")
ds = netCDF4.Dataset(sys.argv[1], "w")
ds.createDimension("y", ny); ds.createDimension("x", nx)
lat = ds.createVariable("latitude", "f4", ("y", "x")); lat.standard_name = "latitude"; lat.units = "degrees_north"
lat[:] = 10 + 0.05 * yy + shift
lon = ds.createVariable("longitude", "f4", ("y", "x")); lon.standard_name = "longitude"; lon.units = "degrees_east"
lon[:] = -120 + 0.05 * xx
spec = {"lwp": ("LWP", "atmosphere_mass_content_of_cloud_liquid_water", "g m-2", 40 + 10 * xx + yy),
        "cps": ("PSD", "effective_radius_of_cloud_liquid_water_particles_at_liquid_water_cloud_top", "um", 8 + xx + 0.5 * yy),
        "cod": ("COD", "atmosphere_optical_thickness_due_to_cloud", "1", 5 + 2 * xx + yy)}[kind]
v = ds.createVariable(spec[0], "f4", ("y", "x"), fill_value=np.float32(-999))
v.standard_name = spec[1]; v.units = spec[2]; v.coordinates = "latitude longitude"
v[:] = spec[3]
ds.close()
`

// SplitGranule writes one file of a split level-2 product (kind lwp, cps or
// cod) into dir, its latitudes shifted by shift degrees.
func SplitGranule(t testing.TB, dir, kind string, shift float64) string {
	t.Helper()
	path := filepath.Join(dir, "L2-"+strings.ToUpper(kind)+"_s20260801.nc")
	Python(t, pySplit, path, kind, strconv.FormatFloat(shift, 'g', -1, 64))
	return path
}
