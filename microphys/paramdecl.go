package microphys

import (
	"math"
	"strconv"
	"strings"
)

// ParamKind says how a parameter is given on the command line.
type ParamKind int

const (
	// ParamNumber is a number in the row's Unit.
	ParamNumber ParamKind = iota
	// ParamChoice is one of the row's Choices; Get and Set use the choice's index.
	ParamChoice
	// ParamSwitch is an option without a value; Get and Set use 1 (given) or 0.
	ParamSwitch
)

// ParamDecl declares one parameter of Params: its command-line option, the unit users
// type, the conversion to SI, the default (DefaultParams through Get), the valid range, the
// source and the access to its Params field. ParamDecls lists them all; the command line,
// its help, Validate, the provenance attributes (Settings), the README table and the
// manual all come from that one table.
type ParamDecl struct {
	// Name is the provenance name (attribute warmrain_parameter_<Name>): the option with
	// "_" for "-", followed by "_<part>" when several rows share one option.
	Name string
	// Option is the command-line option without "--". Consecutive rows sharing an option are
	// given together as comma-separated values, in table order (--re-range 4,30).
	Option string
	Kind   ParamKind
	// Unit is the unit users type (UDUNITS spelling), "1" for a pure number, "" for
	// choices and switches.
	Unit string
	// Scale converts SI to Unit: user value = SI value × Scale (as for the outputs).
	Scale float64
	// Min and Max bound the user value; MinOpen excludes Min itself. ZeroOff also allows 0,
	// meaning "off" (Help says what is done instead).
	Min, Max float64
	MinOpen  bool
	ZeroOff  bool
	// Choices names the values of a ParamChoice, by index.
	Choices []string
	// Help is the option's one-line help, without unit or default (added from the row).
	Help string
	// Source says where the default comes from: a citation key of references.go, "common
	// practice", or "from memory".
	Source string
	// Literature is the range of values published for the parameter, with its sources, in
	// the units users type; "from memory" marks values recalled without the paper at hand.
	// Empty for a choice, a switch, a numerical setting or a screening threshold, which have
	// no published range. Set on the first row of an option only.
	Literature string
	// Spread is the one-standard-deviation uncertainty of the default, in Unit (0: the
	// parameter is not perturbed by --parameter-uncertainty); SpreadSource says where it
	// comes from, as Source does (see SpreadModels).
	Spread       float64
	SpreadSource string
	// Get returns the SI value (a choice's index; 1 or 0 for a switch); Set stores it.
	Get func(p *Params) float64
	Set func(p *Params, v float64)
}

// FromSI converts an SI value to the unit users type. Multiplying or dividing by the
// factor that is >= 1 keeps exact values exact (101325 Pa is 1013.25 hPa).
//
// Reference: none (unit conversion).
// Valid: any float.
func (d *ParamDecl) FromSI(v float64) float64 {
	if d.Scale >= 1 || d.Scale == 0 {
		return v * d.scale()
	}
	return v / (1 / d.Scale)
}

// ToSI converts a value in the unit users type to SI (the inverse of FromSI).
//
// Reference: none (unit conversion).
// Valid: any float.
func (d *ParamDecl) ToSI(v float64) float64 {
	if d.Scale >= 1 || d.Scale == 0 {
		return v / d.scale()
	}
	return v * (1 / d.Scale)
}

func (d *ParamDecl) scale() float64 {
	if d.Scale == 0 {
		return 1
	}
	return d.Scale
}

// Text formats a value given in the user's unit: the choice's name, "true"/"false" for a
// switch, or the shortest decimal that reads back to v.
//
// Reference: none (software interface).
// Valid: any float.
func (d *ParamDecl) Text(v float64) string {
	switch d.Kind {
	case ParamChoice:
		if i := int(v); float64(i) == v && i >= 0 && i < len(d.Choices) {
			return d.Choices[i]
		}
		return strconv.FormatFloat(v, 'g', -1, 64)
	case ParamSwitch:
		return strconv.FormatBool(v != 0)
	}
	return strconv.FormatFloat(v, 'g', -1, 64)
}

