package microphys

import "math"

// Collector/evaporation fast path (CollectorMethod table).
//
// Collector table. Along the collector's path, with s = z/H, LWC dz = 2 LWP s ds and
// r(z) = r_v s^(1/3), so dR/ds = 2 LWP s E(R, r) V/(4 rho_w (V - w)) (physics notes §5) and
// dt = H ds/(w - V): for a fixed updraft w the exit radius and t_exit/H depend on the column
// only through LWP = Gamma H^2/2, the cloud-top mean-volume radius r_v and the air (fall
// speeds, coalescence). NewModel integrates CollectDirect once at every node of a regular
// grid in (ln LWP, ln r_v, T_top, p_top) and Column interpolates ln R_exit and ln(t_exit/H):
// Catmull-Rom cubic along ln LWP and ln r_v, linear along T and p (a residual air effect of
// < 0.05 % over the whole range). Where the stencil's nodes disagree on whether the drop left
// through the base or the top, or a node failed, the column is integrated directly.
//
// Evaporation table. Below cloud base T follows the dry adiabat from T_b and RH rises from
// the surface value to 1 at base (EvaporateDirect). When cloud base is placed by the dry
// adiabat down to Params.SurfacePressure (no CTH), p_b follows from T_b and the base height
// z_b, so the result depends on (r0, z_b, T_b, RH_s). NewModel integrates EvaporateDirect on a
// grid in (ln r0, ln z_b, T_b, RH_s) and Column interpolates linearly (r_surface/r0)^4 where
// the drop reaches the surface (nearly linear in the remaining fall distance near the end,
// d(r^4)/dz = 4A/k1 for Stokes drops, derived from physics notes §10) and ln of the fall
// distance z_b - z_evap where it evaporates aloft (about 2 ln r0 + (ln z_b)/2 + const in the
// linear humidity profile, derived).
//
// Near the reach/evaporate boundary the surface radius is ill-conditioned (r_s ∝
// distance^(1/4), so d r_s/d r0 = (r0/r_s)^3). Cells whose nodes disagree straddle it; there
// the total fall distance to evaporation, continued below the surface in the surface air
// (EvaporateConstant) where the drop reaches it, is smooth across the boundary and is
// interpolated instead: a clear evaporation aloft (total distance < e^-0.5 = 61 % of the
// base height, i.e. above 39 % of it, bases above 50 m) is taken from it. The other straddling columns, cells of bases below
// 200 m where the drop keeps less than 0.4^(1/4) = 80 % of its radius at some node, and
// columns with a CTH (base pressure independent of the surface pressure) are integrated
// directly.
//
// Columns integrated directly (outside a grid or near a boundary) carry
// QCIntegratedDirectly. The grids below keep the interpolation within 0.5 % of direct
// integration over a random marine-stratocumulus sample (table_test.go reports the largest
// errors; the surface-radius error is relative to the exit radius and the evaporation-height
// error relative to the cloud-base height, because both pass through zero at the boundary).
// Build cost: about 71000 nodes (36000 collector, 35000 evaporation), see BenchmarkNewModel.

// tabGrid is a regular 4-D grid with, per node, tabVals values (float32, to keep the tables
// small enough for the processor caches: about 0.5 MB for both) and one state byte (0 =
// failed), interpolated with 2 taps (linear) or 4 taps (Catmull-Rom) per axis.
type tabGrid struct {
	lo, step, inv [tabDims]float64
	n, stride     [tabDims]int
	cubic         [tabDims]bool
	vals          []float32 // node-major, tabVals per node
	state         []uint8
}

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
				var x [tabDims]float64
				rem := i
				for d := 0; d < tabDims; d++ {
					k := rem / g.stride[d]
					rem -= k * g.stride[d]
					x[d] = g.lo[d] + float64(k)*g.step[d]
				}
				f(x, v[:])
				for k := 0; k < tabVals; k++ {
					g.vals[i*tabVals+k] = float32(v[k])
				}
				if st := v[tabVals]; st >= 1 && st <= 255 {
					g.state[i] = uint8(st)
				}
			}
			done <- struct{}{}
		}(w)
	}
	for w := 0; w < tabWork; w++ {
		<-done
	}
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

