package microphys

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os/exec"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// dsdLayer is a sub-cloud layer of base height zb (m) and base temperature tb (K) above a
// surface at 1013.25 hPa, well mixed or with surface humidity rh.
func dsdLayer(zb, tb, rh float64, mixed bool) SubCloudLayer {
	return SubCloudLayer{BaseHeight: zb, BaseT: tb, BaseP: dryBasePressure(tb, zb, 101325), SurfaceRH: rh, WellMixed: mixed}
}

// TestDrizzleDSDMoments checks the distribution's normalization, mean radius and fourth
// moment by dsdIntegral against the closed forms of the shifted gamma distribution (derived:
// X = r - r_min ~ Gamma(mu + 1, lambda), E[X^n] = Gamma(mu + 1 + n)/(Gamma(mu + 1) lambda^n)).
func TestDrizzleDSDMoments(t *testing.T) {
	t.Parallel()
	for _, d := range []DrizzleDSD{DefaultDrizzleDSD(), {MeanRadius: 80e-6, MinRadius: 0}, {MeanRadius: 60e-6, MinRadius: 20e-6, Shape: 2}, {MeanRadius: 30e-6, MinRadius: 25e-6, Shape: 5.5}} {
		lam, mu, r0 := d.lambda(), d.Shape, d.MinRadius
		mom := func(n int) float64 { // E[X^n]
			a, _ := math.Lgamma(mu + 1 + float64(n))
			b, _ := math.Lgamma(mu + 1)
			return math.Exp(a-b) / math.Pow(lam, float64(n))
		}
		// E[r^4] = sum_k C(4, k) r0^(4-k) E[X^k]
		want4 := 0.0
		for k, c := range []float64{1, 4, 6, 4, 1} {
			want4 += c * math.Pow(r0, float64(4-k)) * mom(k)
		}
		one := d.dsdIntegral(r0, func(float64) float64 { return 1 })
		mean := d.dsdIntegral(r0, func(r float64) float64 { return r })
		m4 := d.dsdIntegral(r0, func(r float64) float64 { return r * r * r * r })
		// 24 Gauss-Legendre nodes (dsdPanels): within 1e-6 even for the narrow, peaked shape 5.5
		// (2e-7 measured), far below the 0.5 % table bound.
		if !scalar.EqualWithinRel(one, 1, 1e-6) || !scalar.EqualWithinRel(mean, d.MeanRadius, 1e-6) || !scalar.EqualWithinRel(m4, want4, 1e-6) {
			t.Errorf("%+v: integral of f %.12g (want 1), mean %.12g (want %g), E[r^4] %.12g (want %.12g)", d, one, mean, d.MeanRadius, m4, want4)
		}
	}
	if v := (DrizzleDSD{MeanRadius: 10e-6, MinRadius: 20e-6}).PDF(30e-6); !math.IsNaN(v) {
		t.Errorf("PDF of an invalid distribution = %g, want NaN", v)
	}
}

// linearFraction is F of an exponential distribution (r_min = 0, slope lambda) for drops
// falling at V = k r through still air of constant state without ventilation: r^2 falls at
// 2A per second and z at k r, so r_s^3 = r0^3 - r*^3 (derived: the closed form of
// EvaporateConstant), and with x = lambda r* and the upper incomplete gamma function
// Gamma(n, x) = (n-1)! e^-x sum_{k<n} x^k/k! for integer n,
//
//	F = int_{r*} (r^3 - r*^3) r f dr / int r^4 f dr = (Gamma(5, x) - x^3 Gamma(2, x))/4!
func linearFraction(x float64) float64 {
	g5 := 24 * math.Exp(-x) * (1 + x + x*x/2 + x*x*x/6 + x*x*x*x/24)
	g2 := math.Exp(-x) * (1 + x)
	return (g5 - x*x*x*g2) / 24
}

