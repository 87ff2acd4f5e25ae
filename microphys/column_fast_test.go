package microphys

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// Tolerances of Column's fast bulk helpers (column.go) against the exported functions they
// replace. The helpers are the same formulas in another arithmetic order, so they agree to
// rounding (derived); bulkTol is far inside the 1e-6 relative that Column promises (doc/science.md#tables).
const (
	bulkTol = 1e-12 // relative, helpers and Column's bulk outputs
	// quadTol is the relative tolerance of Column's autoconversion with the threshold schemes
	// (ColumnAutoconversion itself, on H, N_d and rho_a equal to rounding): Kessler's
	// P_col ∝ (H - z0)^2 turns a rounding difference e into e H/(H - z0) (derived).
	quadTol = 1e-9
	expTol  = 1e-15 // relative, colExp against math.Exp (a few units in the last place)
	logTol  = 4e-16 // absolute over max(1, |ln x|), colLog against math.Log
)

// TestColExp checks colExp against math.Exp over the arguments Column uses and beyond,
// including the fallback outside |x| < expMaxArg (derived: same function).
func TestColExp(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(1, 2))
	worst := 0.0
	for i := 0; i < 400000; i++ {
		x := -60 + 70*rng.Float64()
		if i%4 == 0 {
			x = -720 + 1440*rng.Float64()
		}
		got, want := colExp(x), math.Exp(x)
		if want == 0 || math.IsInf(want, 1) {
			if got != want {
				t.Fatalf("colExp(%g) = %g, want %g", x, got, want)
			}
			continue
		}
		worst = max(worst, math.Abs(got-want)/want)
	}
	t.Logf("colExp: largest relative error %.3g", worst)
	if worst > expTol {
		t.Errorf("colExp: largest relative error %.3g > %g", worst, expTol)
	}
	for _, x := range []float64{0, math.Copysign(0, -1), 1, -1, math.Ln2, 1e-300, -1e-300} {
		if got, want := colExp(x), math.Exp(x); !scalar.EqualWithinRel(got, want, expTol) {
			t.Errorf("colExp(%g) = %g, want %g", x, got, want)
		}
	}
	if !math.IsNaN(colExp(math.NaN())) || colExp(math.Inf(-1)) != 0 || !math.IsInf(colExp(math.Inf(1)), 1) {
		t.Error("colExp special values differ from math.Exp")
	}
}

// TestColExp2 checks that colExp2 gives colExp of both arguments bit for bit, over the
// arguments of TestColExp, the fallback beyond |x| < expMaxArg and the special values (derived:
// the same arithmetic written out twice).
func TestColExp2(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(3, 4))
	arg := func(i int) float64 {
		switch i % 5 {
		case 0:
			return -720 + 1440*rng.Float64()
		case 1:
			return []float64{0, math.Copysign(0, -1), math.NaN(), math.Inf(1), math.Inf(-1), expMaxArg, -expMaxArg, -740}[rng.IntN(8)]
		}
		return -60 + 70*rng.Float64()
	}
	same := func(a, b float64) bool {
		return math.Float64bits(a) == math.Float64bits(b) || math.IsNaN(a) && math.IsNaN(b)
	}
	for i := 0; i < 400000; i++ {
		x, y := arg(i), arg(i/5+i)
		gx, gy := colExp2(x, y)
		if !same(gx, colExp(x)) || !same(gy, colExp(y)) {
			t.Fatalf("colExp2(%g, %g) = %g, %g; colExp %g, %g", x, y, gx, gy, colExp(x), colExp(y))
		}
	}
}

// TestColLog2 checks that colLog2 is colLog twice, bit for bit, over the normal range and
// the special values (derived: the same arithmetic written out twice).
func TestColLog2(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(5, 6))
	arg := func(i int) float64 {
		switch i % 5 {
		case 0:
			return math.Exp(-700 + 1400*rng.Float64())
		case 1:
			return []float64{0, math.Copysign(0, -1), -1, math.NaN(), math.Inf(1), math.Inf(-1), logMinNormal,
				logMinNormal / 2, math.MaxFloat64, 1, 2, math.Nextafter(1, 0)}[rng.IntN(12)]
		}
		return 1e-3 + 10*rng.Float64()
	}
	same := func(a, b float64) bool {
		return math.Float64bits(a) == math.Float64bits(b) || math.IsNaN(a) && math.IsNaN(b)
	}
	for i := 0; i < 400000; i++ {
		x, y := arg(i), arg(i/5+i)
		gx, gy := colLog2(x, y)
		if !same(gx, colLog(x)) || !same(gy, colLog(y)) {
			t.Fatalf("colLog2(%g, %g) = %g, %g; colLog %g, %g", x, y, gx, gy, colLog(x), colLog(y))
		}
	}
}

