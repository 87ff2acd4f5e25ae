package grid

import (
	"fmt"
	"math"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
)

// planInput is an Input holding only what newPlan reads: the layout and nIn
// bound float32 roles, chunked like LWP (chunks nil = contiguous).
func planInput(lead []int, y, x int, chunks []int, nIn int) *Input {
	in := &Input{}
	L := &in.Layout
	L.Columns = int64(y * x)
	for i, l := range lead {
		L.Leading = append(L.Leading, DimInfo{ID: i, Name: fmt.Sprintf("l%d", i), Len: l})
		L.Columns *= int64(l)
	}
	L.Y = DimInfo{ID: len(lead), Name: "y", Len: y}
	L.X = DimInfo{ID: len(lead) + 1, Name: "x", Len: x}
	L.Dims = append(append([]DimInfo{}, L.Leading...), L.Y, L.X)
	for i := 0; i < nIn; i++ {
		in.bindings[i] = &Binding{Role: Roles[i], Type: Float, Chunks: chunks}
	}
	return in
}

func floats(n int) []Type {
	t := make([]Type, n)
	for i := range t {
		t[i] = Float
	}
	return t
}

// checkCover: the plan visits every column exactly once, in slabs of at most
// maxN columns, and (unless the plan says slabs may straddle) never across a
// chunk boundary of LWP in a slab made of pieces of chunks.
func checkCover(t *testing.T, name string, in *Input, p *slabPlan) {
	t.Helper()
	seen := make([]uint8, in.Layout.Columns)
	n := 0
	p.each(func(lead, y0, ny, x0, nx int) error {
		n++
		if ny*nx > p.maxN || ny < 1 || nx < 1 {
			t.Errorf("%s: slab %d+%d x %d+%d exceeds %d columns", name, y0, ny, x0, nx, p.maxN)
		}
		if p.cy > 0 && !p.straddle && ny < p.cy && y0/p.cy != (y0+ny-1)/p.cy {
			t.Errorf("%s: slab rows %d+%d cross a chunk row of %d", name, y0, ny, p.cy)
		}
		if p.cx > 0 && p.rx < p.X && x0/p.cx != (x0+nx-1)/p.cx && nx < p.cx {
			t.Errorf("%s: slab columns %d+%d cross a chunk column of %d", name, x0, nx, p.cx)
		}
		for r := y0; r < y0+ny; r++ {
			for c := x0; c < x0+nx; c++ {
				seen[(lead*p.Y+r)*p.X+c]++
			}
		}
		return nil
	})
	if n != p.count {
		t.Errorf("%s: %d slabs visited, plan says %d", name, n, p.count)
	}
	for i, s := range seen {
		if s != 1 {
			t.Fatalf("%s: column %d visited %d times", name, i, s)
		}
	}
}

