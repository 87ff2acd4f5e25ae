package microphys

import (
	"fmt"
	"math"
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
	// CondensationRate(CTT, CTP), e.g. 1.9e-6 [Brenguier2000]. NaN or 0 (default): c_w
	// from the cloud-top air state.
	FixedCw float64
	// ReStar is the drizzle-onset cloud-top effective radius r_e*, m. Default 14 µm
	// [RosenfeldGutman1994] (from memory); 13 µm and 15 µm are published alternatives
	// (physics notes §9.1).
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
	// SurfaceRH is the surface relative humidity used when a column gives none, 1.
	// Default 0.8 (a common marine value, from memory).
	SurfaceRH float64
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
		SurfaceRH:         0.8,
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
	}
}

// ParamError reports a parameter outside its allowed range.
type ParamError struct {
	Field string  // Params field name, e.g. "Fad" or "Collector.R0"
	Value float64 // the rejected value
	Want  string  // the allowed range
}

// Error describes the bad field, its value and the allowed range.
//
// Reference: none (software interface).
// Valid: always.
func (e *ParamError) Error() string {
	return fmt.Sprintf("microphys: parameter %s = %g out of range (want %s)", e.Field, e.Value, e.Want)
}

// Validate checks every parameter and returns a *ParamError naming the first bad field
// and its allowed range, or nil.
//
// Reference: the ranges are physical limits or common practice (see Params).
// Valid: always.
func (p Params) Validate() error {
	type rng struct {
		name   string
		v      float64
		lo, hi float64
		loOpen bool
		want   string
	}
	checks := []rng{
		{"K", p.K, 0, 1, true, "0 < K <= 1"},
		{"Qext", p.Qext, 0, 10, true, "0 < Qext <= 10"},
		{"Fad", p.Fad, 0, 1, true, "0 < Fad <= 1"},
		{"ReStar", p.ReStar, 1e-6, 100e-6, false, "1e-6 <= ReStar <= 1e-4 m"},
		{"OnsetWidth", p.OnsetWidth, 0, 20e-6, false, "0 <= OnsetWidth <= 2e-5 m"},
		{"GammaShape", p.GammaShape, 0, 1e6, true, "0 < GammaShape <= 1e6"},
		{"KesslerRate", p.KesslerRate, 0, 1, true, "0 < KesslerRate <= 1 s-1"},
		{"KesslerThreshold", p.KesslerThreshold, 0, 1e-2, false, "0 <= KesslerThreshold <= 1e-2 kg kg-1"},
		{"SBShape", p.SBShape, 0, 100, false, "0 <= SBShape <= 100"},
		{"SurfaceRH", p.SurfaceRH, 0, 1, false, "0 <= SurfaceRH <= 1"},
		{"SurfacePressure", p.SurfacePressure, 50000, 110000, false, "5e4 <= SurfacePressure <= 1.1e5 Pa"},
		{"DefaultCTT", p.DefaultCTT, 230, 320, false, "230 <= DefaultCTT <= 320 K"},
		{"DefaultCTP", p.DefaultCTP, 20000, 110000, false, "2e4 <= DefaultCTP <= 1.1e5 Pa"},
		{"DrizzleCoef", p.DrizzleCoef, 0, 1e6, true, "0 < DrizzleCoef <= 1e6"},
		{"DrizzleLWPExp", p.DrizzleLWPExp, 0, 10, false, "0 <= DrizzleLWPExp <= 10"},
		{"DrizzleNdExp", p.DrizzleNdExp, 0, 10, false, "0 <= DrizzleNdExp <= 10"},
		{"MinLWP", p.MinLWP, 0, 1, false, "0 <= MinLWP <= 1 kg m-2"},
		{"MinTau", p.MinTau, 0, 100, false, "0 <= MinTau <= 100"},
		{"ReMin", p.ReMin, 0, 100e-6, true, "0 < ReMin <= 1e-4 m"},
		{"ReMax", p.ReMax, p.ReMin, 100e-6, true, "ReMin < ReMax <= 1e-4 m"},
		{"MinCTT", p.MinCTT, 200, 320, false, "200 <= MinCTT <= 320 K"},
		{"NdMin", p.NdMin, 0, 1e10, true, "0 < NdMin <= 1e10 m-3"},
		{"NdMax", p.NdMax, p.NdMin, 1e11, true, "NdMin < NdMax <= 1e11 m-3"},
		{"HMax", p.HMax, 0, 2e4, true, "0 < HMax <= 2e4 m"},
		{"Collector.R0", p.Collector.R0, 1e-6, 500e-6, false, "1e-6 <= Collector.R0 <= 5e-4 m"},
		{"Collector.Updraft", p.Collector.Updraft, 0, 20, false, "0 <= Collector.Updraft <= 20 m s-1"},
		{"Collector.DrizzleRadius", p.Collector.DrizzleRadius, 1e-6, 5e-3, false, "1e-6 <= Collector.DrizzleRadius <= 5e-3 m"},
		{"Collector.RelTol", p.Collector.RelTol, 0, 0.1, true, "0 < Collector.RelTol <= 0.1"},
	}
	for _, c := range checks {
		ok := c.v <= c.hi && (c.v > c.lo || (!c.loOpen && c.v == c.lo))
		if !ok { // also catches NaN
			return &ParamError{Field: c.name, Value: c.v, Want: c.want}
		}
	}
	if !(p.FixedCw == 0 || math.IsNaN(p.FixedCw) || (p.FixedCw >= 1e-7 && p.FixedCw <= 1e-5)) {
		return &ParamError{"FixedCw", p.FixedCw, "0 or NaN (c_w from the air state), or 1e-7 <= FixedCw <= 1e-5 kg m-4"}
	}
	if p.Autoconv < 0 || int(p.Autoconv) >= len(autoconvNames) {
		return &ParamError{"Autoconv", float64(p.Autoconv), "one of " + autoconvNameList()}
	}
	if p.CollectorMethod != CollectorTable && p.CollectorMethod != CollectorDirect {
		return &ParamError{"CollectorMethod", float64(p.CollectorMethod), "table or direct"}
	}
	if !(p.OnsetWidth < 2*p.ReStar) {
		return &ParamError{"OnsetWidth", p.OnsetWidth, "OnsetWidth < 2 ReStar (the onset range starts above 0)"}
	}
	if _, err := ParseCollisionKind(p.Collision.String()); err != nil {
		return &ParamError{"Collision", float64(p.Collision), "a CollisionKind"}
	}
	if _, err := ParseCoalescenceKind(p.Coalescence.String()); err != nil {
		return &ParamError{"Coalescence", float64(p.Coalescence), "a CoalescenceKind"}
	}
	if p.EnableEvaporation && !p.EnableCollector {
		return &ParamError{"EnableEvaporation", 1, "false when EnableCollector is false (evaporation follows the collector drop)"}
	}
	return nil
}

