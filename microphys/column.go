package microphys

import "math"

// Inputs is one column's retrieved cloud properties, SI units. NaN means absent. LWP and Re
// are required; the others are optional.
type Inputs struct {
	LWP       float64 // liquid water path, kg m-2 (required)
	Re        float64 // cloud-top effective radius, m (required)
	Tau       float64 // cloud optical thickness, 1 (optional; else derived from LWP and Re)
	CTT       float64 // cloud-top temperature, K (optional; else Params.DefaultCTT)
	CTP       float64 // cloud-top pressure, Pa (optional; else Params.DefaultCTP)
	CTH       float64 // cloud-top height above the surface, m (optional; else cloud base from the dry adiabat)
	LWPStd    float64 // sub-grid standard deviation of LWP, kg m-2 (optional; else Params.GammaShape)
	SurfaceRH float64 // surface relative humidity, 1 (optional; else Params.SurfaceRH)
}

// Outputs is every diagnostic of one column, SI units. A screened column (QC&QCScreenMask
// != 0) has every field NaN. Diagnostics that are switched off are NaN.
type Outputs struct {
	Nd          float64 // droplet number concentration, m-3
	H           float64 // adiabatic geometric thickness, m
	Cw          float64 // condensation rate c_w used (before f_ad), kg m-4
	ReTop       float64 // cloud-top effective radius of the adiabatic model, m
	Autoconv    float64 // column autoconversion rate, kg m-2 s-1
	Efficiency  float64 // autoconversion efficiency Autoconv/LWP, s-1
	DrizzleRate float64 // cell-mean cloud-base drizzle rate R̄, kg m-2 s-1 (= mm s-1)
	POP         float64 // drizzle probability, 1
	// DrizzleIntensity is the mean cloud-base rate of the drizzling part of the cell,
	// I = R̄/POP, kg m-2 s-1 (NaN when POP = 0); R̄ = POP × I (SubgridDrizzleModel).
	DrizzleIntensity float64
	LWPCrit          float64 // critical LWP of drizzle onset, kg m-2
	CollectorRadius  float64 // collector drop radius on leaving the cloud, m
	CollectorTime    float64 // collector drop time in cloud, s
	SurfaceRadius    float64 // collector drop radius at the surface, m (0 when it evaporated)
	EvapHeight       float64 // height above the surface where the collector drop evaporated, m (NaN when it reached the surface)
	// SurfaceDrizzleFraction is the fraction of the cloud-base drizzle flux that reaches the
	// surface (SurfaceDrizzleFraction of Params.Drizzle), 1, and SurfaceDrizzleRate is
	// that fraction of DrizzleRate, kg m-2 s-1.
	SurfaceDrizzleFraction float64
	SurfaceDrizzleRate     float64
	// CloudBaseHeight is the height of cloud base above the surface, the depth of the
	// sub-cloud layer the drizzle falls through (SubCloudLayer.BaseHeight), m.
	CloudBaseHeight float64
	QC              uint16 // QC bits, see QCFlags
}

// Model is a validated parameter set with its precomputed tables. A Model is safe for
// concurrent use by many goroutines (Column only reads it).
type Model struct {
	p       Params
	ac      AutoconvConfig
	setup   CollectorSetup
	onset   Onset      // drizzle onset of the sub-grid model (Params.ReStar, Params.OnsetWidth)
	cbrtK   float64    // K^(1/3)
	lnCbrtK float64    // ln K^(1/3)
	tab     *collTable // nil unless CollectorMethod == CollectorTable and the collector is on
	pop     *popTable  // drizzle-probability table (pop.go)
	ramp    *rampTable // ramp-onset table of the sub-grid drizzle model (ramptable.go); nil for the step
	// lnDryRH is ln(1 - Params.SurfaceRH), the humidity coordinate of the evaporation table
	// (evMixedU for well-mixed layers).
	lnDryRH float64
	mixed   bool       // Params.SubCloudHumidity == HumidityWellMixed
	bulk    bulkConsts // constants of Column's bulk diagnostics (column.go)
}

// NewModel validates p, builds the drizzle-probability table (pop.go) and, for
// CollectorMethod table with the collector on, the collector/evaporation tables (see
// table.go; about a second on two cores). It returns the *ParamError of Params.Validate.
//
// Reference: see Params and table.go.
// Valid: any Params; invalid ones give an error.
func NewModel(p Params) (*Model, error) {
	if err := p.Validate(); err != nil {
		return nil, err
	}
	m := newModelBase(p)
	if p.EnableCollector && p.CollectorMethod == CollectorTable {
		m.tab = buildCollTable(m)
	}
	return m, nil
}

// newModelBase is the Model of valid parameters p without its collector tables.
func newModelBase(p Params) *Model { return newModelFrom(p, nil) }

// newModelFrom is newModelBase taking the drizzle-probability table, and the ramp table
// when the drizzle law's LWP exponent is the same, from base (nil: built here); both tables
// depend on nothing else of the parameters (pop.go, ramptable.go).
func newModelFrom(p Params, base *Model) *Model {
	m := &Model{p: p, ac: p.AutoconvConfig(), setup: p.Collector, onset: Onset{p.ReStar, p.OnsetWidth},
		cbrtK: math.Cbrt(p.K), lnCbrtK: math.Log(p.K) / 3, lnDryRH: math.Log1p(-p.SurfaceRH)}
	if p.SubCloudHumidity == HumidityWellMixed {
		m.mixed, m.lnDryRH = true, evMixedU
	}
	m.setup.Collision = p.Collision
	m.setup.Coalescence = p.Coalescence
	if base != nil {
		m.pop = base.pop
	} else {
		m.pop = newPopTable()
	}
	if p.OnsetWidth > 0 {
		if base != nil && base.ramp != nil && base.ramp.b == p.DrizzleLWPExp {
			m.ramp = base.ramp
		} else {
			m.ramp = newRampTable(p.DrizzleLWPExp)
		}
	}
	m.bulk = newBulkConsts(&p, m.pop, m.ramp)
	return m
}

// Params returns the model's parameters.
//
// Reference: none (software interface).
// Valid: always.
func (m *Model) Params() Params { return m.p }

// finite reports whether x is neither NaN nor ±Inf.
func colFinite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// Constants of the log forms in Column (derived from the formulas they replace).
var (
	colLnCm3    = math.Log(kk2000Auto[3])   // ln(cm-3 per m-3)
	colLnGPerKg = math.Log(drizzleUnits[0]) // ln(g per kg)
)

