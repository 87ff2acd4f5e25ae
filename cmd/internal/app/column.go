package app

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"
	"text/tabwriter"

	"github.com/warmrain/warmrain/microphys"
)

const columnUsage = `Usage:
  warmrain column --lwp G_M2 --re UM [--tau T] [--ctt K] [--ctp HPA] [--cth M]
  (without --re: --droplet-number N; without --lwp: --tau and --re)
                  [--lwp-sd G_M2] [--rh-surface X] [physics options] [--json]
                  [--lwp-se G_M2|P%] [--re-se UM|P%] [--tau-se T|P%] [--parameter-uncertainty]

Runs the physics of one column given on the command line and prints the
parameters used, the adiabatic profile (liquid water content, mean-volume and
effective radius against height above cloud base), the collector drop's path
through the cloud and its fall through the sub-cloud layer, every diagnostic
that 'warmrain process' writes (same names and units) and the QC flags by name.
Inputs left out are absent, as missing values in a file are: the defaults of
the physics options are used and the QC flags say so.

The collector and evaporation paths are integrated directly (CollectDirect,
EvaporateDirect) at a few points; the diagnostics table comes from the column
model with the chosen --collector-method, so with the table method the exit
radius there may differ from the path's by up to about 0.5 %.

With standard errors of the inputs (--lwp-se, --re-se, --tau-se: in the input's
units, or a percentage such as 10%) every diagnostic is printed as value ± its
first-order retrieval error, and with --parameter-uncertainty also ± its
parameter spread (README "Uncertainty"); an output marked "(non-linear)" is
strongly non-linear within the errors, so its ± is a local sensitivity only.

Example:
  warmrain column --lwp 120 --re 14
  warmrain column --lwp 120 --re 14 --lwp-se 15 --re-se 10% --parameter-uncertainty
  warmrain column --lwp 120 --re 14 --ctt 284 --ctp 880 --cth 1200 --updraft 0.5 --json
`

// columnInputNames are the input flags: name, units on the command line, scale to SI.
var columnInputs = []struct {
	flag, units string
	scale       float64
	help        string
}{
	{"lwp", "g m-2", 1e-3, "liquid water path, g m-2 (required)"},
	{"re", "um", 1e-6, "cloud-top effective radius, µm (required)"},
	{"tau", "1", 1, "cloud optical thickness (absent: from LWP and r_e, adiabatic relation)"},
	{"ctt", "K", 1, "cloud-top temperature, K (absent: --default-ctt)"},
	{"ctp", "hPa", 100, "cloud-top pressure, hPa (absent: --default-ctp)"},
	{"cth", "m", 1, "cloud-top height above the surface, m (absent: cloud base from the dry adiabat to --surface-pressure)"},
	{"lwp-sd", "g m-2", 1e-3, "sub-grid standard deviation of LWP, g m-2 (absent: --gamma-shape)"},
	{"rh-surface", "1", 1, "surface relative humidity of this column, 0-1, used with --subcloud-humidity surface-rh (absent: --surface-rh)"},
}

// columnResult is everything column prints; the JSON form is this struct.
type columnResult struct {
	Parameters  []paramJSON          `json:"-"`
	ParamMap    map[string]any       `json:"parameters"` // as the options take them (units of the help); numbers, names or booleans
	Inputs      map[string]jnum      `json:"inputs"`
	InputUnits  map[string]string    `json:"input_units"`
	Assumed     []string             `json:"assumed"`
	Diagnostics map[string]jnum      `json:"diagnostics"`
	Units       map[string]string    `json:"units"`
	QC          qcJSON               `json:"qc"`
	Profile     []profileLevel       `json:"adiabatic_profile"`
	Collector   *collectorPathReport `json:"collector_path"`
	Evaporation *evapPathReport      `json:"evaporation_path"`
	Drizzle     *drizzleReport       `json:"surface_drizzle"`
	// The uncertainty (absent without input errors or --parameter-uncertainty): the
	// first-order retrieval error and the parameter spread of each diagnostic (units of
	// Units), the outputs whose first-order error is not representative, and the part of
	// each perturbed parameter in every diagnostic's spread.
	StandardErrors  map[string]jnum            `json:"standard_errors,omitempty"`
	ErrorNonlinear  []string                   `json:"error_nonlinear,omitempty"`
	ParameterSpread map[string]jnum            `json:"parameter_spread,omitempty"`
	SpreadParts     map[string]map[string]jnum `json:"parameter_spread_parts,omitempty"`

	order []string // diagnostic names in table order (text output)
}

