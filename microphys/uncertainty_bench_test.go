package microphys

import (
	"math"
	"testing"
)

var uncSink float64

// BenchmarkUncertainty compares the cost of a column without and with its uncertainty, side
// by side in one run (README "Uncertainty"): off (Complete and Column), the retrieval error
// from LWP and r_e errors, from LWP, r_e and tau errors, and the parameter spread. A set of
// deck-like columns with the default model (collector and evaporation tables). It checks no
// value: the LWP of 60-180 g m-2 and r_e of 9-15 um span typical marine stratocumulus
// (doc/science.md#typical-stratocumulus, after Wood 2012), and the 10 % LWP and r_e and 5 %
// tau errors are round sizes of the order of the per-pixel uncertainties Grosvenor et al.
// (2018) review (common practice for a benchmark; not a check value).
func BenchmarkUncertainty(b *testing.B) {
	m := defaultModel(b)
	s, err := NewSpreadModels(m)
	if err != nil {
		b.Fatal(err)
	}
	var raws []RawColumn
	for _, lwp := range []float64{0.06, 0.09, 0.13, 0.18} {
		for _, re := range []float64{9e-6, 12e-6, 15e-6} {
			raws = append(raws, uncColumn(lwp, re, math.NaN()), uncColumn(lwp, re, TauAdiabatic(lwp, re, 2)))
		}
	}
	se := make([]float64, len(OutputDecls))
	w := new(Scratch)
	run := func(b *testing.B, errs func(r *RawColumn) InputErrors, spread bool) {
		b.ReportAllocs()
		var done Inputs
		var out Outputs
		for i := 0; b.Loop(); i++ {
			raw := &raws[i%len(raws)]
			done = raw.In
			qin := m.Complete(&done, raw.Nd, raw.CF, raw.GridMean)
			m.Column(&done, &out)
			if errs != nil {
				e := errs(raw)
				m.RetrievalError(raw, &done, qin, &out, &e, se, w)
			}
			if spread {
				s.ParameterSpread(raw, &done, &out, se, nil, w)
			}
			uncSink += out.Nd + se[1]
		}
	}
	lr := func(r *RawColumn) InputErrors { return InputErrors{LWP: 0.1 * r.In.LWP, Re: 0.1 * r.In.Re} }
	lrt := func(r *RawColumn) InputErrors {
		return InputErrors{LWP: 0.1 * r.In.LWP, Re: 0.1 * r.In.Re, Tau: 0.05 * r.In.Tau}
	}
	b.Run("off", func(b *testing.B) { run(b, nil, false) })
	b.Run("retrieval_lwp_re", func(b *testing.B) { run(b, lr, false) })
	b.Run("retrieval_lwp_re_tau", func(b *testing.B) { run(b, lrt, false) })
	b.Run("parameter_spread", func(b *testing.B) { run(b, nil, true) })
}