// TestTilePlan: slabs follow LWP's chunks and the chunk caches hold about one
// chunk per input whatever the grid width, so memory is flat in the grid size
// (doc/netcdf.md#chunking: the cache holds every chunk one read touches).
func TestTilePlan(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	const MiB = 1 << 20
	// 5 float32 inputs, chunks 1000 x 1000 (4 MB), 15 float32 outputs: the
	// benchmark's layout (bench/run.sh).
	var caches []int
	for _, n := range []int{2000, 4000, 8000} {
		in := planInput(nil, n, n, []int{1000, 1000}, 5)
		p := newPlan(in, floats(15), DefaultSlabBytes)
		name := fmt.Sprint(n)
		if p.rx != 1000 || p.band != 1000 || p.ry != 125 || p.straddle {
			t.Errorf("%s: slabs %d x %d in bands of %d (straddle %v), want 125 x 1000 in bands of 1000", name, p.ry, p.rx, p.band, p.straddle)
		}
		if b := p.maxN * 5 * (8 + 4) * 4; b > DefaultSlabBytes*4 { // 20 variables of 12 bytes
			t.Errorf("%s: slab of %d columns over budget", name, p.maxN)
		}
		aligned, _ := p.cacheFor([]int{1000, 1000}, 4)
		other, _ := p.cacheFor([]int{500, 700}, 4)
		if aligned < 4e6 || aligned > 4e6+2*MiB {
			t.Errorf("%s: cache of an aligned input %d bytes, want one 4 MB chunk", name, aligned)
		}
		// Bands of 1000 columns touch 2 or 3 chunks 700 wide; slabs of 125 rows
		// never cross a chunk row of 500.
		if other < 2*1.4e6 || other > 3*1.4e6+2*MiB {
			t.Errorf("%s: cache of a misaligned input %d bytes, want 2 or 3 chunks of 1.4 MB", name, other)
		}
		caches = append(caches, aligned)
		oc := outputChunks(p, 2, floats(15))
		if oc[0] != 125 || oc[1] != 1000 {
			t.Errorf("%s: output chunks %v, want one slab 125 x 1000", name, oc)
		}
		if b, _ := outputCache(p, oc, 4); b < 5e5 || b > 5e5+2*MiB {
			t.Errorf("%s: output cache %d bytes, want one 500 kB chunk", name, b)
		}
		checkCover(t, name, in, p)
	}
	for i := 1; i < len(caches); i++ {
		if caches[i] != caches[0] {
			t.Errorf("cache sizes %v grow with the grid", caches)
		}
	}

	cases := []struct {
		name         string
		lead         []int
		y, x         int
		chunks       []int
		budget       int
		ry, rx, band int
		straddle     bool
	}{
		// Small chunks: tiles of whole chunks, as many as fit across.
		{"small chunks", nil, 4000, 4000, []int{100, 100}, DefaultSlabBytes, 100, 1300, 4000, false},
		// Chunks spanning the width: whole-row blocks, pieces of a chunk row.
		{"full-width chunks", nil, 1000, 1000, []int{1000, 1000}, DefaultSlabBytes, 125, 1000, 1000, false},
		{"whole chunk rows", nil, 900, 300, []int{50, 300}, DefaultSlabBytes, 450, 300, 300, false},
		// A prime chunk height: no good divisor, so slabs straddle chunk rows.
		{"prime chunk height", nil, 3000, 3000, []int{997, 1000}, DefaultSlabBytes, 139, 1000, 1000, true},
		// Odd sizes with edge chunks, leading dimensions and a chunked time axis.
		{"odd edges", []int{3, 4}, 211, 1001, []int{1, 2, 67, 300}, 240 * 1000, 3, 300, 300, true},
		// Chunks wider than a slab: pieces across the chunk too.
		{"wide chunks", nil, 10, 5000, []int{4, 5000}, 240 * 1000, 1, 1000, 5000, false},
		// Contiguous: whole-row blocks.
		{"contiguous", []int{2}, 333, 777, nil, 240 * 7770, 10, 777, 777, false},
	}
	for _, c := range cases {
		in := planInput(c.lead, c.y, c.x, c.chunks, 5)
		p := newPlan(in, floats(15), c.budget)
		if p.ry != c.ry || p.rx != c.rx || p.band != c.band || p.straddle != c.straddle {
			t.Errorf("%s: slabs %d x %d in bands of %d (straddle %v), want %d x %d in bands of %d (straddle %v)",
				c.name, p.ry, p.rx, p.band, p.straddle, c.ry, c.rx, c.band, c.straddle)
		}
		checkCover(t, c.name, in, p)
	}
}

