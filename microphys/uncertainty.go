package microphys

import "math"

// The uncertainty of the diagnostics: the retrieval part (the inputs' standard errors
// carried through the column model to first order) and the parameter part (the spread
// of the model's assumptions). Both are per column and allocate nothing. The method,
// the closed forms it is tested against and what the numbers leave out are in
// doc/science.md#uncertainty and doc/science.md#parameter-spread.

// RawColumn is one column's inputs as Model.Complete takes them: before completion, so
// that a perturbed input is completed again (an LWP derived from tau and r_e moves with
// them).
type RawColumn struct {
	In       Inputs  // before Complete
	Nd, CF   float64 // Complete's droplet number (m-3) and cloud fraction (1); NaN: absent
	GridMean bool    // the LWP is a grid-box mean (Complete)
}

// InputErrors are the standard errors of a column's raw inputs, SI units (LWP kg m-2, r_e
// m, tau 1); NaN, 0 or an absent input: no error. Corr is the correlation coefficient of
// the LWP and r_e errors (Params.ErrorCorrelation).
type InputErrors struct {
	LWP, Re, Tau float64
	Corr         float64
}

// Any reports whether e holds at least one standard error.
//
// Reference: none (software interface).
// Valid: always.
func (e *InputErrors) Any() bool { return e.LWP > 0 || e.Re > 0 || e.Tau > 0 }

// Scratch is the working space of RetrievalError and ParameterSpread: the perturbed
// columns' inputs and outputs, which the output declarations' Get functions take by pointer
// (so they live on the heap). Keep one per goroutine; the zero value is ready, nil makes
// the call allocate its own.
type Scratch struct {
	in  [2]Inputs
	out [2]Outputs
}

// uncStep is the step in ln x of the central differences of Model.RetrievalError:
// truncation error (p h)^2/6 of a power law x^p (1.5e-4 for p = 3, derived), and a table
// interpolant's discontinuity delta at a cell boundary enters as delta/(2h)
// (doc/science.md#uncertainty).
const uncStep = 0.01

// uncAnalytic switches the analytic derivatives of the closed forms on (tests compare them
// with the central differences).
var uncAnalytic = true

// uncMaxOut bounds len(OutputDecls) for the per-column arrays of the uncertainty.
const uncMaxOut = 32

// uncCurvature is the largest ratio of the second-order term to the first-order standard
// error, sum over inputs of |d2y/dln x^2| s^2/2 / sigma, at which the first-order value is taken
// as representative (doc/science.md#uncertainty; common practice: the second-order term
// of the Taylor series below a quarter of the first).
const uncCurvature = 0.25

// Indices in OutputDecls of the outputs whose derivatives Model.RetrievalError forms
// analytically (closed forms of the adiabatic model); -1 when absent.
var uncIdx = struct{ lwp, nd, h, cw, reTop, crit, ac, eff int }{
	outputIndex("liquid_water_path"), outputIndex("droplet_number"), outputIndex("cloud_thickness"),
	outputIndex("condensation_rate"), outputIndex("adiabatic_top_effective_radius"), outputIndex("critical_lwp"),
	outputIndex("column_autoconversion_rate"), outputIndex("autoconversion_efficiency"),
}

func outputIndex(name string) int {
	for i := range OutputDecls {
		if OutputDecls[i].Name == name {
			return i
		}
	}
	return -1
}

// uncValue is output k of a column: Get, or the completed LWP for the input copy.
func uncValue(k int, done *Inputs, o *Outputs) float64 {
	d := &OutputDecls[k]
	if d.Get != nil {
		return d.Get(o)
	}
	if d.Input == "lwp" && done.LWP >= 0 {
		return done.LWP
	}
	return math.NaN()
}

// evalRaw completes a copy of raw's inputs and runs the column; false when Complete or
// Column screens it.
func (m *Model) evalRaw(raw *RawColumn, done *Inputs, o *Outputs) bool {
	*done = raw.In
	q := m.Complete(done, raw.Nd, raw.CF, raw.GridMean)
	if q&QCInputScreenMask != 0 {
		*o = Outputs{}
		return false
	}
	m.Column(done, o)
	return o.QC&QCScreenMask == 0
}

