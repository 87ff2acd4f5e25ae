package grid

import (
	"fmt"
	"math"
	"unsafe"
)

// Slab is one block of the grid: one index on every leading dimension and a
// rectangle of rows and columns (a tile aligned with LWP's chunks, or a block of
// whole rows), described by Start and Count. In[i] holds role Roles[i] for the
// slab's N columns in canonical units (NaN = missing), in row-major order within
// the slab, or nil when the role is absent. The slices are reused from slab to
// slab; copy what you keep.
type Slab struct {
	Index int   // slab number, 0-based, in processing order
	Start []int // start index on each of LWP's dimensions
	Count []int // count on each dimension (1 on leading dimensions)
	N     int   // number of columns
	In    [NumRoles][]float64
}

// slabPlan says how the grid is cut into slabs of at most ry rows and rx columns.
//
//   - Contiguous (or netCDF-3) LWP: blocks of whole rows (rx = X).
//   - Chunked LWP whose chunk (cy x cx) fits the budget: tiles of whole chunks, one
//     chunk row high and as many chunks wide as fit (whole chunk rows, or blocks of
//     them, when a chunk row fits), visited row by row.
//   - Chunked LWP whose chunk is larger than the budget: pieces of one chunk column
//     (cx wide, ry rows; narrower pieces when even one chunk row of a chunk is too
//     wide), and each column band of width cx is visited top to bottom before the
//     next one, so every chunk is read while it is in the cache. ry is a divisor of
//     cy when a good one exists; otherwise slabs may straddle two chunk rows
//     (straddle), and caches hold one more chunk row.
//
// When LWP is chunked along the innermost leading dimension with chunk length
// b > 1, the b leading indices sharing a chunk are visited one after the other for
// the same tile, so their chunks are still in the cache.
type slabPlan struct {
	lead     []int // leading dimension lengths
	Y, X     int
	ry, rx   int  // rows and columns per slab (at most)
	band     int  // column band visited top to bottom before the next one (X: row by row)
	cy, cx   int  // LWP chunk height and width (0 = contiguous)
	straddle bool // slabs may cross a chunk row of LWP
	b        int  // leading block (see above)
	maxN     int
	oneD     bool  // LWP has one dimension: one virtual row of X columns
	total    int64 // columns
	count    int   // slabs
}

func newPlan(in *Input, outTypes []Type, budget int) *slabPlan {
	L := in.Layout
	nd := len(L.Dims)
	p := &slabPlan{b: 1, total: L.Columns, oneD: nd == 1}
	if p.oneD {
		p.Y, p.X = 1, L.Dims[0].Len
	} else {
		p.Y, p.X = L.Dims[nd-2].Len, L.Dims[nd-1].Len
		for _, d := range L.Dims[:nd-2] {
			p.lead = append(p.lead, d.Len)
		}
	}
	perCol := in.bytesPerColumn(outTypes)
	cols := max(1, budget/perCol) // columns per slab at most
	lb := in.ref()
	if lb.Chunks != nil {
		c := planChunks(lb.Chunks)
		p.cy, p.cx = c[len(c)-2], c[len(c)-1]
		if nd > 2 {
			p.b = lb.Chunks[nd-3]
			for _, c := range lb.Chunks[:nd-3] {
				if c != 1 {
					p.b = 1
				}
			}
		}
	}
	p.band, p.rx = p.X, p.X
	if p.cy == 0 {
		p.ry = max(1, cols/p.X)
		if cols < p.X { // rows longer than the budget (a mesh, a long series): pieces of a row
			p.rx = cols
		}
	} else {
		cy, cx := min(p.cy, p.Y), min(p.cx, p.X)
		switch {
		case cy*cx <= cols:
			kx := min(cols/(cy*cx), (p.X+cx-1)/cx)
			if p.rx = kx * cx; p.rx >= p.X {
				p.rx = p.X
				p.ry = cols / p.X / cy * cy
			} else {
				p.ry = cy
			}
		default:
			p.band = cx
			r := 1
			if cx <= cols {
				p.rx, r = cx, cols/cx
			} else {
				k := (cx + cols - 1) / cols
				p.rx = (cx + k - 1) / k
			}
			p.ry, p.straddle = pieceRows(cy, r)
		}
	}
	p.ry = min(p.ry, p.Y)
	p.maxN = p.ry * p.rx
	p.count = 0
	p.each(func(int, int, int, int, int) error { p.count++; return nil })
	return p
}