// drizzleReport is the cloud-base drizzle size distribution of a column and the part of its
// flux that reaches the surface.
type drizzleReport struct {
	MeanRadius jnum   `json:"mean_radius_um"`
	MinRadius  jnum   `json:"min_radius_um"`
	Shape      jnum   `json:"gamma_shape"`
	Number     jnum   `json:"cloud_base_number_per_litre"`
	Humidity   string `json:"subcloud_humidity"`
	Fraction   jnum   `json:"surface_fraction"`
	BaseRate   jnum   `json:"cloud_base_rate_mm_day"`
	Rate       jnum   `json:"surface_rate_mm_day"`
}

type paramJSON struct{ Name, Option, Value, Unit string }

type qcJSON struct {
	Value    uint16   `json:"value"`
	Flags    []string `json:"flags"`
	Screened bool     `json:"screened"`
}

type profileLevel struct {
	Height     jnum `json:"height_above_base_m"`
	LWC        jnum `json:"lwc_g_m3"`
	MeanVolume jnum `json:"mean_volume_radius_um"`
	Effective  jnum `json:"effective_radius_um"`
}

type pathPoint struct {
	Time   jnum `json:"time_s"`
	Radius jnum `json:"radius_um"`
	Height jnum `json:"height_above_base_m"`
}

type collectorPathReport struct {
	StartRadius   jnum        `json:"start_radius_um"`
	Updraft       jnum        `json:"updraft_m_s"`
	ExitRadius    jnum        `json:"exit_radius_um"`
	ExitTime      jnum        `json:"exit_time_s"`
	ExitThrough   string      `json:"exit_through"` // "base", "top" or "" (failed)
	TopHeight     jnum        `json:"highest_level_above_base_m"`
	DrizzleTime   jnum        `json:"drizzle_radius_time_s"`
	DrizzleRadius jnum        `json:"drizzle_radius_um"`
	HeightClosure jnum        `json:"height_closure_m"`
	Points        []pathPoint `json:"points"`
	Note          string      `json:"note,omitempty"`
}

type evapPoint struct {
	Height jnum `json:"height_above_surface_m"`
	Time   jnum `json:"time_below_base_s"`
	Radius jnum `json:"radius_um"`
	RH     jnum `json:"relative_humidity"`
}

type evapPathReport struct {
	BaseHeight    jnum        `json:"cloud_base_height_m"`
	BaseT         jnum        `json:"cloud_base_temperature_k"`
	BaseP         jnum        `json:"cloud_base_pressure_hpa"`
	SurfaceRH     jnum        `json:"surface_relative_humidity"`
	StartRadius   jnum        `json:"start_radius_um"`
	Reached       bool        `json:"reached_surface"`
	SurfaceRadius jnum        `json:"surface_radius_um"`
	EvapHeight    jnum        `json:"evaporation_height_m"`
	Time          jnum        `json:"time_s"`
	Points        []evapPoint `json:"points"`
	Note          string      `json:"note,omitempty"`
}

// jnum is a float64 that encodes NaN and ±Inf as JSON null.
type jnum float64

func (x jnum) MarshalJSON() ([]byte, error) {
	f := float64(x)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return []byte("null"), nil
	}
	return strconv.AppendFloat(nil, f, 'g', 10, 64), nil
}

