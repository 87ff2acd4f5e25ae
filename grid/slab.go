package grid

import (
	"fmt"
	"math"
	"unsafe"
)

// Slab is one block of the grid: one index on every leading dimension, a block of
// rows, every column. In[i] holds role Roles[i] for the slab's N columns in
// canonical units (NaN = missing), or nil when the role is absent. The slices are
// reused from slab to slab; copy what you keep.
type Slab struct {
	Index int   // slab number, 0-based, in processing order
	Start []int // start index on each of LWP's dimensions
	Count []int // count on each dimension (1 on leading dimensions, all of X)
	N     int   // number of columns
	In    [NumRoles][]float64
}

// slabPlan says how the grid is cut. Rows come in blocks of at most ry rows that
// never cross a chunk row of LWP (when ry is smaller than LWP's chunk height) or
// cover whole chunk rows (when larger). When LWP is chunked along the innermost
// leading dimension with chunk length b > 1, the b leading indices sharing a chunk
// are visited one after the other for the same rows, so their chunks are still in
// the cache.
type slabPlan struct {
	lead  []int // leading dimension lengths
	Y, X  int
	ry    int // rows per slab (at most)
	cy    int // LWP chunk height (0 = contiguous)
	b     int // leading block (see above)
	maxN  int
	total int64 // columns
	count int   // slabs
}

func newPlan(in *Input, outTypes []Type, budget int) *slabPlan {
	L := in.Layout
	p := &slabPlan{Y: L.Y.Len, X: L.X.Len, b: 1, total: L.Columns}
	for _, d := range L.Leading {
		p.lead = append(p.lead, d.Len)
	}
	perCol := 0
	for _, b := range in.bindings {
		if b != nil {
			perCol += 8 + b.Type.Size()
		}
	}
	for _, t := range outTypes {
		perCol += 8 + t.Size()
	}
	rowsMax := budget / (perCol * p.X)
	if rowsMax < 1 {
		rowsMax = 1
	}
	lb := in.bindings[RoleLWP.Index()]
	nd := len(L.Dims)
	if lb.Chunks != nil {
		p.cy = lb.Chunks[nd-2]
		if nd > 2 {
			p.b = lb.Chunks[nd-3]
			for _, c := range lb.Chunks[:nd-3] {
				if c != 1 {
					p.b = 1
				}
			}
		}
	}
	switch {
	case p.cy > 0 && rowsMax >= p.cy:
		p.ry = rowsMax / p.cy * p.cy
	case p.cy > 0:
		k := (p.cy + rowsMax - 1) / rowsMax
		p.ry = (p.cy + k - 1) / k
	default:
		p.ry = rowsMax
	}
	if p.ry > p.Y {
		p.ry = p.Y
	}
	p.maxN = p.ry * p.X
	p.count = 0
	p.each(func(int, int, int) error { p.count++; return nil })
	return p
}

// rowBlocks calls fn for each block of rows in order.
func (p *slabPlan) rowBlocks(fn func(y0, ny int) error) error {
	if p.cy > 0 && p.ry < p.cy {
		for cr := 0; cr < p.Y; cr += p.cy {
			end := min(cr+p.cy, p.Y)
			for y0 := cr; y0 < end; y0 += p.ry {
				if err := fn(y0, min(p.ry, end-y0)); err != nil {
					return err
				}
			}
		}
		return nil
	}
	for y0 := 0; y0 < p.Y; y0 += p.ry {
		if err := fn(y0, min(p.ry, p.Y-y0)); err != nil {
			return err
		}
	}
	return nil
}

// each calls fn(lead, y0, ny) for every slab in processing order; lead is the flat
// index over the leading dimensions.
func (p *slabPlan) each(fn func(lead, y0, ny int) error) error {
	lout, ln := 1, 1
	if k := len(p.lead); k > 0 {
		ln = p.lead[k-1]
		for _, l := range p.lead[:k-1] {
			lout *= l
		}
	}
	for outer := 0; outer < lout; outer++ {
		for ib := 0; ib < ln; ib += p.b {
			err := p.rowBlocks(func(y0, ny int) error {
				for inner := ib; inner < min(ib+p.b, ln); inner++ {
					if err := fn(outer*ln+inner, y0, ny); err != nil {
						return err
					}
				}
				return nil
			})
			if err != nil {
				return err
			}
		}
	}
	return nil
}