// planChunks gives chunk sizes with at least two entries: a 1-D variable's
// chunks get a leading 1 for the plan's single row.
func planChunks(c []int) []int {
	if len(c) == 1 {
		return []int{1, c[0]}
	}
	return c
}

// trailing reports whether a variable's last dimensions are the ones the plan
// cuts (LWP's last two, or its only one), so that it can be chunked like a slab.
func (p *slabPlan) trailing(v *VarInfo, L Layout) bool {
	k := min(2, len(L.Dims))
	if len(v.DimIDs) < k {
		return false
	}
	for i := 0; i < k; i++ {
		if v.DimIDs[len(v.DimIDs)-k+i] != L.Dims[len(L.Dims)-k+i].ID {
			return false
		}
	}
	return true
}

// pieceRows picks the height of the pieces of a chunk of cy rows when at most r <
// cy rows fit: the largest divisor of cy not above r when it is at least r/2 (the
// pieces then tile each chunk exactly), else r (pieces may straddle chunk rows).
func pieceRows(cy, r int) (rows int, straddle bool) {
	for d := r; d >= 1 && 2*d >= r; d-- {
		if cy%d == 0 {
			return d, false
		}
	}
	return r, true
}

// each calls fn(lead, y0, ny, x0, nx) for every slab in processing order; lead is
// the flat index over the leading dimensions.
func (p *slabPlan) each(fn func(lead, y0, ny, x0, nx int) error) error {
	lout, ln := 1, 1
	if k := len(p.lead); k > 0 {
		ln = p.lead[k-1]
		for _, l := range p.lead[:k-1] {
			lout *= l
		}
	}
	for outer := 0; outer < lout; outer++ {
		for ib := 0; ib < ln; ib += p.b {
			for bx := 0; bx < p.X; bx += p.band {
				bend := min(bx+p.band, p.X)
				for y0 := 0; y0 < p.Y; y0 += p.ry {
					ny := min(p.ry, p.Y-y0)
					for x0 := bx; x0 < bend; x0 += p.rx {
						nx := min(p.rx, bend-x0)
						for inner := ib; inner < min(ib+p.b, ln); inner++ {
							if err := fn(outer*ln+inner, y0, ny, x0, nx); err != nil {
								return err
							}
						}
					}
				}
			}
		}
	}
	return nil
}

// setStart fills start/count (libnetcdf order) for a slab.
func (p *slabPlan) setStart(start, count []uint64, lead, y0, ny, x0, nx int) {
	if p.oneD {
		start[0], count[0] = uint64(x0), uint64(nx)
		return
	}
	k := len(p.lead)
	for i := k - 1; i >= 0; i-- {
		start[i] = uint64(lead % p.lead[i])
		count[i] = 1
		lead /= p.lead[i]
	}
	start[k], count[k] = uint64(y0), uint64(ny)
	start[k+1], count[k+1] = uint64(x0), uint64(nx)
}

// cacheFor sizes an input's chunk cache for a variable with the given chunk sizes
// (doc/netcdf.md#chunking: the cache holds every chunk one read touches). It counts the chunks
// of the variable that one slab (in a column band: one row of slabs across the
// band, which are all read before the band moves down) can touch, over the actual
// slab grid: one chunk for a variable chunked like LWP and slabs that are pieces
// of a chunk, two rows of them when slabs straddle chunk rows, more for chunks not
// aligned with LWP's. Chunks shared by consecutive slabs were touched last, so
// they are still cached when the next slab reads them.
func (p *slabPlan) cacheFor(chunks []int, size int) (bytes, slots int) {
	chunks = planChunks(chunks)
	nd := len(chunks)
	cy, cx := chunks[nd-2], chunks[nd-1]
	chunkBytes := size
	for _, c := range chunks {
		chunkBytes *= c
	}
	span := func(a, n, c int) int { return (a+n-1)/c - a/c + 1 } // chunks over [a, a+n)
	rows, cols := 1, 1
	for y0 := 0; y0 < p.Y; y0 += p.ry {
		rows = max(rows, span(y0, min(p.ry, p.Y-y0), cy))
	}
	w := p.rx
	if p.band < p.X {
		w = p.band
	}
	for x0 := 0; x0 < p.X; x0 += w {
		cols = max(cols, span(x0, min(w, p.X-x0), cx))
	}
	n := rows * cols
	bytes = n*chunkBytes + chunkBytes/8 + (1 << 20)
	slots = max(521, 20*n+1)
	return
}