func runColumn(e *env, args []string) error {
	fs := newFlagSet(e, "column", columnUsage)
	vals := make([]float64, len(columnInputs))
	for i, c := range columnInputs {
		fs.Float64Var(&vals[i], c.flag, 0, c.help)
	}
	pf := addPhysicsFlags(fs)
	errFlags := [3]*string{
		fs.String("lwp-se", "", "standard error of the LWP: g m-2, or a percentage of it (10%)"),
		fs.String("re-se", "", "standard error of r_e: µm, or a percentage of it"),
		fs.String("tau-se", "", "standard error of tau, or a percentage of it"),
	}
	asJSON := fs.Bool("json", false, "print one JSON object instead of the tables")
	if err := parseFlags(e, fs, columnUsage, args); err != nil {
		return err
	}
	if fs.NArg() > 0 {
		return usagef("unexpected argument %q: column takes its inputs as options (--lwp, --re, ...)", fs.Arg(0))
	}
	p, err := pf.toParams()
	if err != nil {
		return err
	}
	switch {
	case !fs.Changed("lwp") && !(fs.Changed("tau") && fs.Changed("re")):
		return usagef("--lwp is required (or --tau and --re, from which LWP follows)")
	case !fs.Changed("re") && !(fs.Changed("lwp") && p.DropletNumber > 0):
		return usagef("--re is required (or --lwp with --droplet-number, from which r_e follows)")
	}
	var in microphys.Inputs
	dst := []*float64{&in.LWP, &in.Re, &in.Tau, &in.CTT, &in.CTP, &in.CTH, &in.LWPStd, &in.SurfaceRH}
	for i, c := range columnInputs {
		*dst[i] = math.NaN()
		if !fs.Changed(c.flag) {
			continue
		}
		if math.IsNaN(vals[i]) || math.IsInf(vals[i], 0) {
			return usagef("--%s %v: want a finite number", c.flag, vals[i])
		}
		*dst[i] = vals[i] * c.scale
	}
	for _, w := range physicsWarnings(p) {
		fmt.Fprintf(e.stderr, "warmrain: warning: %s\n", w)
	}
	m, err := newModel(p)
	if err != nil {
		return usagef("%v", err)
	}
	// Missing inputs completed as process does (Model.Complete): LWP from tau and r_e,
	// r_e from LWP and --droplet-number, CTT from the standard atmosphere at --ctp/--cth.
	raw := microphys.RawColumn{In: in, Nd: math.NaN(), CF: math.NaN()}
	var ie microphys.InputErrors
	for k, dst := range [3]*float64{&ie.LWP, &ie.Re, &ie.Tau} {
		v, err := parseError(*errFlags[k], [3]float64{raw.In.LWP, raw.In.Re, raw.In.Tau}[k], [3]float64{1e-3, 1e-6, 1}[k])
		if err != nil {
			return usagef("--%s: %v", [3]string{"lwp-se", "re-se", "tau-se"}[k], err)
		}
		*dst = v
	}
	ie.Corr = p.ErrorCorrelation
	qin := m.Complete(&in, math.NaN(), math.NaN(), false)
	res := computeColumn(m, &in)
	if err := res.uncertainty(m, &raw, &in, qin, &ie); err != nil {
		return err
	}
	for _, f := range microphys.InputQCFlags {
		if qin&f.Bit != 0 {
			res.QC.Flags = append(res.QC.Flags, f.Name)
			res.Assumed = append(res.Assumed, fmt.Sprintf("%s (QC bit %s)", f.Meaning, f.Name))
			res.QC.Screened = res.QC.Screened || f.Screen
		}
	}
	if *asJSON {
		enc := json.NewEncoder(e.stdout)
		enc.SetIndent("", "  ")
		enc.SetEscapeHTML(false)
		return enc.Encode(res)
	}
	return res.writeText(e.stdout)
}