// bulkConsts holds the per-Model constants of Column's bulk diagnostics: the products of
// parameters in the exported formulas, folded once so that a column costs one exponential
// for the air state, one logarithm of N_d, one logarithm and one exponential for KK2000, and
// one of each for POP (colLog, colExp).
// Each helper below names the exported function it replaces; column_fast_test.go checks it
// against that function within bulkTol (derived: the same formula, other rounding).
type bulkConsts struct {
	tauLWP  float64   // tau = tauLWP LWP/r_e (TauAdiabatic with Q_ext)
	ndTau   float64   // N_d = ndTau (c_w tau/r_e^5)^(1/2) (DropletNumber)
	ndLWP   float64   // N_d = ndLWP (c_w LWP)^(1/2)/r_e^3 (DropletNumber of TauAdiabatic)
	lnNdLWP float64   // ln ndLWP
	lnFad   float64   // ln f_ad: ln gamma = ln f_ad + ln c_w
	hCoef   float64   // H = (hCoef LWP/c_w)^(1/2), hCoef = 2/f_ad (Thickness)
	rvCoef  float64   // r_e,top^3 = rvCoef gamma H/N_d, rvCoef = 3/(4 pi rho_w k)
	reStar  float64   // r_e* (CriticalLWP)
	kkLnK   float64   // ln of the KK2000 efficiency's constant (kk2000Efficiency)
	kkY     float64   // (b - 1)/2: exponent of LWP gamma/rho_a^2 (b of KK2000)
	kkN     float64   // c: exponent of N_d (c of KK2000)
	drizA   float64   // DrizzleCoef/(s per day)
	drizX   float64   // g per kg / cm-3 per m-3: (LWP/N_d) in the units of DrizzleRate
	drizB   float64   // DrizzleLWPExp
	drizC   float64   // DrizzleNdExp
	drizWay int       // drizzleRate's form: drizSevenQuarters, drizSameExp or drizGeneral
	popSn   float64   // Params.GammaShape^(1/2) (popColumn)
	popLnNu float64   // ln Params.GammaShape, as popTable.prob forms it
	popFast bool      // the POP grid has the layout popAt2 assumes
	subE    float64   // SubgridEnhancement(Params.GammaShape, Params.DrizzleLWPExp)
	ramp    rampShape // the ramp table's constants of Params.GammaShape (rampTable.shapeExact)
	rampOn  rampOnset // the ramp onset's constants (rampTable.moments)
	rampOK  bool      // ramp is set (a ramp onset, GammaShape within the table)
	defAir  adState   // airStateFast(Params.DefaultCTT, Params.DefaultCTP)
}

// Forms of drizzleRate.
const (
	drizGeneral       = iota // exp(b ln LWP - c ln N_d)
	drizSameExp              // b = c: exp(b ln(LWP/N_d))
	drizSevenQuarters        // b = c = 7/4 (the default): x^(7/4) = x x^(1/2) x^(1/4)
)

// drizzleSevenQuarters is the exponent of drizSevenQuarters (the default of Params).
const drizzleSevenQuarters = 1.75

// newBulkConsts folds the constants of p (valid) for Column.
func newBulkConsts(p *Params, pt *popTable, rt *rampTable) bulkConsts {
	k, q, fad := p.K, p.Qext, p.Fad
	bkk, ckk := kk2000Auto[1], kk2000Auto[2]
	c := bulkConsts{
		tauLWP: q / adQextGeometric / (adLWPTauAdiabatic * WaterDensity),
		ndTau:  adNdSqrtFive / (2 * math.Pi * k) * math.Sqrt(fad/(q*WaterDensity)),
		hCoef:  2 / fad,
		rvCoef: three / (four * math.Pi * WaterDensity * k),
		reStar: p.ReStar,
		// P_col/LWP = 1350/(b+1) 2^((b+1)/2) (1e-6)^-c (LWP gamma/rho_a^2)^((b-1)/2) N_d^-c,
		// ColumnAutoconvKK2000 with H = (2 LWP/gamma)^(1/2) (derived).
		kkLnK: math.Log(kk2000Auto[0]/(bkk+1)) + (bkk+1)/2*math.Ln2 - ckk*colLnCm3,
		kkY:   (bkk - 1) / 2,
		kkN:   ckk,
		drizA: p.DrizzleCoef / drizzleUnits[2],
		drizX: drizzleUnits[0] / drizzleUnits[1],
		drizB: p.DrizzleLWPExp,
		drizC: p.DrizzleNdExp,
		popSn: math.Sqrt(p.GammaShape),
	}
	c.ndLWP = c.ndTau * math.Sqrt(c.tauLWP)
	c.lnNdLWP, c.lnFad = math.Log(c.ndLWP), math.Log(fad)
	c.popLnNu = 2 * math.Log(c.popSn)
	switch {
	case p.DrizzleLWPExp == drizzleSevenQuarters && p.DrizzleNdExp == drizzleSevenQuarters:
		c.drizWay = drizSevenQuarters
	case p.DrizzleLWPExp == p.DrizzleNdExp:
		c.drizWay = drizSameExp
	}
	if pt != nil && pt.g != nil {
		g := pt.g
		c.popFast = g.dims == 2 && g.cubic[0] && g.cubic[1] && !g.strict && g.stride[1] == 1 &&
			g.n[0] >= 3 && g.n[1] >= 3
	}
	c.defAir = airStateFast(p.DefaultCTT, p.DefaultCTP)
	c.subE = SubgridEnhancement(p.GammaShape, p.DrizzleLWPExp)
	if rt != nil { // the ramp's constants of Params.GammaShape and of the onset, once
		c.ramp, c.rampOK = rt.shapeExact(p.GammaShape)
		c.rampOn = newRampOnset(Onset{p.ReStar, p.OnsetWidth})
	}
	return c
}

// tauAdiabatic is TauAdiabatic(lwp, re, Qext) for valid inputs.
func (c *bulkConsts) tauAdiabatic(lwp, re float64) float64 { return c.tauLWP * lwp / re }

// dropletNumber is DropletNumber(tau, re, K, Qext, Fad, cw) for valid inputs.
func (c *bulkConsts) dropletNumber(tau, re, cw float64) float64 {
	r2 := re * re
	return c.ndTau * math.Sqrt(cw*tau/(r2*r2*re))
}

// dropletNumberLWP is DropletNumber(TauAdiabatic(lwp, re, Qext), re, K, Qext, Fad, cw) for
// valid inputs.
func (c *bulkConsts) dropletNumberLWP(lwp, re, cw float64) float64 {
	return c.ndLWP * math.Sqrt(cw*lwp) / (re * re * re)
}

// thickness is Thickness(lwp, Fad, cw) for valid inputs.
func (c *bulkConsts) thickness(lwp, cw float64) float64 { return math.Sqrt(c.hCoef * lwp / cw) }

// reTop is EffectiveRadius(h, nd, K, Fad, cw), the cloud-top r_e, with gamma = Fad cw.
func (c *bulkConsts) reTop(gamma, h, nd float64) float64 {
	return math.Cbrt(c.rvCoef * gamma * h / nd)
}

// criticalLWP is CriticalLWP(nd, ReStar, K, Fad, cw) for a column of LWP lwp whose top r_e is
// reTop, with s = (LWP*/LWP)^(1/3): r_e(H) grows as H^(1/3) and LWP as H^2 at fixed N_d, so
// LWP*/LWP = (r_e*/r_e,top)^6 (derived from the two formulas).
func (c *bulkConsts) criticalLWP(lwp, reTop float64) (crit, s float64) {
	s = c.reStar / reTop
	s *= s
	return lwp * s * s * s, s
}

// kk2000Efficiency is ColumnAutoconvKK2000(Thickness(lwp, 1, gamma), gamma, nd, rho)/lwp for
// lwp > 0, with lnNd = ln nd.
func (c *bulkConsts) kk2000Efficiency(lwp, gamma, rho, lnNd float64) float64 {
	return c.kk2000EfficiencyLn(colLog(kk2000Arg(lwp, gamma, rho)), lnNd)
}

