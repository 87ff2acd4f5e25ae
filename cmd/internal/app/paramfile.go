package app

import (
	"errors"
	"fmt"
	"io"
	"os"
	"regexp"
	"strconv"
	"strings"

	"github.com/BurntSushi/toml"
	"github.com/spf13/pflag"
	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/microphys"
)

// A study's parameters can be kept in a file (--params FILE) or taken from an output
// warmrain wrote (--params-from OUTPUT.nc). Both give, per option of microphys.ParamDecls,
// the text the option takes on the command line; options given on the command line win.

// paramValue is one option's value from a parameter file or an output's provenance, as
// the option takes it on the command line ("14", "4,30", "kessler1969", "true"), and where
// it came from ("study.toml:12", or "out.nc (warmrain_parameter_onset_radius)").
type paramValue struct {
	text   string
	origin string
}

// paramGroup returns the rows of option name (nil when there is no such parameter).
func paramGroup(name string) []*microphys.ParamDecl {
	for _, rows := range optionGroups() {
		if rows[0].Option == name {
			return rows
		}
	}
	return nil
}

// keyLine finds the line of a top-level key in a TOML text (0 when not found). The
// decoder keeps no positions of the keys it decoded, and a parameter file is flat.
func keyLine(text, key string) int {
	k := `(?:` + regexp.QuoteMeta(key) + `|"` + regexp.QuoteMeta(key) + `"|'` + regexp.QuoteMeta(key) + `')`
	re := regexp.MustCompile(`^\s*(?:` + k + `\s*[=.]|\[\[?\s*` + k + `\s*[\].])`)
	for i, l := range strings.Split(text, "\n") {
		if re.MatchString(l) {
			return i + 1
		}
	}
	return 0
}

// readParamFile reads a parameter file: TOML, one key per option of microphys.ParamDecls
// (the option without "--"), no tables. Unknown keys, values of the wrong kind and units
// that cannot be converted are errors naming the file and the line. fs, when given,
// tells the other options of the command apart from unknown words.
func readParamFile(path string, fs *pflag.FlagSet) (map[string]paramValue, error) {
	raw, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("--params: %w", err)
	}
	text := string(raw)
	var m map[string]any
	md, err := toml.Decode(text, &m)
	if err != nil {
		var pe toml.ParseError
		if errors.As(err, &pe) {
			return nil, usagef("%s:%d: not a parameter file in TOML form: %s", path, pe.Position.Line, pe.Message)
		}
		return nil, usagef("%s: not a parameter file in TOML form: %v", path, err)
	}
	out := map[string]paramValue{}
	for _, k := range md.Keys() {
		key := k[0]
		line := keyLine(text, key)
		where := fmt.Sprintf("%s:%d", path, line)
		if len(k) > 1 {
			continue // inside a table: reported with the table
		}
		rows := paramGroup(key)
		if rows == nil {
			why := "unknown parameter " + strconv.Quote(key)
			switch {
			case md.Type(key) == "Hash":
				why = fmt.Sprintf("[%s]: a parameter file has no tables; write each parameter as NAME = VALUE at the top level", key)
			case paramGroup(strings.ReplaceAll(key, "_", "-")) != nil:
				why += fmt.Sprintf(" (parameters are named as the options: %s)", strings.ReplaceAll(key, "_", "-"))
			case fs != nil && fs.Lookup(key) != nil:
				why = fmt.Sprintf("%q is an option of the command, not a physics parameter: give it on the command line", key)
			default:
				why += " (the parameters and their units are listed by: warmrain params)"
			}
			return nil, usagef("%s: %s", where, why)
		}
		v, err := optionText(rows, m[key])
		if err != nil {
			return nil, usagef("%s: %s: %v", where, key, err)
		}
		out[key] = paramValue{text: v, origin: where}
	}
	return out, nil
}

