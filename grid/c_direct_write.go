package grid

// The direct chunk writer (doc/netcdf.md#direct-chunks). libnetcdf defines the
// output as before (dimensions, variables with their chunking, shuffle and
// deflate filters, fill values, every attribute, the copied coordinates) and
// closes it; the new variables' chunks are then filtered by the Go workers
// (quantization, byte shuffle, zlib-format deflate: ISA-L's or
// klauspost/compress's encoder with libdeflate's Adler-32) and the I/O thread
// only stores the finished bytes with HDF5's H5Dwrite_chunk into the same
// temporary file. Every HDF5 call runs on the I/O thread (c_thread.go).

// #cgo pkg-config: hdf5 libdeflate libisal
// #cgo LDFLAGS: -lm -lz
// #include <stdlib.h>
// #include <stdint.h>
// #include <math.h>
// #include <hdf5.h>
// #include <libdeflate.h>
// #include <zlib.h>
// #include <isa-l/igzip_lib.h>
//
// // wr_isal_deflate appends to dst the raw deflate blocks (RFC 1951) of src made
// // by ISA-L's one-shot encoder at level, byte-aligned and not final unless last
// // is set; it returns their length, or -1 when they do not fit cap bytes (or
// // ISA-L refuses the call). The stream state (~85 KB) lives on this thread's
// // C stack for the call only.
// static long wr_isal_deflate(const unsigned char *src, size_t n, unsigned char *dst, size_t cap,
//                             int level, unsigned char *buf, size_t bufsz, int last) {
//   struct isal_zstream s;
//   isal_deflate_stateless_init(&s);
//   s.level = level;
//   s.level_buf = buf;
//   s.level_buf_size = bufsz;
//   s.gzip_flag = IGZIP_DEFLATE;
//   s.next_in = (unsigned char *)src;
//   s.avail_in = n;
//   s.next_out = dst;
//   s.avail_out = cap;
//   s.end_of_stream = last;
//   s.flush = last ? NO_FLUSH : FULL_FLUSH;
//   if (isal_deflate_stateless(&s) != COMP_OK) return -1;
//   return (long)s.total_out;
// }
// static size_t wr_isal_level_buf(int level) {
//   switch (level) {
//   case 1: return ISAL_DEF_LVL1_DEFAULT;
//   case 2: return ISAL_DEF_LVL2_DEFAULT;
//   case 3: return ISAL_DEF_LVL3_DEFAULT;
//   }
//   return 0;
// }
//
// // wr_zlib_compress is zlib's compress2, as HDF5's deflate filter calls it
// // (for the benchmark that compares the encoders).
// static size_t wr_zlib_compress(void *dst, size_t cap, const void *src, size_t n, int level) {
//   uLongf m = cap;
//   if (compress2(dst, &m, src, n, level) != Z_OK) return 0;
//   return m;
// }
//
// static hid_t wr_h5_open(const char *path) { return H5Fopen(path, H5F_ACC_RDWR, H5P_DEFAULT); }
// static hid_t wr_h5_dopen(hid_t f, const char *name) { return H5Dopen2(f, name, H5P_DEFAULT); }
// static int wr_h5_exists(hid_t f, const char *name) { return H5Lexists(f, name, H5P_DEFAULT); }
// static int wr_h5_dims(hid_t d, hsize_t *dims, hsize_t *maxdims) {
//   hid_t s = H5Dget_space(d);
//   if (s < 0) return -1;
//   int n = H5Sget_simple_extent_dims(s, dims, maxdims);
//   H5Sclose(s);
//   return n;
// }
// static int wr_h5_chunks(hid_t d, int nd, hsize_t *chunks) {
//   hid_t p = H5Dget_create_plist(d);
//   if (p < 0) return -1;
//   int n = -1;
//   if (H5Pget_layout(p) == H5D_CHUNKED) n = H5Pget_chunk(p, nd, chunks);
//   H5Pclose(p);
//   return n;
// }
// // wr_h5_filters lists the filter ids of a dataset's pipeline and, for deflate,
// // its level; it returns the number of filters or -1.
// static int wr_h5_filters(hid_t d, int *ids, int max, unsigned *level) {
//   hid_t p = H5Dget_create_plist(d);
//   if (p < 0) return -1;
//   int n = H5Pget_nfilters(p);
//   for (int i = 0; i < n && i < max; i++) {
//     unsigned flags, cd[8];
//     size_t ncd = 8;
//     H5Z_filter_t f = H5Pget_filter2(p, (unsigned)i, &flags, &ncd, cd, 0, NULL, NULL);
//     ids[i] = (int)f;
//     if (f == H5Z_FILTER_DEFLATE && ncd > 0) *level = cd[0];
//   }
//   H5Pclose(p);
//   return n;
// }
// static herr_t wr_h5_write_chunk(hid_t d, const hsize_t *off, size_t n, const void *buf) {
//   return H5Dwrite_chunk(d, H5P_DEFAULT, 0, off, n, buf);
// }
//
// // wr_granular_br applies Granular BitRound (Delaunay, Declat and Zender 2019,
// // Geosci. Model Dev. 12, 4099-4113, eq. 7-8; Zender 2016, Geosci. Model Dev. 9,
// // 3199-3211) to n floats keeping nsd significant decimal digits, as libnetcdf
// // 4.9 does in nc_put_vara for a variable with NC_QUANTIZE_GRANULARBR: fill
// // values, zeros and NaN are left alone. Written in C so that frexp, log10 and
// // floor are the C library's, as in libnetcdf (bit-identical results).
// static void wr_granular_br(float *x, size_t n, int nsd, float fill) {
//   const double bit_per_digit = M_LN10 / M_LN2, digit_per_bit = M_LN2 / M_LN10;
//   uint32_t *u = (uint32_t *)x;
//   for (size_t i = 0; i < n; i++) {
//     double v = x[i];
//     if (v == (double)fill || v == 0.0 || isnan(v)) continue;
//     int e2;
//     double m = fabs(frexp(v, &e2));
//     double lm = log10(m);
//     int digits = (int)floor(e2 * digit_per_bit + lm) + 1;
//     int qpow = (int)floor(bit_per_digit * (digits - nsd));
//     unsigned short keep = m == 0.0 ? 0 : (unsigned short)abs((int)floor(e2 - bit_per_digit * lm) - qpow);
//     keep--;
//     unsigned short zero_bits = 23 - keep;
//     uint32_t shave = ~0u;
//     shave <<= zero_bits;
//     uint32_t half = ~shave & (shave >> 1);
//     u[i] += half;
//     u[i] &= shave;
//   }
// }
import "C"

