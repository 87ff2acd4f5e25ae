package microphys

import (
	"math"
	"testing"
)

// Closed-form test problem of doc/science.md#collector-drop: E = 1, M = 1 g m-3, rho_w = 1000.
const (
	bowenE  = 1.0
	bowenM  = 1e-3
	bowenK1 = 1.19e8 // m-1 s-1, Rogers & Yau (1989) eq. 8.5
	bowenK3 = 8e3    // s-1, Rogers & Yau (1989) eq. 8.6
	bowenK2 = 201.0  // m^1/2 s-1, Rogers & Yau (1989) eq. 8.8 (rho_a = rho_0)
	// closedRel is the required agreement with the closed forms (doc/science.md#collector-drop).
	closedRel = 1e-6
)

var (
	lawK1 = func(R float64) float64 { return bowenK1 * R * R }
	lawK3 = func(R float64) float64 { return bowenK3 * R }
	lawK2 = func(R float64) float64 { return bowenK2 * math.Sqrt(R) }
)

func TestCollectConstantTimeLaws(t *testing.T) {
	t.Parallel()
	const R0 = 20e-6
	c := 4 * WaterDensity / (bowenE * bowenM)
	for _, tt := range []float64{300, 600, 1200} {
		// V = k1 R^2: R(t) = R0/(1 - E M k1 R0 t/(4 rho_w)) (doc/science.md#collector-drop, derived).
		p := CollectConstant(ConstantCollector{R0: R0, LWC: bowenM, Efficiency: bowenE, Fall: lawK1, StopTime: tt})
		check(t, "k1 R(t)", p.R, R0/(1-bowenK1*R0*tt/c), 0, closedRel, "doc/science.md#collector-drop closed form (derived)")
		check(t, "k1 t", p.Time, tt, 0, 1e-12, "stop time")
		// V = k3 R: R(t) = R0 exp(E M k3 t/(4 rho_w)) (derived).
		p = CollectConstant(ConstantCollector{R0: R0, LWC: bowenM, Efficiency: bowenE, Fall: lawK3, StopTime: tt})
		check(t, "k3 R(t)", p.R, R0*math.Exp(bowenK3*tt/c), 0, closedRel, "doc/science.md#collector-drop closed form (derived)")
		// V = k2 R^1/2: R^1/2 = R0^1/2 + E M k2 t/(8 rho_w) (derived).
		p = CollectConstant(ConstantCollector{R0: R0, LWC: bowenM, Efficiency: bowenE, Fall: lawK2, StopTime: tt})
		sq := math.Sqrt(R0) + bowenE*bowenM*bowenK2*tt/(8*WaterDensity)
		check(t, "k2 R(t)", p.R, sq*sq, 0, closedRel, "doc/science.md#collector-drop closed form (derived)")
	}
	// Printed check values of doc/science.md#collector-drop (derived, 4 significant figures).
	for _, c := range []struct{ t, r float64 }{{300, 24.35e-6}, {600, 31.10e-6}, {1200, 69.93e-6}} {
		p := CollectConstant(ConstantCollector{R0: R0, LWC: bowenM, Efficiency: bowenE, Fall: lawK1, StopTime: c.t})
		check(t, "k1 R(t) table", p.R, c.r, 0, 5e-4, "doc/science.md#collector-drop table (derived)")
	}
	check(t, "t*", 4*WaterDensity/(bowenE*bowenM*bowenK1*R0), 1680.7, 0, 1e-4, "doc/science.md#collector-drop: blow-up time (derived)")
}