// kk2000Arg is LWP gamma/rho_a^2, whose logarithm kk2000Efficiency takes.
func kk2000Arg(lwp, gamma, rho float64) float64 { return lwp * gamma / (rho * rho) }

// kk2000EfficiencyLn is kk2000Efficiency with lnX = colLog(kk2000Arg(lwp, gamma, rho)) known.
func (c *bulkConsts) kk2000EfficiencyLn(lnX, lnNd float64) float64 {
	return colExp(c.kkLnK + c.kkY*lnX - c.kkN*lnNd)
}

// drizzleRate is DrizzleRate(lwp, nd, DrizzleCoef, DrizzleLWPExp, DrizzleNdExp) for lwp > 0,
// nd > 0, with lnNd = ln nd.
func (c *bulkConsts) drizzleRate(lwp, nd, lnNd float64) float64 {
	switch c.drizWay {
	case drizSevenQuarters:
		x := c.drizX * lwp / nd
		r := math.Sqrt(x)
		return c.drizA * x * r * math.Sqrt(r)
	case drizSameExp:
		return c.drizA * math.Exp(c.drizB*math.Log(c.drizX*lwp/nd))
	}
	return c.drizA * math.Exp(c.drizB*(math.Log(lwp)+colLnGPerKg)-c.drizC*(lnNd+colLnCm3))
}

// popColumn is popTable.prob(lwp, crit, nu) with s = (crit/lwp)^(1/3) and sn = nu^(1/2)
// known, and lnNu = ln nu (NaN: computed here as 2 ln sn), for lwp > 0 and crit >= 0
// finite: the same Wilson-Hilferty variable and the same grid interpolation (popAt2).
func (m *Model) popColumn(lwp, crit, s, nu, sn, lnNu float64) float64 {
	if !m.bulk.popFast || !(nu >= popNuMin && nu <= popNuMax) {
		return m.pop.prob(lwp, crit, nu)
	}
	z := three * sn * (s - 1 + 1/(three*three*nu))
	switch {
	case z <= -popZMax:
		return 1
	case z >= popZMax:
		return 0
	}
	if math.IsNaN(lnNu) {
		lnNu = 2 * colLog(sn)
	}
	return colExp(min(popAt2(m.pop.g, lnNu, z), 0))
}

// subgridColumn sets out.POP, out.DrizzleRate (R̄) and out.DrizzleIntensity (I) of a column
// of mean LWP lwp > 0 with top radius reTop, critical LWP crit = LWP at Params.ReStar,
// s = (crit/lwp)^(1/3), gamma shape nu (sn = nu^(1/2), lnNu = ln nu or NaN, ownNu: nu came
// from the column's LWP standard deviation) and r0 = DrizzleRate at the cell mean: the
// quantities of SubgridDrizzleModel. The step onset takes Q(nu, x) and Q(nu + b, x) from the
// POP table (popColumn, popTable.prob: within popTabTol of GammaIncRegComp, tested); the ramp
// takes them from its table (rampTable.moments, within rampTabTol of subgridMoment, tested)
// for 1 <= nu <= 1e4 and r_1 >= 0.3 r_μ, and evaluates the closed form (subgridMoment)
// otherwise.
func (m *Model) subgridColumn(r0, lwp, crit, s, reTop, nu, sn, lnNu float64, ownNu bool, out *Outputs) {
	b := m.p.DrizzleLWPExp
	var pop, mb float64
	switch {
	case math.IsInf(nu, 1) || nu > popStepShape: // homogeneous cell
		pop = m.onset.Probability(reTop)
		mb = pop
	case m.onset.Width == 0:
		pop = m.popColumn(lwp, crit, s, nu, sn, lnNu)
		e := m.bulk.subE
		if ownNu {
			e = SubgridEnhancement(nu, b)
		}
		// Q(nu + b, nu LWP*/μ) = prob(μ, LWP* nu/(nu + b), nu + b)
		mb = e * m.pop.prob(lwp, crit*nu/(nu+b), nu+b)
	default:
		ok := false
		if m.ramp != nil && nu >= popNuMin && nu <= popNuMax {
			var c rampShape
			if ownNu {
				// the per-shape factors from their table (rampNuTable, within rampNuTol)
				if math.IsNaN(lnNu) {
					lnNu = 2 * colLog(sn)
				}
				c, ok = m.ramp.shape(sn, lnNu)
			} else {
				c, ok = m.bulk.ramp, m.bulk.rampOK
			}
			if ok {
				pop, mb, ok = m.ramp.moments(&m.bulk.rampOn, &c, reTop)
			}
		}
		if !ok {
			pop = subgridMoment(nu, reTop, m.onset, 0)
			mb = subgridMoment(nu, reTop, m.onset, b)
		}
	}
	if !(pop > 0) {
		mb = 0 // no drizzling part (POP below about 1e-90 in the tables' tails): no drizzle
	}
	out.POP, out.DrizzleRate = pop, r0*mb
	if pop > 0 {
		out.DrizzleIntensity = out.DrizzleRate / pop
	}
}

// popAt2 is g.at for a grid of two curved axes, not strict, last stride 1 (the POP table):
// the same taps (nGrid.axisTaps), weights and order of summation, unrolled, on the widened
// values (nGrid.widen; g.at itself when they are missing): the stencil of tap0 and the sums of
// popAt2Tap (TestPopColumn checks equality with g.at).
func popAt2(g *nGrid, x0, x1 float64) float64 {
	a := g.tap0(x0)
	return popAt2Tap(g, &a, x1)
}

// quadTap is popAt2's stencil along axis 0 of a grid at x0: the middle node k and the
// weights of nodes k - 1, k, k + 1; ok is false outside the axis (or for NaN).
type quadTap struct {
	k              int
	x0, w0, w1, w2 float64
	ok             bool
}

// tap0 returns popAt2's stencil along axis 0 at x0.
func (g *nGrid) tap0(x0 float64) quadTap {
	u0 := (x0 - g.lo[0]) * g.inv[0]
	if !(u0 >= 0 && u0 <= float64(g.n[0]-1)) {
		return quadTap{x0: x0}
	}
	k0 := max(1, min(int(u0+colHalf), g.n[0]-2))
	t0 := u0 - float64(k0)
	return quadTap{k: k0, x0: x0, w0: t0 * (t0 - 1) / 2, w1: 1 - t0*t0, w2: t0 * (t0 + 1) / 2, ok: true}
}

// popAt2Tap is popAt2(g, x0, x1) with the stencil along axis 0 known, a = g.tap0(x0) (or that
// of a grid with the same axis 0): the same arithmetic, so that lookups on one axis-0
// coordinate share its stencil (the same sums as popAt2, which TestPopColumn checks).
func popAt2Tap(g *nGrid, a *quadTap, x1 float64) float64 {
	u1 := (x1 - g.lo[1]) * g.inv[1]
	if !(a.ok && u1 >= 0 && u1 <= float64(g.n[1]-1)) {
		return math.NaN()
	}
	if !g.widened() {
		return g.at(&[nDims]float64{a.x0, x1})
	}
	k1 := max(1, min(int(u1+colHalf), g.n[1]-2))
	t1 := u1 - float64(k1)
	b0, b1, b2 := t1*(t1-1)/2, 1-t1*t1, t1*(t1+1)/2
	sd := g.stride[0]
	o := (a.k-1)*sd + k1 - 1
	v := g.wide
	r0 := v[o : o+3]
	r1 := v[o+sd : o+sd+3]
	r2 := v[o+2*sd : o+2*sd+3]
	acc := a.w0 * (b0*r0[0] + b1*r0[1] + b2*r0[2])
	acc += a.w1 * (b0*r1[0] + b1*r1[1] + b2*r1[2])
	acc += a.w2 * (b0*r2[0] + b1*r2[1] + b2*r2[2])
	return acc
}