import (
	"encoding/binary"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"sync"
	"syscall"
	"unsafe"

	"github.com/klauspost/compress/flate"
)

// Writer names (WriteOptions.Writer).
const (
	// WriterDirect filters chunks in the Go workers and stores them with HDF5's
	// direct chunk write; the default where it applies.
	WriterDirect = "direct"
	// WriterLibnetcdf writes slabs with nc_put_vara: libnetcdf and HDF5 filter
	// the chunks on the I/O thread.
	WriterLibnetcdf = "libnetcdf"
)

// HDF5 filter ids (H5Zpublic.h).
const (
	h5FilterDeflate = 1
	h5FilterShuffle = 2
)

// directOut is the state of the direct writer of one output.
type directOut struct {
	fid   C.hid_t
	dsets []C.hid_t   // one per output variable, -1 when closed
	cy    int         // output chunk rows (the plan's oneD case: 1)
	cx    int         // output chunk columns
	fill  [][]byte    // fill value of each variable, stored bytes
	size  []int       // value size of each variable, bytes
	bound []int       // compressed size bound of one chunk of each variable
	off   []C.hsize_t // chunk offset (the I/O thread's, reused)
	// wb is the temporary file opened read-only, through which the I/O thread
	// starts the writeback of each slab's chunks (startWriteback); nil if it
	// cannot be opened.
	wb *os.File
}

// chunkTask is one chunk of one output variable within a slab: (ry, rx) its
// first row and column inside the slab; out receives its filtered bytes.
type chunkTask struct {
	k      int
	ry, rx int
	at     int // offset of its room in the slab set's arena
	n      int // filtered length, set by the worker
}