func TestCollectConstantDistance(t *testing.T) {
	t.Parallel()
	// U = 0: fall distance to grow R0 -> R is 4 rho_w (R - R0)/(E M), whatever V (doc/science.md#collector-drop,
	// derived); 320.0 m for 20 -> 100 µm.
	for name, law := range map[string]func(float64) float64{"k1": lawK1, "k3": lawK3, "k2": lawK2} {
		p := CollectConstant(ConstantCollector{R0: 20e-6, LWC: bowenM, Efficiency: bowenE, Fall: law, StopRadius: 100e-6})
		check(t, name+" U=0 distance", -p.Z, 320.0, 0, closedRel, "doc/science.md#collector-drop (derived)")
		check(t, name+" U=0 radius", p.R, 100e-6, 0, 1e-12, "stop radius")
	}
	// With an updraft U, z(R) - z0 = (4 rho_w/(E M)) [(U/k1)(1/R0 - 1/R) - (R - R0)] (k1) and
	// (4 rho_w/(E M)) [(U/k3) ln(R/R0) - (R - R0)] (k3) (doc/science.md#collector-drop, derived).
	const U, R0, R1 = 0.5, 20e-6, 60e-6
	c := 4 * WaterDensity / (bowenE * bowenM)
	p := CollectConstant(ConstantCollector{R0: R0, Updraft: U, LWC: bowenM, Efficiency: bowenE, Fall: lawK1, StopRadius: R1})
	check(t, "k1 z(R)", p.Z, c*((U/bowenK1)*(1/R0-1/R1)-(R1-R0)), 0, closedRel, "doc/science.md#collector-drop (derived)")
	p = CollectConstant(ConstantCollector{R0: R0, Updraft: U, LWC: bowenM, Efficiency: bowenE, Fall: lawK3, StopRadius: R1})
	check(t, "k3 z(R)", p.Z, c*((U/bowenK3)*math.Log(R1/R0)-(R1-R0)), 0, closedRel, "doc/science.md#collector-drop (derived)")
}

func TestCollectConstantBowenReturn(t *testing.T) {
	t.Parallel()
	// Bowen's result: with V = k1 R^2 the drop returns to its start level with R_f = U/(k1 R0)
	// (Bowen 1950; doc/science.md#collector-drop, derived).
	for _, c := range []struct{ U, R0 float64 }{{0.5, 20e-6}, {1, 20e-6}, {2, 30e-6}} {
		p := CollectConstant(ConstantCollector{R0: c.R0, Updraft: c.U, LWC: bowenM, Efficiency: bowenE, Fall: lawK1, StopReturn: true})
		check(t, "Bowen R_f", p.R, c.U/(bowenK1*c.R0), 0, closedRel, "Bowen (1950), doc/science.md#collector-drop (derived)")
		check(t, "return level", p.Z, 0, 1e-9, 0, "event located on the start level")
	}
	// V = k3 R: the return radius solves (U/k3) ln(R/R0) = R - R0 (derived from doc/science.md#collector-drop).
	const U, R0 = 1.0, 20e-6
	f := func(R float64) float64 { return (U/bowenK3)*math.Log(R/R0) - (R - R0) }
	lo, hi := U/bowenK3, 10*U/bowenK3 // f > 0 at the top radius U/k3, < 0 far beyond
	for range 200 {
		m := (lo + hi) / 2
		if f(m) > 0 {
			lo = m
		} else {
			hi = m
		}
	}
	p := CollectConstant(ConstantCollector{R0: R0, Updraft: U, LWC: bowenM, Efficiency: bowenE, Fall: lawK3, StopReturn: true})
	check(t, "k3 return radius", p.R, (lo+hi)/2, 0, closedRel, "doc/science.md#collector-drop closed form, root by bisection (derived)")
}

func TestCollectConstantBadInput(t *testing.T) {
	t.Parallel()
	for _, c := range []ConstantCollector{
		{R0: 0, LWC: 1e-3, Efficiency: 1, Fall: lawK1, StopTime: 10},
		{R0: 20e-6, LWC: -1, Efficiency: 1, Fall: lawK1, StopTime: 10},
		{R0: 20e-6, LWC: 1e-3, Efficiency: math.NaN(), Fall: lawK1, StopTime: 10},
		{R0: 20e-6, LWC: 1e-3, Efficiency: 1, StopTime: 10},
		{R0: 20e-6, LWC: 1e-3, Efficiency: 1, Fall: lawK1},                // no stop: time limit
		{R0: 20e-6, LWC: 1e-3, Efficiency: 1, Fall: lawK1, StopTime: 1e4}, // blows up at 1681 s
	} {
		if p := CollectConstant(c); !math.IsNaN(p.R) || !math.IsNaN(p.Time) {
			t.Errorf("CollectConstant(%+v) = %+v, want NaN", c, p)
		}
	}
}

