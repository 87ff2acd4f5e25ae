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
// Column takes T_0 and T_b (b = Params.DrizzleLWPExp) from two tables on (ln ν, z), with z
// the Wilson-Hilferty variable of Q(ν, x) (as the POP table, pop.go),
//
//	z = 3 ν^(1/2) (w^2 - 1 + 1/(9ν)),
//
// the same z for both (so one stencil in z serves both values at a point w, stored side by
// side): for z < 0 the table holds U_0 and U_b (which start as w^(6a+1), that is
// (z - z_0)^(3a+1/2) from the edge z_0 where w = 0, smooth for a >= 1, and are 0 below
// z = -rampZLo within 1e-10: U_b <= U_0 since P(a, x) falls with a), for z >= 0 ln T_0 and
// ln T_b (the tails, kept to a relative accuracy; 0 above rampZHi, where T_0 is below about
// 1e-90, which drops T_b there too: it matters only where POP is below 1e-12). The difference T_s(w_1) - T_s(w_2) has no cancellation
// where POP is small (there T_s(w_2) << T_s(w_1)), unlike the closed form of subgridMoment
// evaluated with approximate Q; where both points are in the ln T part it is taken as
// T_s(w_1) (1 - e^d), d = ln T_s(w_2) - ln T_s(w_1), and e^d below e^-rampSkip is dropped.
// The largest error against subgridMoment is below rampTabTol (TestRampTableBound, over ν in
// [1, 1e4], b in [0, 10] and onsets from 1 to 8 µm wide: measured 1.7e-5 in POP and 2.7e-5
// in M(b); doc/science.md#tables).
type rampTable struct {
	lo, hi rampGrid     // (U_0, U_b) for z < 0 and (ln T_0, ln T_b) for z >= 0
	b      float64      // Params.DrizzleLWPExp
	nu     *rampNuTable // per-shape factors
}

// rampGrid holds value pairs (s = 0, s = b) on nodes ln ν = i rampLnStep (i < rampNl) by
// z = zlo + j rampZStep (j < nz), pair (i, j) at v[2 (i nz + j)], read by quadratic
// interpolation about the nearest node along each axis (rampGrid.at).
type rampGrid struct {
	zlo float64
	nz  int
	v   []float64
}

