package app

// Memory bound of process (--memory-mb): the estimate from the input's
// chunking, made before any data is read, decides the slab size, or refuses
// with the estimate and the rechunking fix.

import (
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/microphys"
)

// chunkedInput writes an n×n LWP/r_e file with ncgen and the given chunk
// sides (nccopy -c when the sides are small, _ChunkSizes otherwise).
func chunkedInput(t *testing.T, dir string, n, chunk int, data bool) string {
	t.Helper()
	ncgen := requireTool(t, "ncgen")
	var b strings.Builder
	fmt.Fprintf(&b, "netcdf c {\ndimensions: lat = %d ; lon = %d ;\nvariables:\n", n, n)
	for _, v := range [][3]string{{"lwp", "g m-2", "atmosphere_mass_content_of_cloud_liquid_water"},
		{"re", "um", "effective_radius_of_cloud_liquid_water_particles_at_liquid_water_cloud_top"}} {
		fmt.Fprintf(&b, "  float %s(lat, lon) ; %s:units = %q ; %s:standard_name = %q ; %s:_ChunkSizes = %d, %d ;\n", v[0], v[0], v[1], v[0], v[2], v[0], chunk, chunk)
	}
	if data {
		b.WriteString("data:\n")
		for _, v := range [][2]string{{"lwp", "120"}, {"re", "14"}} {
			vals := strings.TrimSuffix(strings.Repeat(v[1]+", ", n*n), ", ")
			fmt.Fprintf(&b, "  %s = %s ;\n", v[0], vals)
		}
	}
	b.WriteString("}\n")
	cdl := filepath.Join(dir, fmt.Sprintf("c%d_%d.cdl", n, chunk))
	os.WriteFile(cdl, []byte(b.String()), 0o644)
	out := strings.TrimSuffix(cdl, ".cdl") + ".nc"
	if o, err := exec.Command(ncgen, "-k", "nc4", "-o", out, cdl).CombinedOutput(); err != nil {
		t.Fatalf("ncgen: %v\n%s", err, o)
	}
	return out
}

func TestProcessMemoryBound(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	dir := t.TempDir()
	// One chunk of 6000² per variable (137 MB each, decompressed): no slab size
	// helps; refused before any data is read, with the estimate and the fix.
	big := chunkedInput(t, dir, 6000, 6000, false)
	code, _, stderr := runProc(t, "process", big, "-o", filepath.Join(dir, "big_out.nc"), "--no-collector")
	if code != ExitFailure || !strings.Contains(stderr, "--memory-mb 256") || !strings.Contains(stderr, "nccopy -c 'lat/512,lon/512'") || !strings.Contains(stderr, "one chunk of") {
		t.Fatalf("6000² chunk: exit %d: %s", code, stderr)
	}
	if fileExists(filepath.Join(dir, "big_out.nc")) || len(tmpFiles(t, dir)) != 0 {
		t.Error("a refused input left files")
	}
	// 1×1 chunks: 10000 chunks per variable, about 2 KB of bookkeeping each in
	// the cache; under --memory-mb 64 the file is read in smaller slabs (the
	// output chunks, one slab each, show it) and the values are the same.
	small := chunkedInput(t, dir, 100, 1, true)
	ref := chunkedInput(t, dir, 100, 100, true)
	in, err := grid.Open(small, grid.OpenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defs, err := selectOutputs("all", microphys.DefaultParams())
	if err != nil {
		t.Fatal(err)
	}
	est := in.EstimateMemory(gridVars(defs, "", false), 0)
	in.Close()
	if est.Chunks != 20000 || est.Total() <= 64<<20 {
		t.Fatalf("estimate of 1×1 chunks: %v", est)
	}
	outA, outB := filepath.Join(dir, "a.nc"), filepath.Join(dir, "b.nc")
	if code, _, stderr := runProc(t, "process", small, "-o", outA, "--no-collector", "--memory-mb", "64"); code != 0 {
		t.Fatalf("1×1 chunks, --memory-mb 64: exit %d: %s", code, stderr)
	}
	if code, _, stderr := runProc(t, "process", ref, "-o", outB, "--no-collector"); code != 0 {
		t.Fatalf("reference: exit %d: %s", code, stderr)
	}
	info, err := grid.Describe(outA)
	if err != nil {
		t.Fatal(err)
	}
	if v := info.Var("autoconversion_efficiency"); v == nil || v.Chunks == nil || v.Chunks[0]*v.Chunks[1] >= 10000 {
		t.Errorf("output chunks %v: the slabs were not made smaller", v)
	}
	a, b := outputGrids(t, outA), outputGrids(t, outB)
	for name, va := range a {
		vb := b[name]
		for i := range va {
			if va[i] != vb[i] && !(va[i] != va[i] && vb[i] != vb[i]) {
				t.Fatalf("%s[%d]: %v with small slabs, %v in one", name, i, va[i], vb[i])
			}
		}
	}
}
