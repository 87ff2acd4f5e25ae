package app

import (
	"math"
	"sync/atomic"
	"testing"

	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/microphys"
)

// BenchmarkKernel runs the per-slab compute kernel of process on 20000 in-memory columns of
// the sample's roles (table method), without I/O.
func BenchmarkKernel(b *testing.B) {
	gin, err := grid.Open(sampleFile, grid.OpenOptions{})
	if err != nil {
		b.Fatal(err)
	}
	defer gin.Close()
	p := microphys.DefaultParams()
	m, err := microphys.NewModel(p)
	if err != nil {
		b.Fatal(err)
	}
	defs, _ := selectOutputs("all", p)
	j := &processJob{params: p, defs: defs, model: m}
	const n = 20000
	s := &grid.Slab{N: n}
	for _, bd := range gin.Bindings() {
		s.In[bd.Role.Index()] = make([]float64, n)
	}
	for i := 0; i < n; i++ {
		f := float64(i) / n
		set := func(r grid.Role, v float64) {
			if x := s.In[r.Index()]; x != nil {
				x[i] = v
			}
		}
		set(grid.RoleLWP, 0.04+0.2*f)
		set(grid.RoleRe, (8+10*math.Sin(7*f)*math.Sin(7*f))*1e-6)
		set(grid.RoleTau, math.NaN())
		set(grid.RoleCTT, 280+5*f)
		set(grid.RoleCTP, 88000)
		set(grid.RoleCTH, 1200)
		set(grid.RoleCloudFraction, 0.9)
		set(grid.RoleLWPSD, 0.03)
	}
	outs := make([][]float64, len(defs)+1)
	for k := range outs {
		outs[k] = make([]float64, n)
	}
	var scr atomic.Int64
	var counts tally
	f := j.compute(&scr, gin, &counts, nil, nil, false)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		f(s, outs, 0, n)
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*n), "ns/column")
}
