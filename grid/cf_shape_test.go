package grid

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// familyFile is what testdata/shapes.py prints about the file it wrote, read back
// with netCDF4-python.
type familyFile struct {
	Path    string
	LWP, Re []*float64
	Dims    []string
	Shape   []int
	Coords  map[string]struct {
		Dims   []string
		Values []float64
	}
	Time    []float64
	LWPName string `json:"lwp_name"`
	ReName  string `json:"re_name"`
}

// writeFamily writes one product family's fixture with netCDF4-python or xarray.
func writeFamily(t *testing.T, family string) familyFile {
	t.Helper()
	python(t)
	path := filepath.Join(t.TempDir(), family+".nc")
	out := runPy(t, mustRead(t, filepath.Join("testdata", "shapes.py")), family, path)
	var f familyFile
	if err := json.Unmarshal([]byte(out), &f); err != nil {
		t.Fatalf("shapes.py %s: %v\n%s", family, err, out)
	}
	f.Path = path
	return f
}

func mustRead(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

func checkValues(t *testing.T, what string, got []float64, want []*float64) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%s: %d values, netCDF4-python %d", what, len(got), len(want))
	}
	for i, w := range want {
		e := math.NaN()
		if w != nil {
			e = *w
		}
		if !near(got[i], e) {
			t.Fatalf("%s[%d] = %g, netCDF4-python %g", what, i, got[i], e)
		}
	}
}

// TestShapeFamilies opens every family of column layouts, checks what the layout
// says (shape, horizontal dimensions, latitude and longitude, time axis) and reads
// every LWP and r_e value through the slab reader, value for value against
// netCDF4-python's own decoding.
func TestShapeFamilies(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	cases := []struct {
		family     string
		shape      Shape
		horizontal []string
		lat, lon   string
		rank       int
		radians    bool
		timeCF     string // CF units of the time axis, "" = none
	}{
		{"icon", ShapeCells, []string{"ncells"}, "clat", "clon", 1, true, "seconds since 1970-01-01 00:00:00"},
		{"sites", ShapeCells, []string{"loc"}, "lat", "lon", 1, false, "hours since 2026-07-01 00:00:00"},
		{"sites_loc_first", ShapeCells, []string{"loc"}, "lat", "lon", 1, false, "hours since 2026-07-01 00:00:00"},
		{"series", ShapeSeries, nil, "lat", "lon", 0, false, "hours since 2026-07-01 00:00:00"},
		{"swath", ShapeGrid, []string{"scan", "pixel"}, "latitude", "longitude", 2, false, ""},
		{"members", ShapeGrid, []string{"lat", "lon"}, "lat", "lon", 1, false, "hours since 2026-07-01 00:00:00"},
	}
	for _, c := range cases {
		t.Run(c.family, func(t *testing.T) {
			f := writeFamily(t, c.family)
			// A small slab budget, so that even these small files are cut into several
			// slabs along their single horizontal dimension or time.
			in, err := Open(f.Path, OpenOptions{SlabBytes: 256})
			if err != nil {
				t.Fatal(err)
			}
			defer in.Close()
			L := in.Layout
			var hz []string
			for _, d := range L.Horizontal {
				hz = append(hz, d.Name)
			}
			if L.Shape != c.shape || !slices.Equal(hz, c.horizontal) {
				t.Errorf("shape %s on %v; want %s on %v", L.Shape, hz, c.shape, c.horizontal)
			}
			if L.Lat != c.lat || L.Lon != c.lon || L.LatLonRank != c.rank || L.LatLonRadians != c.radians {
				t.Errorf("lat/lon %q %q rank %d radians %v; want %q %q %d %v", L.Lat, L.Lon, L.LatLonRank, L.LatLonRadians, c.lat, c.lon, c.rank, c.radians)
			}
			switch {
			case c.timeCF == "" && L.Time != nil:
				t.Errorf("time axis %+v; want none", L.Time)
			case c.timeCF != "" && (L.Time == nil || L.Time.CFUnits != c.timeCF):
				t.Errorf("time axis %+v; want CF units %q", L.Time, c.timeCF)
			}
			for _, name := range []string{c.lat, c.lon} {
				if !slices.Contains(L.Coords, name) {
					t.Errorf("coordinates kept %v lack %s", L.Coords, name)
				}
			}
			if L.Columns != int64(len(f.LWP)) {
				t.Errorf("%d columns; netCDF4-python has %d LWP values", L.Columns, len(f.LWP))
			}
			p := newPlan(in, nil, in.opt.SlabBytes)
			if p.count < 2 {
				t.Errorf("only %d slab(s) with a 256-byte budget", p.count)
			}
			all := readAll(t, in)
			checkValues(t, "lwp", all[RoleLWP], f.LWP)
			checkValues(t, "re", all[RoleRe], f.Re)
			// The time axis, read with our units, against Python's datetime arithmetic.
			if L.Time != nil {
				v := in.Info.Var(L.Time.Var)
				var raw []float64
				if e := onIO(func() { raw, err = in.readAllIO(v) }); e != nil || err != nil {
					t.Fatal(e, err)
				}
				for i, x := range raw {
					if got := L.Time.Seconds(x); math.Abs(got-f.Time[i]) > 1e-3 {
						t.Fatalf("time[%d] = %v s, Python %v s", i, got, f.Time[i])
					}
				}
			}
		})
	}
}

