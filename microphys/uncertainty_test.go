package microphys

import (
	"math"
	"math/rand/v2"
	"testing"
)

// uncColumn is a raw column at a marine Sc air state, tau NaN unless given.
func uncColumn(lwp, re, tau float64) RawColumn {
	in := nanInputs()
	in.LWP, in.Re, in.Tau, in.CTT, in.CTP = lwp, re, tau, 285, 90000
	return RawColumn{In: in, Nd: math.NaN(), CF: math.NaN()}
}

// uncRun completes and runs raw, then returns its outputs and retrieval errors.
func uncRun(m *Model, raw RawColumn, e InputErrors) (Outputs, []float64, uint32, Inputs) {
	done := raw.In
	qin := m.Complete(&done, raw.Nd, raw.CF, raw.GridMean)
	var out Outputs
	m.Column(&done, &out)
	se := make([]float64, len(OutputDecls))
	nl := m.RetrievalError(&raw, &done, qin, &out, &e, se, nil)
	return out, se, nl, done
}

// TestRetrievalErrorNdClosedForm checks the first-order N_d and H errors against their closed
// forms (derived in doc/science.md#uncertainty from the adiabatic relations of
// [Brenguier2000]): from LWP and r_e, sigma_N/N = sqrt((s_L/2)^2 + (3 s_r)^2 - 3 rho s_L s_r);
// from tau and r_e, sqrt((s_tau/2)^2 + (5/2 s_r)^2); sigma_H/H = s_L/2.
func TestRetrievalErrorNdClosedForm(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	m := defaultModel(t)
	iN, iH := uncIdx.nd, uncIdx.h
	for _, lwp := range []float64{0.05, 0.1, 0.2} {
		for _, re := range []float64{8e-6, 12e-6, 16e-6} {
			for _, sL := range []float64{0.05, 0.2} {
				for _, sr := range []float64{0.03, 0.1} {
					for _, rho := range []float64{0, 0.5, -0.4} {
						out, se, _, _ := uncRun(m, uncColumn(lwp, re, math.NaN()), InputErrors{LWP: sL * lwp, Re: sr * re, Corr: rho})
						if out.QC&QCScreenMask != 0 {
							continue
						}
						want := math.Sqrt(sL*sL/4 + 9*sr*sr - 3*rho*sL*sr)
						if got := se[iN] / out.Nd; math.Abs(got-want) > 1e-12 {
							t.Errorf("LWP %g r_e %g s_L %g s_r %g rho %g: sigma_N/N = %.15g, closed form %.15g", lwp, re, sL, sr, rho, got, want)
						}
						if got := se[iH] / out.H; math.Abs(got-sL/2) > 1e-12 {
							t.Errorf("sigma_H/H = %g, want %g", got, sL/2)
						}
					}
					tau := TauAdiabatic(lwp, re, 2)
					out, se, _, _ := uncRun(m, uncColumn(lwp, re, tau), InputErrors{LWP: sL * lwp, Re: sr * re, Tau: sL * tau})
					if out.QC&QCScreenMask != 0 {
						continue
					}
					want := math.Sqrt(sL*sL/4 + 6.25*sr*sr)
					if got := se[iN] / out.Nd; math.Abs(got-want) > 1e-12 {
						t.Errorf("tau form: sigma_N/N = %.15g, closed form %.15g", got, want)
					}
				}
			}
		}
	}
}

// TestErrorCorrelationDerived: an LWP derived from tau and r_e (Complete) carries their
// errors; the LWP-and-r_e form with s_L^2 = s_tau^2 + s_r^2 and rho = s_r/sqrt(s_tau^2 +
// s_r^2) gives the same N_d error as the tau form (derived, doc/science.md#uncertainty).
func TestErrorCorrelationDerived(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	m := defaultModel(t)
	re, tau := 12e-6, 12.0
	for _, st := range []float64{0.05, 0.1, 0.2} {
		for _, sr := range []float64{0.03, 0.1} {
			raw := uncColumn(math.NaN(), re, tau)
			out, se, _, _ := uncRun(m, raw, InputErrors{Re: sr * re, Tau: st * tau})
			want := math.Sqrt(st*st/4 + 6.25*sr*sr)
			if got := se[uncIdx.nd] / out.Nd; math.Abs(got-want) > 1e-12 {
				t.Errorf("LWP from optics: sigma_N/N = %g, want %g", got, want)
			}
			sL := math.Sqrt(st*st + sr*sr)
			rho := sr / sL
			lwp := LWPAdiabatic(tau, re)
			_, se2, _, _ := uncRun(m, uncColumn(lwp, re, math.NaN()), InputErrors{LWP: sL * lwp, Re: sr * re, Corr: rho})
			if got := se2[uncIdx.nd] / out.Nd; math.Abs(got-want) > 1e-9 {
				t.Errorf("LWP form with the derived rho %g: sigma_N/N = %g, want %g", rho, got, want)
			}
		}
	}
}

