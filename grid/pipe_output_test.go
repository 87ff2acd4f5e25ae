package grid

import (
	"encoding/json"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"
)

// testVars: a float, a packed int16 and a byte flag variable.
func testVars() []OutputVar {
	return []OutputVar{
		{Name: "twice_lwp", LongName: "twice the liquid water path", Units: "kg m-2", Type: Float32, Fill: -999,
			ValidMin: 0, ValidMax: 10, CellMethods: "time: point", Comment: "test output", CoverageContentType: "modelResult",
			AncillaryVariables: "qc"},
		{Name: "re_packed", LongName: "effective radius packed", Units: "um", Type: Int16, Fill: -32767, Scale: 0.01, Offset: 0,
			ValidMin: 0, ValidMax: 100},
		{Name: "qc", StandardName: "quality_flag", LongName: "test flags", Units: "1", Type: Int8, Fill: -127,
			FlagMasks: []int{1, 2}, FlagMeanings: "lwp_missing re_missing", CoverageContentType: "qualityInformation"},
	}
}

func testCompute(s *Slab, outs [][]float64, lo, hi int) {
	lwp, re := s.In[RoleLWP.Index()], s.In[RoleRe.Index()]
	for i := lo; i < hi; i++ {
		outs[0][i] = 2 * lwp[i]
		outs[1][i] = re[i] * 1e6
		q := 0.0
		if math.IsNaN(lwp[i]) {
			q += 1
		}
		if math.IsNaN(re[i]) {
			q += 2
		}
		outs[2][i] = q
	}
}

func writeTestOutput(t *testing.T, inPath string, mode Mode, slabBytes int) (string, *Input) {
	t.Helper()
	in, err := Open(inPath, OpenOptions{SlabBytes: slabBytes})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { in.Close() })
	outPath := filepath.Join(t.TempDir(), "out.nc")
	opt := DefaultWriteOptions()
	opt.Mode = mode
	opt.HistoryLine = "2026-02-02T00:00:00Z: gridtest v0 process"
	opt.Globals = []Global{{"source", "grid tests"}}
	out, err := Create(outPath, in, testVars(), opt)
	if err != nil {
		t.Fatal(err)
	}
	var last int64
	if err := Process(in, out, ProcessOptions{Workers: 2, Progress: func(d, n int64) { last = d }}, testCompute); err != nil {
		t.Fatal(err)
	}
	if last != in.Layout.Columns {
		t.Errorf("progress ended at %d of %d", last, in.Layout.Columns)
	}
	if _, err := os.Stat(outPath); err == nil {
		t.Fatal("final file exists before Commit")
	}
	if err := out.Commit(); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(out.Tmp); err == nil {
		t.Error("temporary file left after Commit")
	}
	return outPath, in
}