// TestColLog checks colLog against math.Log over the whole normal range, the values Column
// takes logarithms of in particular, and the special values (derived: same function).
func TestColLog(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(9, 10))
	worst := 0.0
	for i := 0; i < 400000; i++ {
		x := math.Exp(-700 + 1400*rng.Float64())
		switch i % 4 {
		case 1:
			x = 0.5 + 2*rng.Float64()
		case 2:
			x = 1e7 + 1e10*rng.Float64() // N_d, m-3
		case 3:
			x = math.Nextafter(1, 2+rng.Float64()) // just above 1
		}
		got, want := colLog(x), math.Log(x)
		worst = max(worst, math.Abs(got-want)/max(1, math.Abs(want)))
	}
	t.Logf("colLog: largest error %.3g", worst)
	if worst > logTol {
		t.Errorf("colLog: largest error %.3g > %g", worst, logTol)
	}
	if !scalar.EqualWithinAbs(colLog(1), 0, logTol) || !scalar.EqualWithinAbs(colLog(2), math.Ln2, logTol) {
		t.Errorf("colLog(1) = %g, colLog(2) = %g", colLog(1), colLog(2))
	}
	for _, x := range []float64{0, math.Copysign(0, -1), -1, 1e-310, math.Inf(1), math.Inf(-1), math.NaN(), math.MaxFloat64} {
		if got, want := colLog(x), math.Log(x); !(got == want || math.IsNaN(got) && math.IsNaN(want)) {
			t.Errorf("colLog(%g) = %g, math.Log %g", x, got, want)
		}
	}
}

// fastParams is a set of non-default parameters that moves every folded constant of
// bulkConsts (values chosen inside Params.Validate's ranges; invented for the test).
func fastParams() []Params {
	d := DefaultParams()
	d.EnableCollector, d.EnableEvaporation = false, false
	a := d
	a.K, a.Qext, a.Fad, a.ReStar, a.GammaShape = 0.67, 2.1, 0.7, 12e-6, 3.5
	a.OnsetWidth = 0                                               // the step onset (POP table path)
	a.DrizzleCoef, a.DrizzleLWPExp, a.DrizzleNdExp = 0.5, 1.5, 1.5 // b = c, not 7/4
	b := a
	b.DrizzleLWPExp, b.DrizzleNdExp = 1.75, 1.2 // b != c
	b.FixedCw = 1.9e-6
	c := d
	c.DrizzleLWPExp, c.DrizzleNdExp = 0, 0
	return []Params{d, a, b, c}
}

// TestBulkHelpers checks each fast helper of Column against the exported function it
// replaces, for every parameter set of fastParams (derived: same formulas).
func TestBulkHelpers(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(3, 4))
	for pi, p := range fastParams() {
		c := newBulkConsts(&p, newPopTable(), nil)
		for i := 0; i < 20000; i++ {
			lwp := 1e-3 * math.Exp(rng.Float64()*math.Log(3000))
			re := 3e-6 + 30e-6*rng.Float64()
			tau := 0.5 + 100*rng.Float64()
			cw := 0.8e-6 + 2.5e-6*rng.Float64()
			rho := 0.5 + 0.8*rng.Float64()
			gamma := p.Fad * cw
			nd := DropletNumber(tau, re, p.K, p.Qext, p.Fad, cw)
			h := Thickness(lwp, p.Fad, cw)
			tauA := TauAdiabatic(lwp, re, p.Qext)
			ndA := DropletNumber(tauA, re, p.K, p.Qext, p.Fad, cw)
			reTop := EffectiveRadius(h, nd, p.K, p.Fad, cw)
			crit, s := c.criticalLWP(lwp, reTop)
			critExact := CriticalLWP(nd, p.ReStar, p.K, p.Fad, cw)
			critA, sA := c.criticalLWP(lwp, re) // tau from LWP: r_e,top = r_e (derived)
			critAExact := CriticalLWP(ndA, p.ReStar, p.K, p.Fad, cw)
			for _, k := range []struct {
				name      string
				got, want float64
			}{
				{"tauAdiabatic", c.tauAdiabatic(lwp, re), tauA},
				{"dropletNumber", c.dropletNumber(tau, re, cw), nd},
				{"dropletNumberLWP", c.dropletNumberLWP(lwp, re, cw), ndA},
				{"thickness", c.thickness(lwp, cw), h},
				{"reTop", c.reTop(gamma, h, nd), reTop},
				{"reTop of tau from LWP", re, EffectiveRadius(h, ndA, p.K, p.Fad, cw)},
				{"criticalLWP", crit, critExact},
				{"criticalLWP s", s, math.Cbrt(critExact / lwp)},
				{"criticalLWP of tau from LWP", critA, critAExact},
				{"criticalLWP s of tau from LWP", sA, math.Cbrt(critAExact / lwp)},
				{"kk2000Efficiency", c.kk2000Efficiency(lwp, gamma, rho, math.Log(nd)),
					ColumnAutoconvKK2000(h, gamma, nd, rho) / lwp},
				{"drizzleRate", c.drizzleRate(lwp, nd, math.Log(nd)),
					DrizzleRate(lwp, nd, p.DrizzleCoef, p.DrizzleLWPExp, p.DrizzleNdExp)},
			} {
				if !scalar.EqualWithinRel(k.got, k.want, bulkTol) {
					t.Fatalf("params %d: %s = %.15g, want %.15g (LWP %g, r_e %g, tau %g, c_w %g, rho %g)",
						pi, k.name, k.got, k.want, lwp, re, tau, cw, rho)
				}
			}
		}
	}
}

