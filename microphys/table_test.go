package microphys

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

// tableTol is the largest error allowed for any table result against direct integration:
// 0.5 % (doc/science.md#tables; common practice for a tabulated fast path).
const tableTol = 5e-3

// marineScSample draws n columns typical of marine stratocumulus [Wood2012] (ranges from
// memory, doc/science.md#typical-stratocumulus: LWP 40-200 g m-2, r_e 9-15 µm, T_top 280-290 K, p_top 850-950
// hPa; widened here): LWP 20-400 g m-2, r_e 6-20 µm, CTT 276-295 K, CTP 840-980 hPa. withCTH adds a cloud-top height and a surface humidity to half the columns.
// Invented data: a test sample, not observations.
func marineScSample(n int, seed uint64, withCTH bool) []Inputs {
	rng := rand.New(rand.NewPCG(seed, 7))
	nan := math.NaN()
	in := make([]Inputs, n)
	for i := range in {
		in[i] = Inputs{
			LWP: 0.02 * math.Exp(rng.Float64()*math.Log(20)),
			Re:  6e-6 + 14e-6*rng.Float64(),
			Tau: nan, CTT: 276 + 19*rng.Float64(), CTP: 84000 + 14000*rng.Float64(),
			CTH: nan, LWPStd: nan, SurfaceRH: nan,
		}
		if withCTH && i%2 == 1 {
			in[i].CTH = 600 + 1200*rng.Float64()
			in[i].SurfaceRH = 0.6 + 0.35*rng.Float64()
		}
	}
	return in
}

// marineScSampleCTH is marineScSample with a cloud-top height on every column, consistent
// with the cloud-top pressure: CTH 500-2000 m, surface pressure 990-1035 hPa, and the
// cloud-top pressure from the hydrostatic equation with a mean layer temperature CTT + Γ
// CTH/2, Γ = 6.5 K km-1 (common practice: the standard-atmosphere lapse rate), and a surface
// humidity of 0.6-0.95. Invented data: a test sample, not observations.
func marineScSampleCTH(n int, seed uint64) []Inputs {
	in := marineScSample(n, seed, false)
	rng := rand.New(rand.NewPCG(seed, 13))
	for i := range in {
		cth := 500 + 1500*rng.Float64()
		ps := 99000 + 4500*rng.Float64()
		tm := in[i].CTT + 0.5*6.5e-3*cth
		in[i].CTH = cth
		in[i].CTP = ps * math.Exp(-Gravity*cth/(GasConstantDry*tm))
		in[i].SurfaceRH = 0.6 + 0.35*rng.Float64()
	}
	return in
}

type tableErrors struct {
	n, used                   int
	radius, time, surf, evapZ float64 // end to end: max relative errors (surf / exit radius, evapZ / base height)
	classMismatch             int
	nEvap                     int     // columns whose evaporation came from the table
	evSurf, evZ               float64 // evaporation table alone, same exit radius as direct
}

