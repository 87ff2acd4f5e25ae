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
// (subgridMoment) over its whole domain: nu in [1, 1e4] (log-uniform, and its two ends), top
// radius from r_1/r_μ = rampWMin (r_μ = 40 µm for the default onset) down to 3 µm, denser
// around the onset range where the ramp's kinks are, onsets of the default (12-16 µm), a
// narrow (1 µm) and a wide (8 µm) range, and rate exponents b over Params' range [0, 10]. POP
// within rampTabTol absolute, and POP and M(b) within rampTabTol relative wherever POP >=
// 1e-12 (derived: the same integrals; the bound is measured here). Both ways of forming the
// shape's constants are checked: from their table (columns with their own ν) and from the
// functions (Params.GammaShape).
func TestRampTableBound(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	t.Parallel()
	rng := rand.New(rand.NewPCG(21, 22))
	for _, c := range []struct {
		o Onset
		b float64
	}{{Onset{14e-6, 4e-6}, 1.75}, {Onset{13e-6, 1e-6}, 1.75}, {Onset{14e-6, 8e-6}, 1.5}, {Onset{14e-6, 4e-6}, 0},
		{Onset{14e-6, 4e-6}, 3}, {Onset{14e-6, 4e-6}, 10}, {Onset{13e-6, 1e-6}, 10}, {Onset{14e-6, 8e-6}, 0}} {
		tab := newRampTable(c.b)
		r1 := c.o.Radius - c.o.Width/2
		var worstP, worstR, worstA float64
		n := 0
		for i := 0; i < 60000; i++ {
			nu := math.Exp(rng.Float64() * math.Log(popNuMax))
			switch i % 97 {
			case 0:
				nu = popNuMin
			case 1:
				nu = popNuMax
			}
			rmu := 3e-6 + (r1/rampWMin-3e-6)*rng.Float64()
			if i%4 == 0 { // near the onset range, where the ramp's kinks are
				rmu = r1 + 1.6*c.o.Width*(rng.Float64()-0.3)
			}
			var sh rampShape
			var ok bool
			if i%2 == 0 {
				sh, ok = tab.shape(math.Sqrt(nu), math.Log(nu))
			} else {
				sh, ok = tab.shapeExact(nu)
			}
			if !ok {
				t.Fatalf("nu %g: no shape", nu)
			}
			ro := newRampOnset(c.o)
			pop, mb, ok := tab.moments(&ro, &sh, rmu)
			if !ok {
				continue
			}
			n++
			wp := subgridMoment(nu, rmu, c.o, 0)
			wr := subgridMoment(nu, rmu, c.o, c.b)
			worstA = max(worstA, math.Abs(pop-wp))
			if !scalar.EqualWithinAbs(pop, wp, rampTabTol) {
				t.Fatalf("onset %+v b %g: nu %g r_mu %g: POP %.8g, closed form %.8g", c.o, c.b, nu, rmu, pop, wp)
			}
			if wp >= 1e-12 {
				ep, er := math.Abs(pop-wp)/wp, math.Abs(mb-wr)/wr
				worstP, worstR = max(worstP, ep), max(worstR, er)
				if ep > rampTabTol || er > rampTabTol {
					t.Fatalf("onset %+v b %g: nu %g r_mu %g: POP %.8g M %.8g, closed form %.8g %.8g", c.o, c.b, nu, rmu, pop, mb, wp, wr)
				}
			}
		}
		t.Logf("onset %+v b %g: %d columns, largest error POP %.3g absolute, %.3g relative, M(b) %.3g relative", c.o, c.b, n, worstA, worstP, worstR)
	}
}

// TestRampNuTable checks the per-shape factors' table against the functions it replaces
// (SubgridEnhancement, rampTail0) over its whole domain, ln nu in [0, ln 1e4] and its ends,
// within rampNuTol relative (derived: the same functions; bound measured here), for rate
// exponents over Params' range [0, 10].
func TestRampNuTable(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(31, 32))
	for _, b := range []float64{1.75, 1.5, 0, 3, 10} {
		tab := newRampNuTable(b)
		worst := 0.0
		for i := 0; i < 200000; i++ {
			lnNu := rng.Float64() * math.Log(popNuMax)
			switch i {
			case 0:
				lnNu = math.Log(popNuMax)
			case 1:
				lnNu = 0
			}
			nu := math.Exp(lnNu)
			f, ok := tab.interp(lnNu)
			if !ok {
				t.Fatalf("ln nu %g outside the table", lnNu)
			}
			for _, c := range [][2]float64{{math.Exp(f[0]), SubgridEnhancement(nu, b)}, {f[1], rampTail0(nu, 0)},
				{f[2], rampTail0(nu, b)}} {
				d := math.Abs(c[0]-c[1]) / c[1]
				worst = max(worst, d)
				if d > rampNuTol {
					t.Fatalf("b %g nu %g: %.15g, want %.15g", b, nu, c[0], c[1])
				}
			}
		}
		t.Logf("b %g: largest relative error %.3g", b, worst)
		for _, x := range []float64{-1e-9, math.Log(popNuMax) + 0.1, math.NaN()} {
			if _, ok := tab.interp(x); ok {
				t.Errorf("ln nu %g accepted", x)
			}
		}
	}
}