func TestCreateProcessReadBack(t *testing.T) {
	for _, slab := range []int{DefaultSlabBytes, 200} { // 200 bytes: one row per slab
		for _, mode := range []Mode{NewFile, CopyInput} {
			inPath := ncgen(t, "grid3d.cdl", "nc4")
			outPath, in := writeTestOutput(t, inPath, mode, slab)
			src := readAll(t, in)
			fi, err := Describe(outPath)
			if err != nil {
				t.Fatal(err)
			}
			if fi.Format != FormatNetCDF4Classic {
				t.Errorf("format %s", fi.Format)
			}
			if c, _ := fi.Global("Conventions"); c.Value != "CF-1.13 ACDD-1.3" {
				t.Errorf("Conventions %v", c.Value)
			}
			h, _ := fi.Global("history")
			if hs, _ := h.Text(); !strings.HasPrefix(hs, "2026-02-02T00:00:00Z: gridtest v0 process\n2026-01-01T00:00:00Z: made by hand") {
				t.Errorf("history %q", hs)
			}
			for _, name := range []string{"time", "lat", "lon", "lat_bnds", "crs", "twice_lwp", "re_packed", "qc"} {
				if fi.Var(name) == nil {
					t.Errorf("output lacks %s", name)
				}
			}
			if _, ok := fi.Global("title"); ok != (mode == CopyInput) {
				t.Errorf("mode %d: title copied = %v", mode, ok)
			}
			if (fi.Var("cer") != nil) != (mode == CopyInput) {
				t.Errorf("mode %d: cer copied wrong", mode)
			}
			tw := fi.Var("twice_lwp")
			if a, _ := tw.Attr("_FillValue"); a.Type != Float || a.Float64s()[0] != -999 {
				t.Errorf("twice_lwp _FillValue %+v", a)
			}
			if tw.Text("grid_mapping") != "crs" || tw.Deflate != 1 || !tw.Shuffle || tw.Chunks == nil || tw.Chunks[0] != 1 {
				t.Errorf("twice_lwp attrs/layout %+v", tw)
			}
			if q := fi.Var("qc"); q.Type != Byte {
				t.Errorf("qc type %s", q.Type)
			} else if a, _ := q.Attr("flag_masks"); a.Type != Byte {
				t.Errorf("flag_masks type %s", a.Type)
			}
			rp := fi.Var("re_packed")
			if a, _ := rp.Attr("valid_range"); a.Type != Short || a.Float64s()[1] != 10000 {
				t.Errorf("re_packed valid_range %+v", a)
			}
			// Read back through libnetcdf with this package's decoder.
			o, err := Open(outPath, OpenOptions{Overrides: []Override{{Role: RoleLWP, Var: "twice_lwp"}, {Role: RoleRe, Var: "re_packed"}}})
			if err != nil {
				t.Fatal(err)
			}
			back := readAll(t, o)
			o.Close()
			for i := range src[RoleLWP] {
				if w := 2 * src[RoleLWP][i]; !near(back[RoleLWP][i], float64(float32(w))) && !(math.IsNaN(w) && math.IsNaN(back[RoleLWP][i])) {
					t.Errorf("twice_lwp[%d] = %g, want %g", i, back[RoleLWP][i], w)
				}
				w := src[RoleRe][i]
				if g := back[RoleRe][i]; math.IsNaN(w) != math.IsNaN(g) || (!math.IsNaN(w) && math.Abs(g-w) > 0.005e-6*1.0001) {
					t.Errorf("re_packed[%d] = %g, want %g within half a packing step", i, g, w)
				}
			}
		}
	}
}

// TestOutputReadByXarray: an outside reader decodes fills to NaN, unpacks, and
// attaches the coordinates.
func TestOutputReadByXarray(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	python(t)
	inPath := ncgen(t, "grid3d.cdl", "nc4")
	outPath, in := writeTestOutput(t, inPath, NewFile, DefaultSlabBytes)
	src := readAll(t, in)
	got := runPy(t, `
import sys, json, xarray as xr, numpy as np
ds = xr.open_dataset(sys.argv[1])
v = ds["twice_lwp"]
r = ds["re_packed"]
print(json.dumps({"coords": sorted(v.coords), "dims": list(v.dims),
  "lwp": [None if np.isnan(x) else float(x) for x in v.values.ravel()],
  "re": [None if np.isnan(x) else float(x) for x in r.values.ravel()],
  "qc": [int(x) for x in ds["qc"].values.ravel()],
  "lat": [float(x) for x in ds["lat"].values]}))
`, outPath)
	var res struct {
		Coords []string
		Dims   []string
		LWP    []*float64
		Re     []*float64
		QC     []int
		Lat    []float64
	}
	if err := json.Unmarshal([]byte(got), &res); err != nil {
		t.Fatalf("%v: %s", err, got)
	}
	if strings.Join(res.Dims, ",") != "time,lat,lon" || strings.Join(res.Coords, ",") != "lat,lon,time" {
		t.Errorf("dims %v coords %v", res.Dims, res.Coords)
	}
	if res.Lat[0] != 10 || res.Lat[2] != 0 {
		t.Errorf("lat %v", res.Lat)
	}
	for i, w := range src[RoleLWP] {
		g := res.LWP[i]
		if math.IsNaN(w) != (g == nil) || (g != nil && math.Abs(*g-2*w) > 1e-6*math.Abs(w)) {
			t.Errorf("xarray twice_lwp[%d] = %v, want %g", i, g, 2*w)
		}
		wr := src[RoleRe][i]
		gr := res.Re[i]
		if math.IsNaN(wr) != (gr == nil) || (gr != nil && math.Abs(*gr-wr*1e6) > 0.0051) {
			t.Errorf("xarray re_packed[%d] = %v, want %g", i, gr, wr*1e6)
		}
		q := 0
		if math.IsNaN(w) {
			q |= 1
		}
		if math.IsNaN(wr) {
			q |= 2
		}
		if res.QC[i] != q {
			t.Errorf("qc[%d] = %d, want %d", i, res.QC[i], q)
		}
	}
}

