package app

import (
	"fmt"
	"path"
	"slices"
	"strings"

	"github.com/warmrain/warmrain/grid"
)

// cellMethodRoles are the inputs whose cell_methods the diagnostics inherit: the
// retrievals the diagnostics are computed from (LWP, r_e and, when bound, the optical
// thickness, which gives N_d and stands in for an absent LWP).
var cellMethodRoles = []grid.Role{grid.RoleLWP, grid.RoleRe, grid.RoleTau}

// cloudAreaTypes are the area types of the CF area-type table that mean "in cloud".
var cloudAreaTypes = []string{"cloud", "stratiform_cloud", "convective_cloud"}

// inheritedMethods is what the per-column outputs say in cell_methods, worked out
// from the inputs' cell_methods by the rule of README "What the outputs say about
// time" (doc anchor #cell-methods):
//
//   - the time part (an entry naming the time dimension, its coordinate or the
//     standard name time) is inherited with its qualifiers: daily means "where
//     cloud" give "time: mean where cloud";
//   - an area part "where" a cloud area type (an in-cloud mean) is inherited; a
//     plain "area: mean" (a grid-box mean, made in-cloud by the cloud fraction) is
//     not;
//   - inputs without a time part say nothing; when none has one the outputs say
//     "time: point" (per-scene retrievals);
//   - inputs that disagree: a method other than point wins over point (a
//     diagnostic of a time-mean input is no instantaneous value), then the first
//     input in the order LWP, r_e, tau; a warning names both.
type inheritedMethods struct {
	CellMethods string
	Comment     string   // a sentence for the outputs' comment, "" when none
	Warnings    []string // disagreements, for stderr
}

func outputCellMethods(in *grid.Input) inheritedMethods {
	timeNames := []string{"time"}
	if ta := in.Layout.Time; ta != nil {
		timeNames = append(timeNames, path.Base(ta.Var))
	}
	type src struct {
		role grid.Role
		v    string
		cm   string
		e    grid.CellMethod
		at   int // the entry's place in cm (CF applies the methods left to right)
	}
	var times, areas []src
	for _, b := range in.Bindings() {
		if !slices.Contains(cellMethodRoles, b.Role) {
			continue
		}
		vi := in.Info.Var(b.Var)
		if vi == nil {
			continue
		}
		cm := vi.Text("cell_methods")
		for at, e := range grid.ParseCellMethods(cm) {
			var tn []string
			for _, n := range e.Names {
				if slices.Contains(timeNames, n) {
					tn = append(tn, n)
				}
			}
			if len(tn) > 0 {
				t := e
				t.Names = tn
				times = append(times, src{b.Role, b.Var, cm, t, at})
			}
			if slices.Contains(e.Names, "area") && slices.Contains(cloudAreaTypes, e.Where) {
				a := e
				a.Names = []string{"area"}
				areas = append(areas, src{b.Role, b.Var, cm, a, at})
			}
		}
	}
	var r inheritedMethods
	pick := func(what string, cands []src) (src, bool) {
		if len(cands) == 0 {
			return src{}, false
		}
		slices.SortStableFunc(cands, func(a, b src) int {
			return slices.Index(cellMethodRoles, a.role) - slices.Index(cellMethodRoles, b.role)
		})
		best := cands[0]
		agree := true
		for _, c := range cands[1:] {
			if !sameMethod(c.e, best.e) {
				agree = false
			}
			if best.e.Method == "point" && c.e.Method != "point" {
				best = c
			}
		}
		if !agree {
			var says []string
			for _, c := range cands {
				says = append(says, fmt.Sprintf("%s (%s) says %q", c.role, c.v, c.cm))
			}
			r.Warnings = append(r.Warnings, fmt.Sprintf("the inputs' cell_methods disagree on %s: %s; the outputs say %q (a method other than point wins over point, then the order lwp, re, tau)",
				what, strings.Join(says, ", "), best.e.String()))
			r.Comment = strings.TrimSpace(r.Comment + fmt.Sprintf(" The inputs' cell_methods disagree on %s (%s); cell_methods follows %s.", what, strings.Join(says, "; "), best.v))
		}
		return best, true
	}
	var out []grid.CellMethod
	a, hasArea := pick("area", areas)
	if tm, ok := pick("time", times); ok {
		e := tm.e
		out = append(out, e)
		if hasArea && a.v == tm.v && a.at < tm.at { // the input's own order
			out = []grid.CellMethod{a.e, e}
		} else if hasArea {
			out = append(out, a.e)
		}
		if e.Method != "point" {
			r.Comment = strings.TrimSpace(fmt.Sprintf("Computed from inputs that are time statistics (%s): the diagnostic of the mean state, not a %s of per-scene diagnostics. %s",
				e.String(), e.Method, r.Comment))
		}
	} else {
		out = append(out, grid.CellMethod{Names: []string{"time"}, Method: "point"})
		if hasArea {
			out = append(out, a.e)
		}
	}
	r.CellMethods = grid.FormatCellMethods(out)
	return r
}

// sameMethod compares two entries' method and qualifiers (not their names or comments).
func sameMethod(a, b grid.CellMethod) bool {
	return a.Method == b.Method && a.Where == b.Where && a.Over == b.Over && a.Within == b.Within
}