// TestSurfaceFractionClosedForm checks the flux-fraction quadrature (dsdIntegral with the
// substitution r = r* + t^4) against the closed form linearFraction (derived) and, for a
// truncated gamma distribution, against scipy.integrate.quad of the same integrals
// (independent quadrature; skipped without Debian's python3-scipy).
func TestSurfaceFractionClosedForm(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	t.Parallel()
	const k = 8000.0 // s-1: V = k r, about the Beard speed of 100-500 µm drops (Gunn and Kinzer 1949, from memory)
	V := func(r float64) float64 { return k * r }
	frac := func(d DrizzleDSD, rstar float64) float64 {
		rs := func(r float64) float64 { return math.Cbrt(r*r*r - rstar*rstar*rstar) }
		return d.fluxMoment(math.Max(rstar, d.MinRadius), V, rs) / d.fluxMoment(d.MinRadius, V, nil)
	}
	d := DrizzleDSD{MeanRadius: 50e-6}
	for _, rstar := range []float64{10e-6, 50e-6, 150e-6, 300e-6, 600e-6} {
		got, want := frac(d, rstar), linearFraction(rstar/d.MeanRadius)
		if !scalar.EqualWithinAbsOrRel(got, want, 1e-12, 1e-7) {
			t.Errorf("r* %g: F %.10g, closed form %.10g", rstar, got, want)
		}
	}
	py := findScipyPython()
	if py == "" {
		t.Skip("no python3 with scipy (Debian: python3-scipy)")
	}
	g := DrizzleDSD{MeanRadius: 60e-6, MinRadius: 20e-6, Shape: 2}
	rstars := []float64{30e-6, 120e-6, 250e-6}
	in, _ := json.Marshal(map[string]any{"lam": g.lambda(), "mu": g.Shape, "rmin": g.MinRadius, "rstar": rstars})
	const script = `
import json, math, sys
from scipy.integrate import quad
d = json.load(sys.stdin)
lam, mu, r0 = d["lam"], d["mu"], d["rmin"]
f = lambda r: lam**(mu+1)*(r-r0)**mu*math.exp(-lam*(r-r0))/math.gamma(mu+1)
den = quad(lambda r: r**4*f(r), r0, math.inf, epsabs=0, epsrel=1e-12, limit=200)[0]
out = []
for rs in d["rstar"]:
    a = max(rs, r0)
    num = quad(lambda r: (r**3-rs**3)*r*f(r), a, math.inf, epsabs=0, epsrel=1e-12, limit=200)[0]
    out.append(num/den)
print(json.dumps(out))
`
	cmd := exec.Command(py, "-c", script)
	cmd.Stdin = strings.NewReader(string(in))
	b, err := cmd.Output()
	if err != nil {
		t.Fatalf("scipy: %v", err)
	}
	var want []float64
	if err := json.Unmarshal(b, &want); err != nil {
		t.Fatal(err)
	}
	for i, rstar := range rstars {
		if got := frac(g, rstar); !scalar.EqualWithinAbsOrRel(got, want[i], 1e-12, 1e-7) {
			t.Errorf("gamma distribution, r* %g: F %.10g, scipy quad %.10g", rstar, got, want[i])
		}
	}
}