// computeColumn runs the column model and the direct collector and evaporation
// paths of one column.
func computeColumn(m *microphys.Model, in *microphys.Inputs) *columnResult {
	p := m.Params()
	var out microphys.Outputs
	m.Column(in, &out)
	r := &columnResult{Inputs: map[string]jnum{}, InputUnits: map[string]string{}, Diagnostics: map[string]jnum{}, Units: map[string]string{}}
	r.ParamMap = map[string]any{}
	for i, s := range p.Settings() {
		r.Parameters = append(r.Parameters, paramJSON{s.Name, microphys.ParamDecls[i].Option, s.Value, s.Unit})
		if f, err := strconv.ParseFloat(s.Value, 64); err == nil {
			r.ParamMap[s.Name] = f
		} else if b, err := strconv.ParseBool(s.Value); err == nil {
			r.ParamMap[s.Name] = b
		} else {
			r.ParamMap[s.Name] = s.Value
		}
	}
	given := []float64{in.LWP, in.Re, in.Tau, in.CTT, in.CTP, in.CTH, in.LWPStd, in.SurfaceRH}
	for i, c := range columnInputs {
		key := strings.ReplaceAll(c.flag, "-", "_")
		r.Inputs[key] = jnum(given[i] / c.scale)
		r.InputUnits[key] = c.units
	}
	for _, d := range outputTable() {
		if d.get == nil { // a copy of an input, not a diagnostic
			continue
		}
		r.Diagnostics[d.name] = jnum(d.get(&out) * d.scale)
		r.Units[d.name] = d.units
		r.order = append(r.order, d.name)
	}
	r.QC = qcJSON{Value: out.QC, Flags: microphys.QCNames(out.QC), Screened: out.QC&microphys.QCScreenMask != 0}
	if r.QC.Flags == nil {
		r.QC.Flags = []string{}
	}
	r.Assumed = assumptions(in, p)
	if r.QC.Screened {
		return r
	}
	T, pr := in.CTT, in.CTP
	if math.IsNaN(T) {
		T = p.DefaultCTT
	}
	if math.IsNaN(pr) {
		pr = p.DefaultCTP
	}
	h, nd, cw := out.H, out.Nd, out.Cw
	r.Profile = adiabaticProfile(h, nd, p.K, p.Fad, cw, 10)
	if !p.EnableCollector {
		return r
	}
	setup := p.Collector
	setup.Collision, setup.Coalescence = p.Collision, p.Coalescence
	cloud := microphys.CloudColumn{H: h, Gamma: p.Fad * cw, Nd: nd, Air: microphys.NewAir(pr, T)}
	r.Collector = collectorPath(cloud, setup, 12)
	if !p.EnableEvaporation {
		return r
	}
	rhs := in.SurfaceRH
	if math.IsNaN(rhs) {
		rhs = p.SurfaceRH
	}
	pb, tb := microphys.CloudBase(pr, T, h)
	zb := in.CTH - h
	if math.IsNaN(in.CTH) {
		zb = microphys.DryBaseHeight(pb, tb, p.SurfacePressure)
	}
	l := microphys.SubCloudLayer{BaseHeight: zb, BaseT: tb, BaseP: pb, SurfaceRH: rhs,
		WellMixed: p.SubCloudHumidity == microphys.HumidityWellMixed}
	d := p.Drizzle
	r.Drizzle = &drizzleReport{MeanRadius: jnum(d.MeanRadius * 1e6), MinRadius: jnum(d.MinRadius * 1e6), Shape: jnum(d.Shape),
		Number:   jnum(microphys.DrizzleNumber(out.DrizzleRate, d, microphys.NewAir(pb, tb)) * 1e-3),
		Humidity: p.SubCloudHumidity.String(), Fraction: jnum(out.SurfaceDrizzleFraction),
		BaseRate: jnum(out.DrizzleRate * 86400), Rate: jnum(out.SurfaceDrizzleRate * 86400)}
	if r.Collector.ExitThrough != "base" {
		return r
	}
	r.Evaporation = evaporationPath(float64(r.Collector.ExitRadius)*1e-6, l, 10)
	return r
}

// assumptions lists the defaults the column model uses for absent inputs.
func assumptions(in *microphys.Inputs, p microphys.Params) []string {
	a := []string{}
	if math.IsNaN(in.Tau) {
		a = append(a, fmt.Sprintf("tau from LWP and r_e (adiabatic relation, Q_ext %g)", p.Qext))
	}
	switch {
	case math.IsNaN(in.CTT) && math.IsNaN(in.CTP):
		a = append(a, fmt.Sprintf("air state: default CTT %g K and CTP %g hPa used (QC bit air_state_assumed)", p.DefaultCTT, p.DefaultCTP/100))
	case math.IsNaN(in.CTT):
		a = append(a, fmt.Sprintf("air state: default CTT %g K used (QC bit air_state_assumed)", p.DefaultCTT))
	case math.IsNaN(in.CTP):
		a = append(a, fmt.Sprintf("air state: default CTP %g hPa used (QC bit air_state_assumed)", p.DefaultCTP/100))
	}
	if p.FixedCw > 0 {
		a = append(a, fmt.Sprintf("condensation rate fixed at %g g m-3 km-1", p.FixedCw*1e6))
	}
	if math.IsNaN(in.CTH) {
		a = append(a, fmt.Sprintf("cloud base: dry adiabat down to %g hPa (QC bit cloud_base_height_assumed)", p.SurfacePressure/100))
	}
	if math.IsNaN(in.LWPStd) {
		a = append(a, fmt.Sprintf("drizzle probability: gamma shape %g (QC bit gamma_shape_assumed)", p.GammaShape))
	}
	switch {
	case p.SubCloudHumidity == microphys.HumidityWellMixed:
		a = append(a, "sub-cloud humidity: well mixed, the cloud-base vapour mixing ratio conserved down to the surface")
	case math.IsNaN(in.SurfaceRH):
		a = append(a, fmt.Sprintf("surface relative humidity %g (QC bit surface_humidity_assumed)", p.SurfaceRH))
	}
	return a
}

