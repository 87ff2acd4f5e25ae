package grid

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
)

// Quality information of an input: masks that screen columns by a product's own
// quality variables (flag meanings or a threshold), by its cloud phase (liquid
// only) and by its multi-layer flag. The data of each masked variable comes in
// the slab like a role (Mask.Role); Mask.Screens says whether a column's value
// removes it.

// MaskKind says what a mask tests.
type MaskKind int

// The kinds of masks.
const (
	// MaskMeaning screens columns where a CF flag variable has one of the named
	// flag_meanings (`VAR:MEANING[,MEANING...]`).
	MaskMeaning MaskKind = iota
	// MaskCompare screens columns where a quality variable compares true with a
	// number (`VAR<N`, `<=`, `>`, `>=`, `==`, `!=`), in the variable's own
	// (unpacked) units.
	MaskCompare
	// MaskPhase screens columns whose cloud-top phase flag is not liquid (the
	// phase role).
	MaskPhase
	// MaskMultilayer screens columns flagged multi-layer (the multilayer role).
	MaskMultilayer
)

var maskKindNames = [...]string{"flag meaning", "threshold", "cloud phase", "multi-layer flag"}

// String names the kind.
func (k MaskKind) String() string { return maskKindNames[k] }

// MaskSpec is one mask as the user wrote it.
type MaskSpec struct {
	Text     string // as written
	Var      string
	Kind     MaskKind // MaskMeaning or MaskCompare
	Meanings []string // MaskMeaning
	Op       string   // MaskCompare: <, <=, >, >=, ==, !=
	Value    float64  // MaskCompare
}

// ParseMask reads `VAR:MEANING[,MEANING...]` or `VAR OP N` with OP one of <, <=,
// >, >=, ==, != (blanks around OP allowed). Errors wrap ErrOverride.
func ParseMask(s string) (MaskSpec, error) {
	t := strings.TrimSpace(s)
	bad := func(format string, a ...any) (MaskSpec, error) {
		return MaskSpec{}, errOverride("mask %q: %s; expected VAR:MEANING[,MEANING...] or VAR<N (also <=, >, >=, ==, !=)", s, fmt.Sprintf(format, a...))
	}
	if i := strings.IndexAny(t, "<>=!"); i >= 0 && !strings.Contains(t[:i], ":") {
		name := strings.TrimSpace(t[:i])
		rest := t[i:]
		op := ""
		for _, o := range []string{"<=", ">=", "==", "!=", "<", ">"} {
			if strings.HasPrefix(rest, o) {
				op = o
				break
			}
		}
		if op == "" {
			return bad("unknown comparison %q", rest)
		}
		num := strings.TrimSpace(rest[len(op):])
		x, err := strconv.ParseFloat(num, 64)
		if err != nil || math.IsNaN(x) {
			return bad("%q is not a number", num)
		}
		if name == "" {
			return bad("no variable name before %s", op)
		}
		return MaskSpec{Text: t, Var: name, Kind: MaskCompare, Op: op, Value: x}, nil
	}
	name, list, ok := strings.Cut(t, ":")
	name = strings.TrimSpace(name)
	if !ok || name == "" {
		return bad("no ':' or comparison")
	}
	var words []string
	for _, w := range strings.Split(list, ",") {
		if w = strings.TrimSpace(w); w != "" {
			words = append(words, w)
		}
	}
	if len(words) == 0 {
		return bad("no flag meaning after ':'")
	}
	return MaskSpec{Text: t, Var: name, Kind: MaskMeaning, Meanings: words}, nil
}

// Mask is a bound mask: its variable's data is Slab.In[Role.Index()].
type Mask struct {
	MaskSpec
	Role Role
	// Selected lists the flag meanings that screen (MaskMeaning, MaskPhase,
	// MaskMultilayer).
	Selected []string
	tests    []flagTest
	width    uint64 // bit mask of the stored type (flag_masks arithmetic)
}

// flagTest is one CF flag condition: value only (x == value), mask only (x & mask
// != 0) or both (x & mask == value).
type flagTest struct {
	value, mask       uint64
	hasValue, hasMask bool
}

