package summary

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
	"time"
)

// logUniform draws from a log-uniform distribution on [lo, hi].
func logUniform(r *rand.Rand, lo, hi float64) float64 {
	return lo * math.Exp(r.Float64()*math.Log(hi/lo))
}

// flatScene is a 1 x n scene (one row of n columns, one time step) with dummy coordinates.
func flatScene(n int) Scene {
	lat := []float64{0}
	lon := make([]float64, n)
	for i := range lon {
		lon[i] = float64(i%360) - 180
	}
	return Scene{Lat: lat, Lon: lon, NY: 1, NX: n, NT: 1}
}

// Synthetic law used by the known-answer tests (invented for the test; its exponents are
// the answers):
//
//	POP = a (LWP / 100 g m-2)^b (N_d / 100 cm-3)^-s
//	I   = 0.37 (LWP[g m-2] / N_d[cm-3])^1.75 mm day-1   (Comstock et al. 2004 form, doc/science.md#drizzle-rate [from memory])
//
// Each column precipitates (POP indicator = 1, rate = I) with probability POP, else
// POP = 0 and rate = 0. LWP and N_d are drawn independently and log-uniformly, so the bin
// mean of N_d^-k over a logarithmic bin is proportional to the geometric centre^-k, and
// the fitted slopes are S_POP = s, S_I = 1.75 and S_R = s + 1.75 in expectation [derived].
const (
	lawA  = 0.1
	lawB  = 0.8
	lawS  = 0.6
	lawSI = 1.75
)

func lawPOP(lwp, nd float64) float64 {
	return lawA * math.Pow(lwp/0.100, lawB) * math.Pow(nd/100e6, -lawS)
}

func lawI(lwp, nd float64) float64 { // kg m-2 s-1
	return 0.37 * math.Pow((lwp*1e3)/(nd*1e-6), lawSI) / 86400
}

// predictedSlopeSE returns the standard deviation of a count-weighted least-squares
// slope when the ln(bin mean) have variances v_j (delta method) [derived]:
//
//	Var(b) = Σ n_j² (x_j - x̄)² v_j / (Σ n_j (x_j - x̄)²)²
func predictedSlopeSE(x, n, v []float64) float64 {
	var sw, sx float64
	for j := range x {
		sw += n[j]
		sx += n[j] * x[j]
	}
	xm := sx / sw
	var num, sxx float64
	for j := range x {
		d := x[j] - xm
		num += n[j] * n[j] * d * d * v[j]
		sxx += n[j] * d * d
	}
	return math.Sqrt(num) / sxx
}

func TestSusceptibilityRecoversLaw(t *testing.T) {
	t.Parallel()
	const n = 300000
	opt := Options{
		LWPEdges: LogEdges(0.040, 0.400, 5),
		NdEdges:  LogEdges(20e6, 800e6, 6),
		MinCount: 100,
	}
	r := rand.New(rand.NewPCG(1, 2))
	s := flatScene(n)
	c := Columns{
		LWP: Field{Name: "lwp", Data: make([]float64, n)}, Nd: Field{Name: "nd", Data: make([]float64, n)},
		POP: Field{Name: "pop", Data: make([]float64, n)}, Rate: Field{Name: "rate", Data: make([]float64, n)},
	}
	for k := 0; k < n; k++ {
		lwp, nd := logUniform(r, 0.040, 0.400), logUniform(r, 20e6, 800e6)
		c.LWP.Data[k], c.Nd.Data[k] = lwp, nd
		if r.Float64() < lawPOP(lwp, nd) {
			c.POP.Data[k], c.Rate.Data[k] = 1, lawI(lwp, nd)
		}
	}
	a, err := New(opt)
	if err != nil {
		t.Fatal(err)
	}
	if err := a.Add(s, &c); err != nil {
		t.Fatal(err)
	}
	res := a.Result()
	jt := &res.Joint
	x := make([]float64, res.Nd.N())
	for j := range x {
		x[j] = math.Log(res.Nd.Centre(j))
	}
	var ratio2 float64 // Σ (reported SE / predicted SE)² over LWP bins
	for i := 0; i < res.LWP.N(); i++ {
		nn, vp, vr := make([]float64, len(x)), make([]float64, len(x)), make([]float64, len(x))
		for j := range x {
			b := jt.Index(i, j)
			p := jt.MeanPOP[b]
			nn[j] = float64(jt.Count[b])
			vp[j] = (1 - p) / (nn[j] * p) // binomial: var(ln p̂) = (1-p)/(n p) [derived, delta method]
			vr[j] = math.Pow(jt.SERate[b]/jt.MeanRate[b], 2)
		}
		// Tolerance: 4 predicted standard deviations of the slope, from the bin counts.
		sdP, sdR := predictedSlopeSE(x, nn, vp), predictedSlopeSE(x, nn, vr)
		sp, sr, sc := res.SPOP[i], res.SRate[i], res.SCond[i]
		if sp.Bins != len(x) || sr.Bins != len(x) {
			t.Fatalf("LWP bin %d: fitted %d and %d N_d bins, want %d", i, sp.Bins, sr.Bins, len(x))
		}
		if math.Abs(sp.S-lawS) > 4*sdP {
			t.Errorf("LWP bin %d: S_POP = %.4f, want %.2f ± %.4f (4 sd, derived from the counts)", i, sp.S, lawS, 4*sdP)
		}
		if math.Abs(sr.S-(lawS+lawSI)) > 4*sdR {
			t.Errorf("LWP bin %d: S_R = %.4f, want %.2f ± %.4f", i, sr.S, lawS+lawSI, 4*sdR)
		}
		// var(S_I) <= var(S_R) + var(S_POP) because R̄ and POP̄ are positively correlated [derived].
		if tol := 4 * math.Hypot(sdP, sdR); math.Abs(sc.S-lawSI) > tol {
			t.Errorf("LWP bin %d: S_I = %.4f, want %.2f ± %.4f", i, sc.S, lawSI, tol)
		}
		// Terai et al. (2012) decomposition holds exactly for same-bin linear fits [derived].
		if math.Abs(sr.S-(sp.S+sc.S)) > 1e-9 {
			t.Errorf("LWP bin %d: S_R = %.12f, S_POP + S_I = %.12f", i, sr.S, sp.S+sc.S)
		}
		ratio2 += math.Pow(sp.SE/sdP, 2)
		t.Logf("LWP bin %d: S_POP %.4f (SE %.4f, predicted sd %.4f), S_R %.4f (sd %.4f), S_I %.4f", i, sp.S, sp.SE, sdP, sr.S, sdR, sc.S)
	}
	// The regression SE estimates sdP with (6-2) dof per LWP bin, 20 pooled: sqrt(chi2_20/20)
	// lies in [0.54, 1.51] with probability 0.998 [derived, chi-square quantiles].
	if q := math.Sqrt(ratio2 / float64(res.LWP.N())); q < 0.5 || q > 1.55 {
		t.Errorf("pooled regression SE / predicted SE = %.3f, want within [0.5, 1.55]", q)
	}
}

