package microphys

import (
	"math"

	"gonum.org/v1/gonum/mathext"
)

// The sub-grid drizzle model: one model gives the drizzle probability POP, the cell-mean
// cloud-base drizzle rate R̄ and the intensity I = R̄/POP of the drizzling part, so that
// R̄ = POP × I holds in every column by construction.
//
// Inside a grid cell of mean liquid water path μ the local LWP L is gamma distributed with
// shape ν [Barker1996],
//
//	p(L) = (ν/μ)^ν L^(ν-1) exp(-ν L/μ)/Γ(ν),
//
// every sub-grid column has the cell's droplet number N_d, so that its cloud-top effective
// radius is r(L) = r_μ (L/μ)^(1/6) (adiabatic: r_e^3 ∝ H/N_d and L ∝ H^2 [Brenguier2000]),
// where r_μ is the top radius of the cell-mean column. A sub-grid column drizzles with the
// onset probability P_on(r(L)), and when it drizzles its cloud-base rate is the local power
// law a L^b N_d^-c of DrizzleRate [Comstock2004]. Then
//
//	POP = ∫ P_on(r(L)) p(L) dL,     R̄ = ∫ P_on(r(L)) a L^b N_d^-c p(L) dL,     I = R̄/POP.
//
// The moments used below follow from the gamma integral (derived):
//
//	∫_{L0}^∞ (L/μ)^s p(L) dL = E(ν, s) Q(ν + s, ν L0/μ),   E(ν, s) = Γ(ν + s)/(Γ(ν) ν^s),
//
// with Q the regularized upper incomplete gamma function.

// SubgridEnhancement returns E(ν, s) = Γ(ν + s)/(Γ(ν) ν^s) (1), the mean of (L/μ)^s over a
// gamma distribution of shape nu and mean μ: the factor by which a process rate ∝ L^s
// averaged over the sub-grid distribution exceeds the rate at the mean.
//
//	E(ν, s) = exp(lnΓ(ν + s) - lnΓ(ν) - s ln ν)
//
// For ν > 1e3, where the difference of log-gammas loses digits, the Stirling series
//
//	ln E = s(s-1)/(2ν) - s(s-1)(2s-1)/(12ν^2) + s^2(s-1)^2/(12ν^3)
//
// is used (absolute error in ln E below 1e-12 for |s| <= 2, checked against 40-digit
// log-gammas; derived); ν = +Inf gives 1 (a homogeneous cell).
//
// Reference: [Barker1996] (gamma distribution from the mean and variance); the moment is the
// gamma integral (derived).
// Valid: nu > 0, nu + s > 0, s finite; NaN otherwise.
func SubgridEnhancement(nu, s float64) float64 {
	if !(nu > 0) || !(nu+s > 0) || math.IsInf(s, 0) || math.IsNaN(s) {
		return math.NaN()
	}
	if math.IsInf(nu, 1) {
		return 1
	}
	if nu > 1e3 {
		q := s * (s - 1)
		return math.Exp(q/(2*nu) - q*(2*s-1)/(12*nu*nu) + q*q/(12*nu*nu*nu))
	}
	a, _ := math.Lgamma(nu + s)
	g, _ := math.Lgamma(nu)
	return math.Exp(a - g - s*math.Log(nu))
}

// Onset describes how the probability that a sub-grid column drizzles rises with its
// cloud-top effective radius r:
//
//	P_on(r) = 0                       r <= r_1
//	        = (r - r_1)/(r_2 - r_1)   r_1 < r < r_2
//	        = 1                       r >= r_2,      r_1,2 = Radius ∓ Width/2
//
// Width = 0 is the knife-edge step at Radius (P_on = 1 for r > Radius). A linear ramp is
// the same as an onset radius spread uniformly over [r_1, r_2] (derived): published onset
// radii span 12-16 µm (Params.ReStar, Params.OnsetWidth).
type Onset struct {
	Radius float64 // centre of the onset range (m): P_on(Radius) = 1/2
	Width  float64 // full width of the range (m); 0 = step at Radius
}

// Probability returns P_on(r) (1), the onset probability of a sub-grid column whose
// cloud-top effective radius is r (m).
//
//	P_on(r) = clamp((r - Radius + Width/2)/Width, 0, 1)   (Width > 0), step at Radius otherwise
//
// Reference: onset radii of [RosenfeldGutman1994] and [Braga2021] (12-16 µm range).
// Valid: r >= 0, Radius > 0, 0 <= Width < 2 Radius; NaN otherwise.
func (o Onset) Probability(r float64) float64 {
	if !(r >= 0 && o.Radius > 0 && o.Width >= 0 && o.Width < 2*o.Radius) || math.IsInf(o.Radius, 1) {
		return math.NaN()
	}
	if o.Width == 0 {
		if r > o.Radius {
			return 1
		}
		return 0
	}
	return math.Max(0, math.Min(1, (r-o.Radius+o.Width/2)/o.Width))
}

// SubgridDrizzle holds the drizzle of one grid cell from the sub-grid model (see
// SubgridDrizzleModel).
type SubgridDrizzle struct {
	POP       float64 // drizzle probability: fraction of the cell that drizzles, 1
	Rate      float64 // cell-mean cloud-base drizzle rate R̄, kg m-2 s-1 (= mm s-1 of water)
	Intensity float64 // mean rate of the drizzling part I = R̄/POP, kg m-2 s-1; NaN when POP = 0
}

