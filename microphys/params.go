package microphys

import (
	"fmt"
	"strconv"
)

// CollectorMethod chooses how Model.Column obtains the collector-drop and sub-cloud
// evaporation results.
type CollectorMethod int

const (
	// CollectorTable interpolates precomputed direct integrations (built once in NewModel;
	// see table.go for the tested error bound). Columns outside the table are integrated
	// directly and flagged QCTableRangeExceeded. This is the default.
	CollectorTable CollectorMethod = iota
	// CollectorDirect integrates CollectDirect and EvaporateDirect for every column (slow;
	// for checking).
	CollectorDirect
)

var collectorMethodNames = [...]string{"table", "direct"}

// String returns the method's name: "table" or "direct".
//
// Reference: none (software interface).
// Valid: always.
func (c CollectorMethod) String() string {
	if c < 0 || int(c) >= len(collectorMethodNames) {
		return "CollectorMethod(" + strconv.Itoa(int(c)) + ")"
	}
	return collectorMethodNames[c]
}

// ParseCollectorMethod returns the method named s ("table" or "direct"), or an error
// listing the valid names.
//
// Reference: none (software interface).
// Valid: any string; unknown names give an error.
func ParseCollectorMethod(s string) (CollectorMethod, error) {
	for i, n := range collectorMethodNames {
		if s == n {
			return CollectorMethod(i), nil
		}
	}
	return 0, fmt.Errorf("microphys: unknown collector method %q (want table or direct)", s)
}

// HumidityProfile chooses the relative humidity of the sub-cloud layer (SubCloudLayer).
type HumidityProfile int

const (
	// HumidityWellMixed conserves the vapour mixing ratio of cloud base down to the surface
	// (a layer mixed with the cloud, as its dry-adiabatic temperature assumes). The default.
	HumidityWellMixed HumidityProfile = iota
	// HumiditySurfaceRH takes the column's surface relative humidity (or Params.SurfaceRH)
	// and rises linearly to saturation at cloud base: for layers decoupled from the cloud.
	HumiditySurfaceRH
)

var humidityProfileNames = [...]string{"well-mixed", "surface-rh"}

// String returns the profile's name: "well-mixed" or "surface-rh".
//
// Reference: none (software interface).
// Valid: always.
func (h HumidityProfile) String() string {
	if h < 0 || int(h) >= len(humidityProfileNames) {
		return "HumidityProfile(" + strconv.Itoa(int(h)) + ")"
	}
	return humidityProfileNames[h]
}

// ParseHumidityProfile returns the profile named s ("well-mixed" or "surface-rh"), or an
// error listing the valid names.
//
// Reference: none (software interface).
// Valid: any string; unknown names give an error.
func ParseHumidityProfile(s string) (HumidityProfile, error) {
	for i, n := range humidityProfileNames {
		if s == n {
			return HumidityProfile(i), nil
		}
	}
	return 0, fmt.Errorf("microphys: unknown sub-cloud humidity %q (want well-mixed or surface-rh)", s)
}

