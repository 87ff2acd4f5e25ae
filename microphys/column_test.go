package microphys

import (
	"math"
	"sync"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

var (
	sharedOnce  sync.Once
	sharedModel *Model
)

// defaultModel returns a Model with DefaultParams, built once per test binary.
func defaultModel(t testing.TB) *Model {
	t.Helper()
	sharedOnce.Do(func() {
		m, err := NewModel(DefaultParams())
		if err != nil {
			panic(err)
		}
		sharedModel = m
	})
	return sharedModel
}

func nanInputs() Inputs {
	n := math.NaN()
	return Inputs{n, n, n, n, n, n, n, n}
}

func outputValues(o *Outputs) []float64 {
	return []float64{o.Nd, o.H, o.Cw, o.ReTop, o.Autoconv, o.Efficiency, o.DrizzleRate, o.POP, o.LWPCrit,
		o.CollectorRadius, o.CollectorTime, o.SurfaceRadius, o.EvapHeight, o.DrizzleIntensity}
}

// TestColumnTypical compares Column with the individual functions for one marine
// stratocumulus column (derived: Column must equal its documented composition).
func TestColumnTypical(t *testing.T) {
	t.Parallel()
	m := defaultModel(t)
	p := m.Params()
	in := nanInputs()
	in.LWP, in.Re, in.CTT, in.CTP, in.LWPStd = 0.12, 12e-6, 285, 90000, 0.05
	var out Outputs
	m.Column(&in, &out)
	if out.QC&QCScreenMask != 0 {
		t.Fatalf("screened: %v", QCNames(out.QC))
	}
	want := QCCloudBaseAssumed // well mixed (the default): no surface humidity is needed
	if out.QC != want {
		t.Errorf("QC = %v, want %v", QCNames(out.QC), QCNames(want))
	}
	cw := CondensationRate(90000, 285)
	tau := TauAdiabatic(0.12, 12e-6, 2)
	nd := DropletNumber(tau, 12e-6, 0.8, 2, 1, cw)
	h := Thickness(0.12, 1, cw)
	es := SatVapourPressure(285)
	rho := AirDensity(90000, 285, Epsilon*es/(90000-es))
	pcol := ColumnAutoconvKK2000(h, cw, nd, rho)
	crit := CriticalLWP(nd, p.ReStar, 0.8, 1, cw)
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"Cw", out.Cw, cw}, {"Nd", out.Nd, nd}, {"H", out.H, h}, {"ReTop", out.ReTop, 12e-6},
		{"Autoconv", out.Autoconv, pcol}, {"Efficiency", out.Efficiency, pcol / 0.12},
		{"LWPCrit", out.LWPCrit, crit},
	} {
		if !scalar.EqualWithinRel(c.got, c.want, 1e-12) {
			t.Errorf("%s = %.10g, want %.10g", c.name, c.got, c.want)
		}
	}
	// POP, R̄ and I are those of the sub-grid model (SubgridDrizzleModel, ramp onset of
	// the defaults) for the column's N_d, top radius and gamma shape (derived).
	d := SubgridDrizzleModel(0.12, nd, 12e-6, GammaShapeFromStd(0.12, 0.05), Onset{p.ReStar, p.OnsetWidth}, 0.37, 1.75, 1.75)
	// (Column takes them from the ramp table, within rampTabTol.)
	if !scalar.EqualWithinRel(out.POP, d.POP, rampTabTol) || !scalar.EqualWithinRel(out.DrizzleRate, d.Rate, rampTabTol) ||
		!scalar.EqualWithinRel(out.DrizzleIntensity, d.Intensity, 2*rampTabTol) {
		t.Errorf("POP, R̄, I = %.10g, %.10g, %.10g, want %+v", out.POP, out.DrizzleRate, out.DrizzleIntensity, d)
	}
	if !scalar.EqualWithinRel(out.DrizzleRate, out.POP*out.DrizzleIntensity, 1e-14) {
		t.Errorf("R̄ %g != POP × I", out.DrizzleRate)
	}
	// Collector and evaporation against direct integration (table error bound, table.go).
	var res colResult
	m.collectDirect(h, cw, nd, 285, 90000, &res)
	if !scalar.EqualWithinRel(out.CollectorRadius, res.r, tableTol) || !scalar.EqualWithinRel(out.CollectorTime, res.t, tableTol) {
		t.Errorf("collector %.5g m %.5g s, direct %.5g m %.5g s", out.CollectorRadius, out.CollectorTime, res.r, res.t)
	}
	if !(out.CollectorRadius > p.Collector.R0) {
		t.Errorf("collector did not grow: %g", out.CollectorRadius)
	}
	var l SubCloudLayer
	if !m.subCloud(285, 90000, h, math.NaN(), 0.8, &l) || !l.WellMixed {
		t.Fatalf("no well-mixed sub-cloud layer: %+v", l)
	}
	// Surface drizzle from the flux table within its bound (TestFluxTableAgainstDirect).
	if f := SurfaceDrizzleFraction(p.Drizzle, l); !(math.Abs(out.SurfaceDrizzleFraction-f) <= fluxTol*math.Max(f, fluxFloor)) ||
		out.SurfaceDrizzleRate != out.SurfaceDrizzleFraction*out.DrizzleRate {
		t.Errorf("surface fraction %g (direct %g), rate %g for R_CB %g", out.SurfaceDrizzleFraction, f, out.SurfaceDrizzleRate, out.DrizzleRate)
	}
	e := EvaporateDirect(res.r, l)
	if e.Reached {
		if !scalar.EqualWithinAbs(out.SurfaceRadius, e.SurfaceRadius, tableTol*res.r) || !math.IsNaN(out.EvapHeight) {
			t.Errorf("surface radius %g, direct %g", out.SurfaceRadius, e.SurfaceRadius)
		}
	} else if out.SurfaceRadius != 0 || !scalar.EqualWithinAbs(out.EvapHeight, e.EvapHeight, tableTol*l.BaseHeight) {
		t.Errorf("evaporated at %g, direct %g (surface radius %g)", out.EvapHeight, e.EvapHeight, out.SurfaceRadius)
	}
}