// TestSurfaceFractionAgainstClasses checks SurfaceDrizzleFraction against a sum over 1500 size
// classes (midpoint rule in r from r_min to the quadrature's upper radius), each carried down
// by EvaporateDirect with its cloud-base number flux (derived: the same model, an independent
// quadrature), for an exponential distribution and layers of both humidity profiles.
func TestSurfaceFractionAgainstClasses(t *testing.T) {
	if testing.Short() {
		t.Skip("direct integration of 9000 drops")
	}
	t.Parallel()
	d := DefaultDrizzleDSD()
	for _, l := range []SubCloudLayer{dsdLayer(150, 287, 0, true), dsdLayer(500, 283, 0, true), dsdLayer(900, 290, 0, true),
		dsdLayer(300, 285, 0.8, false), dsdLayer(700, 285, 0.6, false), dsdLayer(60, 280, 0.9, false)} {
		a := NewAir(l.BaseP, l.BaseT)
		const n = 1500
		dr := (d.upper() - d.MinRadius) / n
		num, den := 0.0, 0.0
		for i := 0; i < n; i++ {
			r := d.MinRadius + (float64(i)+0.5)*dr
			w := a.FallSpeed(2*r) * d.PDF(r) * dr // number flux of the class
			den += r * r * r * w
			if e := EvaporateDirect(r, l); e.Reached {
				num += e.SurfaceRadius * e.SurfaceRadius * e.SurfaceRadius * w
			}
		}
		got, want := SurfaceDrizzleFraction(d, l), num/den
		t.Logf("z_b %.0f m, T_b %.0f K, well mixed %v: F %.6g, size classes %.6g", l.BaseHeight, l.BaseT, l.WellMixed, got, want)
		// The class sum's own error: the midpoint rule at the kink r* (r_s^3 rises as
		// (r - r*)^(3/4)) is of order (dr/r*)^(7/4) of the flux near r*; 2e-4 relative or 1e-6.
		if !scalar.EqualWithinAbsOrRel(got, want, 1e-6, 2e-4) {
			t.Errorf("layer %+v: F %.8g, size classes %.8g", l, got, want)
		}
	}
}

// TestSurfaceFractionMonotone checks that F falls with cloud-base height and rises with the
// surface humidity and the drizzle drop size (derived: every drop evaporates more through a
// deeper or drier layer, and a larger distribution puts more flux in drops that survive),
// through Column's table as well as SurfaceDrizzleFraction.
func TestSurfaceFractionMonotone(t *testing.T) {
	t.Parallel()
	d := DefaultDrizzleDSD()
	prev := 2.0
	for _, zb := range []float64{50, 150, 300, 500, 800, 1200} {
		f := SurfaceDrizzleFraction(d, dsdLayer(zb, 286, 0, true))
		if !(f < prev && f > 0) {
			t.Errorf("well mixed, z_b %g m: F %g not below %g", zb, f, prev)
		}
		prev = f
	}
	prev = 0
	for _, rh := range []float64{0.5, 0.65, 0.8, 0.9, 0.97} {
		f := SurfaceDrizzleFraction(d, dsdLayer(500, 286, rh, false))
		if !(f > prev) {
			t.Errorf("surface RH %g: F %g not above %g", rh, f, prev)
		}
		prev = f
	}
	prev = 0
	for _, mr := range []float64{30e-6, 40e-6, 50e-6, 70e-6, 100e-6} {
		f := SurfaceDrizzleFraction(DrizzleDSD{MeanRadius: mr, MinRadius: 20e-6}, dsdLayer(500, 286, 0, true))
		if !(f > prev) {
			t.Errorf("mean radius %g: F %g not above %g", mr, f, prev)
		}
		prev = f
	}
	// Through Column: raising the cloud top (and so the base) at fixed cloud lowers F.
	m := defaultModel(t)
	prev = 2
	for _, cth := range []float64{500, 700, 900, 1100, 1400} {
		in := nanInputs()
		in.LWP, in.Re, in.CTT, in.CTP, in.CTH = 0.15, 16e-6, 286, 90000, cth
		var out Outputs
		m.Column(&in, &out)
		if !(out.SurfaceDrizzleFraction < prev) {
			t.Errorf("CTH %g m: surface fraction %g not below %g", cth, out.SurfaceDrizzleFraction, prev)
		}
		if !scalar.EqualWithinRel(out.SurfaceDrizzleRate, out.SurfaceDrizzleFraction*out.DrizzleRate, 1e-15) {
			t.Errorf("CTH %g m: surface rate %g, want F R_CB = %g", cth, out.SurfaceDrizzleRate, out.SurfaceDrizzleFraction*out.DrizzleRate)
		}
		prev = out.SurfaceDrizzleFraction
	}
}

