package grid

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"testing"
	"unsafe"
)

// makeBenchInput writes an n x n netCDF-4 classic file with float32 lwp (kg m-2)
// and re (m), deflate 1 + shuffle, chunks cy x cx. The fields are invented: a
// smooth pattern plus noise in the low digits, so they compress like real
// retrievals rather than like constants. The units are the canonical ones, so an
// I/O-only copy writes the same bits and compresses exactly like nccopy's copy.
func makeBenchInput(path string, n, cy, cx int) error {
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
		y, _ := ncDefDim(ncid, "y", n)
		x, _ := ncDefDim(ncid, "x", n)
		var ids [2]int
		for k, v := range [][3]string{{"lwp", "atmosphere_mass_content_of_cloud_liquid_water", "kg m-2"},
			{"re", "effective_radius_of_cloud_liquid_water_particles_at_liquid_water_cloud_top", "m"}} {
			id, e := ncDefVar(ncid, v[0], Float, []int{y, x})
			if e != nil {
				err = e
				return
			}
			ids[k] = id
			ncDefChunking(ncid, id, []int{cy, cx})
			ncDefDeflate(ncid, id, true, 1)
			ncDefFill(ncid, id, []float32{-999})
			ncPutAtt(ncid, id, "standard_name", Char, v[1])
			ncPutAtt(ncid, id, "units", Char, v[2])
		}
		if err = ncEndDef(ncid); err != nil {
			return
		}
		rows := cy
		buf := make([]float32, rows*n)
		var seed uint64 = 12345
		for y0 := 0; y0 < n; y0 += rows {
			ny := min(rows, n-y0)
			for k := range ids {
				for i := 0; i < ny; i++ {
					for j := 0; j < n; j++ {
						seed = seed*6364136223846793005 + 1442695040888963407
						noise := float64(seed>>40) / (1 << 24)
						base := 100 + 80*math.Sin(float64(y0+i)/150)*math.Cos(float64(j)/210)
						if k == 1 {
							base = 12 + 5*math.Sin(float64(j)/90)
						}
						scale := 1e-3 // g m-2 -> kg m-2
						if k == 1 {
							scale = 1e-6 // um -> m
						}
						buf[i*n+j] = float32(math.Round((base+noise)*100) / 100 * scale)
					}
				}
				if (y0/rows)%7 == 3 && k == 0 {
					buf[0] = -999 // some fill
				}
				if err = ncPutVara(ncid, ids[k], []uint64{uint64(y0), 0}, []uint64{uint64(ny), uint64(n)}, unsafe.Pointer(&buf[0])); err != nil {
					return
				}
			}
		}
	})
	return firstErr(e, err)
}

func benchVars() []OutputVar {
	return []OutputVar{
		{Name: "out_lwp", Units: "kg m-2", Type: Float32, Fill: -999},
		{Name: "out_re", Units: "m", Type: Float32, Fill: -999},
	}
}

// benchVarsN returns n float32 outputs (GRID_BENCH_NOUT, for memory checks with
// as many outputs as the command writes).
func benchVarsN(n int) []OutputVar {
	if n <= 2 {
		return benchVars()
	}
	v := benchVars()
	for k := 2; k < n; k++ {
		v = append(v, OutputVar{Name: fmt.Sprintf("out_%d", k), Units: "1", Type: Float32, Fill: -999})
	}
	return v
}

// readWrite is one I/O-only run: read lwp and re, write two float32 variables.
func readWrite(in, out string) error {
	i, err := Open(in, OpenOptions{})
	if err != nil {
		return err
	}
	defer i.Close()
	opt := DefaultWriteOptions()
	opt.Force = true
	nout, _ := strconv.Atoi(os.Getenv("GRID_BENCH_NOUT"))
	o, err := Create(out, i, benchVarsN(nout), opt)
	if err != nil {
		return err
	}
	if err := Process(i, o, ProcessOptions{SkipCompute: true}, nil); err != nil {
		return err
	}
	return o.Commit()
}

// BenchmarkReadWrite4000 reads and writes a 4000 x 4000 float32 field pair
// (deflate 1, shuffle, chunks 500 x 500) through grid. bench/grid_vs_nccopy.sh
// compares it with nccopy.
func BenchmarkReadWrite4000(b *testing.B) {
	const n = 4000
	dir := b.TempDir()
	in := filepath.Join(dir, "in.nc")
	if err := makeBenchInput(in, n, 500, 500); err != nil {
		b.Fatal(err)
	}
	b.SetBytes(2 * n * n * 4) // uncompressed bytes of the two input fields
	b.ReportAllocs()
	b.ResetTimer()
	for k := 0; k < b.N; k++ {
		if err := readWrite(in, filepath.Join(dir, "out.nc")); err != nil {
			b.Fatal(err)
		}
	}
}

func init() {
	// Helper modes for bench/grid_vs_nccopy.sh (through the test binary).
	switch os.Getenv("GRID_TEST_HELPER") {
	case "mkbench":
		n, _ := strconv.Atoi(os.Getenv("GRID_BENCH_N"))
		if n == 0 {
			n = 4000
		}
		if err := makeBenchInput(os.Args[len(os.Args)-1], n, 500, 500); err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
		os.Exit(0)
	case "rw":
		if err := readWrite(os.Args[len(os.Args)-2], os.Args[len(os.Args)-1]); err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
		os.Exit(0)
	}
}
