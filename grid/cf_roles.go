package grid

import (
	"fmt"
	"strings"
)

// Role is an input quantity the tool can read.
type Role string

// The input roles. RoleLWP and RoleRe are required unless the run can complete
// them (see Open): LWP from tau and r_e, r_e from LWP and a droplet number.
const (
	RoleLWP           Role = "lwp"
	RoleRe            Role = "re"
	RoleTau           Role = "tau"
	RoleCTT           Role = "ctt"
	RoleCTP           Role = "ctp"
	RoleCTH           Role = "cth"
	RoleCloudFraction Role = "cloud_fraction"
	RoleLWPSD         Role = "lwp_sd"
	RoleNd            Role = "nd"         // droplet number concentration (model CDNC, a separate retrieval)
	RolePhase         Role = "phase"      // cloud-top phase flag (CF flag_values/flag_meanings)
	RoleMultilayer    Role = "multilayer" // multi-layer cloud flag (CF flag_values/flag_meanings)
	// RoleLWPSE, RoleReSE and RoleTauSE are the retrieval standard errors (uncertainties) of
	// LWP, r_e and tau: absolute in the role's units, or relative (Binding.Relative) when
	// the variable is in percent.
	RoleLWPSE Role = "lwp_se"
	RoleReSE  Role = "re_se"
	RoleTauSE Role = "tau_se"
	// RoleQuality1 .. RoleQuality6 are the quality variables named by masks
	// (OpenOptions.Masks); they are never discovered or bound by an override.
	RoleQuality1 Role = "quality1"
	RoleQuality2 Role = "quality2"
	RoleQuality3 Role = "quality3"
	RoleQuality4 Role = "quality4"
	RoleQuality5 Role = "quality5"
	RoleQuality6 Role = "quality6"
)

// NumRoles is the number of input roles; Roles lists them in table order, which is
// also the index order of Slab.In.
const NumRoles = 20

// NumQualitySlots is how many distinct quality variables masks may name in one run.
const NumQualitySlots = 6

// Roles lists every role in table order.
var Roles = [NumRoles]Role{RoleLWP, RoleRe, RoleTau, RoleCTT, RoleCTP, RoleCTH, RoleCloudFraction, RoleLWPSD,
	RoleNd, RolePhase, RoleMultilayer, RoleLWPSE, RoleReSE, RoleTauSE, RoleQuality1, RoleQuality2, RoleQuality3, RoleQuality4, RoleQuality5, RoleQuality6}

// Index returns the role's index in Roles, or -1.
func (r Role) Index() int {
	for i, x := range Roles {
		if x == r {
			return i
		}
	}
	return -1
}

// RoleRule says how an input role is recognised. The table RoleRules is data.
type RoleRule struct {
	Role          Role
	Description   string
	Required      bool
	StandardNames []string // CF standard names (table v83), aliases included
	Units         string   // canonical units in memory ("" for flag codes: no units, no conversion)
	CommonNames   []string // variable names tried when no standard_name matches (case-insensitive)
	// LowerNames are standard names of older CF tables and of the CMIP/CFMIP data
	// requests that mean nearly the same quantity (condensed water = liquid + ice, a
	// 3-D name used for a top field). They are tried after StandardNames and
	// before CommonNames, only on LWP's dimensions, and the binding says so.
	LowerNames []string
	// GenericNames are variable names that usually, not always, hold the role (a
	// product's all-phase cloud water path, a generic effective radius); tried
	// last.
	GenericNames []string
	// Internal roles are bound only by the run (masks), never by discovery or an
	// override.
	Internal bool
	// ErrorOf is the role whose retrieval standard error this role is ("" for the others).
	// Such a role is found by its role's standard names with the standard_error modifier,
	// in its role's ancillary_variables, or by CommonNames; it is bound only when its role
	// is, and its units may also be a percentage (Binding.Relative).
	ErrorOf Role
	// Plausible is the range, in Units, in which the bulk of a real field of the role lies
	// ([0, 0] for flag codes: no check). A median outside it means the units are wrong
	// (r_e declared in mm, LWP in kg m-2 that is in g m-2): Input.Sample measures it.
	Plausible [2]float64
}

// plausible gives the Plausible ranges of RoleRules, canonical units, with their sources:
// LWP of liquid clouds 1 g m-2 to 3 kg m-2 and its sub-grid standard deviation up to the
// same; cloud-top r_e of liquid water 1-60 um (the retrieval ranges of the passive imager
// products, from memory); optical thickness 0-500; cloud-top temperature 150-350 K,
// pressure 50-1100 hPa, height 0-25 km (the troposphere, common practice); fractions 0-1
// (by definition); droplet number 1-10000 cm-3 (marine to polluted, [Wood2012] from
// memory, with a decade of margin).
var plausible = map[Role][2]float64{
	RoleLWP: {1e-3, 3}, RoleLWPSD: {0, 3}, RoleRe: {1e-6, 60e-6}, RoleTau: {0, 500},
	RoleCTT: {150, 350}, RoleCTP: {5e3, 1.1e5}, RoleCTH: {0, 2.5e4}, RoleCloudFraction: {0, 1},
	RoleNd: {1e6, 1e10},
}

