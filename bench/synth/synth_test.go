package synth

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/warmrain/warmrain/grid"
)

// The benchmark inputs are read back through grid (libnetcdf): every role is found
// by its CF standard_name, the three variants decode to the same values (within the
// int16 packing step), the clear share is realistic and the bytes are reproducible.
func TestWriteVariantsReadBack(t *testing.T) {
	dir := t.TempDir()
	const n = 300
	stats := map[string][]grid.VarStats{}
	for _, v := range []string{"deflate", "packed", "plain"} {
		path := filepath.Join(dir, v+".nc")
		if err := Write(path, Config{N: n, Chunk: 100, Variant: v}); err != nil {
			t.Fatal(err)
		}
		in, err := grid.Open(path, grid.OpenOptions{})
		if err != nil {
			t.Fatalf("%s: %v", v, err)
		}
		for _, r := range []grid.Role{grid.RoleLWP, grid.RoleRe, grid.RoleCTT, grid.RoleCTP, grid.RoleLWPSD} {
			b, ok := in.Binding(r)
			if !ok {
				t.Errorf("%s: role %s not bound", v, r)
				continue
			}
			if r != grid.RoleLWPSD && b.Reason != "standard_name "+b.StandardName {
				t.Errorf("%s: role %s bound by %q, want its standard_name", v, r, b.Reason)
			}
		}
		if in.Layout.Columns != n*n {
			t.Errorf("%s: %d columns, want %d", v, in.Layout.Columns, n*n)
		}
		st, err := in.Stats()
		if err != nil {
			t.Fatal(err)
		}
		in.Close()
		stats[v] = st
	}
	// Packing steps of the int16 variant (scale factors in fields), in canonical units.
	tol := map[grid.Role]float64{grid.RoleLWP: 0.05e-3, grid.RoleLWPSD: 0.05e-3, grid.RoleRe: 0.005e-6,
		grid.RoleCTT: 0.005, grid.RoleCTP: 5}
	for i, s := range stats["deflate"] {
		for _, v := range []string{"packed", "plain"} {
			o := stats[v][i]
			if o.Role != s.Role || o.Missing != s.Missing {
				t.Errorf("%s %s: %d missing, deflate variant %d", v, s.Role, o.Missing, s.Missing)
			}
			tl := 1e-6 * math.Abs(s.Mean)
			if v == "packed" {
				tl = tol[s.Role]
			}
			if math.Abs(o.Mean-s.Mean) > tl || math.Abs(o.Min-s.Min) > tl || math.Abs(o.Max-s.Max) > tl {
				t.Errorf("%s %s: min/mean/max %g/%g/%g, deflate variant %g/%g/%g", v, s.Role, o.Min, o.Mean, o.Max, s.Min, s.Mean, s.Max)
			}
		}
		// Invented data: the clear share is meant to be 10-20 % (about 11 % on large grids).
		if f := float64(s.Missing) / float64(n*n); f < 0.05 || f > 0.25 {
			t.Errorf("%s: missing fraction %.3f, want 0.05-0.25", s.Role, f)
		}
	}
	// Realistic stratocumulus ranges (invented data, the ranges chosen in column()).
	ranges := map[grid.Role][2]float64{grid.RoleLWP: {20e-3, 400e-3}, grid.RoleRe: {5e-6, 20e-6},
		grid.RoleCTT: {280, 292}, grid.RoleCTP: {85000, 95000}, grid.RoleLWPSD: {5e-3, 200e-3}}
	for _, s := range stats["deflate"] {
		lo, hi := ranges[s.Role][0], ranges[s.Role][1]
		if s.Min < lo || s.Max > hi {
			t.Errorf("%s: range %g-%g outside %g-%g", s.Role, s.Min, s.Max, lo, hi)
		}
	}
	// Reproducible bytes.
	again := filepath.Join(dir, "again.nc")
	if err := Write(again, Config{N: n, Chunk: 100, Variant: "deflate"}); err != nil {
		t.Fatal(err)
	}
	a, _ := os.ReadFile(filepath.Join(dir, "deflate.nc"))
	b, _ := os.ReadFile(again)
	if !bytes.Equal(a, b) {
		t.Error("two writes of the same config differ")
	}
}

func TestWriteRejectsBadConfig(t *testing.T) {
	dir := t.TempDir()
	for _, c := range []Config{{N: 0, Variant: "deflate"}, {N: 10, Variant: "zstd"}, {N: 10, Variant: "deflate", Deflate: 10}} {
		path := filepath.Join(dir, "x.nc")
		if err := Write(path, c); err == nil {
			t.Errorf("Write(%+v) = nil, want an error", c)
		}
		if _, err := os.Stat(path); err == nil {
			t.Errorf("Write(%+v) left %s", c, path)
		}
	}
}
