package grid

// The direct chunk reader (doc/netcdf.md#direct-chunks): for a bound variable of
// a netCDF-4 (HDF5) input stored in chunks with no filter, deflate, or shuffle
// and deflate, the I/O thread fetches the chunks' stored bytes with HDF5's
// H5Dread_chunk, and the reader goroutine inflates them (libdeflate) in
// parallel off the I/O thread, keeping the decoded chunks the slab touches for
// the next slab (the plan visits every chunk's pieces one after the other), a
// shuffled variable's as byte planes; the slab's window is unshuffled out of
// them as it is copied (copySlab). Other inputs, and any variable whose storage
// differs, are read by libnetcdf as before.

// #cgo pkg-config: hdf5 libdeflate
// #include <stdlib.h>
// #include <string.h>
// #include <hdf5.h>
// #include <libdeflate.h>
//
// static hid_t rd_h5_open(const char *path) { return H5Fopen(path, H5F_ACC_RDONLY, H5P_DEFAULT); }
// static hid_t rd_h5_dopen(hid_t f, const char *name) { return H5Dopen2(f, name, H5P_DEFAULT); }
// // rd_h5_layout gives the chunk sizes (returns the rank, or -1 when not chunked),
// // the filter ids, whether the stored type is little-endian with size tsize,
// // and the fill value (fill, tsize bytes; zeros when undefined).
// static int rd_h5_layout(hid_t d, int nd, hsize_t *chunks, int *ids, int maxf, int *nf, size_t tsize, int *le, void *fill) {
//   hid_t p = H5Dget_create_plist(d);
//   if (p < 0) return -1;
//   int n = -1;
//   if (H5Pget_layout(p) == H5D_CHUNKED) n = H5Pget_chunk(p, nd, chunks);
//   *nf = H5Pget_nfilters(p);
//   for (int i = 0; i < *nf && i < maxf; i++) {
//     unsigned flags, cd[8];
//     size_t ncd = 8;
//     ids[i] = (int)H5Pget_filter2(p, (unsigned)i, &flags, &ncd, cd, 0, NULL, NULL);
//   }
//   hid_t t = H5Dget_type(d);
//   *le = t >= 0 && H5Tget_size(t) == tsize && (tsize == 1 || H5Tget_order(t) == H5T_ORDER_LE) &&
//         (H5Tget_class(t) == H5T_INTEGER || H5Tget_class(t) == H5T_FLOAT);
//   H5D_fill_value_t st;
//   memset(fill, 0, tsize);
//   if (t >= 0 && H5Pfill_value_defined(p, &st) >= 0 && st != H5D_FILL_VALUE_UNDEFINED) {
//     if (H5Pget_fill_value(p, t, fill) < 0) *le = 0;
//   }
//   if (t >= 0) H5Tclose(t);
//   H5Pclose(p);
//   return n;
// }
// // rd_h5_chunk_size gives the stored size of the chunk at off (0: not stored).
// static long long rd_h5_chunk_size(hid_t d, const hsize_t *off) {
//   hsize_t n = 0;
//   H5E_BEGIN_TRY { if (H5Dget_chunk_storage_size(d, off, &n) < 0) n = 0; } H5E_END_TRY;
//   return (long long)n;
// }
// static herr_t rd_h5_read_chunk(hid_t d, const hsize_t *off, unsigned *mask, void *buf) {
//   uint32_t m = 0;
//   herr_t e = H5Dread_chunk(d, H5P_DEFAULT, off, &m, buf);
//   *mask = m;
//   return e;
// }
import "C"

import (
	"errors"
	"fmt"
	"slices"
	"sync"
	"time"
	"unsafe"
)

// directIn is the direct chunk reader of one Process run.
type directIn struct {
	fid  C.hid_t
	vars [NumRoles]*directVar // nil: read by libnetcdf
}

// directVar reads one bound variable.
type directVar struct {
	ds       C.hid_t
	chunks   []int // chunk sizes, one per dimension
	shape    []int
	size     int // value size, bytes
	shuffle  bool
	deflate  bool
	fill     []byte
	cache    map[chunkKey][]uint64 // decoded chunks of the last slab (pooled buffers)
	spare    [][]uint64            // buffers of evicted chunks
	name     string
	chunkLen int // bytes of one decoded chunk
}