func TestBinCountsAddUp(t *testing.T) {
	t.Parallel()
	const n = 20000
	r := rand.New(rand.NewPCG(3, 4))
	s := flatScene(n)
	c := Columns{
		LWP: Field{Data: make([]float64, n)}, Nd: Field{Data: make([]float64, n)},
		POP: Field{Data: make([]float64, n)}, QC: make([]uint16, n),
	}
	wantValid, wantMasked := 0, 0
	for k := 0; k < n; k++ {
		lwp, nd, pop := logUniform(r, 0.005, 1.0), logUniform(r, 1e6, 3e9), r.Float64()
		switch r.IntN(10) {
		case 0:
			lwp = math.NaN()
		case 1:
			nd = -1
		case 2:
			pop = math.NaN()
		case 3:
			c.QC[k] = 4
		case 4:
			c.QC[k] = 1 // not in the mask below
		}
		c.LWP.Data[k], c.Nd.Data[k], c.POP.Data[k] = lwp, nd, pop
		switch {
		case c.QC[k]&4 != 0:
			wantMasked++
		case lwp > 0 && nd > 0 && !math.IsNaN(pop):
			wantValid++
		}
	}
	a, err := New(Options{QCMask: 4})
	if err != nil {
		t.Fatal(err)
	}
	if err := a.Add(s, &c); err != nil {
		t.Fatal(err)
	}
	res := a.Result()
	sum := 0
	for _, k := range res.Joint.Count {
		sum += k
	}
	cn := res.Counts
	if cn.Valid != wantValid || cn.Masked != wantMasked {
		t.Errorf("valid %d masked %d, want %d and %d", cn.Valid, cn.Masked, wantValid, wantMasked)
	}
	if sum+cn.OutOfRange != cn.Valid {
		t.Errorf("bin counts %d + out of range %d != valid %d", sum, cn.OutOfRange, cn.Valid)
	}
	if cn.OutOfRange == 0 || sum == 0 {
		t.Errorf("test data should fill bins and overflow them: in bins %d, outside %d", sum, cn.OutOfRange)
	}
	if cn.Valid+cn.Invalid+cn.Masked != cn.Selected || cn.Selected != n || cn.Seen != n {
		t.Errorf("counts do not add up: %+v", cn)
	}
}

func TestRegionContains(t *testing.T) {
	t.Parallel()
	box := func(a, b, c, d float64) *Region { return &Region{LatMin: a, LatMax: b, LonMin: c, LonMax: d} }
	for _, tc := range []struct {
		r        *Region
		lat, lon float64
		want     bool
	}{
		{nil, 10, 500, true},
		{nil, math.NaN(), 0, false},
		{box(-10, 10, -20, 10), 0, 350, true}, // box in -180..180, data in 0..360
		{box(-10, 10, -20, 10), 0, -15, true},
		{box(-10, 10, -20, 10), 0, 15, false},
		{box(-10, 10, -20, 10), 10, 10, true}, // edges included
		{box(-10, 10, -20, 10), 10.001, 0, false},
		{box(-10, 10, 340, 370), 0, 5, true},    // box in 0..360 past 360
		{box(-10, 10, 170, -170), 0, 180, true}, // crosses the antimeridian
		{box(-10, 10, 170, -170), 0, -175, true},
		{box(-10, 10, 170, -170), 0, 0, false},
		{box(-10, 10, 200, 240), 0, -140, true}, // 0..360 box, -180..180 data
		{box(-10, 10, -180, 180), 0, 33, true},  // whole circle
		{box(-10, 10, 0, 360), 0, -33, true},
	} {
		if got := tc.r.Contains(tc.lat, tc.lon); got != tc.want {
			t.Errorf("%+v.Contains(%g, %g) = %v, want %v", tc.r, tc.lat, tc.lon, got, tc.want)
		}
	}
}

