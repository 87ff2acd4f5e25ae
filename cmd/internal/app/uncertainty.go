package app

import (
	"fmt"
	"math"
	"strings"

	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/microphys"
)

// The uncertainty outputs of process: <name>_standard_error (the retrieval part, written
// when the input carries a standard error of LWP, r_e or tau), <name>_parameter_spread
// (--parameter-uncertainty) and the flag of the outputs whose first-order error is not
// representative. Without either the output is what it was: no new variables, the same
// data. Method: doc/science.md#uncertainty, doc/science.md#parameter-spread.

const (
	seSuffix     = "_standard_error"
	spreadSuffix = "_parameter_spread"
	// uncFlagName is the variable of the non-linearity bits, one per output.
	uncFlagName = "warm_rain_uncertainty_flag"
)

// errorRoles are the standard-error roles and the input each belongs to (LWP, r_e, tau).
var errorRoles = [3]grid.Role{grid.RoleLWPSE, grid.RoleReSE, grid.RoleTauSE}

// uncPlan says which uncertainty outputs a run writes.
type uncPlan struct {
	errors bool                    // a standard-error role is bound: write <name>_standard_error
	rel    [3]bool                 // the role's values are fractions of the input's
	spread *microphys.SpreadModels // --parameter-uncertainty: write <name>_parameter_spread
	corr   float64                 // --error-correlation
	what   string                  // the inputs' errors, in words (the variables' comment)
	bound  [3]grid.Binding         // the bound standard-error roles (Var "" when absent)
}

// uncertaintyPlan decides the uncertainty outputs of input in: nil when there are none.
func (j *processJob) uncertaintyPlan(in *grid.Input) (*uncPlan, error) {
	u := &uncPlan{corr: j.params.ErrorCorrelation}
	var what []string
	for k, r := range errorRoles {
		if b, ok := in.Binding(r); ok {
			u.errors, u.rel[k], u.bound[k] = true, b.Relative, b
			unit := b.Canonical
			if b.Relative {
				unit = "fraction"
			}
			what = append(what, fmt.Sprintf("%s (%s, %s)", b.Var, r, unit))
		}
	}
	u.what = strings.Join(what, ", ")
	if j.params.ParameterUncertainty && !j.o.ioOnly {
		m, err := j.getModel()
		if err != nil {
			return nil, err
		}
		j.spreadOnce.Do(func() { j.spread, j.spreadErr = microphys.NewSpreadModels(m) })
		if j.spreadErr != nil {
			return nil, j.spreadErr
		}
		u.spread = j.spread
	}
	if !u.errors && u.spread == nil {
		return nil, nil
	}
	return u, nil
}

// vars adds the uncertainty variables after vars (the outputs of defs, then QC) and names
// them in each output's ancillary_variables.
func (u *uncPlan) vars(defs []outputDef, vars []grid.OutputVar) []grid.OutputVar {
	if u == nil {
		return vars
	}
	var extra []grid.OutputVar
	if u.errors {
		masks := make([]int, len(defs))
		words := make([]string, len(defs))
		for k, d := range defs {
			sn := ""
			if d.standardName != "" {
				sn = d.standardName + " standard_error"
			}
			extra = append(extra, grid.OutputVar{
				Name: d.name + seSuffix, StandardName: sn, Units: d.units, Type: grid.Float32, Fill: -999,
				LongName: "retrieval standard error (first order) of the " + lowerFirst(d.title),
				ValidMin: 0, ValidMax: d.validMax - d.validMin, AncillaryVariables: uncFlagName, CellMethods: "time: point",
				Comment: "first-order propagation of the inputs' standard errors " + u.what + fmt.Sprintf(" with LWP-r_e error correlation %g", u.corr) +
					" (doc/science.md#uncertainty in the warmrain sources); where " + uncFlagName + " flags this output the model is strongly non-linear within the errors and the value is the local sensitivity times the input error, not the spread of the output",
				CoverageContentType: "qualityInformation",
			})
			vars[k].AncillaryVariables += " " + d.name + seSuffix
			masks[k], words[k] = 1<<k, d.name+"_error_nonlinear"
		}
		all := 0
		for _, m := range masks {
			all |= m
		}
		extra = append(extra, grid.OutputVar{
			Name: uncFlagName, StandardName: "status_flag", LongName: "outputs whose first-order standard error is not representative",
			Type: grid.Int32, Fill: -1, ValidMin: 0, ValidMax: float64(all), FlagMasks: masks, FlagMeanings: strings.Join(words, " "),
			Comment:             "bit set: within the input errors the output crosses a regime boundary (missing, zero or screened), its band value ± 2 standard errors leaves the valid range, or the second-order term exceeds a quarter of the first",
			CoverageContentType: "qualityInformation",
		})
	}
	if u.spread != nil {
		for k, d := range defs {
			extra = append(extra, grid.OutputVar{
				Name: d.name + spreadSuffix, Units: d.units, Type: grid.Float32, Fill: -999,
				LongName: "parameter (structural) spread of the " + lowerFirst(d.title) + ": one standard deviation from the model's assumed parameters",
				ValidMin: 0, ValidMax: d.validMax - d.validMin, CellMethods: "time: point",
				Comment:             "parameters " + strings.Join(u.spread.Parameters(), ", ") + " moved one at a time by their spreads (warmrain_parameter_* attributes give the values; the spreads are in the README), combined in quadrature as independent; separate from the retrieval error " + d.name + seSuffix,
				CoverageContentType: "qualityInformation",
			})
			vars[k].AncillaryVariables += " " + d.name + spreadSuffix
		}
	}
	return append(vars, extra...)
}