// TestRetrievalErrorDifferences compares the central differences (the method of the tabled
// outputs) with the analytic derivatives of the closed forms (derived: truncation error
// (p h)^2/6 <= 6e-4 for |p| <= 6, critical_lwp's r_e exponent).
func TestRetrievalErrorDifferences(t *testing.T) {
	m := defaultModel(t)
	for _, tau := range []float64{math.NaN(), 14} {
		raw := uncColumn(0.12, 11e-6, tau)
		e := InputErrors{LWP: 0.012, Re: 0.6e-6, Tau: 1.4, Corr: 0.3}
		_, exact, _, _ := uncRun(m, raw, e)
		uncAnalytic = false
		_, diff, _, _ := uncRun(m, raw, e)
		uncAnalytic = true
		for _, k := range []int{uncIdx.lwp, uncIdx.nd, uncIdx.h, uncIdx.reTop, uncIdx.crit, uncIdx.ac, uncIdx.eff} {
			if rel := math.Abs(diff[k]/exact[k] - 1); !(rel < 1e-3) {
				t.Errorf("tau %g %s: difference %g, analytic %g (rel %.2g)", tau, OutputDecls[k].Name, diff[k], exact[k], rel)
			}
		}
	}
}

// TestRetrievalErrorMonteCarlo samples the inputs (seeded, Gaussian, correlated) on a grid of
// columns and compares the standard deviation of every output with its first-order error where
// the errors are small (2-3 %) and the output is not flagged non-linear. Tolerance: 7 %, about
// four times the sampling error 1/sqrt(2n) of a standard deviation from n = 4000 (common
// practice).
func TestRetrievalErrorMonteCarlo(t *testing.T) {
	if testing.Short() {
		t.Skip("Monte Carlo")
	}
	m := defaultModel(t)
	const n = 4000
	rng := rand.New(rand.NewPCG(7, 11))
	checked := make([]int, len(OutputDecls))
	var o Outputs
	for _, lwp := range []float64{0.04, 0.09, 0.2} {
		for _, re := range []float64{9e-6, 13e-6, 17e-6} {
			for _, withTau := range []bool{false, true} {
				tau := math.NaN()
				if withTau {
					tau = TauAdiabatic(lwp, re, 2) * 1.1
				}
				raw := uncColumn(lwp, re, tau)
				e := InputErrors{LWP: 0.03 * lwp, Re: 0.02 * re, Tau: 0.03 * tau, Corr: 0.4}
				out, se, nl, _ := uncRun(m, raw, e)
				if out.QC&QCScreenMask != 0 {
					continue
				}
				var sum, sum2 [uncMaxOut]float64
				var cnt [uncMaxOut]int
				for range n {
					z1, z2, z3 := rng.NormFloat64(), rng.NormFloat64(), rng.NormFloat64()
					r := raw
					r.In.LWP += e.LWP * z1
					r.In.Re += e.Re * (e.Corr*z1 + math.Sqrt(1-e.Corr*e.Corr)*z2)
					if withTau {
						r.In.Tau += e.Tau * z3
					}
					var d Inputs
					if !m.evalRaw(&r, &d, &o) {
						continue
					}
					for k := range OutputDecls {
						v := uncValue(k, &d, &o)
						if math.IsNaN(v) {
							continue
						}
						sum[k] += v
						sum2[k] += v * v
						cnt[k]++
					}
				}
				for k := range OutputDecls {
					if nl&(1<<k) != 0 || math.IsNaN(se[k]) || cnt[k] < n*99/100 {
						continue
					}
					mean := sum[k] / float64(cnt[k])
					sd := math.Sqrt(max(0, sum2[k]/float64(cnt[k])-mean*mean))
					scale := math.Abs(uncValue(k, &raw.In, &out))
					if se[k] <= 1e-9*scale && sd <= 1e-6*scale {
						checked[k]++
						continue
					}
					if math.Abs(sd/se[k]-1) > 0.07 {
						t.Errorf("LWP %g r_e %g tau %v: %s: Monte Carlo sd %.4g, first order %.4g (value %.4g)", lwp, re, withTau, OutputDecls[k].Name, sd, se[k], scale)
					}
					checked[k]++
				}
			}
		}
	}
	for k, c := range checked {
		if c == 0 {
			t.Errorf("%s was never compared (missing or flagged non-linear on every column)", OutputDecls[k].Name)
		}
	}
}