// TestOneDimensionalSlabsStayBounded: a long single horizontal dimension (a mesh, a
// long series), contiguous or chunked, is cut into pieces of its one row that fit
// the budget, and the output is chunked like those pieces.
func TestOneDimensionalSlabsStayBounded(t *testing.T) {
	const n = 20000
	var b strings.Builder
	b.WriteString("netcdf long {\ndimensions: ncells = 20000 ;\nvariables:\n")
	b.WriteString("  float lwp(ncells) ; lwp:units = \"g m-2\" ; lwp:standard_name = \"atmosphere_mass_content_of_cloud_liquid_water\" ;\n")
	b.WriteString("  float re(ncells) ; re:units = \"um\" ;\ndata:\n lwp = ")
	for i := 0; i < n; i++ {
		if i > 0 {
			b.WriteString(", ")
		}
		fmt.Fprintf(&b, "%d", 10+i%300)
	}
	b.WriteString(" ;\n re = ")
	for i := 0; i < n; i++ {
		if i > 0 {
			b.WriteString(", ")
		}
		fmt.Fprintf(&b, "%d", 6+i%15)
	}
	b.WriteString(" ;\n}\n")
	for _, kind := range []string{"classic", "nc4"} {
		t.Run(kind, func(t *testing.T) {
			path := ncgenText(t, b.String(), kind)
			if kind == "nc4" { // rechunk: 1000 values a chunk, deflated
				chunked := filepath.Join(t.TempDir(), "chunked.nc")
				if out, err := exec.Command("nccopy", "-c", "ncells/1000", "-d", "1", path, chunked).CombinedOutput(); err != nil {
					t.Fatalf("nccopy: %v %s", err, out)
				}
				path = chunked
			}
			const budget = 64 << 10
			in, err := Open(path, OpenOptions{SlabBytes: budget})
			if err != nil {
				t.Fatal(err)
			}
			defer in.Close()
			if in.Layout.Shape != ShapeCells {
				t.Fatalf("shape %s", in.Layout.Shape)
			}
			vars := benchVars()
			types := make([]Type, len(vars))
			perCol := 2 * (8 + 4)
			for i, v := range vars {
				types[i] = v.Type.nc()
				perCol += 8 + types[i].Size()
			}
			p := newPlan(in, types, budget)
			if p.maxN*perCol > budget || p.rx >= n || p.count < 2 {
				t.Fatalf("slab of %d columns (%d bytes) in %d slabs; want pieces within %d bytes", p.maxN, p.maxN*perCol, p.count, budget)
			}
			all := readAll(t, in)
			for i := 0; i < n; i++ {
				if all[RoleLWP][i] != float64(10+i%300)*1e-3 || all[RoleRe][i] != float64(6+i%15)*1e-6 {
					t.Fatalf("column %d: lwp %g re %g", i, all[RoleLWP][i], all[RoleRe][i])
				}
			}
			outPath := filepath.Join(t.TempDir(), "out.nc")
			o, err := Create(outPath, in, vars, DefaultWriteOptions())
			if err != nil {
				t.Fatal(err)
			}
			if c := o.Chunks(); len(c) != 1 || c[0] > p.rx {
				t.Errorf("output chunks %v; want one dimension of at most %d", c, p.rx)
			}
			if err := Process(in, o, ProcessOptions{Workers: 2, SkipCompute: true}, nil); err != nil {
				t.Fatal(err)
			}
			if err := o.Commit(); err != nil {
				t.Fatal(err)
			}
			got, dims, err := ReadVariable(outPath, vars[0].Name)
			if err != nil {
				t.Fatal(err)
			}
			if len(dims) != 1 || dims[0].Name != "ncells" {
				t.Fatalf("output dimensions %v; want (ncells)", dims)
			}
			for i := range got {
				if math.Abs(got[i]-float64(float32(all[RoleLWP][i]))) > 1e-9 {
					t.Fatalf("output[%d] = %g, input %g", i, got[i], all[RoleLWP][i])
				}
			}
		})
	}
}