func compareTable(t *testing.T, p Params, in []Inputs) tableErrors {
	t.Helper()
	p.CollectorMethod = CollectorTable
	mt, err := NewModel(p)
	if err != nil {
		t.Fatal(err)
	}
	p.CollectorMethod = CollectorDirect
	md, err := NewModel(p)
	if err != nil {
		t.Fatal(err)
	}
	var e tableErrors
	var ot, od Outputs
	for i := range in {
		mt.Column(&in[i], &ot)
		md.Column(&in[i], &od)
		if od.QC&QCScreenMask != 0 || math.IsNaN(od.CollectorRadius) {
			continue
		}
		e.n++
		if ot.QC&QCIntegratedDirectly == 0 {
			e.used++
		}
		rel := func(a, b float64) float64 { return math.Abs(a-b) / math.Abs(b) }
		e.radius = math.Max(e.radius, rel(ot.CollectorRadius, od.CollectorRadius))
		e.time = math.Max(e.time, rel(ot.CollectorTime, od.CollectorTime))
		if math.IsNaN(od.SurfaceRadius) != math.IsNaN(ot.SurfaceRadius) ||
			math.IsNaN(od.EvapHeight) != math.IsNaN(ot.EvapHeight) {
			e.classMismatch++
			continue
		}
		if !math.IsNaN(od.SurfaceRadius) {
			e.surf = math.Max(e.surf, math.Abs(ot.SurfaceRadius-od.SurfaceRadius)/od.CollectorRadius)
		}
		rh := in[i].SurfaceRH
		if math.IsNaN(rh) {
			rh = p.SurfaceRH
		}
		var l SubCloudLayer
		if !md.subCloud(in[i].CTT, in[i].CTP, od.H, in[i].CTH, rh, &l) {
			continue
		}
		if !math.IsNaN(od.EvapHeight) {
			e.evapZ = math.Max(e.evapZ, math.Abs(ot.EvapHeight-od.EvapHeight)/l.BaseHeight)
		}
		// The evaporation table alone, from the same (direct) exit radius.
		var res colResult
		u := math.Log1p(-l.SurfaceRH)
		if l.WellMixed {
			u = evMixedU
		}
		var ev evLook
		mt.tab.evap.prepare(u, &l, mt.surfacePressure(in[i].CTH, &l), &ev)
		if !mt.tab.evaporate(od.CollectorRadius, math.Log(od.CollectorRadius), &ev, &res) {
			continue
		}
		e.nEvap++
		d := EvaporateDirect(od.CollectorRadius, l)
		if d.Reached != math.IsNaN(res.zev) {
			e.classMismatch++
			continue
		}
		if d.Reached {
			e.evSurf = math.Max(e.evSurf, math.Abs(res.rs-d.SurfaceRadius)/od.CollectorRadius)
		} else {
			e.evZ = math.Max(e.evZ, math.Abs(res.zev-d.EvapHeight)/l.BaseHeight)
		}
	}
	return e
}

// TestTableAgainstDirect checks the collector/evaporation table against direct integration
// over a random marine-stratocumulus sample (derived: the table is built from the same
// integrator, so this bounds the interpolation error).
func TestTableAgainstDirect(t *testing.T) {
	if testing.Short() {
		t.Skip("direct integration of 9000 columns")
	}
	in := marineScSample(9000, 1, true)
	e := compareTable(t, DefaultParams(), in)
	checkTableErrors(t, e, 8000, 3)
}

// TestTableAgainstDirectCTH is TestTableAgainstDirect for columns that give a cloud-top
// height (the base pressure then comes from the cloud top, not from Params.SurfacePressure),
// with the same bounds (derived: the table is built from the same integrators).
func TestTableAgainstDirectCTH(t *testing.T) {
	if testing.Short() {
		t.Skip("direct integration of 6000 columns")
	}
	in := marineScSampleCTH(6000, 2)
	e := compareTable(t, DefaultParams(), in)
	checkTableErrors(t, e, 5000, 2)
}