// Screens reports whether a column whose masked variable has the decoded value x
// is removed. A missing value (NaN) never screens: the data's own fill handles it.
func (m *Mask) Screens(x float64) bool {
	if x != x {
		return false
	}
	if m.Kind == MaskCompare {
		switch m.Op {
		case "<":
			return x < m.Value
		case "<=":
			return x <= m.Value
		case ">":
			return x > m.Value
		case ">=":
			return x >= m.Value
		case "==":
			return x == m.Value
		default:
			return x != m.Value
		}
	}
	b := uint64(int64(x)) & m.width
	for _, t := range m.tests {
		switch {
		case t.hasMask && t.hasValue:
			if b&t.mask == t.value {
				return true
			}
		case t.hasMask:
			if b&t.mask != 0 {
				return true
			}
		default:
			if b == t.value {
				return true
			}
		}
	}
	return false
}

// Describe says what the mask screens, for inspect and messages.
func (m *Mask) Describe() string {
	switch m.Kind {
	case MaskCompare:
		return fmt.Sprintf("columns where %s %s %g", m.Var, m.Op, m.Value)
	case MaskPhase:
		return fmt.Sprintf("columns whose phase %s is not liquid: %s", m.Var, strings.Join(m.Selected, ", "))
	case MaskMultilayer:
		return fmt.Sprintf("columns %s flags as multi-layer: %s", m.Var, strings.Join(m.Selected, ", "))
	}
	return fmt.Sprintf("columns where %s is %s", m.Var, strings.Join(m.Selected, " or "))
}

// Name is the mask's short name in counts: the text as written, or the role.
func (m *Mask) Name() string {
	switch m.Kind {
	case MaskPhase:
		return "phase not liquid (" + m.Var + ")"
	case MaskMultilayer:
		return "multi-layer (" + m.Var + ")"
	}
	return m.Text
}

// flagTable reads the CF flag attributes of v: one test per flag_meanings word.
func flagTable(file string, v *VarInfo) (words []string, tests []flagTest, err error) {
	words = strings.Fields(v.Text("flag_meanings"))
	fv, hasV := v.Attr("flag_values")
	fm, hasM := v.Attr("flag_masks")
	if len(words) == 0 || (!hasV && !hasM) {
		return nil, nil, varErr(ErrLayout, file, v.Name, "has no CF flags (flag_meanings with flag_values or flag_masks); a mask by meaning needs them (CF 3.5); compare it with a number instead, e.g. %s>0", v.Name)
	}
	bits := func(a Attr) ([]uint64, error) {
		if !a.Type.Integer() {
			return nil, varErr(ErrLayout, file, v.Name, "%s has type %s; expected integers (CF 3.5)", a.Name, a.Type)
		}
		f := a.Float64s()
		out := make([]uint64, len(f))
		w := typeWidth(v.Type)
		for i, x := range f {
			out[i] = uint64(int64(x)) & w
		}
		if len(out) != len(words) {
			return nil, varErr(ErrLayout, file, v.Name, "%s has %d values for %d flag_meanings words; expected one each (CF 3.5)", a.Name, len(out), len(words))
		}
		return out, nil
	}
	tests = make([]flagTest, len(words))
	if hasV {
		vals, err := bits(fv)
		if err != nil {
			return nil, nil, err
		}
		for i := range tests {
			tests[i].value, tests[i].hasValue = vals[i], true
		}
	}
	if hasM {
		ms, err := bits(fm)
		if err != nil {
			return nil, nil, err
		}
		for i := range tests {
			tests[i].mask, tests[i].hasMask = ms[i], true
		}
	}
	return words, tests, nil
}

func typeWidth(t Type) uint64 {
	if t.Size() >= 8 || t.Size() == 0 {
		return math.MaxUint64
	}
	return 1<<(8*t.Size()) - 1
}

// newFlagMask builds a mask of kind k on variable v screening the meanings for
// which pick is true (MaskPhase, MaskMultilayer) or the named ones (MaskMeaning).
func newFlagMask(file string, v *VarInfo, spec MaskSpec, pick func(string) bool) (*Mask, error) {
	if !v.Type.Integer() {
		return nil, varErr(ErrLayout, file, v.Name, "has type %s; a flag variable is an integer type (CF 3.5)", v.Type)
	}
	if _, ok := v.Attr("scale_factor"); ok {
		return nil, varErr(ErrLayout, file, v.Name, "is packed (scale_factor); a flag variable holds codes (CF 3.5)")
	}
	words, tests, err := flagTable(file, v)
	if err != nil {
		return nil, err
	}
	m := &Mask{MaskSpec: spec, width: typeWidth(v.Type)}
	if spec.Kind == MaskMeaning {
		for _, w := range spec.Meanings {
			if !slices.Contains(words, w) {
				return nil, varErr(ErrLayout, file, v.Name, "has no flag meaning %q; its flag_meanings are %s", w, strings.Join(words, " "))
			}
		}
		pick = func(w string) bool { return slices.Contains(spec.Meanings, w) }
	}
	for i, w := range words {
		if pick(w) {
			m.Selected = append(m.Selected, w)
			m.tests = append(m.tests, tests[i])
		}
	}
	return m, nil
}

