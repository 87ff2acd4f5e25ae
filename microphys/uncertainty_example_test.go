package microphys_test

import (
	"fmt"
	"math"

	"github.com/warmrain/warmrain/microphys"
)

func ExampleModel_RetrievalError() {
	// N_d from LWP and r_e by the adiabatic relation of Brenguier et al. (2000)
	// (doc/science.md#droplet-number-and-thickness). Its first-order error for independent
	// errors is σ_N/N = √((½ σ_L/L)² + (3 σ_r/r)²) (derived in doc/science.md#uncertainty,
	// from the N_d ∝ L^½ r_e^-3 of that relation); 10 % each gives √(0.05² + 0.3²) = 30.4 %.
	// uncertainty_test.go checks the closed form to 1e-12 on a grid of columns.
	p := microphys.DefaultParams()
	p.EnableCollector, p.EnableEvaporation = false, false
	m, _ := microphys.NewModel(p)
	nan := math.NaN()
	raw := microphys.RawColumn{In: microphys.Inputs{LWP: 0.1, Re: 12e-6, Tau: nan, CTT: 285, CTP: 90000,
		CTH: nan, LWPStd: nan, SurfaceRH: nan}, Nd: nan, CF: nan}
	done := raw.In
	qin := m.Complete(&done, raw.Nd, raw.CF, raw.GridMean)
	var out microphys.Outputs
	m.Column(&done, &out)
	e := microphys.InputErrors{LWP: 0.01, Re: 1.2e-6} // 10 % each, independent
	se := make([]float64, len(microphys.OutputDecls))
	m.RetrievalError(&raw, &done, qin, &out, &e, se, nil)
	k := 1 // droplet_number
	fmt.Printf("%s = %.1f ± %.1f cm-3 (%.1f %%)\n", microphys.OutputDecls[k].Name, out.Nd*1e-6, se[k]*1e-6, 100*se[k]/out.Nd)
	// Output:
	// droplet_number = 113.5 ± 34.5 cm-3 (30.4 %)
}

func ExampleInputErrors_Any() {
	e := microphys.InputErrors{Re: 1e-6}
	fmt.Println(e.Any())
	// Output:
	// true
}

func ExampleNewSpreadModels() {
	// The perturbed parameters are those with a Spread in ParamDecls, in their order; each
	// spread names its source there (SpreadSource; several marked from memory).
	p := microphys.DefaultParams()
	p.EnableCollector, p.EnableEvaporation = false, false
	m, _ := microphys.NewModel(p)
	s, _ := microphys.NewSpreadModels(m)
	fmt.Println(s.Parameters())
	// Output:
	// [k_ratio extinction_efficiency adiabatic_fraction onset_radius gamma_shape drizzle_law_a drizzle_law_b drizzle_law_c]
}

func ExampleSpreadModels_Parameters() {
	p := microphys.DefaultParams()
	p.EnableCollector, p.EnableEvaporation = false, false
	m, _ := microphys.NewModel(p)
	s, _ := microphys.NewSpreadModels(m)
	fmt.Println(len(s.Parameters()), "parameters perturbed one at a time")
	// Output:
	// 8 parameters perturbed one at a time
}

func ExampleSpreadModels_ParameterSpread() {
	// One-at-a-time perturbation by each parameter's declared spread, combined in quadrature
	// (doc/science.md#parameter-spread). N_d from LWP and r_e is ∝ f_ad^½/k by the relation of
	// Brenguier et al. (2000) (Q_ext cancels), so only the k and f_ad spreads of ParamDecls act:
	// 16.9/113.5 = 14.9 %, the closed form TestParameterSpreadNd checks.
	p := microphys.DefaultParams()
	p.EnableCollector, p.EnableEvaporation = false, false
	m, _ := microphys.NewModel(p)
	s, _ := microphys.NewSpreadModels(m)
	nan := math.NaN()
	raw := microphys.RawColumn{In: microphys.Inputs{LWP: 0.1, Re: 12e-6, Tau: nan, CTT: 285, CTP: 90000,
		CTH: nan, LWPStd: nan, SurfaceRH: nan}, Nd: nan, CF: nan}
	done := raw.In
	m.Complete(&done, raw.Nd, raw.CF, raw.GridMean)
	var out microphys.Outputs
	m.Column(&done, &out)
	sp := make([]float64, len(microphys.OutputDecls))
	s.ParameterSpread(&raw, &done, &out, sp, nil, nil)
	fmt.Printf("droplet_number = %.1f ± %.1f cm-3 (parameters)\n", out.Nd*1e-6, sp[1]*1e-6)
	// Output:
	// droplet_number = 113.5 ± 16.9 cm-3 (parameters)
}
