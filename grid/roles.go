package grid

import (
	"fmt"
	"strings"
)

// Role is an input quantity the tool can read.
type Role string

// The input roles. RoleLWP and RoleRe are required.
const (
	RoleLWP           Role = "lwp"
	RoleRe            Role = "re"
	RoleTau           Role = "tau"
	RoleCTT           Role = "ctt"
	RoleCTP           Role = "ctp"
	RoleCTH           Role = "cth"
	RoleCloudFraction Role = "cloud_fraction"
	RoleLWPSD         Role = "lwp_sd"
)

// NumRoles is the number of input roles; Roles lists them in table order, which is
// also the index order of Slab.In.
const NumRoles = 8

// Roles lists every role in table order.
var Roles = [NumRoles]Role{RoleLWP, RoleRe, RoleTau, RoleCTT, RoleCTP, RoleCTH, RoleCloudFraction, RoleLWPSD}

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
	Units         string   // canonical units in memory
	CommonNames   []string // variable names tried when no standard_name matches (case-insensitive)
}

// lwpNames are the standard names of a liquid water path (used by RoleLWP and,
// with a standard-deviation marker, by RoleLWPSD).
var lwpNames = []string{
	"atmosphere_mass_content_of_cloud_liquid_water",
	"atmosphere_cloud_liquid_water_content", // old alias
}

// RoleRules is the rule table, in role order. Sources: CF standard name table
// v83 (canonical units as listed there); the common names are common practice.
var RoleRules = [NumRoles]RoleRule{
	{RoleLWP, "liquid water path", true, lwpNames, "kg m-2",
		[]string{"lwp", "clwp", "liquid_water_path", "cloud_liquid_water_path", "lwp_liquid", "cwp_liquid", "LWP_liquid"}},
	{RoleRe, "cloud-top effective radius of liquid droplets", true, []string{
		"effective_radius_of_cloud_liquid_water_particles_at_liquid_water_cloud_top",
		"effective_radius_of_cloud_liquid_water_particle_at_liquid_water_cloud_top", // alias
		"effective_radius_of_convective_cloud_liquid_water_particles_at_convective_liquid_water_cloud_top",
		"effective_radius_of_stratiform_cloud_liquid_water_particles_at_stratiform_liquid_water_cloud_top",
	}, "m", []string{"re", "reff", "r_e", "cer", "cer_liquid", "cloud_effective_radius", "cloud_effective_radius_liquid",
		"effective_radius", "ref", "re_liquid"}},
	{RoleTau, "cloud optical thickness", false, []string{
		"atmosphere_optical_thickness_due_to_cloud",
		"atmosphere_optical_thickness_due_to_convective_cloud",
		"atmosphere_optical_thickness_due_to_stratiform_cloud",
	}, "1", []string{"tau", "cot", "cod", "cloud_optical_thickness", "cloud_optical_depth", "cot_liquid", "tau_liquid"}},
	{RoleCTT, "cloud-top temperature", false, []string{
		"air_temperature_at_cloud_top",
		"air_temperature_at_effective_cloud_top_defined_by_infrared_radiation",
		"brightness_temperature_at_cloud_top",
	}, "K", []string{"ctt", "cloud_top_temperature", "cloud_top_temp"}},
	{RoleCTP, "cloud-top pressure", false, []string{
		"air_pressure_at_cloud_top",
		"pressure_at_effective_cloud_top_defined_by_infrared_radiation",
	}, "Pa", []string{"ctp", "cloud_top_pressure"}},
	{RoleCTH, "cloud-top height", false, []string{
		"height_at_cloud_top",
		"cloud_top_altitude",
		"geopotential_height_at_cloud_top",
		"height_at_effective_cloud_top_defined_by_infrared_radiation",
	}, "m", []string{"cth", "cloud_top_height", "cloud_top_altitude", "zct"}},
	{RoleCloudFraction, "cloud fraction", false, []string{
		"cloud_area_fraction",
		"liquid_water_cloud_area_fraction",
	}, "1", []string{"cf", "cfc", "cloud_fraction", "cloud_area_fraction", "cldfrac", "liquid_cloud_fraction"}},
	{RoleLWPSD, "standard deviation of the liquid water path", false, nil, "kg m-2",
		[]string{"lwp_sd", "lwp_std", "lwp_stddev", "lwp_standard_deviation", "clwp_std", "lwp_unc", "lwp_uncertainty",
			"liquid_water_path_standard_deviation", "lwp_standard_error"}},
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

// ParseRole accepts a role name (case-insensitive).
func ParseRole(s string) (Role, error) {
	for _, r := range Roles {
		if strings.EqualFold(s, string(r)) {
			return r, nil
		}
	}
	names := make([]string, len(Roles))
	for i, r := range Roles {
		names[i] = string(r)
	}
	return "", fmt.Errorf("%w: unknown input role %q; expected one of %s", ErrOverride, s, strings.Join(names, ", "))
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
		return Override{}, fmt.Errorf("%w: %q: expected ROLE=VARNAME or ROLE=VARNAME:UNITS", ErrOverride, s)
	}
	r, err := ParseRole(strings.TrimSpace(role))
	if err != nil {
		return Override{}, err
	}
	name, units, _ := strings.Cut(rest, ":")
	name = strings.TrimSpace(name)
	units = strings.TrimSpace(units)
	if name == "" {
		return Override{}, fmt.Errorf("%w: %q: empty variable name; expected ROLE=VARNAME or ROLE=VARNAME:UNITS", ErrOverride, s)
	}
	if strings.ContainsAny(name, "\t\n") {
		return Override{}, fmt.Errorf("%w: %q: variable name %q contains a tab or a newline", ErrOverride, s, name)
	}
	if strings.Contains(rest, ":") && units == "" {
		return Override{}, fmt.Errorf("%w: %q: empty units after ':'", ErrOverride, s)
	}
	if units != "" {
		if _, err := NewConverter(units, CanonicalUnits(r)); err != nil {
			return Override{}, fmt.Errorf("override %q: %w", s, err)
		}
	}
	return Override{Role: r, Var: name, Units: units}, nil
}