// interp accumulates the weighted values into acc[0:tabVals] and acc[2] = the smallest value
// 0 over the taps. It returns the state shared by every tap, or 0 when the taps disagree or
// one failed.
func (g *tabGrid) interp(s *tabStencil, acc *[3]float64) uint8 {
	*acc = [3]float64{0, 0, math.Inf(1)}
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
			acc[2] = min(acc[2], float64(p00[0]), float64(p01[0]), float64(p10[0]), float64(p11[0]))
		}
	}
	return st
}

// sum returns the weighted sum of value k over the stencil, NaN if any tap is not finite.
func (g *tabGrid) sum(s *tabStencil, k int) float64 {
	base := 0
	for d := 0; d < tabDims; d++ {
		base += s.first[d] * g.stride[d]
	}
	acc := 0.0
	for a := 0; a < s.nt[0]; a++ {
		for b := 0; b < s.nt[1]; b++ {
			for c := 0; c < s.nt[2]; c++ {
				for e := 0; e < s.nt[3]; e++ {
					v := float64(g.vals[(base+a*g.stride[0]+b*g.stride[1]+c*g.stride[2]+e*g.stride[3])*tabVals+k])
					if !colFinite(v) {
						return math.NaN()
					}
					acc += s.w[0][a] * s.w[1][b] * s.w[2][c] * s.w[3][e] * v
				}
			}
		}
	}
	return acc
}

// Grid of the collector table: axes ln LWP (kg m-2), ln r_v (m), T (K), p (Pa).
var collGrid = struct {
	lo, hi [tabDims]float64
	n      [tabDims]int
}{
	lo: [tabDims]float64{math.Log(5e-3), math.Log(3e-6), 273.15, 60000},
	hi: [tabDims]float64{math.Log(1), math.Log(30e-6), 305, 105000},
	n:  [tabDims]int{80, 76, 3, 2},
}

// Grid of the evaporation table: axes ln r0 (m), ln z_b (m), T_b (K), RH_s (1).
var evapGrid = struct {
	lo, hi [tabDims]float64
	n      [tabDims]int
}{
	lo: [tabDims]float64{math.Log(15e-6), 0, 270, 0.5},
	hi: [tabDims]float64{math.Log(3e-3), math.Log(3000), 306, 1},
	n:  [tabDims]int{36, 40, 4, 6},
}

// Collector table outputs: ln R_exit, ln(t_exit/H), state (1 exit base, 2 exit top, NaN failed).
// Evaporation table outputs: (r_s/r0)^4 or ln of the fall distance z_b - z_ev, state (1 reached, 2 evaporated, NaN failed).
const (
	ctState   = tabVals
	etState   = tabVals
	etTotal   = 1 // ln of the total fall distance to evaporation (virtual below the surface)
	stBase    = 1
	stTop     = 2
	stReached = 1
	stEvap    = 2
	evMinFall = 1e-3 // m, floor of the tabulated fall distance
	evMargin  = 0.5  // ln-distance margin of a clear evaporation aloft in a straddling cell
	evMinBase = 50   // m, lowest cloud base for which straddling cells use the total distance
	evMinQ    = 0.4  // smallest (r_s/r0)^4 at a cell's nodes for the table's surface radius ...
	evLowBase = 200  // ... when the cloud base is below this height, m
)

type collTable struct {
	coll, evap *tabGrid
}