// colExp returns e^x within a few units in the last place (tested against math.Exp,
// expTol): x = (64 k + j) ln2/64 + r with |r| <= ln2/128, e^x = 2^k 2^(j/64) e^r, the 64
// values 2^(j/64) from math.Exp2 and e^r by its Taylor polynomial to r^5 (truncation below
// 4e-17 relative), ln2/64 in two parts so that r is exact (common practice). Outside
// |x| < expMaxArg (and for NaN) it is math.Exp.
func colExp(x float64) float64 {
	if !(x > -expMaxArg && x < expMaxArg) {
		return math.Exp(x)
	}
	kf := x*(expTableN/math.Ln2) + expRound - expRound // nearest integer (round to even)
	k := int64(kf)
	r := x - kf*(expLn2Hi/expTableN) - kf*(expLn2Lo/expTableN)
	r2 := r * r // Estrin's scheme: the three pairs in parallel
	q := (1 + r) + r2*((expTaylor[2]+r*expTaylor[3])+r2*(expTaylor[4]+r*expTaylor[5]))
	return expTable[k&(expTableN-1)] * q * math.Float64frombits(uint64(k>>expTableBits+expBias)<<expMantBits)
}

// colExp2 returns colExp(x) and colExp(y) in one call, the two written out side by side
// (the same arithmetic, TestColExp2), for exponentials that are needed together.
func colExp2(x, y float64) (ex, ey float64) {
	if !(x > -expMaxArg && x < expMaxArg && y > -expMaxArg && y < expMaxArg) {
		return colExp(x), colExp(y)
	}
	kx := x*(expTableN/math.Ln2) + expRound - expRound
	ky := y*(expTableN/math.Ln2) + expRound - expRound
	ix, iy := int64(kx), int64(ky)
	rx := x - kx*(expLn2Hi/expTableN) - kx*(expLn2Lo/expTableN)
	ry := y - ky*(expLn2Hi/expTableN) - ky*(expLn2Lo/expTableN)
	rx2, ry2 := rx*rx, ry*ry
	qx := (1 + rx) + rx2*((expTaylor[2]+rx*expTaylor[3])+rx2*(expTaylor[4]+rx*expTaylor[5]))
	qy := (1 + ry) + ry2*((expTaylor[2]+ry*expTaylor[3])+ry2*(expTaylor[4]+ry*expTaylor[5]))
	ex = expTable[ix&(expTableN-1)] * qx * math.Float64frombits(uint64(ix>>expTableBits+expBias)<<expMantBits)
	ey = expTable[iy&(expTableN-1)] * qy * math.Float64frombits(uint64(iy>>expTableBits+expBias)<<expMantBits)
	return ex, ey
}

// colLog returns ln x for x > 0 normal and finite within logTol max(1, |ln x|) absolute
// (tested against math.Log; Column only uses logarithms as exponents and table coordinates,
// where the absolute error is what counts): x = 2^e m, m in [1, 2) in 64 cells of centre c_j,
// ln x = e ln2 + ln c_j + ln(1 + t), t = m/c_j - 1 with |t| <= 1/128, ln c_j from math.Log
// and ln(1 + t) by its Taylor polynomial to t^6 (truncation below 4e-17; common practice).
// Other x (0, subnormal, negative, Inf, NaN) go to math.Log.
func colLog(x float64) float64 {
	bits := math.Float64bits(x)
	e := int64(bits>>expMantBits) - expBias
	if !(x >= logMinNormal && x < math.MaxFloat64) {
		return math.Log(x)
	}
	j := (bits >> (expMantBits - expTableBits)) & (expTableN - 1)
	m := math.Float64frombits(bits&(1<<expMantBits-1) | expBias<<expMantBits)
	t := m*logInvCentre[j] - 1
	t2 := t * t
	// ln(1+t) = t - t^2/2 + t^3/3 - t^4/4 + t^5/5 - t^6/6, by Estrin's scheme
	l1p := t + t2*((logTaylor[2]+t*logTaylor[3])+t2*((logTaylor[4]+t*logTaylor[5])+t2*logTaylor[6]))
	ef := float64(e)
	return ef*expLn2Hi + (logLnCentre[j] + (l1p + ef*expLn2Lo))
}

// colLog2 returns colLog(x) and colLog(y) in one call, the two written out side by side (the
// same arithmetic, TestColLog2), for logarithms that are needed together.
func colLog2(x, y float64) (lx, ly float64) {
	if !(x >= logMinNormal && x < math.MaxFloat64 && y >= logMinNormal && y < math.MaxFloat64) {
		return colLog(x), colLog(y)
	}
	bx, by := math.Float64bits(x), math.Float64bits(y)
	ex, ey := float64(int64(bx>>expMantBits)-expBias), float64(int64(by>>expMantBits)-expBias)
	jx := (bx >> (expMantBits - expTableBits)) & (expTableN - 1)
	jy := (by >> (expMantBits - expTableBits)) & (expTableN - 1)
	mx := math.Float64frombits(bx&(1<<expMantBits-1) | expBias<<expMantBits)
	my := math.Float64frombits(by&(1<<expMantBits-1) | expBias<<expMantBits)
	tx, ty := mx*logInvCentre[jx]-1, my*logInvCentre[jy]-1
	tx2, ty2 := tx*tx, ty*ty
	px := tx + tx2*((logTaylor[2]+tx*logTaylor[3])+tx2*((logTaylor[4]+tx*logTaylor[5])+tx2*logTaylor[6]))
	py := ty + ty2*((logTaylor[2]+ty*logTaylor[3])+ty2*((logTaylor[4]+ty*logTaylor[5])+ty2*logTaylor[6]))
	lx = ex*expLn2Hi + (logLnCentre[jx] + (px + ex*expLn2Lo))
	ly = ey*expLn2Hi + (logLnCentre[jy] + (py + ey*expLn2Lo))
	return lx, ly
}

// logMinNormal is the smallest normal float64 (colLog's fast range).
const logMinNormal = 0x1p-1022

// logTaylor holds (-1)^(n+1)/n, n = 0..6 (entries 0 and 1 unused), logInvCentre 1/c_j and
// logLnCentre ln c_j (rounded 1/c_j, so that t is m times it exactly as used), c_j =
// 1 + (j + 1/2)/64 (colLog).
var (
	logTaylor                 = [7]float64{0, 1, -1.0 / 2, 1.0 / 3, -1.0 / 4, 1.0 / 5, -1.0 / 6}
	logInvCentre, logLnCentre = func() (inv, ln [expTableN]float64) {
		for j := range inv {
			inv[j] = 1 / (1 + (float64(j)+colHalf)/expTableN)
			ln[j] = -math.Log(inv[j])
		}
		return inv, ln
	}()
)

