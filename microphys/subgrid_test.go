package microphys

import (
	"encoding/json"
	"fmt"
	"math"
	"os/exec"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/integrate/quad"
)

// TestSubgridEnhancement checks E(nu, b) = Gamma(nu+b)/(Gamma(nu) nu^b) against the check
// values of the gamma-moment formula (derived; the formula is the gamma integral, values
// computed from it with an independent script), and its limits.
func TestSubgridEnhancement(t *testing.T) {
	t.Parallel()
	for _, c := range []struct{ nu, b, want float64 }{
		{1, 2.47, 3.2156}, {2, 2.47, 2.0140}, {4, 2.47, 1.4813}, {10, 2.47, 1.1860}, {100, 2.47, 1.0182},
		{1, 1.15, 1.0730}, {2, 1.15, 1.0396},
		{1, 1, 1}, {3, 2, 4.0 / 3}, // Gamma(nu+2)/(Gamma(nu) nu^2) = (nu+1)/nu (derived)
	} {
		if v := SubgridEnhancement(c.nu, c.b); !scalar.EqualWithinRel(v, c.want, 5e-5) {
			t.Errorf("E(%g, %g) = %.6g, want %.5g (derived)", c.nu, c.b, v, c.want)
		}
	}
	// Large nu: the Stirling series joins the log-gamma form at nu = 1e3 (derived), and
	// E -> 1 + b(b-1)/(2 nu).
	for _, b := range []float64{1.0 / 6, 1.75, 1.75 + 1.0/6} {
		lo, hi := SubgridEnhancement(1e3, b), SubgridEnhancement(1e3*(1+1e-13), b)
		if !scalar.EqualWithinRel(lo, hi, 1e-11) {
			t.Errorf("E near nu = 1e3, b = %g: %.15g and %.15g", b, lo, hi)
		}
	}
	if v := SubgridEnhancement(1e7, 1.75); !scalar.EqualWithinRel(v, 1+1.75*0.75/2e7, 1e-12) {
		t.Errorf("E(1e7, 1.75) = %.15g", v)
	}
	if v := SubgridEnhancement(math.Inf(1), 1.75); v != 1 {
		t.Errorf("E(Inf) = %g, want 1", v)
	}
	for _, c := range [][2]float64{{0, 1}, {-1, 1}, {math.NaN(), 1}, {1, math.NaN()}, {1, math.Inf(1)}, {0.5, -0.6}} {
		if v := SubgridEnhancement(c[0], c[1]); !math.IsNaN(v) {
			t.Errorf("E(%g, %g) = %g, want NaN", c[0], c[1], v)
		}
	}
}

// subgridQuad integrates POP = ∫ P_on(r(L)) p(L) dL and R̄ = ∫ P_on(r(L)) a L^b N^-c p(L) dL
// over the gamma pdf directly (gonum Gauss-Legendre on pieces split at the onset limits), an
// independent computation of SubgridDrizzleModel's closed forms.
func subgridQuad(lwp, nd, reTop, nu float64, o Onset, a, b, c float64) (pop, rate float64) {
	lg, _ := math.Lgamma(nu)
	pdf := func(l float64) float64 {
		if l <= 0 {
			return 0
		}
		return math.Exp(nu*math.Log(nu/lwp) + (nu-1)*math.Log(l) - nu*l/lwp - lg)
	}
	lim := func(r float64) float64 { return lwp * math.Pow(r/reTop, 6) }
	cuts := []float64{0, lim(o.Radius - o.Width/2), lim(o.Radius + o.Width/2), lwp * (1 + 60/nu + 60/math.Sqrt(nu))}
	on := func(l float64) float64 { return o.Probability(reTop * math.Pow(l/lwp, 1.0/6)) }
	local := func(l float64) float64 { return DrizzleRate(l, nd, a, b, c) }
	for k := 0; k+1 < len(cuts); k++ {
		lo, hi := cuts[k], cuts[k+1]
		if !(hi > lo) {
			continue
		}
		// many sub-intervals: the gamma pdf has a root singularity at 0 for nu < 1
		const parts = 400
		for j := 0; j < parts; j++ {
			a0 := lo + (hi-lo)*float64(j)/parts
			b0 := lo + (hi-lo)*float64(j+1)/parts
			pop += quad.Fixed(func(l float64) float64 { return on(l) * pdf(l) }, a0, b0, 20, nil, 0)
			rate += quad.Fixed(func(l float64) float64 { return on(l) * local(l) * pdf(l) }, a0, b0, 20, nil, 0)
		}
	}
	return pop, rate
}

