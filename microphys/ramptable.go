package microphys

import (
	"math"

	"gonum.org/v1/gonum/mathext"
)

// The ramp onset of the sub-grid drizzle model is an onset radius spread uniformly over
// [r_1, r_2] (Onset), so its moments are averages of the step's over that range:
//
//	M(s) = 1/(r_2 - r_1) ∫_{r_1}^{r_2} E(ν, s) Q(ν + s, ν (r*/r_μ)^6) dr*
//	     = r_μ E(ν, s)/(r_2 - r_1) [T_s(w_1) - T_s(w_2)],    w_k = r_k/r_μ,
//	T_s(w) = ∫_w^∞ Q(a, ν v^6) dv = ν^(-1/6) Γ(a + 1/6)/Γ(a) Q(a + 1/6, x) - w Q(a, x),
//	a = ν + s,  x = ν w^6
//
// (derived: substitution v = r*/r_μ, then integration by parts with -dQ(a, x)/dx the gamma
// pdf). T_s is smooth in w (an integral of a smooth function), positive and decreasing, with
// T_s(0) = ν^(-1/6) Γ(a + 1/6)/Γ(a), and
//
//	T_s(w) = T_s(0) - w + U_s(w),   U_s(w) = ∫_0^w P(a, ν v^6) dv,   P = 1 - Q.
//
// Column takes T_s from two tables on (ln ν, z), with z the Wilson-Hilferty variable of
// Q(a, x) (as the POP table, pop.go),
//
//	z = 3 a^(1/2) ((ν/a)^(1/3) w^2 - 1 + 1/(9a)),
//
// for s = 0 and s = b (Params.DrizzleLWPExp): for z < 0 the table holds U_s (which starts
// as w^(6a+1), that is (z - z_0)^(3a+1/2) from the edge z_0 where w = 0, smooth for a >= 1,
// and is 0 below z = -rampZLo within 1e-10), for z >= 0 it holds ln T_s (the tail, kept to a
// relative accuracy; 0 above rampZHi, T_s below about 1e-90 there). The difference
// T_s(w_1) - T_s(w_2) has no cancellation where POP is small (there T_s(w_2) << T_s(w_1)),
// unlike the closed form of subgridMoment evaluated with approximate Q. The largest error
// against subgridMoment is below rampTabTol (ramptable_test.go).
type rampTable struct {
	lo, hi [2]*nGrid    // U_s (z < 0) and ln T_s (z >= 0), s = 0 and s = b
	b      float64      // Params.DrizzleLWPExp
	nu     *rampNuTable // per-shape factors
}

const (
	rampZLo   = popZMax // below -rampZLo: U_s = 0, T_s(w) = T_s(0) - w
	rampZHi   = 20.0    // above: T_s = 0 (T_s below about 1e-90 for a >= 1)
	rampZStep = 0.05    // node spacing in z
	rampZPad  = 0.5     // overlap of the two tables around z = 0
	rampWMin  = 0.3     // w below it (r_μ above 3.3 r_k): Column evaluates subgridMoment
	rampLnMin = -740.0  // ln T_s of nodes that underflow (T_s = 0 to double precision)
	// rampTabTol bounds the table's relative error in POP and R̄ where POP >= 1e-12 (and its
	// absolute error in POP), measured against subgridMoment over the whole table domain
	// (ramptable_test.go).
	rampTabTol = 1e-4
)

// rampTail returns T_s(w) exactly (the closed form above) for nu > 0, a = nu + s > 0, w >= 0.
func rampTail(nu, s, w float64) float64 {
	a := nu + s
	x := w * w * w
	x = nu * x * x
	la, _ := math.Lgamma(a + 1.0/6)
	lb, _ := math.Lgamma(a)
	t0 := math.Exp(la - lb - math.Log(nu)/6)
	return t0*mathext.GammaIncRegComp(a+1.0/6, x) - w*mathext.GammaIncRegComp(a, x)
}

// rampTail0 returns T_s(0) = nu^(-1/6) Γ(a + 1/6)/Γ(a), a = nu + s: E(a, 1/6) (a/nu)^(1/6).
func rampTail0(nu, s float64) float64 {
	a := nu + s
	return SubgridEnhancement(a, 1.0/6) * math.Pow(a/nu, 1.0/6)
}

// rampU returns U_s(w) = T_s(w) - T_s(0) + w for nu > 0, w >= 0, in the form that keeps
// it to a relative accuracy where it is small (P = 1 - Q computed directly):
//
//	U_s(w) = w P(a, x) - T_s(0) P(a + 1/6, x),   x = nu w^6
//
// (derived from the closed form of T_s; the two terms differ by the factor a/(a + 1/6) as
// x -> 0, so at most about 6a in relative precision is lost).
func rampU(nu, s, w float64) float64 {
	if w <= 0 {
		return 0
	}
	a := nu + s
	x := w * w * w
	x = nu * x * x
	u := w*mathext.GammaIncReg(a, x) - rampTail0(nu, s)*mathext.GammaIncReg(a+1.0/6, x)
	return max(u, 0)
}

