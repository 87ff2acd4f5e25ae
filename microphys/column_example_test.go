// Examples document usage; their printed values come from the package itself and are not
// checks against published values (those are in the tests that name their source).
package microphys_test

import (
	"fmt"
	"math"

	"github.com/warmrain/warmrain/microphys"
)

func ExampleCondensationRate() {
	fmt.Printf("c_w(285 K, 900 hPa) = %.4g kg m-4\n", microphys.CondensationRate(90000, 285))
	// Output:
	// c_w(285 K, 900 hPa) = 2.161e-06 kg m-4
}

func ExampleMoistLapseRate() {
	fmt.Printf("Gamma_m(288 K, 1000 hPa) = %.4g K/km\n", 1e3*microphys.MoistLapseRate(100000, 288))
	// Output:
	// Gamma_m(288 K, 1000 hPa) = 4.786 K/km
}

func ExampleLWPAdiabatic() {
	fmt.Printf("LWP = %.4g kg m-2\n", microphys.LWPAdiabatic(10, 10e-6))
	// Output:
	// LWP = 0.05556 kg m-2
}

func ExampleLWPHomogeneous() {
	fmt.Printf("LWP = %.4g kg m-2\n", microphys.LWPHomogeneous(10, 10e-6))
	// Output:
	// LWP = 0.06667 kg m-2
}

func ExampleTauAdiabatic() {
	fmt.Printf("tau = %.4g\n", microphys.TauAdiabatic(0.1, 12e-6, 2))
	// Output:
	// tau = 15
}

func ExampleDropletNumber() {
	fmt.Printf("N_d = %.4g cm-3\n", 1e-6*microphys.DropletNumber(10, 10e-6, 0.8, 2, 1, 1.9e-6))
	// Output:
	// N_d = 137.1 cm-3
}

func ExampleDropletNumberLWP() {
	fmt.Printf("N_d = %.4g cm-3\n", 1e-6*microphys.DropletNumberLWP(0.1, 12e-6, 0.8, 1, 2e-6))
	// Output:
	// N_d = 109.2 cm-3
}

func ExampleDropletNumberH() {
	fmt.Printf("N_d = %.4g cm-3\n", 1e-6*microphys.DropletNumberH(241.8, 10e-6, 0.8, 1, 1.9e-6))
	// Output:
	// N_d = 137.1 cm-3
}

func ExampleThickness() {
	fmt.Printf("H = %.4g m\n", microphys.Thickness(0.1, 1, 1.9e-6))
	// Output:
	// H = 324.4 m
}

func ExampleAdiabaticLWC() {
	fmt.Printf("LWC(300 m) = %.4g kg m-3\n", microphys.AdiabaticLWC(300, 0.8, 2e-6))
	// Output:
	// LWC(300 m) = 0.00048 kg m-3
}

func ExampleMeanVolumeRadius() {
	fmt.Printf("r_v(250 m) = %.4g m\n", microphys.MeanVolumeRadius(250, 100e6, 1, 2e-6))
	// Output:
	// r_v(250 m) = 1.061e-05 m
}

func ExampleEffectiveRadius() {
	fmt.Printf("r_e(250 m) = %.4g m\n", microphys.EffectiveRadius(250, 100e6, 0.8, 1, 2e-6))
	// Output:
	// r_e(250 m) = 1.143e-05 m
}

func ExampleCriticalLWP() {
	fmt.Printf("LWP* = %.4g kg m-2\n", microphys.CriticalLWP(100e6, 14e-6, 0.8, 1, 2e-6))
	// Output:
	// LWP* = 0.2114 kg m-2
}

func ExampleCloudBase() {
	pb, tb := microphys.CloudBase(90000, 283, 300)
	fmt.Printf("T_b = %.4g K, p_b = %.4g Pa\n", tb, pb)
	// Output:
	// T_b = 284.5 K, p_b = 9.329e+04 Pa
}

func ExampleDryBaseHeight() {
	fmt.Printf("z_b = %.4g m\n", microphys.DryBaseHeight(95000, 285, 101325))
	// Output:
	// z_b = 542.7 m
}

func ExampleAutoconvKK2000Rate() {
	fmt.Printf("%.4g kg/kg/s\n", microphys.AutoconvKK2000Rate(5e-4, 100e6))
	// Output:
	// 2.493e-09 kg/kg/s
}

func ExampleAutoconvKesslerRate() {
	fmt.Printf("%.4g kg/kg/s\n", microphys.AutoconvKesslerRate(1e-3, 1e-3, 5e-4))
	// Output:
	// 5e-07 kg/kg/s
}

func ExampleAutoconvLiuDaumRate() {
	fmt.Printf("%.4g kg m-3 s-1\n", microphys.AutoconvLiuDaumRate(1e-3, 50e6))
	// Output:
	// 2.998e-07 kg m-3 s-1
}

func ExampleAutoconvSeifertBehengRate() {
	fmt.Printf("%.4g kg m-3 s-1\n", microphys.AutoconvSeifertBehengRate(0.5e-3, 1e8, 1))
	// Output:
	// 4.255e-11 kg m-3 s-1
}