// adiabaticProfile tabulates the adiabatic cloud at n+1 equally spaced levels
// from base to top (display units: m, g m-3, µm).
func adiabaticProfile(h, nd, k, fad, cw float64, n int) []profileLevel {
	var lv []profileLevel
	for i := 0; i <= n; i++ {
		z := h * float64(i) / float64(n)
		lv = append(lv, profileLevel{
			Height:     jnum(z),
			LWC:        jnum(microphys.AdiabaticLWC(z, fad, cw) * 1e3),
			MeanVolume: jnum(microphys.MeanVolumeRadius(z, nd, fad, cw) * 1e6),
			Effective:  jnum(microphys.EffectiveRadius(z, nd, k, fad, cw) * 1e6),
		})
	}
	return lv
}

// collectorDense is the number of radii at which the collector path is sampled
// to integrate its height; n of them (and the end points) are printed.
const collectorDense = 240

// collectorPath integrates the collector drop of setup s through cloud c with
// microphys.CollectDirect and samples its path. CollectDirect returns only the
// end of the path, and the time at which the drop reaches DrizzleRadius: the
// radius grows monotonically (collection only adds mass), so calling it with
// DrizzleRadius set to successive radii R_i between the start and the exit
// radius gives the exact times t_i of the one path (same integrator, same
// tolerance). The height follows from dz/dt = w - V(R), integrated with the
// trapezoidal rule over the dense samples (V depends on R only);
// HeightClosure is the difference between that integral and the exact exit
// level at the exit time, a measure of its error.
func collectorPath(c microphys.CloudColumn, s microphys.CollectorSetup, n int) *collectorPathReport {
	full := microphys.CollectDirect(c, s)
	rep := &collectorPathReport{
		StartRadius: jnum(s.R0 * 1e6), Updraft: jnum(s.Updraft),
		ExitRadius: jnum(full.ExitRadius * 1e6), ExitTime: jnum(full.ExitTime),
		TopHeight: jnum(full.TopHeight), DrizzleTime: jnum(full.DrizzleTime), DrizzleRadius: jnum(s.DrizzleRadius * 1e6),
		HeightClosure: jnum(math.NaN()), Points: []pathPoint{},
	}
	if !(full.ExitRadius > 0) || math.IsNaN(full.ExitTime) {
		rep.Note = "the collector integration gave no result (outside its valid range or the step/time limit)"
		return rep
	}
	rep.ExitThrough = "top"
	exitZ := c.H
	if full.ExitBase {
		rep.ExitThrough, exitZ = "base", 0
	}
	z0 := c.H
	if s.Updraft > 0 {
		z0 = 0
	}
	type sample struct{ t, R, z float64 }
	dense := []sample{{0, s.R0, z0}}
	if full.ExitRadius > s.R0 && full.ExitTime > 0 {
		q := s
		ratio := full.ExitRadius / s.R0
		for i := 1; i < collectorDense; i++ {
			R := s.R0 * math.Pow(ratio, float64(i)/collectorDense)
			q.DrizzleRadius = R
			t := microphys.CollectDirect(c, q).DrizzleTime
			if math.IsNaN(t) || t < dense[len(dense)-1].t || t > full.ExitTime {
				continue
			}
			dense = append(dense, sample{t, R, 0})
		}
	}
	dense = append(dense, sample{full.ExitTime, full.ExitRadius, 0})
	w := s.Updraft
	for i := 1; i < len(dense); i++ {
		a, b := dense[i-1], &dense[i]
		va, vb := c.Air.FallSpeed(2*a.R), c.Air.FallSpeed(2*b.R)
		b.z = a.z + (w-(va+vb)/2)*(b.t-a.t)
	}
	last := len(dense) - 1
	rep.HeightClosure = jnum(dense[last].z - exitZ)
	// Print n+1 points evenly spaced in time (the nearest dense sample), then the exit.
	used := map[int]bool{}
	for k := 0; k <= n; k++ {
		target := full.ExitTime * float64(k) / float64(n)
		best := 0
		for i, d := range dense {
			if math.Abs(d.t-target) < math.Abs(dense[best].t-target) {
				best = i
			}
		}
		if k == n {
			best = last
		}
		if used[best] {
			continue
		}
		used[best] = true
		d := dense[best]
		z := d.z
		if best == last {
			z = exitZ
		}
		rep.Points = append(rep.Points, pathPoint{jnum(d.t), jnum(d.R * 1e6), jnum(z)})
	}
	return rep
}

