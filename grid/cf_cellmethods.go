package grid

import "strings"

// CellMethod is one entry of a CF cell_methods attribute (CF §7.3): the names it
// applies to, its method and its qualifiers, e.g. "time: mean where cloud" or
// "area: time: mean (interval: 1 day)".
type CellMethod struct {
	Names   []string // dimensions, scalar coordinates, standard names or "area"
	Method  string   // a method of CF Appendix E: point, mean, maximum, ...
	Where   string   // the area type after "where" (CF §7.3.3), "" when none
	Over    string   // the type after "over" (CF §7.3.3 and §7.4), "" when none
	Within  string   // "days" or "years" after "within" (CF §7.4), "" when none
	Comment string   // the parenthesised information, without the parentheses
}

// ParseCellMethods splits a cell_methods attribute into its entries. It is
// lenient: words it cannot place are dropped (grid/cflint reports them), and a
// text without any "name: method" gives nil.
func ParseCellMethods(s string) []CellMethod {
	var out []CellMethod
	var names []string
	f := tokenizeCellMethods(s)
	for i := 0; i < len(f); i++ {
		t := f[i]
		switch {
		case strings.HasPrefix(t, "("):
			if len(out) > 0 && len(names) == 0 {
				c := &out[len(out)-1]
				c.Comment = strings.TrimSpace(strings.TrimSuffix(strings.TrimPrefix(t, "("), ")"))
			}
		case strings.HasSuffix(t, ":"):
			names = append(names, strings.TrimSuffix(t, ":"))
		case len(names) > 0:
			out = append(out, CellMethod{Names: names, Method: t})
			names = nil
		case len(out) > 0 && i+1 < len(f) && (t == "where" || t == "over" || t == "within"):
			c := &out[len(out)-1]
			i++
			switch t {
			case "where":
				c.Where = f[i]
			case "over":
				c.Over = f[i]
			default:
				c.Within = f[i]
			}
		}
	}
	return out
}

// tokenizeCellMethods splits on blanks, keeping a parenthesised group as one token.
func tokenizeCellMethods(s string) []string {
	var toks []string
	depth, start := 0, -1
	for i, r := range s {
		switch {
		case r == '(':
			if depth == 0 {
				start = i
			}
			depth++
		case r == ')' && depth > 0:
			depth--
			if depth == 0 {
				toks = append(toks, s[start:i+1])
				start = -1
			}
		case depth > 0:
		case r == ' ' || r == '\t' || r == '\n':
			if start >= 0 {
				toks = append(toks, s[start:i])
				start = -1
			}
		default:
			if start < 0 {
				start = i
			}
		}
	}
	if start >= 0 && depth == 0 {
		toks = append(toks, s[start:])
	}
	return toks
}

// String gives the entry in CF syntax.
func (c CellMethod) String() string {
	var b strings.Builder
	for _, n := range c.Names {
		b.WriteString(n + ": ")
	}
	b.WriteString(c.Method)
	for _, q := range [][2]string{{"where", c.Where}, {"over", c.Over}, {"within", c.Within}} {
		if q[1] != "" {
			b.WriteString(" " + q[0] + " " + q[1])
		}
	}
	if c.Comment != "" {
		b.WriteString(" (" + c.Comment + ")")
	}
	return b.String()
}

// FormatCellMethods joins entries into one cell_methods attribute.
func FormatCellMethods(cs []CellMethod) string {
	s := make([]string, len(cs))
	for i, c := range cs {
		s[i] = c.String()
	}
	return strings.Join(s, " ")
}