// setStart fills start/count (libnetcdf order) for a slab.
func (p *slabPlan) setStart(start, count []uint64, lead, y0, ny int) {
	k := len(p.lead)
	for i := k - 1; i >= 0; i-- {
		start[i] = uint64(lead % p.lead[i])
		count[i] = 1
		lead /= p.lead[i]
	}
	start[k], count[k] = uint64(y0), uint64(ny)
	start[k+1], count[k+1] = 0, uint64(p.X)
}

// cacheFor sizes a chunk cache to hold every chunk one slab (of ry rows and all
// columns) touches in a variable with the given chunk sizes, plus one more chunk
// row when the variable's chunks are not aligned with the slabs.
func (p *slabPlan) cacheFor(chunks []int, size int, aligned bool) (bytes, slots int) {
	nd := len(chunks)
	cy, cx := chunks[nd-2], chunks[nd-1]
	chunkBytes := size
	for _, c := range chunks {
		chunkBytes *= c
	}
	rows := (p.ry + cy - 1) / cy
	if !aligned || (p.ry < cy && p.cy != cy) {
		rows++
	}
	n := rows * ((p.X + cx - 1) / cx)
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
		aligned := b.Role == RoleLWP
		bytes, slots := p.cacheFor(b.Chunks, b.Type.Size(), aligned)
		if err := ncSetVarChunkCache(in.ncid, b.varID, bytes, slots, 0.75); err != nil {
			return varErr(err, in.Path, b.Var, "cannot set the chunk cache: %v", err)
		}
	}
	return nil
}

// inBuf holds the raw and decoded buffers of one slab.
type inBuf struct {
	slab         Slab
	raw          [NumRoles][]uint64
	start, count []uint64
	lead, y0, ny int
}

func newInBuf(in *Input, p *slabPlan) *inBuf {
	nd := len(in.Layout.Dims)
	s := &inBuf{start: make([]uint64, nd), count: make([]uint64, nd)}
	s.slab.Start = make([]int, nd)
	s.slab.Count = make([]int, nd)
	for i, b := range in.bindings {
		if b == nil {
			continue
		}
		s.raw[i] = make([]uint64, (p.maxN*b.Type.Size()+7)/8+1)
		s.slab.In[i] = make([]float64, p.maxN)
	}
	return s
}

func (s *inBuf) setPos(p *slabPlan, index, lead, y0, ny int) {
	s.lead, s.y0, s.ny = lead, y0, ny
	p.setStart(s.start, s.count, lead, y0, ny)
	s.slab.Index = index
	s.slab.N = ny * p.X
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
		if err := ncGetVara(in.ncid, b.varID, s.start, s.count, unsafe.Pointer(&s.raw[i][0])); err != nil {
			return varErr(err, in.Path, b.Var, "read of rows %d-%d (slab %d) failed: %v; expected readable data (the file may be damaged or truncated)", s.y0, s.y0+s.ny-1, s.slab.Index, err)
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

// Stats reads every bound variable once, slab by slab, and returns the value
// statistics (in canonical units) in role order.
func (in *Input) Stats() ([]VarStats, error) {
	p := newPlan(in, nil, in.opt.SlabBytes)
	buf := newInBuf(in, p)
	var st [NumRoles]VarStats
	var sum [NumRoles]float64
	for i := range st {
		st[i].Min, st[i].Max = math.Inf(1), math.Inf(-1)
	}
	var err error
	if e := onIO(func() { err = in.setInputCachesIO(p) }); e != nil || err != nil {
		return nil, firstErr(e, err)
	}
	k := 0
	err = p.each(func(lead, y0, ny int) error {
		buf.setPos(p, k, lead, y0, ny)
		k++
		var rerr error
		if e := onIO(func() { rerr = in.readIO(buf) }); e != nil {
			return e
		}
		if rerr != nil {
			return rerr
		}
		in.decode(buf, 0, buf.slab.N)
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
		return nil
	})
	if err != nil {
		return nil, err
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
	return out, nil
}

func firstErr(errs ...error) error {
	for _, e := range errs {
		if e != nil {
			return e
		}
	}
	return nil
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
