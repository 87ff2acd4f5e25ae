package microphys

import "math"

// Collector/evaporation fast path (CollectorMethod table).
//
// Collector table. Along the collector's path, with s = z/H, LWC dz = 2 LWP s ds and
// r(z) = r_v s^(1/3), so dR/ds = 2 LWP s E(R, r) V/(4 rho_w (V - w)) (doc/science.md#collector-drop) and
// dt = H ds/(w - V): for a fixed updraft w the exit radius and t_exit/H depend on the column
// only through LWP = Gamma H^2/2, the cloud-top mean-volume radius r_v and the air (fall
// speeds, coalescence). NewModel integrates CollectDirect once at every node of a regular
// grid in (ln LWP, ln r_v, T_top, p_top) and Column interpolates ln R_exit and ln(t_exit/H):
// Catmull-Rom cubic along ln LWP and ln r_v, linear along T and p with two nodes each (a
// residual air effect of < 0.05 % over the whole range; a third T node changed the largest
// errors of TestTableAgainstDirect by < 0.03 %). The air-state terms of each node (its changes
// along T and p) are interpolated bilinearly in ln LWP and ln r_v (tabGrid.interpSplit: within
// 3e-4 of the Catmull-Rom of all corners, collSplitTol). Where the stencil's nodes disagree on
// whether the drop left through the base or the top, or a node failed, the column is
// integrated directly.
//
// Evaporation table. Below cloud base T follows the dry adiabat from T_b and RH rises from
// the surface value to 1 at base (EvaporateDirect), so the result depends on the exit radius
// r0 and the layer (z_b, T_b, RH_s, p_s): base height, base temperature, surface humidity
// and surface pressure (the base pressure follows from them along the dry adiabat). p_s is
// Params.SurfacePressure when cloud base is placed by the dry adiabat (no CTH), and the dry
// adiabat from the base state down to the surface when a CTH places the base; both use the
// same tables (see evapTable below). The drop that just evaporates on reaching the surface
// sets the threshold radius r* of the layer; in xi = ln(r0/r*) the reach/evaporate boundary
// is the plane xi = 0, so no interpolation cell straddles it and only columns within a
// narrow band of it are integrated directly.
//
// Columns integrated directly (outside a grid, near a boundary, or near the collector kink
// at r_v = R0, see collTable.kink) carry QCIntegratedDirectly. The grids below keep the
// interpolation within 0.5 % of direct integration over the whole domain of each table
// (TestCollectorTableWholeDomain: LWP 5-400 g m-2, r_v 3-30 µm, T 273-305 K, p 600-1050 hPa,
// largest errors 0.3 %; TestEvapTableWholeDomain: base 1-3000 m, 270-306 K, surface RH
// 0.5-0.99 or well mixed, drops from r*/10 to 10 r*, largest 0.25 %), and end to end over
// random marine-stratocumulus samples with and without CTH (TestTableAgainstDirect). The
// surface-radius error is relative to the exit radius and the evaporation-height error
// relative to the cloud-base height, because both pass through zero at the boundary. Every
// result that does not come from these tested domains is a direct integration, so flagged.
//
// Build cost: 24320 collector nodes; with well-mixed layers (the default) 729 threshold
// nodes, 144 layers of 21 value nodes and 693 flux nodes of 25 integrations each (about
// 21000 evaporation integrations); with a surface humidity 6561 threshold nodes, 864 layers
// and 6237 flux nodes (about 180000); see BenchmarkNewModel. The table cache
// (cmd/internal/app/tablecache.go) keeps them.

// tabGrid is a regular 4-D grid with, per node, tabVals values (float32, to keep the saved
// tables small: about 0.5 MB for both) and one state byte (0 = failed), interpolated with 2
// taps (linear) or 4 taps (Catmull-Rom) per axis.
type tabGrid struct {
	lo, step, inv [tabDims]float64
	n, stride     [tabDims]int
	cubic         [tabDims]bool
	vals          []float32 // node-major, tabVals per node
	state         []uint8
	// The split form of vals (splitAir), read by interpSplit: per node of the plane of axes
	// 0 and 1, tabVals values A (plane), 3 tabVals air terms B, C, D (air) and the state its
	// four corners along axes 2 and 3 share (pstate).
	plane, air []float64
	pstate     []uint8
}

// widenF32 returns v as float64 (exact). The unrolled interpolations read these copies of
// the filled tables: the same values, without a conversion per tap.
func widenF32(v []float32) []float64 {
	w := make([]float64, len(v))
	for i, x := range v {
		w[i] = float64(x)
	}
	return w
}

// widen sets the float64 copies of every grid of t (for the collector table its split form,
// 0.4 MB, within the second-level cache), once its values are filled or read.
func (t *collTable) widen() {
	t.coll.splitAir()
	if t.evap != nil {
		t.evap.widen()
	}
}

// widen sets the float64 copies of the evaporation tables.
func (t *evapTable) widen() {
	for _, g := range []*nGrid{t.thr, t.reach, t.evap, t.flux} {
		g.widen()
	}
	t.fast = t.fastLayout()
}

// widen sets g.wide from g.vals, once they are filled.
func (g *nGrid) widen() { g.wide = widenF32(g.vals) }

// widened reports whether g.wide holds g.vals (the unrolled lookups read it).
func (g *nGrid) widened() bool { return len(g.wide) == len(g.vals) }

const (
	tabDims = 4
	tabVals = 2 // values per node; a node function fills tabVals values and then the state
	tabWork = 4 // goroutines used to build a table
)

// newTabGrid lays out a grid from lo to hi with n nodes per axis.
func newTabGrid(lo, hi [tabDims]float64, n [tabDims]int, cubic [tabDims]bool) *tabGrid {
	if cubic[2] || cubic[3] {
		panic("microphys: table axes 2 and 3 must be linear")
	}
	g := &tabGrid{lo: lo, n: n, cubic: cubic}
	total := 1
	for d := tabDims - 1; d >= 0; d-- {
		g.stride[d] = total
		total *= n[d]
		g.step[d] = (hi[d] - lo[d]) / float64(n[d]-1)
		g.inv[d] = 1 / g.step[d]
	}
	g.vals = make([]float32, total*tabVals)
	g.state = make([]uint8, total)
	return g
}