// Constants of colExp.
const (
	expTableBits = 6
	expTableN    = 1 << expTableBits
	expMaxArg    = 700.0                // |x| bound of the fast path (2^k stays normal)
	expRound     = 0x1.8p52             // adding and subtracting it rounds to an integer
	expLn2Hi     = 0x1.62e42fee00000p-1 // ln 2 to 32 bits (its multiples by k are exact)
	expLn2Lo     = math.Ln2 - expLn2Hi  // the rest of ln 2 (exact constant arithmetic)
	expBias      = 1023                 // float64 exponent bias
	expMantBits  = 52                   // float64 mantissa bits
)

// expTaylor holds 1/n!, n = 0..5, and expTable 2^(j/64), j = 0..63 (colExp).
var (
	expTaylor = [6]float64{1, 1, 1.0 / 2, 1.0 / 6, 1.0 / 24, 1.0 / 120}
	expTable  = func() (t [expTableN]float64) {
		for j := range t {
			t[j] = math.Exp2(float64(j) / expTableN)
		}
		return t
	}()
)

// Physical input bounds outside which a present input is invalid (QCInputInvalid).
const (
	colCTTMin, colCTTMax = 180.0, 340.0 // K
	colCTPMin, colCTPMax = 2e4, 1.1e5   // Pa (CondensationRate range)
	colCTHMax            = 2e4          // m
	colLWPMax            = 10.0         // kg m-2
	colCwTMax            = 310.0        // K, top of CondensationRate's range
)