// gridScene is a 1-degree global-ish grid: lat -30..30, lon lon0..lon0+359, nt steps
// one hour apart from t0.
func gridScene(lon0 float64, nt int, t0 time.Time) Scene {
	s := Scene{NY: 61, NX: 360, NT: nt}
	for y := 0; y < s.NY; y++ {
		s.Lat = append(s.Lat, float64(y-30))
	}
	for x := 0; x < s.NX; x++ {
		s.Lon = append(s.Lon, lon0+float64(x))
	}
	for k := 0; k < nt; k++ {
		s.Time = append(s.Time, unixSeconds(t0.Add(time.Duration(k)*time.Hour)))
	}
	return s
}

func constColumns(s Scene) *Columns {
	n := s.NT * s.NY * s.NX
	c := &Columns{LWP: Field{Data: make([]float64, n)}, Nd: Field{Data: make([]float64, n)}, POP: Field{Data: make([]float64, n)}}
	for k := 0; k < n; k++ {
		c.LWP.Data[k], c.Nd.Data[k], c.POP.Data[k] = 0.1, 100e6, 0.5
	}
	return c
}

func TestRegionAndTimeSelectionCounts(t *testing.T) {
	t.Parallel()
	t0 := time.Date(2026, 7, 1, 0, 0, 0, 0, time.UTC)
	for _, tc := range []struct {
		name   string
		lon0   float64
		region *Region
		window Window
		want   int // derived by counting integer degrees by hand
	}{
		// lat 0..10 (11 rows) × lon 340..359 and 0..10 (31 columns) × 2 of 4 hours
		{"0..360 data, box across 0", 0, &Region{0, 10, -20, 10}, Window{Start: t0.Add(time.Hour), End: t0.Add(3 * time.Hour)}, 11 * 31 * 2},
		// lat -5..5 (11) × lon 170..179 and -180..-170 (21) × all 4 hours
		{"-180..180 data, box across 180", -180, &Region{-5, 5, 170, -170}, Window{}, 11 * 21 * 4},
		// whole grid, open-ended window from hour 3: 1 step
		{"open end window", -180, nil, Window{Start: t0.Add(3 * time.Hour)}, 61 * 360},
		// window before the data: nothing
		{"window before data", 0, nil, Window{End: t0}, 0},
	} {
		s := gridScene(tc.lon0, 4, t0)
		a, err := New(Options{Region: tc.region, Window: tc.window})
		if err != nil {
			t.Fatal(err)
		}
		if err := a.Add(s, constColumns(s)); err != nil {
			t.Fatal(err)
		}
		res := a.Result()
		if res.Counts.Selected != tc.want || res.Counts.Valid != tc.want {
			t.Errorf("%s: selected %d valid %d, want %d", tc.name, res.Counts.Selected, res.Counts.Valid, tc.want)
		}
		if res.Counts.Seen != 4*61*360 {
			t.Errorf("%s: seen %d", tc.name, res.Counts.Seen)
		}
	}
}

func TestSwathSelection(t *testing.T) {
	t.Parallel()
	// 2-D coordinates: a 3 x 4 swath; lat = y, lon = 178 + x (crossing 180 written as 0..360)
	s := Scene{NY: 3, NX: 4, NT: 1}
	for y := 0; y < 3; y++ {
		for x := 0; x < 4; x++ {
			s.Lat = append(s.Lat, float64(y))
			s.Lon = append(s.Lon, 178+float64(x))
		}
	}
	if !s.TwoD() {
		t.Fatal("scene should have 2-D coordinates")
	}
	a, err := New(Options{Region: &Region{LatMin: 1, LatMax: 2, LonMin: -180, LonMax: -179}})
	if err != nil {
		t.Fatal(err)
	}
	if err := a.Add(s, constColumns(s)); err != nil {
		t.Fatal(err)
	}
	// lon 180 and 181 (= -180, -179) in rows 1 and 2: 4 columns [derived by hand]
	if got := a.Result().Counts.Selected; got != 4 {
		t.Errorf("selected %d, want 4", got)
	}
}

