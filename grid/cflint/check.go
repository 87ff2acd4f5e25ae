package cflint

import (
	"fmt"
	"regexp"
	"strings"

	"github.com/warmrain/warmrain/grid"
)

// Finding is one problem found in a file. Var is "" for global attributes.
type Finding struct {
	Var      string
	Rule     string // a Rule.ID
	Message  string
	Severity Severity
}

func (f Finding) String() string {
	where := "global"
	if f.Var != "" {
		where = f.Var
	}
	return fmt.Sprintf("%s: %s [%s]: %s", f.Severity, where, f.Rule, f.Message)
}

// Units is what the lint needs from a units library. GridUnits (UDUNITS-2
// through package grid) is the default.
type Units interface {
	// Parse reports an error when s is not a valid units string.
	Parse(s string) error
	// Convertible reports whether values in from can be converted to to.
	Convertible(from, to string) bool
}

// GridUnits implements Units with grid's UDUNITS-2 wrapper.
type GridUnits struct{}

// Parse implements Units.
func (GridUnits) Parse(s string) error { _, err := grid.ParseUnits(s); return err }

// Convertible implements Units.
func (GridUnits) Convertible(from, to string) bool { return grid.Convertible(from, to) }

// Options sets what Check requires.
type Options struct {
	// Table is the standard name table; nil skips the standard-name and
	// canonical-units rules (with an Info finding).
	Table *Table
	// Units parses and converts units; nil means GridUnits.
	Units Units
	// Ours applies the rules for warmrain's own outputs and test files:
	// Conventions must also name ACDD-1.3, history must exist, and history
	// lines that do not start with a UTC time are errors (warnings otherwise).
	Ours bool
}

// Check reads the metadata of the file at path and lints it. The error is
// for a file that cannot be read; problems of the file are findings.
func Check(path string, opt Options) ([]Finding, error) {
	fi, err := grid.Describe(path)
	if err != nil {
		return nil, fmt.Errorf("cflint: %w", err)
	}
	return CheckInfo(fi, opt), nil
}

// Errors returns the findings of severity Error.
func Errors(fs []Finding) []Finding {
	var out []Finding
	for _, f := range fs {
		if f.Severity == Error {
			out = append(out, f)
		}
	}
	return out
}

type linter struct {
	fi  *grid.FileInfo
	opt Options
	out []Finding
}

func (l *linter) add(v, rule string, sev Severity, format string, args ...any) {
	l.out = append(l.out, Finding{Var: v, Rule: rule, Message: fmt.Sprintf(format, args...), Severity: sev})
}

func (l *linter) errf(v, rule, format string, args ...any) { l.add(v, rule, Error, format, args...) }

// CheckInfo lints a file description made by grid.Describe.
func CheckInfo(fi *grid.FileInfo, opt Options) []Finding {
	if opt.Units == nil {
		opt.Units = GridUnits{}
	}
	l := &linter{fi: fi, opt: opt}
	if opt.Table == nil {
		l.add("", RuleNoTable, Info, "no standard name table given; standard names and canonical units not checked")
	}
	l.globals()
	for i := range fi.Vars {
		l.variable(&fi.Vars[i])
	}
	return l.out
}