// TestRampGridAt checks the paired lookup of the ramp tables (rampGrid.at) against
// Lagrange interpolation through the 3 x 3 nodes nearest (lnNu, z), written out here from
// the node coordinates (common practice), over the tables and beyond each end of z by half
// a step, and that shape and shapeExact refuse ν outside [1, 1e4] and NaN, and agree inside.
func TestRampGridAt(t *testing.T) {
	t.Parallel()
	if top := rampLnStep * (rampNl - 1); top < math.Log(popNuMax) || top-rampLnStep >= math.Log(popNuMax) {
		t.Fatalf("ln nu axis ends at %g, want the first node at or above ln %g", top, popNuMax)
	}
	tab := newRampTable(1.75)
	rng := rand.New(rand.NewPCG(51, 52))
	lag := func(x float64, xs [3]float64, j int) float64 { // Lagrange basis polynomial j
		l := 1.0
		for m := range xs {
			if m != j {
				l *= (x - xs[m]) / (xs[j] - xs[m])
			}
		}
		return l
	}
	for gi, g := range []*rampGrid{&tab.lo, &tab.hi} {
		zhi := g.zlo + float64(g.nz-1)*rampZStep
		for i := 0; i < 20000; i++ {
			lnNu := rng.Float64() * rampLnStep * (rampNl - 1)
			z := g.zlo - rampZStep/2 + (zhi-g.zlo+rampZStep)*rng.Float64()
			var c rampShape
			if !tab.nuTap(lnNu, &c) {
				t.Fatalf("ln nu %g refused", lnNu)
			}
			v0, vb := g.at(&c, z)
			ki := max(1, min(int(math.Round(lnNu/rampLnStep)), rampNl-2))
			kj := max(1, min(int(math.Round((z-g.zlo)/rampZStep)), g.nz-2))
			var xs, zs [3]float64
			for m := range 3 {
				xs[m] = float64(ki-1+m) * rampLnStep
				zs[m] = g.zlo + float64(kj-1+m)*rampZStep
			}
			var want [2]float64
			for a := range 3 {
				for bb := range 3 {
					o := 2 * ((ki-1+a)*g.nz + kj - 1 + bb)
					l := lag(lnNu, xs, a) * lag(z, zs, bb)
					want[0] += l * g.v[o]
					want[1] += l * g.v[o+1]
				}
			}
			for k, v := range [2]float64{v0, vb} {
				if !scalar.EqualWithinAbsOrRel(v, want[k], 1e-12, 1e-12) {
					t.Fatalf("grid %d value %d at (%g, %g): %.15g, Lagrange %.15g", gi, k, lnNu, z, v, want[k])
				}
			}
		}
	}
	for _, nu := range []float64{0.999, 1.00001e4, math.NaN(), math.Inf(1)} {
		if _, ok := tab.shapeExact(nu); ok {
			t.Errorf("shapeExact(%g) accepted", nu)
		}
		if _, ok := tab.shape(math.Sqrt(nu), math.Log(nu)); ok {
			t.Errorf("shape(%g) accepted", nu)
		}
	}
	for _, nu := range []float64{1, 6.25, 77.7, 1e4} {
		a, _ := tab.shape(math.Sqrt(nu), math.Log(nu))
		b, _ := tab.shapeExact(nu)
		if a.k != b.k || !scalar.EqualWithinRel(a.w1, b.w1, 1e-12) || !scalar.EqualWithinRel(a.sn3, b.sn3, 1e-12) ||
			!scalar.EqualWithinRel(a.t00, b.t00, rampNuTol) || !scalar.EqualWithinRel(a.t0b, b.t0b, rampNuTol) ||
			!scalar.EqualWithinRel(math.Exp(a.le), b.e, rampNuTol) || !scalar.EqualWithinRel(b.le, math.Log(b.e), 1e-15) {
			t.Errorf("nu %g: shape %+v, shapeExact %+v", nu, a, b)
		}
	}
	m := defaultModel(t)
	if w, _ := m.ramp.shapeExact(m.p.GammaShape); !m.bulk.rampOK || m.bulk.ramp != w {
		t.Errorf("the Model's constants of Params.GammaShape %+v, want %+v", m.bulk.ramp, w)
	}
}
