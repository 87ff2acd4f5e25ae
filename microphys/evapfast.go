package microphys

import "math"

// Column's lookups of the evaporation tables (evapTable), in two steps. What depends on the
// sub-cloud layer only is done once the layer is known (evapTable.prepare): ln z_b, the
// threshold radius ln r*, the surface drizzle fraction F and the stencil of the value tables
// along their layer axes (p_s, u, T_b, ln z_b, shared by the reach and evaporation tables,
// whose axes 0-3 are the same). The drop's own part waits for
// the collector's exit radius (evapTable.lookupAt): xi = ln(r0/r*), the stencil along s and
// one contraction and an exponential. Every interpolation is nGrid.at's (axisTaps' taps and
// weights) written out for these layouts, so equal to at to rounding (TestEvapLookupFast):
// the taps of the outer axes (p_s, u and, in the value tables, T_b) are listed and the 3 x 3
// block of the two curved axes with the smallest strides is unrolled; a layer on one node
// along p_s and u (no CTH, well mixed: the default) takes its block directly.

// evLook is the layer part of the evaporation lookups (evapTable.prepare).
type evLook struct {
	zb  float64 // cloud-base height z_b, m
	lrs float64 // ln r* (m) from the threshold table; NaN outside it
	// The value tables' stencil along p_s, u and T_b (linear: first node, number of taps
	// 1 or 2, weights) and ln z_b (quadratic: first of 3 nodes, weights); ok false when the
	// layer is outside those axes.
	kp, ku, kt, kz     int
	np, nu, nt         int
	wp0, wp1, wu0, wu1 float64
	wt0, wt1           float64
	wz0, wz1, wz2      float64
	ok                 bool
	// the coordinates, for nGrid.at when the tables lack the layout of the fast lookups
	// (evapTable.fast false)
	ps, u, tb, lz float64
}

// fastLayout reports whether t's grids are widened and have the layouts of the lookups
// below: threshold (linear p_s, curved T_b, u and ln z_b), flux (linear p_s, u of either
// kind, curved T_b and z_b^(1/2)), and value tables (linear p_s, u, T_b, curved ln z_b and s,
// the same axes 0-3 in both).
func (t *evapTable) fastLayout() bool {
	th, fl, re, ev := t.thr, t.flux, t.reach, t.evap
	for _, g := range []*nGrid{th, fl, re, ev} {
		if !g.widened() {
			return false
		}
	}
	if th.dims != 4 || th.cubic[0] || !th.cubic[1] || !th.cubic[2] || !th.cubic[3] ||
		fl.dims != 4 || fl.cubic[0] || !fl.cubic[2] || !fl.cubic[3] {
		return false
	}
	for _, g := range []*nGrid{re, ev} {
		if g.dims != 5 || g.cubic[0] || g.cubic[1] || g.cubic[2] || !g.cubic[3] || !g.cubic[4] {
			return false
		}
	}
	for d := 0; d < 4; d++ {
		if re.lo[d] != ev.lo[d] || re.step[d] != ev.step[d] || re.inv[d] != ev.inv[d] || re.n[d] != ev.n[d] ||
			re.qlo[d] != ev.qlo[d] || re.qhi[d] != ev.qhi[d] {
			return false
		}
	}
	return true
}

// midLayout reports whether evMixedU falls on the middle node of the threshold table's u
// axis of 3 nodes, where quadT and quadW give the weights (0, 1, 0) (evapTable.threshold).
func (t *evapTable) midLayout() bool {
	g := t.thr
	if g.dims != 4 || !g.cubic[2] || g.n[2] != 3 {
		return false
	}
	k, tk, ok := g.quadT(2, evMixedU)
	w0, w1, w2 := quadW(tk)
	return ok && k == 0 && w0 == 0 && w1 == 1 && w2 == 0
}

// linAxis is axisTaps along linear axis d of g at x, as node index: the first node k, the
// number of taps n (0 outside, 1 on a node) and their weights.
func (g *nGrid) linAxis(d int, x float64) (k, n int, w0, w1 float64) {
	u := (x - g.lo[d]) * g.inv[d]
	top := g.n[d] - 1
	if !(u >= 0 && u <= float64(top)) {
		return 0, 0, 0, 0
	}
	k = min(int(u), top-1)
	if t := u - float64(k); t != 0 {
		return k, 2, 1 - t, t
	}
	return k, 1, 1, 0
}