// RetrievalError sets se[k] to the first-order standard error (SI units of Outputs) of
// output OutputDecls[k] of the column raw, whose completed inputs are done, input QC bits
// qin (Model.Complete) and outputs out, from the input errors e:
//
//	sigma_y^2 = sum_i (dy/dln x_i  s_i)^2 + 2 rho (dy/dln L)(dy/dln r_e) s_L s_r,   s_i = sigma_i/x_i
//
// over the raw inputs x = (LWP, r_e, tau). The derivatives of the adiabatic closed forms
// (liquid_water_path, droplet_number, cloud_thickness, condensation_rate,
// adiabatic_top_effective_radius, critical_lwp and, for KK2000, the autoconversion rate
// and efficiency) are analytic: power laws of the completed inputs (elasticities), chained
// through the completion (LWP from tau and r_e, r_e from LWP and N_d). The others go
// through tables and integrators and take a central difference of the model itself
// (Complete and Column) over ln x ± uncStep.
//
// It returns a bit mask (bit k for OutputDecls[k]) of outputs whose first-order value is
// not representative: the output is missing, zero or screened at a perturbed point but
// not at the column (a regime boundary within the step), the band y ± 2 sigma leaves the
// output's valid range (POP near 0 or 1, an error above half the value), or the
// second-order term exceeds uncCurvature of sigma. se[k] is NaN where out's value is NaN
// or the column is screened; w is the working space (see Scratch). It panics if
// len(se) < len(OutputDecls).
//
// Reference: first-order (delta-method) propagation of independent or correlated errors
// [Taylor1997] ch. 3 and 9; closed forms [Brenguier2000]; doc/science.md#uncertainty.
// Valid: any column; errors of absent inputs are ignored.
func (m *Model) RetrievalError(raw *RawColumn, done *Inputs, qin uint32, out *Outputs, e *InputErrors, se []float64, w *Scratch) (nonlinear uint32) {
	if w == nil {
		w = new(Scratch)
	}
	n := len(OutputDecls)
	if len(se) < n {
		panic("microphys: RetrievalError: se shorter than OutputDecls")
	}
	nan := math.NaN()
	for k := range n {
		se[k] = nan
	}
	if qin&QCInputScreenMask != 0 || out.QC&QCScreenMask != 0 {
		return 0
	}
	// relative errors of the raw inputs: LWP, r_e, tau
	x := [3]float64{raw.In.LWP, raw.In.Re, raw.In.Tau}
	sig := [3]float64{e.LWP, e.Re, e.Tau}
	var s [3]float64
	for i := range 3 {
		if sig[i] > 0 && x[i] > 0 && colFinite(x[i]) && colFinite(sig[i]) {
			s[i] = sig[i] / x[i]
		}
	}
	rho := max(-1, min(1, e.Corr))
	if math.IsNaN(rho) {
		rho = 0
	}
	var y0 [uncMaxOut]float64
	for k := range n {
		y0[k] = uncValue(k, done, out)
	}
	// central differences through Complete and Column
	var d, c [3][uncMaxOut]float64 // dy/dln x_i and d2y/dln x_i^2
	var edge uint32                // outputs that change regime within the step
	for i := range 3 {
		if s[i] == 0 {
			continue
		}
		var yp, ym [uncMaxOut]float64
		for sgn, dst := range [2]*[uncMaxOut]float64{&yp, &ym} {
			r := *raw
			f := math.Exp(uncStep * float64(1-2*sgn))
			switch i {
			case 0:
				r.In.LWP *= f
			case 1:
				r.In.Re *= f
			case 2:
				r.In.Tau *= f
			}
			pd, po := &w.in[0], &w.out[0]
			ok := m.evalRaw(&r, pd, po)
			for k := range n {
				dst[k] = nan
				if ok {
					dst[k] = uncValue(k, pd, po)
				}
			}
		}
		for k := range n {
			a, b, v := yp[k], ym[k], y0[k]
			if math.IsNaN(v) {
				continue
			}
			if math.IsNaN(a) || math.IsNaN(b) || (v == 0) != (a == 0) || (v == 0) != (b == 0) {
				edge |= 1 << k
			}
			switch {
			case !math.IsNaN(a) && !math.IsNaN(b):
				d[i][k] = (a - b) / (2 * uncStep)
				c[i][k] = (a + b - 2*v) / (uncStep * uncStep)
			case !math.IsNaN(a):
				d[i][k] = (a - v) / uncStep
			case !math.IsNaN(b):
				d[i][k] = (v - b) / uncStep
			default:
				d[i][k] = nan
			}
		}
	}
	if uncAnalytic {
		m.analyticElasticities(done, qin, &y0, &s, &d, &c)
	}
	for k := range n {
		v := y0[k]
		if math.IsNaN(v) {
			continue
		}
		var2 := 2 * rho * d[0][k] * d[1][k] * s[0] * s[1]
		curv := 0.0
		for i := range 3 {
			t := d[i][k] * s[i]
			var2 += t * t
			curv += math.Abs(c[i][k]) * s[i] * s[i] / 2
		}
		sd := math.Sqrt(max(0, var2))
		se[k] = sd
		if math.IsNaN(sd) {
			nonlinear |= 1 << k
			continue
		}
		dc := &OutputDecls[k]
		lo, hi := dc.ValidMin/dc.Scale, dc.ValidMax/dc.Scale
		switch {
		case edge&(1<<k) != 0:
			nonlinear |= 1 << k
		case sd > 0 && (v-2*sd < lo || v+2*sd > hi):
			nonlinear |= 1 << k
		case sd > 0 && curv > uncCurvature*sd:
			nonlinear |= 1 << k
		}
	}
	return nonlinear
}

