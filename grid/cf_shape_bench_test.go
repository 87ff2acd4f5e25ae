package grid

import (
	"fmt"
	"math"
	"path/filepath"
	"runtime"
	"testing"
	"unsafe"
)

// makeCellsInput writes n cells of float32 lwp (kg m-2) and re (m) on one
// dimension ncells, chunked (chunk values a chunk, deflate 1) or contiguous
// (chunk 0). The values are invented, a smooth pattern plus low-digit noise.
func makeCellsInput(path string, n, chunk int) error {
	var err error
	e := onIO(func() {
		var ncid int
		if ncid, err = ncCreate(path, modeNetCDF4Classic); err != nil {
			return
		}
		defer func() {
			if cerr := ncClose(ncid); err == nil {
				err = cerr
			}
		}()
		d, _ := ncDefDim(ncid, "ncells", n)
		var ids [2]int
		for k, v := range [][2]string{{"lwp", "kg m-2"}, {"re", "m"}} {
			id, e := ncDefVar(ncid, v[0], Float, []int{d})
			if e != nil {
				err = e
				return
			}
			ids[k] = id
			if chunk > 0 {
				ncDefChunking(ncid, id, []int{chunk})
				ncDefDeflate(ncid, id, true, 1)
			}
			ncPutAtt(ncid, id, "units", Char, v[1])
		}
		if err = ncEndDef(ncid); err != nil {
			return
		}
		buf := make([]float32, n)
		var seed uint64 = 7
		for k := range ids {
			for i := range buf {
				seed = seed*6364136223846793005 + 1442695040888963407
				noise := float64(seed>>40) / (1 << 24)
				if k == 0 {
					buf[i] = float32((100 + 80*math.Sin(float64(i)/5000) + noise) * 1e-3)
				} else {
					buf[i] = float32((12 + 5*math.Sin(float64(i)/900) + noise) * 1e-6)
				}
			}
			if err = ncPutVara(ncid, ids[k], []uint64{0}, []uint64{uint64(n)}, unsafe.Pointer(&buf[0])); err != nil {
				return
			}
		}
	})
	return firstErr(e, err)
}

// BenchmarkShapes1D reads and writes (I/O only, two outputs) one million columns
// as a 1000 x 1000 grid and as one million cells on a single dimension, chunked
// and contiguous, side by side. It reports columns per second and the largest Go
// heap seen after each run (the slab buffers; a 1-D shape is read in pieces of its
// one row, so this stays at the 2-D grid's level).
func BenchmarkShapes1D(b *testing.B) {
	dir := b.TempDir()
	const n = 1000
	inputs := []struct{ name, path string }{
		{"grid_1000x1000_chunked", filepath.Join(dir, "grid.nc")},
		{"cells_1e6_chunked", filepath.Join(dir, "cells_chunked.nc")},
		{"cells_1e6_contiguous", filepath.Join(dir, "cells_contig.nc")},
	}
	if err := makeBenchInput(inputs[0].path, n, 250, 250); err != nil {
		b.Fatal(err)
	}
	if err := makeCellsInput(inputs[1].path, n*n, 62500); err != nil {
		b.Fatal(err)
	}
	if err := makeCellsInput(inputs[2].path, n*n, 0); err != nil {
		b.Fatal(err)
	}
	for _, in := range inputs {
		b.Run(in.name, func(b *testing.B) {
			i, err := Open(in.path, OpenOptions{Overrides: []Override{{Role: RoleLWP, Var: "lwp"}, {Role: RoleRe, Var: "re"}}, SlabBytes: 4 << 20})
			if err != nil {
				b.Fatal(err)
			}
			defer i.Close()
			b.ReportAllocs()
			var peak uint64
			for k := 0; k < b.N; k++ {
				o, err := Create(filepath.Join(b.TempDir(), fmt.Sprintf("o%d.nc", k)), i, benchVars(), DefaultWriteOptions())
				if err != nil {
					b.Fatal(err)
				}
				if err := Process(i, o, ProcessOptions{SkipCompute: true}, nil); err != nil {
					b.Fatal(err)
				}
				if err := o.Commit(); err != nil {
					b.Fatal(err)
				}
				var ms runtime.MemStats
				runtime.ReadMemStats(&ms)
				peak = max(peak, ms.HeapInuse)
			}
			b.ReportMetric(float64(i.Layout.Columns)*float64(b.N)/b.Elapsed().Seconds(), "columns/s")
			b.ReportMetric(float64(peak)/(1<<20), "heap-MiB")
		})
	}
}