// fill evaluates f at every node, in parallel. f writes tabVals values and the state (as a
// float, NaN for failed) into v.
func (g *tabGrid) fill(f func(x [tabDims]float64, v []float64)) {
	total := len(g.state)
	done := make(chan struct{}, tabWork)
	for w := 0; w < tabWork; w++ {
		go func(w int) {
			var v [tabVals + 1]float64
			for i := w; i < total; i += tabWork {
				f(g.node(i), v[:])
				for k := 0; k < tabVals; k++ {
					g.vals[i*tabVals+k] = float32(v[k])
				}
				g.state[i] = stateByte(v[tabVals])
			}
			done <- struct{}{}
		}(w)
	}
	for w := 0; w < tabWork; w++ {
		<-done
	}
}

// node returns the coordinates of node index i.
func (g *tabGrid) node(i int) (x [tabDims]float64) {
	for d := 0; d < tabDims; d++ {
		k := i / g.stride[d]
		i -= k * g.stride[d]
		x[d] = g.lo[d] + float64(k)*g.step[d]
	}
	return x
}

// stateByte is the state byte of a node function's state value (0 = failed, NaN too).
func stateByte(st float64) uint8 {
	if st >= 1 && st <= 255 {
		return uint8(st)
	}
	return 0
}

// tabStencil is the interpolation stencil of one point: first node and weights per axis.
type tabStencil struct {
	first [tabDims]int
	nt    [tabDims]int
	w     [tabDims][4]float64
}

// Catmull-Rom weight polynomials (common practice), t in [0, 1]:
// w-1 = (-t^3 + 2t^2 - t)/2, w0 = (3t^3 - 5t^2 + 2)/2, w1 = (-3t^3 + 4t^2 + t)/2, w2 = (t^3 - t^2)/2.
var catmullRom = [4][4]float64{
	{0, -1, 2, -1},
	{2, 0, -5, 3},
	{0, 1, 4, -3},
	{0, 0, -1, 1},
}

// stencil locates x; false when x is outside the grid (or NaN).
func (g *tabGrid) stencil(x [tabDims]float64, s *tabStencil) bool {
	for d := 0; d < tabDims; d++ {
		u := (x[d] - g.lo[d]) * g.inv[d]
		if !(u >= 0 && u <= float64(g.n[d]-1)) {
			return false
		}
		k := int(u)
		if k == g.n[d]-1 {
			k--
		}
		t := u - float64(k)
		if g.cubic[d] && k >= 1 && k <= g.n[d]-3 {
			s.first[d], s.nt[d] = k-1, 4
			t2 := t * t
			t3 := t2 * t
			for j := 0; j < 4; j++ {
				c := &catmullRom[j]
				s.w[d][j] = (c[0] + c[1]*t + c[2]*t2 + c[3]*t3) / 2
			}
		} else {
			s.first[d], s.nt[d] = k, 2
			s.w[d][0], s.w[d][1] = 1-t, t
		}
	}
	return true
}

// interp accumulates the weighted values into acc[0:tabVals]. It returns the state shared
// by every tap, or 0 when the taps disagree or one failed.
func (g *tabGrid) interp(s *tabStencil, acc *[tabVals]float64) uint8 {
	*acc = [tabVals]float64{}
	base := 0
	for d := 0; d < tabDims; d++ {
		base += s.first[d] * g.stride[d]
	}
	st := g.state[base]
	if st == 0 {
		return 0
	}
	// The last two axes are linear in both tables: unroll their 2 x 2 block.
	s2, s3 := g.stride[2], g.stride[3]
	w00, w01 := s.w[2][0]*s.w[3][0], s.w[2][0]*s.w[3][1]
	w10, w11 := s.w[2][1]*s.w[3][0], s.w[2][1]*s.w[3][1]
	vals, state := g.vals, g.state
	for a := 0; a < s.nt[0]; a++ {
		oa := base + a*g.stride[0]
		for b := 0; b < s.nt[1]; b++ {
			o := oa + b*g.stride[1]
			o01, o10, o11 := o+s3, o+s2, o+s2+s3
			if state[o] != st || state[o01] != st || state[o10] != st || state[o11] != st {
				return 0
			}
			wab := s.w[0][a] * s.w[1][b]
			p00, p01 := vals[o*tabVals:o*tabVals+2], vals[o01*tabVals:o01*tabVals+2]
			p10, p11 := vals[o10*tabVals:o10*tabVals+2], vals[o11*tabVals:o11*tabVals+2]
			acc[0] += wab * (w00*float64(p00[0]) + w01*float64(p01[0]) + w10*float64(p10[0]) + w11*float64(p11[0]))
			acc[1] += wab * (w00*float64(p00[1]) + w01*float64(p01[1]) + w10*float64(p10[1]) + w11*float64(p11[1]))
		}
	}
	return st
}

// isCC22 reports whether g has the collector table's layout, cubic axes 0 and 1 and two nodes
// along each of the linear axes 2 and 3, with its split form set (splitAir; interpSplit).
func (g *tabGrid) isCC22() bool {
	n := g.n[0] * g.n[1]
	return g.cubic[0] && g.cubic[1] && g.n[2] == 2 && g.n[3] == 2 && len(g.plane) == n*tabVals &&
		len(g.air) == n*3*tabVals && len(g.pstate) == n
}

// splitAir sets the split form of a filled grid with two nodes along each linear axis (read
// by interpSplit): per node (i, j) of the plane of axes 0 and 1, with V_ab the values at
// corner (a, b) of axes 2 and 3,
//
//	A = V_00,  B = V_10 - V_00,  C = V_01 - V_00,  D = V_11 - V_10 - V_01 + V_00
//
// (the linear interpolation along axes 2 and 3 at u2, u3 in [0, 1] is then
// A + u2 B + u3 C + u2 u3 D, derived), each exact in float64 (sums of float32 values), and the
// state byte the four corners share (0 when they differ or one failed).
func (g *tabGrid) splitAir() {
	if g.n[2] != 2 || g.n[3] != 2 {
		return
	}
	n := g.n[0] * g.n[1]
	g.plane = make([]float64, n*tabVals)
	g.air = make([]float64, n*3*tabVals)
	g.pstate = make([]uint8, n)
	s2, s3 := g.stride[2], g.stride[3]
	for i := 0; i < g.n[0]; i++ {
		for j := 0; j < g.n[1]; j++ {
			o := i*g.stride[0] + j*g.stride[1]
			q := i*g.n[1] + j
			st := g.state[o]
			if g.state[o+s2] != st || g.state[o+s3] != st || g.state[o+s2+s3] != st {
				st = 0
			}
			g.pstate[q] = st
			for k := 0; k < tabVals; k++ {
				v00, v10 := float64(g.vals[o*tabVals+k]), float64(g.vals[(o+s2)*tabVals+k])
				v01, v11 := float64(g.vals[(o+s3)*tabVals+k]), float64(g.vals[(o+s2+s3)*tabVals+k])
				g.plane[q*tabVals+k] = v00
				a := g.air[q*3*tabVals : (q+1)*3*tabVals]
				a[k], a[tabVals+k], a[2*tabVals+k] = v10-v00, v01-v00, (v11-v10)-(v01-v00)
			}
		}
	}
}

