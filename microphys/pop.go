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
// [RosenfeldGutman1994] (derived, doc/science.md#subgrid-gamma).
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

// popTable tabulates ln Q(nu, x) for Column (ln Q keeps small probabilities to a relative
// accuracy) on (ln nu, z) with the Wilson-Hilferty variable
//
//	z = 3 sqrt(nu) ((x/nu)^(1/3) - 1 + 1/(9 nu))
//
// in which Q(nu, x) is close to the normal tail erfc(z/sqrt 2)/2 for every nu >= 1 and so
// smooth in both coordinates (the cube-root transform of Wilson and Hilferty, 1931, common
// practice; the error bound below is measured, not taken from the paper). Nodes are mathext.GammaIncRegComp
// values; interpolation is the 3-point quadratic along both axes (nGrid). Outside
// nu in [popNuMin, popNuMax] DrizzleProbability is called; |z| > popZMax gives 0 or 1. The
// largest error against GammaIncRegComp is below popTabTol (pop_test.go).
type popTable struct {
	g *nGrid
}

const (
	popNuMin  = 1.0   // below it Q has a root singularity in z at x -> 0
	popNuMax  = 1e4   // above it Column calls DrizzleProbability
	popZMax   = 6.5   // |z| beyond which Q is 0 or 1 to < 1e-6 for nu >= 1 (measured)
	popLnStep = 0.125 // node spacing in ln nu
	popZStep  = 0.05  // node spacing in z
	popTabTol = 1e-4  // bound on the table's absolute error (doc/science.md#tables; tested)
)

// newPopTable evaluates the nodes of the drizzle-probability table.
func newPopTable() *popTable {
	lnHi := math.Log(popNuMax)
	nl := int(math.Ceil(lnHi/popLnStep)) + 1
	nz := int(math.Round(2*popZMax/popZStep)) + 1
	g := newNGrid([]float64{0, -popZMax}, []float64{float64(nl-1) * popLnStep, popZMax}, []int{nl, nz},
		[]bool{true, true}, false)
	for i := range g.vals {
		x := g.node(i)
		nu := math.Exp(x[0])
		c := x[1]/(3*math.Sqrt(nu)) + 1 - 1/(9*nu)
		q := 1.0
		if c > 0 {
			q = mathext.GammaIncRegComp(nu, nu*c*c*c)
		}
		g.vals[i] = float32(math.Log(q))
	}
	g.widen()
	return &popTable{g: g}
}

// prob is DrizzleProbability(lwp, lwpCrit, nu) from the table, for lwp > 0, lwpCrit >= 0
// finite and nu in [popNuMin, popNuMax]; it calls DrizzleProbability otherwise.
func (t *popTable) prob(lwp, lwpCrit, nu float64) float64 {
	if t == nil || !(nu >= popNuMin && nu <= popNuMax && lwp > 0 && lwpCrit >= 0) ||
		math.IsInf(lwp, 1) || math.IsInf(lwpCrit, 1) {
		return DrizzleProbability(lwp, lwpCrit, nu)
	}
	sn := math.Sqrt(nu)
	z := 3 * sn * (math.Cbrt(lwpCrit/lwp) - 1 + 1/(9*nu))
	switch {
	case z <= -popZMax:
		return 1
	case z >= popZMax:
		return 0
	}
	x := [nDims]float64{2 * math.Log(sn), z}
	return math.Exp(min(t.g.at(&x), 0))
}