// subgridCases are columns across the domain: marine Sc means, top radii below, inside and
// above the onset range, and shapes from broken (1) to overcast (20) cloud [Barker1996]
// (ranges from memory).
var subgridCases = []struct{ lwp, nd, re, nu float64 }{
	{0.100, 100e6, 14e-6, 4}, {0.080, 200e6, 10e-6, 8}, {0.150, 40e6, 18e-6, 2},
	{0.120, 60e6, 12.5e-6, 1.5}, {0.060, 300e6, 8e-6, 10}, {0.200, 30e6, 16e-6, 20},
	{0.090, 150e6, 11e-6, 1}, {0.110, 90e6, 13e-6, 6.25},
}

// TestSubgridDrizzleQuadrature checks the closed forms of SubgridDrizzleModel (step and ramp
// onsets) against direct quadrature of the defining integrals over the gamma pdf (derived:
// the same integrals, computed independently), and R̄ = POP × I.
func TestSubgridDrizzleQuadrature(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	t.Parallel()
	p := DefaultParams()
	for _, o := range []Onset{{14e-6, 0}, {14e-6, 4e-6}, {13e-6, 2e-6}} {
		for _, c := range subgridCases {
			d := SubgridDrizzleModel(c.lwp, c.nd, c.re, c.nu, o, p.DrizzleCoef, p.DrizzleLWPExp, p.DrizzleNdExp)
			qp, qr := subgridQuad(c.lwp, c.nd, c.re, c.nu, o, p.DrizzleCoef, p.DrizzleLWPExp, p.DrizzleNdExp)
			name := fmt.Sprintf("onset %+v, case %+v", o, c)
			if !scalar.EqualWithinAbsOrRel(d.POP, qp, 1e-12, 1e-7) {
				t.Errorf("%s: POP %.10g, quadrature %.10g", name, d.POP, qp)
			}
			if !scalar.EqualWithinAbsOrRel(d.Rate, qr, 1e-20, 1e-7) {
				t.Errorf("%s: R̄ %.10g, quadrature %.10g", name, d.Rate, qr)
			}
			if d.POP > 0 && !scalar.EqualWithinRel(d.Rate, d.POP*d.Intensity, 1e-14) {
				t.Errorf("%s: R̄ %g != POP %g × I %g", name, d.Rate, d.POP, d.Intensity)
			}
			// The intensity is the mean over the drizzling part, so it lies between the local
			// rate at the smallest drizzling LWP and ... above the rate at the onset's lower
			// limit (derived).
			lmin := c.lwp * math.Pow((o.Radius-o.Width/2)/c.re, 6)
			if d.POP > 0 && !(d.Intensity >= DrizzleRate(lmin, c.nd, p.DrizzleCoef, p.DrizzleLWPExp, p.DrizzleNdExp)*(1-1e-12)) {
				t.Errorf("%s: I = %g below the rate at the onset limit", name, d.Intensity)
			}
		}
	}
}