// TestSurfaceDrizzlePlausible checks the default distribution against published
// surface/cloud-base drizzle ratios of marine stratocumulus as a plausibility band, from
// memory: a large part of the cloud-base drizzle evaporates within a few hundred metres below
// cloud base [Wood2005a] (rates "decrease markedly with distance below base", confirmed from
// the abstract), about a quarter to a half reaches the surface below 300-400 m deep
// sub-cloud layers and a few per cent or less below 800 m and deeper ones (EPIC, Comstock et
// al. 2004, from memory), while drizzle reached the surface on five of seven DYCOMS-II
// flights [VanZanten2005] (confirmed from the abstract).
func TestSurfaceDrizzlePlausible(t *testing.T) {
	t.Parallel()
	d := DefaultDrizzleDSD()
	for _, c := range []struct{ zb, lo, hi float64 }{{300, 0.25, 0.7}, {400, 0.1, 0.5}, {800, 0.003, 0.1}} {
		f := SurfaceDrizzleFraction(d, dsdLayer(c.zb, 287, 0, true))
		t.Logf("z_b %.0f m, well mixed: F %.4g", c.zb, f)
		if !(f >= c.lo && f <= c.hi) {
			t.Errorf("z_b %g m: F %g outside the plausible band [%g, %g] (from memory)", c.zb, f, c.lo, c.hi)
		}
	}
}

// TestDrizzleNumber checks the number closure: N drops of the distribution carry the rate
// back (derived: R = (4/3) pi rho_w N int r^3 V f dr, here by a 4000-class midpoint sum),
// and the flux moment of V = k r against the closed form k E[r^4] (derived).
func TestDrizzleNumber(t *testing.T) {
	t.Parallel()
	d := DefaultDrizzleDSD()
	a := NewAir(95000, 286)
	rate := 1.0 / 86400 // 1 mm day-1 in kg m-2 s-1
	n := DrizzleNumber(rate, d, a)
	const cls = 4000
	dr := (d.upper() - d.MinRadius) / cls
	sum := 0.0
	for i := 0; i < cls; i++ {
		r := d.MinRadius + (float64(i)+0.5)*dr
		sum += r * r * r * a.FallSpeed(2*r) * d.PDF(r) * dr
	}
	back := 4.0 / 3 * math.Pi * WaterDensity * n * sum
	t.Logf("1 mm day-1: %.4g drizzle drops per litre", n*1e-3)
	if !scalar.EqualWithinRel(back, rate, 1e-5) {
		t.Errorf("N %g m-3 carries %g kg m-2 s-1, want %g", n, back, rate)
	}
	if v := DrizzleNumber(-1, d, a); !math.IsNaN(v) {
		t.Errorf("negative rate gives %g, want NaN", v)
	}
}

// TestWellMixedHumidity checks the well-mixed layer's humidity (derived: the cloud-base
// saturation mixing ratio r_s = eps e_s/(p - e_s) conserved): saturated at cloud base,
// r_s(T_b, p_b)/r_s(T_s, p_s) at the surface, falling monotonically downward.
func TestWellMixedHumidity(t *testing.T) {
	t.Parallel()
	l := dsdLayer(700, 286, 0.3, true)
	rs := func(T, p float64) float64 { e := SatVapourPressure(T); return Epsilon * e / (p - e) }
	if _, _, S := l.State(l.BaseHeight); !scalar.EqualWithinAbs(S, 1, 1e-12) {
		t.Errorf("S at cloud base %g, want 1", S)
	}
	ps, Ts, S := l.State(0)
	if want := rs(l.BaseT, l.BaseP) / rs(Ts, ps); !scalar.EqualWithinRel(S, want, 1e-12) {
		t.Errorf("surface S %g, want %g", S, want)
	}
	prev := 1.1
	for z := l.BaseHeight; z >= 0; z -= 50 {
		_, _, s := l.State(z)
		if !(s < prev) {
			t.Errorf("S(%g m) = %g not below %g", z, s, prev)
		}
		prev = s
	}
}