// interpSplit interpolates a grid with isCC22 at x = (x0, x1, x2, x3) in its split form
// (splitAir): Catmull-Rom (or linear in the first and last cell, as stencil) along axes 0
// and 1 on A, and bilinear in the cell of (x0, x1) on the air terms B, C and D,
//
//	v = CR(A) + u2 BL(B) + u3 BL(C) + u2 u3 BL(D),   u_d = (x_d - lo_d)/step_d,
//
// where stencil and interp take Catmull-Rom on all four: 16 taps of 2 values and 4 of 6
// where they read 64 of 2. The air terms vary slowly over the plane (in the collector table
// |B|, |C| < 0.09 and |D| < 0.01 in ln R_exit and ln(t_exit/H) over the whole grid, whose
// cells are 0.055 wide in ln LWP and 0.031 in ln r_v), so that their bilinear interpolation,
// whose error is at most h^2/8 times their curvature (common practice), costs little: within
// collSplitTol of stencil and interp over the whole collector table where Column uses it
// (straddlesKink false), tested on its nodes, cell centres and edges and random points
// (TestCollectorSplit, and for another collector start radius TestCollectorTableWholeDomain).
// The state is that of stencil and interp (every tap's four corners share it, else 0); 0
// outside the grid too. Inside the grid's interior the stencil is written out.
func (g *tabGrid) interpSplit(x0, x1, x2, x3 float64, acc *[tabVals]float64) uint8 {
	// stencil along the cubic axes 0 and 1, written out; k: the cell of the bilinear terms
	var w [2][4]float64
	var nt, k, first [2]int
	var t [2]float64
	xs := [2]float64{x0, x1}
	for d := 0; d < 2; d++ {
		u := (xs[d] - g.lo[d]) * g.inv[d]
		top := g.n[d] - 1
		if !(u >= 0 && u <= float64(top)) {
			return 0
		}
		kd := min(int(u), top-1)
		td := u - float64(kd)
		k[d], t[d], first[d] = kd, td, kd
		if kd >= 1 && kd <= top-2 {
			t2 := td * td
			t3 := t2 * td
			w[d] = [4]float64{(-td + 2*t2 - t3) / 2, (2 - 5*t2 + 3*t3) / 2, (td + 4*t2 - 3*t3) / 2, (-t2 + t3) / 2} // the rows of catmullRom
			nt[d] = 4
			first[d]--
		} else {
			w[d][0], w[d][1] = 1-td, td
			nt[d] = 2
		}
	}
	u2 := (x2 - g.lo[2]) * g.inv[2] // one cell: first node 0, t = u
	u3 := (x3 - g.lo[3]) * g.inv[3]
	if !(u2 >= 0 && u2 <= 1) || !(u3 >= 0 && u3 <= 1) {
		return 0
	}
	*acc = [tabVals]float64{}
	n1 := g.n[1]
	base := first[0]*n1 + first[1]
	ps := g.pstate
	st := ps[base]
	if st == 0 {
		return 0
	}
	wa, wb := &w[0], &w[1]
	acc0, acc1 := 0.0, 0.0
	if nt[0] == 4 && nt[1] == 4 { // inside the grid: the loops below written out, the same sums
		rep := uint32(st) * 0x01010101
		for a := 0; a < 4; a++ {
			o := base + a*n1
			if bytes4(ps[o:o+4:o+4]) != rep {
				return 0
			}
		}
		for a := 0; a < 4; a++ {
			o := (base + a*n1) * tabVals
			p := g.plane[o : o+8 : o+8]
			r0 := wb[0]*p[0] + wb[1]*p[2] + wb[2]*p[4] + wb[3]*p[6]
			r1 := wb[0]*p[1] + wb[1]*p[3] + wb[2]*p[5] + wb[3]*p[7]
			acc0 += wa[a] * r0
			acc1 += wa[a] * r1
		}
	} else {
		for a := 0; a < nt[0]; a++ {
			o := base + a*n1
			r0, r1 := 0.0, 0.0
			for b := 0; b < nt[1]; b++ {
				if ps[o+b] != st {
					return 0
				}
				p := g.plane[(o+b)*tabVals : (o+b+1)*tabVals]
				r0 += wb[b] * p[0]
				r1 += wb[b] * p[1]
			}
			acc0 += wa[a] * r0
			acc1 += wa[a] * r1
		}
	}
	// the air terms: e = u2 B + u3 C + u2 u3 D at the cell's four nodes, bilinear
	u23 := u2 * u3
	c := (k[0]*n1 + k[1]) * 3 * tabVals
	q0 := g.air[c : c+12 : c+12] // nodes (k0, k1) and (k0, k1 + 1)
	c += n1 * 3 * tabVals
	q1 := g.air[c : c+12 : c+12] // nodes (k0 + 1, k1) and (k0 + 1, k1 + 1)
	t0, t1 := t[0], t[1]
	s0, s1 := 1-t0, 1-t1
	e00 := u2*q0[0] + u3*q0[2] + u23*q0[4]
	f00 := u2*q0[1] + u3*q0[3] + u23*q0[5]
	e01 := u2*q0[6] + u3*q0[8] + u23*q0[10]
	f01 := u2*q0[7] + u3*q0[9] + u23*q0[11]
	e10 := u2*q1[0] + u3*q1[2] + u23*q1[4]
	f10 := u2*q1[1] + u3*q1[3] + u23*q1[5]
	e11 := u2*q1[6] + u3*q1[8] + u23*q1[10]
	f11 := u2*q1[7] + u3*q1[9] + u23*q1[11]
	acc[0] = acc0 + (s0*(s1*e00+t1*e01) + t0*(s1*e10+t1*e11))
	acc[1] = acc1 + (s0*(s1*f00+t1*f01) + t0*(s1*f10+t1*f11))
	return st
}