const cdlTimeGrid = `netcdf t {
dimensions: time = 3 ; y = 2 ; x = 3 ;
variables:
  double time(time) ; time:standard_name = "time" ; time:units = "%s" ; time:calendar = "standard" ;
  float lwp(time, y, x) ; lwp:units = "g m-2" ; lwp:standard_name = "atmosphere_mass_content_of_cloud_liquid_water" ;
  float re(time, y, x) ; re:units = "um" ;
  %s
data:
  time = %s ;
  lwp = 50, 60, 70, 80, 90, 100, 50, 60, 70, 80, 90, 100, 50, 60, 70, 80, 90, 100 ;
  re = 10, 11, 12, 13, 14, 15, 10, 11, 12, 13, 14, 15, 10, 11, 12, 13, 14, 15 ;
}
`

// TestCDOAbsoluteTime: CDO itself (cdo -a) rewrites a CF time axis as "day as
// %Y%m%d.%f"; the layout reads it, and an output holds it in CF units with the
// same instants as the original axis (both decoded by netCDF4-python).
func TestCDOAbsoluteTime(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	_, err := exec.LookPath("cdo")
	need(t, "cdo (Debian cdo)", err == nil)
	src := ncgenText(t, fmt.Sprintf(cdlTimeGrid, "hours since 2026-07-01 00:00:00", "", "0, 6.5, 30"), "nc4")
	abs := filepath.Join(t.TempDir(), "absolute.nc")
	if out, err := exec.Command("cdo", "-s", "-a", "copy", src, abs).CombinedOutput(); err != nil {
		t.Fatalf("cdo -a copy: %v %s", err, out)
	}
	fi, err := Describe(abs)
	if err != nil {
		t.Fatal(err)
	}
	if u := fi.Var("time").Text("units"); !strings.HasPrefix(u, "day as %Y%m%d") {
		t.Fatalf("cdo wrote time units %q; expected its absolute form", u)
	}
	in, err := Open(abs, OpenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer in.Close()
	if in.Layout.Time == nil || !in.Layout.Time.Absolute || !strings.Contains(in.Layout.Time.Note, "date written as a number") {
		t.Fatalf("time axis %+v", in.Layout.Time)
	}
	out := filepath.Join(t.TempDir(), "out.nc")
	o, err := Create(out, in, benchVars()[:1], DefaultWriteOptions())
	if err != nil {
		t.Fatal(err)
	}
	if err := Process(in, o, ProcessOptions{SkipCompute: true}, nil); err != nil {
		t.Fatal(err)
	}
	if err := o.Commit(); err != nil {
		t.Fatal(err)
	}
	script := `
import sys, netCDF4
for p in sys.argv[1:]:
    d = netCDF4.Dataset(p); t = d["time"]
    print(" ".join(x.strftime("%Y-%m-%dT%H:%M:%S") for x in netCDF4.num2date(t[:], t.units, getattr(t, "calendar", "standard"))), t.units)
`
	lines := strings.Split(strings.TrimSpace(runPy(t, script, src, out)), "\n")
	want, got := strings.Fields(lines[0]), strings.Fields(lines[1])
	if !slices.Equal(want[:3], got[:3]) || !strings.Contains(lines[1], "since 1970-01-01") {
		t.Fatalf("output time %v; original %v", lines[1], lines[0])
	}
}

// TestTimeAxisUnits: the units each tool writes, read or refused at open with the
// file, the variable and the expected units named.
func TestTimeAxisUnits(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	cases := []struct {
		units, globals, values string
		cf, fail               string // CF units read, or a phrase of the error
	}{
		{"day as %Y%m%d.%f", "", "20260701, 20260701.5, 20260702", "seconds since 1970-01-01 00:00:00", ""},
		{"decimal hours since midnight", `:date = "2026-07-01" ;`, "0, 0.5, 23.75", "hours since 2026-07-01 00:00:00", ""},
		{"hours since midnight UTC", `:time_coverage_start = "2026-07-01T00:00:00Z" ;`, "0, 1, 2", "hours since 2026-07-01 00:00:00", ""},
		{"seconds since midnight", `:year = 2026 ; :month = 7 ; :day = 1 ;`, "0, 60, 120", "seconds since 2026-07-01 00:00:00", ""},
		{"decimal hours since midnight", "", "0, 1, 2", "", "the day is not stated"},
		{"month as %Y%m.%f", "", "202607, 202608, 202609", "", "cdo -r copy"},
		{"day as %Y%m%d.%f", "", "20260701, 20260732, 20260802", "", "value 1"},
		{"furlongs since 2026-07-01", "", "0, 1, 2", "", "expected CF units"},
	}
	for _, c := range cases {
		t.Run(c.units, func(t *testing.T) {
			path := ncgenText(t, fmt.Sprintf(cdlTimeGrid, c.units, c.globals, c.values), "nc4")
			in, err := Open(path, OpenOptions{})
			if c.fail != "" {
				if err == nil {
					in.Close()
					t.Fatalf("opened; want an error with %q", c.fail)
				}
				var ve *VarError
				if !errors.As(err, &ve) || ve.Var != "time" || !errors.Is(err, ErrUnits) || !strings.Contains(err.Error(), c.fail) || !strings.Contains(err.Error(), path) {
					t.Fatalf("error %v; want ErrUnits naming %s, variable time and %q", err, path, c.fail)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			defer in.Close()
			if in.Layout.Time == nil || in.Layout.Time.CFUnits != c.cf {
				t.Fatalf("time axis %+v; want CF units %q", in.Layout.Time, c.cf)
			}
		})
	}
}

const pyZarr = `
import sys, json, numpy as np, xarray as xr, numcodecs
kind, path = sys.argv[1], sys.argv[2]
lwp = (np.arange(12, dtype="f8").reshape(3, 4) * 10 + 5)
ds = xr.Dataset({"lwp": (("y", "x"), lwp.astype("f4"), {"units": "g m-2", "standard_name": "atmosphere_mass_content_of_cloud_liquid_water"}),
                 "re": (("y", "x"), np.full((3, 4), 12, "f4"), {"units": "um"})})
enc = {"lwp": {"compressor": None}, "re": {"compressor": None}}
if kind == "blosc":
    enc = {}
elif kind == "zlib":
    enc = {"lwp": {"compressor": numcodecs.Zlib(1)}, "re": {"compressor": numcodecs.Zlib(1)}}
elif kind == "bigendian":
    ds["lwp"] = ds.lwp.astype(">f4")
ds.to_zarr(path, mode="w", encoding=enc)
print(json.dumps([float(x) * 1e-3 for x in xr.open_zarr(path).lwp.values.ravel()]))
`

// TestZarrStores: stores libnetcdf 4.9.0 crashes on or misreads are refused from
// their metadata before it opens them (the process survives to report it); an
// uncompressed Zarr store written by xarray is read value for value.
func TestZarrStores(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	py := python(t)
	if exec.Command(py, "-c", "import zarr, numcodecs").Run() != nil {
		need(t, "python3 with zarr and numcodecs (Debian python3-zarr)", false)
	}
	dir := t.TempDir()
	url := func(p, mode string) string { return "file://" + p + "#mode=" + mode + ",file" }
	for _, c := range []struct{ kind, fail string }{
		{"plain", ""}, {"blosc", "is compressed"}, {"zlib", "is compressed"}, {"bigendian", "big-endian"},
	} {
		t.Run(c.kind, func(t *testing.T) {
			store := filepath.Join(dir, c.kind+".zarr")
			var want []float64
			if err := json.Unmarshal([]byte(runPy(t, pyZarr, c.kind, store)), &want); err != nil {
				t.Fatal(err)
			}
			in, err := Open(url(store, "zarr"), OpenOptions{})
			if c.fail != "" {
				if err == nil {
					in.Close()
					t.Fatal("opened; want a refusal")
				}
				if !errors.Is(err, ErrZarr) || !strings.Contains(err.Error(), c.fail) || !strings.Contains(err.Error(), "/lwp") {
					t.Fatalf("error %v; want ErrZarr naming /lwp and %q", err, c.fail)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			defer in.Close()
			got := readAll(t, in)[RoleLWP]
			for i := range want {
				if !near(got[i], want[i]) {
					t.Fatalf("lwp[%d] = %g, xarray %g", i, got[i], want[i])
				}
			}
		})
	}
	t.Run("nczarr_scalar", func(t *testing.T) {
		_, err := exec.LookPath("nccopy")
		need(t, "nccopy (Debian netcdf-bin)", err == nil)
		src := ncgenText(t, `netcdf s {
dimensions: y = 2 ; x = 2 ;
variables:
  int crs ; crs:grid_mapping_name = "latitude_longitude" ;
  float lwp(y, x) ; lwp:units = "g m-2" ; lwp:grid_mapping = "crs" ;
  float re(y, x) ; re:units = "um" ;
data: lwp = 1, 2, 3, 4 ; re = 10, 10, 10, 10 ;
}`, "nc4")
		store := filepath.Join(dir, "scalar.zarr")
		if out, err := exec.Command("nccopy", src, url(store, "nczarr")).CombinedOutput(); err != nil {
			t.Fatalf("nccopy: %v %s", err, out)
		}
		_, err = Open(url(store, "nczarr"), OpenOptions{})
		if !errors.Is(err, ErrZarr) || !strings.Contains(err.Error(), "/crs") || !strings.Contains(err.Error(), "scalar") {
			t.Fatalf("error %v; want ErrZarr naming the scalar /crs", err)
		}
		if _, err := Describe(url(store, "nczarr")); !errors.Is(err, ErrZarr) {
			t.Fatalf("Describe: %v; want ErrZarr", err)
		}
		// The plain directory: told how to name it.
		if _, err := Open(store, OpenOptions{}); err == nil || !strings.Contains(err.Error(), "#mode=nczarr,file") {
			t.Fatalf("directory: %v; want the URL to use", err)
		}
	})
	t.Run("nczarr_1.0_scalar", func(t *testing.T) {
		// The array metadata of NCZarr 1.0 (libnetcdf 4.8) beside a pure-Zarr .zarray:
		// a scalar has no dimrefs (the 1.0 layout from memory; libnetcdf 4.9.0
		// writes only the 2.0 layout, so no tool here can write it).
		store := filepath.Join(dir, "old.zarr")
		for _, f := range []struct{ path, text string }{
			{".zgroup", `{"zarr_format": 2}`},
			{"crs/.zarray", `{"zarr_format": 2, "shape": [1], "chunks": [1], "dtype": "<i4", "compressor": null, "filters": null, "order": "C", "fill_value": null}`},
			{"crs/.nczarray", `{"dimrefs": [], "storage": "scalar"}`},
		} {
			p := filepath.Join(store, f.path)
			if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
				t.Fatal(err)
			}
			if err := os.WriteFile(p, []byte(f.text), 0o644); err != nil {
				t.Fatal(err)
			}
		}
		err := checkZarrStore(url(store, "nczarr"))
		if !errors.Is(err, ErrZarr) || !strings.Contains(err.Error(), "/crs") {
			t.Fatalf("error %v; want ErrZarr naming /crs", err)
		}
		if err := checkZarrStore(url(store, "zarr")); err != nil {
			t.Fatalf("pure Zarr mode: %v; a scalar is read there", err)
		}
	})
	t.Run("remote", func(t *testing.T) {
		_, err := Open("https://example.invalid/store#mode=nczarr,s3", OpenOptions{})
		if !errors.Is(err, ErrZarr) || !strings.Contains(err.Error(), "local directory") {
			t.Fatalf("error %v; want a refusal of a store that cannot be checked", err)
		}
	})
}

// TestHorizontalOfRules: the metadata rules of HorizontalOf on small CDL files
// (ncgen), one per rule and the cases between them.
func TestHorizontalOfRules(t *testing.T) {
	cases := []struct {
		name, cdl string
		shape     Shape
		dims      []int
		lat       string
	}{
		{"aux 1-D lat(y), lon(x)", `netcdf a { dimensions: y = 2 ; x = 3 ;
variables: float lwp(y, x) ; lwp:coordinates = "nav_lat nav_lon" ;
  float nav_lat(y) ; nav_lat:units = "degrees_north" ; float nav_lon(x) ; nav_lon:units = "degrees_east" ; }`, ShapeGrid, []int{0, 1}, "nav_lat"},
		{"vertical level of length 1", `netcdf a { dimensions: time = 2 ; level = 1 ; y = 2 ; x = 3 ;
variables: float lwp(time, level, y, x) ; double level(level) ; level:axis = "Z" ; }`, ShapeGrid, []int{2, 3}, ""},
		{"cells without coordinates", `netcdf a { dimensions: time = 2 ; ncells = 5 ;
variables: float lwp(time, ncells) ; }`, ShapeCells, []int{1}, ""},
		{"sites first, time second", `netcdf a { dimensions: station = 3 ; time = 4 ;
variables: float lwp(station, time) ; double time(time) ; time:units = "days since 2026-01-01" ;
  float latitude(station) ; latitude:units = "degrees_north" ; float longitude(station) ; longitude:units = "degrees_east" ; }`, ShapeCells, []int{0}, "latitude"},
		{"ship track: lat(time) is not a horizontal dimension", `netcdf a { dimensions: time = 4 ;
variables: float lwp(time) ; double time(time) ; time:units = "hours since 2026-01-01" ;
  float lat(time) ; lat:units = "degrees_north" ; float lon(time) ; lon:units = "degrees_east" ; }`, ShapeSeries, nil, ""},
		{"ensemble members and time only", `netcdf a { dimensions: time = 2 ; member = 3 ;
variables: float lwp(time, member) ; }`, ShapeSeries, nil, ""},
		{"swath without a coordinates attribute", `netcdf a { dimensions: y = 2 ; x = 3 ;
variables: float lwp(y, x) ; float latitude(y, x) ; latitude:units = "degrees_north" ; float longitude(y, x) ; longitude:units = "degrees_east" ; }`, ShapeGrid, []int{0, 1}, "latitude"},
		{"(lon, lat) order", `netcdf a { dimensions: lon = 3 ; lat = 2 ;
variables: float lwp(lon, lat) ; float lat(lat) ; lat:units = "degrees_north" ; float lon(lon) ; lon:units = "degrees_east" ; }`, ShapeGrid, []int{0, 1}, "lat"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			fi, err := Describe(ncgenText(t, c.cdl, "nc4"))
			if err != nil {
				t.Fatal(err)
			}
			h := HorizontalOf(fi, fi.Var("lwp"))
			if h.Shape != c.shape || !slices.Equal(h.Dims, c.dims) || h.Lat != c.lat {
				t.Fatalf("got %s on %v, lat %q; want %s on %v, lat %q", h.Shape, h.Dims, h.Lat, c.shape, c.dims, c.lat)
			}
		})
	}
}

// TestOneDimensionalCandidates: 1-D variables are candidates (a radiometer's
// lwp(time) beside its 2-D brightness temperatures), a domain-mean series of LWP
// beside the gridded LWP does not make the choice ambiguous, and a 1-D series is
// never bound beside a gridded LWP.
func TestOneDimensionalCandidates(t *testing.T) {
	radiometer := ncgenText(t, `netcdf r { dimensions: time = 3 ; n_freq = 2 ;
variables: double time(time) ; time:units = "seconds since 2026-07-01" ;
  float tb(time, n_freq) ; tb:units = "K" ;
  float lwp(time) ; lwp:units = "g m-2" ; float re(time) ; re:units = "um" ;
data: time = 0, 1, 2 ; tb = 1, 2, 3, 4, 5, 6 ; lwp = 50, 60, 70 ; re = 10, 11, 12 ; }`, "nc4")
	in, err := Open(radiometer, OpenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if b, _ := in.Binding(RoleLWP); b.Var != "lwp" || in.Layout.Shape != ShapeSeries {
		t.Errorf("bound %q, shape %s", b.Var, in.Layout.Shape)
	}
	in.Close()
	mixed := ncgenText(t, `netcdf m { dimensions: time = 2 ; y = 2 ; x = 2 ;
variables:
  float lwp(time, y, x) ; lwp:standard_name = "atmosphere_mass_content_of_cloud_liquid_water" ; lwp:units = "g m-2" ;
  float lwp_mean(time) ; lwp_mean:standard_name = "atmosphere_mass_content_of_cloud_liquid_water" ; lwp_mean:units = "g m-2" ; lwp_mean:cell_methods = "area: mean" ;
  float re(time, y, x) ; re:units = "um" ;
  float ctp_mean(time) ; ctp_mean:standard_name = "air_pressure_at_cloud_top" ; ctp_mean:units = "hPa" ;
data: lwp = 1, 2, 3, 4, 5, 6, 7, 8 ; lwp_mean = 2.5, 6.5 ; re = 9, 9, 9, 9, 9, 9, 9, 9 ; ctp_mean = 900, 910 ; }`, "nc4")
	in, err = Open(mixed, OpenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer in.Close()
	if b, _ := in.Binding(RoleLWP); b.Var != "lwp" || in.Layout.Shape != ShapeGrid {
		t.Errorf("bound %q, shape %s", b.Var, in.Layout.Shape)
	}
	if in.Has(RoleCTP) {
		t.Errorf("the domain-mean series ctp_mean(time) was bound to the gridded field's CTP")
	}
}
