package summary

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestMergeStateEqualsSinglePass: the joint statistics of two partial accumulators
// merged agree with one pass over all columns (to rounding, see MergeState).
func TestMergeStateEqualsSinglePass(t *testing.T) {
	s, c := synthScene(2, 100, 100)
	one, _ := New(Options{})
	if err := one.Add(s, c); err != nil {
		t.Fatal(err)
	}
	// the same columns as two halves (time steps 0 and 1)
	half := func(k int) (Scene, *Columns) {
		n := s.Cells()
		cut := func(f Field) Field {
			if len(f.Data) == 0 {
				return f
			}
			f.Data = f.Data[k*n : (k+1)*n]
			return f
		}
		h := s
		h.NT = 1
		if s.Time != nil {
			h.Time = s.Time[k : k+1]
		}
		hc := &Columns{LWP: cut(c.LWP), Nd: cut(c.Nd), POP: cut(c.POP), Rate: cut(c.Rate), SurfaceRate: cut(c.SurfaceRate), BaseHeight: cut(c.BaseHeight)}
		if c.QC != nil {
			hc.QC = c.QC[k*n : (k+1)*n]
		}
		return h, hc
	}
	a, _ := New(Options{})
	b, _ := New(Options{})
	s0, c0 := half(0)
	s1, c1 := half(1)
	if err := a.Add(s0, c0); err != nil {
		t.Fatal(err)
	}
	if err := b.Add(s1, c1); err != nil {
		t.Fatal(err)
	}
	if err := a.MergeState(b.State()); err != nil {
		t.Fatal(err)
	}
	r1, r2 := one.Result(), a.Result()
	if r1.Counts != r2.Counts {
		t.Fatalf("counts %+v, single pass %+v", r2.Counts, r1.Counts)
	}
	near := func(x, y float64) bool {
		return (math.IsNaN(x) && math.IsNaN(y)) || math.Abs(x-y) <= 1e-13*math.Max(math.Abs(x), math.Abs(y))
	}
	for i := range r1.Joint.Count {
		if r1.Joint.Count[i] != r2.Joint.Count[i] || !near(r1.Joint.MeanPOP[i], r2.Joint.MeanPOP[i]) || !near(r1.Joint.SEPOP[i], r2.Joint.SEPOP[i]) ||
			!near(r1.Joint.MeanRate[i], r2.Joint.MeanRate[i]) || !near(r1.Joint.MeanCond[i], r2.Joint.MeanCond[i]) {
			t.Fatalf("bin %d differs after merging", i)
		}
	}
	finite := 0
	for i := range r1.SPOP {
		if !math.IsNaN(r1.SPOP[i].S) {
			finite++
		}
		if !near(r1.SPOP[i].S, r2.SPOP[i].S) || !near(r1.SRate[i].S, r2.SRate[i].S) {
			t.Errorf("LWP bin %d: S_POP %v S_R %v, single pass %v %v", i, r2.SPOP[i].S, r2.SRate[i].S, r1.SPOP[i].S, r1.SRate[i].S)
		}
	}
	if finite < 3 {
		t.Errorf("only %d finite susceptibilities: the test checks too little", finite)
	}
	if !near(r1.Surface.Value, r2.Surface.Value) {
		t.Errorf("surface fraction %v, single pass %v", r2.Surface.Value, r1.Surface.Value)
	}
	boot, _ := New(Options{Bootstrap: 5})
	if boot.MergeState(b.State()) == nil {
		t.Error("bootstrap state merged")
	}
}

// synthScene is nt steps of an ny x nx grid of columns drawn from the invented law of
// the known-answer tests (lawPOP, lawI), with surface rates and base heights.
func synthScene(nt, ny, nx int) (Scene, *Columns) {
	r := rand.New(rand.NewPCG(5, 6))
	s := Scene{NY: ny, NX: nx, NT: nt, Lat: make([]float64, ny), Lon: make([]float64, nx)}
	for i := range s.Lat {
		s.Lat[i] = -30 + float64(i)*0.1
	}
	for i := range s.Lon {
		s.Lon[i] = 250 + float64(i)*0.1
	}
	n := nt * ny * nx
	mk := func(name string) Field { return Field{Name: name, Data: make([]float64, n)} }
	c := &Columns{LWP: mk("lwp"), Nd: mk("nd"), POP: mk("pop"), Rate: mk("rate"), SurfaceRate: mk("sfc"), BaseHeight: mk("base")}
	for k := 0; k < n; k++ {
		lwp, nd := logUniform(r, 0.020, 0.500), logUniform(r, 10e6, 1000e6)
		c.LWP.Data[k], c.Nd.Data[k] = lwp, nd
		p := math.Min(1, lawPOP(lwp, nd))
		c.POP.Data[k], c.Rate.Data[k] = p, p*lawI(lwp, nd)
		c.SurfaceRate.Data[k] = c.Rate.Data[k] * r.Float64()
		c.BaseHeight.Data[k] = 1500 * r.Float64()
	}
	return s, c
}