// quadT is axisTaps along curved axis d of g at x, as node index: the first node k of the 3
// taps and the offset t of x from the middle one (in node steps: |t| <= 1/2, up to 1 in
// the end cells of a grid that is not strict), of weights quadW(t); ok false outside (for a
// strict grid, also in the first and last cell).
func (g *nGrid) quadT(d int, x float64) (k int, t float64, ok bool) {
	u := (x - g.lo[d]) * g.inv[d]
	if !(u >= g.qlo[d] && u <= g.qhi[d]) {
		return 0, 0, false
	}
	c := max(1, min(int(u+colHalf), g.n[d]-2))
	return c - 1, u - float64(c), true
}

// block3 is the contraction of the 3 x 3 values v[o + i s + j] (i, j = 0, 1, 2) with the
// weights b_i and d_j: sum_i b_i (sum_j d_j v[o + i s + j]), summed in that order.
func block3(v []float64, o, s int, b0, b1, b2, d0, d1, d2 float64) float64 {
	p0, p1, p2 := v[o:o+3:o+3], v[o+s:o+s+3:o+s+3], v[o+2*s:o+2*s+3:o+2*s+3]
	r0 := d0*p0[0] + d1*p0[1] + d2*p0[2]
	r1 := d0*p1[0] + d1*p1[1] + d2*p1[2]
	r2 := d0*p2[0] + d1*p2[1] + d2*p2[2]
	return b0*r0 + b1*r1 + b2*r2
}

// quadW returns the weights of the 3-point quadratic at offset t from the middle node
// (axisTaps): t (t - 1)/2, 1 - t^2, t (t + 1)/2.
func quadW(t float64) (w0, w1, w2 float64) { return t * (t - 1) / 2, 1 - t*t, t * (t + 1) / 2 }

// threshold interpolates ln r* (m) at (p_s, T_b, u, ln z_b) (t.thr: linear p_s, curved T_b,
// u and ln z_b, strict); NaN outside. A well-mixed layer at u = evMixedU takes the middle
// node of the placeholder u axis alone (t.thrMid: quadT and quadW give it the weights (0, 1, 0)
// there and the other two nodes hold copies of it, evapTable.fill).
func (t *evapTable) threshold(ps, tb, u, lz float64) float64 {
	g := t.thr
	kp, np, a0, a1 := g.linAxis(0, ps)
	kb, tkb, okb := g.quadT(1, tb)
	b0, b1, b2 := quadW(tkb)
	kd, tkd, okd := g.quadT(3, lz)
	d0, d1, d2 := quadW(tkd)
	if np == 0 || !okb || !okd {
		return math.NaN()
	}
	s0, s1, s2 := g.stride[0], g.stride[1], g.stride[2]
	ob := kb*s1 + kd
	v := g.wide
	mid := t.thrMid && u == evMixedU
	if mid && np == 1 { // one node along p_s and u (columns without CTH), weight 1
		o := kp*s0 + s2 + ob
		return block3(v, o, s1, b0, b1, b2, d0, d1, d2)
	}
	var po [6]int // the taps along p_s and u: offsets and weights
	var pw [6]float64
	n := 0
	if mid {
		po[0], pw[0], po[1], pw[1] = kp*s0+s2, a0, (kp+1)*s0+s2, a1
		n = np
	} else {
		kc, tkc, okc := g.quadT(2, u)
		c0, c1, c2 := quadW(tkc)
		if !okc {
			return math.NaN()
		}
		o := kp*s0 + kc*s2
		po[0], po[1], po[2] = o, o+s2, o+2*s2
		pw[0], pw[1], pw[2] = a0*c0, a0*c1, a0*c2
		po[3], po[4], po[5] = o+s0, o+s0+s2, o+s0+2*s2
		pw[3], pw[4], pw[5] = a1*c0, a1*c1, a1*c2
		n = 3 * np
	}
	acc := 0.0
	for i := 0; i < n; i++ {
		o := po[i] + ob
		acc += pw[i] * block3(v, o, s1, b0, b1, b2, d0, d1, d2)
	}
	return acc
}