func testColumn() CloudColumn {
	return CloudColumn{H: 400, Gamma: 2e-6, Nd: 100e6, Air: NewAir(88000, 283.15)}
}

func TestCollectDirectNoWater(t *testing.T) {
	t.Parallel()
	// Without cloud water the collector keeps R0 and falls through H at V(R0): ExitTime =
	// H/V(R0) (derived).
	c := testColumn()
	c.Gamma = 0
	s := DefaultCollectorSetup()
	p := CollectDirect(c, s)
	v := c.Air.FallSpeed(2 * s.R0)
	check(t, "ExitRadius", p.ExitRadius, s.R0, 0, 1e-12, "no collection (derived)")
	check(t, "ExitTime", p.ExitTime, c.H/v, 0, 1e-9, "H/V(R0) (derived)")
	if !p.ExitBase || p.TopHeight != c.H || !math.IsNaN(p.DrizzleTime) {
		t.Errorf("path %+v: want ExitBase, TopHeight = H, DrizzleTime NaN", p)
	}
}

func TestCollectDirectMonotoneLWC(t *testing.T) {
	t.Parallel()
	// Growth is monotone in LWC (doc/science.md#collector-drop): more water, larger exit radius.
	for _, w := range []float64{0, 0.3, 1} {
		s := DefaultCollectorSetup()
		s.Updraft, s.R0 = w, 20e-6 // the 20 µm collector these updrafts were chosen for
		prev := 0.0
		for _, g := range []float64{0.5e-6, 1e-6, 1.5e-6, 2e-6, 2.5e-6, 3e-6} {
			c := testColumn()
			c.Gamma = g
			p := CollectDirect(c, s)
			if !(p.ExitRadius > prev) {
				t.Errorf("w = %g, Gamma = %g: ExitRadius %g not above %g", w, g, p.ExitRadius, prev)
			}
			prev = p.ExitRadius
		}
	}
}

func TestCollectDirectPaths(t *testing.T) {
	t.Parallel()
	// A thick cloud grows the 20 µm collector past drizzle size on the way down.
	c := CloudColumn{H: 800, Gamma: 2.2e-6, Nd: 50e6, Air: NewAir(85000, 282)}
	s := DefaultCollectorSetup()
	s.R0 = 20e-6
	p := CollectDirect(c, s)
	if !p.ExitBase || !(p.ExitRadius > s.DrizzleRadius) || !(p.DrizzleTime > 0 && p.DrizzleTime < p.ExitTime) || p.TopHeight != c.H {
		t.Errorf("thick cloud, release at top: %+v", p)
	}
	// Updraft: enters at base, rises, turns at V(R) = w and falls out through the base with
	// TopHeight below H; or is carried out through the top in a strong updraft.
	s.Updraft = 0.2
	p = CollectDirect(c, s)
	if !p.ExitBase || !(p.TopHeight > 0 && p.TopHeight < c.H) || !(p.ExitRadius > s.DrizzleRadius) ||
		!(p.DrizzleTime > 0 && p.DrizzleTime < p.ExitTime) {
		t.Errorf("updraft 0.2 m/s: %+v", p)
	}
	// At the turning point V(R) = w, so the collector had grown to V(R) = w there: the exit
	// radius exceeds the radius whose Beard speed is w (derived).
	if v := c.Air.FallSpeed(2 * p.ExitRadius); !(v > s.Updraft) {
		t.Errorf("updraft 0.2 m/s: V(exit radius) = %g not above w", v)
	}
	// A strong updraft carries it out through the top.
	s.Updraft = 3
	p = CollectDirect(c, s)
	if p.ExitBase || p.TopHeight != c.H || !(p.ExitRadius > s.R0) || !(p.ExitTime > c.H/s.Updraft) {
		t.Errorf("updraft 3 m/s: %+v", p)
	}
	// Released in an updraft weaker than V(R0): it falls out at once.
	s.Updraft = 0.01
	p = CollectDirect(c, s)
	if !p.ExitBase || p.ExitTime != 0 || p.ExitRadius != s.R0 || p.TopHeight != 0 {
		t.Errorf("weak updraft: %+v", p)
	}
	// Every collision and coalescence choice runs.
	for _, k := range []CollisionKind{CollisionHall, CollisionLong} {
		for _, e := range []CoalescenceKind{CoalescenceBlend, CoalescenceBeardOchs, CoalescenceLowList, CoalescenceUnity} {
			s := DefaultCollectorSetup()
			s.Collision, s.Coalescence = k, e
			if p := CollectDirect(c, s); !(p.ExitRadius >= s.R0) || !(p.ExitTime > 0) {
				t.Errorf("%v/%v: %+v", k, e, p)
			}
		}
	}
}

