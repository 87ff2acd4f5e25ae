package grid

import (
	"bytes"
	"fmt"
	"math"
	"path/filepath"
	"testing"
	"unsafe"
)

// refChunkInput is the chunk filter input as the direct writer built it before
// chunkInput: gather the chunk from the slab of stored values with the fill
// value beyond the grid, quantize, shuffle.
func refChunkInput(o *Output, t *chunkTask, raw []uint64, ny, nx int) []byte {
	d := o.direct
	k := t.k
	sz := d.size[k]
	cy, cx := d.cy, d.cx
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

// TestChunkInputMatchesGatherShuffle: the bytes the direct writer compresses
// (encodeChunks into the chunk layout, in blocks of columns cut anywhere, then
// chunkInput) are those of encode into the row-major slab, gather and shuffle,
// for every stored type, packed int16, quantized float32, with and without
// shuffle, for whole chunks and chunks cut by the grid's edge, with stale bytes
// in the buffers, on values that include NaN, ±Inf, -0, subnormals, values
// beyond float32's range and beyond a packed type's range (invented data).
func TestChunkInputMatchesGatherShuffle(t *testing.T) {
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
	blocks := []int{1, 7, 100, 3, 333, 16, 9} // compute block lengths, cycled
	for _, shuf := range []bool{true, false} {
		o := &Output{vars: vars, shuffle: shuf, direct: &directOut{cy: cy, cx: cx}}
		for k, v := range vars {
			typ := v.Type.nc()
			o.types = append(o.types, typ)
			b := make([]byte, typ.Size())
			copyRawTo(b, typedPtr(convertTyped([]float64{v.Fill}, typ)), typ.Size())
			o.direct.fill = append(o.direct.fill, b)
			o.direct.size = append(o.direct.size, typ.Size())
			raw := make([]uint64, (ny*nx*typ.Size()+7)/8)
			encode(&o.vars[k], typ, unsafe.Pointer(&raw[0]), src, 0, ny*nx)
			p := &slabPlan{Y: ny, X: nx, ry: ny, rx: nx, maxN: ny * nx}
			chunked := make([]uint64, rawWords(o.direct.slabValues(p), typ.Size()))
			for i := range chunked {
				chunked[i] = 0xa5a5a5a5a5a5a5a5
			}
			for lo, j := 0, 0; lo < ny*nx; j++ {
				hi := min(lo+blocks[j%len(blocks)], ny*nx)
				o.encodeChunks(k, chunked, src[lo:hi], lo, hi, nx)
				lo = hi
			}
			for ry := 0; ry < ny; ry += cy {
				for rx := 0; rx < nx; rx += cx {
					t.Run(fmt.Sprintf("%s/shuffle=%v/%d,%d", v.Name, shuf, ry, rx), func(t *testing.T) {
						task := &chunkTask{k: k, ry: ry, rx: rx}
						want := refChunkInput(o, task, raw, ny, nx)
						s := getScratch(0, cy*cx*typ.Size())
						defer putScratch(s)
						for i := range s.shuf { // stale bytes of an earlier chunk must not show
							s.shuf[i] = 0x5a
						}
						got := o.chunkInput(s, task, chunked, ny, nx)
						if !bytes.Equal(got, want) {
							t.Errorf("chunk bytes differ from encode, gather and shuffle")
						}
					})
				}
			}
		}
	}
}

// BenchmarkEncodeChunk is the work of the workers on a float32 output before
// the compressor, for a chunk of 100 x 1000 values of a slab of 200 x 2000
// computed in blocks of computeBlock columns (each block's values written just
// before, as compute does, so that they are in the core's cache), with a third
// of the values NaN in patches (invented data): encoded into the chunk's byte planes in one pass
// (fused: encodeChunks, chunkInput), and encoded into the row-major slab then
// shuffled from it (two-pass: encode, shuffleRow4 of each row, the direct
// writer's way before encodeChunks).
func BenchmarkEncodeChunk(b *testing.B) {
	const cy, cx, ny, nx = 100, 1000, 200, 2000
	src := make([]float64, ny*nx)
	for i := range src {
		y, x := float64(i/nx), float64(i%nx)
		src[i] = 120 + 80*math.Sin(y/37)*math.Cos(x/53) + 3*math.Sin(float64(i)*12.9898)
		if math.Sin(y/19)+math.Cos(x/23) > 0.8 {
			src[i] = math.NaN()
		}
	}
	o := &Output{vars: []OutputVar{{Name: "f", Type: Float32, Fill: -999}}, types: []Type{Float}, shuffle: true,
		direct: &directOut{cy: cy, cx: cx, fill: [][]byte{make([]byte, 4)}, size: []int{4}}}
	copyRawTo(o.direct.fill[0], typedPtr([]float32{-999}), 4)
	raw := make([]uint64, ny*nx/2+1)
	dec := make([]float64, ny*nx) // compute's output buffer
	s := getScratch(0, cy*cx*4)
	defer putScratch(s)
	b.Run("fused", func(b *testing.B) {
		b.ReportAllocs()
		b.SetBytes(ny * nx * 4)
		for b.Loop() {
			for lo := 0; lo < ny*nx; lo += computeBlock {
				hi := min(lo+computeBlock, ny*nx)
				copy(dec[lo:hi], src[lo:hi])
				o.encodeChunks(0, raw, dec[lo:hi], lo, hi, nx)
			}
			for ry := 0; ry < ny; ry += cy {
				for rx := 0; rx < nx; rx += cx {
					o.chunkInput(s, &chunkTask{ry: ry, rx: rx}, raw, ny, nx)
				}
			}
		}
	})
	b.Run("two-pass", func(b *testing.B) {
		b.ReportAllocs()
		b.SetBytes(ny * nx * 4)
		stored := unsafe.Slice((*byte)(unsafe.Pointer(&raw[0])), ny*nx*4)
		const n = cy * cx
		for b.Loop() {
			for lo := 0; lo < ny*nx; lo += computeBlock {
				hi := min(lo+computeBlock, ny*nx)
				copy(dec[lo:hi], src[lo:hi])
				encode(&o.vars[0], Float, unsafe.Pointer(&raw[0]), dec, lo, hi)
			}
			for ry := 0; ry < ny; ry += cy {
				for rx := 0; rx < nx; rx += cx {
					for r := range cy {
						off := ((ry+r)*nx + rx) * 4
						at := r * cx
						shuffleRow4(s.shuf[at:at+cx], s.shuf[n+at:n+at+cx], s.shuf[2*n+at:2*n+at+cx], s.shuf[3*n+at:3*n+at+cx], stored[off:off+cx*4])
					}
				}
			}
		}
	})
}

// TestEncodeFloat: encode stores a float32 output as the nearest float32 of the
// value (Go's conversion, round to nearest even; values beyond float32's range
// become ±Inf) and the fill value for NaN and ±Inf, over columns [lo, hi) only
// (common practice: CF's _FillValue marks missing data).
func TestEncodeFloat(t *testing.T) {
	src := []float64{1, math.NaN(), math.Inf(1), math.Inf(-1), math.Copysign(0, -1), 5e-324, 1e-40,
		3.5e38, -3.5e38, 1e300, 0.1, -2.5, 16777217, math.Float64frombits(0x7ff8000000000001)}
	v := &OutputVar{Fill: -999}
	got := make([]float32, len(src)+2)
	got[0], got[len(got)-1] = 7, 7
	encode(v, Float, unsafe.Pointer(&got[0]), append([]float64{0}, src...), 1, len(src)+1)
	if got[0] != 7 || got[len(got)-1] != 7 {
		t.Fatalf("encode wrote outside [lo, hi): %v", got)
	}
	for i, x := range src {
		want := float32(x)
		if math.IsNaN(x) || math.IsInf(x, 0) {
			want = -999
		}
		if math.Float32bits(got[i+1]) != math.Float32bits(want) {
			t.Errorf("encode(%g) = %g (%#x), want %g (%#x)", x, got[i+1], math.Float32bits(got[i+1]), want, math.Float32bits(want))
		}
	}
}

// TestBlockOutputsMatch: a run whose compute gets outputs for its block of
// columns only (ProcessOptions.BlockOutputs) writes the same file as one whose
// compute gets outputs for the whole slab, with both writers, on the direct
// writer's cases (grids whose sides are not multiples of the chunks, tiles,
// every output type; invented data).
func TestBlockOutputsMatch(t *testing.T) {
	// blockCompute is directCompute with outs[k][i-lo].
	blockCompute := func(s *Slab, outs [][]float64, lo, hi int) {
		whole := make([][]float64, len(outs))
		for k := range whole {
			whole[k] = make([]float64, hi)
		}
		directCompute(s, whole, lo, hi)
		for k := range outs {
			copy(outs[k][:hi-lo], whole[k][lo:hi])
		}
	}
	for _, c := range directCases(t) {
		for _, writer := range []string{WriterDirect, WriterLibnetcdf} {
			t.Run(c.name+"/"+writer, func(t *testing.T) {
				var paths []string
				for _, block := range []bool{false, true} {
					in, err := Open(c.in, OpenOptions{SlabBytes: c.slab})
					if err != nil {
						t.Fatal(err)
					}
					defer in.Close()
					path := filepath.Join(t.TempDir(), fmt.Sprintf("block%v.nc", block))
					opt := DefaultWriteOptions()
					opt.Mode, opt.Writer = c.mode, writer
					out, err := Create(path, in, directVars(), opt)
					if err != nil {
						t.Fatal(err)
					}
					f := directCompute
					if block {
						f = blockCompute
					}
					if err := Process(in, out, ProcessOptions{Workers: 3, BlockOutputs: block}, f); err != nil {
						t.Fatal(err)
					}
					if err := out.Commit(); err != nil {
						t.Fatal(err)
					}
					paths = append(paths, path)
				}
				compareOutputs(t, paths[0], paths[1])
			})
		}
	}
}