// TestSubgridDrizzleStep checks the step onset against DrizzleProbability (POP = Q(nu,
// nu LWP*/mu), [Barker1996] construction, derived) with LWP* from CriticalLWP, and the
// homogeneous limit.
func TestSubgridDrizzleStep(t *testing.T) {
	t.Parallel()
	p := DefaultParams()
	for _, c := range subgridCases {
		crit := c.lwp * math.Pow(p.ReStar/c.re, 6)
		d := SubgridDrizzleModel(c.lwp, c.nd, c.re, c.nu, Onset{p.ReStar, 0}, 0.37, 1.75, 1.75)
		if w := DrizzleProbability(c.lwp, crit, c.nu); !scalar.EqualWithinAbsOrRel(d.POP, w, 1e-15, 1e-12) {
			t.Errorf("%+v: POP %g, DrizzleProbability %g", c, d.POP, w)
		}
	}
	// nu = Inf: POP = P_on(r_mu), R̄ = POP × DrizzleRate (derived).
	for _, re := range []float64{11e-6, 13e-6, 14e-6, 15.5e-6, 17e-6} {
		o := Onset{14e-6, 4e-6}
		d := SubgridDrizzleModel(0.1, 100e6, re, math.Inf(1), o, 0.37, 1.75, 1.75)
		if d.POP != o.Probability(re) || !scalar.EqualWithinRel(d.Rate, d.POP*DrizzleRate(0.1, 100e6, 0.37, 1.75, 1.75), 1e-15) {
			t.Errorf("homogeneous r_e %g: %+v", re, d)
		}
	}
	// A large finite shape approaches the homogeneous cell (derived: the gamma narrows).
	o := Onset{14e-6, 4e-6}
	d1 := SubgridDrizzleModel(0.1, 100e6, 13e-6, 1e5, o, 0.37, 1.75, 1.75)
	d2 := SubgridDrizzleModel(0.1, 100e6, 13e-6, math.Inf(1), o, 0.37, 1.75, 1.75)
	if !scalar.EqualWithinAbs(d1.POP, d2.POP, 2e-3) || !scalar.EqualWithinRel(d1.Rate, d2.Rate, 5e-3) {
		t.Errorf("nu = 1e5 %+v vs homogeneous %+v", d1, d2)
	}
	if d := SubgridDrizzleModel(0, 100e6, 13e-6, 4, o, 0.37, 1.75, 1.75); d.POP != 0 || d.Rate != 0 || !math.IsNaN(d.Intensity) {
		t.Errorf("LWP 0: %+v", d)
	}
	for _, c := range [][4]float64{{-1, 1e8, 1e-5, 4}, {0.1, 0, 1e-5, 4}, {0.1, 1e8, 0, 4}, {0.1, 1e8, 1e-5, 0},
		{math.NaN(), 1e8, 1e-5, 4}, {0.1, 1e8, math.Inf(1), 4}} {
		if d := SubgridDrizzleModel(c[0], c[1], c[2], c[3], o, 0.37, 1.75, 1.75); !math.IsNaN(d.POP) || !math.IsNaN(d.Rate) {
			t.Errorf("SubgridDrizzleModel%v = %+v, want NaN", c, d)
		}
	}
	if d := SubgridDrizzleModel(0.1, 1e8, 1e-5, 4, Onset{14e-6, 30e-6}, 0.37, 1.75, 1.75); !math.IsNaN(d.POP) {
		t.Errorf("width > 2 radius: %+v", d)
	}
}

// TestSubgridDrizzleMonotone checks the physical ordering of the model (derived): at fixed
// LWP, more droplets (smaller top radius) give less POP and less R̄; at fixed N_d more LWP
// gives more of both; the ramp's POP is smoother than the step's: its largest slope
// -d ln POP/d ln N_d over marine Sc columns is smaller.
func TestSubgridDrizzleMonotone(t *testing.T) {
	t.Parallel()
	o := Onset{14e-6, 4e-6}
	prev := SubgridDrizzle{POP: 2, Rate: math.Inf(1)}
	for _, n := range []float64{20e6, 40e6, 80e6, 160e6, 320e6} {
		re := 14e-6 * math.Cbrt(80e6/n) // r_e^3 ∝ 1/N_d at fixed LWP (adiabatic)
		d := SubgridDrizzleModel(0.1, n, re, 4, o, 0.37, 1.75, 1.75)
		if !(d.POP < prev.POP && d.Rate < prev.Rate) {
			t.Errorf("N_d %g: %+v after %+v", n, d, prev)
		}
		prev = d
	}
	// At fixed N_d, more LWP: r_e ∝ LWP^(1/6).
	prev = SubgridDrizzle{}
	for _, l := range []float64{0.04, 0.08, 0.16, 0.32} {
		d := SubgridDrizzleModel(l, 80e6, 14e-6*math.Pow(l/0.1, 1.0/6), 4, o, 0.37, 1.75, 1.75)
		if !(d.POP > prev.POP && d.Rate > prev.Rate) {
			t.Errorf("LWP %g: %+v after %+v", l, d, prev)
		}
		prev = d
	}
	maxS := func(o Onset) float64 {
		m := 0.0
		for n := 20e6; n < 400e6; n *= 1.1 {
			re := 14e-6 * math.Cbrt(80e6/n)
			p1 := SubgridDrizzleModel(0.1, n, re, 4, o, 0.37, 1.75, 1.75).POP
			p2 := SubgridDrizzleModel(0.1, n*1.01, re/math.Cbrt(1.01), 4, o, 0.37, 1.75, 1.75).POP
			if p1 > 0.05 { // where POP is observable
				m = math.Max(m, -math.Log(p2/p1)/math.Log(1.01))
			}
		}
		return m
	}
	if s, r := maxS(Onset{14e-6, 0}), maxS(o); !(r < s) {
		t.Errorf("largest S_POP (POP > 0.05): ramp %.2f, step %.2f: the ramp should be smaller", r, s)
	}
}

