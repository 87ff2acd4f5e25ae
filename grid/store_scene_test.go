package grid

import (
	"encoding/json"
	"errors"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"github.com/warmrain/warmrain/grid/gridtest"
)

func sameValues(t *testing.T, what string, got, want []float64, tol float64) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%s: %d values, want %d", what, len(got), len(want))
	}
	for i := range got {
		if math.IsNaN(want[i]) != math.IsNaN(got[i]) || (!math.IsNaN(want[i]) && math.Abs(got[i]-want[i]) > tol*math.Max(1, math.Abs(want[i]))) {
			t.Fatalf("%s[%d] = %g, want %g", what, i, got[i], want[i])
		}
	}
}

func TestHDF4SwathValues(t *testing.T) {
	dir := t.TempDir()
	path := gridtest.HDF4Swath(t, dir)
	fi, err := Describe(path)
	if err != nil {
		t.Fatal(err)
	}
	if fi.Format != FormatHDF4 || len(fi.Vars) != 6 || fi.Var("Cloud Effective Radius") == nil {
		t.Fatalf("format %q, %d variables: %s", fi.Format, len(fi.Vars), varNames(fi))
	}
	// Every data set against ncdump-hdf's stored values, decoded the HDF4 way.
	cases := []struct {
		name                        string
		scale, offset, fill, lo, hi float64
	}{
		{"Cloud_Water_Path", 0.5, -40, -9999, 0, 10000},
		{"Cloud Effective Radius", 0.01, 100, -9999, 0, 10000},
		{"Cloud_Optical_Thickness", 0.01, 0, -9999, 0, 15000},
		{"Cloud_Top_Temperature", 0.01, -15000, -32768, 0, 20000},
		{"Latitude", 1, 0, math.NaN(), math.Inf(-1), math.Inf(1)},
	}
	for _, c := range cases {
		got, dims, err := ReadVariable(path, c.name)
		if err != nil {
			t.Fatal(err)
		}
		if len(dims) != 2 || dims[0].Name != "Cell_Along_Swath" || dims[1].Len != 5 {
			t.Fatalf("%s: dimensions %+v", c.name, dims)
		}
		want := gridtest.HDF4Decode(gridtest.NCDumpHDF(t, path, c.name), c.scale, c.offset, c.fill, c.lo, c.hi)
		sameValues(t, c.name, got, want, 1e-6) // float32 latitudes print rounded
	}
	// The HDF4 meaning differs from CF's: 60 stored is 0.5*(60+40) = 50 g m-2, not 60*0.5-40 = -10.
	cwp, _, _ := ReadVariable(path, "Cloud_Water_Path")
	if cwp[0] != 50 || !math.IsNaN(cwp[3]) || !math.IsNaN(cwp[10]) { // fill; 20000 outside valid_range
		t.Fatalf("Cloud_Water_Path[0,3,10] = %g %g %g; want 50 (HDF4 calibration), NaN (fill), NaN (valid_range)", cwp[0], cwp[3], cwp[10])
	}

	// Open binds a name with blanks and decodes in canonical units.
	var ovs []Override
	for _, s := range []string{"lwp=Cloud_Water_Path", "re=Cloud Effective Radius"} {
		o, err := ParseOverride(s)
		if err != nil {
			t.Fatal(err)
		}
		ovs = append(ovs, o)
	}
	in, err := Open(path, OpenOptions{Overrides: ovs})
	if err != nil {
		t.Fatal(err)
	}
	defer in.Close()
	b, _ := in.Binding(RoleRe)
	if b.Var != "Cloud Effective Radius" || !strings.Contains(b.Packing, "HDF4") || !strings.Contains(b.Packing, "not CF") {
		t.Fatalf("r_e binding %q, packing %q", b.Var, b.Packing)
	}
	if b, ok := in.Binding(RoleTau); !ok || b.Var != "Cloud_Optical_Thickness" {
		t.Fatalf("tau not found by its common name: %+v", b)
	}
	if b, ok := in.Binding(RoleCTT); !ok || b.Var != "Cloud_Top_Temperature" {
		t.Fatalf("CTT not found by its common name: %+v", b)
	}
	st, err := in.Stats()
	if err != nil {
		t.Fatal(err)
	}
	wantRe := gridtest.HDF4Decode(gridtest.NCDumpHDF(t, path, "Cloud Effective Radius"), 0.01e-6, 100, -9999, 0, 10000)
	lo, hi, n := math.Inf(1), math.Inf(-1), 0
	for _, x := range wantRe {
		if !math.IsNaN(x) {
			lo, hi, n = math.Min(lo, x), math.Max(hi, x), n+1
		}
	}
	for _, s := range st {
		if s.Role == RoleRe && (math.Abs(s.Min-lo) > 1e-15 || math.Abs(s.Max-hi) > 1e-15 || s.Valid != int64(n)) {
			t.Fatalf("r_e stats %v; want min %g max %g valid %d", s, lo, hi, n)
		}
	}
}