// TestTiledProcessRoundTrip: chunked inputs processed in tiles (whole chunks,
// pieces of chunks, straddling pieces) give back every value in its place, and the
// outputs are chunked one slab per chunk.
func TestTiledProcessRoundTrip(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	cases := []struct {
		name      string
		n, cy, cx int
		cols      int // columns per slab (2 inputs + 2 outputs of 12 bytes)
	}{
		{"whole chunks", 200, 20, 30, 2000},
		{"pieces", 190, 64, 48, 1000},
		{"straddling pieces", 190, 67, 48, 1000},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			dir := t.TempDir()
			inPath := filepath.Join(dir, "in.nc")
			if err := makeBenchInput(inPath, c.n, c.cy, c.cx); err != nil {
				t.Fatal(err)
			}
			in, err := Open(inPath, OpenOptions{SlabBytes: c.cols * 48})
			if err != nil {
				t.Fatal(err)
			}
			defer in.Close()
			outPath := filepath.Join(dir, "out.nc")
			out, err := Create(outPath, in, benchVars(), DefaultWriteOptions())
			if err != nil {
				t.Fatal(err)
			}
			p := out.plan
			if p.rx >= p.X {
				t.Fatalf("plan %+v: want tiles narrower than the grid", p)
			}
			err = Process(in, out, ProcessOptions{Workers: 2}, func(s *Slab, outs [][]float64, lo, hi int) {
				for i := lo; i < hi; i++ {
					// Column index from the slab's position: checks Start/Count too.
					y := s.Start[0] + i/s.Count[1]
					x := s.Start[1] + i%s.Count[1]
					outs[0][i] = s.In[0][i]
					outs[1][i] = float64(y*c.n + x)
				}
			})
			if err != nil {
				t.Fatal(err)
			}
			if err := out.Commit(); err != nil {
				t.Fatal(err)
			}
			want, _, err := ReadVariable(inPath, "lwp")
			if err != nil {
				t.Fatal(err)
			}
			got, _, err := ReadVariable(outPath, "out_lwp")
			if err != nil {
				t.Fatal(err)
			}
			idx, _, err := ReadVariable(outPath, "out_re")
			if err != nil {
				t.Fatal(err)
			}
			for i := range want {
				if !(got[i] == want[i] || math.IsNaN(got[i]) && math.IsNaN(want[i])) {
					t.Fatalf("out_lwp[%d] = %g, want %g", i, got[i], want[i])
				}
				if idx[i] != float64(float32(i)) {
					t.Fatalf("column %d computed as column %g", i, idx[i])
				}
			}
			info, err := Describe(outPath)
			if err != nil {
				t.Fatal(err)
			}
			v := info.Var("out_lwp")
			if v == nil || len(v.Chunks) != 2 || v.Chunks[0] != p.ry || v.Chunks[1] != p.rx {
				t.Errorf("output chunks %v, want one slab %d x %d", v.Chunks, p.ry, p.rx)
			}
		})
	}
}

