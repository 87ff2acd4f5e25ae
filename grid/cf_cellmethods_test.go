package grid

import "testing"

// TestParseCellMethods: entries, qualifiers and parenthesised information of CF §7.3
// cell_methods, and their round trip (syntax from CF §7.3.1-7.3.4 and Appendix E).
func TestParseCellMethods(t *testing.T) {
	cases := []struct {
		in   string
		n    int
		last CellMethod
		out  string
	}{
		{"time: point", 1, CellMethod{Names: []string{"time"}, Method: "point"}, "time: point"},
		{"time: mean where cloud", 1, CellMethod{Names: []string{"time"}, Method: "mean", Where: "cloud"}, "time: mean where cloud"},
		{"area: time: mean  where cloud (interval: 1 day)", 1,
			CellMethod{Names: []string{"area", "time"}, Method: "mean", Where: "cloud", Comment: "interval: 1 day"}, "area: time: mean where cloud (interval: 1 day)"},
		{"time: mean area: mean where sea_ice over sea", 2,
			CellMethod{Names: []string{"area"}, Method: "mean", Where: "sea_ice", Over: "sea"}, "time: mean area: mean where sea_ice over sea"},
		{"time: mean within days time: maximum over days", 2,
			CellMethod{Names: []string{"time"}, Method: "maximum", Over: "days"}, "time: mean within days time: maximum over days"},
		{"", 0, CellMethod{}, ""},
		{"mean", 0, CellMethod{}, ""},
	}
	for _, c := range cases {
		got := ParseCellMethods(c.in)
		if len(got) != c.n {
			t.Errorf("%q: %d entries %+v, want %d", c.in, len(got), got, c.n)
			continue
		}
		if c.n == 0 {
			continue
		}
		l := got[len(got)-1]
		if l.String() != c.last.String() || l.Where != c.last.Where || l.Over != c.last.Over || l.Comment != c.last.Comment {
			t.Errorf("%q: last entry %+v, want %+v", c.in, l, c.last)
		}
		if s := FormatCellMethods(got); s != c.out {
			t.Errorf("%q: formatted %q, want %q", c.in, s, c.out)
		}
	}
}
