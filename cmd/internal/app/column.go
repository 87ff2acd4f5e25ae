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
	"time"
	"unicode/utf8"

	"github.com/spf13/pflag"
	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/microphys"
)

const columnUsage = `Usage:
  warmrain column --lwp G_M2 --re UM [--tau T] [--ctt K] [--ctp HPA] [--cth M]
                  [--lwp-sd G_M2] [--rh-surface X] [physics options] [--json]
                  [--lwp-se G_M2|P%] [--re-se UM|P%] [--tau-se T|P%] [--parameter-uncertainty]
                  (without --re: --droplet-number N; without --lwp: --tau and --re)
  warmrain column --from FILE (--lat Y --lon X [--time T] | --index I,J[,T])
                  [--bind ROLE=VAR[:UNITS]] [--mask ...] [--pack] [--no-screen]
                  [physics options] [--json]

Runs the physics of one column and prints every diagnostic that 'warmrain
process' writes (same names and units) with the QC flags by name, the
screening rules and how the column fares against each, the parameters used,
the adiabatic profile (liquid water content, mean-volume and effective radius
against height above cloud base), the collector drop's path through the cloud
and its fall through the sub-cloud layer.

The column is given on the command line, or taken from an input file with
--from: the pixel nearest to --lat/--lon (regular and curvilinear latitude-
longitude grids, lists of cells; the distance to its centre is printed) at the
time nearest to --time (ISO 8601, e.g. 2019-06-02T12:00), or the pixel at
--index (its row and column on the grid, one index for cells, then the index
of each other dimension such as time). The file is read as process reads it
(--bind, --mask, --lwp-kind, unit conversion, completion of missing inputs,
screening), and the diagnostics printed are the numbers process writes for
that pixel with the same options, rounded as the output file stores them
(float32; --pack: 16-bit packed). --no-screen runs a screened column anyway
with the screening thresholds off and says which option screened it.

Inputs left out are absent, as missing values in a file are: the defaults of
the physics options are used and the QC flags say so.

column integrates the collector drop and its evaporation directly by default
(--collector-method direct), so the path printed ends at the exit radius of
the diagnostics. process uses the table by default (within 0.5 % of the
direct integration); add --collector-method table, or --params-from OUTPUT.nc
(every parameter of that output), to see the numbers of such a file.

With standard errors of the inputs (--lwp-se, --re-se, --tau-se: in the input's
units, or a percentage such as 10%) every diagnostic is printed as value ± its
first-order retrieval error, and with --parameter-uncertainty also ± its
parameter spread (README "Uncertainty"); an output marked "(non-linear)" is
strongly non-linear within the errors, so its ± is a local sensitivity only.

Example:
  warmrain column --lwp 120 --re 14
  warmrain column --lwp 120 --re 14 --lwp-se 15 --re-se 10% --parameter-uncertainty
  warmrain column --lwp 120 --re 14 --ctt 284 --ctp 880 --cth 1200 --updraft 0.5 --json
  warmrain column --from samples/data/stratocumulus_demo.nc --lat -21.13 --lon -80.07 --time 2026-09-22T12:00
`

// columnInputs are the input flags: name, units on the command line, scale to SI.
var columnInputs = []struct {
	flag, units string
	scale       float64
	help        string
}{
	{"lwp", "g m-2", 1e-3, "liquid water path, g m-2 (without it: --tau and --re)"},
	{"re", "um", 1e-6, "cloud-top effective radius, µm (without it: --droplet-number)"},
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
	Source      *sourceReport        `json:"source,omitempty"` // --from: where the column was read
	ParamMap    map[string]any       `json:"parameters"`       // as the options take them (units of the help); numbers, names or booleans
	Inputs      map[string]jnum      `json:"inputs"`
	InputUnits  map[string]string    `json:"input_units"`
	Assumed     []string             `json:"assumed"`
	Diagnostics map[string]jnum      `json:"diagnostics"`
	Units       map[string]string    `json:"units"`
	QC          qcJSON               `json:"qc"`
	Screening   []screenRule         `json:"screening"`
	NoScreen    string               `json:"no_screen,omitempty"` // --no-screen: what was switched off
	Method      string               `json:"collector_method"`
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

	rows []valueRow // the diagnostics in table order (text output)
}

// valueRow is one printed value: its name, value and unit. The text printer and the JSON
// maps are filled from these rows, one place to add a per-value field.
type valueRow struct {
	Name  string
	Value jnum
	Unit  string
}

// sourceReport says where a --from column was read and what it held.
type sourceReport struct {
	File       string         `json:"file"`
	Index      map[string]int `json:"index"` // dimension name -> index
	Lat        jnum           `json:"latitude,omitempty"`
	Lon        jnum           `json:"longitude,omitempty"`
	DistanceKm jnum           `json:"distance_km,omitempty"` // from --lat/--lon to the pixel's centre
	Time       string         `json:"time,omitempty"`
	Read       []readValue    `json:"read"` // each bound variable's value at the pixel
	Stored     string         `json:"stored_as"`
	Warnings   []string       `json:"warnings,omitempty"`
	index      []int          // in Layout.Dims order
	dims       []string       // Layout.Dims names
}

// readValue is one input variable's value at the pixel, in the units the options use.
type readValue struct {
	Role     string `json:"role"`
	Variable string `json:"variable"`
	Value    jnum   `json:"value"`
	Unit     string `json:"unit"`
	Note     string `json:"note,omitempty"` // a flag code, a mask that screens
}