// checkTableErrors logs the errors of compareTable and checks them against the bounds of
// TestTableAgainstDirect (derived: the table is built from the same integrators): at least
// minN columns, 7/8 of them through the table and 1/evapDiv of them evaporating; every
// table error within tableTol; no column classed differently.
func checkTableErrors(t *testing.T, e tableErrors, minN, evapDiv int) {
	t.Helper()
	t.Logf("columns %d (table used for %d): collector table max rel error radius %.3g time %.3g; "+
		"evaporation table (%d columns, same exit radius) surface radius/exit radius %.3g evap height/base height %.3g; "+
		"end to end surface radius/exit radius %.3g evap height/base height %.3g; class mismatches %d",
		e.n, e.used, e.radius, e.time, e.nEvap, e.evSurf, e.evZ, e.surf, e.evapZ, e.classMismatch)
	// Columns whose cloud-top mean-volume radius is within the collector-kink band of the
	// start radius (collTable.kink: r_e 19.6-23 µm for R0 = 20 µm, 3 % of the sample) are
	// integrated directly too, so 7/8 rather than 9/10 come from the table.
	if e.n < minN || e.used < e.n*7/8 || e.nEvap < e.n/evapDiv {
		t.Errorf("sample too small or table rarely used: %d columns, %d via table, %d evaporations", e.n, e.used, e.nEvap)
	}
	for _, c := range []struct {
		name string
		v    float64
	}{{"collector radius", e.radius}, {"collector time", e.time}, {"evaporation surface radius", e.evSurf},
		{"evaporation height", e.evZ}, {"end-to-end evaporation height", e.evapZ}} {
		if c.v > tableTol {
			t.Errorf("table %s error %.3g > %.3g", c.name, c.v, tableTol)
		}
	}
	// End to end, the surface radius also carries the collector table's error, amplified near
	// the reach/evaporate boundary by d r_s/d r0 = (r0/r_s)^3 (r_s^4 = r0^4 - const for a
	// Stokes drop, derived from doc/science.md#sub-cloud-evaporation); bound it at 4 x tableTol.
	if e.surf > 4*tableTol {
		t.Errorf("end-to-end surface radius error %.3g > %.3g", e.surf, 4*tableTol)
	}
	if e.classMismatch != 0 {
		t.Errorf("%d columns reached the surface in one method and evaporated in the other", e.classMismatch)
	}
}

var benchEvapSink float64

// BenchmarkEvapLookup is the evaporation table lookup of one column (threshold and value
// tables), without and with a CTH (surface pressure off the Params.SurfacePressure plane).
func BenchmarkEvapLookup(b *testing.B) {
	m := defaultModel(b)
	l := SubCloudLayer{BaseHeight: 420, BaseT: 286, BaseP: dryBasePressure(286, 420, 101325), WellMixed: true}
	for _, c := range []struct {
		name string
		ps   float64
	}{{"NoCTH", 101325}, {"CTH", 100100}} {
		b.Run(c.name, func(b *testing.B) {
			b.ReportAllocs()
			s := 0.0
			for i := 0; i < b.N; i++ {
				r0 := 60e-6 + float64(i&255)*1e-7
				_, v := m.tab.evap.lookup(r0, math.Log(r0), m.lnDryRH, &l, c.ps)
				s += v
			}
			benchEvapSink = s
		})
	}
}

// TestEvapThreshold checks the threshold radius of the evaporation table (derived: the drop
// that leaves cloud base just above r* reaches the surface under EvaporateDirect, the one
// just below evaporates aloft), and bounds the threshold table's interpolation error in
// xi = ln r*, on which evXiBand and evMinQ rest (table.go): an error e in xi moves r_s/r0 by
// at most e (1 - Q)/Q^(3/4) at (r_s/r0)^4 = Q, derived from (r_s/r0)^4 = 1 - exp(xi (g - 4)).
func TestEvapThreshold(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	t.Parallel()
	const thrTol = 3e-4 // bound on the threshold table error in ln r*
	if thrTol >= evXiBand {
		t.Fatalf("threshold bound %g not inside the direct band %g", thrTol, evXiBand)
	}
	if e := thrTol * (1 - evMinQ) / math.Pow(evMinQ, 0.75); e > tableTol {
		t.Errorf("threshold bound %g allows a surface-radius error %.3g > %g at Q = evMinQ", thrTol, e, tableTol)
	}
	pl := DefaultParams()
	pl.SubCloudHumidity = HumiditySurfaceRH // the layers below have a surface humidity
	et := buildEvapTable(pl)
	rng := rand.New(rand.NewPCG(17, 3))
	worst := 0.0
	for i := 0; i < 1500; i++ {
		lz := rng.Float64() * math.Log(3000)
		tb := 270 + 36*rng.Float64()
		rh := 0.5 + 0.49*rng.Float64()
		ps := 101325 + (2*rng.Float64()-1)*1e4
		if i%3 == 0 {
			ps = 101325
		}
		l := evLayer(lz, tb, math.Log1p(-rh), ps)
		if _, Ts, _ := l.State(0); Ts > 320 { // surface air beyond the physical range of use
			continue
		}
		rs := evapThreshold(l)
		x := [nDims]float64{ps, tb, math.Log1p(-rh), lz}
		e := math.Abs(et.thr.at(&x) - math.Log(rs))
		if !(e <= worst) {
			worst = e
		}
		if i%25 == 0 {
			if a, b := EvaporateDirect(rs*(1+1e-5), l), EvaporateDirect(rs*(1-1e-5), l); !a.Reached || b.Reached {
				t.Errorf("layer %+v: r* = %.6g m, r*(1+1e-5) reached %v, r*(1-1e-5) reached %v", l, rs, a.Reached, b.Reached)
			}
		}
	}
	t.Logf("threshold table: largest error in ln r* %.3g", worst)
	if !(worst <= thrTol) {
		t.Errorf("threshold table error %.3g > %g", worst, thrTol)
	}
}