// TestColumnTauGiven checks that a given tau sets N_d while H comes from LWP (derived).
func TestColumnTauGiven(t *testing.T) {
	t.Parallel()
	p := DefaultParams()
	p.EnableCollector, p.EnableEvaporation = false, false
	m, err := NewModel(p)
	if err != nil {
		t.Fatal(err)
	}
	in := nanInputs()
	in.LWP, in.Re, in.Tau = 0.1, 10e-6, 20
	var out Outputs
	m.Column(&in, &out)
	cw := CondensationRate(p.DefaultCTP, p.DefaultCTT)
	if !scalar.EqualWithinRel(out.Nd, DropletNumber(20, 10e-6, 0.8, 2, 1, cw), 1e-12) ||
		!scalar.EqualWithinRel(out.H, Thickness(0.1, 1, cw), 1e-12) {
		t.Errorf("N_d %g, H %g", out.Nd, out.H)
	}
	if out.QC&QCAirStateAssumed == 0 || out.QC&QCGammaShapeAssumed == 0 {
		t.Errorf("QC = %v, want air_state_assumed and gamma_shape_assumed", QCNames(out.QC))
	}
	if !math.IsNaN(out.CollectorRadius) || !math.IsNaN(out.SurfaceRadius) {
		t.Error("collector off but collector outputs set")
	}
	// Fixed c_w option ([Brenguier2000] 1.9e-6): the N_d check value of doc/science.md#droplet-number-and-thickness.
	p.FixedCw = 1.9e-6
	m, _ = NewModel(p)
	in.LWP, in.Tau = LWPAdiabatic(10, 10e-6), 10
	m.Column(&in, &out)
	if !scalar.EqualWithinRel(out.Nd, 137.11e6, 1e-4) || out.Cw != 1.9e-6 {
		t.Errorf("fixed c_w: N_d = %.5g, want 137.11e6 (doc/science.md#droplet-number-and-thickness)", out.Nd)
	}
}

// TestColumnScreening checks each screening rule: every diagnostic NaN and the bit set.
func TestColumnScreening(t *testing.T) {
	t.Parallel()
	m := defaultModel(t)
	inf := math.Inf(1)
	base := nanInputs()
	base.LWP, base.Re, base.CTT, base.CTP = 0.1, 12e-6, 285, 90000
	cases := []struct {
		name string
		mod  func(in *Inputs)
		bit  uint16
	}{
		{"missing LWP", func(in *Inputs) { in.LWP = math.NaN() }, QCInputMissing},
		{"missing Re", func(in *Inputs) { in.Re = math.NaN() }, QCInputMissing},
		{"negative LWP", func(in *Inputs) { in.LWP = -0.1 }, QCInputInvalid},
		{"Inf LWP", func(in *Inputs) { in.LWP = inf }, QCInputInvalid},
		{"zero Re", func(in *Inputs) { in.Re = 0 }, QCInputInvalid},
		{"-Inf Re", func(in *Inputs) { in.Re = -inf }, QCInputInvalid},
		{"negative tau", func(in *Inputs) { in.Tau = -3 }, QCInputInvalid},
		{"Inf CTT", func(in *Inputs) { in.CTT = inf }, QCInputInvalid},
		{"CTP 1e9", func(in *Inputs) { in.CTP = 1e9 }, QCInputInvalid},
		{"negative CTH", func(in *Inputs) { in.CTH = -10 }, QCInputInvalid},
		{"negative std", func(in *Inputs) { in.LWPStd = -0.01 }, QCInputInvalid},
		{"RH 2", func(in *Inputs) { in.SurfaceRH = 2 }, QCInputInvalid},
		{"thin LWP", func(in *Inputs) { in.LWP = 1e-3 }, QCThinCloud},
		{"thin tau", func(in *Inputs) { in.Tau = 1 }, QCThinCloud},
		{"small Re", func(in *Inputs) { in.Re = 2e-6 }, QCEffectiveRadiusOutOfRange},
		{"large Re", func(in *Inputs) { in.Re = 40e-6 }, QCEffectiveRadiusOutOfRange},
		{"ice", func(in *Inputs) { in.CTT = 265 }, QCPossibleIce},
		{"N_d low", func(in *Inputs) { in.LWP, in.Re = 0.05, 29e-6 }, QCDropletNumberImplausible},
		{"N_d high", func(in *Inputs) { in.LWP, in.Re = 0.5, 4.5e-6 }, QCDropletNumberImplausible},
		{"thick", func(in *Inputs) { in.LWP = 3 }, QCThicknessImplausible},
	}
	for _, c := range cases {
		in := base
		c.mod(&in)
		var out Outputs
		m.Column(&in, &out)
		if out.QC&c.bit == 0 {
			t.Errorf("%s: QC = %v, want bit %#x", c.name, QCNames(out.QC), c.bit)
		}
		for i, v := range outputValues(&out) {
			if !math.IsNaN(v) {
				t.Errorf("%s: output %d = %g, want NaN for a screened column", c.name, i, v)
			}
		}
	}
}

