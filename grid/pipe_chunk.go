package grid

import (
	"encoding/binary"
	"math"
	"unsafe"
)

// The direct writer keeps each output variable's slab of stored values in the
// layout its chunk filters read (doc/netcdf.md#direct-chunks): chunk after
// chunk in the order of slabTasks, each chunk of cy x cx values whole (the
// part beyond the grid padded with the fill value when the chunk is filtered),
// and a shuffled variable of 2- or 4-byte values without quantization as the
// chunk's byte planes. The workers encode each block of computed columns
// straight into that layout (encodeChunks; a float32 output converted and
// shuffled in one pass, encodeRow4), so a chunk's filter input needs no copy:
// the bytes are those of encode, gather and shuffle of the row-major slab
// (TestChunkInputMatchesGatherShuffle).

// planes says whether variable k's chunks are stored as byte planes.
func (o *Output) planes(k int) bool {
	sz := o.direct.size[k]
	quant := o.vars[k].Quantize > 0 && o.types[k] == Float
	return o.shuffle && !quant && (sz == 4 || sz == 2)
}

// slabValues is the number of values of a slab of the plan in the chunk
// layout: the slab's whole chunks.
func (d *directOut) slabValues(p *slabPlan) int {
	ny := (min(p.ry, p.Y) + d.cy - 1) / d.cy
	nx := (min(p.rx, p.X) + d.cx - 1) / d.cx
	return max(p.maxN, ny*d.cy*nx*d.cx)
}

// encodeChunks converts src, columns [lo, hi) of output variable k of a slab of
// nx columns a row, to the stored type in raw, the slab in the chunk layout.
func (o *Output) encodeChunks(k int, raw []uint64, src []float64, lo, hi, nx int) {
	d := o.direct
	sz := d.size[k]
	cy, cx := d.cy, d.cx
	n := cy * cx
	ncx := (nx + cx - 1) / cx
	v, t := &o.vars[k], o.types[k]
	planes := o.planes(k)
	base := unsafe.Pointer(&raw[0])
	for i := lo; i < hi; {
		y, x := i/nx, i%nx
		e := min(hi, i+nx-x, i+cx-x%cx) // to the end of the row or of the chunk
		chunk := unsafe.Add(base, ((y/cy)*ncx+x/cx)*n*sz)
		at := (y%cy)*cx + x%cx
		if !planes {
			encode(v, t, unsafe.Add(chunk, at*sz), src[i-lo:e-lo], 0, e-i)
			i = e
			continue
		}
		p := unsafe.Slice((*byte)(chunk), n*sz)
		if t == Float {
			fill := math.Float32bits(float32(v.Fill))
			m := e - i
			encodeRow4(p[at:at+m], p[n+at:n+at+m], p[2*n+at:2*n+at+m], p[3*n+at:3*n+at+m], src[i-lo:e-lo], fill)
			i = e
			continue
		}
		// Other types: encode a piece at a time, then shuffle it into the planes.
		var tmp [256]uint32
		for i < e {
			m := min(e-i, len(tmp))
			encode(v, t, unsafe.Pointer(&tmp[0]), src[i-lo:i-lo+m], 0, m)
			b := unsafe.Slice((*byte)(unsafe.Pointer(&tmp[0])), m*sz)
			if sz == 4 {
				shuffleRow4(p[at:at+m], p[n+at:n+at+m], p[2*n+at:2*n+at+m], p[3*n+at:3*n+at+m], b)
			} else {
				shuffleRow2(p[at:at+m], p[n+at:n+at+m], b)
			}
			i += m
			at += m
		}
	}
}

// chunkInput returns the bytes the compressor gets for chunk t of variable
// t.k: the chunk's values in raw (the variable's slab of ny x nx columns in the
// chunk layout, filled by encodeChunks), the part beyond the grid padded with
// the fill value, quantized (OutputVar.Quantize) and shuffled when the output
// is. It pads and quantizes in raw and may shuffle into s.shuf.
func (o *Output) chunkInput(s *chunkScratch, t *chunkTask, raw []uint64, ny, nx int) []byte {
	d := o.direct
	k := t.k
	sz := d.size[k]
	cy, cx := d.cy, d.cx
	n := cy * cx
	rows, cols := min(cy, ny-t.ry), min(cx, nx-t.rx)
	at := ((t.ry/cy)*((nx+cx-1)/cx) + t.rx/cx) * n * sz
	c := unsafe.Slice((*byte)(unsafe.Add(unsafe.Pointer(&raw[0]), at)), n*sz)
	fill := d.fill[k]
	if o.planes(k) {
		if rows < cy || cols < cx {
			for b := range sz {
				p := c[b*n : (b+1)*n]
				for r := range cy {
					from := cols
					if r >= rows {
						from = 0
					}
					for i := r*cx + from; i < (r+1)*cx; i++ {
						p[i] = fill[b]
					}
				}
			}
		}
		return c
	}
	if rows < cy || cols < cx {
		for r := range cy {
			from := cols
			if r >= rows {
				from = 0
			}
			for i := r*cx + from; i < (r+1)*cx; i++ {
				copy(c[i*sz:(i+1)*sz], fill)
			}
		}
	}
	v := &o.vars[k]
	if v.Quantize > 0 && o.types[k] == Float {
		quantizeChunk(c, n, v.Quantize, float32(v.Fill))
	}
	if o.shuffle && sz > 1 {
		shuffle(s.shuf, c, sz)
		return s.shuf
	}
	return c
}

