package microphys

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/integrate/quad"
)

// TestRampTail checks the closed form of T_s(w) = ∫_w^∞ Q(nu + s, nu v^6) dv against direct
// quadrature of the integral (derived: integration by parts, checked independently) and its
// value at 0.
func TestRampTail(t *testing.T) {
	t.Parallel()
	for _, c := range []struct{ nu, s, w float64 }{
		{1, 0, 0.5}, {4, 0, 0.9}, {4, 1.75, 1.1}, {10, 1.75, 0.8}, {100, 0, 1.05}, {2.5, 1.75, 1.4}, {1, 1.75, 2},
	} {
		q := quad.Fixed(func(v float64) float64 {
			x := v * v * v
			return gammaQ(c.nu+c.s, c.nu*x*x)
		}, c.w, c.w+40/math.Pow(c.nu, 1.0/6)+5, 2000, nil, 0)
		if got := rampTail(c.nu, c.s, c.w); !scalar.EqualWithinAbsOrRel(got, q, 1e-13, 1e-8) {
			t.Errorf("T(%g, %g, %g) = %.12g, quadrature %.12g", c.nu, c.s, c.w, got, q)
		}
		if got, want := rampTail(c.nu, c.s, 0), rampTail0(c.nu, c.s); !scalar.EqualWithinRel(got, want, 1e-12) {
			t.Errorf("T(0) = %.15g, T0 %.15g", got, want)
		}
		// U_s(w) = ∫_0^w P(a, nu v^6) dv, by quadrature on pieces (derived)
		var u float64
		for j := 0; j < 200; j++ {
			lo, hi := c.w*float64(j)/200, c.w*float64(j+1)/200
			u += quad.Fixed(func(v float64) float64 {
				x := v * v * v
				return 1 - gammaQ(c.nu+c.s, c.nu*x*x)
			}, lo, hi, 20, nil, 0)
		}
		if got := rampU(c.nu, c.s, c.w); !scalar.EqualWithinAbsOrRel(got, u, 1e-15, 1e-8) {
			t.Errorf("U(%g, %g, %g) = %.12g, quadrature %.12g", c.nu, c.s, c.w, got, u)
		}
	}
}

// gammaQ is the regularized upper incomplete gamma function (the test's name for it).
func gammaQ(a, x float64) float64 { return DrizzleProbability(1, x/a, a) }

// TestRampTableBound checks the ramp table (rampTable.moments) against the closed form
// (subgridMoment) over its whole domain: nu in [1, 1e4] (log-uniform), top radius from
// r_1/r_μ = rampWMin (r_μ = 40 µm for the default onset) down to 3 µm, onsets of the default
// (12-16 µm) and of a narrow and a wide range, and the rate exponents of fastParams. POP
// within rampTabTol absolute, and POP and M(b) within rampTabTol relative wherever POP >=
// 1e-12 (derived: the same integrals; the bound is measured here).
func TestRampTableBound(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	t.Parallel()
	rng := rand.New(rand.NewPCG(21, 22))
	for _, c := range []struct {
		o Onset
		b float64
	}{{Onset{14e-6, 4e-6}, 1.75}, {Onset{13e-6, 1e-6}, 1.75}, {Onset{14e-6, 8e-6}, 1.5}, {Onset{14e-6, 4e-6}, 0}} {
		tab := newRampTable(c.b)
		r1 := c.o.Radius - c.o.Width/2
		var worstP, worstR float64
		n := 0
		for i := 0; i < 60000; i++ {
			nu := math.Exp(rng.Float64() * math.Log(popNuMax))
			rmu := 3e-6 + (r1/rampWMin-3e-6)*rng.Float64()
			if i%4 == 0 { // near the onset range, where the ramp's kinks are
				rmu = r1 + 1.6*c.o.Width*(rng.Float64()-0.3)
			}
			c0, cb := newRampShape(nu, 0), newRampShape(nu, c.b)
			pop, mbe, ok := tab.moments(c.o, nu, math.Log(nu), rmu, &c0, &cb, &quadTap{})
			if !ok {
				continue
			}
			n++
			wp := subgridMoment(nu, rmu, c.o, 0)
			wr := subgridMoment(nu, rmu, c.o, c.b) / SubgridEnhancement(nu, c.b)
			if !scalar.EqualWithinAbs(pop, wp, rampTabTol) {
				t.Fatalf("onset %+v b %g: nu %g r_mu %g: POP %.8g, closed form %.8g", c.o, c.b, nu, rmu, pop, wp)
			}
			if wp >= 1e-12 {
				ep, er := math.Abs(pop-wp)/wp, math.Abs(mbe-wr)/wr
				worstP, worstR = max(worstP, ep), max(worstR, er)
				if ep > rampTabTol || er > rampTabTol {
					t.Fatalf("onset %+v b %g: nu %g r_mu %g: POP %.8g M %.8g, closed form %.8g %.8g", c.o, c.b, nu, rmu, pop, mbe, wp, wr)
				}
			}
		}
		t.Logf("onset %+v b %g: %d columns, largest relative error POP %.3g, M(b) %.3g", c.o, c.b, n, worstP, worstR)
	}
}

