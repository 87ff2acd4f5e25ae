package microphys

import (
	"math"
	"math/rand/v2"
	"testing"
)

// evapRefLookup is the evaporation lookup of a drop written with the general nGrid.at and
// math.Expm1 (the formulas of evapTable's doc comment, as Column had them before
// evapfast.go): the reference of TestEvapLookupFast.
func evapRefLookup(t *evapTable, r0, lnR0, u float64, l *SubCloudLayer, ps float64) (kind int, v, lrs, f float64) {
	zb := l.BaseHeight
	lz := colLog(zb)
	lrs = t.thr.at(&[nDims]float64{ps, l.BaseT, u, lz})
	f = math.NaN()
	if lf := t.flux.at(&[nDims]float64{ps, u, l.BaseT, math.Sqrt(zb)}); !math.IsNaN(lf) {
		f = math.Exp(min(lf, 0))
	}
	xi := lnR0 - lrs
	x := [nDims]float64{ps, u, l.BaseT, lz, 0}
	switch {
	case xi >= evXiBand:
		x[4] = math.Sqrt(xi)
		q := -math.Expm1(xi * (t.reach.at(&x) - 4))
		if !(q >= evMinQ) {
			return evOutside, 0, lrs, f
		}
		return evReached, r0 * math.Sqrt(math.Sqrt(min(q, 1))), lrs, f
	case xi <= -evXiBand:
		x[4] = math.Sqrt(-xi)
		lv := t.evap.at(&x)
		if math.IsNaN(lv) {
			return evOutside, 0, lrs, f
		}
		return evEvaporated, max(-zb*math.Expm1(xi*lv), 0), lrs, f
	}
	return evOutside, 0, lrs, f
}

