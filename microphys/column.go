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
	Nd              float64 // droplet number concentration, m-3
	H               float64 // adiabatic geometric thickness, m
	Cw              float64 // condensation rate c_w used (before f_ad), kg m-4
	ReTop           float64 // cloud-top effective radius of the adiabatic model, m
	Autoconv        float64 // column autoconversion rate, kg m-2 s-1
	Efficiency      float64 // warm-rain efficiency Autoconv/LWP, s-1
	DrizzleRate     float64 // cloud-base drizzle rate, kg m-2 s-1 (= mm s-1)
	POP             float64 // drizzle probability, 1
	LWPCrit         float64 // critical LWP of drizzle onset, kg m-2
	CollectorRadius float64 // collector drop radius on leaving the cloud, m
	CollectorTime   float64 // collector drop time in cloud, s
	SurfaceRadius   float64 // collector drop radius at the surface, m (0 when it evaporated)
	EvapHeight      float64 // height above the surface where it evaporated, m (NaN when it reached the surface)
	QC              uint16  // QC bits, see QCFlags
}

// Model is a validated parameter set with its precomputed tables. A Model is safe for
// concurrent use by many goroutines (Column only reads it).
type Model struct {
	p     Params
	ac    AutoconvConfig
	setup CollectorSetup
	cbrtK float64    // K^(1/3)
	tab   *collTable // nil unless CollectorMethod == CollectorTable and the collector is on
	pop   *popTable  // drizzle-probability table (pop.go)
	// lnDryRH is ln(1 - Params.SurfaceRH), the humidity coordinate of the evaporation table.
	lnDryRH float64
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
	m := &Model{p: p, ac: p.AutoconvConfig(), setup: p.Collector, cbrtK: math.Cbrt(p.K), lnDryRH: math.Log1p(-p.SurfaceRH)}
	m.setup.Collision = p.Collision
	m.setup.Coalescence = p.Coalescence
	m.pop = newPopTable()
	if p.EnableCollector && p.CollectorMethod == CollectorTable {
		m.tab = buildCollTable(m)
	}
	return m, nil
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
	colLnRvConst = math.Log(three / (four * math.Pi * WaterDensity)) // ln(3/(4 pi rho_w))
	colLnKK      = math.Log(kk2000Auto[0] / (kk2000Auto[1] + 1))     // ln(1350/3.47)
	colLnCm3     = math.Log(kk2000Auto[3])                           // ln(cm-3 per m-3)
	colLnGPerKg  = math.Log(drizzleUnits[0])                         // ln(g per kg)
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
//  2. c_w = CondensationRate(T, p) at cloud top (the level of the inputs; mid-cloud differs by
//     <= 3 % for 300 m clouds, physics notes §6.1), or Params.FixedCw; gamma = f_ad c_w.
//  3. tau: the input Tau when present, else TauAdiabatic(LWP, Re, Qext) (5/9 relation).
//     N_d = DropletNumber(tau, Re, ...), H = Thickness(LWP, ...), ReTop = r_e(H).
//  4. Autoconv = ColumnAutoconversion (air density at cloud top), Efficiency, DrizzleRate,
//     LWPCrit = CriticalLWP(N_d, ReStar, ...), POP with nu from LWPStd or Params.GammaShape.
//  5. Collector drop (CollectDirect or its table) and its sub-cloud evaporation
//     (EvaporateDirect or its table; see table.go for when a column is integrated directly,
//     flagged QCIntegratedDirectly). Cloud base (T_b, p_b) = CloudBase(CTT, CTP, H), H below
//     the top along the moist adiabat; its height is CTH - H when CTH is present (the table
//     then takes the surface pressure from the dry adiabat below the base), else
//     DryBaseHeight(T_b, p_b, Params.SurfacePressure) (flag QCCloudBaseAssumed). A base at
//     or below the surface skips the evaporation (QCEvaporationSkipped).
//
// POP comes from a table of the regularized incomplete gamma function (pop.go; within 1e-4
// absolute and 1e-4 relative of DrizzleProbability, tested) for 1 <= nu <= 1e4, otherwise
// from DrizzleProbability itself.
//
// Column never allocates and never panics; a screened column has every diagnostic NaN.
//
// Reference: [Brenguier2000], [KhairoutdinovKogan2000], [Comstock2004], [Barker1996].
// Valid: marine warm stratocumulus; the screening thresholds in Params.
func (m *Model) Column(in *Inputs, out *Outputs) {
	nan := math.NaN()
	*out = Outputs{nan, nan, nan, nan, nan, nan, nan, nan, nan, nan, nan, nan, nan, 0}
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
		qc |= QCSurfaceRHAssumed
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

	st := adiabaticState(T, pr)
	cw := st.cw
	if p.FixedCw > 0 {
		cw = p.FixedCw
	}
	if !(cw > 0) || !(st.rho > 0) {
		out.QC = qc | QCInputInvalid
		return
	}
	gamma := p.Fad * cw
	if !tauGiven {
		tau = TauAdiabatic(lwp, re, p.Qext)
	}
	if tau < p.MinTau {
		qc |= QCThinCloud
	}
	nd := DropletNumber(tau, re, p.K, p.Qext, p.Fad, cw)
	h := Thickness(lwp, p.Fad, cw)
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
	// Logarithms shared by the power laws (same formulas as ColumnAutoconvKK2000,
	// DrizzleRate and the table axes, written in logs to save transcendental calls).
	lnLWP, lnNd, lnGamma := math.Log(lwp), math.Log(nd), math.Log(gamma)
	lnH := (math.Ln2 + lnLWP - lnGamma) / 2
	lnRv := (lnGamma + lnH - lnNd + colLnRvConst) / three // r_v^3 = 3 gamma H/(4 pi rho_w N)
	rvTop := math.Exp(lnRv)
	out.ReTop = rvTop / m.cbrtK
	if m.ac.Scheme == AutoconvKK2000 {
		b := kk2000Auto[1]
		out.Autoconv = math.Exp(colLnKK + (1-b)*math.Log(st.rho) - kk2000Auto[2]*(lnNd+colLnCm3) +
			b*lnGamma + (b+1)*lnH)
	} else {
		out.Autoconv = ColumnAutoconversion(m.ac, h, gamma, nd, st.rho)
	}
	out.Efficiency = WarmRainEfficiency(out.Autoconv, lwp)
	out.DrizzleRate = p.DrizzleCoef * math.Exp(p.DrizzleLWPExp*(lnLWP+colLnGPerKg)-p.DrizzleNdExp*(lnNd+colLnCm3)) / drizzleUnits[2]
	out.LWPCrit = CriticalLWP(nd, p.ReStar, p.K, p.Fad, cw)
	if !math.IsNaN(in.LWPStd) {
		nu = GammaShapeFromStd(lwp, in.LWPStd)
	}
	out.POP = m.pop.prob(lwp, out.LWPCrit, nu)

	if !p.EnableCollector {
		out.QC = qc
		return
	}
	var res colResult
	if m.tab == nil || !m.tab.collect(lnLWP, lnRv, h, T, pr, &res) {
		if m.tab != nil {
			qc |= QCIntegratedDirectly
		}
		m.collectDirect(h, gamma, nd, T, pr, &res)
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
	var l SubCloudLayer
	tb, pb := math.NaN(), math.NaN()
	if h <= 5000 {
		tb, pb = cloudBase(T, pr, h, st.gm)
	}
	if !m.subCloudFrom(tb, pb, h, cth, rhs, &l) {
		out.QC = qc | QCEvaporationSkipped
		return
	}
	u := m.lnDryRH // ln(1 - RH_s), precomputed for the default
	if !math.IsNaN(in.SurfaceRH) {
		u = math.Log1p(-rhs)
	}
	if m.tab == nil || !m.tab.evaporate(res.r, res.lnR, u, &l, m.surfacePressure(cth, &l), &res) {
		if m.tab != nil {
			qc |= QCIntegratedDirectly
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

// CloudBase returns the temperature tb (K) and pressure pb (Pa) at the base of an adiabatic
// cloud of thickness h (m) whose top is at temperature T (K) and pressure p (Pa), by one
// midpoint step down the moist adiabat and the hydrostatic equation with the layer-mean
// temperature (virtual correction neglected, < 0.5 % in p_b - p):
//
//	T_m = T + G_m(T, p) H/2,  T_b = T + G_m(T_m, p_m) H,  p_b = p exp(g H/(R_d (T + T_b)/2))
//
// Reference: [Glickman2000] moist-adiabatic lapse rate; hydrostatic balance (common practice).
// Valid: as CondensationRate at top and base; 0 <= h <= 5000 m; NaN otherwise.
func CloudBase(T, p, h float64) (tb, pb float64) {
	if !(h >= 0 && h <= 5000) {
		return math.NaN(), math.NaN()
	}
	return cloudBase(T, p, h, adiabaticState(T, p).gm)
}

// cloudBase is CloudBase with the cloud-top lapse rate g1 (K m-1) already known.
func cloudBase(T, p, h, g1 float64) (tb, pb float64) {
	tm := T + g1*h*colHalf
	pm := p * math.Exp(Gravity*h*colHalf/(GasConstantDry*(T+tm)*colHalf))
	g2 := adiabaticState(tm, pm).gm
	if math.IsNaN(g2) {
		g2 = g1
	}
	tb = T + g2*h
	pb = p * math.Exp(Gravity*h/(GasConstantDry*(T+tb)*colHalf))
	return tb, pb
}

// DryBaseHeight returns the height (m) of a cloud base at (tb K, pb Pa) above a surface at
// pressure ps (Pa) in a well-mixed (dry-adiabatic) sub-cloud layer:
//
//	T_s = T_b (p_s/p_b)^(R_d/c_pd),   z_b = c_pd (T_s - T_b)/g
//
// Reference: Poisson's equation and the dry-adiabatic lapse rate g/c_pd [RogersYau1989].
// Valid: ps > pb > 0, tb > 0; NaN otherwise (cloud base at or below the surface).
func DryBaseHeight(tb, pb, ps float64) float64 {
	if !(ps > pb && pb > 0 && tb > 0) || math.IsInf(ps, 1) || math.IsInf(tb, 1) {
		return math.NaN()
	}
	ts := tb * math.Pow(ps/pb, GasConstantDry/SpecificHeatDryAir)
	return SpecificHeatDryAir * (ts - tb) / Gravity
}

// surfacePressure returns the surface pressure (Pa) below the layer l: Params.SurfacePressure
// when cloud base was placed by the dry adiabat (cth NaN), else the dry adiabat from the base
// state down the base height, p_s = p_b (T_s/T_b)^(c_pd/R_d), T_s = T_b + g z_b/c_pd (the
// same relations as DryBaseHeight and SubCloudLayer.State).
func (m *Model) surfacePressure(cth float64, l *SubCloudLayer) float64 {
	if math.IsNaN(cth) {
		return m.p.SurfacePressure
	}
	_, ps, _ := l.State(0)
	return ps
}

// subCloud fills the sub-cloud layer of a column; false when it is undefined.
func (m *Model) subCloud(T, pr, h, cth, rhs float64, l *SubCloudLayer) bool {
	tb, pb := CloudBase(T, pr, h)
	return m.subCloudFrom(tb, pb, h, cth, rhs, l)
}

// subCloudFrom is subCloud with the cloud-base state known.
func (m *Model) subCloudFrom(tb, pb, h, cth, rhs float64, l *SubCloudLayer) bool {
	var zb float64
	if math.IsNaN(cth) {
		zb = DryBaseHeight(tb, pb, m.p.SurfacePressure)
	} else {
		zb = cth - h
	}
	if !(zb > 0) || !colFinite(tb) || !colFinite(pb) {
		return false
	}
	*l = SubCloudLayer{BaseHeight: zb, BaseT: tb, BaseP: pb, SurfaceRH: rhs}
	return true
}