// TestPopColumn checks popColumn and popAt2 against popTable.prob and nGrid.at (the same
// interpolation unrolled: equal to rounding, derived), over the table's range and across its
// edges (nu < 1 and nu > 1e4 go to DrizzleProbability).
func TestPopColumn(t *testing.T) {
	t.Parallel()
	m := defaultModel(t)
	rng := rand.New(rand.NewPCG(5, 6))
	for i := 0; i < 200000; i++ {
		lwp := 1e-3 * math.Exp(rng.Float64()*math.Log(3000))
		crit := lwp * math.Exp(-6+8*rng.Float64())
		nu := math.Exp(-1 + 11.5*rng.Float64())
		sn := math.Sqrt(nu)
		lnNu := math.NaN()
		if i%2 == 0 {
			lnNu = 2 * math.Log(sn)
		}
		got := m.popColumn(lwp, crit, math.Cbrt(crit/lwp), nu, sn, lnNu)
		if want := m.pop.prob(lwp, crit, nu); !scalar.EqualWithinAbsOrRel(got, want, 1e-15, bulkTol) {
			t.Fatalf("popColumn(%g, %g, nu %g) = %.15g, want %.15g", lwp, crit, nu, got, want)
		}
		x := [nDims]float64{m.pop.g.lo[0] + rng.Float64()*(float64(m.pop.g.n[0]-1)*m.pop.g.step[0]),
			m.pop.g.lo[1] + rng.Float64()*(float64(m.pop.g.n[1]-1)*m.pop.g.step[1])}
		if got, want := popAt2(m.pop.g, x[0], x[1]), m.pop.g.at(&x); got != want {
			t.Fatalf("popAt2(%g, %g) = %.17g, nGrid.at %.17g", x[0], x[1], got, want)
		}
	}
	for _, x := range [][2]float64{{-1e-9, 0}, {0, -7}, {0, 7}, {math.NaN(), 0}, {100, 0}} {
		if v := popAt2(m.pop.g, x[0], x[1]); !math.IsNaN(v) {
			t.Errorf("popAt2(%g, %g) = %g outside the grid, want NaN", x[0], x[1], v)
		}
	}
}

// subgridTol is the relative agreement of Column's POP and R̄ with SubgridDrizzleModel
// on the exported functions' inputs (derived: see TestColumnBulkExact).
const subgridTol = 1e-9

// columnExact is Column's documented composition of the exported functions for the bulk
// outputs of an unscreened column (Column's doc comment, steps 2-4).
func columnExact(m *Model, in *Inputs) (o Outputs) {
	p := m.Params()
	T, pr := in.CTT, in.CTP
	if math.IsNaN(T) {
		T = p.DefaultCTT
	}
	if math.IsNaN(pr) {
		pr = p.DefaultCTP
	}
	cw := CondensationRate(pr, T)
	if p.FixedCw > 0 {
		cw = p.FixedCw
	}
	es := SatVapourPressure(T)
	rho := AirDensity(pr, T, Epsilon*es/(pr-es))
	tau := in.Tau
	if math.IsNaN(tau) {
		tau = TauAdiabatic(in.LWP, in.Re, p.Qext)
	}
	o.Nd = DropletNumber(tau, in.Re, p.K, p.Qext, p.Fad, cw)
	o.H = Thickness(in.LWP, p.Fad, cw)
	o.Cw = cw
	o.ReTop = EffectiveRadius(o.H, o.Nd, p.K, p.Fad, cw)
	o.Autoconv = ColumnAutoconversion(p.AutoconvConfig(), o.H, p.Fad*cw, o.Nd, rho)
	o.Efficiency = WarmRainEfficiency(o.Autoconv, in.LWP)
	o.LWPCrit = CriticalLWP(o.Nd, p.ReStar, p.K, p.Fad, cw)
	nu := p.GammaShape
	if !math.IsNaN(in.LWPStd) {
		nu = GammaShapeFromStd(in.LWP, in.LWPStd)
	}
	on := Onset{p.ReStar, p.OnsetWidth}
	d := SubgridDrizzleModel(in.LWP, o.Nd, o.ReTop, nu, on, p.DrizzleCoef, p.DrizzleLWPExp, p.DrizzleNdExp)
	o.POP, o.DrizzleRate, o.DrizzleIntensity = d.POP, d.Rate, d.Intensity
	if on.Width == 0 && in.LWP > 0 && nu <= popStepShape {
		// the step takes Q from the POP table, as Column's doc says
		b := p.DrizzleLWPExp
		o.POP = m.pop.prob(in.LWP, o.LWPCrit, nu)
		o.DrizzleRate = DrizzleRate(in.LWP, o.Nd, p.DrizzleCoef, b, p.DrizzleNdExp) *
			SubgridEnhancement(nu, b) * m.pop.prob(in.LWP, o.LWPCrit*nu/(nu+b), nu+b)
	}
	return o
}