// setInputCachesIO sets each bound variable's chunk cache (on the I/O thread).
func (in *Input) setInputCachesIO(p *slabPlan) error {
	for _, b := range in.bindings {
		if b == nil || b.Chunks == nil {
			continue
		}
		bytes, slots := p.cacheFor(b.Chunks, b.Type.Size())
		if err := b.vi.setCacheIO(bytes, slots, 0.75); err != nil {
			return varErr(err, in.Path, b.Var, "cannot set the chunk cache: %v", err)
		}
	}
	return nil
}

// inBuf holds the raw (stored-type) buffers of one slab and, for Stats, its
// decoded buffers; Process lends one shared set of decoded buffers to the slab
// being computed.
type inBuf struct {
	slab                 Slab
	raw                  [NumRoles][]uint64
	start, count         []uint64
	lead, y0, ny, x0, nx int
}

func newInBuf(in *Input, p *slabPlan) *inBuf {
	s := newRawBuf(in, p)
	for i, b := range in.bindings {
		if b != nil {
			s.slab.In[i] = make([]float64, p.maxN)
		}
	}
	return s
}

// newRawBuf allocates the raw buffers only (from the buffer pool).
func newRawBuf(in *Input, p *slabPlan) *inBuf {
	nd := len(in.Layout.Dims)
	s := &inBuf{start: make([]uint64, nd), count: make([]uint64, nd)}
	s.slab.Start = make([]int, nd)
	s.slab.Count = make([]int, nd)
	for i, b := range in.bindings {
		if b == nil {
			continue
		}
		s.raw[i] = getRaw(rawWords(p.maxN, b.Type.Size()))
	}
	return s
}

func (s *inBuf) setPos(p *slabPlan, index, lead, y0, ny, x0, nx int) {
	s.lead, s.y0, s.ny, s.x0, s.nx = lead, y0, ny, x0, nx
	p.setStart(s.start, s.count, lead, y0, ny, x0, nx)
	s.slab.Index = index
	s.slab.N = ny * nx
	for i := range s.start {
		s.slab.Start[i], s.slab.Count[i] = int(s.start[i]), int(s.count[i])
	}
	for i := range s.slab.In {
		if s.slab.In[i] != nil {
			s.slab.In[i] = s.slab.In[i][:cap(s.slab.In[i])][:s.slab.N]
		}
	}
}

// readIO reads the raw values of every bound variable (on the I/O thread).
func (in *Input) readIO(s *inBuf) error {
	for i, b := range in.bindings {
		if b == nil {
			continue
		}
		if err := b.vi.readIO(s.start, s.count, unsafe.Pointer(&s.raw[i][0])); err != nil {
			return varErr(err, b.File, b.Var, "read of rows %d-%d, columns %d-%d (slab %d) failed: %v; expected readable data (the file may be damaged or truncated)", s.y0, s.y0+s.ny-1, s.x0, s.x0+s.nx-1, s.slab.Index, err)
		}
	}
	return nil
}

// decode converts columns [lo, hi) of every bound role (any goroutine).
func (in *Input) decode(s *inBuf, lo, hi int) {
	for i, b := range in.bindings {
		if b == nil {
			continue
		}
		sz := uintptr(b.Type.Size())
		p := unsafe.Add(unsafe.Pointer(&s.raw[i][0]), uintptr(lo)*sz)
		b.Decoder.Decode(s.slab.In[i][lo:hi], p)
	}
}

// VarStats summarises the decoded values of one bound variable.
type VarStats struct {
	Role         Role
	Var          string
	Units        string // canonical
	Min, Max     float64
	Mean         float64
	Valid        int64
	Missing      int64
	FillFraction float64
}

// eachDecoded reads and decodes every slab of plan p into buf, one after the other (no
// pipeline), and calls fn after each with the slab's position.
func (in *Input) eachDecoded(p *slabPlan, buf *inBuf, fn func(lead, y0, ny, x0, nx int) error) error {
	k := 0
	return p.each(func(lead, y0, ny, x0, nx int) error {
		buf.setPos(p, k, lead, y0, ny, x0, nx)
		k++
		var rerr error
		if e := onIO(func() { rerr = in.readIO(buf) }); e != nil {
			return e
		}
		if rerr != nil {
			return rerr
		}
		in.decode(buf, 0, buf.slab.N)
		return fn(lead, y0, ny, x0, nx)
	})
}