// collSplitTol bounds |interpSplit - interp| on the collector table's ln R_exit and
// ln(t_exit/H) where Column uses it: 3e-4, that is 0.03 % on the exit radius and time, a
// sixteenth of their 0.5 % bound against direct integration (tableTol; largest measured
// 1.6e-4, TestCollectorSplit).
const collSplitTol = 3e-4

// bytes4 returns b[0:4] as a little-endian uint32 (one load).
func bytes4(b []byte) uint32 {
	b = b[:4:4]
	return uint32(b[0]) | uint32(b[1])<<8 | uint32(b[2])<<16 | uint32(b[3])<<24
}

// Grid of the collector table: axes ln LWP (kg m-2), ln r_v (m), T (K), p (Pa).
var collGrid = struct {
	lo, hi [tabDims]float64
	n      [tabDims]int
}{
	lo: [tabDims]float64{math.Log(5e-3), math.Log(3e-6), 273.15, 60000},
	hi: [tabDims]float64{math.Log(0.4), math.Log(30e-6), 305, 105000},
	n:  [tabDims]int{80, 76, 2, 2},
}

// Collector table outputs: ln R_exit, ln(t_exit/H), state (1 exit base, 2 exit top, NaN failed).
const (
	ctState = tabVals
	stBase  = 1
	stTop   = 2
)

type collTable struct {
	coll *tabGrid
	evap *evapTable // nil when the evaporation is off
	// kink is the ln r_v axis coordinate (in node steps) of r_v = Params.Collector.R0:
	// where the cloud-top droplets are as large as the collector, |V(R) - v(r)| vanishes
	// at the start and the exit radius and time have a kink in r_v that a cubic stencil
	// spanning it misses by up to 1.6 % and 6 % (TestCollectorTableWholeDomain). Columns
	// whose stencil spans it, or comes within kinkMargin of it, are integrated directly
	// (QCIntegratedDirectly): a band of five cells, about ±7.5 % in r_v.
	kink float64
}

// straddlesKink reports whether the ln r_v stencil of lnRv spans the kink strictly inside.
func (t *collTable) straddlesKink(lnRv float64) bool {
	g := t.coll
	u := (lnRv - g.lo[1]) * g.inv[1]
	top := g.n[1] - 1
	k := min(int(u), top-1)
	lo, hi := float64(k), float64(k+1)
	if k >= 1 && k <= top-2 {
		lo, hi = lo-1, hi+1
	}
	return t.kink > lo-kinkMargin && t.kink < hi+kinkMargin
}

// kinkMargin is the distance (node steps) beyond a stencil at which the kink still sends a
// column to direct integration: next to the kink the exit time curves too fast for the
// cubic (0.52 % error 1.5 steps from it with no margin, TestCollectorTableWholeDomain).
const kinkMargin = 1.0

// buildCollTable integrates every node of both tables for model m (in parallel).
func buildCollTable(m *Model) *collTable {
	t := newTableShells(m.p)
	t.coll.fill(m.collNode)
	if t.evap != nil {
		t.evap.fill()
	}
	t.widen()
	return t
}

// newTableShells lays out the (unfilled) tables of parameters p.
func newTableShells(p Params) *collTable {
	t := &collTable{}
	cg := collGrid
	t.coll = newTabGrid(cg.lo, cg.hi, cg.n, [tabDims]bool{true, true, false, false})
	t.kink = (math.Log(p.Collector.R0) - t.coll.lo[1]) * t.coll.inv[1]
	if p.EnableEvaporation {
		t.evap = newEvapTable(p)
	}
	return t
}

// collNode integrates one collector node x = (ln LWP, ln r_v, T, p).
func (m *Model) collNode(x [tabDims]float64, v []float64) {
	nan := math.NaN()
	v[0], v[1], v[ctState] = nan, nan, nan
	lwp, rv, T, pr := math.Exp(x[0]), math.Exp(x[1]), x[2], x[3]
	cw := adiabaticState(T, pr).cw
	if m.p.FixedCw > 0 {
		cw = m.p.FixedCw
	}
	gamma := m.p.Fad * cw
	h := math.Sqrt(2 * lwp / gamma)
	nd := three * gamma * h / (four * math.Pi * WaterDensity * rv * rv * rv)
	if !(h > 0) || !(nd > 0) {
		return
	}
	var res colResult
	m.collectDirect(h, gamma, nd, T, pr, &res)
	if !res.ok {
		return
	}
	v[0], v[1] = math.Log(res.r), math.Log(res.t/h)
	v[ctState] = stTop
	if res.exitBase {
		v[ctState] = stBase
	}
}

// dryBasePressure returns the cloud-base pressure (Pa) of a base at temperature tb (K) and
// height zb (m) above a surface at pressure ps (Pa) along the dry adiabat (inverse of
// DryBaseHeight).
func dryBasePressure(tb, zb, ps float64) float64 {
	ts := tb + Gravity*zb/SpecificHeatDryAir
	return ps * math.Pow(tb/ts, SpecificHeatDryAir/GasConstantDry)
}

// collect interpolates the collector table at (ln LWP, ln r_v, T, p); false when the column
// is outside it or its stencil straddles a regime change. It is collectRef with colExp
// (colExp2) for math.Exp: the same results to rounding.
func (t *collTable) collect(lnLWP, lnRv, h, T, pr float64, res *colResult) bool {
	g := t.coll
	if !g.isCC22() {
		return t.collectRef(lnLWP, lnRv, h, T, pr, res)
	}
	if t.straddlesKink(lnRv) {
		return false
	}
	var acc [tabVals]float64
	st := g.interpSplit(lnLWP, lnRv, T, pr, &acc)
	if st == 0 {
		return false
	}
	res.ok = true
	r, th := colExp2(acc[0], acc[1])
	res.lnR, res.r, res.t = acc[0], r, h*th
	res.exitBase = st == stBase
	return true
}