// TestTableFastPaths checks the unrolled interpolations of Column's table path against the
// general ones they write out (derived: the same taps and weights, summed in another order,
// so equal to rounding): interpSplit against splitRef (its formula on the weights of stencil,
// with the state of interp) and subCloudFast against subCloud, over random points inside and
// around the tables (the evaporation tables' lookups: TestEvapLookupFast).
func TestTableFastPaths(t *testing.T) {
	t.Parallel()
	m := defaultModel(t)
	const tol = 1e-13 // absolute on the interpolated logarithms, relative on the layer (derived: rounding)
	rng := rand.New(rand.NewPCG(5, 6))
	between := func(lo, hi float64) float64 { return lo + (hi-lo)*(1.2*rng.Float64()-0.1) } // 10 % beyond each end
	cg := m.tab.coll
	if !cg.isCC22() {
		t.Fatal("the tables do not have the layouts of the unrolled interpolations")
	}
	inside := 0
	for i := 0; i < 20000; i++ {
		var x [tabDims]float64
		for d := range x {
			x[d] = between(collGrid.lo[d], collGrid.hi[d])
		}
		var want, got [tabVals]float64
		wst := splitRef(cg, x, &want)
		gst := cg.interpSplit(x[0], x[1], x[2], x[3], &got)
		if gst != wst {
			t.Fatalf("collector table at %v: state %d, want %d", x, gst, wst)
		}
		if wst != 0 {
			inside++
			for k := range got {
				if math.Abs(got[k]-want[k]) > tol {
					t.Fatalf("collector table at %v: value %d = %.17g, want %.17g", x, k, got[k], want[k])
				}
			}
		}
	}
	if inside < 5000 { // a quarter: enough to exercise the table inside
		t.Errorf("only %d of 20000 points inside the collector table", inside)
	}
	for i, in := range marineScSample(4000, 3, true) {
		st := adiabaticState(in.CTT, in.CTP)
		h := Thickness(in.LWP, m.p.Fad, st.cw)
		rh := in.SurfaceRH
		if math.IsNaN(rh) {
			rh = m.p.SurfaceRH
		}
		var lf, lw SubCloudLayer
		okF := m.subCloudFast(in.CTT, in.CTP, h, airStateFast(in.CTT, in.CTP).gm, in.CTH, rh, &lf)
		okW := m.subCloud(in.CTT, in.CTP, h, in.CTH, rh, &lw)
		if okF != okW {
			t.Fatalf("column %d: subCloudFast %v, subCloud %v", i, okF, okW)
		}
		if !okW {
			continue
		}
		// z_b = c_pd (T_s - T_b)/g loses the digits of T_s - T_b: its rounding is relative to
		// c_pd T_s/g (derived from DryBaseHeight).
		zScale := SpecificHeatDryAir * (lw.BaseT + Gravity/SpecificHeatDryAir*lw.BaseHeight) / Gravity
		for _, c := range [][3]float64{{lf.BaseHeight, lw.BaseHeight, zScale}, {lf.BaseT, lw.BaseT, lw.BaseT},
			{lf.BaseP, lw.BaseP, lw.BaseP}, {m.surfacePressureFast(in.CTH, &lf), m.surfacePressure(in.CTH, &lw), lw.BaseP}} {
			if math.Abs(c[0]-c[1]) > tol*c[2] {
				t.Fatalf("column %d: layer %+v, want %+v", i, lf, lw)
			}
		}
	}
}