// RangeText states the valid range in the user's unit, e.g. "between 1 and 100 um".
//
// Reference: none (software interface).
// Valid: always.
func (d *ParamDecl) RangeText() string {
	switch d.Kind {
	case ParamChoice:
		return "one of " + strings.Join(d.Choices, ", ")
	case ParamSwitch:
		return "given or not"
	}
	g := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	s := "between " + g(d.Min) + " and " + g(d.Max)
	if d.MinOpen {
		s = "above " + g(d.Min) + " and at most " + g(d.Max)
	}
	if d.Unit != "" && d.Unit != "1" {
		s += " " + d.Unit
	}
	if d.ZeroOff {
		s = "0 or " + s
	}
	return s
}

// inRange reports whether the user value u is valid for the row.
func (d *ParamDecl) inRange(u float64) bool {
	switch d.Kind {
	case ParamChoice:
		i := int(u)
		return float64(i) == u && i >= 0 && i < len(d.Choices)
	case ParamSwitch:
		return u == 0 || u == 1
	}
	if d.ZeroOff && (u == 0 || math.IsNaN(u)) {
		return true
	}
	return u <= d.Max && (u > d.Min || (!d.MinOpen && u == d.Min))
}

// ParamDecls declares every parameter, in the order of the options' help and the
// provenance attributes. Adding a parameter is one row here plus its field in Params,
// its default in DefaultParams and its physics.
var ParamDecls = []ParamDecl{
	{Name: "autoconversion", Option: "autoconversion", Kind: ParamChoice, Choices: autoconvNames[:],
		Help: "autoconversion scheme", Source: "[KhairoutdinovKogan2000]; also [Kessler1969], [LiuDaum2004], [SeifertBeheng2001]",
		Get: func(p *Params) float64 { return float64(p.Autoconv) }, Set: func(p *Params, v float64) { p.Autoconv = AutoconvScheme(v) }},
	{Name: "collision", Option: "collision", Kind: ParamChoice, Choices: collisionNames[:],
		Help: "collision efficiency of the collector drop", Source: "[Hall1980] Table 1, bilinear; or [Long1974]",
		Get: func(p *Params) float64 { return float64(p.Collision) },
		Set: func(p *Params, v float64) { p.Collision = CollisionKind(v); p.Collector.Collision = p.Collision }},
	{Name: "coalescence", Option: "coalescence", Kind: ParamChoice, Choices: coalescenceNames[:],
		Help: "coalescence efficiency (seifert2005 is the Beard-Ochs/Low-List blend)", Source: "[BeardOchs1995] and [LowList1982] blended as in [Seifert2005]",
		Get: func(p *Params) float64 { return float64(p.Coalescence) },
		Set: func(p *Params, v float64) {
			p.Coalescence = CoalescenceKind(v)
			p.Collector.Coalescence = p.Coalescence
		}},
	{Name: "k_ratio", Option: "k-ratio", Unit: "1", Scale: 1, Min: 0, Max: 1, MinOpen: true,
		Spread: 0.1, SpreadSource: "the 0.6-0.9 range of [LebsockWitte2023] as about ±1.5 sigma around [Brenguier2000]'s 0.8",
		Help: "k = (r_v/r_e)^3, ratio of mean-volume to effective radius cubed", Source: "[Brenguier2000]; 0.6-0.9 [LebsockWitte2023]",
		Literature: "0.6-0.9, rising with N_d [LebsockWitte2023]",
		Get:        func(p *Params) float64 { return p.K }, Set: func(p *Params, v float64) { p.K = v }},
	{Name: "extinction_efficiency", Option: "extinction-efficiency", Unit: "1", Scale: 1, Min: 0, Max: 10, MinOpen: true,
		Spread: 0.05, SpreadSource: "Mie Q_ext of cloud droplets at visible wavelengths departs from the geometric-optics 2 by a few per cent for r_e 5-20 um (from memory)",
		Help: "extinction efficiency Q_ext", Source: "geometric optics [Brenguier2000]",
		Literature: "2 for cloud droplets in visible light, the geometric-optics limit [Brenguier2000]",
		Get:        func(p *Params) float64 { return p.Qext }, Set: func(p *Params, v float64) { p.Qext = v }},
	{Name: "adiabatic_fraction", Option: "adiabatic-fraction", Unit: "1", Scale: 1, Min: 0, Max: 1, MinOpen: true,
		Spread: 0.15, SpreadSource: "0.6-0.9 in stratocumulus, reviewed in [Grosvenor2018] (from memory); below the default 1 only (one-sided)",
		Help: "adiabatic fraction f_ad", Source: "[Brenguier2000]; 0.6-0.9 is common in stratocumulus (from memory)",
		Literature: "0.6-0.9 in stratocumulus (from memory)",
		Get:        func(p *Params) float64 { return p.Fad }, Set: func(p *Params, v float64) { p.Fad = v }},
	{Name: "condensation_rate", Option: "condensation-rate", Unit: "g m-3 km-1", Scale: 1e6, Min: 0.1, Max: 10, ZeroOff: true,
		Help: "fixed condensation rate c_w (0: from cloud-top temperature and pressure)", Source: "1.9 g m-3 km-1 is the value of [Brenguier2000]",
		Literature: "1.3-2.8 g m-3 km-1 for cloud tops at 270-300 K and 700-1000 hPa (moist adiabat computed with [Bolton1980]; doc/science.md)",
		Get:        func(p *Params) float64 { return p.FixedCw }, Set: func(p *Params, v float64) { p.FixedCw = v }},
	{Name: "onset_radius", Option: "onset-radius", Unit: "um", Scale: 1e6, Min: 1, Max: 100,
		Spread: 1, SpreadSource: "published onset radii 12-16 um (see --onset-width) as ±2 sigma",
		Help: "drizzle-onset cloud-top effective radius r_e*", Source: "[RosenfeldGutman1994] (from memory); 13 um Braga et al. (2021), 15 um Ba and Gruber (2001)",
		Literature: "12-16 um: 13 [Braga2021], 14 [RosenfeldGutman1994] (from memory), 15 Ba and Gruber (2001), 16 Gerber (1996) (from memory)",
		Get:        func(p *Params) float64 { return p.ReStar }, Set: func(p *Params, v float64) { p.ReStar = v }},
	{Name: "onset_width", Option: "onset-width", Unit: "um", Scale: 1e6, Min: 0, Max: 20,
		Help:       "width of the r_e range, centred on the onset radius, over which the drizzle-onset probability of a sub-grid column rises from 0 to 1 (0: a step at the onset radius)",
		Source:     "published onset radii span 12-16 um: 13 um [Braga2021], 14 um [RosenfeldGutman1994] (from memory), 15 um Ba and Gruber (2001), 16 um Gerber (1996) (from memory)",
		Literature: "no published value; the published onset radii spread over 4 um (12-16 um, see onset-radius)",
		Get:        func(p *Params) float64 { return p.OnsetWidth }, Set: func(p *Params, v float64) { p.OnsetWidth = v }},
	{Name: "gamma_shape", Option: "gamma-shape", Unit: "1", Scale: 1, Min: 0, Max: 1e6, MinOpen: true,
		Spread: 2, SpreadSource: "[Barker1996]: overcast Sc about 5-10, broken 1-3 (from memory)",
		Help: "gamma shape of sub-grid LWP when the input has no LWP standard deviation", Source: "[Barker1996]; overcast Sc 5-10, broken 1-3 (from memory)",
		Literature: "1-3 broken Sc and Cu, 5-10 or more overcast Sc [Barker1996] (from memory); models often use 1 (from memory)",
		Get:        func(p *Params) float64 { return p.GammaShape }, Set: func(p *Params, v float64) { p.GammaShape = v }},
	{Name: "collector_radius", Option: "collector-radius", Unit: "um", Scale: 1e6, Min: 1, Max: 500,
		Help: "start radius of the collector drop", Source: "the drizzle-embryo radius of [KhairoutdinovKogan2000]; QC bit collector_not_larger when it is not larger than the cloud-top mean-volume radius",
		Literature: "25 um drizzle embryo [KhairoutdinovKogan2000]; 20-25 um separates cloud from drizzle drops [Wood2005] (from memory)",
		Get:        func(p *Params) float64 { return p.Collector.R0 }, Set: func(p *Params, v float64) { p.Collector.R0 = v }},
	{Name: "drizzle_radius", Option: "drizzle-radius", Unit: "um", Scale: 1e6, Min: 1, Max: 5000,
		Help: "radius at which the collector counts as a drizzle drop", Source: "CF standard-name table v83: drizzle drops are 0.2-0.5 mm across",
		Literature: "100-250 um: drizzle drops are 0.2-0.5 mm across [CFStdNames2023]",
		Get:        func(p *Params) float64 { return p.Collector.DrizzleRadius }, Set: func(p *Params, v float64) { p.Collector.DrizzleRadius = v }},
	{Name: "updraft", Option: "updraft", Unit: "m s-1", Scale: 1, Min: 0, Max: 20,
		Help: "updraft speed (0: collector released at cloud top, the stratocumulus picture; >0: enters at cloud base and is carried up first, a cumulus picture)", Source: "0 for stratocumulus: in tested Sc columns 0.5 m s-1 or more carries the collector out through cloud top",
		Literature: "about 0.1-1 m s-1 in stratocumulus, several m s-1 in cumulus (from memory)",
		Get:        func(p *Params) float64 { return p.Collector.Updraft }, Set: func(p *Params, v float64) { p.Collector.Updraft = v }},
	{Name: "collector_tolerance", Option: "collector-tolerance", Unit: "1", Scale: 1, Min: 0, Max: 0.1, MinOpen: true,
		Help: "relative tolerance per step of the collector-drop integrator", Source: "common practice",
		Get: func(p *Params) float64 { return p.Collector.RelTol }, Set: func(p *Params, v float64) { p.Collector.RelTol = v }},
	{Name: "subcloud_humidity", Option: "subcloud-humidity", Kind: ParamChoice, Choices: humidityProfileNames[:],
		Help:   "sub-cloud humidity (well-mixed: the cloud-base vapour mixing ratio conserved down to the surface; surface-rh: linear from the surface relative humidity to saturation at cloud base, for decoupled layers)",
		Source: "well-mixed boundary layer [Wood2012]",
		Get:    func(p *Params) float64 { return float64(p.SubCloudHumidity) }, Set: func(p *Params, v float64) { p.SubCloudHumidity = HumidityProfile(v) }},
	{Name: "surface_rh", Option: "surface-rh", Unit: "1", Scale: 1, Min: 0, Max: 1,
		Help: "surface relative humidity (0-1) when the input has none (with --subcloud-humidity surface-rh)", Source: "a common marine value (from memory)",
		Literature: "0.7-0.9 over the subtropical oceans (from memory)",
		Get:        func(p *Params) float64 { return p.SurfaceRH }, Set: func(p *Params, v float64) { p.SurfaceRH = v }},
	{Name: "drizzle_mean_radius", Option: "drizzle-mean-radius", Unit: "um", Scale: 1e6, Min: 21, Max: 200,
		Help: "mean radius of the drizzle drops above --drizzle-min-radius leaving cloud base (the size distribution that sets the surface drizzle)", Source: "Wood (2005, Part I; from memory); size fixed after vanZanten et al. (2005)",
		Literature: "30-50 um at the base of marine Sc [Wood2005] (from memory)",
		Get:        func(p *Params) float64 { return p.Drizzle.MeanRadius }, Set: func(p *Params, v float64) { p.Drizzle.MeanRadius = v }},
	{Name: "drizzle_min_radius", Option: "drizzle-min-radius", Unit: "um", Scale: 1e6, Min: 0, Max: 100,
		Help: "smallest drizzle drop radius of the cloud-base size distribution", Source: "[Wood2005] (drizzle: r > 20 um)",
		Literature: "20-25 um [Wood2005] (from memory)",
		Get:        func(p *Params) float64 { return p.Drizzle.MinRadius }, Set: func(p *Params, v float64) { p.Drizzle.MinRadius = v }},
	{Name: "drizzle_shape", Option: "drizzle-shape", Unit: "1", Scale: 1, Min: 0, Max: 20,
		Help: "gamma shape of the cloud-base drizzle size distribution (0: exponential)", Source: "truncated exponential [Wood2005]",
		Literature: "0 (exponential) [Wood2005]; 0-2 in other fits (from memory)",
		Get:        func(p *Params) float64 { return p.Drizzle.Shape }, Set: func(p *Params, v float64) { p.Drizzle.Shape = v }},
	{Name: "surface_pressure", Option: "surface-pressure", Unit: "hPa", Scale: 0.01, Min: 500, Max: 1100,
		Help: "surface pressure to place cloud base when the input has no cloud-top height", Source: "standard atmosphere (common practice)",
		Literature: "1013.25 hPa standard atmosphere [USStdAtm1976]; about 1000-1030 hPa at sea level (common practice)",
		Get:        func(p *Params) float64 { return p.SurfacePressure }, Set: func(p *Params, v float64) { p.SurfacePressure = v }},
	{Name: "default_ctt", Option: "default-ctt", Unit: "K", Scale: 1, Min: 230, Max: 320,
		Help: "cloud-top temperature when the input has none", Source: "mid-range of marine Sc tops [Wood2012] (from memory)",
		Literature: "280-290 K for marine Sc tops [Wood2012] (from memory)",
		Get:        func(p *Params) float64 { return p.DefaultCTT }, Set: func(p *Params, v float64) { p.DefaultCTT = v }},
	{Name: "default_ctp", Option: "default-ctp", Unit: "hPa", Scale: 0.01, Min: 200, Max: 1100,
		Help: "cloud-top pressure when the input has none", Source: "mid-range of marine Sc tops [Wood2012] (from memory)",
		Literature: "850-950 hPa for marine Sc tops [Wood2012] (from memory)",
		Get:        func(p *Params) float64 { return p.DefaultCTP }, Set: func(p *Params, v float64) { p.DefaultCTP = v }},
	{Name: "drizzle_law_a", Option: "drizzle-law", Unit: "1", Scale: 1, Min: 0, Max: 1e6, MinOpen: true,
		Spread: 0.15, SpreadSource: "published cloud-base drizzle laws differ in their coefficient by a factor near two (from memory; [Comstock2004], [Wood2012])",
		Help: "cloud-base drizzle rate R = a LWP^b N_d^-c as a,b,c (R mm day-1, LWP g m-2, N_d cm-3)", Source: "[Comstock2004] (from memory)",
		Literature: "b = c = 1.75 in the fit of [Comstock2004] (from memory); the N_d exponent c sets the susceptibility, 0.5-1.2 in marine Sc (from memory)",
		Get:        func(p *Params) float64 { return p.DrizzleCoef }, Set: func(p *Params, v float64) { p.DrizzleCoef = v }},
	{Name: "drizzle_law_b", Option: "drizzle-law", Unit: "1", Scale: 1, Min: 0, Max: 10,
		Spread: 0.25, SpreadSource: "published exponents of LWP and N_d span about 1.5-2 (from memory; [Comstock2004], [Wood2012])",
		Get: func(p *Params) float64 { return p.DrizzleLWPExp }, Set: func(p *Params, v float64) { p.DrizzleLWPExp = v }},
	{Name: "drizzle_law_c", Option: "drizzle-law", Unit: "1", Scale: 1, Min: 0, Max: 10,
		Spread: 0.25, SpreadSource: "as drizzle_law_b (from memory)",
		Get: func(p *Params) float64 { return p.DrizzleNdExp }, Set: func(p *Params, v float64) { p.DrizzleNdExp = v }},
	{Name: "kessler_rate", Option: "kessler-rate", Unit: "s-1", Scale: 1, Min: 0, Max: 1, MinOpen: true,
		Help: "Kessler rate constant", Source: "[GrabowskiSmolarkiewicz1996] eq. 5a",
		Literature: "1e-3 s-1 [GrabowskiSmolarkiewicz1996]; models use 1e-4 to 1e-3 s-1 (from memory)",
		Get:        func(p *Params) float64 { return p.KesslerRate }, Set: func(p *Params, v float64) { p.KesslerRate = v }},
	{Name: "kessler_threshold", Option: "kessler-threshold", Unit: "g kg-1", Scale: 1e3, Min: 0, Max: 10,
		Help: "Kessler threshold cloud-water mixing ratio", Source: "after [Kessler1969] (from memory; models use 0.2-1 g kg-1)",
		Literature: "0.2-1 g kg-1 in models; 0.5 g m-3 after [Kessler1969] (from memory)",
		Get:        func(p *Params) float64 { return p.KesslerThreshold }, Set: func(p *Params, v float64) { p.KesslerThreshold = v }},
	{Name: "seifert_beheng_shape", Option: "seifert-beheng-shape", Unit: "1", Scale: 1, Min: 0, Max: 100,
		Help: "cloud-droplet gamma shape nu (in mass) of the seifert-beheng2001 scheme", Source: "[SeifertBeheng2001] (from memory; the 2006 variant uses 2)",
		Literature: "1 in [SeifertBeheng2001], 2 in its 2006 variant (from memory)",
		Get:        func(p *Params) float64 { return p.SBShape }, Set: func(p *Params, v float64) { p.SBShape = v }},
	{Name: "collector_method", Option: "collector-method", Kind: ParamChoice, Choices: collectorMethodNames[:],
		Help: "collector and evaporation results (table: interpolated, tested to 0.5 %; direct: integrated per column, slow)", Source: "table error bound tested in microphys/table_test.go",
		Get: func(p *Params) float64 { return float64(p.CollectorMethod) }, Set: func(p *Params, v float64) { p.CollectorMethod = CollectorMethod(v) }},
	{Name: "no_collector", Option: "no-collector", Kind: ParamSwitch,
		Help: "skip the collector drop and the sub-cloud evaporation (surface drizzle)", Source: "common practice",
		Get: func(p *Params) float64 { return b2f(!p.EnableCollector) },
		Set: func(p *Params, v float64) {
			p.EnableCollector = v == 0
			p.EnableEvaporation = p.EnableEvaporation && v == 0
		}},
	{Name: "no_evaporation", Option: "no-evaporation", Kind: ParamSwitch,
		Help: "skip the sub-cloud evaporation (the surface drizzle and the collector drop's fall)", Source: "common practice",
		Get: func(p *Params) float64 { return b2f(!p.EnableEvaporation) },
		Set: func(p *Params, v float64) { p.EnableEvaporation = v == 0 && p.EnableCollector }},
	{Name: "min_lwp", Option: "min-lwp", Unit: "g m-2", Scale: 1e3, Min: 0, Max: 1000,
		Help: "screen columns with LWP below this", Source: "thin or broken cloud (common practice)",
		Get: func(p *Params) float64 { return p.MinLWP }, Set: func(p *Params, v float64) { p.MinLWP = v }},
	{Name: "min_tau", Option: "min-tau", Unit: "1", Scale: 1, Min: 0, Max: 100,
		Help: "screen columns with optical thickness below this", Source: "thin or broken cloud (common practice)",
		Get: func(p *Params) float64 { return p.MinTau }, Set: func(p *Params, v float64) { p.MinTau = v }},
	{Name: "re_range_min", Option: "re-range", Unit: "um", Scale: 1e6, Min: 0, Max: 100, MinOpen: true,
		Help: "valid effective-radius range as min,max", Source: "valid range of liquid r_e retrievals (common practice)",
		Literature: "retrievals of liquid r_e span about 4-30 um; 9-15 um in marine Sc [Wood2012] (from memory)",
		Get:        func(p *Params) float64 { return p.ReMin }, Set: func(p *Params, v float64) { p.ReMin = v }},
	{Name: "re_range_max", Option: "re-range", Unit: "um", Scale: 1e6, Min: 0, Max: 100, MinOpen: true,
		Get: func(p *Params) float64 { return p.ReMax }, Set: func(p *Params, v float64) { p.ReMax = v }},
	{Name: "min_ctt", Option: "min-ctt", Unit: "K", Scale: 1, Min: 200, Max: 320,
		Help: "screen columns with cloud-top temperature below this (possible ice)", Source: "common practice",
		Get: func(p *Params) float64 { return p.MinCTT }, Set: func(p *Params, v float64) { p.MinCTT = v }},
	{Name: "nd_range_min", Option: "nd-range", Unit: "cm-3", Scale: 1e-6, Min: 0, Max: 1e4, MinOpen: true,
		Help: "plausible droplet-number range as min,max", Source: "marine Sc [Wood2012] (from memory)",
		Literature: "50-150 cm-3 in remote marine Sc, 300 or more near coasts [Wood2012] (from memory)",
		Get:        func(p *Params) float64 { return p.NdMin }, Set: func(p *Params, v float64) { p.NdMin = v }},
	{Name: "nd_range_max", Option: "nd-range", Unit: "cm-3", Scale: 1e-6, Min: 0, Max: 1e5, MinOpen: true,
		Get: func(p *Params) float64 { return p.NdMax }, Set: func(p *Params, v float64) { p.NdMax = v }},
	{Name: "max_thickness", Option: "max-thickness", Unit: "m", Scale: 1, Min: 0, Max: 2e4, MinOpen: true,
		Help: "screen columns with adiabatic thickness above this", Source: "marine Sc [Wood2012] (from memory)",
		Literature: "150-500 m for marine Sc [Wood2012] (from memory)",
		Get:        func(p *Params) float64 { return p.HMax }, Set: func(p *Params, v float64) { p.HMax = v }},
	{Name: "droplet_number", Option: "droplet-number", Unit: "cm-3", Scale: 1e-6, Min: 1, Max: 5000, ZeroOff: true,
		Help:       "droplet number concentration assumed where the input has LWP but no effective radius (r_e follows from the adiabatic cloud; 0: none)",
		Source:     "an assumption the user states (about 100 marine, 300 continental: common practice)",
		Literature: "50-150 cm-3 in remote marine Sc, 300 or more near coasts [Wood2012] (from memory)",
		Get:        func(p *Params) float64 { return p.DropletNumber }, Set: func(p *Params, v float64) { p.DropletNumber = v }},
	{Name: "lwp_profile", Option: "lwp-profile", Kind: ParamChoice, Choices: []string{"adiabatic", "uniform"},
		Help:   "cloud profile for LWP from optical thickness and r_e when the input has no LWP: adiabatic (5/9 rho_w tau r_e) or uniform (2/3 rho_w tau r_e)",
		Source: "[Brenguier2000]; uniform [Stephens1978]",
		Get: func(p *Params) float64 {
			if p.UniformLWP {
				return 1
			}
			return 0
		},
		Set: func(p *Params, v float64) { p.UniformLWP = v == 1 }},
	{Name: "error_correlation", Option: "error-correlation", Unit: "1", Scale: 1, Min: -1, Max: 1,
		Help:   "correlation coefficient of the LWP and r_e retrieval errors (0: independent, as for a microwave LWP; nonzero when the product derived its LWP from tau and r_e, see doc/science.md#uncertainty)",
		Source: "0: independent errors, as for a microwave LWP (common practice)",
		Get:    func(p *Params) float64 { return p.ErrorCorrelation }, Set: func(p *Params, v float64) { p.ErrorCorrelation = v }},
	{Name: "parameter_uncertainty", Option: "parameter-uncertainty", Kind: ParamSwitch,
		Help:   "also write the parameter (structural) spread of every diagnostic, <name>_parameter_spread: k, f_ad, Q_ext, the onset radius, the drizzle law and the gamma shape perturbed by their spreads one at a time",
		Source: "one-at-a-time perturbation (doc/science.md#parameter-spread)",
		Get:    func(p *Params) float64 { return b2f(p.ParameterUncertainty) }, Set: func(p *Params, v float64) { p.ParameterUncertainty = v != 0 }},
	{Name: "min_cloud_fraction", Option: "min-cloud-fraction", Unit: "1", Scale: 1, Min: 0, Max: 1,
		Help: "with a grid-box-mean LWP, screen columns whose cloud fraction is below this", Source: "common practice",
		Get: func(p *Params) float64 { return p.MinCloudFraction }, Set: func(p *Params, v float64) { p.MinCloudFraction = v }},
}

func b2f(b bool) float64 {
	if b {
		return 1
	}
	return 0
}