func init() {
	for i := range RoleRules {
		RoleRules[i].Plausible = plausible[RoleRules[i].Role]
	}
}

// Codes reports whether the role holds flag codes rather than a quantity.
func (r RoleRule) Codes() bool { return r.Units == "" }

// lwpNames are the standard names of a liquid water path (used by RoleLWP and,
// with a standard-deviation marker, by RoleLWPSD).
var lwpNames = []string{
	"atmosphere_mass_content_of_cloud_liquid_water",
	"atmosphere_cloud_liquid_water_content", // old alias
}

// RoleRules is the rule table, in role order. Sources: CF standard name table
// v83 (canonical units as listed there); the CMIP6/CFMIP variable names (lwp,
// clwvi, reffclwtop, ccldncl, clt) as published in the CMIP6 data request, from
// memory; the product variable names (MODIS/VIIRS cloud products, CM SAF CLAAS,
// ESA Cloud_cci, GOES-R ABI, ERA5, MERRA-2, CESM/E3SM, ICON) from their users'
// guides, from memory; the short common names are common practice.
var RoleRules = [NumRoles]RoleRule{
	{Role: RoleLWP, Description: "liquid water path", Required: true, StandardNames: lwpNames, Units: "kg m-2",
		CommonNames: []string{"lwp", "clwp", "liquid_water_path", "cloud_liquid_water_path", "lwp_liquid", "cwp_liquid", "LWP_liquid",
			"Cloud_Water_Path_Liquid_Mean", "Cloud_Water_Path_Liquid", "cloud_water_path_liquid", "lwp_allsky",
			"tclw", "TQL", "TGCLDLWP", "tqc", "cloudlwp"},
		LowerNames:   []string{"atmosphere_mass_content_of_cloud_condensed_water", "atmosphere_cloud_condensed_water_content"},
		GenericNames: []string{"Cloud_Water_Path", "cloud_water_path", "cwp", "clwvi"}},
	{Role: RoleRe, Description: "cloud-top effective radius of liquid droplets", Required: true, StandardNames: []string{
		"effective_radius_of_cloud_liquid_water_particles_at_liquid_water_cloud_top",
		"effective_radius_of_cloud_liquid_water_particle_at_liquid_water_cloud_top", // alias
		"effective_radius_of_convective_cloud_liquid_water_particles_at_convective_liquid_water_cloud_top",
		"effective_radius_of_stratiform_cloud_liquid_water_particles_at_stratiform_liquid_water_cloud_top",
	}, Units: "m", CommonNames: []string{"re", "reff", "r_e", "cer", "cer_liquid", "cer_liq", "cre", "cloud_effective_radius", "cloud_effective_radius_liquid",
		"ref", "re_liquid", "reffclwtop", "reffclwmodis", "Cloud_Effective_Radius_Liquid_Mean",
		"Cloud_Effective_Radius_Liquid"},
		GenericNames: []string{"effective_radius", "Cloud_Effective_Radius", "cloud_effective_radius_all", "PSD"},
		LowerNames: []string{
			"effective_radius_of_cloud_liquid_water_particle", // older tables, used for top fields
			"effective_radius_of_cloud_liquid_water_particles",
			"effective_radius_of_stratiform_cloud_liquid_water_particle",
			"effective_radius_of_stratiform_cloud_liquid_water_particles",
			"effective_radius_of_cloud_condensed_water_particles_at_cloud_top", // liquid + ice
		}},
	{Role: RoleTau, Description: "cloud optical thickness", StandardNames: []string{
		"atmosphere_optical_thickness_due_to_cloud",
		"atmosphere_optical_thickness_due_to_convective_cloud",
		"atmosphere_optical_thickness_due_to_stratiform_cloud",
	}, Units: "1", CommonNames: []string{"tau", "cot", "cod", "cloud_optical_thickness", "cloud_optical_depth", "cot_liquid", "cot_liq", "tau_liquid",
		"tauwmodis", "Cloud_Optical_Thickness_Liquid_Mean", "Cloud_Optical_Thickness_Liquid"},
		GenericNames: []string{"Cloud_Optical_Thickness", "COD"}},
	{Role: RoleCTT, Description: "cloud-top temperature", StandardNames: []string{
		"air_temperature_at_cloud_top",
		"air_temperature_at_effective_cloud_top_defined_by_infrared_radiation",
		"brightness_temperature_at_cloud_top",
	}, Units: "K", CommonNames: []string{"ctt", "cloud_top_temperature", "cloud_top_temp", "Cloud_Top_Temperature", "Cloud_Top_Temperature_Mean"}},
	{Role: RoleCTP, Description: "cloud-top pressure", StandardNames: []string{
		"air_pressure_at_cloud_top",
		"pressure_at_effective_cloud_top_defined_by_infrared_radiation",
	}, Units: "Pa", CommonNames: []string{"ctp", "cloud_top_pressure", "Cloud_Top_Pressure", "Cloud_Top_Pressure_Mean", "pctisccp"}},
	{Role: RoleCTH, Description: "cloud-top height", StandardNames: []string{
		"height_at_cloud_top",
		"cloud_top_altitude",
		"geopotential_height_at_cloud_top",
		"height_at_effective_cloud_top_defined_by_infrared_radiation",
	}, Units: "m", CommonNames: []string{"cth", "cloud_top_height", "cloud_top_altitude", "zct", "Cloud_Top_Height", "Cloud_Top_Height_Mean"}},
	{Role: RoleCloudFraction, Description: "cloud fraction", StandardNames: []string{
		"cloud_area_fraction",
		"liquid_water_cloud_area_fraction",
	}, Units: "1", CommonNames: []string{"cf", "cfc", "cloud_fraction", "cloud_area_fraction", "cldfrac", "liquid_cloud_fraction",
		"clt", "tcc", "CLDTOT", "clct", "Cloud_Fraction_Liquid"},
		GenericNames: []string{"Cloud_Fraction"}},
	{Role: RoleLWPSD, Description: "standard deviation of the liquid water path", Units: "kg m-2",
		CommonNames: []string{"lwp_sd", "lwp_std", "lwp_stddev", "lwp_standard_deviation", "clwp_std",
			"liquid_water_path_standard_deviation", "Cloud_Water_Path_Liquid_Standard_Deviation"}},
	{Role: RoleNd, Description: "cloud droplet number concentration", StandardNames: []string{
		"number_concentration_of_cloud_liquid_water_particles_in_air_at_liquid_water_cloud_top",
		"number_concentration_of_stratiform_cloud_liquid_water_particles_at_stratiform_liquid_water_cloud_top",
		"number_concentration_of_convective_cloud_liquid_water_particles_at_convective_liquid_water_cloud_top",
	}, Units: "m-3", CommonNames: []string{"nd", "n_d", "cdnc", "cdnc_top", "ccldncl", "droplet_number", "droplet_number_concentration"},
		LowerNames: []string{"number_concentration_of_cloud_liquid_water_particles_in_air"}},
	{Role: RolePhase, Description: "cloud-top thermodynamic phase flag", StandardNames: []string{
		"thermodynamic_phase_of_cloud_water_particles_at_cloud_top",
	}, CommonNames: []string{"phase", "cph", "cloud_phase", "cloud_top_phase", "Cloud_Phase_Optical_Properties",
		"cloud_phase_optical_properties", "Phase"}},
	{Role: RoleMultilayer, Description: "multi-layer cloud flag", CommonNames: []string{"multilayer", "multi_layer", "multilayer_flag",
		"multi_layer_flag", "cloud_multi_layer_flag", "Cloud_Multi_Layer_Flag"}},
	// Retrieval uncertainties: MODIS MOD06/MYD06 Cloud_*_Uncertainty ("Relative Uncertainty
	// (Percent)" in their long_name, confirmed from the product's published file description;
	// the level-3 MOD08/MYD08 *_Mean_Uncertainty are absolute, in the quantity's units),
	// ESA Cloud_cci *_uncertainty (absolute, from memory), the short forms common practice.
	{Role: RoleLWPSE, Description: "standard error (retrieval uncertainty) of the liquid water path", Units: "kg m-2", ErrorOf: RoleLWP,
		CommonNames: []string{"lwp_se", "lwp_uncertainty", "lwp_unc", "lwp_error", "cwp_uncertainty", "cwp_unc", "clwp_uncertainty",
			"liquid_water_path_uncertainty", "Cloud_Water_Path_Liquid_Uncertainty", "Cloud_Water_Path_Uncertainty",
			"Cloud_Water_Path_Liquid_Mean_Uncertainty"}},
	{Role: RoleReSE, Description: "standard error (retrieval uncertainty) of the cloud-top effective radius", Units: "m", ErrorOf: RoleRe,
		CommonNames: []string{"re_se", "re_uncertainty", "re_unc", "re_error", "reff_uncertainty", "cer_uncertainty", "cer_unc",
			"ref_uncertainty", "cloud_effective_radius_uncertainty", "Cloud_Effective_Radius_Liquid_Uncertainty", "Cloud_Effective_Radius_Uncertainty",
			"Cloud_Effective_Radius_Liquid_Mean_Uncertainty"}},
	{Role: RoleTauSE, Description: "standard error (retrieval uncertainty) of the cloud optical thickness", Units: "1", ErrorOf: RoleTau,
		CommonNames: []string{"tau_se", "tau_uncertainty", "tau_unc", "tau_error", "cot_uncertainty", "cot_unc", "cod_uncertainty",
			"cloud_optical_thickness_uncertainty", "Cloud_Optical_Thickness_Liquid_Uncertainty", "Cloud_Optical_Thickness_Uncertainty",
			"Cloud_Optical_Thickness_Liquid_Mean_Uncertainty"}},
	{Role: RoleQuality1, Description: "quality variable 1 of the masks", Internal: true},
	{Role: RoleQuality2, Description: "quality variable 2 of the masks", Internal: true},
	{Role: RoleQuality3, Description: "quality variable 3 of the masks", Internal: true},
	{Role: RoleQuality4, Description: "quality variable 4 of the masks", Internal: true},
	{Role: RoleQuality5, Description: "quality variable 5 of the masks", Internal: true},
	{Role: RoleQuality6, Description: "quality variable 6 of the masks", Internal: true},
}