// TestRetrievalErrorNonlinear: a 30 % r_e error makes N_d's second-order term large
// (|p| s/2 = 0.45 > 1/4, derived), and POP near 0 (r_e far below the onset radius) is
// flagged when the band leaves [0, 1].
func TestRetrievalErrorNonlinear(t *testing.T) {
	m := defaultModel(t)
	_, se, nl, _ := uncRun(m, uncColumn(0.1, 12e-6, math.NaN()), InputErrors{Re: 3.6e-6})
	if nl&(1<<uncIdx.nd) == 0 {
		t.Errorf("N_d with 30 %% r_e error not flagged (sigma %g)", se[uncIdx.nd])
	}
	_, _, nl, _ = uncRun(m, uncColumn(0.1, 12e-6, math.NaN()), InputErrors{Re: 0.24e-6})
	if nl&(1<<uncIdx.nd) != 0 {
		t.Errorf("N_d with 2 %% r_e error flagged")
	}
	ip := outputIndex("drizzle_probability")
	out, se, nl, _ := uncRun(m, uncColumn(0.03, 9e-6, math.NaN()), InputErrors{Re: 2e-6})
	if out.POP-2*se[ip] < 0 && nl&(1<<ip) == 0 {
		t.Errorf("POP %g ± %g not flagged", out.POP, se[ip])
	}
}

// TestUncertaintyAllocs: no allocation per column (DEVELOPERS.md, the column API).
func TestUncertaintyAllocs(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	m := defaultModel(t)
	s, err := NewSpreadModels(m)
	if err != nil {
		t.Fatal(err)
	}
	raw := uncColumn(0.12, 12e-6, math.NaN())
	done := raw.In
	qin := m.Complete(&done, raw.Nd, raw.CF, false)
	var out Outputs
	m.Column(&done, &out)
	e := InputErrors{LWP: 0.01, Re: 1e-6, Corr: 0.2}
	se := make([]float64, len(OutputDecls))
	sp := make([]float64, len(OutputDecls))
	w := new(Scratch)
	if a := testing.AllocsPerRun(20, func() { m.RetrievalError(&raw, &done, qin, &out, &e, se, w) }); a != 0 {
		t.Errorf("RetrievalError allocates %v per column", a)
	}
	if a := testing.AllocsPerRun(5, func() { s.ParameterSpread(&raw, &done, &out, sp, nil, w) }); a != 0 {
		t.Errorf("ParameterSpread allocates %v per column", a)
	}
}

// TestParameterSpreadNd: N_d from LWP and r_e is ∝ f_ad^(1/2)/k (Q_ext cancels; derived from
// the formulas of [Brenguier2000]), so with k = 0.8 ± 0.1 and f_ad = 1 - 0.15 its spread is
// sqrt(((1/0.7 - 1/0.9)/2 0.8)^2 + (1 - 0.85^(1/2))^2) (derived); the parts add in quadrature.
func TestParameterSpreadNd(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	m := defaultModel(t)
	s, err := NewSpreadModels(m)
	if err != nil {
		t.Fatal(err)
	}
	raw := uncColumn(0.12, 12e-6, math.NaN())
	done := raw.In
	m.Complete(&done, raw.Nd, raw.CF, false)
	var out Outputs
	m.Column(&done, &out)
	n := len(OutputDecls)
	sp := make([]float64, n)
	parts := make([]float64, n*len(s.Parameters()))
	s.ParameterSpread(&raw, &done, &out, sp, parts, nil)
	a := (1/0.7 - 1/0.9) / 2 * 0.8
	b := 1 - math.Sqrt(0.85)
	want := math.Sqrt(a*a + b*b)
	if got := sp[uncIdx.nd] / out.Nd; math.Abs(got-want) > 1e-9 {
		t.Errorf("N_d spread %.12g, want %.12g", got, want)
	}
	for k := range n {
		if math.IsNaN(sp[k]) {
			continue
		}
		var q float64
		for j := range s.Parameters() {
			q += parts[j*n+k] * parts[j*n+k]
		}
		if math.Abs(math.Sqrt(q)-sp[k]) > 1e-12*math.Abs(sp[k]) {
			t.Errorf("%s: parts %g, total %g", OutputDecls[k].Name, math.Sqrt(q), sp[k])
		}
	}
	if !(sp[outputIndex("drizzle_probability")] > 0) || !(sp[outputIndex("cloud_base_drizzle_rate")] > 0) {
		t.Errorf("drizzle outputs have no parameter spread: %v", sp)
	}
}