func ExampleColumnAutoconvKK2000() {
	h := microphys.Thickness(0.1, 1, 1.9e-6)
	fmt.Printf("P_col = %.4g kg m-2 s-1\n", microphys.ColumnAutoconvKK2000(h, 1.9e-6, 100e6, 1.2))
	// Output:
	// P_col = 2.991e-07 kg m-2 s-1
}

func ExampleColumnAutoconversion() {
	c := microphys.DefaultParams().AutoconvConfig()
	c.Scheme = microphys.AutoconvKessler1969
	fmt.Printf("P_col = %.4g kg m-2 s-1\n", microphys.ColumnAutoconversion(c, 400, 2e-6, 60e6, 1.1))
	// Output:
	// P_col = 1.562e-05 kg m-2 s-1
}

func ExampleColumnAutoconversionQuad() {
	c := microphys.AutoconvConfig{Scheme: microphys.AutoconvKK2000}
	h := microphys.Thickness(0.1, 1, 1.9e-6)
	fmt.Printf("P_col = %.4g kg m-2 s-1\n", microphys.ColumnAutoconversionQuad(c, h, 1.9e-6, 100e6, 1.2))
	// Output:
	// P_col = 2.991e-07 kg m-2 s-1
}

func ExampleDrizzleRate() {
	fmt.Printf("R_CB = %.4g mm/day\n", 86400*microphys.DrizzleRate(0.15, 50e6, 0.37, 1.75, 1.75))
	// Output:
	// R_CB = 2.53 mm/day
}

func ExampleWarmRainEfficiency() {
	fmt.Printf("%.4g s-1\n", microphys.WarmRainEfficiency(3e-7, 0.1))
	// Output:
	// 3e-06 s-1
}

func ExampleDrizzleProbability() {
	fmt.Printf("POP = %.4g\n", microphys.DrizzleProbability(0.05, 0.1, 2))
	// Output:
	// POP = 0.09158
}

func ExampleGammaShapeFromStd() {
	fmt.Printf("nu = %.4g\n", microphys.GammaShapeFromStd(0.1, 0.04))
	// Output:
	// nu = 6.25
}

func ExampleParseAutoconvScheme() {
	s, err := microphys.ParseAutoconvScheme("liu-daum2004")
	fmt.Println(s, err)
	// Output:
	// liu-daum2004 <nil>
}

func ExampleQCNames() {
	fmt.Println(microphys.QCNames(microphys.QCThinCloud | microphys.QCAirStateAssumed))
	// Output:
	// [thin_cloud air_state_assumed]
}

func ExampleModel_Column() {
	p := microphys.DefaultParams()
	m, err := microphys.NewModel(p)
	if err != nil {
		fmt.Println(err)
		return
	}
	n := math.NaN()
	in := microphys.Inputs{LWP: 0.12, Re: 12e-6, Tau: n, CTT: 285, CTP: 90000, CTH: n, LWPStd: 0.05, SurfaceRH: n}
	var out microphys.Outputs
	m.Column(&in, &out)
	fmt.Printf("N_d %.4g cm-3, H %.4g m, drizzle %.4g mm/day, POP %.4g\n", out.Nd*1e-6, out.H, out.DrizzleRate*86400, out.POP)
	fmt.Printf("intensity of the drizzling part %.4g mm/day\n", out.DrizzleIntensity*86400)
	fmt.Printf("collector %.3g µm after %.3g s\n", out.CollectorRadius*1e6, out.CollectorTime)
	fmt.Printf("surface drizzle %.3g of the cloud-base rate: %.3g mm/day\n", out.SurfaceDrizzleFraction, out.SurfaceDrizzleRate*86400)
	fmt.Println(microphys.QCNames(out.QC))
	// Output:
	// N_d 124.4 cm-3, H 333.2 m, drizzle 0.05516 mm/day, POP 0.06694
	// intensity of the drizzling part 0.8241 mm/day
	// collector 39.2 µm after 2.59e+03 s
	// surface drizzle 0.0517 of the cloud-base rate: 0.00285 mm/day
	// [cloud_base_height_assumed]
}

func ExampleParseHumidityProfile() {
	h, err := microphys.ParseHumidityProfile("surface-rh")
	fmt.Println(h, err)
	// Output:
	// surface-rh <nil>
}

func ExampleHumidityProfile_String() {
	fmt.Println(microphys.DefaultParams().SubCloudHumidity)
	// Output:
	// well-mixed
}

func ExampleParams_Validate() {
	p := microphys.DefaultParams()
	p.Fad = 1.5
	fmt.Println(p.Validate())
	// Output:
	// --adiabatic-fraction must be above 0 and at most 1 (got 1.5)
}

func ExampleAutoconvScheme_Citation() {
	fmt.Println(microphys.AutoconvKessler1969.Citation())
	// Output: Kessler (1969) Meteor. Monogr. No. 32, Amer. Meteor. Soc.
}

func ExampleParamDecl_FromSI() {
	for _, d := range microphys.ParamDecls {
		if d.Option == "onset-radius" {
			p := microphys.DefaultParams()
			fmt.Println(d.FromSI(d.Get(&p)), d.Unit, d.ToSI(14) == p.ReStar, d.RangeText())
		}
	}
	// Output: 14 um true between 1 and 100 um
}