// screenRule is one screening rule and how the column fares against it.
type screenRule struct {
	Flag      string `json:"flag"`
	Rule      string `json:"rule"` // in the user's words: the option and its value
	Value     string `json:"value"`
	Screened  bool   `json:"screened"`
	Threshold bool   `json:"threshold"` // a threshold option (--no-screen can switch it off)
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
	Value    uint32   `json:"value"`
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

// columnFlags are the options of column besides the physics.
type columnFlags struct {
	vals                []float64
	from, index, tm     string
	lat, lon            float64
	binds               []string
	pack, noScreen, asJ bool
	inp                 *inputFlags
	errs                [3]string // --lwp-se, --re-se, --tau-se as given
}

func runColumn(e *env, args []string) error {
	fs := newFlagSet(e, "column", columnUsage)
	var cf columnFlags
	cf.vals = make([]float64, len(columnInputs))
	for i, c := range columnInputs {
		fs.Float64Var(&cf.vals[i], c.flag, 0, c.help)
	}
	fs.StringVar(&cf.from, "from", "", "read the column from this input file (as process reads it) instead of --lwp, --re, ...")
	fs.Float64Var(&cf.lat, "lat", 0, "with --from: latitude of the column, degrees north (the nearest pixel is taken)")
	fs.Float64Var(&cf.lon, "lon", 0, "with --from: longitude of the column, degrees east")
	fs.StringVar(&cf.tm, "time", "", "with --from: time of the column, ISO 8601 (2019-06-02 or 2019-06-02T12:00; the nearest time is taken)")
	fs.StringVar(&cf.index, "index", "", "with --from: the pixel by its indices, from 0: row,column of a grid (one index for cells), then each other dimension such as time")
	fs.StringArrayVar(&cf.binds, "bind", nil, "with --from: take input ROLE from variable VAR, optionally declaring its units: ROLE=VAR[:UNITS] (as process)")
	fs.BoolVar(&cf.pack, "pack", false, "with --from: print the bounded diagnostics as a --pack output stores them (16-bit packed)")
	fs.BoolVar(&cf.noScreen, "no-screen", false, "run a column the screening thresholds reject anyway (thresholds off), and say which one rejected it")
	pf := addPhysicsFlags(fs)
	pf.setDefault(fs, "collector-method", microphys.CollectorDirect.String())
	cf.inp = addInputFlags(fs)
	for k, n := range [3]string{"lwp-se", "re-se", "tau-se"} {
		fs.StringVar(&cf.errs[k], n, "", [3]string{"standard error of the LWP: g m-2, or a percentage of it (10%)",
			"standard error of r_e: µm, or a percentage of it", "standard error of tau, or a percentage of it"}[k])
	}
	fs.BoolVar(&cf.asJ, "json", false, "print one JSON object instead of the tables")
	if err := parseFlags(e, fs, columnUsage, args); err != nil {
		return err
	}
	if fs.NArg() > 0 {
		return usagef("unexpected argument %q: column takes its inputs as options (--lwp, --re, ... or --from FILE)", fs.Arg(0))
	}
	p, err := pf.toParams()
	if err != nil {
		return err
	}
	for _, w := range physicsWarnings(p) {
		fmt.Fprintf(e.stderr, "warmrain: warning: %s\n", w)
	}
	var res *columnResult
	if cf.from != "" {
		for _, c := range columnInputs {
			if fs.Changed(c.flag) {
				return usagef("--%s cannot be combined with --from: the inputs come from the file", c.flag)
			}
		}
		if res, err = columnFromFile(e, fs, &cf, p); err != nil {
			return err
		}
	} else {
		for _, n := range []string{"lat", "lon", "time", "index", "bind", "pack", "mask", "lwp-kind"} {
			if fs.Changed(n) {
				return usagef("--%s needs --from FILE", n)
			}
		}
		if res, err = columnFromOptions(fs, &cf, p); err != nil {
			return err
		}
	}
	if cf.asJ {
		enc := json.NewEncoder(e.stdout)
		enc.SetIndent("", "  ")
		enc.SetEscapeHTML(false)
		return enc.Encode(res)
	}
	return res.writeText(e.stdout)
}

// columnFromOptions runs the column given by --lwp, --re, ...
func columnFromOptions(fs *pflag.FlagSet, cf *columnFlags, p microphys.Params) (*columnResult, error) {
	switch {
	case !fs.Changed("lwp") && !(fs.Changed("tau") && fs.Changed("re")):
		return nil, usagef("--lwp is required (or --tau and --re, from which LWP follows; or --from FILE)")
	case !fs.Changed("re") && !(fs.Changed("lwp") && p.DropletNumber > 0):
		return nil, usagef("--re is required (or --lwp with --droplet-number, from which r_e follows)")
	}
	var in microphys.Inputs
	dst := []*float64{&in.LWP, &in.Re, &in.Tau, &in.CTT, &in.CTP, &in.CTH, &in.LWPStd, &in.SurfaceRH}
	for i, c := range columnInputs {
		*dst[i] = math.NaN()
		if !fs.Changed(c.flag) {
			continue
		}
		if math.IsNaN(cf.vals[i]) || math.IsInf(cf.vals[i], 0) {
			return nil, usagef("--%s %v: want a finite number", c.flag, cf.vals[i])
		}
		*dst[i] = cf.vals[i] * c.scale
	}
	m, err := newModel(p)
	if err != nil {
		return nil, usagef("%v", err)
	}
	// Missing inputs completed as process does (Model.Complete): LWP from tau and r_e,
	// r_e from LWP and --droplet-number, CTT from the standard atmosphere at --ctp/--cth.
	raw := microphys.RawColumn{In: in, Nd: math.NaN(), CF: math.NaN()}
	ie, err := cf.inputErrors(&raw, p, nil)
	if err != nil {
		return nil, err
	}
	qin := m.Complete(&in, math.NaN(), math.NaN(), false)
	var out microphys.Outputs
	ran := qin&microphys.QCInputScreenMask == 0
	if ran {
		m.Column(&in, &out)
	}
	q := uint32(out.QC) | qin
	res := newColumnResult(p, &in, q)
	for _, d := range outputTable() {
		if d.get == nil { // a copy of an input, not a diagnostic
			continue
		}
		res.addRow(d.name, outputValue(&d, &in, &out, ran), d.units)
	}
	res.Screening = screening(&in, &out, q, p, nil, math.NaN())
	if err := res.uncertainty(m, &raw, &in, qin, &ie); err != nil {
		return nil, err
	}
	if res.QC.Screened && cf.noScreen {
		m2, what, err := relaxedModel(p)
		if err != nil {
			return nil, err
		}
		in2 := in
		var o2 microphys.Outputs
		m2.Column(&in2, &o2)
		res.NoScreen = what
		res.rows, res.Diagnostics = nil, map[string]jnum{}
		for _, d := range outputTable() {
			if d.get != nil {
				res.addRow(d.name, outputValue(&d, &in2, &o2, true), d.units)
			}
		}
		res.explain(m2, &in2)
		return res, nil
	}
	res.explain(m, &in)
	return res, nil
}

// newColumnResult starts a result: parameters, inputs (completed), assumptions, QC.
func newColumnResult(p microphys.Params, in *microphys.Inputs, q uint32) *columnResult {
	r := &columnResult{Inputs: map[string]jnum{}, InputUnits: map[string]string{}, Diagnostics: map[string]jnum{}, Units: map[string]string{},
		ParamMap: map[string]any{}, Method: p.CollectorMethod.String()}
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
	r.Assumed = assumptions(in, p)
	r.QC = qcJSON{Value: q, Flags: qcWords(q), Screened: q&(microphys.QCInputScreenMask|uint32(microphys.QCScreenMask)) != 0}
	for _, f := range microphys.InputQCFlags {
		if q&f.Bit != 0 && !f.Screen {
			r.Assumed = append(r.Assumed, fmt.Sprintf("%s (QC bit %s)", f.Meaning, f.Name))
		}
	}
	return r
}

// qcWords names the bits of a 32-bit QC word (Outputs.QC and the input bits), in bit order.
func qcWords(q uint32) []string {
	w := microphys.QCNames(uint16(q))
	for _, f := range microphys.InputQCFlags {
		if q&f.Bit != 0 {
			w = append(w, f.Name)
		}
	}
	if w == nil {
		w = []string{}
	}
	return w
}

func (r *columnResult) addRow(name string, v float64, unit string) {
	r.rows = append(r.rows, valueRow{name, jnum(v), unit})
	r.Diagnostics[name] = jnum(v)
	r.Units[name] = unit
}

// explain adds the profile, the collector path, the surface drizzle and the evaporation
// path of an unscreened column, from microphys.Model.Geometry: the
// cloud and layer of Column's direct integrations.
func (r *columnResult) explain(m *microphys.Model, in *microphys.Inputs) {
	g, ok := m.Geometry(in)
	if !ok {
		return
	}
	p := m.Params()
	for _, l := range microphys.AdiabaticProfile(g.Cloud, g.K, 10) {
		r.Profile = append(r.Profile, profileLevel{jnum(l.Height), jnum(l.LWC * 1e3), jnum(l.MeanVolumeRadius * 1e6), jnum(l.EffectiveRadius * 1e6)})
	}
	if !p.EnableCollector {
		return
	}
	r.Collector = collectorReport(g, microphys.TrackCollector(g.Cloud, g.Setup, 12))
	if !p.EnableEvaporation || !g.HasLayer {
		return
	}
	var out microphys.Outputs
	m.Column(in, &out)
	d, l := p.Drizzle, g.Layer
	r.Drizzle = &drizzleReport{MeanRadius: jnum(d.MeanRadius * 1e6), MinRadius: jnum(d.MinRadius * 1e6), Shape: jnum(d.Shape),
		Number:   jnum(microphys.DrizzleNumber(out.DrizzleRate, d, microphys.NewAir(l.BaseP, l.BaseT)) * 1e-3),
		Humidity: p.SubCloudHumidity.String(), Fraction: jnum(out.SurfaceDrizzleFraction),
		BaseRate: jnum(out.DrizzleRate * 86400), Rate: jnum(out.SurfaceDrizzleRate * 86400)}
	if r.Collector.ExitThrough != "base" {
		return
	}
	r.Evaporation = evaporationReport(float64(r.Collector.ExitRadius)*1e-6, l, microphys.TrackEvaporation(float64(r.Collector.ExitRadius)*1e-6, l, 10))
}

// collectorReport is a microphys.CollectorTrack in display units.
func collectorReport(g microphys.ColumnGeometry, tr microphys.CollectorTrack) *collectorPathReport {
	s, full := g.Setup, tr.Path
	rep := &collectorPathReport{
		StartRadius: jnum(s.R0 * 1e6), Updraft: jnum(s.Updraft),
		ExitRadius: jnum(full.ExitRadius * 1e6), ExitTime: jnum(full.ExitTime),
		TopHeight: jnum(full.TopHeight), DrizzleTime: jnum(full.DrizzleTime), DrizzleRadius: jnum(s.DrizzleRadius * 1e6),
		HeightClosure: jnum(tr.HeightClosure), Points: []pathPoint{},
	}
	if len(tr.Points) == 0 {
		rep.Note = "the collector integration gave no result (outside its valid range or the step/time limit)"
		return rep
	}
	rep.ExitThrough = "top"
	if full.ExitBase {
		rep.ExitThrough = "base"
	}
	for _, pt := range tr.Points {
		rep.Points = append(rep.Points, pathPoint{jnum(pt.Time), jnum(pt.Radius * 1e6), jnum(pt.Height)})
	}
	return rep
}

// evaporationReport is a microphys.EvaporationTrack in display units.
func evaporationReport(r0 float64, l microphys.SubCloudLayer, tr microphys.EvaporationTrack) *evapPathReport {
	e := tr.Path
	_, _, s0 := l.State(0)
	rep := &evapPathReport{
		BaseHeight: jnum(l.BaseHeight), BaseT: jnum(l.BaseT), BaseP: jnum(l.BaseP / 100), SurfaceRH: jnum(s0),
		StartRadius: jnum(r0 * 1e6), Reached: e.Reached, SurfaceRadius: jnum(e.SurfaceRadius * 1e6),
		EvapHeight: jnum(e.EvapHeight), Time: jnum(e.Time), Points: []evapPoint{},
	}
	if len(tr.Points) == 0 {
		rep.Note = "no sub-cloud layer or evaporation result (cloud base at or below the surface, or outside the valid range)"
		return rep
	}
	for _, pt := range tr.Points {
		rep.Points = append(rep.Points, evapPoint{jnum(pt.Height), jnum(pt.Time), jnum(pt.Radius * 1e6), jnum(pt.RH)})
	}
	return rep
}

// assumptions lists the defaults the column model uses for absent inputs.
func assumptions(in *microphys.Inputs, p microphys.Params) []string {
	a := []string{}
	if math.IsNaN(in.Tau) {
		a = append(a, fmt.Sprintf("tau from LWP and r_e (adiabatic relation, --extinction-efficiency %g)", p.Qext))
	}
	switch {
	case math.IsNaN(in.CTT) && math.IsNaN(in.CTP):
		a = append(a, fmt.Sprintf("air state: --default-ctt %g K and --default-ctp %g hPa used (QC bit air_state_assumed)", p.DefaultCTT, p.DefaultCTP/100))
	case math.IsNaN(in.CTT):
		a = append(a, fmt.Sprintf("air state: --default-ctt %g K used (QC bit air_state_assumed)", p.DefaultCTT))
	case math.IsNaN(in.CTP):
		a = append(a, fmt.Sprintf("air state: --default-ctp %g hPa used (QC bit air_state_assumed)", p.DefaultCTP/100))
	}
	if p.FixedCw > 0 {
		a = append(a, fmt.Sprintf("--condensation-rate fixed at %g g m-3 km-1", p.FixedCw*1e6))
	}
	if math.IsNaN(in.CTH) {
		a = append(a, fmt.Sprintf("cloud base: dry adiabat down to --surface-pressure %g hPa (QC bit cloud_base_height_assumed)", p.SurfacePressure/100))
	}
	if math.IsNaN(in.LWPStd) {
		a = append(a, fmt.Sprintf("drizzle probability: --gamma-shape %g (QC bit gamma_shape_assumed)", p.GammaShape))
	}
	switch {
	case p.SubCloudHumidity == microphys.HumidityWellMixed:
		a = append(a, "sub-cloud humidity: well mixed, the cloud-base vapour mixing ratio conserved down to the surface")
	case math.IsNaN(in.SurfaceRH):
		a = append(a, fmt.Sprintf("--surface-rh %g (QC bit surface_humidity_assumed)", p.SurfaceRH))
	}
	return a
}

// relaxedModel is the model of p with every screening threshold switched off (set to the
// widest value its option allows), for --no-screen; what says so in the options' words.
func relaxedModel(p microphys.Params) (*microphys.Model, string, error) {
	q := p
	set := map[string]float64{}
	var words []string
	for i := range microphys.ParamDecls {
		d := &microphys.ParamDecls[i]
		var u float64
		switch d.Name {
		case "min_lwp", "min_tau", "min_cloud_fraction":
			u = d.Min
		case "min_ctt":
			u = d.Min
		case "re_range_min", "nd_range_min":
			u = d.Min + (d.Max-d.Min)*1e-6 // the range is open at Min
		case "re_range_max", "nd_range_max", "max_thickness":
			u = d.Max
		default:
			continue
		}
		set[d.Name] = u
		d.Set(&q, d.ToSI(u))
	}
	for _, g := range optionGroups() {
		if _, ok := set[g[0].Name]; !ok {
			continue
		}
		var v []string
		for _, d := range g {
			v = append(v, strconv.FormatFloat(set[d.Name], 'g', 4, 64))
		}
		words = append(words, fmt.Sprintf("--%s %s", g[0].Option, strings.Join(v, ",")))
	}
	m, err := newModel(q)
	if err != nil {
		return nil, "", err
	}
	return m, "screening thresholds switched off: " + strings.Join(words, " "), nil
}

// screening lists every screening rule and how the column fares: the input screens
// (missing or invalid inputs, the product's flag codes and masks, clear sky, cloud fraction)
// and the threshold options, each with the column's value and the option's value in the
// units users type. masks are the file's masks (nil on the command line); cf its cloud
// fraction (NaN: none).
func screening(in *microphys.Inputs, o *microphys.Outputs, q uint32, p microphys.Params, masks []*grid.Mask, cf float64) []screenRule {
	var r []screenRule
	g := func(x float64) string { return strconv.FormatFloat(x, 'g', 5, 64) }
	add := func(flag string, rule, value string, screened, threshold bool) {
		r = append(r, screenRule{flag, rule, value, screened, threshold})
	}
	bit := func(b uint16) bool { return uint16(q)&b != 0 }
	add("input_missing", "LWP and r_e present (or derivable)", fmt.Sprintf("LWP %s g m-2, r_e %s um", g(in.LWP*1e3), g(in.Re*1e6)), bit(microphys.QCInputMissing), false)
	add("input_invalid", "every input finite and physical", "", bit(microphys.QCInputInvalid), false)
	for _, f := range microphys.InputQCFlags {
		if f.Screen && q&f.Bit != 0 {
			why := f.Meaning
			if f.Bit == microphys.QCCloudFractionLow {
				why = fmt.Sprintf("cloud fraction %s below --min-cloud-fraction %g", g(cf), p.MinCloudFraction)
				add(f.Name, why, g(cf), true, true)
				continue
			}
			for _, m := range masks {
				if maskBit(m) == f.Bit {
					why += ": --mask " + m.Describe()
				}
			}
			add(f.Name, why, "", true, false)
		}
	}
	if q&microphys.QCInputScreenMask != 0 || bit(microphys.QCInputMissing|microphys.QCInputInvalid) {
		return r
	}
	tau := in.Tau
	if math.IsNaN(tau) {
		tau = microphys.TauAdiabatic(in.LWP, in.Re, p.Qext)
	}
	T := in.CTT
	if math.IsNaN(T) {
		T = p.DefaultCTT
	}
	add("thin_cloud", fmt.Sprintf("LWP at least --min-lwp %g g m-2", p.MinLWP*1e3), g(in.LWP*1e3)+" g m-2", in.LWP < p.MinLWP, true)
	add("thin_cloud", fmt.Sprintf("optical thickness at least --min-tau %g", p.MinTau), g(tau), tau < p.MinTau, true)
	add("effective_radius_out_of_range", fmt.Sprintf("r_e within --re-range %g,%g um", p.ReMin*1e6, p.ReMax*1e6), g(in.Re*1e6)+" um", in.Re < p.ReMin || in.Re > p.ReMax, true)
	add("possible_ice", fmt.Sprintf("cloud-top temperature at least --min-ctt %g K", p.MinCTT), g(T)+" K", T < p.MinCTT, true)
	nd, h := o.Nd, o.H
	if bit(microphys.QCScreenMask) { // Column gave no N_d or H: the exported functions of the adiabatic model
		cw := p.FixedCw
		if cw == 0 {
			pr := in.CTP
			if math.IsNaN(pr) {
				pr = p.DefaultCTP
			}
			cw = microphys.CondensationRate(pr, T)
		}
		nd = microphys.DropletNumber(tau, in.Re, p.K, p.Qext, p.Fad, cw)
		h = microphys.Thickness(in.LWP, p.Fad, cw)
	}
	add("droplet_number_implausible", fmt.Sprintf("N_d within --nd-range %g,%g cm-3", p.NdMin*1e-6, p.NdMax*1e-6), g(nd*1e-6)+" cm-3",
		!(nd >= p.NdMin && nd <= p.NdMax), true)
	add("thickness_implausible", fmt.Sprintf("adiabatic thickness at most --max-thickness %g m", p.HMax), g(h)+" m", !(h <= p.HMax), true)
	return r
}

// columnFromFile reads the column of --from at --lat/--lon/--time or --index, runs it
// through process's kernel and returns what the output file holds there.
func columnFromFile(e *env, fs *pflag.FlagSet, cf *columnFlags, p microphys.Params) (*columnResult, error) {
	byPlace := fs.Changed("lat") || fs.Changed("lon")
	switch {
	case byPlace && cf.index != "":
		return nil, usagef("give the pixel by --lat/--lon (and --time) or by --index, not both")
	case byPlace && !(fs.Changed("lat") && fs.Changed("lon")):
		return nil, usagef("--lat and --lon go together")
	case !byPlace && cf.index == "":
		return nil, usagef("--from needs the pixel: --lat Y --lon X (and --time T), or --index I,J[,T]")
	case byPlace && !(cf.lat >= -90 && cf.lat <= 90 && !math.IsInf(cf.lon, 0) && !math.IsNaN(cf.lon)):
		return nil, usagef("--lat %g --lon %g: want a latitude between -90 and 90 degrees and a finite longitude", cf.lat, cf.lon)
	case cf.index != "" && cf.tm != "":
		return nil, usagef("--time goes with --lat/--lon; with --index give the time index as its last value")
	}
	masks, err := cf.inp.check()
	if err != nil {
		return nil, err
	}
	var overrides []grid.Override
	for _, b := range cf.binds {
		ov, err := grid.ParseOverride(b)
		if err != nil {
			return nil, usagef("--bind %q: %v", b, err)
		}
		overrides = append(overrides, ov)
	}
	opt := grid.OpenOptions{Overrides: overrides, OverrideHint: "--bind ROLE=VAR[:UNITS]"}
	cf.inp.openOptions(&opt, masks, p)
	gin, err := grid.Open(cf.from, opt)
	if err != nil {
		return nil, err
	}
	defer gin.Close()
	warns := append(append([]string(nil), gin.Warnings...), unitWarnings(gin)...)
	for _, w := range warns {
		fmt.Fprintf(e.stderr, "warmrain: warning: %s\n", w)
	}
	src, err := pickPixel(gin, cf, byPlace)
	if err != nil {
		return nil, err
	}
	src.Warnings = warns
	s, err := gin.ReadColumn(src.index)
	if err != nil {
		return nil, err
	}
	m, err := newModel(p)
	if err != nil {
		return nil, usagef("%v", err)
	}
	defs, err := selectOutputs("all", p)
	if err != nil {
		return nil, err
	}
	k := newColumnKernel(m, gin)
	var in microphys.Inputs
	var o microphys.Outputs
	var local grid.QualityCounts
	q, qin, ran := k.column(s, 0, &in, &o, &local)
	res := newColumnResult(p, &in, q)
	res.Source = src
	src.Stored = "float32"
	if cf.pack {
		src.Stored = "float32; bounded outputs as 16-bit packed integers (--pack)"
	}
	vars := gridVars(defs, "", cf.pack)
	for c := range defs {
		d := &defs[c]
		var v float64
		switch {
		case d.get != nil || d.input == grid.RoleLWP || !ran:
			v = outputValue(d, &in, &o, ran)
		default: // a copy of another input
			v = math.NaN()
			if x := s.In[d.input.Index()]; x != nil {
				v = x[0] * d.scale
			}
		}
		res.addRow(d.name, vars[c].Stored(v), d.units)
	}
	for _, b := range gin.Bindings() {
		rv := readValue{Role: string(b.Role), Variable: b.Var, Unit: b.Canonical}
		x := s.In[b.Role.Index()][0]
		if ci, ok := grid.FlagIndex(x); ok {
			rv.Note = "flag code " + b.Decoder.FlagMeanings[ci]
			x = math.NaN()
		}
		if b.Role.Rule().Internal {
			rv.Role = "mask"
		}
		rv.Value, rv.Unit = roleDisplay(b.Role, x, b.Canonical)
		if b.Relative {
			rv.Value, rv.Unit = jnum(x*100), "% of the value"
		}
		src.Read = append(src.Read, rv)
	}
	cfv := math.NaN()
	if x := s.In[grid.RoleCloudFraction.Index()]; x != nil {
		cfv = x[0]
	}
	res.Screening = screening(&in, &o, q, p, gin.Masks, cfv)
	raw := microphys.RawColumn{In: k.inputs(s, 0), Nd: slabAt(s, k.iNd, 0), CF: cfv, GridMean: k.gridMean}
	ie, err := cf.inputErrors(&raw, p, func(e int) (float64, bool) {
		b, ok := gin.Binding(errorRoles[e])
		if !ok {
			return math.NaN(), false
		}
		return slabAt(s, errorRoles[e].Index(), 0), b.Relative
	})
	if err != nil {
		return nil, err
	}
	if err := res.uncertainty(m, &raw, &in, qin, &ie); err != nil {
		return nil, err
	}
	if !ran || o.QC&microphys.QCScreenMask != 0 {
		if !cf.noScreen {
			return res, nil
		}
		m2, what, err := relaxedModel(p)
		if err != nil {
			return nil, err
		}
		k2 := newColumnKernel(m2, gin)
		var in2 microphys.Inputs
		var o2 microphys.Outputs
		q2, _, ran2 := k2.column(s, 0, &in2, &o2, &local)
		res.NoScreen = what + "; the numbers below are not those of the output file"
		if !ran2 || o2.QC&microphys.QCScreenMask != 0 {
			res.NoScreen += fmt.Sprintf("; still screened by %s, which are not thresholds", strings.Join(qcWords(q2&(microphys.QCInputScreenMask|uint32(microphys.QCScreenMask))), ", "))
			return res, nil
		}
		res.rows, res.Diagnostics = nil, map[string]jnum{}
		for c := range defs {
			d := &defs[c]
			if d.get != nil || d.input == grid.RoleLWP {
				res.addRow(d.name, outputValue(d, &in2, &o2, true), d.units)
			}
		}
		res.explain(m2, &in2)
		return res, nil
	}
	res.explain(m, &in)
	return res, nil
}

// roleDisplay converts a role's canonical value to the unit column prints it in.
func roleDisplay(r grid.Role, x float64, canonical string) (jnum, string) {
	switch r {
	case grid.RoleLWP, grid.RoleLWPSD, grid.RoleLWPSE:
		return jnum(x * 1e3), "g m-2"
	case grid.RoleRe, grid.RoleReSE:
		return jnum(x * 1e6), "um"
	case grid.RoleCTP:
		return jnum(x / 100), "hPa"
	case grid.RoleNd:
		return jnum(x * 1e-6), "cm-3"
	}
	return jnum(x), canonical
}

// pickPixel finds the pixel of --lat/--lon/--time or --index.
func pickPixel(gin *grid.Input, cf *columnFlags, byPlace bool) (*sourceReport, error) {
	L := gin.Layout
	src := &sourceReport{File: cf.from, Index: map[string]int{}, Lat: jnum(math.NaN()), Lon: jnum(math.NaN()), DistanceKm: jnum(math.NaN())}
	idx := make([]int, len(L.Dims))
	pos := func(name string) int {
		for i, d := range L.Dims {
			if d.Name == name {
				return i
			}
		}
		return -1
	}
	var hor []int // positions of the horizontal dimensions in Dims
	for _, d := range L.Horizontal {
		hor = append(hor, pos(d.Name))
	}
	var lead []int
	for _, d := range L.Leading {
		lead = append(lead, pos(d.Name))
	}
	names := func(ps []int) string {
		var s []string
		for _, i := range ps {
			s = append(s, L.Dims[i].Name)
		}
		return strings.Join(s, ",")
	}
	if byPlace {
		pl, err := gin.Nearest(cf.lat, cf.lon)
		if err != nil {
			return nil, err
		}
		switch len(hor) {
		case 2:
			idx[hor[0]], idx[hor[1]] = pl.Y, pl.X
		case 1:
			idx[hor[0]] = pl.X
		}
		src.Lat, src.Lon, src.DistanceKm = jnum(pl.Lat), jnum(pl.Lon), jnum(pl.DistanceKm)
		for _, i := range lead {
			n := L.Dims[i].Len
			switch {
			case L.Time != nil && L.Dims[i].Name == timeDim(gin) && cf.tm != "":
				t, err := nearestTime(gin, cf.tm)
				if err != nil {
					return nil, err
				}
				idx[i] = t
			case n == 1:
				idx[i] = 0
			case L.Time != nil && L.Dims[i].Name == timeDim(gin):
				return nil, usagef("%s has %d times along %s: give --time (ISO 8601, e.g. 2019-06-02T12:00)", cf.from, n, L.Dims[i].Name)
			default:
				return nil, usagef("%s has %d values along %s: give the pixel by --index %s,%s", cf.from, n, L.Dims[i].Name, names(hor), names(lead))
			}
		}
		if cf.tm != "" && (L.Time == nil || pos(timeDim(gin)) < 0) {
			return nil, usagef("--time %s: %s has no time dimension", cf.tm, cf.from)
		}
	} else {
		parts := strings.Split(cf.index, ",")
		order := append(append([]int(nil), hor...), lead...)
		if len(parts) != len(order) && !(len(parts) == len(hor) && allOne(L, lead)) {
			return nil, usagef("--index %s: want %d indices, %s (the data's dimensions %s)", cf.index, len(order), names(order), dimList(L))
		}
		for k, s := range parts {
			v, err := strconv.Atoi(strings.TrimSpace(s))
			i := order[k]
			if err != nil || v < 0 || v >= L.Dims[i].Len {
				return nil, usagef("--index %s: %q is not an index of %s (0..%d)", cf.index, s, L.Dims[i].Name, L.Dims[i].Len-1)
			}
			idx[i] = v
		}
		if len(L.Horizontal) > 0 && L.Lat != "" {
			if la, lo, ok := pixelLatLon(gin, idx, hor); ok {
				src.Lat, src.Lon = jnum(la), jnum(lo)
			}
		}
	}
	src.index = idx
	for i, d := range L.Dims {
		src.Index[d.Name] = idx[i]
		src.dims = append(src.dims, d.Name)
	}
	if L.Time != nil {
		if ti := pos(timeDim(gin)); ti >= 0 {
			if v, _, err := grid.ReadVariableAt(gin.Path, L.Time.Var, []int{idx[ti]}, []int{1}); err == nil && len(v) == 1 {
				if sec := L.Time.Seconds(v[0]); !math.IsNaN(sec) {
					src.Time = time.Unix(int64(math.Round(sec)), 0).UTC().Format("2006-01-02T15:04:05Z")
				}
			}
		}
	}
	return src, nil
}

func allOne(L grid.Layout, ps []int) bool {
	for _, i := range ps {
		if L.Dims[i].Len != 1 {
			return false
		}
	}
	return true
}

func dimList(L grid.Layout) string {
	var s []string
	for _, d := range L.Dims {
		s = append(s, fmt.Sprintf("%s = %d", d.Name, d.Len))
	}
	return strings.Join(s, ", ")
}

// timeDim is the dimension of the time axis (its coordinate variable's name).
func timeDim(gin *grid.Input) string {
	if gin.Layout.Time == nil {
		return ""
	}
	if v := gin.Info.Var(gin.Layout.Time.Var); v != nil && len(v.Dims) == 1 {
		return v.Dims[0]
	}
	return gin.Layout.Time.Var
}

// nearestTime returns the index of the time nearest to t (ISO 8601).
func nearestTime(gin *grid.Input, t string) (int, error) {
	var at time.Time
	var err error
	for _, f := range []string{"2006-01-02T15:04:05Z07:00", "2006-01-02T15:04:05", "2006-01-02T15:04", "2006-01-02 15:04", "2006-01-02"} {
		if at, err = time.Parse(f, t); err == nil {
			break
		}
	}
	if err != nil {
		return 0, usagef("--time %q: want an ISO 8601 date or date and time, e.g. 2019-06-02 or 2019-06-02T12:00 (UTC)", t)
	}
	ta := gin.Layout.Time
	v, _, rerr := grid.ReadVariable(gin.Path, ta.Var)
	if rerr != nil {
		return 0, rerr
	}
	want := float64(at.Unix())
	best, bd := -1, math.Inf(1)
	for i, x := range v {
		if d := math.Abs(ta.Seconds(x) - want); d < bd {
			best, bd = i, d
		}
	}
	if best < 0 {
		return 0, fmt.Errorf("%s: variable %s holds no time that can be read", gin.Path, ta.Var)
	}
	return best, nil
}

// pixelLatLon reads the latitude and longitude of the pixel at idx (degrees).
func pixelLatLon(gin *grid.Input, idx, hor []int) (lat, lon float64, ok bool) {
	L := gin.Layout
	read := func(name string) (float64, bool) {
		v := gin.Info.Var(name)
		if v == nil {
			return 0, false
		}
		start := make([]int, len(v.Dims))
		count := make([]int, len(v.Dims))
		for k, dn := range v.Dims {
			count[k] = 1
			for _, i := range hor {
				if L.Dims[i].Name == dn {
					start[k] = idx[i]
				}
			}
		}
		x, _, err := grid.ReadVariableAt(gin.Path, name, start, count)
		if err != nil || len(x) != 1 {
			return 0, false
		}
		if L.LatLonRadians {
			x[0] *= 180 / math.Pi
		}
		return x[0], true
	}
	la, ok1 := read(L.Lat)
	lo, ok2 := read(L.Lon)
	return la, lo, ok1 && ok2
}

// numOf formats m[name], "-" when m has no such value (an input copied to the outputs).
func numOf(m map[string]jnum, name string) string {
	if v, ok := m[name]; ok {
		return num(v)
	}
	return "-"
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
	if s := r.Source; s != nil {
		fmt.Fprintf(tw, "pixel of %s:\n", s.File)
		var ix []string
		for i, d := range s.dims {
			ix = append(ix, fmt.Sprintf("%s %d", d, s.index[i]))
		}
		fmt.Fprintf(tw, "  index\t%s\n", strings.Join(ix, ", "))
		if !math.IsNaN(float64(s.Lat)) {
			fmt.Fprintf(tw, "  centre\tlat %s, lon %s", num(s.Lat), num(s.Lon))
			if !math.IsNaN(float64(s.DistanceKm)) {
				fmt.Fprintf(tw, " (%.3g km from the point asked for)", float64(s.DistanceKm))
			}
			fmt.Fprintln(tw)
		}
		if s.Time != "" {
			fmt.Fprintf(tw, "  time\t%s\n", s.Time)
		}
		fmt.Fprintln(tw, "  read:")
		for _, v := range s.Read {
			note := ""
			if v.Note != "" {
				note = "  (" + v.Note + ")"
			}
			fmt.Fprintf(tw, "    %s\t%s\t%s\tvariable %s%s\n", v.Role, num(v.Value), v.Unit, v.Variable, note)
		}
		fmt.Fprintf(tw, "  diagnostics as the output file stores them (%s)\n", s.Stored)
	}
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
	if r.NoScreen != "" {
		fmt.Fprintf(w, "  (--no-screen: %s)\n", r.NoScreen)
	}
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	// The "(non-linear)" notes line up after the widest unit: a tab
	// before them would align only runs of consecutive noted rows.
	unitWidth := 0
	for _, row := range r.rows {
		unitWidth = max(unitWidth, utf8.RuneCountInString(row.Unit))
	}
	for _, row := range r.rows {
		name := row.Name
		v := num(row.Value)
		if r.StandardErrors != nil {
			v += "\t± " + numOf(r.StandardErrors, name)
		}
		if r.ParameterSpread != nil {
			v += "\t± " + numOf(r.ParameterSpread, name) + " (par.)"
		}
		note := ""
		if slices.Contains(r.ErrorNonlinear, name) {
			note = strings.Repeat(" ", unitWidth-utf8.RuneCountInString(row.Unit)+2) + "(non-linear)"
		}
		fmt.Fprintf(tw, "  %s\t%s\t%s%s\n", name, v, row.Unit, note)
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

	fmt.Fprintln(w, "\nscreening:")
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	for _, s := range r.Screening {
		verdict := "passes"
		if s.Screened {
			verdict = "SCREENED"
		}
		fmt.Fprintf(tw, "  %s\t%s\t%s\t%s\n", verdict, s.Rule, s.Value, s.Flag)
	}
	tw.Flush()
	if r.QC.Screened {
		if r.NoScreen == "" {
			fmt.Fprintln(w, "the column is screened: no profile or collector path (--no-screen runs it with the thresholds off)")
		} else if len(r.Profile) == 0 {
			fmt.Fprintln(w, "the column is screened by a rule that is not a threshold: nothing to run")
		}
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
		fmt.Fprintf(w, "\ncollector drop (integrated directly): start radius %s um, updraft %s m s-1\n", num(c.StartRadius), num(c.Updraft))
		fmt.Fprintln(w, "  (one drop's path, to explain the column; the mapped drizzle products are the cloud-base rate, intensity and probability and the surface rate and fraction)")
		if r.Method != microphys.CollectorDirect.String() {
			fmt.Fprintf(w, "  (--collector-method %s: the diagnostics come from the table, within 0.5 %% of this direct path)\n", r.Method)
		}
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
		fmt.Fprintf(w, "\nsurface drizzle (the cloud-base drop-size distribution carried down): drizzle drops above %s um, mean radius %s um, gamma shape %s; %s per litre at cloud base carry %s mm day-1;\n",
			num(dz.MinRadius), num(dz.MeanRadius), num(dz.Shape), num(dz.Number), num(dz.BaseRate))
		fmt.Fprintf(w, "  through the %s sub-cloud layer a fraction %s of that flux, %s mm day-1, reaches the surface\n",
			dz.Humidity, num(dz.Fraction), num(dz.Rate))
	}
	if ev := r.Evaporation; ev != nil {
		fmt.Fprintf(w, "\nsub-cloud fall of the single collector drop (integrated directly): cloud base %s m above the surface, %s K, %s hPa; surface RH %s\n",
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

// inputErrors are the standard errors of the column's LWP, r_e and tau (SI): those given by
// --lwp-se, --re-se and --tau-se, else (fromFile not nil) the file's standard-error roles,
// fromFile(k) giving the value and whether it is a fraction of the input.
func (cf *columnFlags) inputErrors(raw *microphys.RawColumn, p microphys.Params, fromFile func(k int) (float64, bool)) (microphys.InputErrors, error) {
	var ie microphys.InputErrors
	x := [3]float64{raw.In.LWP, raw.In.Re, raw.In.Tau}
	for k, dst := range [3]*float64{&ie.LWP, &ie.Re, &ie.Tau} {
		v, err := parseError(cf.errs[k], x[k], [3]float64{1e-3, 1e-6, 1}[k])
		if err != nil {
			return ie, usagef("--%s: %v", [3]string{"lwp-se", "re-se", "tau-se"}[k], err)
		}
		if cf.errs[k] == "" && fromFile != nil {
			f, rel := fromFile(k)
			if v = f; rel {
				v = f * x[k]
			}
		}
		*dst = v
	}
	ie.Corr = p.ErrorCorrelation
	return ie, nil
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
	// The diagnostics and, with --from, the LWP the output file holds (an input copy,
	// whose error is the input's in the output's units, as process writes it).
	shown := func(d *outputDef) bool {
		_, row := r.Diagnostics[d.name]
		return d.get != nil || (d.input == grid.RoleLWP && row)
	}
	if e.Any() {
		se := make([]float64, n)
		nl := m.RetrievalError(raw, done, qin, &out, e, se, nil)
		r.StandardErrors = map[string]jnum{}
		r.ErrorNonlinear = []string{}
		for _, d := range defs {
			if !shown(&d) {
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
			if !shown(&d) {
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