// directApplies says why the direct writer cannot write the new variables of
// o ("" when it can): every chunk must be written whole by one slab.
func (o *Output) directApplies() string {
	if len(o.chunks) == 0 {
		return "no chunks"
	}
	if len(o.vars) == 0 {
		return "no new variables"
	}
	p := o.plan
	c := planChunks(o.chunks)
	cy, cx := c[len(c)-2], c[len(c)-1]
	for i := 0; i < len(c)-2; i++ {
		if c[i] != 1 {
			return "chunks span several leading indices"
		}
	}
	why := ""
	p.each(func(lead, y0, ny, x0, nx int) error {
		okY := y0%cy == 0 && (ny%cy == 0 || y0+ny == p.Y)
		okX := x0%cx == 0 && (nx%cx == 0 || x0+nx == p.X)
		if !okY || !okX {
			why = fmt.Sprintf("slab at row %d, column %d does not hold whole chunks of %d x %d", y0, x0, cy, cx)
			return errStop
		}
		return nil
	})
	return why
}

// openDirectIO closes the libnetcdf handle of a defined output and opens the
// file with HDF5 for the direct chunk writes (I/O thread). It checks that each
// new variable's dataset has the chunking and filters the workers will apply.
func (o *Output) openDirectIO() error {
	if err := ncClose(o.ncid); err != nil {
		o.open = false
		return &VarError{File: o.Path, Problem: "closing the defined output failed: " + err.Error(), Err: errors.Join(errDefinedClose, err)}
	}
	o.open = false
	cpath := C.CString(o.Tmp)
	defer C.free(unsafe.Pointer(cpath))
	fid := C.wr_h5_open(cpath)
	if fid < 0 {
		return &VarError{File: o.Path, Problem: "HDF5 cannot reopen the defined output for the chunk writes", Err: ErrLayout}
	}
	d := &directOut{fid: fid}
	o.direct = d
	if f, err := os.Open(o.Tmp); err == nil {
		d.wb = f
	}
	c := planChunks(o.chunks)
	d.cy, d.cx = c[len(c)-2], c[len(c)-1]
	nd := len(o.in.Layout.Dims)
	want := make([]C.hsize_t, nd) // full extent of the new variables
	for i, dim := range o.in.Layout.Dims {
		want[i] = C.hsize_t(dim.Len)
	}
	for k, v := range o.vars {
		name := C.CString(v.Name)
		ds := C.wr_h5_dopen(fid, name)
		C.free(unsafe.Pointer(name))
		if ds < 0 {
			return &VarError{File: o.Path, Var: v.Name, Problem: "HDF5 cannot open the variable's dataset", Err: ErrLayout}
		}
		d.dsets = append(d.dsets, ds)
		if err := d.check(ds, o, want); err != nil {
			return &VarError{File: o.Path, Var: v.Name, Problem: err.Error(), Err: ErrLayout}
		}
		t := o.types[k]
		fill := convertTyped([]float64{v.Fill}, t)
		b := make([]byte, t.Size())
		copyRawTo(b, typedPtr(fill), t.Size())
		d.fill = append(d.fill, b)
		d.size = append(d.size, t.Size())
		d.bound = append(d.bound, chunkBound(d.cy*d.cx*t.Size()))
	}
	// A dimension of unlimited length grows with what libnetcdf wrote (the copied
	// coordinate); the new variables are extended to the grid, and so is a
	// dimension scale libnetcdf made for a dimension without a coordinate
	// variable, so that every reader sees the same length.
	for i, dim := range o.in.Layout.Dims {
		if !dim.Unlimited {
			continue
		}
		for _, ds := range d.dsets {
			if err := extendIO(ds, i, want); err != nil {
				return &VarError{File: o.Path, Problem: "cannot extend the unlimited dimension " + dim.Name + ": " + err.Error(), Err: ErrLayout}
			}
		}
		name := C.CString(baseName(dim.Name))
		if C.wr_h5_exists(fid, name) > 0 {
			if ds := C.wr_h5_dopen(fid, name); ds >= 0 {
				var dims, maxd [1]C.hsize_t
				if C.wr_h5_dims(ds, &dims[0], &maxd[0]) == 1 && dims[0] < want[i] {
					C.H5Dset_extent(ds, &want[i])
				}
				C.H5Dclose(ds)
			}
		}
		C.free(unsafe.Pointer(name))
	}
	return nil
}

// errDefinedClose marks a failure to close the defined output (a full disk):
// the output cannot be written by either writer.
var errDefinedClose = errors.New("closing the defined output failed")

