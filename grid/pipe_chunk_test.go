package grid

import (
	"bytes"
	"fmt"
	"math"
	"testing"
	"unsafe"
)

// refChunkInput is the chunk filter input as the direct writer built it before
// chunkInput: encode the whole slab to the stored type, gather the chunk from it
// with the fill value beyond the grid, quantize, shuffle.
func refChunkInput(o *Output, t *chunkTask, src []float64, ny, nx int) []byte {
	d := o.direct
	k := t.k
	sz := d.size[k]
	cy, cx := d.cy, d.cx
	raw := make([]uint64, (ny*nx*sz+7)/8+1)
	encode(&o.vars[k], o.types[k], unsafe.Pointer(&raw[0]), src, 0, ny*nx)
	stored := unsafe.Slice((*byte)(unsafe.Pointer(&raw[0])), ny*nx*sz)
	g := make([]byte, cy*cx*sz)
	rows, cols := min(cy, ny-t.ry), min(cx, nx-t.rx)
	for r := 0; r < cy; r++ {
		row := g[r*cx*sz : (r+1)*cx*sz]
		c := 0
		if r < rows {
			off := ((t.ry+r)*nx + t.rx) * sz
			c = copy(row, stored[off:off+cols*sz])
		}
		for ; c < len(row); c += sz {
			copy(row[c:c+sz], d.fill[k])
		}
	}
	v := &o.vars[k]
	if v.Quantize > 0 && o.types[k] == Float {
		quantizeChunk(g, cy*cx, v.Quantize, float32(v.Fill))
	}
	if o.shuffle && sz > 1 {
		s := make([]byte, len(g))
		shuffle(s, g, sz)
		return s
	}
	return g
}

// TestChunkInputMatchesEncodeShuffle: the bytes the direct writer compresses
// (chunkInput, with its one-pass encode and shuffle of float32) are those of
// encode, gather and shuffle, for every stored type, packed int16, quantized
// float32, with and without shuffle, for whole chunks and chunks cut by the
// grid's edge, on values that include NaN, ±Inf, -0, subnormals, values beyond
// float32's range and beyond a packed type's range (invented data).
func TestChunkInputMatchesEncodeShuffle(t *testing.T) {
	const ny, nx = 23, 37
	const cy, cx = 8, 16
	src := make([]float64, ny*nx)
	special := []float64{math.NaN(), math.Inf(1), math.Inf(-1), math.Copysign(0, -1), 0, 5e-324, 1e-40,
		3.5e38, -3.5e38, 1e300, -999, 65535.4, -40000, 4.3e9, -1, 127.5, 2.5}
	for i := range src {
		if i%5 == 0 {
			src[i] = special[(i/5)%len(special)]
			continue
		}
		src[i] = 300*math.Sin(float64(i)*0.37) + 1e-3*math.Cos(float64(i)*1.3)
	}
	vars := []OutputVar{
		{Name: "f", Type: Float32, Fill: -999},
		{Name: "fq", Type: Float32, Fill: 9.96921e36, Quantize: 3},
		{Name: "p", Type: Int16, Fill: -32768, Scale: 0.01, Offset: 100},
		{Name: "b", Type: Int8, Fill: -127},
		{Name: "i", Type: Int32, Fill: -2147483647},
		{Name: "u", Type: Uint32, Fill: 4294967295},
	}
	for _, shuf := range []bool{true, false} {
		o := &Output{vars: vars, shuffle: shuf, direct: &directOut{cy: cy, cx: cx}}
		for k, v := range vars {
			typ := v.Type.nc()
			o.types = append(o.types, typ)
			b := make([]byte, typ.Size())
			copyRawTo(b, typedPtr(convertTyped([]float64{v.Fill}, typ)), typ.Size())
			o.direct.fill = append(o.direct.fill, b)
			o.direct.size = append(o.direct.size, typ.Size())
			for ry := 0; ry < ny; ry += cy {
				for rx := 0; rx < nx; rx += cx {
					t.Run(fmt.Sprintf("%s/shuffle=%v/%d,%d", v.Name, shuf, ry, rx), func(t *testing.T) {
						task := &chunkTask{k: k, ry: ry, rx: rx}
						want := refChunkInput(o, task, src, ny, nx)
						s := getScratch(0, cy*cx*typ.Size())
						defer putScratch(s)
						for i := range s.gather { // stale bytes of an earlier chunk must not show
							s.gather[i], s.shuf[i] = 0xa5, 0x5a
						}
						got := o.chunkInput(s, task, src, ny, nx)
						if !bytes.Equal(got, want) {
							t.Errorf("chunk bytes differ from encode + gather + shuffle")
						}
					})
				}
			}
		}
	}
}

// BenchmarkChunkInput is the work of the direct writer's chunk filters before
// the compressor: a float32 chunk of 100 x 1000 values from a float64 output
// slab, in one pass (chunkInput) and as encode of the slab's rows followed by
// gather and shuffle (encode-gather-shuffle), with a third of the values NaN
// in patches (invented data).
func BenchmarkChunkInput(b *testing.B) {
	const cy, cx = 100, 1000
	src := make([]float64, cy*cx)
	for i := range src {
		y, x := float64(i/cx), float64(i%cx)
		src[i] = 120 + 80*math.Sin(y/37)*math.Cos(x/53) + 3*math.Sin(float64(i)*12.9898)
		if math.Sin(y/19)+math.Cos(x/23) > 0.8 {
			src[i] = math.NaN()
		}
	}
	o := &Output{vars: []OutputVar{{Name: "f", Type: Float32, Fill: -999}}, types: []Type{Float}, shuffle: true,
		direct: &directOut{cy: cy, cx: cx, fill: [][]byte{make([]byte, 4)}, size: []int{4}}}
	copyRawTo(o.direct.fill[0], typedPtr([]float32{-999}), 4)
	task := &chunkTask{}
	s := getScratch(0, cy*cx*4)
	defer putScratch(s)
	raw := make([]uint64, cy*cx/2)
	b.Run("one-pass", func(b *testing.B) {
		b.SetBytes(cy * cx * 4)
		for b.Loop() {
			o.chunkInput(s, task, src, cy, cx)
		}
	})
	b.Run("encode-gather-shuffle", func(b *testing.B) {
		b.SetBytes(cy * cx * 4)
		for b.Loop() {
			encode(&o.vars[0], Float, unsafe.Pointer(&raw[0]), src, 0, cy*cx)
			copy(s.gather, unsafe.Slice((*byte)(unsafe.Pointer(&raw[0])), cy*cx*4))
			shuffle(s.shuf, s.gather, 4)
		}
	})
}
