package grid

import "fmt"

// Memory model of one Process run, before any data is read (measured on this
// code, 2 cores, libnetcdf 4.9 / HDF5 1.14; see EstimateMemory):
const (
	// memBase is what a run holds besides the slabs and the input caches: the
	// Go runtime, libnetcdf and HDF5, the output's chunk caches and the tables
	// (a 200² input with one chunk per variable peaks at 60 MB of RSS, of which
	// the slabs are about 29 MB).
	memBase = 32 << 20
	// memPerChunk is the bookkeeping of one chunk held in an input's chunk cache
	// besides its data: a 200² input with 1×1 chunks in its five variables
	// peaks at 377 MB more RSS than the same input with one chunk per variable,
	// with 200000 chunks cached: 1.9 KB per chunk.
	memPerChunk = 2 << 10
)

// MemoryEstimate is the memory one Process run over an input is expected to
// need, from the input's chunking and the slab plan (no data read).
type MemoryEstimate struct {
	Base   int64 // runtime, libraries, output caches
	Slabs  int64 // the three slabs in flight
	Caches int64 // the input chunk caches: the decompressed chunks one slab touches
	Chunks int   // chunks held in the input caches at once (their bookkeeping is in Caches)
	// MaxChunk is the largest decompressed chunk of a bound input variable and
	// its name: it is held whole whatever the slab size.
	MaxChunk    int64
	MaxChunkVar string
}

// Total is the estimated peak, bytes.
func (m MemoryEstimate) Total() int64 { return m.Base + m.Slabs + m.Caches }

func (m MemoryEstimate) String() string {
	return fmt.Sprintf("%d MB (slabs %d MB, input chunk caches %d MB holding %d chunks, the rest %d MB)",
		m.Total()>>20, m.Slabs>>20, m.Caches>>20, m.Chunks, m.Base>>20)
}

// EstimateMemory estimates the memory of Process over in with the output
// variables vars and a slab budget of slabBytes (0: the input's own).
func (in *Input) EstimateMemory(vars []OutputVar, slabBytes int) MemoryEstimate {
	if slabBytes <= 0 {
		slabBytes = in.opt.SlabBytes
	}
	outTypes := make([]Type, len(vars))
	for k, v := range vars {
		outTypes[k] = v.Type.nc()
	}
	p := newPlan(in, outTypes, slabBytes)
	perCol := in.bytesPerColumn(outTypes)
	m := MemoryEstimate{Base: memBase, Slabs: 3 * int64(p.maxN) * int64(perCol)}
	for _, b := range in.bindings {
		if b == nil || b.Chunks == nil {
			continue
		}
		bytes, _ := p.cacheFor(b.Chunks, b.Type.Size())
		c := int64(b.Type.Size())
		for _, s := range b.Chunks {
			c *= int64(s)
		}
		n := int((int64(bytes) - c/8 - 1<<20) / c) // cacheFor: n chunks + an eighth of one + 1 MiB
		m.Caches += int64(bytes) + int64(n)*memPerChunk
		m.Chunks += n
		if c > m.MaxChunk {
			m.MaxChunk, m.MaxChunkVar = c, b.Var
		}
	}
	return m
}