// chunkKey is a chunk's index along each dimension (up to 8 dimensions).
type chunkKey [8]int

// fetch is one chunk to read and decode.
type fetch struct {
	v      *directVar
	key    chunkKey
	off    []C.hsize_t
	buf    []uint64 // room for the stored bytes (pooled)
	stored []byte   // the chunk's stored bytes in buf (nil: not stored, fill)
	mask   C.uint
	out    []uint64
	err    error
}

// openDirectReadIO opens the input with HDF5 for the bound variables the direct
// reader can read (I/O thread); it returns nil when none qualifies.
func (in *Input) openDirectReadIO() *directIn {
	if in.Format != FormatNetCDF4 && in.Format != FormatNetCDF4Classic {
		return nil
	}
	if in.Info != nil && len(in.Info.Files) > 1 || isURL(in.Path) {
		return nil
	}
	nd := len(in.Layout.Dims)
	if nd < 2 || nd > len(chunkKey{}) {
		return nil
	}
	var d *directIn
	for i, b := range in.bindings {
		if b == nil || b.Chunks == nil || b.vi == nil || len(b.vi.Shape) != nd || b.File != in.Path {
			continue
		}
		size := b.Type.Size()
		if size == 0 {
			continue
		}
		if d == nil {
			cpath := C.CString(in.Path)
			fid := C.rd_h5_open(cpath)
			C.free(unsafe.Pointer(cpath))
			if fid < 0 {
				return nil
			}
			d = &directIn{fid: fid}
		}
		name := b.vi.Name
		if b.vi.Group != "" && b.vi.Group != "/" && !containsSlash(name) {
			name = b.vi.Group + "/" + name
		}
		cname := C.CString(name)
		ds := C.rd_h5_dopen(d.fid, cname)
		C.free(unsafe.Pointer(cname))
		if ds < 0 {
			continue
		}
		ch := make([]C.hsize_t, nd)
		var ids [8]C.int
		var nf, le C.int
		fill := make([]byte, size)
		n := C.rd_h5_layout(ds, C.int(nd), &ch[0], &ids[0], 8, &nf, C.size_t(size), &le, unsafe.Pointer(&fill[0]))
		v := &directVar{ds: ds, size: size, fill: fill, cache: map[chunkKey][]uint64{}, name: b.Var, shape: slices.Clone(b.vi.Shape)}
		ok := int(n) == nd && le != 0
		switch {
		case nf == 0:
		case nf == 1 && ids[0] == h5FilterDeflate:
			v.deflate = true
		case nf == 2 && ids[0] == h5FilterShuffle && ids[1] == h5FilterDeflate:
			v.shuffle, v.deflate = true, true
		default:
			ok = false
		}
		if !ok {
			C.H5Dclose(ds)
			continue
		}
		v.chunkLen = size
		for _, c := range ch {
			v.chunks = append(v.chunks, int(c))
			v.chunkLen *= int(c)
		}
		d.vars[i] = v
	}
	if d != nil && d.empty() {
		d.closeIO()
		return nil
	}
	return d
}

func containsSlash(s string) bool {
	for i := range len(s) {
		if s[i] == '/' {
			return true
		}
	}
	return false
}

func (d *directIn) empty() bool {
	for _, v := range d.vars {
		if v != nil {
			return false
		}
	}
	return true
}

// closeIO closes the datasets and the file (I/O thread) and gives the chunk
// buffers back to the pool.
func (d *directIn) closeIO() {
	for i, v := range d.vars {
		if v != nil {
			C.H5Dclose(v.ds)
			for _, b := range v.cache {
				putRaw(b)
			}
			for _, b := range v.spare {
				putRaw(b)
			}
			v.cache, v.spare = nil, nil
			d.vars[i] = nil
		}
	}
	if d.fid >= 0 {
		C.H5Fclose(d.fid)
		d.fid = -1
	}
}

// slabChunks lists the chunks of v that the slab [start, start+count) touches.
func (v *directVar) slabChunks(start, count []uint64, keys []chunkKey) []chunkKey {
	nd := len(start)
	var lo, hi, k chunkKey
	for i := range nd {
		lo[i] = int(start[i]) / v.chunks[i]
		hi[i] = (int(start[i]+count[i]) - 1) / v.chunks[i]
	}
	keys = keys[:0]
	k = lo
	for {
		keys = append(keys, k)
		i := nd - 1 // odometer over the chunk indices
		for i >= 0 && k[i] == hi[i] {
			k[i] = lo[i]
			i--
		}
		if i < 0 {
			return keys
		}
		k[i]++
	}
}