func (l *linter) globals() {
	a, ok := l.fi.Global("Conventions")
	conv, isText := a.Text()
	switch {
	case !ok:
		l.errf("", RuleConventions, `no global "Conventions" attribute; expected one containing "CF-1.13"`)
	case !isText:
		l.errf("", RuleConventions, `"Conventions" is not text`)
	default:
		words := strings.FieldsFunc(conv, func(r rune) bool { return r == ' ' || r == ',' || r == '\t' || r == '\n' })
		if !hasWord(words, "CF-1.13") {
			l.errf("", RuleConventions, `Conventions %q does not contain "CF-1.13"`, conv)
		}
		if l.opt.Ours && !hasWord(words, "ACDD-1.3") {
			l.errf("", RuleACDD, `Conventions %q does not contain "ACDD-1.3"`, conv)
		}
	}

	h, ok := l.fi.Global("history")
	sev := Warning
	if l.opt.Ours {
		sev = Error
	}
	if !ok {
		if l.opt.Ours {
			l.errf("", RuleHistory, `no global "history" attribute`)
		}
		return
	}
	hist, isText := h.Text()
	if !isText {
		l.errf("", RuleHistory, `"history" is not text`)
		return
	}
	lines := strings.Split(strings.TrimRight(hist, "\n"), "\n")
	for i, line := range lines {
		if !historyLine.MatchString(line) {
			l.add("", RuleHistory, sev, "history line %d %q does not start with an ISO-8601 UTC date-time (YYYY-MM-DDThh:mm:ssZ)", i+1, clip(line))
		}
	}
}

var historyLine = regexp.MustCompile(`^\d{4}-(0[1-9]|1[0-2])-(0[1-9]|[12]\d|3[01])T([01]\d|2[0-3]):[0-5]\d:[0-5]\d(\.\d+)?Z(\s|:|$)`)

func clip(s string) string {
	if len(s) > 60 {
		return s[:57] + "..."
	}
	return s
}

func firstWord(s string) string {
	if f := strings.Fields(s); len(f) > 0 {
		return f[0]
	}
	return ""
}

func hasWord(words []string, w string) bool {
	for _, x := range words {
		if x == w {
			return true
		}
	}
	return false
}

// textAttrs must be text when present.
var textAttrs = []string{"units", "standard_name", "long_name", "coordinates", "ancillary_variables",
	"bounds", "grid_mapping", "cell_methods", "flag_meanings", "calendar", "axis"}

// typedAttrs must have the variable's type when present.
var typedAttrs = []string{"_FillValue", "missing_value", "valid_min", "valid_max", "valid_range", "flag_values", "flag_masks"}

// latLonUnits are the unit spellings CF §4.1 and §4.2 allow for latitude and longitude.
var latLonUnits = map[string][]string{
	"degree_north": {"degrees_north", "degree_north", "degree_N", "degrees_N", "degreeN", "degreesN"},
	"degree_east":  {"degrees_east", "degree_east", "degree_E", "degrees_E", "degreeE", "degreesE"},
}

var modifiers = map[string]bool{"standard_error": true, "detection_minimum": true, "number_of_observations": true, "status_flag": true}

func (l *linter) text(v *grid.VarInfo, name string) (string, bool) {
	a, ok := v.Attr(name)
	if !ok {
		return "", false
	}
	s, isText := a.Text()
	return s, isText
}

func (l *linter) variable(v *grid.VarInfo) {
	for _, n := range textAttrs {
		if a, ok := v.Attr(n); ok {
			if _, isText := a.Text(); !isText {
				l.errf(v.Name, RuleTextAttr, "%s is %s, expected text", n, a.Type)
			}
		}
	}
	for _, n := range typedAttrs {
		a, ok := v.Attr(n)
		if !ok {
			continue
		}
		if a.Type != v.Type {
			l.errf(v.Name, RuleAttrType, "%s is %s, expected the variable's type %s", n, a.Type, v.Type)
		} else if n == "_FillValue" && len(a.Float64s()) != 1 {
			l.errf(v.Name, RuleAttrType, "_FillValue has %d values, expected 1", len(a.Float64s()))
		}
	}
	l.validRange(v)
	l.flags(v)
	l.packing(v)
	l.units(v)
	l.standardName(v)
	l.references(v)
	l.cellMethods(v)
	l.unitsMetadata(v)
}