func TestBootstrapMatchesRegressionForLinearModel(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	t.Parallel()
	// Linear model in logs with equal per-column relative spread in every bin, so count
	// weights are the right weights and the regression SE is a fair estimate:
	//   POP_i = A N_i^-s exp(σ ε_i), ε ~ N(0,1), N log-uniform within each N_d bin.
	const (
		nPer  = 500
		nLWP  = 6
		nNd   = 12
		sigma = 0.3
		s     = 0.5
		B     = 400
	)
	lwpEdges := LogEdges(0.05, 0.35, nLWP)
	ndEdges := LogEdges(10e6, 1000e6, nNd)
	r := rand.New(rand.NewPCG(5, 6))
	total := nPer * nLWP * nNd
	sc := flatScene(total)
	c := Columns{LWP: Field{Data: make([]float64, 0, total)}, Nd: Field{Data: make([]float64, 0, total)}, POP: Field{Data: make([]float64, 0, total)}}
	for i := 0; i < nLWP; i++ {
		for j := 0; j < nNd; j++ {
			for k := 0; k < nPer; k++ {
				lwp := logUniform(r, lwpEdges[i], lwpEdges[i+1])
				nd := logUniform(r, ndEdges[j], ndEdges[j+1])
				c.LWP.Data = append(c.LWP.Data, lwp)
				c.Nd.Data = append(c.Nd.Data, nd)
				c.POP.Data = append(c.POP.Data, 0.2*math.Pow(nd/100e6, -s)*math.Exp(sigma*r.NormFloat64()))
			}
		}
	}
	a, err := New(Options{LWPEdges: lwpEdges, NdEdges: ndEdges, Bootstrap: B, Seed: 42})
	if err != nil {
		t.Fatal(err)
	}
	if err := a.Add(sc, &c); err != nil {
		t.Fatal(err)
	}
	res := a.Result()

	// True slope SD [derived]: var(ln mean_j) = CV²/n with the per-column CV² of
	// N^-s e^{σε} for N log-uniform over a bin of log width Δ:
	//   E[N^-k] ∝ (1 - e^{-kΔ})/(kΔ),  CV² = E[N^-2s] e^{2σ²} / (E[N^-s] e^{σ²/2})² - 1
	d := math.Log(ndEdges[1] / ndEdges[0])
	m := func(k float64) float64 { return (1 - math.Exp(-k*d)) / (k * d) }
	cv2 := m(2*s)*math.Exp(2*sigma*sigma)/math.Pow(m(s)*math.Exp(sigma*sigma/2), 2) - 1
	var sxx float64
	x := make([]float64, nNd)
	var xm float64
	for j := range x {
		x[j] = math.Log(res.Nd.Centre(j))
		xm += x[j] / nNd
	}
	for j := range x {
		sxx += nPer * (x[j] - xm) * (x[j] - xm)
	}
	trueSD := math.Sqrt(cv2 / sxx)

	var reg2, boot2 float64
	for i, sl := range res.SPOP {
		if sl.BootN != B {
			t.Errorf("LWP bin %d: %d bootstrap slopes, want %d", i, sl.BootN, B)
		}
		if math.Abs(sl.S-s) > 4*trueSD {
			t.Errorf("LWP bin %d: S_POP %.4f, want %.2f ± %.4f", i, sl.S, s, 4*trueSD)
		}
		// Bootstrap SE: relative sampling error about 1/sqrt(2B) = 3.5% [common practice];
		// 15% allows 4 of those.
		if q := sl.BootSE / trueSD; q < 0.85 || q > 1.15 {
			t.Errorf("LWP bin %d: bootstrap SE %.5f is %.3f of the derived %.5f, want within 15%%", i, sl.BootSE, q, trueSD)
		}
		reg2 += sl.SE * sl.SE
		t.Logf("LWP bin %d: S_POP %.4f, regression SE %.5f, bootstrap SE %.5f, derived sd %.5f", i, sl.S, sl.SE, sl.BootSE, trueSD)
		boot2 += sl.BootSE * sl.BootSE
	}
	// Regression SE with 10 dof per LWP bin, 60 pooled: sqrt(chi2_60/60) lies in
	// [0.73, 1.29] with probability 0.998 [derived, chi-square quantiles].
	if q := math.Sqrt(reg2 / boot2); q < 0.7 || q > 1.32 {
		t.Errorf("pooled regression SE / bootstrap SE = %.3f, want within [0.7, 1.32]", q)
	}

	// Deterministic: the same seed gives the same bootstrap, another seed another one.
	again := func(seed uint64) float64 {
		a, _ := New(Options{LWPEdges: lwpEdges, NdEdges: ndEdges, Bootstrap: 50, Seed: seed})
		if err := a.Add(sc, &c); err != nil {
			t.Fatal(err)
		}
		return a.Result().SPOP[0].BootSE
	}
	if x, y := again(7), again(7); x != y {
		t.Errorf("same seed gave bootstrap SE %v and %v", x, y)
	}
	if x, y := again(7), again(8); x == y {
		t.Errorf("seeds 7 and 8 gave the same bootstrap SE %v", x)
	}
}