// Column computes every diagnostic of one column from in into out, following the adiabatic
// model of [Brenguier2000]:
//
//  1. Screening of the inputs (QC bits): missing or invalid LWP/Re, any present optional
//     input that is ±Inf or unphysical, thin cloud, r_e out of range, possible ice.
//  2. c_w = CondensationRate(p, T) at cloud top (the level of the inputs; mid-cloud differs by
//     <= 3 % for 300 m clouds, doc/science.md#condensation-rate), or Params.FixedCw; gamma = f_ad c_w.
//  3. tau: the input Tau when present, else TauAdiabatic(LWP, Re, Qext) (5/9 relation).
//     N_d = DropletNumber(tau, Re, ...), H = Thickness(LWP, ...), ReTop = r_e(H).
//  4. Autoconv = ColumnAutoconversion (air density at cloud top), Efficiency, DrizzleRate,
//     LWPCrit = CriticalLWP(N_d, ReStar, ...), POP with nu from LWPStd or Params.GammaShape.
//  5. Collector drop (CollectDirect or its table) and its sub-cloud evaporation
//     (EvaporateDirect or its table; see table.go for when a column is integrated directly,
//     flagged QCIntegratedDirectly). Cloud base (p_b, T_b) = CloudBase(CTP, CTT, H), H below
//     the top along the moist adiabat; its height is CTH - H when CTH is present (the table
//     then takes the surface pressure from the dry adiabat below the base), else
//     DryBaseHeight(p_b, T_b, Params.SurfacePressure) (flag QCCloudBaseAssumed). A base at
//     or below the surface skips the evaporation (QCEvaporationSkipped).
//
// POP comes from a table of the regularized incomplete gamma function (pop.go; within 1e-4
// absolute and 1e-4 relative of DrizzleProbability, tested) for 1 <= nu <= 1e4, otherwise
// from DrizzleProbability itself.
//
// Steps 2-4 run on per-Model constants folded from the formulas (bulkConsts: one
// exponential for the air state, one logarithm of N_d, and one logarithm and one
// exponential each for KK2000 and for POP), within 1e-12 relative of the exported
// functions (tested); the collector and evaporation integrations get their inputs in the
// exported functions' own arithmetic (exactColumn, collTable.collectRef). The table
// coordinates (ln LWP, ln r_v, the sub-cloud layer of subCloudFast) and the unrolled table
// interpolations agree with that arithmetic to rounding (colExp, colLog).
//
// Column never allocates and never panics; a screened column has every diagnostic NaN.
//
// Reference: [Brenguier2000], [KhairoutdinovKogan2000], [Comstock2004], [Barker1996].
// Valid: marine warm stratocumulus; the screening thresholds in Params.
func (m *Model) Column(in *Inputs, out *Outputs) {
	nan := math.NaN()
	*out = Outputs{nan, nan, nan, nan, nan, nan, nan, nan, nan, nan, nan, nan, nan, nan, nan, nan, nan, 0}
	p := &m.p
	var qc uint16

	lwp, re := in.LWP, in.Re
	switch {
	case math.IsNaN(lwp) || math.IsNaN(re):
		qc |= QCInputMissing
	case !(lwp >= 0 && lwp <= colLWPMax) || !(re > 0 && colFinite(re)):
		qc |= QCInputInvalid
	}
	tau := in.Tau
	tauGiven := !math.IsNaN(tau)
	if tauGiven && !(tau > 0 && colFinite(tau)) {
		qc |= QCInputInvalid
	}
	T, pr := in.CTT, in.CTP
	if math.IsNaN(T) {
		T = p.DefaultCTT
		qc |= QCAirStateAssumed
	} else if !(T >= colCTTMin && T <= colCTTMax) {
		qc |= QCInputInvalid
	}
	if math.IsNaN(pr) {
		pr = p.DefaultCTP
		qc |= QCAirStateAssumed
	} else if !(pr >= colCTPMin && pr <= colCTPMax) {
		qc |= QCInputInvalid
	}
	cth := in.CTH
	if math.IsNaN(cth) {
		qc |= QCCloudBaseAssumed
	} else if !(cth >= 0 && cth <= colCTHMax) {
		qc |= QCInputInvalid
	}
	nu := p.GammaShape
	if math.IsNaN(in.LWPStd) {
		qc |= QCGammaShapeAssumed
	} else if !(in.LWPStd >= 0 && colFinite(in.LWPStd)) {
		qc |= QCInputInvalid
	}
	rhs := in.SurfaceRH
	if math.IsNaN(rhs) {
		rhs = p.SurfaceRH
		if !m.mixed { // a well-mixed layer takes its humidity from cloud base
			qc |= QCSurfaceRHAssumed
		}
	} else if !(rhs >= 0 && rhs <= 1) {
		qc |= QCInputInvalid
	}
	if qc&QCScreenMask != 0 {
		out.QC = qc
		return
	}
	if T < p.MinCTT {
		qc |= QCPossibleIce
	}
	if lwp < p.MinLWP {
		qc |= QCThinCloud
	}
	if re < p.ReMin || re > p.ReMax {
		qc |= QCEffectiveRadiusOutOfRange
	}
	if T > colCwTMax {
		qc |= QCInputInvalid
	}
	if qc&QCScreenMask != 0 {
		out.QC = qc
		return
	}

	st := m.bulk.defAir // the air state of absent CTT and CTP, computed once
	if T != p.DefaultCTT || pr != p.DefaultCTP {
		st = airStateFast(T, pr)
	}
	cw := st.cw
	if p.FixedCw > 0 {
		cw = p.FixedCw
	}
	if !(cw > 0) || !(st.rho > 0) {
		out.QC = qc | QCInputInvalid
		return
	}
	b := &m.bulk
	gamma := p.Fad * cw
	var nd float64
	if tauGiven {
		nd = b.dropletNumber(tau, re, cw)
	} else {
		tau = b.tauAdiabatic(lwp, re)
		nd = b.dropletNumberLWP(lwp, re, cw)
	}
	if tau < p.MinTau {
		qc |= QCThinCloud
	}
	h := b.thickness(lwp, cw)
	if !(nd >= p.NdMin && nd <= p.NdMax) {
		qc |= QCDropletNumberImplausible
	}
	if !(h <= p.HMax) {
		qc |= QCThicknessImplausible
	}
	if qc&QCScreenMask != 0 {
		out.QC = qc
		return
	}

	out.Nd, out.H, out.Cw = nd, h, cw
	// r_e at the top of the adiabatic model: the input r_e itself when tau came from LWP
	// (derived: TauAdiabatic, DropletNumber and Thickness make r_v(H)^3 = k r_e^3).
	reTop := re
	if tauGiven {
		reTop = b.reTop(gamma, h, nd)
	}
	out.ReTop = reTop
	var lnLWP, lnRv float64 // the collector table's coordinates, once taken (haveLn)
	haveLn := false
	if lwp > 0 {
		crit, s := b.criticalLWP(lwp, reTop)
		out.LWPCrit = crit
		var lnNd float64
		switch {
		case m.ac.Scheme == AutoconvKK2000 && !tauGiven:
			// ln N_d and ln(LWP gamma/rho_a^2) as sums of the logarithms of LWP, r_e, c_w
			// and rho_a (dropletNumberLWP, kk2000Arg, derived), so that they need not wait
			// for N_d; ln LWP and ln r_v are the collector table's coordinates too
			var lnRe, lnCw, lnRho float64
			lnLWP, lnRe = colLog2(lwp, re)
			lnCw, lnRho = colLog2(cw, st.rho)
			lnNd = b.lnNdLWP + colHalf*(lnCw+lnLWP) - three*lnRe
			lnRv, haveLn = m.lnCbrtK+lnRe, true
			out.Efficiency = b.kk2000EfficiencyLn(lnLWP+b.lnFad+lnCw-2*lnRho, lnNd)
			out.Autoconv = out.Efficiency * lwp
		case m.ac.Scheme == AutoconvKK2000:
			var lnX float64 // the two logarithms in one call
			lnNd, lnX = colLog2(nd, kk2000Arg(lwp, gamma, st.rho))
			out.Efficiency = b.kk2000EfficiencyLn(lnX, lnNd)
			out.Autoconv = out.Efficiency * lwp
		default:
			lnNd = colLog(nd)
			out.Autoconv = ColumnAutoconversion(m.ac, h, gamma, nd, st.rho)
			out.Efficiency = WarmRainEfficiency(out.Autoconv, lwp)
		}
		r0 := b.drizzleRate(lwp, nd, lnNd) // the local law at the cell mean, a μ^b N_d^-c
		nu, sn, lnNu := p.GammaShape, b.popSn, b.popLnNu
		if !math.IsNaN(in.LWPStd) {
			sn = lwp / in.LWPStd // GammaShapeFromStd: nu = (mean/sd)^2
			nu, lnNu = sn*sn, math.NaN()
		}
		m.subgridColumn(r0, lwp, crit, s, reTop, nu, sn, lnNu, !math.IsNaN(in.LWPStd), out)
	} else { // LWP = 0 (possible with a given tau and MinLWP = 0): the exported functions
		out.Autoconv = ColumnAutoconversion(m.ac, h, gamma, nd, st.rho)
		out.Efficiency = WarmRainEfficiency(out.Autoconv, lwp)
		out.LWPCrit = CriticalLWP(nd, p.ReStar, p.K, p.Fad, cw)
		if !math.IsNaN(in.LWPStd) {
			nu = GammaShapeFromStd(lwp, in.LWPStd)
		}
		d := SubgridDrizzleModel(lwp, nd, reTop, nu, m.onset, p.DrizzleCoef, p.DrizzleLWPExp, p.DrizzleNdExp)
		out.POP, out.DrizzleRate, out.DrizzleIntensity = d.POP, d.Rate, d.Intensity
	}
	if p.EnableCollector && !(p.Collector.R0 > m.cbrtK*reTop) {
		qc |= QCCollectorNotLarger // r_v = k^(1/3) r_e at cloud top
	}

	if !p.EnableCollector {
		out.QC = qc
		return
	}
	// The sub-cloud layer (placed in the fast arithmetic for the tables, subCloudFast: table
	// coordinates, equal to rounding; a direct integration gets the layer of the exported
	// functions' arithmetic) and the drizzle that reaches the surface from the cloud-base
	// size distribution.
	var l SubCloudLayer
	fastL := m.tab != nil && m.tab.evap != nil
	okL := false
	if p.EnableEvaporation {
		if fastL {
			okL = m.subCloudFast(T, pr, h, st.gm, cth, rhs, &l)
		} else {
			tb, pb := math.NaN(), math.NaN()
			if h <= 5000 {
				tb, pb = cloudBase(T, pr, h, st.gm)
			}
			okL = m.subCloudFrom(tb, pb, h, cth, rhs, &l)
		}
	}
	// The collector table, which does not need the layer, before the surface fraction, which
	// does (the lookup runs while the layer's arithmetic completes). Table coordinates: ln LWP
	// and ln r_v at the top, r_v = k^(1/3) r_e.
	var res colResult
	collTab := false
	if m.tab != nil {
		if !haveLn {
			lnLWP, lnRv = colLog2(lwp, m.cbrtK*reTop)
		}
		collTab = m.tab.collect(lnLWP, lnRv, h, T, pr, &res)
	}
	u := m.lnDryRH // ln(1 - RH_s), precomputed for the default (evMixedU: well mixed)
	psL := nan     // the surface pressure of the table coordinates (surfacePressureFast), once
	var ev evLook  // the layer part of the evaporation lookups (evapTable.prepare)
	if p.EnableEvaporation {
		if !math.IsNaN(in.SurfaceRH) && !m.mixed {
			u = colLog(1 - rhs) // a table coordinate: absolute error logTol (1 - rhs is exact for rhs >= 1/2)
		}
		if okL {
			out.CloudBaseHeight = l.BaseHeight
			f := nan
			if fastL {
				psL = m.surfacePressureFast(cth, &l)
				f = m.tab.evap.prepare(u, &l, psL, &ev)
			}
			if math.IsNaN(f) {
				if m.tab != nil {
					qc |= QCIntegratedDirectly
				}
				f = m.directFraction(lwp, re, in.Tau, T, pr, cth, rhs)
			}
			if f >= 0 && f <= 1 {
				out.SurfaceDrizzleFraction, out.SurfaceDrizzleRate = f, f*out.DrizzleRate
			}
		}
	}
	var ex exactCol // the direct integrations' inputs, when needed
	if !collTab {
		if m.tab != nil {
			qc |= QCIntegratedDirectly
		}
		ex = m.exactColumn(lwp, re, in.Tau, T, pr)
		m.collectDirect(ex.h, ex.gamma, ex.nd, T, pr, &res)
	}
	if !res.ok {
		out.QC = qc | QCCollectorFailed | QCEvaporationSkipped
		return
	}
	out.CollectorRadius, out.CollectorTime = res.r, res.t
	if !res.exitBase {
		out.QC = qc | QCCollectorExitTop | QCEvaporationSkipped
		return
	}
	if !p.EnableEvaporation {
		out.QC = qc | QCEvaporationSkipped
		return
	}
	if !okL {
		out.QC = qc | QCEvaporationSkipped
		return
	}
	if !fastL || !m.tab.evaporate(res.r, res.lnR, &ev, &res) { // ev: prepared with the layer (okL)
		if m.tab != nil {
			qc |= QCIntegratedDirectly
		}
		if !ex.ok {
			ex = m.exactColumn(lwp, re, in.Tau, T, pr)
		}
		if collTab { // the exit radius in the reference arithmetic (collectRef), reported too
			m.tab.collectRef(math.Log(lwp), math.Log(m.cbrtK*reTop), h, T, pr, &res)
			out.CollectorRadius, out.CollectorTime = res.r, res.t
		}
		if fastL || ex.h != h || ex.gm != st.gm { // the layer in the arithmetic of the exported functions
			var le SubCloudLayer
			tb, pb := math.NaN(), math.NaN()
			if ex.h <= 5000 {
				tb, pb = cloudBase(T, pr, ex.h, ex.gm)
			}
			if m.subCloudFrom(tb, pb, ex.h, cth, rhs, &le) {
				l = le
			}
		}
		e := EvaporateDirect(res.r, l)
		res.evapOK = true
		switch {
		case e.Reached && e.SurfaceRadius >= 0 && colFinite(e.SurfaceRadius):
			res.rs, res.zev = e.SurfaceRadius, nan
		case !e.Reached && e.EvapHeight >= 0 && colFinite(e.EvapHeight):
			res.rs, res.zev = 0, e.EvapHeight
		default:
			res.evapOK = false
		}
	}
	if !res.evapOK {
		out.QC = qc | QCEvaporationSkipped
		return
	}
	out.SurfaceRadius, out.EvapHeight = res.rs, res.zev
	out.QC = qc
}