// scipySubgrid evaluates the closed forms with scipy.special (gammaincc, gammaln) and the
// defining integrals with scipy.integrate.quad, independently of gonum.
const scipySubgrid = `
import json, math, sys
from scipy.special import gammaincc, gammaln
from scipy.integrate import quad
d = json.load(sys.stdin)
out = []
for c in d["cases"]:
    mu, N, re, nu, R, W, a, b, cc = c
    r1, r2 = R - W/2, R + W/2
    E = lambda s: math.exp(gammaln(nu+s) - gammaln(nu) - s*math.log(nu))
    def M(s):
        if W == 0:
            return E(s)*gammaincc(nu+s, nu*(R/re)**6)
        x1, x2 = nu*(r1/re)**6, nu*(r2/re)**6
        return E(s)*gammaincc(nu+s, x2) + (re*E(s+1/6)*(gammaincc(nu+s+1/6, x1)-gammaincc(nu+s+1/6, x2)) - r1*E(s)*(gammaincc(nu+s, x1)-gammaincc(nu+s, x2)))/(r2-r1)
    r0 = a*(mu*1e3)**b*(N*1e-6)**(-cc)/86400
    lg = gammaln(nu)
    pdf = lambda L: math.exp(nu*math.log(nu/mu) + (nu-1)*math.log(L) - nu*L/mu - lg) if L > 0 else 0.0
    def on(L):
        r = re*(L/mu)**(1/6)
        if W == 0: return 1.0 if r > R else 0.0
        return min(1.0, max(0.0, (r - r1)/W))
    L1, L2 = mu*(r1/re)**6, mu*(r2/re)**6
    pts = sorted({L1, L2})
    top = mu*(1 + 60/nu + 60/math.sqrt(nu))
    qp = sum(quad(lambda L: on(L)*pdf(L), lo, hi, epsabs=0, epsrel=1e-11, limit=200)[0] for lo, hi in zip([0]+pts, pts+[top]) if hi > lo)
    qr = sum(quad(lambda L: on(L)*a*(L*1e3)**b*(N*1e-6)**(-cc)/86400*pdf(L), lo, hi, epsabs=0, epsrel=1e-11, limit=200)[0] for lo, hi in zip([0]+pts, pts+[top]) if hi > lo)
    out.append([M(0), r0*M(b), qp, qr])
print(json.dumps(out))
`

// TestSubgridDrizzleScipy checks SubgridDrizzleModel against scipy: the closed forms
// evaluated with scipy.special.gammaincc/gammaln and the integrals with
// scipy.integrate.quad (an independent implementation, derived formulas).
func TestSubgridDrizzleScipy(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	t.Parallel()
	py := findScipyPython()
	if py == "" {
		t.Skip("no python3 with scipy")
	}
	var cases [][9]float64
	for _, o := range []Onset{{14e-6, 0}, {14e-6, 4e-6}} {
		for _, c := range subgridCases {
			cases = append(cases, [9]float64{c.lwp, c.nd, c.re, c.nu, o.Radius, o.Width, 0.37, 1.75, 1.75})
		}
	}
	in, _ := json.Marshal(map[string]any{"cases": cases})
	cmd := exec.Command(py, "-c", scipySubgrid)
	cmd.Stdin = strings.NewReader(string(in))
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("python: %v", err)
	}
	var got [][4]float64
	if err := json.Unmarshal(out, &got); err != nil || len(got) != len(cases) {
		t.Fatalf("python output %q: %v", out, err)
	}
	for i, c := range cases {
		d := SubgridDrizzleModel(c[0], c[1], c[2], c[3], Onset{c[4], c[5]}, c[6], c[7], c[8])
		g := got[i]
		if !scalar.EqualWithinAbsOrRel(d.POP, g[0], 1e-13, 1e-9) || !scalar.EqualWithinAbsOrRel(d.Rate, g[1], 1e-22, 1e-9) {
			t.Errorf("case %v: Go POP %.10g R̄ %.10g, scipy closed form %.10g %.10g", c, d.POP, d.Rate, g[0], g[1])
		}
		if !scalar.EqualWithinAbsOrRel(d.POP, g[2], 1e-10, 1e-6) || !scalar.EqualWithinAbsOrRel(d.Rate, g[3], 1e-20, 1e-6) {
			t.Errorf("case %v: Go POP %.10g R̄ %.10g, scipy quad %.10g %.10g", c, d.POP, d.Rate, g[2], g[3])
		}
	}
}