// TestEvapLookupFast checks Column's evaporation lookups (evapTable.prepare and lookupAt,
// evapfast.go) against evapRefLookup over the whole domain of the tables and 10 % beyond each
// end of every axis, for well-mixed layers (the default) and layers with a surface humidity,
// with and without a CTH (surface pressure on and off the Params.SurfacePressure node), and
// on the nodes of the ln z_b and T_b axes and midway between them: the same classification,
// ln r* to rounding (derived: the same taps and weights summed in another order), F within
// 1e-14 relative (colExp against math.Exp, expTol), and the surface radius within 1e-12 r0
// and the evaporation height within 1e-12 z_b: 1 - colExp(x) is within 1e-15 of -expm1(x)
// (derived from expTol, checked below), and the rounding of ln r* (1e-15 absolute) moves
// them by at most about 15 times that (the sensitivity e (1 - Q)/Q^(3/4) of TestEvapThreshold
// at Q = evMinQ; derived). Drops that the roundings of xi put in another class at the edge
// of the direct band or of evMinQ are counted and must be rare. The general path
// (evapTable.fast false, nGrid.at) is held to the same bounds.
func TestEvapLookupFast(t *testing.T) {
	t.Parallel()
	tables := []*evapTable{defaultModel(t).tab.evap}
	if !testing.Short() {
		p := DefaultParams()
		p.SubCloudHumidity = HumiditySurfaceRH
		tables = append(tables, buildEvapTable(p))
	}
	for _, et := range tables {
		if !et.fast || et.thrMid != et.mixed {
			t.Fatalf("well mixed %v: tables without the layout of the fast lookups (fast %v, thrMid %v)", et.mixed, et.fast, et.thrMid)
		}
		ref := *et
		ref.fast = false
		rng := rand.New(rand.NewPCG(71, 72))
		a := evapAxes
		ps0 := et.thr.lo[0] + et.thr.step[0]
		between := func(lo, hi float64) float64 { return lo + (hi-lo)*(1.2*rng.Float64()-0.1) }
		inside, evap, reach, edge := 0, 0, 0, 0
		const n = 40000
		for i := 0; i < n; i++ {
			lz := between(a.valLo[0], a.valHi[0])
			tb := between(a.valLo[1], a.valHi[1])
			switch i % 4 { // on the nodes of the threshold and value tables' ln z_b and T_b axes, and midway
			case 1:
				lz = a.thrLo[0] + float64(rng.IntN(a.thrN[0]))*et.thr.step[3]
				tb = a.thrLo[1] + float64(rng.IntN(a.thrN[1]))*et.thr.step[1]
			case 2:
				lz = a.valLo[0] + (float64(rng.IntN(2*a.valN[0]-1))/2)*et.reach.step[3]
				tb = a.valLo[1] + (float64(rng.IntN(2*a.valN[1]-1))/2)*et.reach.step[2]
			}
			ps := ps0
			if i%3 != 0 {
				ps = between(ps0+a.valLo[3], ps0+a.valHi[3])
			}
			u := evMixedU
			l := SubCloudLayer{BaseHeight: math.Exp(lz), BaseT: tb, WellMixed: et.mixed}
			if !et.mixed {
				u = between(a.valLo[2], a.valHi[2])
				l.SurfaceRH = -math.Expm1(u)
			}
			l.BaseP = dryBasePressure(tb, l.BaseHeight, ps)
			var e, eRef evLook
			f := et.prepare(u, &l, ps, &e)
			fRef := ref.prepare(u, &l, ps, &eRef)
			_, _, lrsW, fW := evapRefLookup(et, 1e-5, math.Log(1e-5), u, &l, ps)
			if math.IsNaN(e.lrs) != math.IsNaN(lrsW) || math.Abs(e.lrs-lrsW) > 1e-13 || eRef.lrs != lrsW && !math.IsNaN(lrsW) {
				t.Fatalf("layer %+v, p_s %g: ln r* %.17g, general %.17g, at %.17g", l, ps, e.lrs, eRef.lrs, lrsW)
			}
			if math.IsNaN(f) != math.IsNaN(fW) || math.IsNaN(fRef) != math.IsNaN(fW) || math.Abs(f-fW) > 1e-14*fW || math.Abs(fRef-fW) > 1e-14*fW {
				t.Fatalf("layer %+v, p_s %g: F %.17g, general %.17g, at %.17g", l, ps, f, fRef, fW)
			}
			if math.IsNaN(lrsW) {
				continue
			}
			inside++
			// drops from r*/10 to 10 r*, and on the edges of the direct band and of evMinQ
			xi := math.Log(10) * (2*rng.Float64() - 1)
			lnR0 := lrsW + xi
			r0 := math.Exp(lnR0)
			kind, v := et.lookupAt(r0, lnR0, &e)
			kindG, vG := ref.lookupAt(r0, lnR0, &eRef)
			kindW, vW, _, _ := evapRefLookup(et, r0, lnR0, u, &l, ps)
			if kind != kindW || kindG != kindW {
				edge++
				continue
			}
			for _, got := range []float64{v, vG} {
				switch kind {
				case evReached:
					if math.Abs(got-vW) > 1e-12*r0 {
						t.Fatalf("layer %+v, p_s %g, r0 %g: surface radius %.17g (fast %.17g), reference %.17g", l, ps, r0, got, v, vW)
					}
				case evEvaporated:
					if math.Abs(got-vW) > 1e-12*l.BaseHeight {
						t.Fatalf("layer %+v, p_s %g, r0 %g: evaporation height %.17g (fast %.17g), reference %.17g", l, ps, r0, got, v, vW)
					}
				}
			}
			switch kind {
			case evReached:
				reach++
			case evEvaporated:
				evap++
			}
		}
		t.Logf("well mixed %v: %d layers inside, %d drops reached, %d evaporated, %d classified differently at a class edge", et.mixed, inside, reach, evap, edge)
		if inside < n/3 || reach < n/10 || evap < n/10 || edge > n/1000 {
			t.Errorf("well mixed %v: %d layers inside, %d reached, %d evaporated, %d at an edge", et.mixed, inside, reach, evap, edge)
		}
	}
	for i := 0; i < 20000; i++ { // 1 - colExp(x) against -expm1(x), x <= 0 as in lookupAt
		x := -40 * rng01(i)
		if got, want := 1-colExp(x), -math.Expm1(x); math.Abs(got-want) > 1e-15 {
			t.Fatalf("1 - colExp(%g) = %.17g, -expm1 %.17g", x, got, want)
		}
	}
}

// rng01 is a deterministic spread of [0, 1) weighted towards 0 (small |x| is where 1 - e^x
// loses digits).
func rng01(i int) float64 {
	f := math.Mod(float64(i)*0.6180339887498949, 1)
	return f * f * f
}