// TestColumnBulkExact checks every bulk output of Column against columnExact over random
// columns (tau given or not, air state given or not, LWP standard deviation given or not,
// every parameter set of fastParams and the other autoconversion schemes): within bulkTol
// relative (derived: the same formulas), POP within bulkTol of the same table.
func TestColumnBulkExact(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	t.Parallel()
	ps := fastParams()
	for _, s := range []AutoconvScheme{AutoconvKessler1969, AutoconvLiuDaum2004, AutoconvSeifertBeheng2001} {
		p := ps[1]
		p.Autoconv = s
		ps = append(ps, p)
	}
	m0 := ps[0]
	m0.MinLWP = 0 // LWP = 0 with a given tau reaches the diagnostics
	ps = append(ps, m0)
	rng := rand.New(rand.NewPCG(7, 8))
	nan := math.NaN()
	for pi, p := range ps {
		m, err := NewModel(p)
		if err != nil {
			t.Fatal(err)
		}
		var worst [9]float64
		n := 0
		for i := 0; i < 20000; i++ {
			in := Inputs{LWP: 0.01 * math.Exp(rng.Float64()*math.Log(50)), Re: 5e-6 + 20e-6*rng.Float64(),
				Tau: nan, CTT: 270 + 30*rng.Float64(), CTP: 70000 + 35000*rng.Float64(), CTH: nan, LWPStd: nan, SurfaceRH: nan}
			switch i % 5 {
			case 1:
				in.Tau = 3 + 40*rng.Float64()
			case 2:
				in.CTT, in.CTP = nan, nan
			case 3:
				in.LWPStd = in.LWP * (0.05 + 1.5*rng.Float64())
			case 4:
				in.LWPStd = 0
			}
			if pi == len(ps)-1 && i%10 == 1 {
				in.LWP = 0
			}
			var got Outputs
			m.Column(&in, &got)
			if got.QC&QCScreenMask != 0 {
				continue
			}
			n++
			want := columnExact(m, &in)
			g, w := outputValues(&got)[:9], outputValues(&want)[:9]
			for k := range g {
				if math.IsNaN(g[k]) && math.IsNaN(w[k]) {
					continue
				}
				tol, abs := bulkTol, 1e-300
				if p.Autoconv != AutoconvKK2000 && (k == 4 || k == 5) {
					tol = quadTol
				}
				if k == 6 || k == 7 {
					// POP and R̄: the ramp onset's table (rampTabTol, TestRampTableBound);
					// the step's POP table composition: the last-bit difference of the top
					// radius (r_e itself in Column, EffectiveRadius here) is amplified by
					// d ln Q/d ln r = 6x, x up to 1e5 (derived). Below 1e-12 (POP, or
					// kg m-2 s-1) nothing is observable.
					tol, abs = subgridTol, 1e-12
					if p.OnsetWidth > 0 {
						tol = rampTabTol
					}
				}
				if !scalar.EqualWithinAbsOrRel(g[k], w[k], abs, tol) {
					t.Fatalf("params %d, output %d = %.15g, want %.15g for %+v", pi, k, g[k], w[k], in)
				}
				if w[k] != 0 {
					worst[k] = max(worst[k], math.Abs(g[k]-w[k])/math.Abs(w[k]))
				}
			}
		}
		if n < 5000 {
			t.Errorf("params %d: only %d of 20000 columns unscreened", pi, n)
		}
		t.Logf("params %d: %d columns, largest relative difference per output %.3g", pi, n, worst)
	}
}