func TestWeightedSlope(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		x, y, w []float64
		b, se   float64 // derived by hand
	}{
		{[]float64{0, 1, 2}, []float64{1, 3, 5}, []float64{1, 1, 1}, 2, 0},
		// b = 1.5; residuals 1/6, -1/3, 1/6; SE = sqrt((1/6)/1/2) = 0.288675
		{[]float64{0, 1, 2}, []float64{0, 1, 3}, []float64{1, 1, 1}, 1.5, math.Sqrt(1.0 / 12)},
		// doubling every weight changes neither b nor SE (relative weights)
		{[]float64{0, 1, 2}, []float64{0, 1, 3}, []float64{2, 2, 2}, 1.5, math.Sqrt(1.0 / 12)},
		{[]float64{0, 1}, []float64{0, 1}, []float64{1, 1}, 1, math.NaN()},
		{[]float64{1, 1, 1}, []float64{0, 1, 2}, []float64{1, 1, 1}, math.NaN(), math.NaN()},
	} {
		b, se := WeightedSlope(tc.x, tc.y, tc.w)
		if !close(b, tc.b, 1e-12) || !close(se, tc.se, 1e-12) {
			t.Errorf("WeightedSlope(%v, %v, %v) = %v, %v; want %v, %v", tc.x, tc.y, tc.w, b, se, tc.b, tc.se)
		}
	}
}

func close(a, b, tol float64) bool {
	if math.IsNaN(a) || math.IsNaN(b) {
		return math.IsNaN(a) && math.IsNaN(b)
	}
	return math.Abs(a-b) <= tol*math.Max(1, math.Abs(b))
}

func TestSurfaceFraction(t *testing.T) {
	t.Parallel()
	// 7 columns in two LWP bins (the last outside): cloud-base rate R_CB and surface rate
	// R_sfc (rates in mm day-1 / 86400; the ratio does not depend on units). Column 2 has
	// no surface rate, column 3 no cloud-base drizzle; both are left out.
	const d = 1.0 / 86400
	s := flatScene(7)
	c := Columns{
		LWP:         Field{Data: []float64{0.03, 0.03, 0.03, 0.03, 0.3, 0.3, 0.9}},
		Nd:          Field{Data: []float64{50e6, 50e6, 50e6, 50e6, 50e6, 50e6, 50e6}},
		POP:         Field{Data: []float64{0.1, 0.1, 0.1, 0, 0.9, 0.9, 1}},
		Rate:        Field{Data: []float64{0.01 * d, 0.03 * d, 0.02 * d, 0, 1 * d, 3 * d, 5 * d}},
		SurfaceRate: Field{Data: []float64{0, 0.01 * d, math.NaN(), 0, 0.5 * d, 2.5 * d, 4 * d}},
	}
	a, err := New(Options{LWPEdges: []float64{0.02, 0.1, 0.5}})
	if err != nil {
		t.Fatal(err)
	}
	if err := a.Add(s, &c); err != nil {
		t.Fatal(err)
	}
	res := a.Result()
	if !res.HaveSurface {
		t.Fatal("HaveSurface false with a surface rate")
	}
	// Ratios of sums [derived by hand]: bin 0: 0.01/(0.01+0.03) = 0.25 (a mean of the
	// column ratios would give 1/6); bin 1: 3/4; all: 7.01/9.04.
	for _, tc := range []struct {
		name string
		f    Fraction
		want float64
		n    int
	}{{"all", res.Surface, 7.01 / 9.04, 5}, {"bin 0", res.SurfaceByLWP[0], 0.25, 2}, {"bin 1", res.SurfaceByLWP[1], 0.75, 2}} {
		if !close(tc.f.Value, tc.want, 1e-12) || tc.f.Columns != tc.n {
			t.Errorf("%s: %+v, want %g over %d columns", tc.name, tc.f, tc.want, tc.n)
		}
	}

	// By cloud-base height [derived by hand, BaseHeightEdges 0, 200, 400, 600, 800, ...,
	// 2000, 3000 m]: column 0 (100 m) 0/0.01; column 1 (300 m) 0.01/0.03; columns 4 and 5
	// (700 m) 3/4; column 6 (2500 m, outside the LWP bins but counted) 4/5. Columns 2 and 3
	// stay out as above.
	c.BaseHeight = Field{Data: []float64{100, 300, 300, 100, 700, 700, 2500}}
	z, _ := New(Options{LWPEdges: []float64{0.02, 0.1, 0.5}})
	if err := z.Add(s, &c); err != nil {
		t.Fatal(err)
	}
	byBase := z.Result()
	if !byBase.HaveBase || len(byBase.SurfaceByBase) != len(BaseHeightEdges)-1 {
		t.Fatalf("HaveBase %v, %d base bins", byBase.HaveBase, len(byBase.SurfaceByBase))
	}
	for _, tc := range []struct {
		bin  int
		want float64
		n    int
	}{{0, 0, 1}, {1, 1.0 / 3, 1}, {3, 0.75, 2}, {7, 0.8, 1}} {
		if f := byBase.SurfaceByBase[tc.bin]; !close(f.Value, tc.want, 1e-12) || f.Columns != tc.n {
			t.Errorf("base bin %d: %+v, want %g over %d columns", tc.bin, f, tc.want, tc.n)
		}
	}
	for _, i := range []int{2, 4, 5, 6} {
		if f := byBase.SurfaceByBase[i]; f.Columns != 0 {
			t.Errorf("base bin %d holds %d columns, want none", i, f.Columns)
		}
	}
	var tb bytes.Buffer
	if err := WriteTable(&tb, byBase); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(tb.String(), "by cloud-base height") || !strings.Contains(tb.String(), "2000-3000     0.800") {
		t.Errorf("table has no base-height fraction:\n%s", tb.String())
	}
	c.BaseHeight = Field{}

	// Older processed files: no surface rate, no fraction, and the table says so.
	c.SurfaceRate = Field{}
	b, _ := New(Options{LWPEdges: []float64{0.02, 0.1, 0.5}})
	if err := b.Add(s, &c); err != nil {
		t.Fatal(err)
	}
	old := b.Result()
	if old.HaveSurface || !math.IsNaN(old.Surface.Value) {
		t.Errorf("without a surface rate: HaveSurface %v, value %g", old.HaveSurface, old.Surface.Value)
	}
	var buf bytes.Buffer
	if err := WriteTable(&buf, old); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(buf.String(), "no surface drizzle rate") {
		t.Errorf("table without a surface rate does not say so:\n%s", buf.String())
	}
	for _, v := range old.Variables() {
		if v.Name == "surface_drizzle_fraction" {
			t.Error("surface_drizzle_fraction written without a surface rate")
		}
	}
}