// TestTablesWidened checks that every table Column interpolates carries its float64 copy,
// equal to the float32 values node for node (widenF32 is exact: derived), or for the
// collector table its split form (sameSplit), for a model built by
// NewModel and one read back by NewModelTables, so that Column takes the unrolled lookups
// (which read the copies) with the values of the tables.
func TestTablesWidened(t *testing.T) {
	t.Parallel()
	m := defaultModel(t)
	m2, err := NewModelTables(m.p, m.Tables())
	if err != nil {
		t.Fatal(err)
	}
	same := func(name string, vals []float32, wide []float64) {
		if len(wide) != len(vals) {
			t.Fatalf("%s: %d widened values of %d", name, len(wide), len(vals))
		}
		for i, v := range vals {
			if w := wide[i]; w != float64(v) && !(math.IsNaN(w) && v != v) {
				t.Fatalf("%s node %d: widened %g, value %g", name, i, w, v)
			}
		}
	}
	for k, mm := range []*Model{m, m2} {
		if !mm.tab.coll.isCC22() || !mm.tab.evap.fast || !mm.tab.evap.thrMid {
			t.Fatalf("model %d: the tables do not have the layouts of the unrolled lookups", k)
		}
		sameSplit(t, mm.tab.coll)
		e := mm.tab.evap
		for j, g := range []*nGrid{e.thr, e.reach, e.evap, e.flux, mm.pop.g} {
			same(fmt.Sprintf("model %d grid %d", k, j), g.vals, g.wide)
		}
	}
}

// sameSplit checks the split form of the collector table g against its values: A, A + B,
// A + C and A + B + C + D give back the four corners of every node exactly (derived: sums of
// float32 values are exact in float64), and the plane state is the corners' shared state.
func sameSplit(t *testing.T, g *tabGrid) {
	t.Helper()
	if !g.isCC22() {
		t.Fatal("collector table without its split form")
	}
	s2, s3 := g.stride[2], g.stride[3]
	for i := 0; i < g.n[0]; i++ {
		for j := 0; j < g.n[1]; j++ {
			o := i*g.stride[0] + j*g.stride[1]
			q := i*g.n[1] + j
			wst := g.state[o]
			if g.state[o+s2] != wst || g.state[o+s3] != wst || g.state[o+s2+s3] != wst {
				wst = 0
			}
			if g.pstate[q] != wst {
				t.Fatalf("node (%d, %d): plane state %d, corners %d %d %d %d", i, j, g.pstate[q],
					g.state[o], g.state[o+s2], g.state[o+s3], g.state[o+s2+s3])
			}
			for k := 0; k < tabVals; k++ {
				a := g.plane[q*tabVals+k]
				b, c, d := g.air[q*3*tabVals+k], g.air[q*3*tabVals+tabVals+k], g.air[q*3*tabVals+2*tabVals+k]
				for _, cmp := range [][2]float64{{a, float64(g.vals[o*tabVals+k])}, {a + b, float64(g.vals[(o+s2)*tabVals+k])},
					{a + c, float64(g.vals[(o+s3)*tabVals+k])}, {a + b + c + d, float64(g.vals[(o+s2+s3)*tabVals+k])}} {
					if cmp[0] != cmp[1] && !(math.IsNaN(cmp[0]) && math.IsNaN(cmp[1])) {
						t.Fatalf("node (%d, %d) value %d: split form gives %g, corner %g", i, j, k, cmp[0], cmp[1])
					}
				}
			}
		}
	}
}

