package grid

// Raw buffers (binding layer): the []uint64 words the netCDF, HDF4 and HDF5 calls
// read stored values into and write them from, pooled across runs, and the copies
// between them and typed Go slices. No cgo here, but every layer above hands these
// buffers to the binding.

import (
	"sync"
	"unsafe"
)

// bufPool keeps the buffers of finished runs for the next one, so that a process
// handling many files reuses them instead of allocating new ones while the old
// ones wait for the garbage collector (whose heap target would then be about
// twice the buffers). It holds at most poolLimit bytes.
var bufPool struct {
	sync.Mutex
	raw   [][]uint64
	f     [][]float64
	bytes int
}

const poolLimit = 128 << 20

func getRaw(n int) []uint64 { return poolGet(&bufPool.raw, n) }

func getF64(n int) []float64 { return poolGet(&bufPool.f, n) }

func putRaw(b []uint64) { poolPut(&bufPool.raw, b) }

func putF64(b []float64) { poolPut(&bufPool.f, b) }

// poolGet returns the smallest pooled buffer holding n values (resliced to n), or
// a new one.
func poolGet[T uint64 | float64](list *[][]T, n int) []T {
	bufPool.Lock()
	defer bufPool.Unlock()
	best := -1
	for i, b := range *list {
		if cap(b) >= n && (best < 0 || cap(b) < cap((*list)[best])) {
			best = i
		}
	}
	if best < 0 {
		return make([]T, n)
	}
	b := (*list)[best]
	last := len(*list) - 1
	(*list)[best] = (*list)[last]
	(*list)[last] = nil
	*list = (*list)[:last]
	bufPool.bytes -= 8 * cap(b)
	return b[:n]
}

func poolPut[T uint64 | float64](list *[][]T, b []T) {
	if cap(b) == 0 {
		return
	}
	bufPool.Lock()
	defer bufPool.Unlock()
	if bufPool.bytes+8*cap(b) > poolLimit {
		return
	}
	*list = append(*list, b)
	bufPool.bytes += 8 * cap(b)
}

// arenaBytes views a pooled buffer as bytes.
func arenaBytes(a []uint64) []byte {
	return unsafe.Slice((*byte)(unsafe.Pointer(&a[0])), 8*len(a))
}

// rawWords is the length of a []uint64 holding n values of size bytes (one spare
// word so that &buf[0] is valid for n = 0).
func rawWords(n, size int) int { return (n*size+7)/8 + 1 }

func copyRawTo(dst any, src unsafe.Pointer, nbytes int) {
	if nbytes == 0 {
		return
	}
	copy(unsafe.Slice((*byte)(typedPtr(dst)), nbytes), unsafe.Slice((*byte)(src), nbytes))
}