// exactCol is a column's H (m), gamma (kg m-4), N_d (m-3) and cloud-top G_m (K m-1) in the
// arithmetic of the exported functions (adiabaticState, TauAdiabatic, DropletNumber,
// Thickness), for the direct integrations: their adaptive steps answer a last-bit change of
// the inputs by up to their tolerance, so they get the inputs they always had.
type exactCol struct {
	h, gamma, nd, gm float64
	ok               bool
}

// exactColumn computes exactCol for a column that passed Column's screening (tau NaN: from
// LWP).
func (m *Model) exactColumn(lwp, re, tau, T, pr float64) exactCol {
	p := &m.p
	st := adiabaticState(T, pr)
	cw := st.cw
	if p.FixedCw > 0 {
		cw = p.FixedCw
	}
	if math.IsNaN(tau) {
		tau = TauAdiabatic(lwp, re, p.Qext)
	}
	return exactCol{h: Thickness(lwp, p.Fad, cw), gamma: p.Fad * cw,
		nd: DropletNumber(tau, re, p.K, p.Qext, p.Fad, cw), gm: st.gm, ok: true}
}

// directFraction is SurfaceDrizzleFraction for a column that passed Column's screening, with
// the layer in the arithmetic of the exported functions (exactColumn, cloudBase,
// subCloudFrom); NaN when the layer is undefined.
func (m *Model) directFraction(lwp, re, tau, T, pr, cth, rhs float64) float64 {
	ex := m.exactColumn(lwp, re, tau, T, pr)
	tb, pb := math.NaN(), math.NaN()
	if ex.h <= 5000 {
		tb, pb = cloudBase(T, pr, ex.h, ex.gm)
	}
	var l SubCloudLayer
	if !m.subCloudFrom(tb, pb, ex.h, cth, rhs, &l) {
		return math.NaN()
	}
	return SurfaceDrizzleFraction(m.p.Drizzle, l)
}

// colResult is the collector and evaporation result of one column.
type colResult struct {
	r, t     float64 // exit radius (m) and time (s)
	lnR      float64 // ln r
	exitBase bool
	ok       bool
	evapOK   bool    // sub-cloud layer defined and result finite
	rs, zev  float64 // surface radius (0 if evaporated), evaporation height (NaN if reached)
}

// collectDirect integrates the collector directly.
func (m *Model) collectDirect(h, gamma, nd, T, pr float64, res *colResult) {
	c := CloudColumn{H: h, Gamma: gamma, Nd: nd, Air: NewAir(pr, T)}
	cp := CollectDirect(c, m.setup)
	res.r, res.t, res.exitBase = cp.ExitRadius, cp.ExitTime, cp.ExitBase
	res.lnR = math.Log(cp.ExitRadius)
	res.ok = cp.ExitRadius > 0 && colFinite(cp.ExitRadius) && cp.ExitTime >= 0 && colFinite(cp.ExitTime)
}

// Cloud-base helpers: the half-step of the moist-adiabatic descent.
const colHalf = 0.5

// CloudBase returns the pressure pb (Pa) and temperature tb (K) at the base of an adiabatic
// cloud of thickness h (m) whose top is at pressure p (Pa) and temperature T (K), by one
// midpoint step down the moist adiabat and the hydrostatic equation with the layer-mean
// virtual temperature of the saturated air:
//
//	T_m = T + G_m(p, T) H/2,  p_m = p exp(g H/2/(R_d (T + T_m)/2)),  T_b = T + G_m(p_m, T_m) H
//	v_m = T_v/T at (T_m, p_m) = p_m/(R_d rho_a T_m),  rho_a = AirDensity(p_m, T_m, r_s)
//	p_b = p exp(g H/(R_d v_m (T + T_b)/2))
//
// (v_m = (1 + r_s/eps)/(1 + r_s), 1.002-1.006 in warm clouds; the half step p_m, which only
// places the midpoint, keeps the dry temperature; liquid-water loading is neglected.)
// Reference: [Glickman2000] moist-adiabatic lapse rate; [RogersYau1989] eq. 1.11 (virtual
// temperature); hydrostatic balance (common practice).
// Valid: as CondensationRate at top and base; 0 <= h <= 5000 m; NaN otherwise.
func CloudBase(p, T, h float64) (pb, tb float64) {
	if !(h >= 0 && h <= 5000) {
		return math.NaN(), math.NaN()
	}
	tb, pb = cloudBase(T, p, h, adiabaticState(T, p).gm)
	return pb, tb
}

// cloudBase is CloudBase with the cloud-top lapse rate g1 (K m-1) already known.
func cloudBase(T, p, h, g1 float64) (tb, pb float64) {
	tm := T + g1*h*colHalf
	pm := p * math.Exp(Gravity*h*colHalf/(GasConstantDry*(T+tm)*colHalf))
	st2 := adiabaticState(tm, pm)
	g2 := st2.gm
	if math.IsNaN(g2) {
		g2 = g1
	}
	tb = T + g2*h
	pb = p * math.Exp(Gravity*h/(GasConstantDry*(T+tb)*colHalf*virtualFactor(tm, pm, st2.rho)))
	return tb, pb
}

// virtualFactor is T_v/T = p/(R_d rho T) of saturated air of density rho (kg m-3) at (T K,
// p Pa), or 1 (dry air) when rho is NaN (outside adiabaticState's range).
func virtualFactor(T, p, rho float64) float64 {
	if !(rho > 0) {
		return 1
	}
	return p / (GasConstantDry * rho * T)
}