// TestHDF4Repacked: the swath compressed and chunked by hrepack (hdf4-tools)
// reads the same, slab by slab along its chunks, and inspect sees the storage.
func TestHDF4Repacked(t *testing.T) {
	dir := t.TempDir()
	path := gridtest.HDF4Swath(t, dir)
	_, err := exec.LookPath("hrepack")
	gridtest.Need(t, "hrepack (Debian hdf4-tools)", err == nil)
	packed := filepath.Join(dir, "swath_gzip.hdf")
	if b, err := exec.Command("hrepack", "-i", path, "-o", packed, "-t", "*:GZIP 5", "-c", "*:2x3").CombinedOutput(); err != nil {
		t.Fatalf("hrepack: %v\n%s", err, b)
	}
	for _, name := range []string{"Cloud_Water_Path", "Cloud Effective Radius", "Latitude"} {
		a, _, err := ReadVariable(path, name)
		if err != nil {
			t.Fatal(err)
		}
		b, _, err := ReadVariable(packed, name)
		if err != nil {
			t.Fatal(err)
		}
		sameValues(t, name, b, a, 0)
	}
	var ovs []Override
	for _, s := range []string{"lwp=Cloud_Water_Path", "re=Cloud Effective Radius"} {
		o, _ := ParseOverride(s)
		ovs = append(ovs, o)
	}
	stats := func(p string) []VarStats {
		in, err := Open(p, OpenOptions{Overrides: ovs, SlabBytes: 1}) // the smallest slabs: one chunk at a time
		if err != nil {
			t.Fatal(err)
		}
		defer in.Close()
		if p == packed {
			b, _ := in.Binding(RoleLWP)
			if len(b.Chunks) != 2 || b.Chunks[0] != 2 || b.Chunks[1] != 3 || b.Deflate != 5 {
				t.Fatalf("storage of the repacked LWP: chunks %v deflate %d", b.Chunks, b.Deflate)
			}
		}
		st, err := in.Stats()
		if err != nil {
			t.Fatal(err)
		}
		return st
	}
	a, b := stats(path), stats(packed)
	for i := range a {
		if a[i].Valid != b[i].Valid || a[i].Mean != b[i].Mean || a[i].Min != b[i].Min || a[i].Max != b[i].Max {
			t.Fatalf("%s: %v (contiguous) vs %v (chunked, deflated)", a[i].Role, a[i], b[i])
		}
	}
}

// TestHDF4BadInput: an HDF4 file cut short and a file claiming to be HDF4 are
// refused with the file named, never a panic.
func TestHDF4BadInput(t *testing.T) {
	dir := t.TempDir()
	path := gridtest.HDF4Swath(t, dir)
	b, _ := os.ReadFile(path)
	cut := filepath.Join(dir, "cut.hdf")
	os.WriteFile(cut, b[:len(b)/3], 0o644)
	fake := filepath.Join(dir, "fake.hdf")
	os.WriteFile(fake, append(append([]byte{}, hdf4Magic...), make([]byte, 100)...), 0o644)
	for _, p := range []string{cut, fake} {
		_, err := Open(p, OpenOptions{})
		if err == nil || !strings.Contains(err.Error(), p) {
			t.Fatalf("%s: error %v; want one naming the file", p, err)
		}
	}
	// A missing override target names the file, the variable and what exists.
	o, _ := ParseOverride("lwp=Cloud Water Path")
	_, err := Open(path, OpenOptions{Overrides: []Override{o}})
	if !errors.Is(err, ErrNoVariable) || !strings.Contains(err.Error(), `"Cloud Water Path"`) || !strings.Contains(err.Error(), "Cloud_Water_Path") {
		t.Fatalf("error %v", err)
	}
}

