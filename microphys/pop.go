package microphys

import (
	"math"

	"gonum.org/v1/gonum/mathext"
)

// DrizzleProbability returns the probability (1) that a grid cell of mean liquid water path
// lwp (kg m-2) drizzles, when its sub-grid LWP follows a gamma distribution of shape nu and
// drizzle needs LWP > lwpCrit (kg m-2, CriticalLWP):
//
//	p(x)  = (nu/mu)^nu x^(nu-1) exp(-nu x/mu)/Gamma(nu),   mu = LWP
//	POP   = P(x > LWP*) = Q(nu, nu LWP*/LWP)
//
// Q is the regularized upper incomplete gamma function (gonum mathext.GammaIncRegComp).
// nu = +Inf is the homogeneous cell (a step: 1 if lwp > lwpCrit, else 0); lwp = 0 gives 0.
//
// Reference: [Barker1996] (gamma from mean and variance); threshold after
// [RosenfeldGutman1994] (derived, physics notes §9.3).
// Valid: lwp >= 0, lwpCrit >= 0, nu > 0 (all not NaN); NaN otherwise.
func DrizzleProbability(lwp, lwpCrit, nu float64) float64 {
	if !(lwp >= 0 && lwpCrit >= 0 && nu > 0) || math.IsInf(lwp, 1) {
		return math.NaN()
	}
	if lwp == 0 || math.IsInf(lwpCrit, 1) {
		return 0
	}
	x := nu * lwpCrit / lwp
	if math.IsInf(nu, 1) || nu > popStepShape {
		if lwp > lwpCrit {
			return 1
		}
		if lwp == lwpCrit {
			return 0.5
		}
		return 0
	}
	if x == 0 {
		return 1
	}
	if math.IsInf(x, 1) {
		return 0
	}
	return mathext.GammaIncRegComp(nu, x)
}

// popStepShape is the shape above which DrizzleProbability uses the step limit: for
// nu > 1e8 the gamma has relative width 1e-4, below the precision of any LWP input.
const popStepShape = 1e8

// GammaShapeFromStd returns the gamma shape nu = (mean/sd)^2 (1) of a sub-grid LWP
// distribution with mean mean and standard deviation sd (same units); sd = 0 gives +Inf.
//
// Reference: [Barker1996] (nu = mu^2/sigma^2).
// Valid: mean > 0, sd >= 0, finite; NaN otherwise.
func GammaShapeFromStd(mean, sd float64) float64 {
	if !(mean > 0 && sd >= 0) || math.IsInf(mean, 1) || math.IsInf(sd, 1) {
		return math.NaN()
	}
	if sd == 0 {
		return math.Inf(1)
	}
	r := mean / sd
	return r * r
}