// optionText turns a decoded TOML value into the text of the option of rows: a boolean
// for a switch, a name for a choice, a number in the option's unit or a "VALUE UNIT"
// text for a number, and for an option of several numbers an array of those, or their
// text as the option takes it ("4,30" or "4,30 um").
func optionText(rows []*microphys.ParamDecl, v any) (string, error) {
	r := rows[0]
	switch r.Kind {
	case microphys.ParamSwitch:
		if b, ok := v.(bool); ok {
			return strconv.FormatBool(b), nil
		}
		return "", fmt.Errorf("want true or false, got %s", tomlKind(v))
	case microphys.ParamChoice:
		if s, ok := v.(string); ok {
			return s, nil
		}
		return "", fmt.Errorf("want one of %s (in quotes), got %s", strings.Join(r.Choices, ", "), tomlKind(v))
	}
	if len(rows) == 1 {
		x, err := quantity(r, v)
		if err != nil {
			return "", err
		}
		return fmtNum(x), nil
	}
	var parts []any
	switch t := v.(type) {
	case []any:
		parts = t
	case string:
		nums, unit := splitUnit(t)
		for _, n := range strings.Split(nums, ",") {
			parts = append(parts, strings.TrimSpace(n)+" "+unit)
		}
	default:
		return "", fmt.Errorf("want %d values, as an array [%s] or a text %q, got %s", len(rows), strings.Repeat("x, ", len(rows)-1)+"x", "x,...", tomlKind(v))
	}
	if len(parts) != len(rows) {
		return "", fmt.Errorf("want %d values, got %d", len(rows), len(parts))
	}
	s := make([]string, len(rows))
	for i, p := range parts {
		x, err := quantity(rows[i], p)
		if err != nil {
			return "", err
		}
		s[i] = fmtNum(x)
	}
	return strings.Join(s, ","), nil
}

// quantity reads a number of row d: a TOML number is in the row's unit; a text is
// "VALUE" or "VALUE UNIT", converted to the row's unit when UNIT is another (udunits).
func quantity(d *microphys.ParamDecl, v any) (float64, error) {
	unitWord := d.Unit
	if unitWord == "1" {
		unitWord = "a pure number"
	}
	switch t := v.(type) {
	case int64:
		return float64(t), nil
	case float64:
		return t, nil
	case string:
		num, unit := splitUnit(t)
		x, err := strconv.ParseFloat(num, 64)
		if err != nil {
			return 0, fmt.Errorf("%q: want a number or \"NUMBER %s\"", t, d.Unit)
		}
		unit = strings.ReplaceAll(unit, "µ", "u")
		if unit == "" || unit == d.Unit {
			return x, nil
		}
		if d.Unit == "1" {
			return 0, fmt.Errorf("%q: this parameter is a pure number, without a unit", t)
		}
		conv, err := grid.ConvertFunc(unit, d.Unit)
		if err != nil {
			return 0, fmt.Errorf("%q: unit %q cannot be converted to %s", t, unit, d.Unit)
		}
		return conv(x), nil
	}
	return 0, fmt.Errorf("want a number in %s, got %s", unitWord, tomlKind(v))
}

// splitUnit splits "14 um" into "14" and "um" (and "4, 30 um" into "4,30" and "um").
func splitUnit(s string) (num, unit string) {
	s = strings.TrimSpace(strings.ReplaceAll(s, ", ", ","))
	num, unit, _ = strings.Cut(s, " ")
	return num, strings.TrimSpace(unit)
}