// DryBaseHeight returns the height (m) of a cloud base at (pb Pa, tb K) above a surface at
// pressure ps (Pa) in a well-mixed (dry-adiabatic) sub-cloud layer:
//
//	T_s = T_b (p_s/p_b)^(R_d/c_pd),   z_b = c_pd (T_s - T_b)/g
//
// Reference: Poisson's equation and the dry-adiabatic lapse rate g/c_pd [RogersYau1989].
// Valid: ps > pb > 0, tb > 0; NaN otherwise (cloud base at or below the surface).
func DryBaseHeight(pb, tb, ps float64) float64 {
	if !(ps > pb && pb > 0 && tb > 0) || math.IsInf(ps, 1) || math.IsInf(tb, 1) {
		return math.NaN()
	}
	ts := tb * math.Pow(ps/pb, GasConstantDry/SpecificHeatDryAir)
	return SpecificHeatDryAir * (ts - tb) / Gravity
}

// surfacePressureFast is surfacePressure for the evaporation table's coordinates, with
// colExp and colLog in SubCloudLayer.State's formula (the same value to rounding, derived).
func (m *Model) surfacePressureFast(cth float64, l *SubCloudLayer) float64 {
	if math.IsNaN(cth) {
		return m.p.SurfacePressure
	}
	ts := l.BaseT + Gravity/SpecificHeatDryAir*l.BaseHeight
	return l.BaseP * colExp(SpecificHeatDryAir/GasConstantDry*colLog(ts/l.BaseT))
}

// surfacePressure returns the surface pressure (Pa) below the layer l: Params.SurfacePressure
// when cloud base was placed by the dry adiabat (cth NaN), else the dry adiabat from the base
// state down the base height, p_s = p_b (T_s/T_b)^(c_pd/R_d), T_s = T_b + g z_b/c_pd (the
// same relations as DryBaseHeight and SubCloudLayer.State).
func (m *Model) surfacePressure(cth float64, l *SubCloudLayer) float64 {
	if math.IsNaN(cth) {
		return m.p.SurfacePressure
	}
	ps, _, _ := l.State(0)
	return ps
}

// subCloud fills the sub-cloud layer of a column; false when it is undefined.
func (m *Model) subCloud(T, pr, h, cth, rhs float64, l *SubCloudLayer) bool {
	pb, tb := CloudBase(pr, T, h)
	return m.subCloudFrom(tb, pb, h, cth, rhs, l)
}

// subCloudFast is subCloud for the evaporation table's coordinates, from the cloud-top lapse
// rate g1 (K m-1): the formulas of cloudBase, DryBaseHeight and subCloudFrom with colExp,
// colLog and airStateFast's lapse rate (within adStateTol of adiabaticState), so the layer
// equals subCloud's to rounding (derived). Without a CTH, ln(p_s/p_b) is formed as
// ln(p_s/p) - g H/(R_d v_m (T + T_b)/2), p_b's own exponent, so the logarithm does not wait for
// the cloud base. The midpoint state is brought over one denominator (midState): with
// v_m = p_m/(p_m - (1 - eps) e_s) that exponent is 2 g H (p_m - (1 - eps) e_s)/(R_d (T + T_b) p_m),
// one division after T_b, and z_b = (c_pd/g)(T_s - T_b) (derived).
func (m *Model) subCloudFast(T, p, h, g1, cth, rhs float64, l *SubCloudLayer) bool {
	if !(h <= 5000) {
		return false
	}
	noCTH := math.IsNaN(cth)
	ps, lnSP := m.p.SurfacePressure, 0.0
	if noCTH {
		lnSP = colLog(ps / p)
	}
	tm := T + g1*h*colHalf
	// p_m and the vapour pressure at T_m (airStateFast), both exponentials in one call
	em, ev := colExp2(Gravity*h*colHalf/(GasConstantDry*(T+tm)*colHalf), airStateArg(tm-kelvinOffset))
	pm := p * em
	g2, pd := midState(tm, pm, ev)
	if math.IsNaN(g2) {
		g2 = g1
	}
	tb := T + g2*h
	x := 2 * Gravity / GasConstantDry * h * pd / ((T + tb) * pm)
	zb := cth - h
	var pb float64
	if noCTH { // p_b and T_s = T_b (p_s/p_b)^(R_d/c_pd), both exponentials in one call
		eb, es := colExp2(x, GasConstantDry/SpecificHeatDryAir*(lnSP-x))
		pb = p * eb
		zb = math.NaN() // DryBaseHeight's domain
		if ps > pb && pb > 0 && tb > 0 && !math.IsInf(ps, 1) && !math.IsInf(tb, 1) {
			ts := tb * es
			zb = SpecificHeatDryAir / Gravity * (ts - tb)
		}
	} else {
		pb = p * colExp(x)
	}
	if !(zb > 0) || !colFinite(tb) || !colFinite(pb) {
		return false
	}
	*l = SubCloudLayer{BaseHeight: zb, BaseT: tb, BaseP: pb, SurfaceRH: rhs, WellMixed: m.mixed}
	return true
}

// midState returns airStateExp's lapse rate G_m (K m-1) at (T K, p Pa), with ex =
// colExp(airStateArg(T - kelvinOffset)), and p/v with v = T_v/T = p/(R_d rho_a T) the virtual
// factor of the saturated air (virtualFactor): p - (1 - eps) e_s (derived from airStateExp's
// rho_a = (p - (1 - eps) e_s)/(R_d T)), or p (v = 1) where airStateExp has no density. For
// subCloudFast: the formulas of airStateExp without c_w, written out again because a shared
// helper for their common terms is not inlined and made BenchmarkColumnAll 20-40 ns per
// column slower; G_m NaN outside its range.
func midState(T, p, ex float64) (gm, pd float64) {
	if !(T >= 240 && T <= 310 && p >= 2e4 && p <= 1.1e5) {
		return math.NaN(), p
	}
	tc := T - kelvinOffset
	es := boltonEs[0] * ex // SatVapourPressure
	if !(es < p) {
		return math.NaN(), p
	}
	le := (boltonLv[0] - boltonLv[1]*tc) * boltonLv[2] * Epsilon // LatentHeat times eps
	rt := 1 / (GasConstantDry * T)
	w := p - es
	a := le * es * rt
	bb := le * GasConstantDry * rt
	gm = Gravity * (w + a) / (SpecificHeatDryAir*w + a*bb)
	if !(Epsilon*es <= maxMixingRatio*w) { // airStateExp's bound of the density
		return gm, p
	}
	return gm, p - (1-Epsilon)*es
}

// subCloudFrom is subCloud with the cloud-base state known.
func (m *Model) subCloudFrom(tb, pb, h, cth, rhs float64, l *SubCloudLayer) bool {
	var zb float64
	if math.IsNaN(cth) {
		zb = DryBaseHeight(pb, tb, m.p.SurfacePressure)
	} else {
		zb = cth - h
	}
	if !(zb > 0) || !colFinite(tb) || !colFinite(pb) {
		return false
	}
	*l = SubCloudLayer{BaseHeight: zb, BaseT: tb, BaseP: pb, SurfaceRH: rhs, WellMixed: m.mixed}
	return true
}