func TestJointMeans(t *testing.T) {
	t.Parallel()
	// Two columns in one bin, one in another; means and SE by hand [derived].
	s := flatScene(3)
	c := Columns{
		LWP:  Field{Data: []float64{0.05, 0.06, 0.3}},
		Nd:   Field{Data: []float64{50e6, 60e6, 50e6}},
		POP:  Field{Data: []float64{0.2, 0.4, 0.9}},
		Rate: Field{Data: []float64{1e-6, 3e-6, math.NaN()}},
	}
	a, _ := New(Options{LWPEdges: []float64{0.02, 0.1, 0.5}, NdEdges: []float64{10e6, 100e6}, MinDrizzling: 0.5})
	if err := a.Add(s, &c); err != nil {
		t.Fatal(err)
	}
	jt := a.Result().Joint
	b := jt.Index(0, 0)
	if jt.Count[b] != 2 || !close(jt.MeanPOP[b], 0.3, 1e-12) || !close(jt.SEPOP[b], 0.1, 1e-12) ||
		!close(jt.MeanRate[b], 2e-6, 1e-12) || !close(jt.MeanCond[b], 2e-6/0.3, 1e-12) {
		t.Errorf("bin (0,0): n %d POP %v ± %v rate %v I %v", jt.Count[b], jt.MeanPOP[b], jt.SEPOP[b], jt.MeanRate[b], jt.MeanCond[b])
	}
	b = jt.Index(1, 0)
	if jt.Count[b] != 1 || jt.CountRate[b] != 0 || !math.IsNaN(jt.MeanRate[b]) || !math.IsNaN(jt.SEPOP[b]) {
		t.Errorf("bin (1,0): n %d nRate %d rate %v SE %v", jt.Count[b], jt.CountRate[b], jt.MeanRate[b], jt.SEPOP[b])
	}
}

func TestTimeMeanEqualsSimpleMean(t *testing.T) {
	t.Parallel()
	r := rand.New(rand.NewPCG(9, 10))
	t0 := time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC)
	const ny, nx, nt, files = 4, 5, 2, 3
	sum := make([]float64, ny*nx)
	cnt := make([]int32, ny*nx)
	m, err := NewMaps(&Region{LatMin: -90, LatMax: 90, LonMin: 0, LonMax: 30}, Window{End: t0.Add(5 * time.Hour)})
	if err != nil {
		t.Fatal(err)
	}
	lon := []float64{0, 10, 20, 30, 40} // lon 40 is outside the region
	for f := 0; f < files; f++ {
		s := Scene{Lat: []float64{-3, -1, 1, 3}, Lon: lon, NY: ny, NX: nx, NT: nt}
		for k := 0; k < nt; k++ {
			s.Time = append(s.Time, unixSeconds(t0.Add(time.Duration(f*nt+k)*time.Hour)))
		}
		pop := Field{Name: "pop", Units: "1", LongName: "drizzle probability", Data: make([]float64, nt*ny*nx)}
		rate := Field{Name: "rate", Units: "kg m-2 s-1", Data: make([]float64, nt*ny*nx)}
		for i := range pop.Data {
			pop.Data[i] = r.Float64()
			rate.Data[i] = r.Float64() * 1e-5
			if r.IntN(4) == 0 {
				pop.Data[i] = math.NaN()
			}
			step := f*nt + i/(ny*nx)
			cell := i % (ny * nx)
			if step < 5 && cell%nx != 4 && !math.IsNaN(pop.Data[i]) {
				sum[cell] += pop.Data[i]
				cnt[cell]++
			}
		}
		// fields in a different order on the second file: matched by name
		var err error
		if f == 1 {
			err = m.Accumulate(s, rate, pop)
		} else {
			err = m.Accumulate(s, pop, rate)
		}
		if err != nil {
			t.Fatal(err)
		}
	}
	res := m.Result()
	if res.Steps != 5 || res.TimeMin != unixSeconds(t0) || res.TimeMax != unixSeconds(t0.Add(4*time.Hour)) {
		t.Errorf("steps %d, time %v..%v", res.Steps, res.TimeMin, res.TimeMax)
	}
	got := res.Maps[0]
	if got.Mean.Name != "pop" || got.Mean.LongName != "time mean of drizzle probability" {
		t.Errorf("map 0 is %q / %q", got.Mean.Name, got.Mean.LongName)
	}
	for c := range sum {
		want := math.NaN()
		if cnt[c] > 0 {
			want = sum[c] / float64(cnt[c])
		}
		if got.Count[c] != cnt[c] || !close(got.Mean.Data[c], want, 1e-12) {
			t.Errorf("cell %d: mean %v (n %d), want %v (n %d)", c, got.Mean.Data[c], got.Count[c], want, cnt[c])
		}
	}
	// a different grid is refused
	bad := Scene{Lat: []float64{-3, -1, 1, 3}, Lon: []float64{0, 10, 20, 30, 41}, NY: ny, NX: nx, NT: 1}
	if err := m.Accumulate(bad, Field{Name: "pop", Data: make([]float64, ny*nx)}, Field{Name: "rate", Data: make([]float64, ny*nx)}); !errors.Is(err, ErrGrid) {
		t.Errorf("different grid: err %v, want ErrGrid", err)
	}
}