// Rule returns the rule of a role.
func (r Role) Rule() RoleRule { return RoleRules[r.Index()] }

// CanonicalUnits returns the units the role has in memory.
func CanonicalUnits(r Role) string {
	if i := r.Index(); i >= 0 {
		return RoleRules[i].Units
	}
	return ""
}

// ParseRole accepts a role name (case-insensitive); the internal quality slots
// are not accepted.
func ParseRole(s string) (Role, error) {
	var names []string
	for i, r := range Roles {
		if RoleRules[i].Internal {
			continue
		}
		if strings.EqualFold(s, string(r)) {
			return r, nil
		}
		names = append(names, string(r))
	}
	return "", errOverride("unknown input role %q; expected one of %s", s, strings.Join(names, ", "))
}

// Override binds a role to a named variable, optionally declaring its units.
type Override struct {
	Role  Role
	Var   string
	Units string // "" = use the variable's units attribute
}

// String gives the override in the syntax ParseOverride reads.
func (o Override) String() string {
	if o.Units != "" {
		return fmt.Sprintf("%s=%s:%s", o.Role, o.Var, o.Units)
	}
	return fmt.Sprintf("%s=%s", o.Role, o.Var)
}

// ParseOverride reads "ROLE=VARNAME" or "ROLE=VARNAME:UNITS". VARNAME may be a
// group path ("/geophysical_data/cwp") and may contain blanks (HDF4 names such
// as "Cloud Water Path"; quote the argument in the shell). UNITS declares the
// units of a variable whose units attribute is missing or wrong; it must parse as
// UDUNITS-2 and convert to the role's canonical units. Errors wrap ErrOverride
// (or ErrUnits for bad units).
func ParseOverride(s string) (Override, error) {
	role, rest, ok := strings.Cut(s, "=")
	if !ok {
		return Override{}, errOverride("%q: expected ROLE=VARNAME or ROLE=VARNAME:UNITS", s)
	}
	r, err := ParseRole(strings.TrimSpace(role))
	if err != nil {
		return Override{}, err
	}
	name, units, _ := strings.Cut(rest, ":")
	name = strings.TrimSpace(name)
	units = strings.TrimSpace(units)
	if name == "" {
		return Override{}, errOverride("%q: empty variable name; expected ROLE=VARNAME or ROLE=VARNAME:UNITS", s)
	}
	if strings.ContainsAny(name, "\t\n") {
		return Override{}, errOverride("%q: variable name %q contains a tab or a newline", s, name)
	}
	if strings.Contains(rest, ":") && units == "" {
		return Override{}, errOverride("%q: empty units after ':'", s)
	}
	if units != "" && r.Rule().Codes() {
		return Override{}, errOverride("%q: role %s holds flag codes, which have no units", s, r)
	}
	if units != "" {
		to := CanonicalUnits(r)
		if r.Rule().ErrorOf != "" && (isPercent(units) || units == "1" || units == "fraction") {
			units, to = strings.Replace(units, "fraction", "1", 1), "1" // a relative standard error
			if isPercent(units) {
				units = "percent"
			}
		}
		if _, err := NewConverter(units, to); err != nil {
			return Override{}, plainErr{err.Error(), err}
		}
	}
	return Override{Role: r, Var: name, Units: units}, nil
}