// TestRampNuTable checks the per-shape factors' table against the functions it replaces
// (SubgridEnhancement, rampTail0, the cube root) over its whole domain, ln nu in
// [0, ln 1e4], within rampNuTol relative (derived: the same functions; bound measured here).
func TestRampNuTable(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(31, 32))
	for _, b := range []float64{1.75, 1.5, 0, 3} {
		tab := newRampNuTable(b)
		worst := 0.0
		for i := 0; i < 200000; i++ {
			lnNu := rng.Float64() * math.Log(popNuMax)
			if i == 0 {
				lnNu = math.Log(popNuMax)
			}
			nu := math.Exp(lnNu)
			e, t00, t0b, kc, ok := tab.at(lnNu)
			if !ok {
				t.Fatalf("ln nu %g outside the table", lnNu)
			}
			for _, c := range [][2]float64{{e, SubgridEnhancement(nu, b)}, {t00, rampTail0(nu, 0)}, {t0b, rampTail0(nu, b)}, {kc, math.Cbrt(nu / (nu + b))}} {
				d := math.Abs(c[0]-c[1]) / c[1]
				worst = max(worst, d)
				if d > rampNuTol {
					t.Fatalf("b %g nu %g: %.15g, want %.15g", b, nu, c[0], c[1])
				}
			}
		}
		t.Logf("b %g: largest relative error %.3g", b, worst)
		for _, x := range []float64{-1e-9, math.Log(popNuMax) + 0.1, math.NaN()} {
			if _, _, _, _, ok := tab.at(x); ok {
				t.Errorf("ln nu %g accepted", x)
			}
		}
	}
}

// TestRampNuTap checks that the four ramp tables share their ln nu axis (so one stencil,
// rampTable.nuTap, serves a column's four tails) and that popAt2Tap with that stencil equals
// popAt2 over the tables and 10 % beyond each end, and popAt2Tap2 popAt2Tap twice, bit for
// bit (derived: the same arithmetic).
func TestRampNuTap(t *testing.T) {
	t.Parallel()
	tab := newRampTable(1.75)
	grids := []*nGrid{tab.lo[0], tab.lo[1], tab.hi[0], tab.hi[1]}
	for _, g := range grids {
		h := grids[2]
		if g.lo[0] != h.lo[0] || g.inv[0] != h.inv[0] || g.n[0] != h.n[0] {
			t.Fatalf("ln nu axes differ: %g %g %d, %g %g %d", g.lo[0], g.inv[0], g.n[0], h.lo[0], h.inv[0], h.n[0])
		}
	}
	rng := rand.New(rand.NewPCG(51, 52))
	inside := 0
	for i := 0; i < 40000; i++ {
		g := grids[i%4]
		span := func(d int) float64 {
			w := float64(g.n[d]-1) * g.step[d]
			return g.lo[d] + w*(1.2*rng.Float64()-0.1)
		}
		x0, x1 := span(0), span(1)
		a := tab.nuTap(x0)
		got, want := popAt2Tap(g, &a, x1), popAt2(g, x0, x1)
		if got != want && !(math.IsNaN(got) && math.IsNaN(want)) {
			t.Fatalf("grid %d at (%g, %g): %.17g, popAt2 %.17g", i%4, x0, x1, got, want)
		}
		if ref := g.at(&[nDims]float64{x0, x1}); !math.IsNaN(want) && want != ref {
			t.Fatalf("grid %d at (%g, %g): popAt2 %.17g, nGrid.at %.17g", i%4, x0, x1, want, ref)
		}
		if !math.IsNaN(want) {
			inside++
		}
		y1 := span(1)
		if i%8 < 4 { // mostly both inside
			y1 = x1 + 0.1*(rng.Float64()-0.5)
		}
		gx, gy := popAt2Tap2(g, &a, x1, y1)
		same := func(u, v float64) bool {
			return math.Float64bits(u) == math.Float64bits(v) || math.IsNaN(u) && math.IsNaN(v)
		}
		if wy := popAt2Tap(g, &a, y1); !same(gx, got) || !same(gy, wy) {
			t.Fatalf("grid %d at (%g, %g, %g): popAt2Tap2 %.17g %.17g, popAt2Tap %.17g %.17g", i%4, x0, x1, y1, gx, gy, got, wy)
		}
	}
	if inside < 20000 {
		t.Errorf("only %d of 40000 points inside the tables", inside)
	}
	m := defaultModel(t)
	if w := m.ramp.nuTap(m.bulk.popLnNu); m.bulk.rampNu != w {
		t.Errorf("the Model's stencil of Params.GammaShape %+v, want %+v", m.bulk.rampNu, w)
	}
}