// readChunksIO reads the stored bytes of the fetches (I/O thread).
func readChunksIO(fs []*fetch) error {
	for _, f := range fs {
		n := int64(C.rd_h5_chunk_size(f.v.ds, &f.off[0]))
		if n <= 0 {
			f.stored = nil
			continue
		}
		if 8*len(f.buf) < int(n) {
			putRaw(f.buf)
			f.buf = getRaw(rawWords(int(n), 1))
		}
		f.stored = arenaBytes(f.buf)[:n]
		if C.rd_h5_read_chunk(f.v.ds, &f.off[0], &f.mask, unsafe.Pointer(&f.stored[0])) < 0 {
			return &fetchError{f.v.name, fmt.Sprintf("HDF5 cannot read the stored chunk at %v", f.off)}
		}
	}
	return nil
}

// inflaters keeps decompressors and their unshuffle room for the next chunks
// (a plain list: sync.Pool may drop them, and they hold a chunk's bytes).
var inflaters struct {
	sync.Mutex
	free []*inflater
}

func getInflater() *inflater {
	inflaters.Lock()
	defer inflaters.Unlock()
	if n := len(inflaters.free); n > 0 {
		z := inflaters.free[n-1]
		inflaters.free = inflaters.free[:n-1]
		return z
	}
	return &inflater{d: C.libdeflate_alloc_decompressor()}
}

func putInflater(z *inflater) {
	inflaters.Lock()
	defer inflaters.Unlock()
	if len(inflaters.free) < 8 {
		inflaters.free = append(inflaters.free, z)
		return
	}
	C.libdeflate_free_decompressor(z.d)
}

type inflater struct {
	d    *C.struct_libdeflate_decompressor
	shuf []byte
}

// inflate decodes the zlib stream src into exactly len(dst) bytes.
func (z *inflater) inflate(dst, src []byte) error {
	var got C.size_t
	r := C.libdeflate_zlib_decompress(z.d, unsafe.Pointer(&src[0]), C.size_t(len(src)), unsafe.Pointer(&dst[0]), C.size_t(len(dst)), &got)
	if r != C.LIBDEFLATE_SUCCESS || int(got) != len(dst) {
		return fmt.Errorf("libdeflate status %d, %d bytes", int(r), int(got))
	}
	return nil
}

// libdeflateInflate decodes the zlib stream src into exactly len(dst) bytes with
// the reader's inflater.
func libdeflateInflate(dst, src []byte) error {
	z := getInflater()
	defer putInflater(z)
	return z.inflate(dst, src)
}

// decode inflates f's stored bytes into f.out (any goroutine). A shuffled
// variable's chunks stay byte planes, as stored (planes): copySlab unshuffles
// the slab's window out of them, in the pass that copies it.
func (f *fetch) decode() {
	v := f.v
	out := arenaBytes(f.out)[:v.chunkLen]
	if f.stored == nil {
		if v.planes() {
			n := len(out) / v.size
			for b := range v.size {
				p := out[b*n : (b+1)*n]
				for i := range p {
					p[i] = v.fill[b]
				}
			}
			return
		}
		for i := 0; i < len(out); i += v.size {
			copy(out[i:i+v.size], v.fill)
		}
		return
	}
	// Filter mask bit i set: filter i of the pipeline was skipped for this chunk.
	doShuffle := v.shuffle && f.mask&1 == 0
	doDeflate := v.deflate && f.mask&(1<<uint(btoi(v.shuffle))) == 0
	// A chunk whose shuffle was skipped is shuffled into planes like the others.
	toPlanes := v.planes() && !doShuffle
	src := f.stored
	z := getInflater()
	defer putInflater(z)
	if doDeflate {
		dst := out
		if toPlanes {
			if cap(z.shuf) < len(out) {
				z.shuf = make([]byte, len(out))
			}
			dst = z.shuf[:len(out)]
		}
		if err := z.inflate(dst, src); err != nil {
			f.err = &fetchError{v.name, fmt.Sprintf("the stored chunk at %v does not inflate to %d bytes (%v)", f.off, len(dst), err)}
			return
		}
		src = dst
	} else if len(src) != len(out) {
		f.err = &fetchError{v.name, fmt.Sprintf("the stored chunk at %v holds %d bytes; expected %d", f.off, len(src), len(out))}
		return
	}
	if toPlanes {
		shuffle(out, src, v.size)
	} else if &src[0] != &out[0] {
		copy(out, src)
	}
}