// evaporationPath integrates the fall of a drop of radius r0 (m) from cloud
// base through the sub-cloud layer l with microphys.EvaporateDirect, and samples
// it at n+1 heights from base down to the surface or to where it evaporated: a layer cut at height z0 (its surface moved up to z0,
// its surface humidity set to S(z0)) has exactly the temperature, pressure and
// humidity of l above z0, so EvaporateDirect on it gives the radius at z0 and
// the time to reach it.
func evaporationPath(r0 float64, l microphys.SubCloudLayer, n int) *evapPathReport {
	e := microphys.EvaporateDirect(r0, l)
	_, _, s0 := l.State(0)
	rep := &evapPathReport{
		BaseHeight: jnum(l.BaseHeight), BaseT: jnum(l.BaseT), BaseP: jnum(l.BaseP / 100), SurfaceRH: jnum(s0),
		StartRadius: jnum(r0 * 1e6), Reached: e.Reached, SurfaceRadius: jnum(e.SurfaceRadius * 1e6),
		EvapHeight: jnum(e.EvapHeight), Time: jnum(e.Time), Points: []evapPoint{},
	}
	if math.IsNaN(e.Time) {
		rep.Note = "no sub-cloud layer or evaporation result (cloud base at or below the surface, or outside the valid range)"
		return rep
	}
	bottom := 0.0
	if !e.Reached {
		bottom = e.EvapHeight
	}
	for k := 0; k <= n; k++ {
		z0 := l.BaseHeight - (l.BaseHeight-bottom)*float64(k)/float64(n)
		_, _, S := l.State(z0)
		pt := evapPoint{Height: jnum(z0), RH: jnum(S)}
		switch {
		case k == 0:
			pt.Time, pt.Radius = 0, jnum(r0*1e6)
		case k == n:
			pt.Time, pt.Radius = jnum(e.Time), jnum(e.SurfaceRadius*1e6)
		default:
			cut := microphys.SubCloudLayer{BaseHeight: l.BaseHeight - z0, BaseT: l.BaseT, BaseP: l.BaseP, SurfaceRH: S, WellMixed: l.WellMixed}
			c := microphys.EvaporateDirect(r0, cut)
			if !c.Reached {
				continue
			}
			pt.Time, pt.Radius = jnum(c.Time), jnum(c.SurfaceRadius*1e6)
		}
		rep.Points = append(rep.Points, pt)
	}
	return rep
}

// num formats a value for the text tables.
func num(x jnum) string {
	f := float64(x)
	if math.IsNaN(f) {
		return "-"
	}
	return strconv.FormatFloat(f, 'g', 5, 64)
}