// analyticElasticities replaces the differences d and c of the closed-form outputs by
// their exact values: y = C prod_j u_j^(e_j) in the completed inputs u = (LWP, r_e, tau),
// u_j = prod_i x_i^(J_ji) in the raw ones, so dy/dln x_i = y g_i and d2y/dln x_i^2 =
// y g_i^2 with g = e J (derived from the formulas of Column and Complete).
func (m *Model) analyticElasticities(done *Inputs, qin uint32, y0 *[uncMaxOut]float64, s *[3]float64, d, c *[3][uncMaxOut]float64) {
	// completion Jacobian J[j][i] = dln u_j / dln x_i
	J := [3][3]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}}
	if qin&QCLWPFromOptics != 0 { // LWP = C tau r_e
		J[0] = [3]float64{0, 1, 1}
	}
	if qin&(QCDropletNumberInput|QCDropletNumberAssumed) != 0 { // r_e^3 ∝ H/N_d, H ∝ LWP^(1/2)
		J[1] = [3]float64{1.0 / 6, 0, 0}
	}
	tauGiven := !math.IsNaN(done.Tau)
	if !tauGiven {
		J[2] = [3]float64{}
	}
	var eNd, eReTop [3]float64 // elasticities in u
	if tauGiven {
		eNd = [3]float64{0, -2.5, 0.5} // N_d ∝ tau^(1/2) r_e^(-5/2)
		// r_top^3 ∝ H/N_d: LWP^(1/2) tau^(-1/2) r_e^(5/2)
		eReTop = [3]float64{1.0 / 6, 2.5 / 3, -1.0 / 6}
	} else {
		eNd = [3]float64{0.5, -3, 0} // N_d ∝ LWP^(1/2) r_e^-3
		eReTop = [3]float64{0, 1, 0}
	}
	set := func(k int, e [3]float64) {
		if k < 0 || math.IsNaN(y0[k]) {
			return
		}
		for i := range 3 {
			if s[i] == 0 {
				continue
			}
			g := e[0]*J[0][i] + e[1]*J[1][i] + e[2]*J[2][i]
			d[i][k] = y0[k] * g
			c[i][k] = y0[k] * g * g
		}
	}
	set(uncIdx.lwp, [3]float64{1, 0, 0})
	set(uncIdx.nd, eNd)
	set(uncIdx.h, [3]float64{0.5, 0, 0})
	set(uncIdx.cw, [3]float64{})
	set(uncIdx.reTop, eReTop)
	// LWP* = LWP (r_e*/r_top)^6
	set(uncIdx.crit, [3]float64{1 - 6*eReTop[0], -6 * eReTop[1], -6 * eReTop[2]})
	if m.ac.Scheme == AutoconvKK2000 && done.LWP > 0 {
		// efficiency ∝ LWP^((b-1)/2) N_d^-c at fixed gamma and rho (kk2000Efficiency)
		y, n := m.bulk.kkY, m.bulk.kkN
		eff := [3]float64{y - n*eNd[0], -n * eNd[1], -n * eNd[2]}
		set(uncIdx.eff, eff)
		set(uncIdx.ac, [3]float64{eff[0] + 1, eff[1], eff[2]})
	}
}

// SpreadModels holds, for every parameter of ParamDecls with a Spread, the models with
// that parameter at its value ± Spread (clipped to its valid range) and every other
// parameter as the base model's: the one-at-a-time perturbations of
// Model.ParameterSpread. Safe for concurrent use, as Model is.
type SpreadModels struct {
	base *Model
	rows []spreadRow
}

type spreadRow struct {
	decl        int     // index in ParamDecls
	plus, minus *Model  // the parameter at p + Spread and p - Spread, clipped
	factor      float64 // Spread/(p+ - p-): the difference over the clipped interval, scaled to ±1 sigma
}