// liquidPhase reports whether a phase flag meaning is liquid cloud (liquid,
// water, super_cooled_liquid_water; not ice, mixed, clear or unknown). Common
// practice: the words of the CF table's thermodynamic_phase entry and of the
// imager products.
func liquidPhase(w string) bool {
	l := strings.ToLower(w)
	if strings.Contains(l, "ice") || strings.Contains(l, "mixed") || strings.Contains(l, "clear") ||
		strings.Contains(l, "no_cloud") || strings.Contains(l, "unknown") || strings.Contains(l, "undetermined") {
		return false
	}
	return strings.Contains(l, "liquid") || l == "water" || strings.HasPrefix(l, "water_")
}

// multiLayer reports whether a multi-layer flag meaning says several layers.
func multiLayer(w string) bool {
	l := strings.ToLower(w)
	if strings.HasPrefix(l, "no") || strings.HasPrefix(l, "single") || strings.HasPrefix(l, "one_") {
		return false
	}
	return strings.Contains(l, "multi") || strings.Contains(l, "two_layer") || strings.Contains(l, "overlap")
}

// QualityCounts are the columns each mask and each flag code of a data variable
// removed (a column may count under several). Masks follows Input.Masks;
// Codes[role] follows the role's Decoder.FlagMeanings.
type QualityCounts struct {
	Masks []int64
	Codes [NumRoles][]int64
	// Screened counts the columns any mask or code removed.
	Screened int64
}

// Count adds the verdict on columns [lo, hi) of slab s to c (a worker keeps its
// own and merges with Add).
func (in *Input) Count(s *Slab, lo, hi int, c *QualityCounts) {
	if c.Masks == nil {
		c.Masks = make([]int64, len(in.Masks))
	}
	for i, b := range in.bindings {
		if b != nil && len(b.Decoder.FlagCodes) > 0 && c.Codes[i] == nil {
			c.Codes[i] = make([]int64, len(b.Decoder.FlagCodes))
		}
	}
	for j := lo; j < hi; j++ {
		hit := false
		for k, m := range in.Masks {
			if m.Screens(s.In[m.Role.Index()][j]) {
				c.Masks[k]++
				hit = true
			}
		}
		for i := range c.Codes {
			if c.Codes[i] == nil {
				continue
			}
			if k, ok := FlagIndex(s.In[i][j]); ok {
				c.Codes[i][k]++
				hit = true
			}
		}
		if hit {
			c.Screened++
		}
	}
}

// Add merges o into c.
func (c *QualityCounts) Add(o *QualityCounts) {
	if c.Masks == nil && o.Masks != nil {
		c.Masks = make([]int64, len(o.Masks))
	}
	for k := range o.Masks {
		c.Masks[k] += o.Masks[k]
	}
	for i := range o.Codes {
		if o.Codes[i] == nil {
			continue
		}
		if c.Codes[i] == nil {
			c.Codes[i] = make([]int64, len(o.Codes[i]))
		}
		for k := range o.Codes[i] {
			c.Codes[i][k] += o.Codes[i][k]
		}
	}
	c.Screened += o.Screened
}

// Lines describes c in words, one line per mask or code that removed a column:
// "land (flag code of r_e Cloud_Effective_Radius): 40 columns".
func (in *Input) Lines(c *QualityCounts) []string {
	var out []string
	for k, m := range in.Masks {
		if k < len(c.Masks) && c.Masks[k] > 0 {
			out = append(out, fmt.Sprintf("%s: %d", m.Name(), c.Masks[k]))
		}
	}
	for i, b := range in.bindings {
		if b == nil || c.Codes[i] == nil {
			continue
		}
		for k, n := range c.Codes[i] {
			if n > 0 {
				out = append(out, fmt.Sprintf("%s (flag code of %s): %d", b.Decoder.FlagMeanings[k], b.Var, n))
			}
		}
	}
	return out
}