func fmtNum(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

func tomlKind(v any) string {
	switch v.(type) {
	case bool:
		return "a boolean"
	case string:
		return "a text"
	case int64, float64:
		return "a number"
	case []any:
		return "an array"
	case map[string]any:
		return "a table"
	}
	return fmt.Sprintf("%T", v)
}

// Provenance attributes read back by --params-from.
const attrParamPrefix = "warmrain_parameter_"

// readParamsFrom takes every parameter from an output warmrain wrote: the attributes
// warmrain_parameter_<name> (paramAttr). A parameter the file does not record (an output
// of an older warmrain) is an error unless the command line gives it (given reports which
// options were given). notes says what --params-from does not carry over (bindings,
// masks) and a change of version.
func readParamsFrom(path string, given func(option string) bool) (vals map[string]paramValue, notes []string, err error) {
	info, err := grid.Describe(path)
	if err != nil {
		return nil, nil, fmt.Errorf("--params-from: %w", err)
	}
	text := func(name string) (string, bool) {
		a, ok := info.Global(name)
		if !ok {
			return "", false
		}
		s, ok := a.Text()
		return strings.TrimSpace(s), ok
	}
	ver, ok := text(attrVersion)
	if !ok {
		return nil, nil, usagef("--params-from %s: the file has no attribute %s: it was not written by warmrain process, so it records no parameters", path, attrVersion)
	}
	vals = map[string]paramValue{}
	var missing []string
	for _, rows := range optionGroups() {
		opt := rows[0].Option
		parts := make([]string, len(rows))
		var origins []string
		complete := true
		for i, r := range rows {
			s, ok := text(attrParamPrefix + r.Name)
			if !ok {
				complete = false
				break
			}
			origins = append(origins, attrParamPrefix+r.Name)
			var v any = s
			switch r.Kind {
			case microphys.ParamSwitch:
				b, err := strconv.ParseBool(s)
				if err != nil {
					return nil, nil, usagef("--params-from %s: attribute %s%s = %q: want true or false", path, attrParamPrefix, r.Name, s)
				}
				v = b
			case microphys.ParamChoice:
				parts[i] = s
				continue
			}
			t, err := optionText([]*microphys.ParamDecl{r}, v)
			if err != nil {
				return nil, nil, usagef("--params-from %s: attribute %s%s: %v", path, attrParamPrefix, r.Name, err)
			}
			parts[i] = t
		}
		if !complete {
			if !given(opt) {
				missing = append(missing, "--"+opt)
			}
			continue
		}
		vals[opt] = paramValue{text: strings.Join(parts, ","), origin: fmt.Sprintf("%s (%s)", path, strings.Join(origins, ", "))}
	}
	if len(missing) > 0 {
		return nil, nil, usagef("--params-from %s: the file records no value of %s (it was written by warmrain %s, which did not have them): that run cannot be reproduced exactly; give them on the command line to choose their values", path, strings.Join(missing, ", "), ver)
	}
	if ver != Version() {
		notes = append(notes, fmt.Sprintf("--params-from %s: written by warmrain %s, this is %s: the same parameters may give other numbers where the physics changed", path, ver, Version()))
	}
	if b, ok := text("warmrain_bindings"); ok && b != "" {
		notes = append(notes, fmt.Sprintf("--params-from %s: that run bound inputs with --bind %s; bindings are not parameters: give them again", path, strings.ReplaceAll(b, "; ", " --bind ")))
	}
	if m, ok := text("warmrain_masks"); ok && m != "" {
		notes = append(notes, fmt.Sprintf("--params-from %s: that run screened with --mask %s; masks are not parameters: give them again", path, strings.ReplaceAll(m, "; ", " --mask ")))
	}
	return vals, notes, nil
}

// paramFileValue is the TOML text of an option's value in p: a boolean, a quoted name, a
// bare number for a pure number, "VALUE UNIT" for a number with a unit, an array for an
// option of several numbers.
func paramFileValue(rows []*microphys.ParamDecl, p *microphys.Params) string {
	one := func(r *microphys.ParamDecl) string {
		u := r.FromSI(r.Get(p))
		switch {
		case r.Kind == microphys.ParamSwitch:
			return strconv.FormatBool(u != 0)
		case r.Kind == microphys.ParamChoice:
			return strconv.Quote(r.Text(u))
		case r.Unit == "1":
			s := fmtNum(u)
			if !strings.ContainsAny(s, ".en") { // a TOML float, not an integer
				s += ".0"
			}
			return s
		}
		return strconv.Quote(fmtNum(u) + " " + r.Unit)
	}
	if len(rows) == 1 {
		return one(rows[0])
	}
	s := make([]string, len(rows))
	for i, r := range rows {
		s[i] = one(r)
	}
	return "[" + strings.Join(s, ", ") + "]"
}

// writeParamText writes a commented parameter file holding the values of p.
func writeParamText(w io.Writer, p microphys.Params, from string) error {
	var b strings.Builder
	fmt.Fprintf(&b, "# warmrain parameter file (TOML), written by warmrain %s params --write.\n", Version())
	if from != "" {
		fmt.Fprintf(&b, "# Values: %s.\n", from)
	}
	b.WriteString(`#
# Use it with:  warmrain process INPUT... -o OUT --params THIS_FILE
# Each line NAME = VALUE sets the option --NAME. A value with a unit is written
# "NUMBER UNIT"; another unit of the same kind is converted ("0.014 mm"); a bare
# number is taken in the unit shown. Options on the command line override this
# file. Deleting a line gives that parameter its default of the warmrain version
# that runs; keep every line to reproduce a study exactly.
#
# Results are research diagnostics, not for operational forecasting or
# flight-safety decisions.
`)
	d := microphys.DefaultParams()
	for _, rows := range optionGroups() {
		r := rows[0]
		b.WriteString("\n")
		b.WriteString(commentWrap(paramHelp(rows), "# ", 88))
		valid := "valid: " + validText(rows) + "; "
		switch r.Kind {
		case microphys.ParamChoice:
			valid = "" // the help lists the names
		case microphys.ParamSwitch:
			valid = "true or false; "
		}
		b.WriteString(commentWrap(valid+"default: "+paramValueText(rows, &d), "#   ", 88))
		if r.Literature != "" {
			b.WriteString(commentWrap("published: "+r.Literature, "#   ", 88))
		}
		b.WriteString(commentWrap("source: "+r.Source, "#   ", 88))
		if r.Spread > 0 {
			b.WriteString(commentWrap(fmt.Sprintf("spread (one standard deviation, for --parameter-uncertainty): %s; %s", spreadText(r), r.SpreadSource), "#   ", 88))
		}
		fmt.Fprintf(&b, "%s = %s\n", r.Option, paramFileValue(rows, &p))
	}
	_, err := io.WriteString(w, b.String())
	return err
}

// validText states the valid values of an option (each row's range for several numbers).
func validText(rows []*microphys.ParamDecl) string {
	if len(rows) == 1 {
		return rows[0].RangeText()
	}
	s := make([]string, len(rows))
	for i, r := range rows {
		s[i] = r.RangeText()
	}
	return strings.Join(s, "; ")
}

// commentWrap wraps text into lines of at most width characters, each starting with prefix.
func commentWrap(text, prefix string, width int) string {
	var b strings.Builder
	line := prefix
	cont := strings.Repeat(" ", len(prefix))
	if strings.HasPrefix(prefix, "#") {
		cont = "#" + strings.Repeat(" ", len(prefix)-1) + "  "
	}
	n := 0
	for _, w := range strings.Fields(text) {
		if n > 0 && len(line)+1+len(w) > width {
			b.WriteString(line + "\n")
			line, n = cont, 0
		}
		if n > 0 {
			line += " "
		}
		line += w
		n++
	}
	b.WriteString(line + "\n")
	return b.String()
}

// writeNewFile writes a file whole or not at all, through grid.WriteAtomic (a temporary
// file in the same folder), never replacing an existing file unless replace is set.
func writeNewFile(path string, replace bool, write func(io.Writer) error) error {
	kept := fmt.Errorf("%s exists; it is kept (give --force to replace it)", path)
	if !replace {
		if _, err := os.Lstat(path); err == nil {
			return kept
		}
	}
	err := grid.WriteAtomic(path, replace, func(tmp string) error {
		f, err := os.OpenFile(tmp, os.O_WRONLY|os.O_TRUNC, 0o644)
		if err != nil {
			return err
		}
		if err := write(f); err != nil {
			f.Close()
			return err
		}
		return f.Close()
	})
	if errors.Is(err, grid.ErrExists) { // appeared meanwhile: nothing is replaced
		return kept
	}
	return err
}