// splitRef is interpSplit's formula written plainly: the Catmull-Rom (or linear) weights of
// stencil on A and the bilinear weights of the cell of (x0, x1) on B, C and D, taken from the
// split form node by node, with interp's state (0 outside).
func splitRef(g *tabGrid, x [tabDims]float64, acc *[tabVals]float64) uint8 {
	*acc = [tabVals]float64{}
	var s tabStencil
	if !g.stencil(x, &s) {
		return 0
	}
	var full [tabVals]float64
	st := g.interp(&s, &full)
	if st == 0 {
		return 0
	}
	n1 := g.n[1]
	for a := 0; a < s.nt[0]; a++ {
		for b := 0; b < s.nt[1]; b++ {
			q := (s.first[0]+a)*n1 + s.first[1] + b
			for k := 0; k < tabVals; k++ {
				acc[k] += s.w[0][a] * s.w[1][b] * g.plane[q*tabVals+k]
			}
		}
	}
	var k, tt [2]float64
	for d := 0; d < 2; d++ {
		u := (x[d] - g.lo[d]) * g.inv[d]
		k[d] = math.Min(math.Floor(u), float64(g.n[d]-2))
		tt[d] = u - k[d]
	}
	u2, u3 := s.w[2][1], s.w[3][1]
	for a := 0; a < 2; a++ {
		for b := 0; b < 2; b++ {
			q := (int(k[0])+a)*n1 + int(k[1]) + b
			w := (1 - tt[0] + float64(a)*(2*tt[0]-1)) * (1 - tt[1] + float64(b)*(2*tt[1]-1))
			for v := 0; v < tabVals; v++ {
				air := g.air[q*3*tabVals:]
				acc[v] += w * (u2*air[v] + u3*air[tabVals+v] + u2*u3*air[2*tabVals+v])
			}
		}
	}
	return st
}

// collSplitWorst returns the largest difference between interpSplit and stencil with interp
// (the Catmull-Rom interpolation of all four corner values) on the collector table of tab,
// in ln R_exit and ln(t_exit/H), where Column uses the table (inside, straddlesKink false):
// on every node, cell centre and cell edge midpoint of the (ln LWP, ln r_v) plane, each at
// the air-state corners, edge midpoints and centre, and at n random points. A state
// mismatch is an error.
func collSplitWorst(t *testing.T, tab *collTable, n int, seed uint64) (worst [tabVals]float64, used int) {
	t.Helper()
	g := tab.coll
	check := func(x [tabDims]float64) {
		if tab.straddlesKink(x[1]) {
			return
		}
		var s tabStencil
		var want, got [tabVals]float64
		wst := uint8(0)
		if g.stencil(x, &s) {
			wst = g.interp(&s, &want)
		}
		if gst := g.interpSplit(x[0], x[1], x[2], x[3], &got); gst != wst {
			t.Fatalf("collector table at %v: split state %d, interp %d", x, gst, wst)
		}
		if wst == 0 {
			return
		}
		used++
		for k := range got {
			worst[k] = math.Max(worst[k], math.Abs(got[k]-want[k]))
		}
	}
	at := func(d int, u float64) float64 { return g.lo[d] + u*g.step[d] }
	for i := 0; i <= 2*(g.n[0]-1); i++ {
		for j := 0; j <= 2*(g.n[1]-1); j++ {
			for a := 0; a <= 2; a++ {
				for b := 0; b <= 2; b++ {
					check([tabDims]float64{at(0, float64(i)/2), at(1, float64(j)/2), at(2, float64(a)/2), at(3, float64(b)/2)})
				}
			}
		}
	}
	rng := rand.New(rand.NewPCG(seed, 3))
	for i := 0; i < n; i++ {
		check(collDomainPoint(rng))
	}
	return worst, used
}