// extendIO grows dimension i of a dataset to want[i] (I/O thread).
func extendIO(ds C.hid_t, i int, want []C.hsize_t) error {
	nd := len(want)
	dims := make([]C.hsize_t, nd)
	maxd := make([]C.hsize_t, nd)
	if int(C.wr_h5_dims(ds, &dims[0], &maxd[0])) != nd {
		return errors.New("unexpected rank")
	}
	if dims[i] >= want[i] {
		return nil
	}
	dims[i] = want[i]
	if C.H5Dset_extent(ds, &dims[0]) < 0 {
		return errors.New("H5Dset_extent failed")
	}
	return nil
}

// check compares a dataset's chunking and filters with what the workers apply.
func (d *directOut) check(ds C.hid_t, o *Output, want []C.hsize_t) error {
	nd := len(want)
	ch := make([]C.hsize_t, nd)
	if int(C.wr_h5_chunks(ds, C.int(nd), &ch[0])) != nd {
		return errors.New("the dataset is not chunked as defined")
	}
	for i, c := range o.chunks {
		if int(ch[i]) != c {
			return fmt.Errorf("dataset chunk %v differs from the defined %v", ch, o.chunks)
		}
	}
	var ids [8]C.int
	var level C.uint
	n := int(C.wr_h5_filters(ds, &ids[0], 8, &level))
	var exp []int
	if o.deflate > 0 {
		if o.shuffle {
			exp = append(exp, h5FilterShuffle)
		}
		exp = append(exp, h5FilterDeflate)
	}
	if n != len(exp) {
		return fmt.Errorf("the dataset has %d filters; expected %d", n, len(exp))
	}
	for i, f := range exp {
		if int(ids[i]) != f {
			return fmt.Errorf("filter %d is %d; expected %d", i, ids[i], f)
		}
	}
	if o.deflate > 0 && int(level) != o.deflate {
		return fmt.Errorf("deflate level %d; expected %d", level, o.deflate)
	}
	return nil
}

// chunkBound is the room one filtered chunk of n bytes needs: the zlib header
// and check value, and n plus a margin for the deflate stream (stored blocks of
// incompressible data add 5 bytes per block; the encoder's blocks are at least a
// few kilobytes, so n/256 covers them many times over, tested with random data in
// TestZlibDeflate); n itself when a chunk is stored raw.
func chunkBound(n int) int {
	return 2 + n + n/256 + 64 + 4
}

// slabTasks lists the chunk tasks of a slab of ny x nx columns and returns the
// arena bytes they need. The order (variable, then chunk rows, then chunk
// columns) is the order the I/O thread stores them in.
func (d *directOut) slabTasks(tasks []chunkTask, nVars, ny, nx int) ([]chunkTask, int) {
	tasks = tasks[:0]
	at := 0
	for k := 0; k < nVars; k++ {
		for ry := 0; ry < ny; ry += d.cy {
			for rx := 0; rx < nx; rx += d.cx {
				tasks = append(tasks, chunkTask{k: k, ry: ry, rx: rx, at: at})
				at += d.bound[k]
			}
		}
	}
	return tasks, at
}

// arenaBytes is the largest arena a slab of the plan needs.
func (d *directOut) arenaBytes(p *slabPlan, nVars int) int {
	ny := (min(p.ry, p.Y) + d.cy - 1) / d.cy
	nx := (min(p.rx, p.X) + d.cx - 1) / d.cx
	n := 0
	for k := 0; k < nVars; k++ {
		n += ny * nx * d.bound[k]
	}
	return n
}

// chunkScratch is one worker's room for filtering a chunk.
type chunkScratch struct {
	shuf  []byte        // a chunk's byte planes when chunkInput shuffles
	level int           // the output's deflate level (0: none)
	isal  int           // ISA-L's level for it, 0 when klauspost/compress encodes
	ibuf  []byte        // ISA-L's level buffer (hash table and tokens)
	fw    *flate.Writer // klauspost/compress's raw deflate at level (levels above 6)
	sink  fixedSink
}

// isalLevel is the ISA-L level that deflates chunks for the user's level (0:
// klauspost/compress's encoder at that level). ISA-L's levels 1 and 2, each
// byte plane a block of its own, are smaller than zlib's levels 1-3 and within
// 1 % of 4-6 on real output chunks, at 1.7-2 times klauspost's speed; levels
// 7-9 ask for size over speed, which klauspost's slower levels give
// (doc/netcdf.md#direct-chunks, BenchmarkChunkFilter, and the file sizes of
// TestWritersGiveSameOutputs in cmd/internal/app).
func isalLevel(level int) int {
	switch {
	case level >= 1 && level <= 3:
		return 1
	case level >= 4 && level <= 6:
		return 2
	}
	return 0
}

