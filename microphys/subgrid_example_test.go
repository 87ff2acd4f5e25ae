package microphys_test

import (
	"fmt"

	"github.com/warmrain/warmrain/microphys"
)

func ExampleSubgridEnhancement() {
	// the mean of (L/μ)^2.47 over a gamma distribution of shape 4: E(ν, b) =
	// Γ(ν+b)/(Γ(ν) ν^b), derived (doc/science.md#subgrid-gamma); the value is checked
	// against scipy and quadrature in subgrid_test.go.
	fmt.Printf("%.4f\n", microphys.SubgridEnhancement(4, 2.47))
	// Output:
	// 1.4813
}

func ExampleOnset_Probability() {
	// Onset rising linearly over 12-16 µm, the range of published onset radii
	// (doc/science.md#drizzle-onset; values derived from the linear ramp).
	o := microphys.Onset{Radius: 14e-6, Width: 4e-6}
	for _, r := range []float64{11e-6, 13e-6, 14e-6, 17e-6} {
		fmt.Printf("%.0f µm: %.2f\n", r*1e6, o.Probability(r))
	}
	// Output:
	// 11 µm: 0.00
	// 13 µm: 0.25
	// 14 µm: 0.50
	// 17 µm: 1.00
}

func ExampleSubgridDrizzleModel() {
	// LWP 120 g m-2, N_d 100 cm-3, cloud-top r_e 13 µm, sub-grid gamma shape 4; rate law
	// a, b, c = 0.37, 1.75, 1.75 [Comstock2004] (from memory). Values derived from the
	// closed forms (doc/science.md#subgrid-gamma), tested against quadrature and scipy in
	// subgrid_test.go.
	o := microphys.Onset{Radius: 14e-6, Width: 4e-6}
	d := microphys.SubgridDrizzleModel(0.12, 100e6, 13e-6, 4, o, 0.37, 1.75, 1.75)
	fmt.Printf("POP %.3f, cell mean %.3f mm/day, drizzling part %.3f mm/day\n", d.POP, d.Rate*86400, d.Intensity*86400)
	// Output:
	// POP 0.235, cell mean 0.246 mm/day, drizzling part 1.046 mm/day
}