const (
	rampZLo   = popZMax // below -rampZLo: U_s = 0, T_s(w) = T_s(0) - w
	rampZHi   = 20.0    // above: T_s = 0 (T_0 below about 1e-90 for ν >= 1)
	rampZStep = 0.05    // node spacing in z
	rampZPad  = 0.5     // overlap of the two tables around z = 0
	rampWMin  = 0.3     // w below it (r_μ above 3.3 r_k): Column evaluates subgridMoment
	rampLnMin = -740.0  // ln T_s of nodes that underflow (T_s = 0 to double precision)
	rampSkip  = 14.0    // T_s(w2)/T_s(w1) below e^-rampSkip (8e-7) is dropped (rampTable.moments)
	// rampTabTol bounds the table's relative error in POP and R̄ where POP >= 1e-12 (and its
	// absolute error in POP), measured against subgridMoment over the whole table domain
	// (ramptable_test.go).
	rampTabTol = 1e-4
	rampLnStep = 1.0 / 12 // node spacing in ln ν
	rampNl     = 112      // nodes along ln ν: rampLnStep (rampNl - 1) >= ln popNuMax
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

// rampSnMax is popNuMax^(1/2), the largest ν^(1/2) of the ramp tables.
var rampSnMax = math.Sqrt(popNuMax)

// newRampTable evaluates the nodes of the ramp tables for the rate exponent b.
func newRampTable(b float64) *rampTable {
	t := &rampTable{b: b, nu: newRampNuTable(b)}
	nzLo := int(math.Round((rampZLo+rampZPad)/rampZStep)) + 1
	nzHi := int(math.Round((rampZHi+rampZPad)/rampZStep)) + 1
	t.lo = rampGrid{zlo: -rampZLo, nz: nzLo, v: make([]float64, 2*rampNl*nzLo)}
	t.hi = rampGrid{zlo: -rampZPad, nz: nzHi, v: make([]float64, 2*rampNl*nzHi)}
	// w^2 at node (i, z): z/(3 ν^(1/2)) + 1 - 1/(9ν)
	w2 := func(i int, z float64) (nu, w2 float64) {
		nu = math.Exp(float64(i) * rampLnStep)
		return nu, z/(3*math.Sqrt(nu)) + 1 - 1/(9*nu)
	}
	parallelFor(rampNl, func(i int) {
		for j := 0; j < nzLo; j++ {
			nu, ww := w2(i, t.lo.zlo+float64(j)*rampZStep)
			for k, s := range [2]float64{0, b} {
				v := 0.0 // w^2 <= 0: U_s = 0 extends smoothly (U_s ~ (z - z_0)^(3a+1/2))
				if ww > 0 {
					v = rampU(nu, s, math.Sqrt(ww))
				}
				t.lo.v[2*(i*nzLo+j)+k] = v
			}
		}
		for j := 0; j < nzHi; j++ {
			nu, ww := w2(i, t.hi.zlo+float64(j)*rampZStep)
			for k, s := range [2]float64{0, b} {
				tv := rampTail(nu, s, math.Sqrt(max(ww, 0)))
				v := rampLnMin
				if tv > 0 && !math.IsInf(tv, 0) {
					v = max(math.Log(tv), rampLnMin)
				}
				t.hi.v[2*(i*nzHi+j)+k] = v
			}
		}
	})
	return t
}

// rampShape holds what the ramp moments of one gamma shape ν need: its stencil along ln ν
// (middle node k, weights w0, w1, w2 of nodes k - 1, k, k + 1), sn3 = 3 ν^(1/2) and
// zc = sn3 - 1/sn3 (z = sn3 w^2 - zc), T_0(0), T_b(0), le = ln E(ν, b) and e = E(ν, b) (0
// until a point below z = 0 needs it: then colExp(le)).
type rampShape struct {
	k               int
	w0, w1, w2      float64
	sn3, zc         float64
	t00, t0b, le, e float64
}

// shape returns the rampShape of ν = sn^2 in [popNuMin, popNuMax] (lnNu = ln ν), with the
// per-shape factors from rampNuTable (within rampNuTol); ok is false outside.
func (t *rampTable) shape(sn, lnNu float64) (c rampShape, ok bool) {
	if !(sn >= 1 && sn <= rampSnMax) || !t.nuTap(lnNu, &c) {
		return c, false
	}
	f, ok := t.nu.interp(lnNu)
	if !ok {
		return c, false
	}
	c.sn3 = 3 * sn
	c.zc = c.sn3 - 1/c.sn3
	c.le, c.t00, c.t0b = f[0], f[1], f[2]
	return c, true
}

// shapeExact is shape with the per-shape factors from their functions (for a Model's
// Params.GammaShape, once).
func (t *rampTable) shapeExact(nu float64) (c rampShape, ok bool) {
	if !(nu >= popNuMin && nu <= popNuMax) || !t.nuTap(math.Log(nu), &c) {
		return c, false
	}
	c.sn3 = 3 * math.Sqrt(nu)
	c.zc = c.sn3 - 1/c.sn3
	c.t00, c.t0b, c.e = rampTail0(nu, 0), rampTail0(nu, t.b), SubgridEnhancement(nu, t.b)
	c.le = math.Log(c.e)
	return c, true
}

// nuTap sets the stencil of c along ln ν at lnNu; false outside [0, rampLnStep (rampNl - 1)].
func (t *rampTable) nuTap(lnNu float64, c *rampShape) bool {
	u := lnNu * (1 / rampLnStep)
	if !(u >= 0 && u <= rampNl-1) {
		return false
	}
	k := max(1, min(int(u+colHalf), rampNl-2))
	x := u - float64(k)
	c.k, c.w0, c.w1, c.w2 = k, x*(x-1)/2, 1-x*x, x*(x+1)/2
	return true
}

// at returns the interpolated pair of g at z (inside g's z range, within a node's
// extrapolation at its ends) for the stencil along ln ν of c.
func (g *rampGrid) at(c *rampShape, z float64) (v0, vb float64) {
	u := (z - g.zlo) * (1 / rampZStep)
	j := max(1, min(int(u+colHalf), g.nz-2))
	x := u - float64(j)
	b0, b1, b2 := x*(x-1)/2, 1-x*x, x*(x+1)/2
	sd := 2 * g.nz
	o := (c.k-1)*sd + 2*(j-1)
	p0 := (*[6]float64)(g.v[o:])
	p1 := (*[6]float64)(g.v[o+sd:])
	p2 := (*[6]float64)(g.v[o+2*sd:])
	v0 = c.w0 * (b0*p0[0] + b1*p0[2] + b2*p0[4])
	vb = c.w0 * (b0*p0[1] + b1*p0[3] + b2*p0[5])
	v0 += c.w1 * (b0*p1[0] + b1*p1[2] + b2*p1[4])
	vb += c.w1 * (b0*p1[1] + b1*p1[3] + b2*p1[5])
	v0 += c.w2 * (b0*p2[0] + b1*p2[2] + b2*p2[4])
	vb += c.w2 * (b0*p2[1] + b1*p2[3] + b2*p2[5])
	return v0, vb
}

// pair returns T_0(w) and E(ν, b) T_b(w) for the shape c, w >= rampWMin and its z = c.sn3 w^2
// - c.zc: from the ln T table for z >= 0 (ln E added before the exponential), from T_s(0) -
// w + U_s for z < 0 (U_s = 0 below -rampZLo), 0 above rampZHi.
func (t *rampTable) pair(c *rampShape, w, z float64) (t0, etb float64) {
	if z >= 0 {
		if z >= rampZHi {
			return 0, 0
		}
		l0, lb := t.hi.at(c, z)
		return colExp2(l0, lb+c.le)
	}
	if c.e == 0 {
		c.e = colExp(c.le)
	}
	if z <= -rampZLo {
		return c.t00 - w, c.e * (c.t0b - w)
	}
	u0, ub := t.lo.at(c, z)
	return c.t00 - w + u0, c.e * (c.t0b - w + ub)
}

// rampOnset holds the constants of a ramp onset for rampTable.moments: r_1, r_2 and
// 1/(r_2 - r_1).
type rampOnset struct{ r1, r2, iw float64 }

// newRampOnset returns the rampOnset of o (Width > 0).
func newRampOnset(o Onset) rampOnset {
	r1, r2 := o.Radius-o.Width/2, o.Radius+o.Width/2
	return rampOnset{r1, r2, 1 / (r2 - r1)}
}

// moments returns POP = M(0) and M(b) of the ramp onset o for the shape c (of
// rampTable.shape or shapeExact) and cell top radius rmu; ok is false when r_1/r_μ <
// rampWMin (then the caller evaluates subgridMoment).
func (t *rampTable) moments(o *rampOnset, c *rampShape, rmu float64) (pop, mb float64, ok bool) {
	ir := 1 / rmu
	w1, w2 := o.r1*ir, o.r2*ir
	if !(w1 >= rampWMin) {
		return 0, 0, false
	}
	f := rmu * o.iw
	z1, z2 := c.sn3*w1*w1-c.zc, c.sn3*w2*w2-c.zc
	if z1 >= 0 && z2 < rampZHi {
		// both points in the ln T table (z2 > z1): T_s(w1) - T_s(w2) = T_s(w1) (1 - e^d),
		// d = ln T_s(w2) - ln T_s(w1), with e^d dropped below e^-rampSkip
		a0, ab := t.hi.at(c, z1)
		b0, bb := t.hi.at(c, z2)
		pop, mb = colExp2(a0, ab+c.le)
		if d0, db := b0-a0, bb-ab; d0 > -rampSkip || db > -rampSkip {
			e0, eb := colExp2(d0, db)
			pop, mb = pop*(1-e0), mb*(1-eb)
		}
		return min(max(f*pop, 0), 1), max(f*mb, 0), true
	}
	p1, m1 := t.pair(c, w1, z1)
	p2, m2 := t.pair(c, w2, z2)
	pop = f * (p1 - p2)
	mb = f * (m1 - m2)
	return min(max(pop, 0), 1), max(mb, 0), true
}

// rampNuTable tabulates the per-shape factors of the sub-grid drizzle model on ln ν in
// [0, ln popNuMax] (nodes every 1/128, 3-point quadratic interpolation about the nearest
// node), for columns whose own LWP standard deviation gives ν: ln E(ν, b), T_0(0) and T_b(0)
// (rampTail0). These are smooth in ln ν; the largest relative error against the functions
// (of E, not of its logarithm) is below rampNuTol (ramptable_test.go).
type rampNuTable struct {
	inv   float64 // nodes per unit ln ν
	nodes [][3]float64
}

const (
	rampNuStep = 1.0 / 128
	rampNuTol  = 1e-7
)

// newRampNuTable evaluates the nodes for the rate exponent b.
func newRampNuTable(b float64) *rampNuTable {
	n := int(math.Ceil(math.Log(popNuMax)/rampNuStep)) + 1
	t := &rampNuTable{inv: 1 / rampNuStep, nodes: make([][3]float64, n)}
	for i := range t.nodes {
		nu := math.Exp(float64(i) * rampNuStep)
		t.nodes[i] = [3]float64{math.Log(SubgridEnhancement(nu, b)), rampTail0(nu, 0), rampTail0(nu, b)}
	}
	return t
}

// interp returns the interpolated nodes at lnNu = ln ν in [0, ln popNuMax]: ln E(ν, b),
// T_0(0) and T_b(0); ok is false outside.
func (t *rampNuTable) interp(lnNu float64) (f [3]float64, ok bool) {
	u := lnNu * t.inv
	n := len(t.nodes)
	if !(u >= 0 && u <= float64(n-1)) {
		return f, false
	}
	k := max(1, min(int(u+colHalf), n-2))
	x := u - float64(k)
	a0, a1, a2 := x*(x-1)/2, 1-x*x, x*(x+1)/2
	v0, v1, v2 := &t.nodes[k-1], &t.nodes[k], &t.nodes[k+1]
	f[0] = a0*v0[0] + a1*v1[0] + a2*v2[0]
	f[1] = a0*v0[1] + a1*v1[1] + a2*v2[1]
	f[2] = a0*v0[2] + a1*v1[2] + a2*v2[2]
	return f, true
}