// newRampTable evaluates the nodes of the ramp tables for the rate exponent b.
func newRampTable(b float64) *rampTable {
	t := &rampTable{b: b, nu: newRampNuTable(b)}
	lnHi := math.Log(popNuMax)
	nl := int(math.Ceil(lnHi/popLnStep)) + 1
	nzLo := int(math.Round((rampZLo+rampZPad)/rampZStep)) + 1
	nzHi := int(math.Round((rampZHi+rampZPad)/rampZStep)) + 1
	lnTop := float64(nl-1) * popLnStep
	for k, s := range [2]float64{0, b} {
		lo := newNGrid([]float64{0, -rampZLo}, []float64{lnTop, rampZPad}, []int{nl, nzLo}, []bool{true, true}, false)
		hi := newNGrid([]float64{0, -rampZPad}, []float64{lnTop, rampZHi}, []int{nl, nzHi}, []bool{true, true}, false)
		w := func(lnNu, z float64) (nu, w2 float64) {
			nu = math.Exp(lnNu)
			a := nu + s
			return nu, (z/(3*math.Sqrt(a)) + 1 - 1/(9*a)) / math.Cbrt(nu/a)
		}
		for i := range lo.vals {
			x := lo.node(i)
			nu, w2 := w(x[0], x[1])
			v := 0.0 // w^2 <= 0: U_s = 0 extends smoothly (U_s ~ (z - z_0)^(3a+1/2))
			if w2 > 0 {
				v = rampU(nu, s, math.Sqrt(w2))
			}
			lo.vals[i] = float32(v)
		}
		for i := range hi.vals {
			x := hi.node(i)
			nu, w2 := w(x[0], x[1])
			tv := rampTail(nu, s, math.Sqrt(max(w2, 0)))
			v := rampLnMin
			if tv > 0 && !math.IsInf(tv, 0) {
				v = max(math.Log(tv), rampLnMin)
			}
			hi.vals[i] = float32(v)
		}
		lo.widen()
		hi.widen()
		t.lo[k], t.hi[k] = lo, hi
	}
	return t
}

// rampShape holds the per-shape constants of one table k (s = 0 or b) for shape nu:
// sa = (nu + s)^(1/2), ia = 1/(9 (nu + s)), kc = (nu/(nu + s))^(1/3) and t0 = T_s(0) (NaN
// until needed: then colExp(lt0) when lt0, ln T_s(0) from rampNuTable, is not NaN, else
// rampTail0). The tables' stencil along ln nu is shared by both shapes (rampTable.nuTap).
type rampShape struct {
	s, sa, ia, kc, t0, lt0 float64
}

// newRampShape returns the constants of shape nu for the table of s.
func newRampShape(nu, s float64) rampShape {
	a := nu + s
	return rampShape{s: s, sa: math.Sqrt(a), ia: 1 / (9 * a), kc: math.Cbrt(nu / a), t0: math.NaN(), lt0: math.NaN()}
}

// nuTap returns the stencil along ln nu of lnNu in the four tables, which newRampTable lays
// out on one ln nu axis (TestRampNuTap), so that a column's four tails share it.
func (t *rampTable) nuTap(lnNu float64) quadTap { return t.hi[0].tap0(lnNu) }

// tailZ returns T_s(w) of table k (s = 0 or b) for shape nu in [popNuMin, popNuMax] with
// the constants c of that shape and its stencil along ln nu tap = t.nuTap(ln nu),
// w >= rampWMin, and its Wilson-Hilferty variable z = 3 c.sa (c.kc w^2 - 1 + c.ia).
func (t *rampTable) tailZ(k int, nu float64, c *rampShape, tap *quadTap, w, z float64) float64 {
	if z >= 0 {
		if z >= rampZHi {
			return 0
		}
		return colExp(popAt2Tap(t.hi[k], tap, z))
	}
	if math.IsNaN(c.t0) {
		if math.IsNaN(c.lt0) {
			c.t0 = rampTail0(nu, c.s)
		} else {
			c.t0 = colExp(c.lt0)
		}
	}
	if z <= -rampZLo {
		return c.t0 - w
	}
	return c.t0 - w + popAt2Tap(t.lo[k], tap, z)
}