// fluxDomainSample draws n points uniformly over the whole domain of the flux table (z_b^(1/2)
// over 0.1 m-3 km, T_b 270-306 K, p_s within 10 kPa of 1013.25 hPa, and, for surface-RH
// layers, ln(1 - RH_s) over RH_s 0.5-0.99), every third on the p_s plane of columns without
// CTH. Invented points: a test sample.
func fluxDomainSample(n int, seed uint64, mixed bool) []SubCloudLayer {
	rng := rand.New(rand.NewPCG(seed, 21))
	fa := fluxAxes
	ls := make([]SubCloudLayer, 0, n)
	for len(ls) < n {
		u := func(d int) float64 { return fa.lo[d] + (fa.hi[d]-fa.lo[d])*rng.Float64() }
		ps := 101325 + u(0)
		if len(ls)%3 == 0 {
			ps = 101325
		}
		zs := u(3)
		l := evLayer(math.Log(max(zs*zs, 0.1)), u(2), u(1), ps)
		if mixed {
			l.SurfaceRH, l.WellMixed = 0, true
		}
		if _, Ts, _ := l.State(0); Ts > 320 { // surface air beyond the physical range of use
			continue
		}
		ls = append(ls, l)
	}
	return ls
}

// fluxTol is the tested bound of the flux table: |F_table - F| <= fluxTol max(F, fluxFloor)
// (0.5 % relative, the table bound of table.go; absolute 5e-5 below F = 0.01, where the
// surface rate is below a hundredth of the cloud-base rate; common practice).
// With surface-RH layers (HumiditySurfaceRH, the option for decoupled layers) the extra u
// axis is held to fluxTolRH = 1 % at the same floor.
const (
	fluxTol   = 5e-3
	fluxTolRH = 1e-2
	fluxFloor = 1e-2
)

// TestFluxTableAgainstDirect checks the surface drizzle fraction table against
// SurfaceDrizzleFraction over the whole table domain, for both humidity profiles (derived:
// the table holds the same function at its nodes, so this bounds the interpolation error).
func TestFluxTableAgainstDirect(t *testing.T) {
	if testing.Short() {
		t.Skip("direct integration of 800 layers")
	}
	for _, mixed := range []bool{true, false} {
		p := DefaultParams()
		if !mixed {
			p.SubCloudHumidity = HumiditySurfaceRH
		}
		et := buildEvapTable(p)
		worst, worstF, n := 0.0, 0.0, 0
		for _, l := range fluxDomainSample(400, 3, mixed) {
			u := evMixedU
			if !mixed {
				u = math.Log1p(-l.SurfaceRH)
			}
			ps, _, _ := l.State(0)
			got := et.fraction(u, &l, ps)
			want := SurfaceDrizzleFraction(p.Drizzle, l)
			if math.IsNaN(got) || math.IsNaN(want) {
				t.Errorf("layer %+v: table %g, direct %g", l, got, want)
				continue
			}
			n++
			if e := math.Abs(got-want) / math.Max(want, fluxFloor); e > worst {
				worst, worstF = e, want
			}
		}
		t.Logf("well mixed %v: %d layers, largest error %.3g (relative to max(F, %g), at F = %.3g)", mixed, n, worst, fluxFloor, worstF)
		if tol := map[bool]float64{true: fluxTol, false: fluxTolRH}[mixed]; worst > tol {
			t.Errorf("well mixed %v: flux table error %.3g > %g", mixed, worst, tol)
		}
	}
}

var benchFluxSink float64

// BenchmarkFluxLookup is the surface drizzle fraction lookup of one column (Column's
// evapTable.fraction), beside BenchmarkEvapLookup, the single-drop evaporation lookup.
func BenchmarkFluxLookup(b *testing.B) {
	m := defaultModel(b)
	b.ReportAllocs()
	s := 0.0
	for i := 0; i < b.N; i++ {
		zb := 300 + float64(i&255)
		l := SubCloudLayer{BaseHeight: zb, BaseT: 286, BaseP: 95000, WellMixed: true}
		s += m.tab.evap.fraction(m.lnDryRH, &l, 101325)
	}
	benchFluxSink = s
}