// uncSlab is the per-slab working state of the uncertainty outputs (allocated once per
// slab, never per column).
type uncSlab struct {
	u       *uncPlan
	se, sp  []float64
	scratch microphys.Scratch
}

func (u *uncPlan) slab() *uncSlab {
	if u == nil {
		return nil
	}
	n := len(microphys.OutputDecls)
	return &uncSlab{u: u, se: make([]float64, n), sp: make([]float64, n)}
}

// column writes column i's uncertainty outputs into outs[base:] (the order of vars): raw is
// the column before completion, done after, qin the input QC bits, o the outputs (screened:
// all missing). errIn are the standard-error roles' values (NaN: absent).
func (w *uncSlab) column(m *microphys.Model, defs []outputDef, outs [][]float64, base, i int, raw *microphys.RawColumn,
	done *microphys.Inputs, qin uint32, o *microphys.Outputs, errIn [3]float64, screened bool) {
	u := w.u
	nan := math.NaN()
	if u.errors {
		var nl uint32
		if screened {
			for k := range w.se {
				w.se[k] = nan
			}
		} else {
			x := [3]float64{raw.In.LWP, raw.In.Re, raw.In.Tau}
			var s [3]float64
			for k := range 3 {
				s[k] = errIn[k]
				if u.rel[k] {
					s[k] *= x[k]
				}
			}
			e := microphys.InputErrors{LWP: s[0], Re: s[1], Tau: s[2], Corr: u.corr}
			if e.Any() {
				nl = m.RetrievalError(raw, done, qin, o, &e, w.se, &w.scratch)
			} else {
				for k := range w.se {
					w.se[k] = nan
				}
			}
		}
		var flag uint32
		for k, d := range defs {
			outs[base+k][i] = w.se[d.decl] * d.scale
			if nl&(1<<d.decl) != 0 {
				flag |= 1 << k
			}
		}
		outs[base+len(defs)][i] = float64(flag)
		if screened || !(errIn[0] > 0 || errIn[1] > 0 || errIn[2] > 0) {
			outs[base+len(defs)][i] = nan
		}
		base += len(defs) + 1
	}
	if u.spread != nil {
		if screened {
			for k := range defs {
				outs[base+k][i] = nan
			}
			return
		}
		u.spread.ParameterSpread(raw, done, o, w.sp, nil, &w.scratch)
		for k, d := range defs {
			outs[base+k][i] = w.sp[d.decl] * d.scale
		}
	}
}

// lowerFirst lower-cases the first letter of a title ("Droplet number" -> "droplet number").
func lowerFirst(s string) string {
	if s == "" {
		return s
	}
	return strings.ToLower(s[:1]) + s[1:]
}