// Setting is one parameter as text, for provenance attributes.
type Setting struct {
	Name  string // lowercase words joined with _
	Value string
}

// Settings lists every parameter as (name, value) text pairs in a fixed order, for the
// global attributes of an output file. It allocates.
//
// Reference: none (software interface).
// Valid: always.
func (p Params) Settings() []Setting {
	f := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	b := strconv.FormatBool
	return []Setting{
		{"k_ratio", f(p.K)},
		{"extinction_efficiency", f(p.Qext)},
		{"adiabatic_fraction", f(p.Fad)},
		{"fixed_condensation_rate", f(p.FixedCw)},
		{"onset_effective_radius", f(p.ReStar)},
		{"onset_width", f(p.OnsetWidth)},
		{"gamma_shape", f(p.GammaShape)},
		{"autoconversion", p.Autoconv.String()},
		{"kessler_rate", f(p.KesslerRate)},
		{"kessler_threshold", f(p.KesslerThreshold)},
		{"seifert_beheng_shape", f(p.SBShape)},
		{"collision_efficiency", p.Collision.String()},
		{"coalescence_efficiency", p.Coalescence.String()},
		{"collector_start_radius", f(p.Collector.R0)},
		{"collector_updraft", f(p.Collector.Updraft)},
		{"collector_drizzle_radius", f(p.Collector.DrizzleRadius)},
		{"collector_rel_tol", f(p.Collector.RelTol)},
		{"collector_method", p.CollectorMethod.String()},
		{"enable_collector", b(p.EnableCollector)},
		{"enable_evaporation", b(p.EnableEvaporation)},
		{"surface_relative_humidity", f(p.SurfaceRH)},
		{"surface_pressure", f(p.SurfacePressure)},
		{"default_cloud_top_temperature", f(p.DefaultCTT)},
		{"default_cloud_top_pressure", f(p.DefaultCTP)},
		{"drizzle_coefficient", f(p.DrizzleCoef)},
		{"drizzle_lwp_exponent", f(p.DrizzleLWPExp)},
		{"drizzle_nd_exponent", f(p.DrizzleNdExp)},
		{"min_lwp", f(p.MinLWP)},
		{"min_tau", f(p.MinTau)},
		{"min_effective_radius", f(p.ReMin)},
		{"max_effective_radius", f(p.ReMax)},
		{"min_cloud_top_temperature", f(p.MinCTT)},
		{"min_droplet_number", f(p.NdMin)},
		{"max_droplet_number", f(p.NdMax)},
		{"max_thickness", f(p.HMax)},
	}
}