// collectRef is collect with math.Exp: the exit radius given to a direct evaporation
// integration (Column), whose adaptive steps answer a last-bit change of r0 by up to their
// tolerance, so it gets the inputs it always had. The interpolation is interpSplit (the
// general stencil and interp for a grid without the split form).
func (t *collTable) collectRef(lnLWP, lnRv, h, T, pr float64, res *colResult) bool {
	if t.straddlesKink(lnRv) {
		return false
	}
	var acc [tabVals]float64
	var st uint8
	if g := t.coll; g.isCC22() {
		st = g.interpSplit(lnLWP, lnRv, T, pr, &acc)
	} else {
		var s tabStencil
		if !g.stencil([tabDims]float64{lnLWP, lnRv, T, pr}, &s) {
			return false
		}
		st = g.interp(&s, &acc)
	}
	if st == 0 {
		return false
	}
	res.ok = true
	res.lnR, res.r, res.t = acc[0], math.Exp(acc[0]), h*math.Exp(acc[1])
	res.exitBase = st == stBase
	return true
}

// nGrid is a regular grid of up to nDims axes with one float32 value per node (NaN for a
// failed node, so that any failed tap makes the interpolated value NaN), interpolated with
// 3-point quadratics along the curved axes (field cubic; see axisTaps) and linearly along
// the others; a linear axis whose point falls on a node uses that node only. When the grid
// is strict, a point in the first or last cell of a curved axis counts as outside (the
// grid's ranges are then padded by one cell beyond the range of use). The quadratic needs
// 3 taps per axis where Catmull-Rom needs 4 (27 instead of 64 for the threshold table) at
// a similar error, measured in TestEvapThreshold and TestTableAgainstDirect.
type nGrid struct {
	dims          int
	strict        bool
	lo, step, inv [nDims]float64
	n, stride     [nDims]int
	cubic         [nDims]bool // curved axis: quadratic interpolation
	vals          []float32
	wide          []float64 // vals widened (widen), read by the unrolled lookups and popAt2
	// qlo, qhi bound u = (x - lo)/step where quadT takes x: [0, n - 1], or [1, n - 2]
	// when the grid is strict (axisTaps' range along a curved axis).
	qlo, qhi [nDims]float64
}

const nDims = 5

// newNGrid lays out a grid of len(n) axes from lo to hi with n nodes per axis (n >= 2).
func newNGrid(lo, hi []float64, n []int, cubic []bool, strict bool) *nGrid {
	g := &nGrid{dims: len(n), strict: strict}
	total := 1
	for d := g.dims - 1; d >= 0; d-- {
		g.lo[d], g.n[d], g.cubic[d] = lo[d], n[d], cubic[d]
		g.stride[d] = total
		total *= n[d]
		g.step[d] = (hi[d] - lo[d]) / float64(n[d]-1)
		g.inv[d] = 1 / g.step[d]
		g.qlo[d], g.qhi[d] = 0, float64(n[d]-1)
		if strict {
			g.qlo[d], g.qhi[d] = 1, float64(n[d]-2)
		}
	}
	g.vals = make([]float32, total)
	for i := range g.vals {
		g.vals[i] = float32(math.NaN())
	}
	return g
}

// node returns the coordinates of node index i.
func (g *nGrid) node(i int) (x [nDims]float64) {
	for d := 0; d < g.dims; d++ {
		k := i / g.stride[d]
		i -= k * g.stride[d]
		x[d] = g.lo[d] + float64(k)*g.step[d]
	}
	return x
}

// axisTaps locates coordinate xd on axis d: the taps' first node offset, their number (1, 2
// or 3 consecutive nodes) and weights; nt = 0 when outside. Along a curved axis the taps are
// the 3-point Lagrange quadratic about the nearest node k (common practice):
//
//	t = u - k in [-1/2, 1/2]:  w_-1 = t (t - 1)/2,  w_0 = 1 - t^2,  w_1 = t (t + 1)/2
//
// (about the second or last-but-one node in the first and last half-cell, or outside when
// the grid is strict and the point is in the first or last cell).
func (g *nGrid) axisTaps(d int, xd float64, w *[4]float64) (off, nt int) {
	u := (xd - g.lo[d]) * g.inv[d]
	top := float64(g.n[d] - 1)
	if !(u >= 0 && u <= top) {
		return 0, 0
	}
	sd := g.stride[d]
	if g.cubic[d] {
		if g.strict && !(u >= 1 && u <= top-1) {
			return 0, 0
		}
		k := int(u + 0.5)
		k = max(1, min(k, g.n[d]-2))
		t := u - float64(k)
		w[0], w[1], w[2] = t*(t-1)/2, 1-t*t, t*(t+1)/2
		return (k - 1) * sd, 3
	}
	k := int(u)
	if k == g.n[d]-1 {
		k--
	}
	t := u - float64(k)
	if t == 0 {
		w[0] = 1
		return k * sd, 1
	}
	w[0], w[1] = 1-t, t
	return k * sd, 2
}

// at interpolates the grid at x; NaN outside the grid or when a tap failed. The last axis
// (stride 1) is contracted innermost over consecutive values; the weights and offsets of the
// other axes are expanded into a list first.
func (g *nGrid) at(x *[nDims]float64) float64 {
	var ow [32]float64
	var oo [32]int
	ow[0], oo[0] = 1, 0
	n := 1
	last := g.dims - 1
	var w [4]float64
	for d := 0; d < last; d++ {
		off, nt := g.axisTaps(d, x[d], &w)
		if nt == 0 {
			return math.NaN()
		}
		sd := g.stride[d]
		for i := n - 1; i >= 0; i-- { // expand in place, backwards
			wi, oi := ow[i], oo[i]+off
			for j := nt - 1; j >= 0; j-- {
				ow[i*nt+j], oo[i*nt+j] = wi*w[j], oi+j*sd
			}
		}
		n *= nt
	}
	off, nt := g.axisTaps(last, x[last], &w)
	v := g.vals
	acc := 0.0
	switch nt {
	case 3:
		for i := 0; i < n; i++ {
			p := v[oo[i]+off : oo[i]+off+3]
			acc += ow[i] * (w[0]*float64(p[0]) + w[1]*float64(p[1]) + w[2]*float64(p[2]))
		}
	case 2:
		for i := 0; i < n; i++ {
			p := v[oo[i]+off : oo[i]+off+2]
			acc += ow[i] * (w[0]*float64(p[0]) + w[1]*float64(p[1]))
		}
	case 1:
		for i := 0; i < n; i++ {
			acc += ow[i] * float64(v[oo[i]+off])
		}
	default:
		return math.NaN()
	}
	return acc
}