func (l *linter) validRange(v *grid.VarInfo) {
	r, hasR := v.Attr("valid_range")
	mn, hasMin := v.Attr("valid_min")
	mx, hasMax := v.Attr("valid_max")
	if hasR {
		x := r.Float64s()
		if len(x) != 2 {
			l.errf(v.Name, RuleValidRange, "valid_range has %d values, expected 2", len(x))
		} else if x[0] > x[1] {
			l.errf(v.Name, RuleValidRange, "valid_range %g, %g: minimum above maximum", x[0], x[1])
		}
		if hasMin || hasMax {
			l.errf(v.Name, RuleValidRange, "valid_range combined with valid_min/valid_max")
		}
	}
	if hasMin && hasMax {
		a, b := mn.Float64s(), mx.Float64s()
		if len(a) == 1 && len(b) == 1 && a[0] > b[0] {
			l.errf(v.Name, RuleValidRange, "valid_min %g above valid_max %g", a[0], b[0])
		}
	}
	for _, a := range []struct {
		attr grid.Attr
		ok   bool
	}{{mn, hasMin}, {mx, hasMax}} {
		if a.ok && len(a.attr.Float64s()) != 1 {
			l.errf(v.Name, RuleValidRange, "%s has %d values, expected 1", a.attr.Name, len(a.attr.Float64s()))
		}
	}
}

var flagWord = regexp.MustCompile(`^[A-Za-z0-9_.+@-]+$`)

func (l *linter) flags(v *grid.VarInfo) {
	vals, hasV := v.Attr("flag_values")
	masks, hasM := v.Attr("flag_masks")
	meanings, hasMean := l.text(v, "flag_meanings")
	if !hasMean {
		if _, present := v.Attr("flag_meanings"); present {
			return // reported as a text-attribute error
		}
		if hasV || hasM {
			l.errf(v.Name, RuleFlagMeanings, "flag_values or flag_masks without flag_meanings")
		}
		return
	}
	words := strings.Fields(meanings)
	if !hasV && !hasM {
		l.errf(v.Name, RuleFlagMeanings, "flag_meanings without flag_values or flag_masks")
	}
	if hasV && len(vals.Float64s()) != len(words) {
		l.errf(v.Name, RuleFlagMeanings, "flag_meanings has %d words, flag_values %d values", len(words), len(vals.Float64s()))
	}
	if hasM && len(masks.Float64s()) != len(words) {
		l.errf(v.Name, RuleFlagMeanings, "flag_meanings has %d words, flag_masks %d values", len(words), len(masks.Float64s()))
	}
	for _, w := range words {
		if !flagWord.MatchString(w) {
			l.errf(v.Name, RuleFlagWords, "flag meaning %q uses characters other than letters, digits and _-.+@", w)
		}
	}
}

func (l *linter) packing(v *grid.VarInfo) {
	sf, hasS := v.Attr("scale_factor")
	ao, hasO := v.Attr("add_offset")
	for _, a := range []struct {
		attr grid.Attr
		ok   bool
	}{{sf, hasS}, {ao, hasO}} {
		if !a.ok {
			continue
		}
		if a.attr.Type != grid.Float && a.attr.Type != grid.Double {
			l.errf(v.Name, RulePacking, "%s is %s, expected float or double", a.attr.Name, a.attr.Type)
		}
		if n := len(a.attr.Float64s()); n != 1 {
			l.errf(v.Name, RulePacking, "%s has %d values, expected 1", a.attr.Name, n)
		}
	}
	if hasS && hasO && sf.Type != ao.Type {
		l.errf(v.Name, RulePacking, "scale_factor is %s but add_offset is %s; expected one type", sf.Type, ao.Type)
	}
}

// mbUnit finds "mb" used as a unit symbol (UDUNITS reads it as millibarn).
var mbUnit = regexp.MustCompile(`(^|[^A-Za-z_])mb([^A-Za-z_]|$)`)