// planes says whether v's decoded chunks are byte planes (shuffled values of
// more than one byte).
func (v *directVar) planes() bool { return v.shuffle && v.size > 1 }

func btoi(b bool) int {
	if b {
		return 1
	}
	return 0
}

// directReader reads slabs of the bound variables with the direct reader.
type directReader struct {
	in      *Input
	d       *directIn
	keys    []chunkKey
	fetches []*fetch
	pool    []*fetch
	call    *ioCall
	ioErr   error
	cur     *inBuf
	busy    time.Duration // the I/O thread's time
	// Decoding goroutines, for the run: fetches go on jobs, done counts them.
	jobs chan *fetch
	done sync.WaitGroup
}

// release stops the decoding goroutines and gives the fetches' buffers back to
// the pool.
func (r *directReader) release() {
	close(r.jobs)
	for _, f := range r.pool {
		putRaw(f.buf)
		f.buf = nil
	}
}

func newDirectReader(in *Input, d *directIn, workers int) *directReader {
	r := &directReader{in: in, d: d, jobs: make(chan *fetch, 64)}
	for range max(1, workers) {
		go func() {
			for f := range r.jobs {
				f.decode()
				r.done.Done()
			}
		}()
	}
	r.call = newIOCall(func() {
		t0 := time.Now()
		defer func() { r.busy += time.Since(t0) }()
		r.ioErr = readChunksIO(r.fetches)
		if r.ioErr == nil {
			r.ioErr = in.readOthersIO(r.cur, d)
		}
	})
	return r
}

// readOthersIO reads the bound variables the direct reader does not (I/O thread).
func (in *Input) readOthersIO(s *inBuf, d *directIn) error {
	for i, b := range in.bindings {
		if b == nil || d.vars[i] != nil {
			continue
		}
		if err := b.vi.readIO(s.start, s.count, unsafe.Pointer(&s.raw[i][0])); err != nil {
			return varErr(err, b.File, b.Var, "read of rows %d-%d, columns %d-%d (slab %d) failed: %v; expected readable data (the file may be damaged or truncated)", s.y0, s.y0+s.ny-1, s.x0, s.x0+s.nx-1, s.slab.Index, err)
		}
	}
	return nil
}

// read fills s.raw for every bound variable; busy receives the I/O thread's time.
func (r *directReader) read(s *inBuf) error {
	r.fetches = r.fetches[:0]
	nd := len(s.start)
	for _, v := range r.d.vars {
		if v == nil {
			continue
		}
		r.keys = v.slabChunks(s.start, s.count, r.keys)
		// Evict the chunks this slab does not touch.
		for k, buf := range v.cache {
			if !slices.Contains(r.keys, k) {
				v.spare = append(v.spare, buf)
				delete(v.cache, k)
			}
		}
		for _, k := range r.keys {
			if _, ok := v.cache[k]; ok {
				continue
			}
			f := r.newFetch(v, k, nd)
			r.fetches = append(r.fetches, f)
		}
	}
	r.cur = s
	if e := r.call.run(); e != nil {
		return e
	}
	if r.ioErr != nil {
		var ve *VarError
		if errors.As(r.ioErr, &ve) {
			return r.ioErr // libnetcdf's reads name their variable
		}
		return r.slabErr(s, r.ioErr)
	}
	// Decode the fetched chunks in parallel, off the I/O thread.
	r.done.Add(len(r.fetches))
	for _, f := range r.fetches {
		r.jobs <- f
	}
	r.done.Wait()
	for _, f := range r.fetches {
		if f.err != nil {
			return r.slabErr(s, f.err)
		}
		f.v.cache[f.key] = f.out
		f.out = nil
		r.pool = append(r.pool, f)
	}
	// Copy the slab's window out of the decoded chunks.
	for i, v := range r.d.vars {
		if v == nil {
			continue
		}
		v.copySlab(s, unsafe.Slice((*byte)(unsafe.Pointer(&s.raw[i][0])), 8*len(s.raw[i])))
	}
	return nil
}