// Evaporation table.
//
// The drop that just reaches the surface with zero radius leaves cloud base with the
// threshold radius r*(z_b, T_b, RH_s, p_s) of the layer (base height, base temperature,
// surface humidity and surface pressure; the base pressure follows from them along the dry
// adiabat). r* is found by integrating the EvaporateDirect system backward in time from
// r = 0 at the surface up to cloud base (one integration per layer). Measured in
// xi = ln(r0/r*), a drop reaches the surface when xi > 0 and evaporates aloft when xi < 0,
// so the boundary is a grid plane and no interpolation cell straddles it. Two tables on
// (s, ln z_b, T_b, ln(1 - RH_s), p_s), s = |xi|^(1/2), hold
//
//	xi > 0:  (ln G)/xi,  G = (r0^4 - r_s^4)/r*^4,  so (r_s/r0)^4 = 1 - exp(xi ((ln G)/xi - 4))
//	xi < 0:  v = ln(d/z_b)/xi,  d = z_b - z_evap the fall distance, z_evap = z_b (1 - exp(xi v))
//
// Both quotients are finite at the boundary and smooth in s (the end of a drop's life is in
// the Stokes regime, where d(r^4)/dz is finite and has a term in r^2 = (r^4)^(1/2), which
// makes the dependence on xi analytic in |xi|^(1/2); derived from doc/science.md#sub-cloud-evaporation); the
// node at s = 0 is their linear extrapolation from the first two nodes. The threshold table
// holds ln r* on (ln z_b, T_b, ln(1 - RH_s), p_s); ln(1 - RH_s) keeps ln r* nearly linear as
// RH_s -> 1 (r*^4 ∝ 1 - RH_s for Stokes drops, derived). Within evXiBand of the boundary, and
// where Q = (r_s/r0)^4 < evMinQ, the column is integrated directly: r_s ∝ (r0 - r*)^(1/4) is
// ill-conditioned there, an error e in xi moves r_s/r0 by at most e (1 - Q)/Q^(3/4) (derived
// from the reach formula above), which for the tested threshold-table bound e <= 3e-4
// (TestEvapThreshold) stays below 0.4 % for Q >= evMinQ = 0.03. The surface-pressure axis
// spans Params.SurfacePressure ± 10 kPa with a node at Params.SurfacePressure, so columns
// without a CTH use one plane of it; a CTH whose base state implies a surface pressure
// outside that span (cloud-top pressure and height inconsistent) is integrated directly.
type evapTable struct {
	thr, reach, evap *nGrid
	// flux holds ln F, F = SurfaceDrizzleFraction of the model's drizzle distribution, on
	// (p_s, u, T_b, ln z_b) (fluxAxes).
	flux  *nGrid
	mixed bool       // well-mixed layers (HumidityWellMixed): the u axes are placeholders
	dsd   DrizzleDSD // the drizzle distribution of flux
	// thrMid: the threshold table's u axis is the 3 placeholder nodes of well-mixed layers,
	// evMixedU on the middle one (evapTable.threshold); fast: every grid is widened and has
	// the layout of the lookups of evapfast.go (set by widen).
	thrMid, fast bool
}

// Well-mixed layers (Params.SubCloudHumidity HumidityWellMixed) have no surface-humidity
// coordinate: their humidity follows from the base state. Their tables keep the layout of
// the surface-RH ones with the u axis reduced to placeholder nodes that all hold the same
// layer (3 nodes on [-1, 1] for the strict, curved threshold axis, 2 on [0, 1] for the
// linear axes of the value and flux tables), and are looked up at u = evMixedU, which falls
// on a node of each, so that one node is used with weight 1 (derived from quadT and
// linAxis) and the placeholders cost no accuracy.
const evMixedU = 0.0

// Axes of the surface drizzle fraction table (evapTable.flux): p_s (Pa, offset from
// Params.SurfacePressure, linear), u = ln(1 - RH_s) (quadratic; linear placeholders for
// well-mixed layers), T_b (K, quadratic) and z_b^(1/2) (m^(1/2), quadratic: F = 1 - c z_b
// near the surface is then a quadratic, and ln F, which falls about as the threshold radius
// r* ∝ z_b^(1/3), stays smooth; ln z_b needed twice the nodes for the same error). ln F is
// tabulated, floored at fluxLnMin. Base heights 0-3000 m, base temperatures 270-306 K,
// surface humidities 0.5-0.99 and surface pressures within 10 kPa of
// Params.SurfacePressure; columns outside are integrated directly (QCIntegratedDirectly).
// Error bound: |F_table - F| <= 0.5 % of max(F, 0.01) for well-mixed layers (the default)
// and 1 % of max(F, 0.01) with a surface humidity, over the whole table domain
// (TestFluxTableAgainstDirect: largest errors 0.15 % and 0.7 %); below F = 0.01 that is
// 5e-5 (1e-4) of the cloud-base rate.
var fluxAxes = struct {
	lo, hi [4]float64 // p_s offset, u, T_b, ln z_b
	n      [4]int
}{
	lo: [4]float64{-10000, math.Log(0.01), 270, 0},
	hi: [4]float64{10000, math.Log(0.5), 306, math.Sqrt(3000)},
	n:  [4]int{3, 9, 7, 33},
}

// fluxLnMin is the floor of the tabulated ln F: below e^-40 (4e-18) the surface rate is zero
// for every purpose (derived: cloud-base rates are below 1e3 mm day-1).
const fluxLnMin = -40.0

// Axes of the evaporation tables: ln z_b (m), T_b (K), u = ln(1 - RH_s), p_s (Pa, offset from
// Params.SurfacePressure), and s = |xi|^(1/2) for the value tables. The threshold table is
// strict (padded by one cell: ranges of use z_b 1-3000 m, T_b 270-306 K, RH_s 0.5-0.99).
var evapAxes = struct {
	thrLo, thrHi [4]float64
	thrN         [4]int
	valLo, valHi [4]float64
	valN         [4]int
	sReach       float64 // largest s of the reach table
	nReach       int
	sEvap        float64 // largest s of the evaporation table
	nEvap        int
}{
	thrLo:  [4]float64{-1.0 / 3, 264, math.Log(0.01) - 0.56, -10000},
	thrHi:  [4]float64{8 + 1.0/3, 312, math.Log(0.5) + 0.56, 10000},
	thrN:   [4]int{27, 9, 9, 3},
	valLo:  [4]float64{0, 270, math.Log(0.01), -10000},
	valHi:  [4]float64{math.Log(3000), 306, math.Log(0.5), 10000},
	valN:   [4]int{12, 4, 6, 3},
	sReach: 2.4, nReach: 13,
	sEvap: 2.25, nEvap: 10,
}