// TestCollectorSplit checks interpSplit, the collector table's split interpolation, within
// collSplitTol of the Catmull-Rom interpolation of all its corner values (stencil and interp)
// over the table's whole domain where Column uses it (collSplitWorst; derived: both
// interpolate the same nodes, so this bounds what the split adds to the table's error
// against direct integration, TestCollectorTableWholeDomain).
func TestCollectorSplit(t *testing.T) {
	t.Parallel()
	m := defaultModel(t)
	worst, used := collSplitWorst(t, m.tab, 200000, 17)
	t.Logf("%d points: largest split errors %.3g (ln R_exit), %.3g (ln t_exit/H)", used, worst[0], worst[1])
	if used < 200000 {
		t.Errorf("only %d points inside the table", used)
	}
	if worst[0] > collSplitTol || worst[1] > collSplitTol {
		t.Errorf("split interpolation differs by %.3g, %.3g > %g", worst[0], worst[1], collSplitTol)
	}
}

// collDomainPoint is a uniformly drawn point of the collector table's whole domain
// (collGrid: ln LWP, ln r_v, T, p). Invented points: a test sample.
func collDomainPoint(rng *rand.Rand) [tabDims]float64 {
	var x [tabDims]float64
	for d := range x {
		x[d] = collGrid.lo[d] + (collGrid.hi[d]-collGrid.lo[d])*rng.Float64()
	}
	return x
}

// TestCollectorTableWholeDomain checks the collector table against direct integration over
// its whole domain (LWP 5-400 g m-2, r_v 3-30 µm, T 273-305 K, p 600-1050 hPa), not only
// over marine stratocumulus, and around the kink where the cloud-top mean-volume radius
// equals the collector's start radius (derived: the table holds CollectDirect at its nodes,
// so this bounds the interpolation error; every column the table answers must be within
// tableTol, the others are integrated directly and flagged).
func TestCollectorTableWholeDomain(t *testing.T) {
	if testing.Short() {
		t.Skip("direct integration of 6000 collectors")
	}
	for _, r0 := range []float64{DefaultCollectorR0, 25e-6} {
		p := DefaultParams()
		p.Collector.R0 = r0
		p.EnableEvaporation = false
		m, err := NewModel(p)
		if err != nil {
			t.Fatal(err)
		}
		rng := rand.New(rand.NewPCG(41, uint64(r0*1e6)))
		var worstR, worstT float64
		var atR, atT [tabDims]float64
		used, n := 0, 0
		for i := 0; i < 3000; i++ {
			x := collDomainPoint(rng)
			nearKink := i%3 == 0
			if nearKink { // a third within 6 % of the kink r_v = R0
				x[1] = math.Log(r0) + 0.06*(2*rng.Float64()-1)
			}
			lwp, rv, T, pr := math.Exp(x[0]), math.Exp(x[1]), x[2], x[3]
			cw := adiabaticState(T, pr).cw
			h := math.Sqrt(2 * lwp / cw)
			nd := three * cw * h / (four * math.Pi * WaterDensity * rv * rv * rv)
			var tab, dir colResult
			m.collectDirect(h, cw, nd, T, pr, &dir)
			if !dir.ok {
				continue
			}
			if !nearKink {
				n++
			}
			if !m.tab.collect(x[0], x[1], h, T, pr, &tab) {
				continue
			}
			if !nearKink {
				used++
			}
			if tab.exitBase != dir.exitBase {
				t.Errorf("R0 %g, point %v: table exits base %v, direct %v", r0, x, tab.exitBase, dir.exitBase)
				continue
			}
			if e := math.Abs(tab.r-dir.r) / dir.r; e > worstR {
				worstR, atR = e, x
			}
			if e := math.Abs(tab.t-dir.t) / dir.t; e > worstT {
				worstT, atT = e, x
			}
		}
		if sw, _ := collSplitWorst(t, m.tab, 20000, 23); sw[0] > collSplitTol || sw[1] > collSplitTol {
			t.Errorf("R0 %g: split interpolation differs by %.3g, %.3g > %g", r0, sw[0], sw[1], collSplitTol)
		}
		t.Logf("R0 %g µm: %d columns away from the kink, %d of them through the table; largest errors: exit radius %.3g (LWP %.3g kg m-2, r_v %.3g µm), exit time %.3g (LWP %.3g, r_v %.3g µm)",
			r0*1e6, n, used, worstR, math.Exp(atR[0]), math.Exp(atR[1])*1e6, worstT, math.Exp(atT[0]), math.Exp(atT[1])*1e6)
		if worstR > tableTol || worstT > tableTol {
			t.Errorf("R0 %g: collector table errors %.3g (radius), %.3g (time) > %g", r0, worstR, worstT, tableTol)
		}
		if used < n*9/10 {
			t.Errorf("R0 %g: table used for %d of %d columns", r0, used, n)
		}
	}
}