// fixedSink is an io.Writer over a fixed slice: a write beyond its end sets over
// and fails, so a stream that outgrows its room is detected, never truncated.
type fixedSink struct {
	b    []byte
	n    int
	over bool
}

func (w *fixedSink) Write(p []byte) (int, error) {
	if w.n+len(p) > len(w.b) {
		w.over = true
		return 0, errSinkFull
	}
	w.n += copy(w.b[w.n:], p)
	return len(p), nil
}

var errSinkFull = errors.New("grid: the chunk's room is full")

var scratchPool struct {
	sync.Mutex
	free []*chunkScratch
}

func getScratch(level, n int) *chunkScratch {
	scratchPool.Lock()
	var s *chunkScratch
	for i, x := range scratchPool.free {
		if x.level == level {
			s = x
			last := len(scratchPool.free) - 1
			scratchPool.free[i] = scratchPool.free[last]
			scratchPool.free = scratchPool.free[:last]
			break
		}
	}
	scratchPool.Unlock()
	if s == nil {
		s = &chunkScratch{level: level, isal: isalLevel(level)}
		switch {
		case s.isal > 0:
			s.ibuf = make([]byte, C.wr_isal_level_buf(C.int(s.isal)))
		case level > 0:
			// Levels 1-9 are valid for flate.NewWriter: the error cannot occur.
			s.fw, _ = flate.NewWriter(&s.sink, level)
		}
	}
	if cap(s.shuf) < n {
		s.shuf = make([]byte, n)
	}
	s.shuf = s.shuf[:n]
	return s
}

// putScratch keeps at most 8 scratch sets (a few per worker at most are live).
func putScratch(s *chunkScratch) {
	scratchPool.Lock()
	defer scratchPool.Unlock()
	if len(scratchPool.free) < 8 {
		scratchPool.free = append(scratchPool.free, s)
	}
}

// filterChunk deflates in, the bytes of chunk t built in s by chunkInput,
// into arena[t.at:] and sets t.n (any goroutine).
func (o *Output) filterChunk(t *chunkTask, s *chunkScratch, in []byte, arena []byte) error {
	d := o.direct
	v := &o.vars[t.k]
	dst := arena[t.at : t.at+d.bound[t.k]]
	if o.deflate <= 0 {
		t.n = copy(dst, in)
		return nil
	}
	planes := 1
	if o.shuffle {
		planes = d.size[t.k]
	}
	m := s.zlibDeflate(dst, in, planes)
	if m == 0 {
		return fmt.Errorf("grid: deflate of a chunk of %s did not fit its bound", v.Name)
	}
	t.n = m
	return nil
}

// quantizeChunk applies Granular BitRound (wr_granular_br) to the n float32
// values of g, keeping nsd significant digits.
func quantizeChunk(g []byte, n, nsd int, fill float32) {
	C.wr_granular_br((*C.float)(unsafe.Pointer(&g[0])), C.size_t(n), C.int(nsd), C.float(fill))
}

// shuffle is HDF5's byte shuffle: byte b of value i goes to dst[b*n+i].
func shuffle(dst, src []byte, size int) {
	n := len(src) / size
	switch size {
	case 2:
		d0, d1 := dst[:n], dst[n:2*n]
		for i := range n {
			d0[i], d1[i] = src[2*i], src[2*i+1]
		}
	case 4:
		d0, d1, d2, d3 := dst[:n], dst[n:2*n], dst[2*n:3*n], dst[3*n:4*n]
		s := src[:4*n]
		for i := range n {
			j := 4 * i
			d0[i], d1[i], d2[i], d3[i] = s[j], s[j+1], s[j+2], s[j+3]
		}
	default:
		for i := range n {
			for b := range size {
				dst[b*n+i] = src[i*size+b]
			}
		}
	}
	copy(dst[n*size:], src[n*size:])
}

// unshuffle reverses shuffle.
func unshuffle(dst, src []byte, size int) {
	n := len(src) / size
	switch size {
	case 4:
		unshuffleRow4(dst[:4*n], src[:n], src[n:2*n], src[2*n:3*n], src[3*n:4*n])
	default:
		for i := range n {
			for b := range size {
				dst[i*size+b] = src[b*n+i]
			}
		}
	}
	copy(dst[n*size:], src[n*size:])
}