// NewSpreadModels builds the perturbed models of m. The perturbed models share m's
// collector and evaporation tables where the parameter does not enter them (all but the
// adiabatic fraction, whose two models build their own, about a second each).
//
// Reference: one-at-a-time sensitivity (common practice); doc/science.md#parameter-spread.
// Valid: any Model; the errors are those of NewModel.
func NewSpreadModels(m *Model) (*SpreadModels, error) {
	s := &SpreadModels{base: m}
	for i := range ParamDecls {
		d := &ParamDecls[i]
		if d.Spread <= 0 {
			continue
		}
		p0 := d.FromSI(d.Get(&m.p))
		hi, lo := min(p0+d.Spread, d.Max), max(p0-d.Spread, d.Min)
		if d.MinOpen && lo <= d.Min {
			lo = p0 - (p0-d.Min)/2
		}
		if !(hi > lo) {
			continue
		}
		row := spreadRow{decl: i, factor: d.Spread / (hi - lo)}
		for k, v := range [2]float64{hi, lo} {
			var mm *Model
			if v == p0 {
				mm = m
			} else {
				p := m.p
				d.Set(&p, d.ToSI(v))
				if err := p.Validate(); err != nil {
					return nil, err
				}
				mm = newModelFrom(p, m)
				if m.tab != nil {
					mm.tab = m.tab
					if d.Name == "adiabatic_fraction" { // the collector table's nodes depend on f_ad
						mm.tab = buildCollTable(mm)
					}
				}
			}
			if k == 0 {
				row.plus = mm
			} else {
				row.minus = mm
			}
		}
		s.rows = append(s.rows, row)
	}
	return s, nil
}

// Parameters lists the names (ParamDecl.Name) of the perturbed parameters, in the order of
// the parts ParameterSpread reports.
//
// Reference: none (software interface).
// Valid: always.
func (s *SpreadModels) Parameters() []string {
	n := make([]string, len(s.rows))
	for i, r := range s.rows {
		n[i] = ParamDecls[r.decl].Name
	}
	return n
}

// ParameterSpread sets sp[k] to the parameter (structural) spread, SI units, of output
// OutputDecls[k] of the column raw whose completed inputs and outputs with the base model
// are done and out:
//
//	sigma_y^2 = sum_j ((y(p_j+) - y(p_j-)) Spread_j/(p_j+ - p_j-))^2
//
// each parameter j moved alone by ± its Spread (clipped to its range: then the secant over
// the clipped interval), the parameters' errors taken as independent. Where one side is
// missing the one-sided difference (y(p_j±) - y(p_j)) Spread_j/|p_j± - p_j| is used; where
// both are, sp[k] is NaN. parts, when not nil, receives part j of output k at
// parts[j*len(OutputDecls)+k] (len(OutputDecls) × len(Parameters())); w is the working
// space (see Scratch). It panics if
// len(sp) < len(OutputDecls).
//
// Reference: one-at-a-time sensitivity (common practice), first order, independent
// parameters [Taylor1997] ch. 3; doc/science.md#parameter-spread.
// Valid: any column; screened columns get NaN.
func (s *SpreadModels) ParameterSpread(raw *RawColumn, done *Inputs, out *Outputs, sp, parts []float64, w *Scratch) {
	if w == nil {
		w = new(Scratch)
	}
	n := len(OutputDecls)
	if len(sp) < n || (parts != nil && len(parts) < n*len(s.rows)) {
		panic("microphys: ParameterSpread: sp or parts shorter than needed")
	}
	nan := math.NaN()
	ok0 := out.QC&QCScreenMask == 0
	var y0 [uncMaxOut]float64
	for k := range n {
		sp[k] = 0
		y0[k] = uncValue(k, done, out)
		if !ok0 || math.IsNaN(y0[k]) {
			sp[k] = nan
		}
	}
	for j, r := range s.rows {
		d := &ParamDecls[r.decl]
		p0 := d.FromSI(d.Get(&s.base.p))
		pp, pm := d.FromSI(d.Get(&r.plus.p)), d.FromSI(d.Get(&r.minus.p))
		ip, im, op, om := &w.in[0], &w.in[1], &w.out[0], &w.out[1]
		okp := r.plus.evalRaw(raw, ip, op)
		okm := r.minus.evalRaw(raw, im, om)
		for k := range n {
			if math.IsNaN(sp[k]) {
				continue
			}
			a, b := nan, nan
			if okp {
				a = uncValue(k, ip, op)
			}
			if okm {
				b = uncValue(k, im, om)
			}
			var t float64
			switch {
			case !math.IsNaN(a) && !math.IsNaN(b):
				t = (a - b) * r.factor
			case !math.IsNaN(a) && pp != p0:
				t = (a - y0[k]) * d.Spread / (pp - p0)
			case !math.IsNaN(b) && pm != p0:
				t = (y0[k] - b) * d.Spread / (p0 - pm)
			default:
				t = nan
			}
			if parts != nil {
				parts[j*n+k] = math.Abs(t)
			}
			sp[k] += t * t
		}
	}
	for k := range n {
		sp[k] = math.Sqrt(sp[k])
	}
}
