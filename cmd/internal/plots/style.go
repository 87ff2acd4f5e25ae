package plots

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"

	"github.com/warmrain/warmrain/microphys"
)

// Range is a colour range of one variable in the units its pictures show: Lo..Hi on
// a linear or (Log) logarithmic scale.
type Range struct {
	Lo, Hi float64
	Log    bool
}

// Ranges are the user's colour ranges by variable name (option --range).
type Ranges map[string]Range

// ParseRange parses one --range value VAR=LO:HI or VAR=LO:HI:log (or :lin). Errors
// name the option and say what was expected.
func ParseRange(s string) (name string, r Range, err error) {
	bad := func(format string, a ...any) error {
		return fmt.Errorf("--range %q: "+format+"; expected VAR=LO:HI or VAR=LO:HI:log, in the units the map shows", append([]any{s}, a...)...)
	}
	name, spec, ok := strings.Cut(s, "=")
	name = strings.TrimSpace(name)
	if !ok || name == "" {
		return "", r, bad("no variable name before '='")
	}
	p := strings.Split(spec, ":")
	if len(p) < 2 || len(p) > 3 {
		return "", r, bad("%d fields after '='", len(p))
	}
	num := func(x string) (float64, error) {
		v, err := strconv.ParseFloat(strings.TrimSpace(x), 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			return 0, bad("%q is not a finite number", x)
		}
		return v, nil
	}
	if r.Lo, err = num(p[0]); err != nil {
		return "", r, err
	}
	if r.Hi, err = num(p[1]); err != nil {
		return "", r, err
	}
	if len(p) == 3 {
		switch strings.ToLower(strings.TrimSpace(p[2])) {
		case "log":
			r.Log = true
		case "lin", "linear":
		default:
			return "", r, bad("scale %q is neither log nor lin", p[2])
		}
	}
	if !(r.Hi > r.Lo) {
		return "", r, bad("HI %g must exceed LO %g", r.Hi, r.Lo)
	}
	if r.Log && !(r.Lo > 0) {
		return "", r, bad("a log scale needs LO > 0 (got %g)", r.Lo)
	}
	return name, r, nil
}

// ParseRanges parses repeated --range values; a variable given twice is an error.
func ParseRanges(vals []string) (Ranges, error) {
	out := Ranges{}
	for _, v := range vals {
		n, r, err := ParseRange(v)
		if err != nil {
			return nil, err
		}
		if _, dup := out[n]; dup {
			return nil, fmt.Errorf("--range %q: %s is given twice", v, n)
		}
		out[n] = r
	}
	return out, nil
}

// Unknown returns the names of rs that are not among names, sorted (for a warning:
// a --range for a variable no map shows).
func (rs Ranges) Unknown(names []string) []string {
	var out []string
	for n := range rs {
		found := false
		for _, m := range names {
			found = found || m == n
		}
		if !found {
			out = append(out, n)
		}
	}
	sort.Strings(out)
	return out
}

// unitLabel is how a units string is printed on a colour bar.
func unitLabel(u string) string {
	switch u {
	case "um":
		return "µm"
	case "1":
		return "dimensionless"
	}
	return u
}

// Style sets the colour scale, fixed limits and display units of a map of variable
// name whose values are in siUnits: from the output's declaration in
// microphys.OutputDecls (MapLo, MapHi, MapLog, MapDisplay) when the variable is a
// declared output in its SI units, else the automatic range in DisplayUnits; then the
// user's range for name, if any, replaces the limits and scale. It reports whether the limits are fixed
// (declared or given) rather than taken from the data.
func Style(name, siUnits string, user Ranges, o *MapOptions) (fixed bool) {
	if d := microphys.OutputByName(name); d != nil && d.SIUnits == siUnits {
		u, sc := d.MapDisplay()
		o.Scale, o.Units = sc, unitLabel(u)
		if d.MapHi > d.MapLo {
			o.Min, o.Max, o.Log = d.MapLo, d.MapHi, d.MapLog
			fixed = true
		}
	} else if siUnits == "m" && strings.Contains(name, "radius") {
		o.Scale, o.Units = 1e6, "µm"
	}
	if r, ok := user[name]; ok {
		o.Min, o.Max, o.Log = r.Lo, r.Hi, r.Log
		fixed = true
	}
	return fixed
}