// tails returns T_s(w1) and T_s(w2) of table k (tailZ), the two exponentials in one call
// (colExp2) when both points are in the ln T_s table.
func (t *rampTable) tails(k int, nu float64, c *rampShape, tap *quadTap, w1, w2 float64) (t1, t2 float64) {
	z1 := 3 * c.sa * (c.kc*w1*w1 - 1 + c.ia)
	z2 := 3 * c.sa * (c.kc*w2*w2 - 1 + c.ia)
	if z1 >= 0 && z2 >= 0 && z1 < rampZHi && z2 < rampZHi {
		return colExp2(popAt2Tap2(t.hi[k], tap, z1, z2))
	}
	return t.tailZ(k, nu, c, tap, w1, z1), t.tailZ(k, nu, c, tap, w2, z2)
}

// moments returns POP = M(0) and M(b)/E(nu, b) of the ramp onset o for shape nu (in
// [popNuMin, popNuMax], lnNu = ln nu) and cell top radius rmu, with c0, cb the shape
// constants of s = 0 and s = b and tap their stencil along ln nu (set here when not ok); ok
// is false when r_1/r_μ < rampWMin (then the caller evaluates subgridMoment).
func (t *rampTable) moments(o Onset, nu, lnNu, rmu float64, c0, cb *rampShape, tap *quadTap) (pop, mbe float64, ok bool) {
	r1, r2 := o.Radius-o.Width/2, o.Radius+o.Width/2
	w1, w2 := r1/rmu, r2/rmu
	if !(w1 >= rampWMin) {
		return 0, 0, false
	}
	if !tap.ok {
		*tap = t.nuTap(lnNu)
	}
	f := rmu / (r2 - r1)
	p1, p2 := t.tails(0, nu, c0, tap, w1, w2)
	m1, m2 := t.tails(1, nu, cb, tap, w1, w2)
	pop = f * (p1 - p2)
	mbe = f * (m1 - m2)
	return min(max(pop, 0), 1), max(mbe, 0), true
}

// rampNuTable tabulates the per-shape factors of the sub-grid drizzle model on ln ν in
// [0, ln popNuMax] (nodes every 1/64, 3-point quadratic interpolation about the nearest
// node), for columns whose own LWP standard deviation gives ν: ln E(ν, b), ln T_0(0),
// ln T_b(0) (rampTail0) and (ν/(ν + b))^(1/3). These are smooth in ln ν; the largest
// relative error against the functions is below rampNuTol (ramptable_test.go).
type rampNuTable struct {
	inv  float64 // nodes per unit ln ν
	vals [][4]float64
}

const (
	rampNuStep = 1.0 / 64
	rampNuTol  = 1e-7
)

// newRampNuTable evaluates the nodes for the rate exponent b.
func newRampNuTable(b float64) *rampNuTable {
	n := int(math.Ceil(math.Log(popNuMax)/rampNuStep)) + 1
	t := &rampNuTable{inv: 1 / rampNuStep, vals: make([][4]float64, n)}
	for i := range t.vals {
		nu := math.Exp(float64(i) * rampNuStep)
		t.vals[i] = [4]float64{math.Log(SubgridEnhancement(nu, b)), math.Log(rampTail0(nu, 0)),
			math.Log(rampTail0(nu, b)), math.Cbrt(nu / (nu + b))}
	}
	return t
}

// at returns E(ν, b), T_0(0), T_b(0) and (ν/(ν + b))^(1/3) for lnNu = ln ν in
// [0, ln popNuMax]; ok is false outside. It is logs with the three exponentials taken.
func (t *rampNuTable) at(lnNu float64) (e, t00, t0b, kc float64, ok bool) {
	f, ok := t.logs(lnNu)
	if !ok {
		return 0, 0, 0, 0, false
	}
	e, t00 = colExp2(f[0], f[1])
	return e, t00, colExp(f[2]), f[3], true
}

// logs returns the interpolated nodes at lnNu = ln ν in [0, ln popNuMax]: ln E(ν, b),
// ln T_0(0), ln T_b(0) and (ν/(ν + b))^(1/3); ok is false outside. Column takes the
// exponentials it needs (T_s(0) only for a tail below z = 0, rampShape.lt0).
func (t *rampNuTable) logs(lnNu float64) (f [4]float64, ok bool) {
	u := lnNu * t.inv
	n := len(t.vals)
	if !(u >= 0 && u <= float64(n-1)) {
		return f, false
	}
	k := max(1, min(int(u+colHalf), n-2))
	x := u - float64(k)
	a0, a1, a2 := x*(x-1)/2, 1-x*x, x*(x+1)/2
	v0, v1, v2 := &t.vals[k-1], &t.vals[k], &t.vals[k+1]
	for j := range f {
		f[j] = a0*v0[j] + a1*v1[j] + a2*v2[j]
	}
	return f, true
}