// TestBufferPoolReuse: a second run on the same grid takes its slab buffers from
// the pool instead of allocating them again (a process handling many files does
// not grow); common practice for streaming, measured with testing.AllocsPerRun.
func TestBufferPoolReuse(t *testing.T) {
	// Start from an empty pool: buffers other tests of this process left there
	// (up to poolLimit) would make what this test's runs give back not fit.
	bufPool.Lock()
	bufPool.raw, bufPool.f, bufPool.bytes = nil, nil, 0
	bufPool.Unlock()
	dir := t.TempDir()
	inPath := filepath.Join(dir, "in.nc")
	if err := makeBenchInput(inPath, 300, 100, 100); err != nil {
		t.Fatal(err)
	}
	in, err := Open(inPath, OpenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer in.Close()
	k := 0
	run := func() {
		k++
		out, err := Create(filepath.Join(dir, fmt.Sprintf("o%d.nc", k)), in, benchVars(), DefaultWriteOptions())
		if err != nil {
			t.Fatal(err)
		}
		if err := Process(in, out, ProcessOptions{Workers: 2, SkipCompute: true}, nil); err != nil {
			t.Fatal(err)
		}
		out.Abort()
	}
	allocated := func() uint64 { // bytes the process allocated during one run
		var ms0, ms1 runtime.MemStats
		runtime.ReadMemStats(&ms0)
		run()
		runtime.ReadMemStats(&ms1)
		return ms1.TotalAlloc - ms0.TotalAlloc
	}
	first := allocated()
	maxN := newPlan(in, floats(2), in.opt.SlabBytes).maxN
	bufPool.Lock()
	pooled := bufPool.bytes
	bufPool.Unlock()
	if want := 8 * (2*maxN + 2*maxN + 3*4*rawWords(maxN, 4)); pooled < want {
		t.Errorf("pool holds %d bytes after a run, want at least %d", pooled, want)
	}
	if raceEnabled {
		return // the race detector allocates on its own; the bound is checked without it
	}
	// A run that takes its buffers from the pool allocates about the first run's
	// bytes less the pooled ones (the rest is files, attributes and plans, about
	// one slab buffer). TotalAlloc counts the whole process, and tests of the
	// package running in parallel add to it, so the smaller of two runs is judged,
	// against a bound half the pool below the first run: a run that allocated its
	// buffers again would exceed it by the other half.
	second := min(allocated(), allocated())
	t.Logf("allocated: first run %d bytes, later run %d, pooled %d", first, second, pooled)
	if bound := first - uint64(pooled)/2; second > bound {
		t.Errorf("a later run allocated %d bytes, want at most %d (the first run's %d less half the %d pooled bytes)", second, bound, first, pooled)
	}
}

// TestTilesMisalignedChunks: inputs chunked unlike LWP (and one contiguous) are
// read in LWP's tiles, and every value lands in its place (compared with the same
// data stored contiguously).
func TestTilesMisalignedChunks(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	const ny, nx = 23, 31
	var lwp, re strings.Builder
	for i := 0; i < ny*nx; i++ {
		sep := ", "
		if i == ny*nx-1 {
			sep = " ;"
		}
		fmt.Fprintf(&lwp, "%d%s", i, sep)
		fmt.Fprintf(&re, "%d%s", 5+i%17, sep)
	}
	cdl := func(lwpChunks, reChunks string) string {
		return fmt.Sprintf(`netcdf t { dimensions: y = %d ; x = %d ;
variables: float lwp(y, x) ; lwp:units = "g m-2" ; %s
 float re(y, x) ; re:units = "um" ; %s
data: lwp = %s
 re = %s
}`, ny, nx, lwpChunks, reChunks, lwp.String(), re.String())
	}
	plain, err := Open(ncgenText(t, cdl("", ""), "nc4"), OpenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer plain.Close()
	want := readAll(t, plain)
	for _, c := range []struct{ lwp, re string }{
		{"lwp:_ChunkSizes = 5, 7 ;", "re:_ChunkSizes = 4, 9 ;"},
		{"lwp:_ChunkSizes = 5, 7 ;", `re:_Storage = "contiguous" ;`},
		{"lwp:_ChunkSizes = 3, 31 ;", "re:_ChunkSizes = 10, 3 ;"},
	} {
		for _, budget := range []int{1, 24 * 10, 24 * 40, DefaultSlabBytes} {
			in, err := Open(ncgenText(t, cdl(c.lwp, c.re), "nc4"), OpenOptions{SlabBytes: budget})
			if err != nil {
				t.Fatal(err)
			}
			p := newPlan(in, nil, budget)
			if e := onIO(func() { err = in.setInputCachesIO(p) }); e != nil || err != nil {
				t.Fatal(e, err)
			}
			got := readAll(t, in)
			in.Close()
			for _, r := range []Role{RoleLWP, RoleRe} {
				for i := range want[r] {
					if got[r][i] != want[r][i] {
						t.Fatalf("%s / %s, budget %d (slabs %d x %d): %s[%d] = %g, want %g", c.lwp, c.re, budget, p.ry, p.rx, r, i, got[r][i], want[r][i])
					}
				}
			}
		}
	}
}