// IsCoordinate reports whether a variable with this standard name and units is a
// latitude or longitude (never mapped as a diagnostic).
func IsCoordinate(name, standardName, units string) bool {
	switch standardName {
	case "latitude", "longitude", "grid_latitude", "grid_longitude":
		return true
	}
	u := strings.ToLower(strings.TrimSpace(units))
	if strings.HasPrefix(u, "degree") && (strings.HasSuffix(u, "north") || strings.HasSuffix(u, "east") || strings.HasSuffix(u, "_n") || strings.HasSuffix(u, "_e")) {
		return true
	}
	switch strings.ToLower(name) {
	case "lat", "lon", "latitude", "longitude", "nav_lat", "nav_lon":
		return true
	}
	return false
}

// ParamLine is the parameter line of the title of a map of output name: the
// parameters it depends on (microphys.OutputDecls DependsOn), in their order, with
// their values from a processed file's warmrain_parameter_<name> attributes (params,
// keyed by parameter name), in short form. A variable that is not a declared output,
// or depends on no parameter (the input LWP), gets "". shapeNote, when not "",
// replaces the gamma shape's value (say, how many columns took their shape from the
// input's LWP standard deviation).
func ParamLine(name string, params map[string]string, shapeNote string) string {
	d := microphys.OutputByName(name)
	if d == nil || len(d.DependsOn) == 0 || params == nil {
		return ""
	}
	val := func(k string) string { return strings.ReplaceAll(params[k], " um", " µm") }
	num := func(k string) (float64, bool) {
		f, err := strconv.ParseFloat(strings.Fields(params[k] + " x")[0], 64)
		return f, err == nil
	}
	var parts []string
	done := map[string]bool{}
	for _, k := range d.DependsOn {
		if done[k] || params[k] == "" {
			continue
		}
		done[k] = true
		switch k {
		case "autoconversion":
			parts = append(parts, val(k)+" autoconversion")
		case "collision", "coalescence":
			parts = append(parts, k+" "+val(k))
		case "k_ratio":
			parts = append(parts, "k "+val(k))
		case "extinction_efficiency":
			parts = append(parts, "Q_ext "+val(k))
		case "adiabatic_fraction":
			parts = append(parts, "f_ad "+val(k))
		case "condensation_rate":
			if v, ok := num(k); ok && v == 0 {
				parts = append(parts, "c_w(T,p)")
			} else {
				parts = append(parts, "c_w = "+val(k))
			}
		case "onset_radius", "onset_width":
			r, ok1 := num("onset_radius")
			w, ok2 := num("onset_width")
			done["onset_radius"], done["onset_width"] = true, true
			switch {
			case ok1 && ok2 && w > 0 && slices.Contains(d.DependsOn, "onset_width"):
				parts = append(parts, fmt.Sprintf("onset r_e %.3g–%.3g µm", r-w/2, r+w/2))
			case ok1:
				parts = append(parts, fmt.Sprintf("onset r_e %.3g µm", r))
			}
		case "gamma_shape":
			if shapeNote != "" {
				parts = append(parts, shapeNote)
			} else {
				parts = append(parts, "gamma shape "+val(k))
			}
		case "drizzle_law_a", "drizzle_law_b", "drizzle_law_c":
			done["drizzle_law_a"], done["drizzle_law_b"], done["drizzle_law_c"] = true, true, true
			parts = append(parts, fmt.Sprintf("R = %s L^%s N_d^-%s", val("drizzle_law_a"), val("drizzle_law_b"), val("drizzle_law_c")))
		case "drizzle_mean_radius", "drizzle_min_radius", "drizzle_shape":
			done["drizzle_mean_radius"], done["drizzle_min_radius"], done["drizzle_shape"] = true, true, true
			parts = append(parts, fmt.Sprintf("drizzle drops mean %s, above %s, shape %s", val("drizzle_mean_radius"), val("drizzle_min_radius"), val("drizzle_shape")))
		case "collector_radius":
			parts = append(parts, "collector "+val(k))
		case "updraft":
			parts = append(parts, "updraft "+val(k))
		case "subcloud_humidity":
			parts = append(parts, "sub-cloud "+val(k))
		case "surface_pressure":
			parts = append(parts, "p_sfc "+val(k))
		case "default_ctt", "default_ctp":
			done["default_ctt"], done["default_ctp"] = true, true
			parts = append(parts, "CTT "+val("default_ctt")+" / CTP "+val("default_ctp")+" if missing")
		case "no_collector", "no_evaporation":
			if params[k] == "true" {
				parts = append(parts, strings.ReplaceAll(k, "_", " "))
			}
		default:
			parts = append(parts, strings.ReplaceAll(k, "_", " ")+" "+val(k))
		}
	}
	return strings.Join(parts, ", ")
}