// Stats reads every bound variable once, slab by slab, and returns the value
// statistics (in canonical units) in role order.
func (in *Input) Stats() ([]VarStats, error) {
	st, _, _, err := in.Survey(0)
	return st, err
}

// Survey reads every bound variable once, slab by slab, and returns from that one
// read the value statistics (in canonical units, role order), what the masks and flag
// codes remove (Input.Count), and the unit sample of Sample: the first n valid values of
// each role with a Plausible range within the first sampleMaxColumns*n columns, in
// processing order (nil for n = 0).
func (in *Input) Survey(n int) ([]VarStats, QualityCounts, []RoleSample, error) {
	var c QualityCounts
	p := newPlan(in, nil, in.opt.SlabBytes)
	buf := newInBuf(in, p)
	defer buf.release()
	var st [NumRoles]VarStats
	var sum [NumRoles]float64
	for i := range st {
		st[i].Min, st[i].Max = math.Inf(1), math.Inf(-1)
	}
	var err error
	if e := onIO(func() { err = in.setInputCachesIO(p) }); e != nil || err != nil {
		return nil, c, nil, firstErr(e, err)
	}
	var vals [NumRoles][]float64
	read := 0
	err = in.eachDecoded(p, buf, func(lead, y0, ny, x0, nx int) error {
		for i := range buf.slab.In {
			for _, x := range buf.slab.In[i] {
				if math.IsNaN(x) {
					st[i].Missing++
					continue
				}
				st[i].Valid++
				sum[i] += x
				st[i].Min = math.Min(st[i].Min, x)
				st[i].Max = math.Max(st[i].Max, x)
			}
		}
		in.Count(&buf.slab, 0, buf.slab.N, &c)
		if left := sampleMaxColumns*n - read; left > 0 {
			in.appendSample(&vals, &buf.slab, 0, min(buf.slab.N, left), n)
			read += buf.slab.N
		}
		return nil
	})
	if err != nil {
		return nil, c, nil, err
	}
	var out []VarStats
	for i, b := range in.bindings {
		if b == nil {
			continue
		}
		s := st[i]
		s.Role, s.Var, s.Units = b.Role, b.Var, b.Canonical
		if s.Valid > 0 {
			s.Mean = sum[i] / float64(s.Valid)
		} else {
			s.Min, s.Max, s.Mean = math.NaN(), math.NaN(), math.NaN()
		}
		s.FillFraction = float64(s.Missing) / float64(s.Valid+s.Missing)
		out = append(out, s)
	}
	var sample []RoleSample
	if n > 0 {
		sample = in.summarise(&vals)
	}
	return out, c, sample, nil
}

// String formats the statistics on one line.
func (s VarStats) String() string {
	return fmt.Sprintf("%s (%s): min %.4g max %.4g mean %.4g %s, %.1f%% missing", s.Role, s.Var, s.Min, s.Max, s.Mean, s.Units, 100*s.FillFraction)
}

// SlabInfo says how a run with nOut Float32 outputs would cut the grid.
type SlabInfo struct {
	Rows      int // rows per slab (at most)
	Slabs     int // number of slabs
	ChunkRows int // LWP's chunk height (0 when contiguous)
	Columns   int // columns per full slab
}

// SlabInfo reports the slab plan for nOut Float32 output variables (for inspect).
func (in *Input) SlabInfo(nOut int) SlabInfo {
	types := make([]Type, nOut)
	for i := range types {
		types[i] = Float
	}
	p := newPlan(in, types, in.opt.SlabBytes)
	return SlabInfo{Rows: p.ry, Slabs: p.count, ChunkRows: p.cy, Columns: p.maxN}
}

// bytesPerColumn is the slab memory one column takes: each bound input in its
// stored type plus its float64 copy, and each output in float64 and in its stored type.
func (in *Input) bytesPerColumn(outTypes []Type) int {
	n := 0
	for _, b := range in.bindings {
		if b != nil {
			n += 8 + b.Type.Size()
		}
	}
	for _, t := range outTypes {
		n += 8 + t.Size()
	}
	return n
}