const (
	evXiBand  = 2e-3 // half-width in xi of the band integrated directly (> the threshold table error 3e-4)
	evMinQ    = 0.03 // smallest (r_s/r0)^4 taken from the table (see evapTable)
	evMinFall = 1e-3 // m, floor of the tabulated fall distance
)

// newEvapTable lays out the (unfilled) threshold, value and flux tables of the parameters p
// (Params.SurfacePressure ps0 of the columns without CTH, Params.SubCloudHumidity,
// Params.Drizzle). Axis order (last axis contiguous): threshold (p_s, T_b, u, ln z_b), values
// (p_s, u, T_b, ln z_b, s), flux (p_s, u, T_b, ln z_b).
func newEvapTable(p Params) *evapTable {
	ps0 := p.SurfacePressure
	a := evapAxes
	t := &evapTable{mixed: p.SubCloudHumidity == HumidityWellMixed, dsd: p.Drizzle}
	thrU := [3]float64{a.thrLo[2], a.thrHi[2], float64(a.thrN[2])}
	valU := [3]float64{a.valLo[2], a.valHi[2], float64(a.valN[2])}
	fa := fluxAxes
	fluxU := [3]float64{fa.lo[1], fa.hi[1], float64(fa.n[1])}
	if t.mixed {
		thrU = [3]float64{evMixedU - 1, evMixedU + 1, 3}
		valU = [3]float64{evMixedU, evMixedU + 1, 2}
		fluxU = valU
	}
	t.thr = newNGrid([]float64{ps0 + a.thrLo[3], a.thrLo[1], thrU[0], a.thrLo[0]},
		[]float64{ps0 + a.thrHi[3], a.thrHi[1], thrU[1], a.thrHi[0]},
		[]int{a.thrN[3], a.thrN[1], int(thrU[2]), a.thrN[0]}, []bool{false, true, true, true}, true)
	vlo := []float64{ps0 + a.valLo[3], valU[0], a.valLo[1], a.valLo[0], 0}
	vhi := []float64{ps0 + a.valHi[3], valU[1], a.valHi[1], a.valHi[0], a.sReach}
	cub := []bool{false, false, false, true, true}
	t.reach = newNGrid(vlo, vhi, []int{a.valN[3], int(valU[2]), a.valN[1], a.valN[0], a.nReach}, cub, false)
	vhi[4] = a.sEvap
	t.evap = newNGrid(vlo, vhi, []int{a.valN[3], int(valU[2]), a.valN[1], a.valN[0], a.nEvap}, cub, false)
	t.flux = newNGrid([]float64{ps0 + fa.lo[0], fluxU[0], fa.lo[2], fa.lo[3]},
		[]float64{ps0 + fa.hi[0], fluxU[1], fa.hi[2], fa.hi[3]},
		[]int{fa.n[0], int(fluxU[2]), fa.n[2], fa.n[3]}, []bool{false, !t.mixed, true, true}, false)
	t.thrMid = t.mixed && t.midLayout()
	return t
}

// buildEvapTable is newEvapTable filled.
func buildEvapTable(p Params) *evapTable {
	t := newEvapTable(p)
	t.fill()
	t.widen()
	return t
}

// layer is the sub-cloud layer of table coordinates (ln z_b, T_b, u, p_s): evLayer, well
// mixed when t.mixed.
func (t *evapTable) layer(lz, tb, u, ps float64) SubCloudLayer {
	l := evLayer(lz, tb, u, ps)
	if t.mixed {
		l.SurfaceRH, l.WellMixed = 0, true
	}
	return l
}

// fill integrates the threshold, value and flux tables (in parallel): every node of the
// threshold table, every layer (s-line) of the value tables and every node of the flux
// table. With well-mixed layers, only the first node along each u axis is integrated and the
// placeholders copy it.
func (t *evapTable) fill() {
	nThr := len(t.thr.vals)
	nLay := len(t.reach.vals) / evapAxes.nReach
	nFlux := len(t.flux.vals)
	parallelFor(nThr+nLay+nFlux, func(i int) {
		switch {
		case i < nThr:
			if t.mixed && t.thr.index(2, i) != 0 {
				return
			}
			t.thr.vals[i] = t.thrNode(i)
		case i < nThr+nLay:
			if t.mixed && t.reach.index(1, (i-nThr)*evapAxes.nReach) != 0 {
				return
			}
			fillEvapLayer(t, i-nThr)
		default:
			if t.mixed && t.flux.index(1, i-nThr-nLay) != 0 {
				return
			}
			t.flux.vals[i-nThr-nLay] = t.fluxNode(i - nThr - nLay)
		}
	})
	if t.mixed {
		t.thr.copyPlaceholders(2)
		t.reach.copyPlaceholders(1)
		t.evap.copyPlaceholders(1)
		t.flux.copyPlaceholders(1)
	}
}

// index returns node i's index along axis d.
func (g *nGrid) index(d, i int) int { return i / g.stride[d] % g.n[d] }

// copyPlaceholders copies every node with index 0 along axis d to the other nodes along d.
func (g *nGrid) copyPlaceholders(d int) {
	for i := range g.vals {
		if k := g.index(d, i); k != 0 {
			g.vals[i] = g.vals[i-k*g.stride[d]]
		}
	}
}

// thrNode integrates node i of the threshold table: ln r*.
func (t *evapTable) thrNode(i int) float32 {
	x := t.thr.node(i)
	return float32(math.Log(evapThreshold(t.layer(x[3], x[1], x[2], x[0]))))
}

// fluxNode integrates node i of the flux table: max(ln F, fluxLnMin), NaN on failure.
func (t *evapTable) fluxNode(i int) float32 {
	x := t.flux.node(i)
	if x[3] == 0 { // no layer: all of the flux arrives
		return 0
	}
	f := surfaceFraction(t.dsd, t.layer(math.Log(x[3]*x[3]), x[2], x[1], x[0]), evTabRelTol)
	return float32(math.Max(math.Log(f), fluxLnMin))
}