func (r *columnResult) writeText(w io.Writer) error {
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "inputs:")
	for _, c := range columnInputs {
		key := strings.ReplaceAll(c.flag, "-", "_")
		v := r.Inputs[key]
		if math.IsNaN(float64(v)) {
			fmt.Fprintf(tw, "  %s\t(absent)\n", key)
			continue
		}
		fmt.Fprintf(tw, "  %s\t%s\t%s\n", key, num(v), c.units)
	}
	fmt.Fprintln(tw, "assumed:")
	if len(r.Assumed) == 0 {
		fmt.Fprintln(tw, "  nothing")
	}
	for _, a := range r.Assumed {
		fmt.Fprintf(tw, "  %s\n", a)
	}
	tw.Flush()

	switch {
	case r.StandardErrors != nil && r.ParameterSpread != nil:
		fmt.Fprintln(w, "\ndiagnostics (value ± retrieval error ± parameter spread, one standard deviation each):")
	case r.StandardErrors != nil:
		fmt.Fprintln(w, "\ndiagnostics (value ± retrieval error, one standard deviation):")
	case r.ParameterSpread != nil:
		fmt.Fprintln(w, "\ndiagnostics (value ± parameter spread, one standard deviation):")
	default:
		fmt.Fprintln(w, "\ndiagnostics:")
	}
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	for _, name := range r.order {
		v := num(r.Diagnostics[name])
		if r.StandardErrors != nil {
			v += "\t± " + num(r.StandardErrors[name])
		}
		if r.ParameterSpread != nil {
			v += "\t± " + num(r.ParameterSpread[name]) + " (par.)"
		}
		note := ""
		if slices.Contains(r.ErrorNonlinear, name) {
			note = "\t(non-linear)"
		}
		fmt.Fprintf(tw, "  %s\t%s\t%s%s\n", name, v, r.Units[name], note)
	}
	flags := strings.Join(r.QC.Flags, " ")
	if flags == "" {
		flags = "(none)"
	}
	pad := ""
	if r.StandardErrors != nil {
		pad += "\t"
	}
	if r.ParameterSpread != nil {
		pad += "\t"
	}
	fmt.Fprintf(tw, "  %s\t%d%s\t%s\n", qcName, r.QC.Value, pad, flags)
	tw.Flush()
	if r.QC.Screened {
		fmt.Fprintln(w, "\nthe column is screened (see the QC flags): no profile or collector path")
	}

	if len(r.Profile) > 0 {
		fmt.Fprintln(w, "\nadiabatic profile:")
		tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
		fmt.Fprintln(tw, "  height above base (m)\tLWC (g m-3)\tmean-volume radius (um)\teffective radius (um)\t")
		for _, l := range r.Profile {
			fmt.Fprintf(tw, "  %.1f\t%.4f\t%.2f\t%.2f\t\n", float64(l.Height), float64(l.LWC), float64(l.MeanVolume), float64(l.Effective))
		}
		tw.Flush()
	}
	if c := r.Collector; c != nil {
		fmt.Fprintf(w, "\ncollector drop (CollectDirect): start radius %s um, updraft %s m s-1\n", num(c.StartRadius), num(c.Updraft))
		fmt.Fprintln(w, "  (one drop's path, to explain the column; the mapped drizzle products are the cloud-base rate, intensity and probability)")
		if c.Note != "" {
			fmt.Fprintf(w, "  %s\n", c.Note)
		} else {
			tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
			fmt.Fprintln(tw, "  time (s)\tradius (um)\theight above base (m)\t")
			for _, pt := range c.Points {
				fmt.Fprintf(tw, "  %.1f\t%.2f\t%.1f\t\n", float64(pt.Time), float64(pt.Radius), float64(pt.Height))
			}
			tw.Flush()
			fmt.Fprintf(w, "  leaves through cloud %s after %s s at %s um; highest level %s m; drizzle radius %s um ",
				c.ExitThrough, num(c.ExitTime), num(c.ExitRadius), num(c.TopHeight), num(c.DrizzleRadius))
			if math.IsNaN(float64(c.DrizzleTime)) {
				fmt.Fprintln(w, "not reached")
			} else {
				fmt.Fprintf(w, "reached after %s s\n", num(c.DrizzleTime))
			}
			fmt.Fprintf(w, "  heights integrated from the sampled path (error at exit %.2g m)\n", float64(c.HeightClosure))
		}
	}
	if dz := r.Drizzle; dz != nil {
		fmt.Fprintf(w, "\nsurface drizzle (SurfaceDrizzleFraction): drizzle drops above %s um, mean radius %s um, gamma shape %s; %s per litre at cloud base carry %s mm day-1;\n",
			num(dz.MinRadius), num(dz.MeanRadius), num(dz.Shape), num(dz.Number), num(dz.BaseRate))
		fmt.Fprintf(w, "  through the %s sub-cloud layer a fraction %s of that flux, %s mm day-1, reaches the surface\n",
			dz.Humidity, num(dz.Fraction), num(dz.Rate))
	}
	if ev := r.Evaporation; ev != nil {
		fmt.Fprintf(w, "\nsub-cloud fall of the single collector drop (EvaporateDirect): cloud base %s m above the surface, %s K, %s hPa; surface RH %s\n",
			num(ev.BaseHeight), num(ev.BaseT), num(ev.BaseP), num(ev.SurfaceRH))
		if ev.Note != "" {
			fmt.Fprintf(w, "  %s\n", ev.Note)
		} else {
			tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
			fmt.Fprintln(tw, "  height above surface (m)\ttime below base (s)\tradius (um)\trelative humidity\t")
			for _, pt := range ev.Points {
				fmt.Fprintf(tw, "  %.1f\t%.1f\t%.2f\t%.3f\t\n", float64(pt.Height), float64(pt.Time), float64(pt.Radius), float64(pt.RH))
			}
			tw.Flush()
			if ev.Reached {
				fmt.Fprintf(w, "  reaches the surface after %s s with radius %s um\n", num(ev.Time), num(ev.SurfaceRadius))
			} else {
				fmt.Fprintf(w, "  evaporates %s m above the surface after %s s\n", num(ev.EvapHeight), num(ev.Time))
			}
		}
	}

	fmt.Fprintln(w, "\nparameters (as options):")
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	for i := 0; i < len(r.Parameters); {
		s := r.Parameters[i]
		var vals []string
		for ; i < len(r.Parameters) && r.Parameters[i].Option == s.Option; i++ {
			v := r.Parameters[i].Value
			if f, err := strconv.ParseFloat(v, 64); err == nil {
				v = strconv.FormatFloat(f, 'g', 6, 64)
			}
			vals = append(vals, v)
		}
		fmt.Fprintf(tw, "  --%s\t%s\n", s.Option, paramAttr(microphys.Setting{Value: strings.Join(vals, ","), Unit: s.Unit}))
	}
	return tw.Flush()
}

