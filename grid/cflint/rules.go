package cflint

// Severity ranks a finding.
type Severity int

// Severities, from the most serious.
const (
	Error   Severity = iota // breaks a CF rule or the project's own rules
	Warning                 // allowed, but not what we write
	Info                    // a check that could not be made
)

func (s Severity) String() string {
	switch s {
	case Error:
		return "error"
	case Warning:
		return "warning"
	case Info:
		return "info"
	}
	return "severity?"
}

// Rule describes one check.
type Rule struct {
	ID       string   // short identifier, used in Finding.Rule
	Severity Severity // severity of its findings (some rules downgrade for foreign files, see Doc)
	Source   string   // where the rule comes from
	Doc      string   // what is checked
}

// Rule identifiers.
const (
	RuleConventions  = "conventions"
	RuleACDD         = "conventions-acdd"
	RuleHistory      = "history"
	RuleStandardName = "standard-name"
	RuleModifier     = "standard-name-modifier"
	RuleCanonical    = "canonical-units"
	RuleUnitsParse   = "units-parse"
	RuleUnitsMb      = "units-mb"
	RuleTimeUnits    = "time-units"
	RuleAttrType     = "attribute-type"
	RuleTextAttr     = "text-attribute"
	RuleValidRange   = "valid-range"
	RuleFlagMeanings = "flag-meanings"
	RuleFlagWords    = "flag-meaning-words"
	RuleReference    = "reference-exists"
	RuleBoundsShape  = "bounds-shape"
	RulePacking      = "packing"
	RuleCellMethods  = "cell-methods"
	RuleUnitsMeta    = "units-metadata"
	RuleRefDims      = "reference-dims"
	RuleNoTable      = "no-standard-name-table"
)

// Rules is the table of every check the lint makes, as data.
var Rules = []Rule{
	{RuleConventions, Error, "CF 1.13 §2.6.1", `global "Conventions" is text and contains "CF-1.13" (blank-separated list)`},
	{RuleACDD, Error, "ACDD 1.3; warmrain outputs", `with Options.Ours, "Conventions" also contains "ACDD-1.3"`},
	{RuleHistory, Error, "CF §2.6.2, NUG; warmrain outputs", `every line of global "history" starts with an ISO-8601 UTC date-time (YYYY-MM-DDThh:mm:ss[.f]Z); with Options.Ours, history must exist`},
	{RuleStandardName, Error, "CF §3.3, standard name table", `a standard_name (first word) is a name or an alias in the table`},
	{RuleModifier, Error, "CF §3.3, Appendix C", `a second word of standard_name is one of the modifiers standard_error, detection_minimum, number_of_observations, status_flag; no further words`},
	{RuleCanonical, Error, "CF §3.1, §3.3", `units convert to the standard name's canonical units (missing units count as "1"); standard_error and detection_minimum keep the parent's units`},
	{RuleUnitsParse, Error, "CF §3.1, UDUNITS-2", `every "units" attribute is text that UDUNITS-2 parses`},
	{RuleUnitsMb, Error, "doc/netcdf.md#units (UDUNITS reads mb as millibarn)", `"mb" is not used as a unit (write hPa or mbar)`},
	{RuleTimeUnits, Error, "CF §4.4", `a time variable (standard_name time, axis T, or units with "since") has units "<unit> since <date>[ <time>[ <zone>]]" with a unit of time`},
	{RuleAttrType, Error, "CF §2.5.1, §3.5, §8.1; NUG", `_FillValue, missing_value, valid_min, valid_max, valid_range, flag_values and flag_masks are numeric, of the variable's type; _FillValue has one value`},
	{RuleTextAttr, Error, "CF §2.5.2, §3", `units, standard_name, long_name, coordinates, ancillary_variables, bounds, grid_mapping, cell_methods and flag_meanings are text`},
	{RuleValidRange, Error, "CF §2.5.1, NUG", `valid_range has two values, min <= max, and is not combined with valid_min or valid_max; valid_min <= valid_max`},
	{RuleFlagMeanings, Error, "CF §3.5", `flag_values / flag_masks come with flag_meanings whose word count equals their value count; flag_meanings without values or masks is an error`},
	{RuleFlagWords, Error, "CF §3.5", `each flag_meanings word uses only letters, digits and _ - . + @`},
	{RuleReference, Error, "CF §3.4, §4, §5, §5.6, §7.1", `every name in coordinates, ancillary_variables, bounds and grid_mapping (both forms) is a variable of the file; a grid mapping variable has grid_mapping_name`},
	{RuleBoundsShape, Error, "CF §7.1", `a bounds variable has the coordinate's dimensions plus one extra, last dimension: 2 for a 1-D coordinate, 4 for 2-D cells (n-D: at least 2)`},
	{RulePacking, Error, "CF §8.1", `scale_factor and add_offset are float or double, of one type, and one value each`},
	{RuleRefDims, Error, "CF §3.4, §5", `a variable named in coordinates or ancillary_variables has a subset of its parent's dimensions (char label variables may add their string dimension)`},
	{RuleCellMethods, Error, "CF §7.3, Appendix E", "cell_methods is a list of `name: [name: ...] method [where|over type] [within|over days|years] [(comment)]`; names are dimensions, variables, standard names or `area`; methods are those of Appendix E"},
	{RuleUnitsMeta, Error, "CF 1.11+ §3.1.2", "units_metadata is `temperature: on_scale`, `temperature: difference` or `temperature: unknown`, and only on variables whose units are temperatures"},
	{RuleNoTable, Info, "", `no standard name table was given: standard names and canonical units were not checked`},
}

// RuleByID returns the rule with the given identifier.
func RuleByID(id string) (Rule, bool) {
	for _, r := range Rules {
		if r.ID == id {
			return r, true
		}
	}
	return Rule{}, false
}
