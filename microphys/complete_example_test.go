package microphys_test

import (
	"fmt"
	"math"

	"github.com/warmrain/warmrain/microphys"
)

func ExampleStandardAtmosphere() {
	// U.S. Standard Atmosphere 1976 [USSA1976], table values at the tropopause:
	// 216.65 K and 22632 Pa at 11 km.
	p, T := microphys.StandardAtmosphere(11000)
	fmt.Printf("11 km: %.2f K, %.0f Pa\n", T, p)
	// Output:
	// 11 km: 216.65 K, 22632 Pa
}

func ExampleStandardAtmosphereTemperature() {
	// [USSA1976] temperature at a pressure; derived from its layer formulas.
	fmt.Printf("cloud top at 850 hPa: %.1f K; at 300 hPa: %.1f K\n",
		microphys.StandardAtmosphereTemperature(85000), microphys.StandardAtmosphereTemperature(30000))
	// Output:
	// cloud top at 850 hPa: 278.7 K; at 300 hPa: 228.6 K
}

func ExampleModel_Complete() {
	// A microwave LWP of 100 g m-2 with no r_e, and an assumed 100 cm-3. r_e is derived
	// from the adiabatic cloud [Brenguier2000] (doc/science.md#droplet-number-and-thickness);
	// the round trip gives N_d back exactly (derived).
	p := microphys.DefaultParams()
	p.DropletNumber = 100e6
	m, _ := microphys.NewModel(p)
	nan := math.NaN()
	in := microphys.Inputs{LWP: 0.1, Re: nan, Tau: nan, CTT: nan, CTP: nan, CTH: nan, LWPStd: nan, SurfaceRH: nan}
	qc := m.Complete(&in, nan, nan, false)
	var out microphys.Outputs
	m.Column(&in, &out)
	fmt.Printf("r_e = %.2f um, N_d back = %.1f cm-3, %v\n", in.Re*1e6, out.Nd*1e-6, microphys.InputQCNames(qc))
	// Output:
	// r_e = 12.52 um, N_d back = 100.0 cm-3, [droplet_number_assumed]
}

func ExampleInputQCNames() {
	// Flag names (software interface; no physical value).
	fmt.Println(microphys.InputQCNames(microphys.QCClearSky | microphys.QCStandardAtmosphere))
	// Output:
	// [clear_sky air_state_standard_atmosphere]
}