// parseError reads a standard error given on the command line: a number in the input's
// units (scale to SI) or a percentage of the input x ("10%"). "" is no error.
func parseError(s string, x, scale float64) (float64, error) {
	s = strings.TrimSpace(s)
	if s == "" {
		return math.NaN(), nil
	}
	pct := strings.HasSuffix(s, "%")
	v, err := strconv.ParseFloat(strings.TrimSuffix(s, "%"), 64)
	if err != nil || !(v >= 0) || math.IsInf(v, 0) {
		return 0, errors.New("want a non-negative number in the input's units or a percentage such as 10%")
	}
	if pct {
		return v / 100 * x, nil
	}
	return v * scale, nil
}

// uncertainty adds the retrieval errors (from e) and, with --parameter-uncertainty, the
// parameter spread of every diagnostic (doc/science.md#uncertainty).
func (r *columnResult) uncertainty(m *microphys.Model, raw *microphys.RawColumn, done *microphys.Inputs, qin uint32, e *microphys.InputErrors) error {
	p := m.Params()
	if !e.Any() && !p.ParameterUncertainty {
		return nil
	}
	var out microphys.Outputs
	m.Column(done, &out)
	n := len(microphys.OutputDecls)
	defs := outputTable()
	if e.Any() {
		se := make([]float64, n)
		nl := m.RetrievalError(raw, done, qin, &out, e, se, nil)
		r.StandardErrors = map[string]jnum{}
		r.ErrorNonlinear = []string{}
		for _, d := range defs {
			if d.get == nil {
				continue
			}
			r.StandardErrors[d.name] = jnum(se[d.decl] * d.scale)
			if nl&(1<<d.decl) != 0 {
				r.ErrorNonlinear = append(r.ErrorNonlinear, d.name)
			}
		}
	}
	if p.ParameterUncertainty {
		s, err := microphys.NewSpreadModels(m)
		if err != nil {
			return err
		}
		names := s.Parameters()
		sp, parts := make([]float64, n), make([]float64, n*len(names))
		s.ParameterSpread(raw, done, &out, sp, parts, nil)
		r.ParameterSpread = map[string]jnum{}
		r.SpreadParts = map[string]map[string]jnum{}
		for _, d := range defs {
			if d.get == nil {
				continue
			}
			r.ParameterSpread[d.name] = jnum(sp[d.decl] * d.scale)
			pm := map[string]jnum{}
			for j, pn := range names {
				pm[pn] = jnum(parts[j*n+d.decl] * d.scale)
			}
			r.SpreadParts[d.name] = pm
		}
	}
	return nil
}