// TestEvapTableWholeDomain checks the single-drop evaporation tables (threshold, reach and
// evaporate) against EvaporateDirect over their whole domain (base height 1-3000 m, base
// temperature 270-306 K, surface pressure within 10 kPa of 1013.25 hPa, surface humidity
// 0.5-0.99 or well mixed, and drops from a tenth to ten times the threshold radius), with the
// errors of compareTable: surface radius relative to the cloud-base radius, evaporation
// height relative to the base height (derived: the tables hold EvaporateDirect at their
// nodes, so this bounds the interpolation error).
func TestEvapTableWholeDomain(t *testing.T) {
	if testing.Short() {
		t.Skip("direct integration of 3000 drops")
	}
	for _, mixed := range []bool{true, false} {
		p := DefaultParams()
		if !mixed {
			p.SubCloudHumidity = HumiditySurfaceRH
		}
		et := buildEvapTable(p)
		rng := rand.New(rand.NewPCG(47, 5))
		var worstS, worstZ float64
		n, used := 0, 0
		for n < 1500 {
			a := evapAxes
			lz := a.valLo[0] + (a.valHi[0]-a.valLo[0])*rng.Float64()
			tb := a.valLo[1] + (a.valHi[1]-a.valLo[1])*rng.Float64()
			u := a.valLo[2] + (a.valHi[2]-a.valLo[2])*rng.Float64()
			ps := 101325 + a.valLo[3] + (a.valHi[3]-a.valLo[3])*rng.Float64()
			l := evLayer(lz, tb, u, ps)
			if mixed {
				l.SurfaceRH, l.WellMixed, u = 0, true, evMixedU
			}
			if _, Ts, _ := l.State(0); Ts > 320 {
				continue
			}
			rs := evapThreshold(l)
			r0 := rs * math.Exp(math.Log(10)*(2*rng.Float64()-1))
			if !(r0 < BeardDMax/2) {
				continue
			}
			n++
			kind, v := et.lookup(r0, math.Log(r0), u, &l, ps)
			if kind == evOutside {
				continue
			}
			used++
			d := EvaporateDirect(r0, l)
			if d.Reached != (kind == evReached) {
				t.Errorf("layer %+v, r0 %g: table reached %v, direct %v", l, r0, kind == evReached, d.Reached)
				continue
			}
			if d.Reached {
				worstS = math.Max(worstS, math.Abs(v-d.SurfaceRadius)/r0)
			} else {
				worstZ = math.Max(worstZ, math.Abs(v-d.EvapHeight)/l.BaseHeight)
			}
		}
		t.Logf("well mixed %v: %d drops, %d through the table; largest errors: surface radius/r0 %.3g, evaporation height/z_b %.3g", mixed, n, used, worstS, worstZ)
		if worstS > tableTol || worstZ > tableTol {
			t.Errorf("well mixed %v: evaporation table errors %.3g, %.3g > %g", mixed, worstS, worstZ, tableTol)
		}
		if used < n*9/10 {
			t.Errorf("well mixed %v: table used for %d of %d drops", mixed, used, n)
		}
	}
}