// buildCollTable integrates every node of both grids for model m (in parallel).
func buildCollTable(m *Model) *collTable {
	t := &collTable{}
	cg := collGrid
	t.coll = newTabGrid(cg.lo, cg.hi, cg.n, [tabDims]bool{true, true, false, false})
	t.coll.fill(m.collNode)
	if m.p.EnableEvaporation {
		eg := evapGrid
		t.evap = newTabGrid(eg.lo, eg.hi, eg.n, [tabDims]bool{false, false, false, false})
		t.evap.fill(m.evapNode)
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

// evapNode integrates one evaporation node x = (ln r0, z_b, T_b, RH_s).
func (m *Model) evapNode(x [tabDims]float64, v []float64) {
	v[0], v[etState], v[etTotal] = math.NaN(), math.NaN(), math.NaN()
	r0, zb, tb, rh := math.Exp(x[0]), math.Exp(x[1]), x[2], x[3]
	ps := m.p.SurfacePressure
	l := SubCloudLayer{BaseHeight: zb, BaseT: tb, BaseP: dryBasePressure(tb, zb, ps), SurfaceRH: rh}
	e := EvaporateDirect(r0, l)
	switch {
	case e.Reached && e.SurfaceRadius > 0 && colFinite(e.SurfaceRadius):
		q := e.SurfaceRadius / r0
		v[0], v[etState] = q*q*q*q, stReached
		// Virtual continuation below the surface in the surface air, to make the total
		// fall distance smooth across the reach/evaporate boundary.
		v[etTotal] = math.Inf(1)
		if rh < 1 {
			c := EvaporateConstant(e.SurfaceRadius, rh, NewAir(ps, tb+Gravity*zb/SpecificHeatDryAir), nil, true, 0)
			if colFinite(c.Z) {
				v[etTotal] = math.Log(zb - c.Z)
			}
		}
	case !e.Reached && e.EvapHeight >= 0 && colFinite(e.EvapHeight):
		d := math.Max(zb-e.EvapHeight, evMinFall)
		v[0], v[etState], v[etTotal] = math.Log(d), stEvap, math.Log(d)
	}
}

// collect interpolates the collector table at (ln LWP, ln r_v, T, p); false when the column is outside it or its
// stencil straddles a regime change.
func (t *collTable) collect(lnLWP, lnRv, h, T, pr float64, res *colResult) bool {
	var s tabStencil
	if !t.coll.stencil([tabDims]float64{lnLWP, lnRv, T, pr}, &s) {
		return false
	}
	var acc [3]float64
	st := t.coll.interp(&s, &acc)
	if st == 0 {
		return false
	}
	res.ok = true
	res.r, res.t = math.Exp(acc[0]), h*math.Exp(acc[1])
	res.exitBase = st == stBase
	return true
}

// evaporate interpolates the evaporation table; false when outside it or straddling the
// reach/evaporate boundary.
func (t *collTable) evaporate(r0 float64, l *SubCloudLayer, res *colResult) bool {
	if t.evap == nil {
		return false
	}
	var s tabStencil
	if !t.evap.stencil([tabDims]float64{math.Log(r0), math.Log(l.BaseHeight), l.BaseT, l.SurfaceRH}, &s) {
		return false
	}
	var acc [3]float64
	st := t.evap.interp(&s, &acc)
	if st == 0 {
		// Straddling the boundary: decide by the smooth total fall distance; only a clear
		// evaporation aloft is taken from the table (the surface radius is ill-conditioned
		// near the boundary, r_s ∝ (distance)^(1/4), so those columns are integrated).
		lt := t.evap.sum(&s, etTotal)
		if !(l.BaseHeight >= evMinBase && lt < math.Log(l.BaseHeight)-evMargin) {
			return false
		}
		res.rs, res.zev, res.evapOK = 0, math.Max(l.BaseHeight-math.Exp(lt), 0), true
		return true
	}
	switch st {
	case stReached:
		if acc[2] < evMinQ && l.BaseHeight < evLowBase { // near the boundary in a shallow layer: integrate
			return false
		}
		res.rs, res.zev = math.Sqrt(math.Sqrt(math.Max(acc[0], 0)))*r0, math.NaN()
	case stEvap:
		res.rs, res.zev = 0, math.Max(l.BaseHeight-math.Exp(acc[0]), 0)
	default:
		return false
	}
	res.evapOK = true
	return true
}