// rk4Direct integrates the CollectDirect system with classical fixed-step RK4 in height
// steps until z <= 0 (release at top, w = 0): an independent integrator for the check.
func rk4Direct(c CloudColumn, s CollectorSetup, n int) (R, tExit float64) {
	sys := collectorSys{air: c.Air, gamma: c.Gamma, h: c.H, w: s.Updraft,
		rnorm: 1 / (4.0 / 3 * math.Pi * c.Air.RhoW * c.Nd), coll: s.Collision, coal: s.Coalescence}
	// independent variable z (dz/dt < 0): dR/dz = f_R/f_z, dt/dz = 1/f_z
	g := func(z, R float64) (float64, float64) {
		f := sys.deriv([2]float64{R, z})
		return f[0] / f[1], 1 / f[1]
	}
	h := -c.H / float64(n)
	z, R, tt := c.H, s.R0, 0.0
	for range n {
		k1r, k1t := g(z, R)
		k2r, k2t := g(z+h/2, R+h/2*k1r)
		k3r, k3t := g(z+h/2, R+h/2*k2r)
		k4r, k4t := g(z+h, R+h*k3r)
		R += h / 6 * (k1r + 2*k2r + 2*k3r + k4r)
		tt += h / 6 * (k1t + 2*k2t + 2*k3t + k4t)
		z += h
	}
	return R, tt
}

func TestCollectDirectAgainstRK4(t *testing.T) {
	t.Parallel()
	c := CloudColumn{H: 600, Gamma: 2e-6, Nd: 80e6, Air: NewAir(87000, 284)}
	s := DefaultCollectorSetup()
	R, tt := rk4Direct(c, s, 20000) // converged to 1e-9 (5000 and 80000 steps agree)
	// RelTol bounds the error per step. The bilinear Hall table makes the right-hand side only
	// piecewise smooth (kinks the error estimate cannot see), so at the default 1e-6 the
	// global error is up to about 1e-3 over the cases we tried (1e-4 here); at 1e-10 it is
	// below 1e-7.
	for _, c2 := range []struct{ tol, rel float64 }{{1e-6, 2e-3}, {1e-10, 1e-7}} {
		s.RelTol = c2.tol
		p := CollectDirect(c, s)
		check(t, "ExitRadius vs RK4", p.ExitRadius, R, 0, c2.rel, "fixed-step RK4 in height, 20000 steps (derived)")
		check(t, "ExitTime vs RK4", p.ExitTime, tt, 0, c2.rel, "fixed-step RK4 in height, 20000 steps (derived)")
	}
}

func TestCollectDirectBadInput(t *testing.T) {
	t.Parallel()
	good := testColumn()
	nan := math.NaN()
	cols := []CloudColumn{
		{H: 0, Gamma: 2e-6, Nd: 1e8, Air: good.Air},
		{H: nan, Gamma: 2e-6, Nd: 1e8, Air: good.Air},
		{H: 400, Gamma: -1, Nd: 1e8, Air: good.Air},
		{H: 400, Gamma: 2e-6, Nd: 0, Air: good.Air},
		{H: 400, Gamma: 2e-6, Nd: 1e8, Air: NewAir(nan, 280)},
		{H: 400, Gamma: math.Inf(1), Nd: 1e8, Air: good.Air},
	}
	for _, c := range cols {
		p := CollectDirect(c, DefaultCollectorSetup())
		if !math.IsNaN(p.ExitRadius) || !math.IsNaN(p.ExitTime) || !math.IsNaN(p.TopHeight) || p.ExitBase {
			t.Errorf("CollectDirect(%+v) = %+v, want NaN", c, p)
		}
	}
	for _, mod := range []func(*CollectorSetup){
		func(s *CollectorSetup) { s.R0 = 0 },
		func(s *CollectorSetup) { s.R0 = nan },
		func(s *CollectorSetup) { s.Updraft = nan },
		func(s *CollectorSetup) { s.Updraft = 100 },
		func(s *CollectorSetup) { s.RelTol = 0 },
		func(s *CollectorSetup) { s.DrizzleRadius = -1 },
		func(s *CollectorSetup) { s.Collision = 5 },
		func(s *CollectorSetup) { s.Coalescence = -1 },
	} {
		s := DefaultCollectorSetup()
		mod(&s)
		if p := CollectDirect(good, s); !math.IsNaN(p.ExitRadius) || !math.IsNaN(p.ExitTime) {
			t.Errorf("CollectDirect with setup %+v = %+v, want NaN", s, p)
		}
	}
}