// subgridMoment returns M(s) = ∫ P_on(r(L)) (L/μ)^s p(L) dL (1) for a gamma distribution of
// shape nu (finite, > 0), a cell whose mean column has top radius rmu (m), and the onset o:
//
//	step:  M(s) = E(ν, s) Q(ν + s, x*),   x* = ν (Radius/r_μ)^6
//	ramp:  M(s) = E(ν, s) Q(ν + s, x_2)
//	            + [r_μ E(ν, s + 1/6) (Q(ν+s+1/6, x_1) - Q(ν+s+1/6, x_2))
//	               - r_1 E(ν, s) (Q(ν+s, x_1) - Q(ν+s, x_2))]/(r_2 - r_1),   x_k = ν (r_k/r_μ)^6
//
// (derived from the gamma moment above with r(L) = r_μ (L/μ)^(1/6)). The bracket is
// ∫_{L1}^{L2} (r(L) - r_1) (L/μ)^s p dL >= 0; rounding can make it a few ulps negative,
// which is clamped.
func subgridMoment(nu, rmu float64, o Onset, s float64) float64 {
	q := mathext.GammaIncRegComp
	if o.Width == 0 {
		r := o.Radius / rmu
		r3 := r * r * r
		return SubgridEnhancement(nu, s) * q(nu+s, nu*r3*r3)
	}
	r1, r2 := o.Radius-o.Width/2, o.Radius+o.Width/2
	u1, u2 := r1/rmu, r2/rmu
	u1, u2 = u1*u1*u1, u2*u2*u2
	x1, x2 := nu*u1*u1, nu*u2*u2
	const beta = 1.0 / 6
	e0, e1 := SubgridEnhancement(nu, s), SubgridEnhancement(nu, s+beta)
	qa1, qa2 := q(nu+s, x1), q(nu+s, x2)
	qb1, qb2 := q(nu+s+beta, x1), q(nu+s+beta, x2)
	ramp := (rmu*e1*(qb1-qb2) - r1*e0*(qa1-qa2)) / (r2 - r1)
	return e0*qa2 + math.Max(ramp, 0)
}

// SubgridDrizzleModel returns the drizzle probability, the cell-mean cloud-base drizzle rate
// and the intensity of the drizzling part of a grid cell of mean liquid water path lwp
// (kg m-2), droplet number nd (m-3), cell-mean cloud-top effective radius reTop (m, the top
// radius of the adiabatic column of mean LWP) and sub-grid gamma shape nu, for the onset o
// and the local drizzle law a L^b N_d^-c of DrizzleRate (a in mm day-1 for L in g m-2 and N_d
// in cm-3):
//
//	POP = M(0),   R̄ = a μ^b N_d^-c M(b),   I = R̄/POP
//	M(s) = ∫ P_on(r(L)) (L/μ)^s p(L) dL     (closed forms: see the package's sub-grid model)
//
// For the step onset this is POP = Q(ν, ν LWP*/μ) (DrizzleProbability) and
// R̄ = a N_d^-c μ^b E(ν, b) Q(ν + b, ν LWP*/μ), LWP* = μ (Radius/r_μ)^6 (CriticalLWP).
// nu = +Inf (or above 1e8, as in DrizzleProbability) is a homogeneous cell: POP =
// P_on(r_μ), R̄ = POP × DrizzleRate(μ, N_d). lwp = 0 gives POP = R̄ = 0, I NaN.
//
// Reference: [Barker1996] (sub-grid gamma distribution), [Comstock2004] (local rate law),
// [RosenfeldGutman1994] and [Braga2021] (onset radius); the integrals are derived.
// Valid: lwp >= 0, nd > 0, reTop > 0, nu > 0, o as Onset.Probability, a > 0, b, c >= 0, all
// finite except nu; NaN fields otherwise.
func SubgridDrizzleModel(lwp, nd, reTop, nu float64, o Onset, a, b, c float64) SubgridDrizzle {
	nan := math.NaN()
	bad := SubgridDrizzle{nan, nan, nan}
	if !(lwp >= 0 && reTop > 0 && nu > 0) || math.IsInf(lwp, 1) || math.IsInf(reTop, 1) ||
		math.IsNaN(o.Probability(reTop)) {
		return bad
	}
	r0 := DrizzleRate(lwp, nd, a, b, c) // a μ^b N_d^-c, also checks nd, a, b, c
	if math.IsNaN(r0) {
		return bad
	}
	if lwp == 0 {
		return SubgridDrizzle{0, 0, nan}
	}
	var pop, mb float64
	if math.IsInf(nu, 1) || nu > popStepShape {
		pop = o.Probability(reTop)
		mb = pop
	} else {
		pop = subgridMoment(nu, reTop, o, 0)
		mb = subgridMoment(nu, reTop, o, b)
	}
	if !(pop > 0) {
		mb = 0 // an empty drizzling part (POP underflows before M(b) can): no drizzle
	}
	d := SubgridDrizzle{POP: pop, Rate: r0 * mb, Intensity: nan}
	if pop > 0 {
		d.Intensity = d.Rate / pop
	}
	return d
}