// timeUnits is "<unit> since <date>[ <time>[ <zone>]]".
var timeUnits = regexp.MustCompile(`^\s*([A-Za-z]+)\s+since\s+-?\d{1,4}-(0?[1-9]|1[0-2])-(0?[1-9]|[12]\d|3[01])` +
	`([ T]([01]?\d|2[0-3]):[0-5]?\d(:[0-5]?\d(\.\d*)?)?)?\s*(Z|UTC|[+-]\d{1,2}(:?\d{2})?)?\s*$`)

func (l *linter) units(v *grid.VarInfo) {
	u, hasU := l.text(v, "units")
	sn, _ := l.text(v, "standard_name")
	axis, _ := l.text(v, "axis")
	isTime := firstWord(sn) == "time" || axis == "T" || strings.Contains(u, " since ")
	if isTime {
		if !hasU {
			l.errf(v.Name, RuleTimeUnits, `time variable without units; expected "<unit> since <date>"`)
		} else if m := timeUnits.FindStringSubmatch(u); m == nil {
			l.errf(v.Name, RuleTimeUnits, `units %q are not "<unit> since <date>[ <time>]"`, u)
		} else if !l.opt.Units.Convertible(m[1], "s") {
			l.errf(v.Name, RuleTimeUnits, "units %q: %q is not a unit of time", u, m[1])
		}
	}
	if !hasU {
		return
	}
	if mbUnit.MatchString(u) {
		l.errf(v.Name, RuleUnitsMb, `units %q use "mb", which UDUNITS reads as millibarn; write "hPa" or "mbar"`, u)
	}
	if strings.TrimSpace(u) == "" {
		l.errf(v.Name, RuleUnitsParse, `units are blank; write "1" for a dimensionless quantity`)
		return
	}
	if err := l.opt.Units.Parse(u); err != nil {
		l.errf(v.Name, RuleUnitsParse, "units %q do not parse: %v", u, err)
	}
}

func (l *linter) standardName(v *grid.VarInfo) {
	sn, ok := l.text(v, "standard_name")
	if !ok {
		return
	}
	words := strings.Fields(sn)
	if len(words) == 0 {
		l.errf(v.Name, RuleStandardName, "standard_name is blank")
		return
	}
	mod := ""
	if len(words) > 1 {
		mod = words[1]
		if !modifiers[mod] || len(words) > 2 {
			l.errf(v.Name, RuleModifier, "standard_name %q: %q is not a modifier (standard_error, detection_minimum, number_of_observations, status_flag)", sn, strings.Join(words[1:], " "))
			return
		}
	}
	if l.opt.Table == nil {
		return
	}
	canon, known := l.opt.Table.Lookup(words[0])
	if !known {
		l.errf(v.Name, RuleStandardName, "standard_name %q is not in the CF standard name table v%s", words[0], l.opt.Table.Version)
		return
	}
	if mod == "number_of_observations" || mod == "status_flag" || canon == "" {
		return
	}
	u, hasU := l.text(v, "units")
	if !hasU {
		if canon != "1" {
			l.errf(v.Name, RuleCanonical, "no units; standard_name %q needs units convertible to %q", words[0], canon)
		}
		return
	}
	if strings.TrimSpace(u) == "" || l.opt.Units.Parse(u) != nil {
		return // reported by units-parse
	}
	if forms, ok := latLonUnits[canon]; ok && !hasWord(forms, strings.TrimSpace(u)) {
		// UDUNITS converts "degrees" to degree_north, but CF §4.1 and §4.2
		// require a form that names the axis.
		l.errf(v.Name, RuleCanonical, "units %q for %q; CF requires one of %s", u, words[0], strings.Join(forms, ", "))
		return
	}
	if m := timeUnits.FindStringSubmatch(u); m != nil {
		// UDUNITS does not convert a time stamp unit to a plain unit of
		// time: compare the unit before "since".
		u = m[1]
	}
	if !l.opt.Units.Convertible(u, canon) {
		l.errf(v.Name, RuleCanonical, "units %q do not convert to %q, the canonical units of %q", u, canon, words[0])
	}
}