// unshuffleRow4 reverses shuffleRow4: byte b of value i from pb[i], eight
// values at a time. The byte transpose of shuffleRow4 is its own inverse.
func unshuffleRow4(dst, p0, p1, p2, p3 []byte) {
	n := len(p0)
	p1, p2, p3, dst = p1[:n], p2[:n], p3[:n], dst[:4*n]
	i := 0
	for ; i+8 <= n; i += 8 {
		q0 := binary.LittleEndian.Uint64(p0[i:])
		q1 := binary.LittleEndian.Uint64(p1[i:])
		q2 := binary.LittleEndian.Uint64(p2[i:])
		q3 := binary.LittleEndian.Uint64(p3[i:])
		const m8, m16 = 0x00ff00ff00ff00ff, 0x0000ffff0000ffff
		t0 := q0&m8 | (q1&m8)<<8
		t1 := (q0>>8)&m8 | q1&^m8
		t2 := q2&m8 | (q3&m8)<<8
		t3 := (q2>>8)&m8 | q3&^m8
		// a, b, c, d hold values (i, i+4), (i+1, i+5), (i+2, i+6), (i+3, i+7).
		a := t0&m16 | (t2&m16)<<16
		b := t1&m16 | (t3&m16)<<16
		c := (t0>>16)&m16 | t2&^m16
		d := (t1>>16)&m16 | t3&^m16
		const lo32 = 0x00000000ffffffff
		x := dst[4*i : 4*i+32 : 4*i+32]
		binary.LittleEndian.PutUint64(x[0:], a&lo32|b<<32)
		binary.LittleEndian.PutUint64(x[8:], c&lo32|d<<32)
		binary.LittleEndian.PutUint64(x[16:], a>>32|b&^lo32)
		binary.LittleEndian.PutUint64(x[24:], c>>32|d&^lo32)
	}
	for ; i < n; i++ {
		dst[4*i], dst[4*i+1], dst[4*i+2], dst[4*i+3] = p0[i], p1[i], p2[i], p3[i]
	}
}

// zlibCompress deflates src into dst with zlib's compress2 at level, as HDF5's
// deflate filter does; it returns the length, 0 when dst is too small.
func zlibCompress(dst, src []byte, level int) int {
	return int(C.wr_zlib_compress(unsafe.Pointer(&dst[0]), C.size_t(len(dst)), unsafe.Pointer(&src[0]), C.size_t(len(src)), C.int(level)))
}

// zlibDeflate deflates src into dst in the zlib format (RFC 1950), which HDF5's
// deflate filter and every netCDF-4 reader inflate: the two header bytes zlib
// writes for the level, a raw deflate stream (RFC 1951), and the Adler-32 of src
// (libdeflate's, big-endian). The stream is ISA-L's one-shot encoder's, one run
// per plane of src cut into planes equal parts (the byte planes of a shuffled
// chunk: each gets Huffman codes of its own, the last takes any remainder), or
// klauspost/compress's (isalLevel). It returns the length, 0 when dst is too
// small. Both encoders are deterministic on a given machine, so the bytes depend
// only on src, planes and the level there; ISA-L picks its code for the CPU, so
// another machine may write other bytes that inflate to the same values.
func (s *chunkScratch) zlibDeflate(dst, src []byte, planes int) int {
	if len(dst) < 6 || len(src) == 0 {
		return 0
	}
	body := dst[2 : len(dst)-4]
	n := 0
	if s.isal > 0 {
		seg := len(src) / max(planes, 1)
		if seg == 0 {
			planes, seg = 1, len(src)
		}
		for p := range planes {
			a, b := p*seg, (p+1)*seg
			last := 0
			if p == planes-1 {
				b, last = len(src), 1
			}
			if n >= len(body) {
				return 0
			}
			m := C.wr_isal_deflate((*C.uchar)(unsafe.Pointer(&src[a])), C.size_t(b-a),
				(*C.uchar)(unsafe.Pointer(&body[n])), C.size_t(len(body)-n),
				C.int(s.isal), (*C.uchar)(unsafe.Pointer(&s.ibuf[0])), C.size_t(len(s.ibuf)), C.int(last))
			if m < 0 {
				return 0
			}
			n += int(m)
		}
	} else {
		s.sink = fixedSink{b: body}
		s.fw.Reset(&s.sink)
		_, err := s.fw.Write(src)
		if err == nil {
			err = s.fw.Close()
		}
		n = s.sink.n
		over := s.sink.over
		s.sink = fixedSink{}
		if err != nil || over {
			return 0
		}
	}
	dst[0], dst[1] = zlibHeader(s.level)
	sum := uint32(C.libdeflate_adler32(1, unsafe.Pointer(&src[0]), C.size_t(len(src))))
	binary.BigEndian.PutUint32(dst[2+n:], sum)
	return 2 + n + 4
}

