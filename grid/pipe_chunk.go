package grid

import (
	"encoding/binary"
	"unsafe"
)

// The direct writer's workers build each output chunk's filter input from the
// slab of stored values (doc/netcdf.md#direct-chunks): for a shuffled variable
// of 2- or 4-byte values without quantization, the chunk's rows are shuffled
// straight from the slab into the byte planes, in one pass instead of a copy
// into the chunk and a shuffle of it. The bytes are those of the copy followed
// by shuffle (TestChunkInputMatchesGatherShuffle).

// chunkInput returns the bytes the compressor gets for chunk t of variable
// t.k: the chunk's values of raw (the variable's slab of ny x nx stored values,
// row-major), the part beyond the grid padded with the fill value, quantized
// (OutputVar.Quantize) and shuffled when the output is. It writes into
// s.gather and s.shuf.
func (o *Output) chunkInput(s *chunkScratch, t *chunkTask, raw []uint64, ny, nx int) []byte {
	d := o.direct
	k := t.k
	sz := d.size[k]
	cy, cx := d.cy, d.cx
	rows, cols := min(cy, ny-t.ry), min(cx, nx-t.rx)
	v := &o.vars[k]
	quant := v.Quantize > 0 && o.types[k] == Float
	src := unsafe.Slice((*byte)(unsafe.Pointer(&raw[0])), ny*nx*sz)
	fill := d.fill[k]
	if o.shuffle && !quant && (sz == 4 || sz == 2) {
		n := cy * cx
		for r := 0; r < cy; r++ {
			at := r * cx
			c := 0
			if r < rows {
				off := ((t.ry+r)*nx + t.rx) * sz
				row := src[off : off+cols*sz]
				if sz == 4 {
					shuffleRow4(s.shuf[at:at+cols], s.shuf[n+at:n+at+cols], s.shuf[2*n+at:2*n+at+cols], s.shuf[3*n+at:3*n+at+cols], row)
				} else {
					shuffleRow2(s.shuf[at:at+cols], s.shuf[n+at:n+at+cols], row)
				}
				c = cols
			}
			for ; c < cx; c++ {
				for b := range sz {
					s.shuf[b*n+at+c] = fill[b]
				}
			}
		}
		return s.shuf
	}
	g := s.gather
	for r := 0; r < cy; r++ {
		row := g[r*cx*sz : (r+1)*cx*sz]
		c := 0
		if r < rows {
			off := ((t.ry+r)*nx + t.rx) * sz
			c = copy(row, src[off:off+cols*sz])
		}
		for ; c < len(row); c += sz {
			copy(row[c:c+sz], fill)
		}
	}
	if quant {
		quantizeChunk(g, cy*cx, v.Quantize, float32(v.Fill))
	}
	if o.shuffle && sz > 1 {
		shuffle(s.shuf, g, sz)
		return s.shuf
	}
	return g
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

// chunkBytes is the size of one uncompressed chunk of variable k.
func (d *directOut) chunkBytes(k int) int { return d.cy * d.cx * d.size[k] }