func (l *linter) exists(name string) bool { return l.fi.Var(name) != nil }

func (l *linter) references(v *grid.VarInfo) {
	for _, attr := range []string{"coordinates", "ancillary_variables", "bounds"} {
		s, ok := l.text(v, attr)
		if !ok {
			continue
		}
		names := strings.Fields(s)
		if len(names) == 0 {
			l.errf(v.Name, RuleReference, "%s is blank", attr)
		}
		if attr == "bounds" && len(names) > 1 {
			l.errf(v.Name, RuleReference, "bounds %q names more than one variable", s)
		}
		for _, n := range names {
			rv := l.fi.Var(n)
			if rv == nil {
				l.errf(v.Name, RuleReference, "%s names %q, which is not a variable of the file", attr, n)
				continue
			}
			if attr != "bounds" {
				l.dimsSubset(v, rv, attr)
			}
		}
	}
	if gm, ok := l.text(v, "grid_mapping"); ok {
		// "crs" or the extended form "crs: x y crs2: lat lon"
		toks := strings.Fields(gm)
		if len(toks) == 0 {
			l.errf(v.Name, RuleReference, "grid_mapping is blank")
		}
		extended := strings.Contains(gm, ":")
		for _, t := range toks {
			n := strings.TrimSuffix(t, ":")
			mv := l.fi.Var(n)
			if mv == nil {
				l.errf(v.Name, RuleReference, "grid_mapping names %q, which is not a variable of the file", n)
				continue
			}
			if isMapping := !extended || strings.HasSuffix(t, ":"); isMapping && mv.Text("grid_mapping_name") == "" {
				l.errf(v.Name, RuleReference, "grid_mapping names %q, which has no grid_mapping_name", n)
			}
		}
	}
	if b, ok := l.text(v, "bounds"); ok {
		if names := strings.Fields(b); len(names) == 1 {
			if bv := l.fi.Var(names[0]); bv != nil {
				l.boundsShape(v, bv)
			}
		}
	}
}

func (l *linter) boundsShape(v, b *grid.VarInfo) {
	want := fmt.Sprintf("(%s, nv)", strings.Join(v.Dims, ", "))
	if len(b.Dims) != len(v.Dims)+1 {
		l.errf(b.Name, RuleBoundsShape, "bounds of %s has %d dimensions, expected %d %s", v.Name, len(b.Dims), len(v.Dims)+1, want)
		return
	}
	for i, d := range v.Dims {
		if b.Dims[i] != d {
			l.errf(b.Name, RuleBoundsShape, "bounds of %s has dimensions (%s), expected %s", v.Name, strings.Join(b.Dims, ", "), want)
			return
		}
	}
	nv := b.Shape[len(b.Shape)-1]
	switch len(v.Dims) {
	case 0, 1:
		if nv != 2 {
			l.errf(b.Name, RuleBoundsShape, "bounds of the 1-D coordinate %s has %d vertices, expected 2", v.Name, nv)
		}
	case 2:
		if nv != 4 {
			l.errf(b.Name, RuleBoundsShape, "bounds of the 2-D coordinate %s has %d vertices, expected 4", v.Name, nv)
		}
	default:
		if nv < 2 {
			l.errf(b.Name, RuleBoundsShape, "bounds of %s has %d vertices, expected at least 2", v.Name, nv)
		}
	}
}

// dimsSubset checks that the dimensions of r (named in v's attr) are a
// subset of v's; a char label variable may add its string length dimension.
func (l *linter) dimsSubset(v, r *grid.VarInfo, attr string) {
	dims := r.Dims
	if r.Type == grid.Char && len(dims) > 0 {
		dims = dims[:len(dims)-1]
	}
	for _, d := range dims {
		if !hasWord(v.Dims, d) {
			l.errf(v.Name, RuleRefDims, "%s names %s(%s), whose dimension %q is not one of (%s)",
				attr, r.Name, strings.Join(r.Dims, ", "), d, strings.Join(v.Dims, ", "))
			return
		}
	}
}