// Params holds every parameter of the column model. Start from DefaultParams and change
// fields; NewModel validates them. All values are SI base units.
type Params struct {
	// K is the ratio k = (r_v/r_e)^3 of mean-volume to effective radius cubed, 1.
	// Default 0.8 [Brenguier2000] (k ranges 0.6-0.9 and increases with N_d [LebsockWitte2023]).
	K float64
	// Qext is the extinction efficiency, 1. Default 2 (geometric optics) [Brenguier2000].
	Qext float64
	// Fad is the adiabatic fraction f_ad in (0, 1], 1. Default 1 [Brenguier2000]
	// (0.6-0.9 is common in stratocumulus, from memory).
	Fad float64
	// FixedCw, when > 0, is a fixed condensation rate c_w (kg m-4) used instead of
	// CondensationRate(CTP, CTT), e.g. 1.9e-6 [Brenguier2000]. NaN or 0 (default): c_w
	// from the cloud-top air state.
	FixedCw float64
	// ReStar is the drizzle-onset cloud-top effective radius r_e*, m. Default 14 µm
	// [RosenfeldGutman1994] (from memory); 13 µm and 15 µm are published alternatives
	// (doc/science.md#drizzle-onset).
	ReStar float64
	// OnsetWidth is the full width of the r_e range over which the drizzle-onset probability
	// of a sub-grid column rises linearly from 0 to 1, centred on ReStar, m (Onset). Default
	// 4 µm: published onset radii span 12-16 µm (13 µm [Braga2021], 14 µm
	// [RosenfeldGutman1994] from memory, 15 µm Ba & Gruber 2001 and 16 µm Gerber 1996 from
	// memory). 0 is the knife-edge step at ReStar.
	OnsetWidth float64
	// GammaShape is the shape nu of the sub-grid gamma distribution of LWP used when a
	// column has no LWP standard deviation, 1. Default 4: between the broken-cloud (1-3)
	// and overcast-stratocumulus (5-10) values, which are from memory; the gamma
	// construction itself is from [Barker1996].
	GammaShape float64
	// Autoconv is the autoconversion scheme of the column conversion rate. Default
	// AutoconvKK2000 [KhairoutdinovKogan2000].
	Autoconv AutoconvScheme
	// KesslerRate is the Kessler rate constant k_1, s-1. Default 1e-3
	// [GrabowskiSmolarkiewicz1996] eq. 5a.
	KesslerRate float64
	// KesslerThreshold is the Kessler threshold mixing ratio q_c0, kg kg-1. Default 5e-4
	// (0.5 g kg-1 after [Kessler1969], from memory; models use 0.2-1 g kg-1).
	KesslerThreshold float64
	// SBShape is the Seifert-Beheng cloud-droplet gamma shape nu (in mass), 1. Default 1
	// (from memory; the 2006 variant uses 2).
	SBShape float64
	// Collision and Coalescence choose the collector drop's efficiencies. Defaults
	// CollisionHall [Hall1980] and CoalescenceBlend [Seifert2005]. They override
	// Collector.Collision and Collector.Coalescence.
	Collision   CollisionKind
	Coalescence CoalescenceKind
	// Collector is the collector-drop setup (start radius, updraft, drizzle radius,
	// tolerance). Default DefaultCollectorSetup().
	Collector CollectorSetup
	// CollectorMethod chooses table interpolation (default) or direct integration.
	CollectorMethod CollectorMethod
	// EnableCollector and EnableEvaporation switch the collector drop and its sub-cloud
	// evaporation on (default both true). Evaporation needs the collector.
	EnableCollector   bool
	EnableEvaporation bool
	// SubCloudHumidity chooses the sub-cloud humidity profile. Default HumidityWellMixed
	// (the vapour mixing ratio of cloud base conserved down to the surface, consistent
	// with the dry-adiabatic temperature of the layer [Wood2012]); HumiditySurfaceRH uses
	// the surface relative humidity (for decoupled layers).
	SubCloudHumidity HumidityProfile
	// SurfaceRH is the surface relative humidity used when a column gives none, 1
	// (HumiditySurfaceRH only). Default 0.8 (a common marine value, from memory).
	SurfaceRH float64
	// Drizzle is the size distribution of the drizzle drops leaving cloud base, whose
	// number is closed by the cloud-base drizzle rate (SurfaceDrizzleFraction). Default
	// DefaultDrizzleDSD: exponential above 20 µm [Wood2005] with mean radius 50 µm (from
	// memory); its size and shape are fixed because drizzling and non-drizzling regions
	// differ mainly in drizzle drop number, not size [VanZanten2005].
	Drizzle DrizzleDSD
	// SurfacePressure is the surface pressure used to place cloud base when the column
	// gives no cloud-top height, Pa. Default 101325 (standard atmosphere, common practice).
	SurfacePressure float64
	// DefaultCTT and DefaultCTP are the cloud-top temperature (K) and pressure (Pa) used
	// when a column gives none. Defaults 285 K and 90000 Pa: mid-range of marine
	// stratocumulus tops, 280-290 K and 850-950 hPa [Wood2012] (from memory).
	DefaultCTT float64
	DefaultCTP float64
	// DrizzleCoef, DrizzleLWPExp and DrizzleNdExp are a, b, c of the cloud-base drizzle
	// rate R = a LWP^b N_d^-c (R in mm day-1, LWP in g m-2, N_d in cm-3). Defaults 0.37,
	// 1.75, 1.75 [Comstock2004] (from memory).
	DrizzleCoef   float64
	DrizzleLWPExp float64
	DrizzleNdExp  float64
	// Screening thresholds. Defaults: MinLWP 5e-3 kg m-2 and MinTau 3 (thin or broken
	// cloud; common practice), ReMin 4 µm and ReMax 30 µm (valid range of liquid
	// effective-radius retrievals; common practice), MinCTT 273.15 K (possible ice below
	// freezing; common practice), NdMin 10 cm-3 and NdMax 1000 cm-3 and HMax 1500 m
	// (plausibility for marine stratocumulus [Wood2012], from memory).
	MinLWP float64
	MinTau float64
	ReMin  float64
	ReMax  float64
	MinCTT float64
	NdMin  float64
	NdMax  float64
	HMax   float64
	// Input completion (Model.Complete). DropletNumber is the droplet number concentration
	// (m-3) assumed where a column has LWP but no r_e (0: none; an assumption the user
	// states). UniformLWP derives LWP from tau and r_e for a vertically uniform cloud
	// [Stephens1978] instead of the adiabatic one [Brenguier2000]. MinCloudFraction is the
	// smallest cloud fraction a grid-box-mean LWP is divided by, default 0.05 (common
	// practice).
	DropletNumber    float64
	UniformLWP       bool
	MinCloudFraction float64
	// Uncertainty (uncertainty.go). ErrorCorrelation is the correlation coefficient of the
	// LWP and r_e retrieval errors, -1..1 (default 0: independent; for an LWP that is the
	// product's own tau r_e, the derived value is in doc/science.md#uncertainty).
	// ParameterUncertainty asks for the parameter (structural) spread of every diagnostic
	// (SpreadModels) besides the retrieval part.
	ErrorCorrelation     float64
	ParameterUncertainty bool
}