// encodeRow4 is encode of float32 values (fill for NaN and ±Inf) followed by
// shuffleRow4: the stored bytes of src[i] go to p0[i]..p3[i], eight values at
// a time.
func encodeRow4(p0, p1, p2, p3 []byte, src []float64, fill uint32) {
	n := len(src)
	p0, p1, p2, p3 = p0[:n], p1[:n], p2[:n], p3[:n]
	i := 0
	for ; i+8 <= n; i += 8 {
		s := src[i : i+8 : i+8]
		// a, b, c, d hold values (i, i+4), (i+1, i+5), (i+2, i+6), (i+3, i+7);
		// a 4 x 4 byte transpose in each half gives eight bytes of each plane
		// (the same lines as in shuffleRow4, written out twice: as a function
		// the compiler does not inline them, which made this loop 12 % slower,
		// BenchmarkEncodeChunk).
		a := uint64(f32Bits(s[0], fill)) | uint64(f32Bits(s[4], fill))<<32
		b := uint64(f32Bits(s[1], fill)) | uint64(f32Bits(s[5], fill))<<32
		c := uint64(f32Bits(s[2], fill)) | uint64(f32Bits(s[6], fill))<<32
		d := uint64(f32Bits(s[3], fill)) | uint64(f32Bits(s[7], fill))<<32
		const m8, m16 = 0x00ff00ff00ff00ff, 0x0000ffff0000ffff
		t0 := a&m8 | (b&m8)<<8  // a0 b0 a2 b2
		t1 := (a>>8)&m8 | b&^m8 // a1 b1 a3 b3
		t2 := c&m8 | (d&m8)<<8  // c0 d0 c2 d2
		t3 := (c>>8)&m8 | d&^m8 // c1 d1 c3 d3
		binary.LittleEndian.PutUint64(p0[i:], t0&m16|(t2&m16)<<16)
		binary.LittleEndian.PutUint64(p1[i:], t1&m16|(t3&m16)<<16)
		binary.LittleEndian.PutUint64(p2[i:], (t0>>16)&m16|t2&^m16)
		binary.LittleEndian.PutUint64(p3[i:], (t1>>16)&m16|t3&^m16)
	}
	for ; i < n; i++ {
		u := f32Bits(src[i], fill)
		p0[i], p1[i], p2[i], p3[i] = byte(u), byte(u>>8), byte(u>>16), byte(u>>24)
	}
}

// f32Bits is the stored bits of x as a float32 output: fill for NaN and ±Inf.
func f32Bits(x float64, fill uint32) uint32 {
	u := math.Float32bits(float32(x))
	if !(math.Abs(x) <= math.MaxFloat64) { // a select, not a branch
		u = fill
	}
	return u
}

// shuffleRow4 is shuffle of the 4-byte values in src into the planes p0..p3
// (byte b of value i to pb[i]), eight values at a time.
func shuffleRow4(p0, p1, p2, p3, src []byte) {
	n := len(p0)
	p1, p2, p3, src = p1[:n], p2[:n], p3[:n], src[:4*n]
	i := 0
	for ; i+8 <= n; i += 8 {
		x := src[4*i : 4*i+32 : 4*i+32]
		w0 := binary.LittleEndian.Uint64(x[0:])  // values i, i+1
		w1 := binary.LittleEndian.Uint64(x[8:])  // i+2, i+3
		w2 := binary.LittleEndian.Uint64(x[16:]) // i+4, i+5
		w3 := binary.LittleEndian.Uint64(x[24:]) // i+6, i+7
		const lo32 = 0x00000000ffffffff
		// a, b, c, d hold values (i, i+4), (i+1, i+5), (i+2, i+6), (i+3, i+7);
		// a 4 x 4 byte transpose in each half gives eight bytes of each plane.
		a := w0&lo32 | w2<<32
		b := w0>>32 | w2&^lo32
		c := w1&lo32 | w3<<32
		d := w1>>32 | w3&^lo32
		const m8, m16 = 0x00ff00ff00ff00ff, 0x0000ffff0000ffff
		t0 := a&m8 | (b&m8)<<8  // a0 b0 a2 b2
		t1 := (a>>8)&m8 | b&^m8 // a1 b1 a3 b3
		t2 := c&m8 | (d&m8)<<8  // c0 d0 c2 d2
		t3 := (c>>8)&m8 | d&^m8 // c1 d1 c3 d3
		binary.LittleEndian.PutUint64(p0[i:], t0&m16|(t2&m16)<<16)
		binary.LittleEndian.PutUint64(p1[i:], t1&m16|(t3&m16)<<16)
		binary.LittleEndian.PutUint64(p2[i:], (t0>>16)&m16|t2&^m16)
		binary.LittleEndian.PutUint64(p3[i:], (t1>>16)&m16|t3&^m16)
	}
	for ; i < n; i++ {
		p0[i], p1[i], p2[i], p3[i] = src[4*i], src[4*i+1], src[4*i+2], src[4*i+3]
	}
}

// shuffleRow2 is shuffle of the 2-byte values in src into the planes p0, p1.
func shuffleRow2(p0, p1, src []byte) {
	n := len(p0)
	p1, src = p1[:n], src[:2*n]
	for i := range n {
		p0[i], p1[i] = src[2*i], src[2*i+1]
	}
}

// shuffleRoom is the scratch chunkInput needs for a chunk of variable k: the
// chunk's bytes when it shuffles them into s.shuf (a shuffled variable whose
// slab is not kept as byte planes), else none.
func (o *Output) shuffleRoom(k int) int {
	if o.shuffle && o.direct.size[k] > 1 && !o.planes(k) {
		return o.direct.chunkBytes(k)
	}
	return 0
}

// chunkBytes is the size of one uncompressed chunk of variable k.
func (d *directOut) chunkBytes(k int) int { return d.cy * d.cx * d.size[k] }