// zlibHeader returns the zlib header of a deflate stream with a 32 KiB window
// at level: CMF 0x78 and FLG with zlib's level hint (0 for levels 1, 1 for 2-5,
// 2 for 6, 3 for 7-9; RFC 1950 section 2.2) and the check bits that make
// CMF*256 + FLG a multiple of 31.
func zlibHeader(level int) (byte, byte) {
	hint := 3
	switch {
	case level < 2:
		hint = 0
	case level < 6:
		hint = 1
	case level == 6:
		hint = 2
	}
	const cmf = 0x78
	flg := hint << 6
	flg += 31 - (cmf*256+flg)%31
	return cmf, byte(flg)
}

// libdeflateCompress deflates src into dst (zlib format) with a libdeflate
// compressor of the level (BenchmarkChunkFilter's comparison); it returns the
// length, 0 when dst is too small.
func libdeflateCompress(dst, src []byte, level int) int {
	c := C.libdeflate_alloc_compressor(C.int(level))
	defer C.libdeflate_free_compressor(c)
	return int(C.libdeflate_zlib_compress(c, unsafe.Pointer(&src[0]), C.size_t(len(src)), unsafe.Pointer(&dst[0]), C.size_t(len(dst))))
}

// writeChunksIO stores the filtered chunks of one slab (I/O thread).
func (o *Output) writeChunksIO(start []uint64, tasks []chunkTask, arena []byte, index int) error {
	d := o.direct
	nd := len(start)
	if len(d.off) != nd {
		d.off = make([]C.hsize_t, nd)
	}
	off := d.off
	for i := range start {
		off[i] = C.hsize_t(start[i])
	}
	y0, x0 := 0, int(start[nd-1])
	if nd >= 2 {
		y0 = int(start[nd-2])
	}
	for i := range tasks {
		t := &tasks[i]
		if nd >= 2 {
			off[nd-2] = C.hsize_t(y0 + t.ry)
		}
		off[nd-1] = C.hsize_t(x0 + t.rx)
		if C.wr_h5_write_chunk(d.dsets[t.k], &off[0], C.size_t(t.n), unsafe.Pointer(&arena[t.at])) < 0 {
			return noSpace(&VarError{File: o.Path, Var: o.vars[t.k].Name, Problem: fmt.Sprintf("write of a chunk of slab %d failed (HDF5 error)", index), Err: errors.New("HDF5 direct chunk write failed")}, filepath.Dir(o.Path))
		}
	}
	if d.wb != nil {
		startWriteback(d.wb)
	}
	return nil
}

// closeDirectIO closes the datasets and the file (I/O thread); the first error
// is returned.
func (d *directOut) closeIO() error {
	var err error
	if d.wb != nil {
		d.wb.Close()
		d.wb = nil
	}
	for i, ds := range d.dsets {
		if ds >= 0 {
			if C.H5Dclose(ds) < 0 && err == nil {
				err = errors.New("HDF5 cannot close a dataset")
			}
			d.dsets[i] = -1
		}
	}
	if d.fid >= 0 {
		if C.H5Fclose(d.fid) < 0 && err == nil {
			err = errors.New("HDF5 cannot close the file")
		}
		d.fid = -1
	}
	return err
}

// startWriteback asks the kernel to start writing f's dirty pages to disk and
// returns at once (Linux's sync_file_range with SYNC_FILE_RANGE_WRITE over the
// whole file: pages already under writeback are left alone, nothing is waited
// for). The fsync before an output's rename (commitTemp) then finds little left
// to write, so the wait at the end of a file overlaps the computation. It
// changes no data and promises nothing by itself; errors are ignored, and the
// fsync that follows reports them.
func startWriteback(f *os.File) {
	const syncFileRangeWrite = 2 // SYNC_FILE_RANGE_WRITE, <linux/fs.h>
	syscall.Syscall6(syscall.SYS_SYNC_FILE_RANGE, f.Fd(), 0, 0, syncFileRangeWrite, 0, 0)
}