// DefaultParams returns the documented defaults of every parameter (see Params).
//
// Reference: the sources named on each field of Params.
// Valid: always.
func DefaultParams() Params {
	return Params{
		K:                 0.8,
		Qext:              2,
		Fad:               1,
		FixedCw:           0,
		ReStar:            14e-6,
		OnsetWidth:        4e-6,
		GammaShape:        4,
		Autoconv:          AutoconvKK2000,
		KesslerRate:       1e-3,
		KesslerThreshold:  5e-4,
		SBShape:           1,
		Collision:         CollisionHall,
		Coalescence:       CoalescenceBlend,
		Collector:         DefaultCollectorSetup(),
		CollectorMethod:   CollectorTable,
		EnableCollector:   true,
		EnableEvaporation: true,
		SubCloudHumidity:  HumidityWellMixed,
		SurfaceRH:         0.8,
		Drizzle:           DefaultDrizzleDSD(),
		SurfacePressure:   101325,
		DefaultCTT:        285,
		DefaultCTP:        90000,
		DrizzleCoef:       0.37,
		DrizzleLWPExp:     1.75,
		DrizzleNdExp:      1.75,
		MinLWP:            5e-3,
		MinTau:            3,
		ReMin:             4e-6,
		ReMax:             30e-6,
		MinCTT:            273.15,
		NdMin:             10e6,
		NdMax:             1000e6,
		HMax:              1500,
		MinCloudFraction:  0.05,
	}
}

