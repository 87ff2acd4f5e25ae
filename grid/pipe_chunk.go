package grid

import (
	"encoding/binary"
	"math"
	"unsafe"
)

// The direct writer's workers build each output chunk's filter input straight
// from the float64 output slab (doc/netcdf.md#direct-chunks), which Process
// then leaves unencoded (its stored-type slab is for libnetcdf's writer
// only). For a shuffled
// float32 variable without quantization, each value is converted as encode
// converts it and its four bytes go at once to the four byte planes of
// shuffle, in one pass instead of three (encode into the stored slab, gather
// the chunk, shuffle it). The bytes are the same as encode followed by shuffle
// (TestChunkInputMatchesEncodeShuffle).

// littleEndian is true on the hosts whose memory order of a value's bytes is
// least significant first, the order the fused loop writes the byte planes in.
var littleEndian = func() bool {
	x := uint16(1)
	return *(*byte)(unsafe.Pointer(&x)) == 1
}()

// chunkInput returns the bytes the compressor gets for chunk t of variable
// t.k: the chunk's values of src (the variable's output slab, ny x nx
// float64 values in row-major order) in the stored type, the part beyond the
// grid padded with the fill value, quantized (OutputVar.Quantize) and
// shuffled when the output is. It writes into s.gather and s.shuf.
func (o *Output) chunkInput(s *chunkScratch, t *chunkTask, src []float64, ny, nx int) []byte {
	d := o.direct
	k := t.k
	sz := d.size[k]
	cy, cx := d.cy, d.cx
	rows, cols := min(cy, ny-t.ry), min(cx, nx-t.rx)
	v := &o.vars[k]
	typ := o.types[k]
	quant := v.Quantize > 0 && typ == Float
	shuf := o.shuffle && sz > 1
	if shuf && !quant && typ == Float && littleEndian {
		shuffleFloat32(s.shuf, src, t.ry, t.rx, rows, cols, nx, cy, cx, d.fill[k], v.Fill)
		return s.shuf
	}
	g := s.gather
	fill := d.fill[k]
	for r := 0; r < cy; r++ {
		row := g[r*cx*sz : (r+1)*cx*sz]
		c := 0
		if r < rows {
			off := (t.ry+r)*nx + t.rx
			encode(v, typ, unsafe.Pointer(&row[0]), src[off:off+cols], 0, cols)
			c = cols * sz
		}
		for ; c < len(row); c += sz {
			copy(row[c:c+sz], fill)
		}
	}
	if quant {
		quantizeChunk(g, cy*cx, v.Quantize, float32(v.Fill))
	}
	if shuf {
		shuffle(s.shuf, g, sz)
		return s.shuf
	}
	return g
}

// shuffleFloat32 is encode (Float) and shuffle of one chunk in one pass: the
// chunk of cy x cx values whose first rows x cols lie in the slab src (rows
// of nx values) at row ry, column rx, the rest filled with fillBytes. Value i
// of the chunk goes to bytes i, n+i, 2n+i, 3n+i of dst (n = cy*cx), least
// significant byte first, as shuffle places the bytes of a little-endian
// float32.
func shuffleFloat32(dst []byte, src []float64, ry, rx, rows, cols, nx, cy, cx int, fillBytes []byte, fill float64) {
	n := cy * cx
	p0, p1, p2, p3 := dst[:n], dst[n:2*n], dst[2*n:3*n], dst[3*n:4*n]
	fb := math.Float32bits(float32(fill))
	f0, f1, f2, f3 := fillBytes[0], fillBytes[1], fillBytes[2], fillBytes[3]
	for r := 0; r < cy; r++ {
		at := r * cx
		q0, q1, q2, q3 := p0[at:at+cx], p1[at:at+cx], p2[at:at+cx], p3[at:at+cx]
		c := 0
		if r < rows {
			off := (ry+r)*nx + rx
			row := src[off : off+cols]
			q0, q1, q2, q3 := q0[:len(row)], q1[:len(row)], q2[:len(row)], q3[:len(row)]
			i := 0
			for ; i+8 <= len(row); i += 8 {
				x := row[i : i+8 : i+8]
				// Values i..i+7 as a, b, c, d = (i, i+4), (i+1, i+5),
				// (i+2, i+6), (i+3, i+7) in the low and high halves; a 4 x 4
				// byte transpose in each half gives the plane bytes.
				a := uint64(f32bits(x[0], fb)) | uint64(f32bits(x[4], fb))<<32
				b := uint64(f32bits(x[1], fb)) | uint64(f32bits(x[5], fb))<<32
				c := uint64(f32bits(x[2], fb)) | uint64(f32bits(x[6], fb))<<32
				d := uint64(f32bits(x[3], fb)) | uint64(f32bits(x[7], fb))<<32
				const m8, m16 = 0x00ff00ff00ff00ff, 0x0000ffff0000ffff
				t0 := a&m8 | (b&m8)<<8  // a0 b0 a2 b2
				t1 := (a>>8)&m8 | b&^m8 // a1 b1 a3 b3
				t2 := c&m8 | (d&m8)<<8  // c0 d0 c2 d2
				t3 := (c>>8)&m8 | d&^m8 // c1 d1 c3 d3
				binary.LittleEndian.PutUint64(q0[i:], t0&m16|(t2&m16)<<16)
				binary.LittleEndian.PutUint64(q1[i:], t1&m16|(t3&m16)<<16)
				binary.LittleEndian.PutUint64(q2[i:], (t0>>16)&m16|t2&^m16)
				binary.LittleEndian.PutUint64(q3[i:], (t1>>16)&m16|t3&^m16)
			}
			for ; i < len(row); i++ {
				u := f32bits(row[i], fb)
				q0[i], q1[i], q2[i], q3[i] = byte(u), byte(u>>8), byte(u>>16), byte(u>>24)
			}
			c = cols
		}
		for ; c < cx; c++ {
			q0[c], q1[c], q2[c], q3[c] = f0, f1, f2, f3
		}
	}
}

// f32bits is the bits of x as encode stores it in a float32: the fill value
// (bits fb) for NaN and ±Inf.
func f32bits(x float64, fb uint32) uint32 {
	u := math.Float32bits(float32(x))
	if !(math.Abs(x) <= math.MaxFloat64) {
		u = fb
	}
	return u
}

// chunkBytes is the size of one uncompressed chunk of variable k.
func (d *directOut) chunkBytes(k int) int { return d.cy * d.cx * d.size[k] }