// fluxAt interpolates ln F at (p_s, u, T_b, z_b^(1/2)) (t.flux: linear p_s, u linear for
// well-mixed layers and curved otherwise, curved T_b and z_b^(1/2)); NaN outside.
func (t *evapTable) fluxAt(ps, u, tb, sz float64) float64 {
	g := t.flux
	kp, np, a0, a1 := g.linAxis(0, ps)
	kc, tkc, okc := g.quadT(2, tb)
	c0, c1, c2 := quadW(tkc)
	kd, tkd, okd := g.quadT(3, sz)
	d0, d1, d2 := quadW(tkd)
	if np == 0 || !okc || !okd {
		return math.NaN()
	}
	s0, s1, s2 := g.stride[0], g.stride[1], g.stride[2]
	oc := kc*s2 + kd
	v := g.wide
	var po [6]int // the taps along p_s and u: offsets and weights
	var pw [6]float64
	n := 0
	if g.cubic[1] {
		kb, tkb, okb := g.quadT(1, u)
		b0, b1, b2 := quadW(tkb)
		if !okb {
			return math.NaN()
		}
		o := kp*s0 + kb*s1
		po[0], po[1], po[2] = o, o+s1, o+2*s1
		pw[0], pw[1], pw[2] = a0*b0, a0*b1, a0*b2
		po[3], po[4], po[5] = o+s0, o+s0+s1, o+s0+2*s1
		pw[3], pw[4], pw[5] = a1*b0, a1*b1, a1*b2
		n = 3 * np
	} else {
		kb, nb, b0, b1 := g.linAxis(1, u)
		if nb == 0 {
			return math.NaN()
		}
		o := kp*s0 + kb*s1
		if np == 1 && nb == 1 { // one node along p_s and u (well mixed, no CTH), weight 1
			o += oc
			return block3(v, o, s2, c0, c1, c2, d0, d1, d2)
		}
		po[0], po[1], po[2], po[3] = o, o+s1, o+s0, o+s0+s1
		pw[0], pw[1], pw[2], pw[3] = a0*b0, a0*b1, a1*b0, a1*b1
		if nb == 1 { // one tap along u: keep the p_s taps
			po[1], pw[1] = po[2], pw[2]
		}
		n = np * nb
	}
	acc := 0.0
	for i := 0; i < n; i++ {
		o := po[i] + oc
		acc += pw[i] * block3(v, o, s2, c0, c1, c2, d0, d1, d2)
	}
	return acc
}

// prepare does the layer part of the lookups of layer l above a surface at pressure ps
// (Pa), u = ln(1 - RH_s) (evMixedU for well-mixed layers), into e, and returns the surface
// drizzle fraction F (NaN outside its table). ln z_b is colLog's (a table coordinate:
// absolute error logTol max(1, |ln z_b|)).
func (t *evapTable) prepare(u float64, l *SubCloudLayer, ps float64, e *evLook) float64 {
	zb, tb := l.BaseHeight, l.BaseT
	lz := colLog(zb)
	e.zb = zb
	if !t.fast {
		return t.prepareRef(u, tb, lz, ps, e)
	}
	e.lrs = t.threshold(ps, tb, u, lz)
	g := t.reach // the value tables' axes 0-3 (the same in t.evap)
	var okz bool
	var tz float64
	e.kp, e.np, e.wp0, e.wp1 = g.linAxis(0, ps)
	e.ku, e.nu, e.wu0, e.wu1 = g.linAxis(1, u)
	e.kt, e.nt, e.wt0, e.wt1 = g.linAxis(2, tb)
	e.kz, tz, okz = g.quadT(3, lz)
	e.wz0, e.wz1, e.wz2 = quadW(tz)
	e.ok = okz && e.np != 0 && e.nu != 0 && e.nt != 0
	lf := t.fluxAt(ps, u, tb, math.Sqrt(zb))
	if math.IsNaN(lf) {
		return lf
	}
	return colExp(min(lf, 0)) // the builtin: math.Min to the bit (lf is not NaN), inlined
}