// fillEvapLayer integrates layer i (the s-line of node i*nReach) of both value tables.
func fillEvapLayer(t *evapTable, i int) {
	a := evapAxes
	x := t.reach.node(i * a.nReach) // s = 0
	l := t.layer(x[3], x[2], x[1], x[0])
	rs := evapThreshold(l)
	if !(rs > 0) {
		return
	}
	for _, g := range []*nGrid{t.reach, t.evap} {
		sign := 1.0
		if g == t.evap {
			sign = -1
		}
		ns := g.n[4]
		vals := g.vals[i*ns : (i+1)*ns]
		for k := 1; k < ns; k++ {
			s := float64(k) * g.step[4]
			xi := sign * s * s
			r0 := rs * math.Exp(xi)
			if r0 > BeardDMax/2 && k > 2 { // beyond Beard's range: extrapolate (these nodes are taps only)
				vals[k] = 2*vals[k-1] - vals[k-2]
				continue
			}
			e := evaporateTol(r0, l, evTabRelTol)
			if sign > 0 {
				if !e.Reached || !(e.SurfaceRadius >= 0) || !colFinite(e.SurfaceRadius) {
					continue
				}
				q := e.SurfaceRadius / rs
				if G := math.Exp(4*xi) - q*q*q*q; G > 0 {
					vals[k] = float32(math.Log(G) / xi)
				}
			} else {
				if e.Reached || !(e.EvapHeight >= 0) || !colFinite(e.EvapHeight) {
					continue
				}
				d := math.Max(l.BaseHeight-e.EvapHeight, evMinFall)
				vals[k] = float32(math.Log(d/l.BaseHeight) / xi)
			}
		}
		vals[0] = 2*vals[1] - vals[2] // linear extrapolation to s = 0 (derived)
	}
}

// parallelFor calls f(i) for i in [0, n) on tabWork goroutines.
func parallelFor(n int, f func(i int)) {
	done := make(chan struct{}, tabWork)
	for w := 0; w < tabWork; w++ {
		go func(w int) {
			for i := w; i < n; i += tabWork {
				f(i)
			}
			done <- struct{}{}
		}(w)
	}
	for w := 0; w < tabWork; w++ {
		<-done
	}
}

// Relative tolerances of the integrations at the nodes of the evaporation tables (derived:
// the integration error in r^2 is then below 1e-5 of the values tabulated, far below the
// 0.5 % bound of the interpolation; the threshold radius is held tighter because the surface
// radius near the boundary is sensitive to it).
const (
	evTabRelTol = 1e-6
	evThrRelTol = 1e-7
)

// evLayer is the sub-cloud layer of table coordinates (ln z_b, T_b, ln(1 - RH_s), p_s).
func evLayer(lz, tb, u, ps float64) SubCloudLayer {
	zb := math.Exp(lz)
	return SubCloudLayer{BaseHeight: zb, BaseT: tb, BaseP: dryBasePressure(tb, zb, ps), SurfaceRH: -math.Expm1(u)}
}

// reverseEvap is the EvaporateDirect system run backward in time.
type reverseEvap struct{ e evapSys }

func (s reverseEvap) aux([2]float64) float64 { return 0 }

func (s reverseEvap) deriv(y [2]float64) [2]float64 {
	d := s.e.deriv(y)
	return [2]float64{-d[0], -d[1]}
}

// evapThreshold returns the cloud-base radius (m) of the drop that just evaporates on reaching
// the surface of layer l: the EvaporateDirect system integrated backward in time from r = 0 at
// z = 0 up to z = BaseHeight, with the same integrator (relative tolerance evThrRelTol). NaN
// on failure.
func evapThreshold(l SubCloudLayer) float64 {
	if !(l.BaseHeight > 0 && l.BaseHeight <= maxBaseHeight && l.humidityOK(math.Nextafter(1, 0)) &&
		validT(l.BaseT) && validP(l.BaseP)) {
		return math.NaN()
	}
	if ps, Ts, _ := l.State(0); !validT(Ts) || !validP(ps) {
		return math.NaN()
	}
	sys := reverseEvap{evapSys{l: l, layer: true, ventilate: true}}
	var ev eventSet
	ev.add(1, l.BaseHeight, 1)
	opt := odeOptions{
		rtol:     evThrRelTol,
		atol:     [2]float64{evThrRelTol * evapRadiusScale * evapRadiusScale, evThrRelTol * l.BaseHeight},
		tEnd:     EvapMaxTime,
		maxSteps: EvapMaxSteps,
	}
	res := integrate(sys, [2]float64{0, 0}, opt, &ev, nil)
	if res.event != 0 || !(res.y[0] > 0) {
		return math.NaN()
	}
	return math.Sqrt(res.y[0])
}

// Results of evapTable.lookup.
const (
	evOutside = iota // outside the tables or near the boundary: integrate directly
	evReached
	evEvaporated
)

// lookup is prepare and lookupAt for one drop of radius r0 (m, lnR0 = ln r0) leaving the
// base of layer l above a surface at pressure ps (Pa), u = ln(1 - l.SurfaceRH): evReached
// with the surface radius, evEvaporated with the evaporation height, or evOutside.
func (t *evapTable) lookup(r0, lnR0, u float64, l *SubCloudLayer, ps float64) (kind int, v float64) {
	var e evLook
	t.prepare(u, l, ps, &e)
	return t.lookupAt(r0, lnR0, &e)
}

// fraction interpolates the surface drizzle fraction F of the layer l above a surface at
// pressure ps (Pa), u = ln(1 - RH_s) (evMixedU for well-mixed layers); NaN outside the table.
// It is prepare's F.
func (t *evapTable) fraction(u float64, l *SubCloudLayer, ps float64) float64 {
	var e evLook
	return t.prepare(u, l, ps, &e)
}

// evaporate interpolates the evaporation table into res for a drop of radius r0 (m, lnR0 =
// ln r0) leaving the base of the layer of e (evapTable.prepare); false when the column must
// be integrated directly.
func (t *collTable) evaporate(r0, lnR0 float64, e *evLook, res *colResult) bool {
	if t.evap == nil {
		return false
	}
	kind, v := t.evap.lookupAt(r0, lnR0, e)
	switch kind {
	case evReached:
		res.rs, res.zev = v, math.NaN()
	case evEvaporated:
		res.rs, res.zev = 0, v
	default:
		return false
	}
	res.evapOK = true
	return true
}