func TestShapeErrors(t *testing.T) {
	t.Parallel()
	s := flatScene(4)
	c := Columns{LWP: Field{Name: "lwp_x", Data: make([]float64, 3)}, Nd: Field{Data: make([]float64, 4)}, POP: Field{Data: make([]float64, 4)}}
	a, _ := New(Options{})
	err := a.Add(s, &c)
	if !errors.Is(err, ErrShape) || !strings.Contains(err.Error(), "lwp_x") {
		t.Errorf("err = %v, want ErrShape naming lwp_x", err)
	}
	if a.Result().Counts.Seen != 0 {
		t.Error("a refused scene was partly added")
	}
	if err := (Scene{Lat: []float64{0, 1}, Lon: []float64{0}, NY: 1, NX: 1, NT: 1}).Check(); !errors.Is(err, ErrShape) {
		t.Errorf("bad coordinates: %v", err)
	}
	for _, o := range []Options{
		{LWPEdges: []float64{0.1}},
		{NdEdges: []float64{0, 1e8}},
		{NdEdges: []float64{2e8, 1e8}},
		{MinBins: 2},
		{Region: &Region{LatMin: 10, LatMax: 0}},
		{Window: Window{Start: time.Unix(100, 0), End: time.Unix(50, 0)}},
	} {
		if _, err := New(o); err == nil {
			t.Errorf("New(%+v) accepted bad options", o)
		}
	}
}

func TestAxisFind(t *testing.T) {
	t.Parallel()
	a := Axis{Edges: []float64{1, 2, 4}}
	for _, tc := range []struct {
		v    float64
		want int
	}{{0.5, -1}, {1, 0}, {1.99, 0}, {2, 1}, {4, 1}, {4.01, -1}, {math.NaN(), -1}} {
		if got := a.Find(tc.v); got != tc.want {
			t.Errorf("Find(%v) = %d, want %d", tc.v, got, tc.want)
		}
	}
	e := LogEdges(10, 1000, 4)
	if e[0] != 10 || e[4] != 1000 || !close(e[2], 100, 1e-12) || !close(a.Centre(1), math.Sqrt(8), 1e-15) {
		t.Errorf("LogEdges = %v", e)
	}
}

func TestWriteTable(t *testing.T) {
	t.Parallel()
	r := rand.New(rand.NewPCG(11, 12))
	const n = 50000
	s := flatScene(n)
	c := Columns{LWP: Field{Data: make([]float64, n)}, Nd: Field{Data: make([]float64, n)},
		POP: Field{Data: make([]float64, n)}, Rate: Field{Data: make([]float64, n)}, SurfaceRate: Field{Data: make([]float64, n)}}
	for k := 0; k < n; k++ {
		lwp, nd := logUniform(r, 0.02, 0.5), logUniform(r, 10e6, 1000e6)
		c.LWP.Data[k], c.Nd.Data[k] = lwp, nd
		c.POP.Data[k] = math.Min(1, lawPOP(lwp, nd))
		c.Rate.Data[k] = c.POP.Data[k] * lawI(lwp, nd)
		c.SurfaceRate.Data[k] = c.Rate.Data[k] * r.Float64()
	}
	a, _ := New(Options{Bootstrap: 20, Seed: 1, Region: &Region{-90, 90, -180, 180}})
	if err := a.Add(s, &c); err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := WriteTable(&buf, a.Result()); err != nil {
		t.Fatal(err)
	}
	out := buf.String()
	for _, want := range []string{
		"50000 valid", "Mean drizzle probability POP (1)", "Mean cloud-base drizzle rate, cell mean R (mm day-1)",
		"Conditional rate I = mean R / mean POP", "set by the N_d exponent c of the drizzle law",
		"S_POP", "S_R", "S_I", "boot", "20-27.6", "631-1000", "10-15.8", "reaching the surface", "Region: latitude -90 to 90",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("table lacks %q", want)
		}
	}
	if testing.Verbose() {
		t.Log("\n" + out)
	}
}