// prepareRef is prepare by nGrid.at (tables without the layout of the fast lookups).
func (t *evapTable) prepareRef(u, tb, lz, ps float64, e *evLook) float64 {
	e.ps, e.u, e.tb, e.lz, e.ok = ps, u, tb, lz, true
	e.lrs = t.thr.at(&[nDims]float64{ps, tb, u, lz})
	lf := t.flux.at(&[nDims]float64{ps, u, tb, math.Sqrt(e.zb)})
	if math.IsNaN(lf) {
		return lf
	}
	return colExp(min(lf, 0))
}

// valueAt interpolates value table g (t.reach or t.evap) at s = |xi|^(1/2) with the layer
// stencil (or coordinates) of e (e.ok); NaN outside.
func (t *evapTable) valueAt(g *nGrid, s float64, e *evLook) float64 {
	if !t.fast {
		return g.at(&[nDims]float64{e.ps, e.u, e.tb, e.lz, s})
	}
	ke, tke, ok := g.quadT(4, s)
	e0, e1, e2 := quadW(tke)
	if !ok {
		return math.NaN()
	}
	s0, s1, s2, s3 := g.stride[0], g.stride[1], g.stride[2], g.stride[3]
	d0, d1, d2 := e.wz0, e.wz1, e.wz2
	oz := e.kz*s3 + ke
	v := g.wide
	if e.np == 1 && e.nu == 1 { // one node along p_s and u (well mixed, no CTH), weight 1
		o := e.kp*s0 + e.ku*s1 + e.kt*s2 + oz
		acc := e.wt0 * block3(v, o, s3, d0, d1, d2, e0, e1, e2)
		if e.nt == 1 {
			return acc
		}
		return acc + e.wt1*block3(v, o+s2, s3, d0, d1, d2, e0, e1, e2)
	}
	var po [8]int // the taps along p_s, u and T_b: offsets and weights
	var pw [8]float64
	n := 0
	for a := 0; a < e.np; a++ {
		wa, oa := e.wp0, (e.kp+a)*s0
		if a == 1 {
			wa = e.wp1
		}
		for b := 0; b < e.nu; b++ {
			wb, ob := e.wu0, oa+(e.ku+b)*s1
			if b == 1 {
				wb = e.wu1
			}
			po[n], pw[n] = ob+e.kt*s2, wa*wb*e.wt0
			n++
			if e.nt == 2 {
				po[n], pw[n] = ob+(e.kt+1)*s2, wa*wb*e.wt1
				n++
			}
		}
	}
	acc := 0.0
	for i := 0; i < n; i++ {
		o := po[i] + oz
		acc += pw[i] * block3(v, o, s3, d0, d1, d2, e0, e1, e2)
	}
	return acc
}

// lookupAt is the drop part of the lookup of a drop of radius r0 (m, lnR0 = ln r0) leaving
// the base of the layer of e (prepare): evReached with the surface radius, evEvaporated with
// the evaporation height, or evOutside. The exponentials of the two formulas (evapTable) are
// colExp's: 1 - e^x within 1e-15 absolute, so the evaporation height within 1e-15 z_b and
// (r_s/r0)^4 >= evMinQ within 4e-14 relative (derived from expTol), far inside the
// tables' bounds.
func (t *evapTable) lookupAt(r0, lnR0 float64, e *evLook) (kind int, v float64) {
	xi := lnR0 - e.lrs
	switch {
	case !e.ok: // NaN xi falls through to evOutside below
	case xi >= evXiBand:
		q := 1 - colExp(xi*(t.valueAt(t.reach, math.Sqrt(xi), e)-4))
		if !(q >= evMinQ) { // NaN too
			return evOutside, 0
		}
		return evReached, r0 * math.Sqrt(math.Sqrt(min(q, 1))) // the builtin: math.Min to the bit, inlined
	case xi <= -evXiBand:
		lv := t.valueAt(t.evap, math.Sqrt(-xi), e)
		if math.IsNaN(lv) {
			return evOutside, 0
		}
		return evEvaporated, max(e.zb-e.zb*colExp(xi*lv), 0)
	}
	return evOutside, 0
}