// cellMethodNames are the methods of CF 1.13 Appendix E.
var cellMethodNames = []string{"point", "sum", "maximum", "maximum_absolute_value", "median", "mid_range",
	"minimum", "minimum_absolute_value", "mean", "mean_absolute_value", "mean_of_upper_decile", "mode",
	"range", "root_mean_square", "standard_deviation", "sum_of_squares", "variance", "anomaly_wrt"}

func (l *linter) cellMethods(v *grid.VarInfo) {
	cm, ok := l.text(v, "cell_methods")
	if !ok {
		return
	}
	// drop parenthesised comments
	var toks []string
	depth := 0
	for _, t := range strings.Fields(cm) {
		if strings.HasPrefix(t, "(") {
			depth++
		}
		if depth == 0 {
			toks = append(toks, t)
		}
		if strings.HasSuffix(t, ")") && depth > 0 {
			depth--
		}
	}
	if depth != 0 {
		l.errf(v.Name, RuleCellMethods, "cell_methods %q: unbalanced parentheses", cm)
		return
	}
	if len(toks) == 0 {
		l.errf(v.Name, RuleCellMethods, "cell_methods is blank")
		return
	}
	var names []string
	for i := 0; i < len(toks); i++ {
		t := toks[i]
		if strings.HasSuffix(t, ":") {
			names = append(names, strings.TrimSuffix(t, ":"))
			continue
		}
		if len(names) == 0 {
			l.errf(v.Name, RuleCellMethods, "cell_methods %q: %q is not preceded by \"name:\"", cm, t)
			return
		}
		if !hasWord(cellMethodNames, t) {
			l.errf(v.Name, RuleCellMethods, "cell_methods %q: unknown method %q", cm, t)
		}
		for _, n := range names {
			if !l.cellMethodName(v, n) {
				l.errf(v.Name, RuleCellMethods, "cell_methods %q: %q is not a dimension, a variable, a standard name or \"area\"", cm, n)
			}
		}
		names = names[:0]
		// qualifiers: where/over/within take one word each
		for i+1 < len(toks) {
			q := toks[i+1]
			if q != "where" && q != "over" && q != "within" {
				break
			}
			if i+2 >= len(toks) {
				l.errf(v.Name, RuleCellMethods, "cell_methods %q: %q without a type", cm, q)
				return
			}
			i += 2
		}
	}
	if len(names) > 0 {
		l.errf(v.Name, RuleCellMethods, "cell_methods %q ends without a method", cm)
	}
}

func (l *linter) cellMethodName(v *grid.VarInfo, n string) bool {
	if n == "area" || hasWord(v.Dims, n) || l.exists(n) {
		return true
	}
	if l.opt.Table != nil {
		_, ok := l.opt.Table.Lookup(n)
		return ok
	}
	return true // cannot tell without the table
}

func (l *linter) unitsMetadata(v *grid.VarInfo) {
	um, ok := l.text(v, "units_metadata")
	if !ok {
		if _, present := v.Attr("units_metadata"); present {
			l.errf(v.Name, RuleUnitsMeta, "units_metadata is not text")
		}
		return
	}
	switch strings.Join(strings.Fields(um), " ") {
	case "temperature: on_scale", "temperature: difference", "temperature: unknown":
	default:
		l.errf(v.Name, RuleUnitsMeta, "units_metadata %q is not \"temperature: on_scale|difference|unknown\"", um)
		return
	}
	u, hasU := l.text(v, "units")
	if !hasU || l.opt.Units.Parse(u) != nil {
		l.errf(v.Name, RuleUnitsMeta, "units_metadata on a variable without valid temperature units")
		return
	}
	if !l.opt.Units.Convertible(u, "K") {
		l.errf(v.Name, RuleUnitsMeta, "units_metadata on a variable whose units %q are not a temperature", u)
	}
}