func TestVariablesShapes(t *testing.T) {
	t.Parallel()
	s, c := benchColumns(5000)
	a, _ := New(Options{Bootstrap: 5, Window: Window{End: time.Unix(1, 0)}})
	_ = a.Add(s, c) // no time axis: nothing selected by the window, still a valid (empty) result
	a2, _ := New(Options{Bootstrap: 5})
	if err := a2.Add(s, c); err != nil {
		t.Fatal(err)
	}
	for _, r := range []*Result{a.Result(), a2.Result()} {
		dims := r.Dims()
		names := map[string]bool{}
		vs := r.Variables()
		for _, v := range vs {
			names[v.Name] = true
		}
		for _, v := range vs {
			n := 1
			for _, d := range v.Dims {
				if dims[d] == 0 {
					t.Errorf("%s: unknown dimension %q", v.Name, d)
				}
				n *= dims[d]
			}
			if len(v.Data) != n {
				t.Errorf("%s: %d values for dims %v (%d)", v.Name, len(v.Data), v.Dims, n)
			}
			if v.Bounds != "" && !names[v.Bounds] {
				t.Errorf("%s: bounds %q missing", v.Name, v.Bounds)
			}
			for _, anc := range strings.Fields(v.Ancillary) {
				if !names[anc] {
					t.Errorf("%s: ancillary %q missing", v.Name, anc)
				}
			}
		}
		if len(names) != len(vs) {
			t.Error("duplicate variable names")
		}
		if r.Attributes()["columns_valid"] != fmt.Sprint(r.Counts.Valid) {
			t.Error("columns_valid attribute wrong")
		}
	}
	if got := a.Result().Counts.Selected; got != 0 {
		t.Errorf("a window selects no step of a scene without time; selected %d", got)
	}
	if got := a.Result().Attributes()["time_window"]; got != "open to 1970-01-01T00:00:01Z (end excluded)" {
		t.Errorf("time_window = %q", got)
	}
}

// TestMinDrizzling checks the floor on expected drizzling columns (n × mean POP): a bin
// below it shows no conditional rate and leaves every fit, so that S_POP, S_R and S_I use
// the same bins and S_R = S_POP + S_I (Terai et al. 2012 decomposition, from memory;
// derived for equal bins).
func TestMinDrizzling(t *testing.T) {
	t.Parallel()
	// 4 N_d bins × 100 columns, POP = 0.5 (N/N0)^-2 and R = POP × I with I ∝ N^-1.75
	// (derived: S_POP 2, S_I 1.75); the last bin has POP 0.5 × 64^-1... below 10 columns.
	edges := LogEdges(10e6, 1000e6, 4)
	nds := Axis{Edges: edges}.Centres()
	var c Columns
	for _, n := range nds {
		for k := 0; k < 100; k++ {
			pop := 0.5 * math.Pow(n/nds[0], -2)
			c.LWP.Data = append(c.LWP.Data, 0.1)
			c.Nd.Data = append(c.Nd.Data, n)
			c.POP.Data = append(c.POP.Data, pop)
			c.Rate.Data = append(c.Rate.Data, pop*1e-5*math.Pow(n/nds[0], -1.75))
		}
	}
	s := Scene{Lat: make([]float64, 1), Lon: make([]float64, len(c.LWP.Data)), NY: 1, NX: len(c.LWP.Data), NT: 1}
	a, _ := New(Options{LWPEdges: []float64{0.05, 0.2}, NdEdges: edges})
	if err := a.Add(s, &c); err != nil {
		t.Fatal(err)
	}
	r := a.Result()
	// expected drizzling columns per bin: 50, 3.2, 0.2, 0.013 (derived): only bin 0 has 10
	if n := r.SPOP[0].Bins; n != 1 || !math.IsNaN(r.Joint.MeanCond[1]) || math.IsNaN(r.Joint.MeanCond[0]) {
		t.Errorf("default floor 10: %d bins fitted, conditional rates %v", n, r.Joint.MeanCond)
	}
	a, _ = New(Options{LWPEdges: []float64{0.05, 0.2}, NdEdges: edges, MinDrizzling: 0.1})
	_ = a.Add(s, &c)
	r = a.Result()
	sp, sr, si := r.SPOP[0], r.SRate[0], r.SCond[0]
	if sp.Bins != 3 || sr.Bins != 3 || si.Bins != 3 {
		t.Fatalf("floor 0.1: bins %d %d %d, want 3", sp.Bins, sr.Bins, si.Bins)
	}
	if !close(sp.S, 2, 1e-9) || !close(si.S, 1.75, 1e-9) || !close(sr.S, sp.S+si.S, 1e-12) {
		t.Errorf("S_POP %g (want 2), S_I %g (want 1.75), S_R %g (want their sum)", sp.S, si.S, sr.S)
	}
	if _, err := New(Options{MinDrizzling: -1}); err == nil {
		t.Error("negative MinDrizzling accepted")
	}
}