// errBadChunk marks a chunk that cannot be read or decoded.
var errBadChunk = errors.New("unreadable chunk")

// slabErr reports a failed chunk read or decode of slab s, as libnetcdf's read
// failures are reported.
func (r *directReader) slabErr(s *inBuf, err error) error {
	name := ""
	var fe *fetchError
	if errors.As(err, &fe) {
		name = fe.v
	}
	return &VarError{File: r.in.Path, Var: name, Problem: fmt.Sprintf("read of rows %d-%d, columns %d-%d (slab %d) failed: %v; expected readable data (the file may be damaged or truncated)",
		s.y0, s.y0+s.ny-1, s.x0, s.x0+s.nx-1, s.slab.Index, err), Err: errBadChunk}
}

// fetchError is a chunk read or decode failure of variable v.
type fetchError struct {
	v   string
	msg string
}

func (e *fetchError) Error() string { return e.msg }

func (r *directReader) newFetch(v *directVar, k chunkKey, nd int) *fetch {
	var f *fetch
	if n := len(r.pool); n > 0 {
		f = r.pool[n-1]
		r.pool = r.pool[:n-1]
	} else {
		f = &fetch{}
	}
	f.v, f.key, f.err, f.mask = v, k, nil, 0
	if len(f.off) != nd {
		f.off = make([]C.hsize_t, nd)
	}
	for j := range nd {
		f.off[j] = C.hsize_t(k[j] * v.chunks[j])
	}
	if n := len(v.spare); n > 0 {
		f.out = v.spare[n-1]
		v.spare = v.spare[:n-1]
	} else {
		f.out = getRaw(rawWords(v.chunkLen, 1))
	}
	return f
}

// copySlab copies the slab's values (row-major over its count) out of the
// cached chunks into raw, unshuffling them from chunks kept as byte planes.
func (v *directVar) copySlab(s *inBuf, raw []byte) {
	nd := len(s.start)
	sz := v.size
	y0, ny := int(s.start[nd-2]), int(s.count[nd-2])
	x0, nx := int(s.start[nd-1]), int(s.count[nd-1])
	cy, cx := v.chunks[nd-2], v.chunks[nd-1]
	planes := v.planes()
	var k chunkKey
	lin := 0 // the slab's leading position inside its chunk, linearised
	for i := 0; i < nd-2; i++ {
		k[i] = int(s.start[i]) / v.chunks[i]
		lin = lin*v.chunks[i] + int(s.start[i])%v.chunks[i]
	}
	for ky := y0 / cy; ky <= (y0+ny-1)/cy; ky++ {
		k[nd-2] = ky
		ya, yb := max(y0, ky*cy), min(y0+ny, (ky+1)*cy)
		for kx := x0 / cx; kx <= (x0+nx-1)/cx; kx++ {
			k[nd-1] = kx
			xa, xb := max(x0, kx*cx), min(x0+nx, (kx+1)*cx)
			c := arenaBytes(v.cache[k])
			w := (xb - xa) * sz
			for y := ya; y < yb; y++ {
				src := (lin*cy+(y-ky*cy))*cx + (xa - kx*cx) // value index in the chunk
				dst := ((y-y0)*nx + (xa - x0)) * sz
				if planes {
					unshufflePart(raw[dst:dst+w], c[:v.chunkLen], src, sz)
					continue
				}
				copy(raw[dst:dst+w], c[src*sz:src*sz+w])
			}
		}
	}
}

// unshufflePart unshuffles values [at, at+len(dst)/size) of the shuffled chunk
// c (byte planes of len(c)/size values) into dst.
func unshufflePart(dst, c []byte, at, size int) {
	n := len(c) / size
	m := len(dst) / size
	if size == 4 {
		unshuffleRow4(dst, c[at:at+m], c[n+at:n+at+m], c[2*n+at:2*n+at+m], c[3*n+at:3*n+at+m])
		return
	}
	for b := range size {
		p := c[b*n+at : b*n+at+m]
		for i, x := range p {
			dst[i*size+b] = x
		}
	}
}