func TestGroups(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	path, want := gridtest.PyGroups(t, t.TempDir())
	fi, err := Describe(path)
	if err != nil {
		t.Fatal(err)
	}
	v := fi.Var("/geophysical_data/cwp_21")
	if v == nil || v.Group != "/geophysical_data" || v.Base() != "cwp_21" || fi.Var("cot_21") == nil {
		t.Fatalf("group variables: %s", varNames(fi))
	}
	// Roles are searched in every group: two LWP candidates, named by path.
	_, err = Open(path, OpenOptions{OverrideHint: "--bind ROLE=VAR"})
	if !errors.Is(err, ErrAmbiguous) || !strings.Contains(err.Error(), "/geophysical_data/cwp_16") || !strings.Contains(err.Error(), "/geophysical_data/cwp_21") {
		t.Fatalf("want ambiguity naming both group paths, got %v", err)
	}
	var ovs []Override
	for _, s := range []string{"lwp=/geophysical_data/cwp_21", "re=geophysical_data/cer_21"} {
		o, _ := ParseOverride(s)
		ovs = append(ovs, o)
	}
	in, err := Open(path, OpenOptions{Overrides: ovs})
	if err != nil {
		t.Fatal(err)
	}
	defer in.Close()
	if b, ok := in.Binding(RoleTau); !ok || b.Var != "/geophysical_data/cot_21" {
		t.Fatalf("tau by standard name in a group: %+v", b)
	}
	L := in.Layout
	if L.Lat != "/navigation_data/latitude" || L.Lon != "/navigation_data/longitude" || !L.LatLon2D || L.Columns != 30 {
		t.Fatalf("layout %+v", L)
	}
	got, _, err := ReadVariable(path, "/geophysical_data/cwp_21")
	if err != nil {
		t.Fatal(err)
	}
	sameValues(t, "cwp_21", got, want["cwp_21"], 1e-6)
	got, _, _ = ReadVariable(path, "/geophysical_data/cer_21")
	sameValues(t, "cer_21", got, want["cer_21"], 1e-6)
	got, _, _ = ReadVariable(path, "/navigation_data/latitude")
	sameValues(t, "latitude", got, want["lat"], 1e-6)
	// A plain name found in two groups is refused with both paths.
	o, _ := ParseOverride("lwp=cwp")
	if _, err := Open(path, OpenOptions{Overrides: []Override{o}}); !errors.Is(err, ErrNoVariable) {
		t.Fatalf("lwp=cwp: %v", err)
	}
}

func TestResolve(t *testing.T) {
	fi := &FileInfo{Vars: []VarInfo{
		{Name: "lat", Group: "/"}, {Name: "/a/lat", Group: "/a"}, {Name: "/a/b/x", Group: "/a/b"},
		{Name: "/c/lon", Group: "/c"}, {Name: "/a/b/lat", Group: "/a/b"},
	}}
	from := &fi.Vars[2] // /a/b/x
	cases := map[string]string{
		"lat": "/a/b/lat", "/lat": "lat", "/a/lat": "/a/lat", "../lat": "/a/lat", "../../lat": "lat",
		"../../c/lon": "/c/lon", "lon": "/c/lon", "x": "/a/b/x", "nope": "",
	}
	for ref, want := range cases {
		got := ""
		if v := fi.Resolve(from, ref); v != nil {
			got = v.Name
		}
		if got != want {
			t.Errorf("Resolve(%q from /a/b) = %q, want %q", ref, got, want)
		}
	}
	if v := fi.Var("lat"); v == nil || v.Name != "lat" {
		t.Errorf("Var(lat) = %v", v)
	}
	if v, many := fi.lookup("x"); v == nil || many != nil {
		t.Errorf("lookup(x) = %v %v", v, many)
	}
}