func TestCollectDirectTimeGuard(t *testing.T) {
	t.Parallel()
	// A collector hovering in an updraft barely above its fall speed, in a cloud without
	// water, would take about 4e11 s to cross the cloud: the CollectorMaxTime guard gives NaN.
	c := testColumn()
	c.Gamma = 0
	s := DefaultCollectorSetup()
	s.Updraft = c.Air.FallSpeed(2*s.R0) * (1 + 1e-9)
	p := CollectDirect(c, s)
	if !math.IsNaN(p.ExitRadius) || !math.IsNaN(p.ExitTime) || p.ExitBase {
		t.Errorf("hovering collector: %+v, want NaN (time guard)", p)
	}
}

func TestDefaultCollectorSetup(t *testing.T) {
	t.Parallel()
	s := DefaultCollectorSetup()
	// R0 = 25 µm, the drizzle-embryo radius of Khairoutdinov & Kogan (2000) (from the
	// paper's description of the scheme); drizzle radius 100 µm: CF standard-name
	// table v83, mass_concentration_of_drizzle_in_air, drizzle diameter 0.2-0.5 mm.
	if s.R0 != 25e-6 || s.DrizzleRadius != 100e-6 || s.Updraft != 0 || s.RelTol != 1e-6 ||
		s.Collision != CollisionHall || s.Coalescence != CoalescenceBlend {
		t.Errorf("DefaultCollectorSetup() = %+v", s)
	}
}

func BenchmarkCollectDirect(b *testing.B) {
	c := CloudColumn{H: 400, Gamma: 2e-6, Nd: 100e6, Air: NewAir(88000, 283.15)}
	s := DefaultCollectorSetup()
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		c.H = 200 + float64(i&7)*50
		sink += CollectDirect(c, s).ExitRadius
	}
}

func BenchmarkCollectDirectUpdraft(b *testing.B) {
	c := CloudColumn{H: 400, Gamma: 2e-6, Nd: 100e6, Air: NewAir(88000, 283.15)}
	s := DefaultCollectorSetup()
	s.Updraft = 0.5
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		c.H = 200 + float64(i&7)*50
		sink += CollectDirect(c, s).ExitRadius
	}
}

func FuzzCollectDirect(f *testing.F) {
	f.Add(400.0, 2e-6, 100e6, 20e-6, 0.0)
	f.Add(800.0, 2.2e-6, 50e6, 20e-6, 0.5)
	f.Add(800.0, 2.2e-6, 50e6, 20e-6, 3.0)
	f.Add(0.0, 0.0, 0.0, 0.0, 0.0)
	f.Add(-1.0, math.Inf(1), -1.0, 1.0, -100.0)
	f.Fuzz(func(t *testing.T, H, gamma, nd, r0, w float64) {
		c := CloudColumn{H: H, Gamma: gamma, Nd: nd, Air: NewAir(88000, 283.15)}
		s := DefaultCollectorSetup()
		s.R0, s.Updraft = r0, w
		p := CollectDirect(c, s)
		for _, v := range []float64{p.ExitRadius, p.ExitTime, p.TopHeight} {
			if !math.IsNaN(v) && !(v >= 0 && v < math.Inf(1)) {
				t.Fatalf("CollectDirect(%+v, %+v) = %+v: not NaN or finite >= 0", c, s, p)
			}
		}
		if !math.IsNaN(p.ExitRadius) && p.ExitRadius < s.R0 {
			t.Fatalf("collector shrank: %+v", p)
		}
	})
}