// ParamError reports a parameter outside its allowed range, in the terms of its
// declaration (ParamDecls): the provenance name, the option, the value and range in the
// unit users type.
type ParamError struct {
	Field  string  // ParamDecl.Name, e.g. "adiabatic_fraction" or "re_range_max"
	Option string  // ParamDecl.Option, e.g. "adiabatic-fraction"
	Value  float64 // the rejected value, in the unit users type
	Want   string  // the allowed range, e.g. "between 1 and 100 um"
}

// Error describes the bad parameter by its option, with the allowed range and the value in
// the unit users type (never the Go field name).
//
// Reference: none (software interface).
// Valid: always.
func (e *ParamError) Error() string {
	for i := range ParamDecls {
		if ParamDecls[i].Option == e.Option && ParamDecls[i].Kind == ParamSwitch {
			return fmt.Sprintf("--%s must be %s", e.Option, e.Want)
		}
	}
	return fmt.Sprintf("--%s must be %s (got %g)", e.Option, e.Want, e.Value)
}

// Validate checks every parameter against its row of ParamDecls, then the relations
// between them, and returns a *ParamError naming the first bad one and its allowed range,
// or nil.
//
// Reference: the ranges are physical limits or common practice (see ParamDecls).
// Valid: always.
func (p Params) Validate() error {
	for i := range ParamDecls {
		d := &ParamDecls[i]
		if u := d.FromSI(d.Get(&p)); !d.inRange(u) { // also catches NaN
			return &ParamError{Field: d.Name, Option: d.Option, Value: u, Want: d.RangeText()}
		}
	}
	byName := func(name string) *ParamDecl {
		for i := range ParamDecls {
			if ParamDecls[i].Name == name {
				return &ParamDecls[i]
			}
		}
		panic("microphys: no parameter " + name)
	}
	for _, c := range [][2]string{{"re_range_min", "re_range_max"}, {"nd_range_min", "nd_range_max"}, {"drizzle_min_radius", "drizzle_mean_radius"}} {
		lo, hi := byName(c[0]), byName(c[1])
		if !(hi.Get(&p) > lo.Get(&p)) {
			want := "above --" + lo.Option + " " + lo.Text(lo.FromSI(lo.Get(&p)))
			if lo.Option == hi.Option {
				want = "a maximum above the minimum " + lo.Text(lo.FromSI(lo.Get(&p)))
			}
			if lo.Unit != "" && lo.Unit != "1" {
				want += " " + lo.Unit
			}
			return &ParamError{Field: hi.Name, Option: hi.Option, Value: hi.FromSI(hi.Get(&p)), Want: want}
		}
	}
	if w := byName("onset_width"); !(p.OnsetWidth < 2*p.ReStar) {
		return &ParamError{Field: w.Name, Option: w.Option, Value: w.FromSI(p.OnsetWidth),
			Want: "below twice the onset radius (the onset range starts above 0)"}
	}
	if p.EnableEvaporation && !p.EnableCollector {
		return &ParamError{"no_evaporation", "no-evaporation", 0, "given when --no-collector is (the evaporation follows the collector drop)"}
	}
	return nil
}

// Setting is one parameter as text, for provenance attributes.
type Setting struct {
	Name  string // ParamDecl.Name: the option's words joined with _
	Value string // in the unit users type (Unit), a choice's name, or true/false
	Unit  string // ParamDecl.Unit ("1" for a pure number, "" for choices and switches)
}

// Settings lists every parameter of ParamDecls as text in the units users type, in table
// order, for the global attributes of an output file. It allocates.
//
// Reference: none (software interface).
// Valid: always.
func (p Params) Settings() []Setting {
	s := make([]Setting, len(ParamDecls))
	for i := range ParamDecls {
		d := &ParamDecls[i]
		s[i] = Setting{d.Name, d.Text(d.FromSI(d.Get(&p))), d.Unit}
	}
	return s
}