// TestColumnNoAlloc checks that Column does not allocate (DEVELOPERS.md, the column API).
func TestColumnNoAlloc(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	m := defaultModel(t)
	in := marineScSample(64, 5, true)
	var out Outputs
	i := 0
	if a := testing.AllocsPerRun(200, func() { m.Column(&in[i%64], &out); i++ }); a != 0 {
		t.Errorf("Column allocates %g times per call", a)
	}
}

// invalidInput reports whether some present input is outside its physical range (so Column
// must screen it).
func invalidInput(in *Inputs) bool {
	bad := func(x float64, lo, hi float64) bool { return !math.IsNaN(x) && !(x >= lo && x <= hi) }
	return math.IsNaN(in.LWP) || math.IsNaN(in.Re) || bad(in.LWP, 0, 10) || bad(in.Re, 1e-300, 1) ||
		math.IsInf(in.Re, 0) || bad(in.Tau, 1e-300, math.MaxFloat64) || bad(in.CTT, 180, 340) ||
		bad(in.CTP, 2e4, 1.1e5) || bad(in.CTH, 0, 2e4) || bad(in.LWPStd, 0, math.MaxFloat64) || bad(in.SurfaceRH, 0, 1)
}

// FuzzColumn checks Column's invariants for any float input (microphys/doc.go, Bad input): no panic;
// invalid input is screened with every diagnostic NaN; an unscreened column has finite,
// positive N_d, H and c_w, rates >= 0 and POP in [0, 1]. Seeds: the screening table above
// and typical columns; corpus in testdata/fuzz/FuzzColumn.
func FuzzColumn(f *testing.F) {
	n := math.NaN()
	f.Add(0.1, 12e-6, n, 285.0, 90000.0, n, n, n)
	f.Add(0.05, 9e-6, 8.0, 290.0, 95000.0, 900.0, 0.02, 0.7)
	f.Add(-1.0, math.Inf(1), math.Inf(-1), 1e300, -1e300, 0.0, math.Copysign(0, -1), 2.0)
	f.Add(1e-300, 1e-300, 1e-300, 200.0, 2e4, 2e4, 1e300, 1.0)
	f.Add(0.3, 29e-6, n, 273.15, 110000.0, 100.0, 0.0, 0.0)
	m := defaultModel(f) // build the tables once per process, before any input is timed
	f.Fuzz(func(t *testing.T, lwp, re, tau, ctt, ctp, cth, sd, rh float64) {
		in := Inputs{lwp, re, tau, ctt, ctp, cth, sd, rh}
		var out Outputs
		m.Column(&in, &out)
		vals := outputValues(&out)
		if out.QC&QCScreenMask != 0 {
			for i, v := range vals {
				if !math.IsNaN(v) {
					t.Fatalf("screened column has output %d = %g (%+v)", i, v, in)
				}
			}
			return
		}
		if invalidInput(&in) {
			t.Fatalf("invalid input not screened: %+v gives %+v", in, out)
		}
		for i, v := range vals[:9] {
			if math.IsNaN(v) || math.IsInf(v, 0) || v < 0 {
				t.Fatalf("bulk output %d = %g for %+v", i, v, in)
			}
		}
		if !(out.Nd > 0 && out.H > 0 && out.Cw > 0) || out.POP > 1 {
			t.Fatalf("bad outputs %+v for %+v", out, in)
		}
		// one sub-grid model: R̄ = POP × I, I defined where POP > 0 (derived)
		if out.POP > 0 && !(math.Abs(out.DrizzleRate-out.POP*out.DrizzleIntensity) <= 1e-12*out.DrizzleRate) ||
			out.POP == 0 && (out.DrizzleRate != 0 || !math.IsNaN(out.DrizzleIntensity)) {
			t.Fatalf("R̄ %g, POP %g, I %g for %+v", out.DrizzleRate, out.POP, out.DrizzleIntensity, in)
		}
		for i, v := range vals[9:] {
			if v < 0 || math.IsInf(v, 0) {
				t.Fatalf("collector output %d = %g for %+v", 9+i, v, in)
			}
		}
	})
}