func TestJoinedScene(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	dir := t.TempDir()
	lwp, re := gridtest.CMIPPair(t, dir, 3, "-30, -20, -10")
	scene := lwp + "+" + re
	if f := SceneFiles(scene); len(f) != 2 || f[0] != lwp || f[1] != re {
		t.Fatalf("SceneFiles = %q", f)
	}
	in, err := Open(scene, OpenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer in.Close()
	bl, _ := in.Binding(RoleLWP)
	br, _ := in.Binding(RoleRe)
	if bl.Var != "lwp" || bl.File != lwp || br.Var != "reffclwtop" || br.File != re {
		t.Fatalf("bindings %s in %s, %s in %s", bl.Var, bl.File, br.Var, br.File)
	}
	if len(in.Info.Files) != 2 || in.Layout.Columns != 24 || len(in.Layout.Leading) != 1 || in.Layout.Lat != "lat" {
		t.Fatalf("files %q, layout %+v", in.Info.Files, in.Layout)
	}
	// Values through the scene equal each file's own (netCDF4-python reads them).
	script := `
import sys, json, numpy as np, netCDF4
f = lambda p, n: [None if np.ma.is_masked(x) else float(x) for x in netCDF4.Dataset(p)[n][:].ravel()]
print(json.dumps({"lwp": f(sys.argv[1], "lwp"), "re": f(sys.argv[2], "reffclwtop")}))
`
	var raw map[string][]*float64
	if err := json.Unmarshal([]byte(runPy(t, script, lwp, re)), &raw); err != nil {
		t.Fatal(err)
	}
	for name, path := range map[string]string{"lwp": lwp, "re": re} {
		key := map[string]string{"lwp": "lwp", "re": "reffclwtop"}[name]
		got, _, err := ReadVariable(scene, key)
		if err != nil {
			t.Fatal(err)
		}
		want := gridtest.Floats(raw[name])
		sameValues(t, name+" in "+filepath.Base(path), got, want, 1e-7)
	}

	// Grids that differ: the error names both files, nothing opens.
	other := t.TempDir()
	lwp2, re2 := gridtest.CMIPPair(t, other, 2, "-30, -20")
	_, err = Open(lwp2+"+"+re2, OpenOptions{})
	if !errors.Is(err, ErrLayout) || !strings.Contains(err.Error(), lwp2) || !strings.Contains(err.Error(), re2) || !strings.Contains(err.Error(), "one grid") {
		t.Fatalf("mismatched grids: %v", err)
	}
	// Same shape, other latitudes: refused too.
	third := t.TempDir()
	lwp3, re3 := gridtest.CMIPPair(t, third, 3, "-35, -25, -15")
	_, err = Open(lwp3+"+"+re3, OpenOptions{})
	if !errors.Is(err, ErrLayout) || !strings.Contains(err.Error(), lwp3) || !strings.Contains(err.Error(), re3) || !strings.Contains(err.Error(), `"lat"`) {
		t.Fatalf("shifted latitudes: %v", err)
	}
	// A file given twice, and a missing part.
	if _, err := Open(lwp+"+"+lwp, OpenOptions{}); err == nil || !strings.Contains(err.Error(), "twice") {
		t.Fatalf("file twice: %v", err)
	}
	nope := filepath.Join(dir, "nope.nc")
	if _, err := Open(lwp+"+"+nope, OpenOptions{}); !errors.Is(err, os.ErrNotExist) || !strings.Contains(err.Error(), `"`+nope+`" does not exist`) {
		t.Fatalf("missing part: %v", err)
	}
}

// TestJoinedSplitGranules: a split level-2 product (LWP, particle size and
// optical depth granules, each with its own 2-D latitude and longitude) is one
// scene; a granule of another place is refused, naming both files.
func TestJoinedSplitGranules(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	dir := t.TempDir()
	lwp := gridtest.SplitGranule(t, dir, "lwp", 0)
	cps := gridtest.SplitGranule(t, dir, "cps", 0)
	cod := gridtest.SplitGranule(t, dir, "cod", 0)
	in, err := Open(lwp+"+"+cps+"+"+cod, OpenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer in.Close()
	if b, ok := in.Binding(RoleTau); !ok || b.File != cod || b.Var != "COD" {
		t.Fatalf("tau from the third granule: %+v", b)
	}
	if in.Layout.Lat != "latitude" || !in.Layout.LatLon2D {
		t.Fatalf("layout %+v", in.Layout)
	}
	moved := filepath.Join(t.TempDir())
	far := gridtest.SplitGranule(t, moved, "cps", 0.5)
	_, err = Open(lwp+"+"+far, OpenOptions{})
	if !errors.Is(err, ErrLayout) || !strings.Contains(err.Error(), lwp) || !strings.Contains(err.Error(), far) || !strings.Contains(err.Error(), `"latitude"`) {
		t.Fatalf("granules of two places: %v", err)
	}
}