func TestCreateSafety(t *testing.T) {
	inPath := ncgen(t, "grid3d.cdl", "nc4")
	in, err := Open(inPath, OpenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer in.Close()
	before, _ := os.ReadFile(inPath)
	// The input itself, by path and through a hard link.
	if _, err := Create(inPath, in, testVars(), DefaultWriteOptions()); !errors.Is(err, ErrInputOverwrite) {
		t.Errorf("writing onto the input: %v", err)
	}
	link := filepath.Join(t.TempDir(), "link.nc")
	if err := os.Link(inPath, link); err == nil {
		opt := DefaultWriteOptions()
		opt.Force = true
		if _, err := Create(link, in, testVars(), opt); !errors.Is(err, ErrInputOverwrite) {
			t.Errorf("writing onto a hard link of the input: %v", err)
		}
	}
	// An existing output without and with Force.
	dir := t.TempDir()
	existing := filepath.Join(dir, "out.nc")
	os.WriteFile(existing, []byte("keep me"), 0o644)
	if _, err := Create(existing, in, testVars(), DefaultWriteOptions()); !errors.Is(err, ErrExists) || !strings.Contains(err.Error(), existing) {
		t.Errorf("existing output: %v", err)
	}
	if b, _ := os.ReadFile(existing); string(b) != "keep me" {
		t.Error("existing output was touched")
	}
	opt := DefaultWriteOptions()
	opt.Force = true
	out, err := Create(existing, in, testVars(), opt)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.HasPrefix(filepath.Base(out.Tmp), ".out.nc.tmp-") || filepath.Dir(out.Tmp) != dir {
		t.Errorf("temporary name %s", out.Tmp)
	}
	// Abort leaves the old file and no temporary.
	out.Abort()
	if b, _ := os.ReadFile(existing); string(b) != "keep me" {
		t.Error("Abort touched the existing output")
	}
	if ents, _ := os.ReadDir(dir); len(ents) != 1 {
		t.Errorf("folder holds %v after Abort", ents)
	}
	// A compute panic aborts: no final file, no temporary.
	fresh := filepath.Join(dir, "fresh.nc")
	out, err = Create(fresh, in, testVars(), DefaultWriteOptions())
	if err != nil {
		t.Fatal(err)
	}
	err = Process(in, out, ProcessOptions{}, func(s *Slab, outs [][]float64, lo, hi int) { panic("boom") })
	if err == nil || !strings.Contains(err.Error(), "boom") {
		t.Errorf("panic error %v", err)
	}
	if _, err := os.Stat(fresh); err == nil {
		t.Error("final file exists after a failed run")
	}
	if _, err := os.Stat(out.Tmp); err == nil {
		t.Error("temporary file left after a failed run")
	}
	// Missing output folder.
	if _, err := Create(filepath.Join(dir, "no", "such", "x.nc"), in, testVars(), DefaultWriteOptions()); err == nil || !strings.Contains(err.Error(), "does not exist") {
		t.Errorf("missing folder: %v", err)
	}
	// Bad output definitions.
	bad := testVars()
	bad[2].FlagMeanings = "only_one"
	if _, err := Create(filepath.Join(dir, "b.nc"), in, bad, DefaultWriteOptions()); err == nil || !strings.Contains(err.Error(), "flag_meanings") {
		t.Errorf("flag count: %v", err)
	}
	bad = testVars()
	bad[0].Name = "lat"
	if _, err := Create(filepath.Join(dir, "b.nc"), in, bad, DefaultWriteOptions()); err == nil {
		t.Error("name clash accepted")
	}
	after, _ := os.ReadFile(inPath)
	if string(before) != string(after) {
		t.Error("input changed")
	}
}

// TestProcessNoAllocationPerSlab: the pipeline allocates a fixed amount per run,
// not per slab (common practice for streaming; measured with testing.AllocsPerRun).
func TestProcessNoAllocationPerSlab(t *testing.T) {
	for _, cdl := range []string{
		`netcdf t { dimensions: y = 400 ; x = 50 ; variables: float lwp(y, x) ; lwp:units = "kg m-2" ;
 float re(y, x) ; re:units = "m" ; }`,
		// Chunked and deflated: the direct chunk reader.
		`netcdf t { dimensions: y = 400 ; x = 50 ; variables: float lwp(y, x) ; lwp:units = "kg m-2" ;
 lwp:_ChunkSizes = 10, 50 ; lwp:_DeflateLevel = 1 ; lwp:_Shuffle = "true" ;
 float re(y, x) ; re:units = "m" ; re:_ChunkSizes = 10, 50 ; re:_DeflateLevel = 1 ; }`,
	} {
		noAllocationPerSlab(t, ncgenText(t, cdl, "nc4"))
	}
}

func noAllocationPerSlab(t *testing.T, path string) {
	allocs := func(slabBytes int) (float64, int) {
		in, err := Open(path, OpenOptions{SlabBytes: slabBytes})
		if err != nil {
			t.Fatal(err)
		}
		defer in.Close()
		slabs := in.SlabInfo(len(benchVars())).Slabs
		dir := t.TempDir()
		k := 0
		a := testing.AllocsPerRun(3, func() {
			k++
			out, err := Create(filepath.Join(dir, strings.Repeat("o", k)+".nc"), in, benchVars(), DefaultWriteOptions())
			if err != nil {
				t.Fatal(err)
			}
			if err := Process(in, out, ProcessOptions{Workers: 2}, func(s *Slab, outs [][]float64, lo, hi int) {
				copy(outs[0][lo:hi], s.In[0][lo:hi])
				copy(outs[1][lo:hi], s.In[1][lo:hi])
			}); err != nil {
				t.Fatal(err)
			}
			out.Abort()
		})
		return a, slabs
	}
	a1, s1 := allocs(50 * 64 * 10)  // 10 rows per slab
	a2, s2 := allocs(50 * 64 * 100) // 100 rows per slab
	if s1 <= s2 {
		t.Fatalf("slab counts %d, %d", s1, s2)
	}
	perSlab := (a1 - a2) / float64(s1-s2)
	t.Logf("%d slabs: %.0f allocs; %d slabs: %.0f allocs; %.2f per extra slab", s1, a1, s2, a2, perSlab)
	if perSlab > 0.5 {
		t.Errorf("%.2f allocations per slab, want none", perSlab)
	}
}

// TestQuantizedOutput: Granular BitRound keeping 3 significant digits (libnetcdf
// nc_def_var_quantize) with the CF 1.12 quantization metadata (doc/netcdf.md#chunking).
func TestQuantizedOutput(t *testing.T) {
	inPath := ncgen(t, "grid3d.cdl", "nc4")
	in, err := Open(inPath, OpenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer in.Close()
	outPath := filepath.Join(t.TempDir(), "q.nc")
	vars := []OutputVar{{Name: "lwp_q", Units: "kg m-2", Type: Float32, Fill: -999, Quantize: 3}}
	out, err := Create(outPath, in, vars, DefaultWriteOptions())
	if err != nil {
		t.Fatal(err)
	}
	if err := Process(in, out, ProcessOptions{}, func(s *Slab, outs [][]float64, lo, hi int) {
		for i := lo; i < hi; i++ {
			outs[0][i] = s.In[0][i] * math.Pi // digits to drop
		}
	}); err != nil {
		t.Fatal(err)
	}
	if err := out.Commit(); err != nil {
		t.Fatal(err)
	}
	fi, err := Describe(outPath)
	if err != nil {
		t.Fatal(err)
	}
	v := fi.Var("lwp_q")
	if a, _ := v.Attr("quantization_nsd"); len(a.Float64s()) != 1 || a.Float64s()[0] != 3 {
		t.Errorf("quantization_nsd %+v", a)
	}
	if v.Text("quantization") != "quantization_info" || fi.Var("quantization_info").Text("algorithm") != "granular_bitround" {
		t.Error("quantization container missing")
	}
	if fi.Format != FormatNetCDF4 {
		t.Errorf("format %s", fi.Format)
	}
	src := readAll(t, in)[RoleLWP]
	// Read the stored floats back (stored values, no decoding).
	ncid := 0
	var raw []float64
	onIO(func() {
		var e error
		if ncid, e = ncOpen(outPath); e != nil {
			t.Error(e)
			return
		}
		defer ncClose(ncid)
		fq, _ := describeIO(ncid, outPath)
		tmp := &Input{Path: outPath, ncid: ncid}
		raw, e = tmp.readAllIO(fq.Var("lwp_q"))
		if e != nil {
			t.Error(e)
		}
	})
	for i, x := range src {
		w := x * math.Pi
		if math.IsNaN(w) {
			if raw[i] != -999 {
				t.Errorf("[%d] = %g, want fill", i, raw[i])
			}
			continue
		}
		// 3 significant digits: error at most half a unit of the third digit,
		// 0.5*10^(floor(log10|w|)-2) (derived from the definition of NSD).
		if bound := 0.5 * math.Pow(10, math.Floor(math.Log10(math.Abs(w)))-2); math.Abs(raw[i]-w) > bound {
			t.Errorf("[%d] = %g, want %g to 3 digits", i, raw[i], w)
		}
	}
}

// TestProcessCancel: closing Cancel stops the run and leaves no file behind.
func TestProcessCancel(t *testing.T) {
	inPath := ncgen(t, "grid3d.cdl", "nc4")
	in, err := Open(inPath, OpenOptions{SlabBytes: 1})
	if err != nil {
		t.Fatal(err)
	}
	defer in.Close()
	outPath := filepath.Join(t.TempDir(), "c.nc")
	out, err := Create(outPath, in, testVars(), DefaultWriteOptions())
	if err != nil {
		t.Fatal(err)
	}
	cancel := make(chan struct{})
	var once sync.Once
	err = Process(in, out, ProcessOptions{Cancel: cancel}, func(s *Slab, outs [][]float64, lo, hi int) {
		testCompute(s, outs, lo, hi)
		once.Do(func() { close(cancel) })
		time.Sleep(20 * time.Millisecond) // let the watcher see it before the run ends
	})
	if !errors.Is(err, ErrCanceled) {
		t.Fatalf("error %v, want ErrCanceled", err)
	}
	if _, err := os.Stat(out.Tmp); err == nil {
		t.Error("temporary file left")
	}
	if _, err := os.Stat(outPath); err == nil {
		t.Error("final file written")
	}
}

// TestProcessStats: ProcessStats counts every slab, and its stage times are positive and
// within the wall time (Read and Write run on the one I/O thread, so together they fit in
// it; Compute sums the workers, so it is checked against Wall times the workers).
func TestProcessStats(t *testing.T) {
	inPath := ncgen(t, "grid3d.cdl", "nc4")
	in, err := Open(inPath, OpenOptions{SlabBytes: 200}) // one row per slab: many slabs
	if err != nil {
		t.Fatal(err)
	}
	defer in.Close()
	out, err := Create(filepath.Join(t.TempDir(), "out.nc"), in, testVars(), DefaultWriteOptions())
	if err != nil {
		t.Fatal(err)
	}
	var st ProcessStats
	const workers = 2
	if err := Process(in, out, ProcessOptions{Workers: workers, Stats: &st}, testCompute); err != nil {
		t.Fatal(err)
	}
	if err := out.Commit(); err != nil {
		t.Fatal(err)
	}
	if st.Slabs != out.plan.count || st.Slabs < 2 {
		t.Errorf("Slabs = %d, want the plan's %d (>= 2)", st.Slabs, out.plan.count)
	}
	if !(st.Read > 0 && st.Write > 0 && st.Compute > 0 && st.Wall > 0) {
		t.Errorf("stage times not all positive: %+v", st)
	}
	if st.Read+st.Write > st.Wall {
		t.Errorf("I/O thread busy %v longer than the call %v", st.Read+st.Write, st.Wall)
	}
	if st.Compute > workers*st.Wall || st.WaitRead > st.Wall {
		t.Errorf("compute %v or wait %v longer than possible in %v", st.Compute, st.WaitRead, st.Wall)
	}
}

// TestCommitNeverReplacesAFileThatAppeared: a file created at the output path
// after Create (another run writing the same output) is kept, Commit fails
// with ErrExists and leaves no temporary file; with Force it is replaced.
func TestCommitNeverReplacesAFileThatAppeared(t *testing.T) {
	inPath := ncgen(t, "grid3d.cdl", "nc4")
	in, err := Open(inPath, OpenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer in.Close()
	dir := t.TempDir()
	path := filepath.Join(dir, "out.nc")
	run := func(force bool) error {
		opt := DefaultWriteOptions()
		opt.Force = force
		out, err := Create(path, in, testVars(), opt)
		if err != nil {
			t.Fatal(err)
		}
		if err := Process(in, out, ProcessOptions{}, func(s *Slab, outs [][]float64, lo, hi int) {}); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, []byte("the other run's output"), 0o644); err != nil {
			t.Fatal(err)
		}
		return out.Commit()
	}
	err = run(false)
	if !errors.Is(err, ErrExists) || !strings.Contains(err.Error(), "appeared") {
		t.Fatalf("Commit onto a file that appeared: %v", err)
	}
	if b, _ := os.ReadFile(path); string(b) != "the other run's output" {
		t.Fatal("the file that appeared was replaced")
	}
	if ents, _ := os.ReadDir(dir); len(ents) != 1 {
		t.Fatalf("folder holds %v", ents)
	}
	if err := run(true); err != nil {
		t.Fatalf("with Force: %v", err)
	}
	if b, _ := os.ReadFile(path); string(b) == "the other run's output" {
		t.Fatal("Force did not replace the file")
	}
}
