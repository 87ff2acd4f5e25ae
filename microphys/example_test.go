package microphys_test

import (
	"fmt"

	"github.com/warmrain/warmrain/microphys"
)

func ExampleSatVapourPressure() {
	fmt.Printf("e_s(20 degC) = %.4g Pa\n", microphys.SatVapourPressure(293.15))
	// Output:
	// e_s(20 degC) = 2337 Pa
}

func ExampleLatentHeat() {
	fmt.Printf("L_v(20 degC) = %.4g J/kg\n", microphys.LatentHeat(293.15))
	// Output:
	// L_v(20 degC) = 2.454e+06 J/kg
}

func ExampleSurfaceTension() {
	fmt.Printf("sigma_w(10 degC) = %.4g N/m\n", microphys.SurfaceTension(283.15))
	// Output:
	// sigma_w(10 degC) = 0.07455 N/m
}

func ExampleViscosityPK() {
	fmt.Printf("eta(15 degC) = %.4g Pa s\n", microphys.ViscosityPK(288.15))
	// Output:
	// eta(15 degC) = 1.792e-05 Pa s
}

func ExampleViscositySutherland() {
	fmt.Printf("eta(15 degC) = %.4g Pa s\n", microphys.ViscositySutherland(288.15))
	// Output:
	// eta(15 degC) = 1.789e-05 Pa s
}

func ExampleMeanFreePath() {
	fmt.Printf("lambda(850 hPa, 10 degC) = %.4g m\n", microphys.MeanFreePath(85000, 283.15))
	// Output:
	// lambda(850 hPa, 10 degC) = 7.538e-08 m
}

func ExampleVapourDiffusivity() {
	fmt.Printf("D_v(900 hPa, 10 degC) = %.4g m2/s\n", microphys.VapourDiffusivity(90000, 283.15))
	// Output:
	// D_v(900 hPa, 10 degC) = 2.547e-05 m2/s
}

func ExampleThermalConductivity() {
	fmt.Printf("K_a(10 degC) = %.4g W/(m K)\n", microphys.ThermalConductivity(283.15))
	// Output:
	// K_a(10 degC) = 0.02453 W/(m K)
}

func ExampleAirDensity() {
	fmt.Printf("dry %.4g, moist %.4g kg/m3\n",
		microphys.AirDensity(101325, 288.15, 0), microphys.AirDensity(101325, 288.15, 0.01))
	// Output:
	// dry 1.225, moist 1.218 kg/m3
}

func ExampleNewAir() {
	a := microphys.NewAir(90000, 283.15)
	fmt.Printf("rho %.4g kg/m3, eta %.4g Pa s, lambda %.4g m, sigma %.4g N/m\n", a.Rho, a.Eta, a.Lambda, a.Sigma)
	bad := microphys.NewAir(-1, 283.15)
	fmt.Printf("bad input: rho %.4g\n", bad.Rho)
	// Output:
	// rho 1.107 kg/m3, eta 1.767e-05 Pa s, lambda 7.119e-08 m, sigma 0.07455 N/m
	// bad input: rho NaN
}

func ExampleAir_FallSpeed() {
	a := microphys.NewAir(90000, 283.15)
	for _, d := range []float64{20e-6, 200e-6, 2e-3} {
		fmt.Printf("V(%g m) = %.4g m/s\n", d, a.FallSpeed(d))
	}
	// Output:
	// V(2e-05 m) = 0.0124 m/s
	// V(0.0002 m) = 0.719 m/s
	// V(0.002 m) = 6.788 m/s
}

func ExampleFallSpeedBeard() {
	fmt.Printf("%.4g m/s at 1013 hPa, %.4g m/s at 700 hPa\n",
		microphys.FallSpeedBeard(1e-3, 101325, 293.15), microphys.FallSpeedBeard(1e-3, 70000, 273.15))
	// Output:
	// 4.01 m/s at 1013 hPa, 4.544 m/s at 700 hPa
}

func ExampleFallSpeedStokes() {
	fmt.Printf("Stokes %.4g, Beard %.4g m/s\n",
		microphys.FallSpeedStokes(40e-6, 101325, 293.15), microphys.FallSpeedBeard(40e-6, 101325, 293.15))
	// Output:
	// Stokes 0.04794, Beard 0.04716 m/s
}

func ExampleCollisionKind_String() {
	fmt.Println(microphys.CollisionHall, microphys.CollisionLong)
	// Output:
	// hall1980 long1974
}

func ExampleParseCollisionKind() {
	k, err := microphys.ParseCollisionKind("long1974")
	fmt.Println(k, err)
	_, err = microphys.ParseCollisionKind("nope")
	fmt.Println(err)
	// Output:
	// long1974 <nil>
	// microphys: unknown collision efficiency "nope" (valid: hall1980, long1974)
}

func ExampleCollisionKind_Efficiency() {
	for _, k := range []microphys.CollisionKind{microphys.CollisionHall, microphys.CollisionLong} {
		fmt.Printf("%s: E(40 µm, 10 µm) = %.4g\n", k, k.Efficiency(40e-6, 10e-6))
	}
	// Output:
	// hall1980: E(40 µm, 10 µm) = 0.62
	// long1974: E(40 µm, 10 µm) = 0.504
}

func ExampleHallTable() {
	R, ratio, E := microphys.HallTable()
	fmt.Printf("%d radii, %d ratios, E(%g m, %g) = %.4g\n", len(R), len(ratio), R[5], ratio[19], E[5][19])
	// Output:
	// 11 radii, 20 ratios, E(6e-05 m, 1) = 3
}

func ExampleHallEfficiency() {
	fmt.Printf("%.4g %.4g\n", microphys.HallEfficiency(25e-6, 12.5e-6), microphys.HallEfficiency(100e-6, 5e-6))
	// Output:
	// 0.311 0.5
}

func ExampleLongEfficiency() {
	fmt.Printf("%.4g %.4g\n", microphys.LongEfficiency(20e-6, 10e-6), microphys.LongEfficiency(80e-6, 10e-6))
	// Output:
	// 0.126 1
}

func ExampleCoalescenceKind_String() {
	fmt.Println(microphys.CoalescenceBlend, microphys.CoalescenceBeardOchs, microphys.CoalescenceLowList, microphys.CoalescenceUnity)
	// Output:
	// seifert2005 beard-ochs1995 low-list1982 unity
}

func ExampleParseCoalescenceKind() {
	k, err := microphys.ParseCoalescenceKind("low-list1982")
	fmt.Println(k, err)
	// Output:
	// low-list1982 <nil>
}

func ExampleCoalescenceKind_Efficiency() {
	a := microphys.NewAir(90000, 283.15)
	for _, k := range []microphys.CoalescenceKind{microphys.CoalescenceBlend, microphys.CoalescenceUnity} {
		fmt.Printf("%s: %.4g\n", k, k.Efficiency(100e-6, 20e-6, &a))
	}
	// Output:
	// seifert2005: 0.7909
	// unity: 1
}

func ExampleCoalescenceBeardOchs1995() {
	a := microphys.NewAir(90000, 283.15)
	fmt.Printf("%.4g\n", microphys.CoalescenceBeardOchs1995(100e-6, 20e-6, &a))
	// Output:
	// 0.7909
}

func ExampleCoalescenceLowList1982() {
	a := microphys.NewAir(90000, 283.15)
	fmt.Printf("%.4g\n", microphys.CoalescenceLowList1982(1e-3, 0.25e-3, &a))
	// Output:
	// 0.4424
}

func ExampleCoalescenceSeifert() {
	a := microphys.NewAir(90000, 283.15)
	fmt.Printf("%.4g %.4g\n", microphys.CoalescenceSeifert(100e-6, 20e-6, &a), microphys.CoalescenceSeifert(600e-6, 50e-6, &a))
	// Output:
	// 0.7909 0.7148
}

func ExampleDefaultCollectorSetup() {
	s := microphys.DefaultCollectorSetup()
	fmt.Printf("R0 %.4g m, drizzle %.4g m, %s, %s\n", s.R0, s.DrizzleRadius, s.Collision, s.Coalescence)
	// Output:
	// R0 2.5e-05 m, drizzle 0.0001 m, hall1980, seifert2005
}

func ExampleCollectDirect() {
	// A 600 m thick stratocumulus (Gamma = 2e-6 kg m-4, i.e. 1.2 g m-3 at the top) with
	// 80 droplets per cm3; the collector is released at the top.
	c := microphys.CloudColumn{H: 600, Gamma: 2e-6, Nd: 80e6, Air: microphys.NewAir(87000, 284)}
	p := microphys.CollectDirect(c, microphys.DefaultCollectorSetup())
	fmt.Printf("exit radius %.4g m after %.4g s, drizzle after %.4g s, through base %v\n",
		p.ExitRadius, p.ExitTime, p.DrizzleTime, p.ExitBase)
	// Output:
	// exit radius 0.000113 m after 1519 s, drizzle after 1207 s, through base true
}

func ExampleCollectConstant() {
	// Bowen's return radius U/(k1 R0) for V = k1 R^2.
	k1 := 1.19e8
	p := microphys.CollectConstant(microphys.ConstantCollector{
		R0: 20e-6, Updraft: 1, LWC: 1e-3, Efficiency: 1,
		Fall: func(R float64) float64 { return k1 * R * R }, StopReturn: true,
	})
	fmt.Printf("R_f = %.4g m (closed form %.4g m)\n", p.R, 1/(k1*20e-6))
	// Output:
	// R_f = 0.0004202 m (closed form 0.0004202 m)
}

func ExampleVentilationCoefficient() {
	a := microphys.NewAir(90000, 283.15)
	fmt.Printf("%.4g %.4g\n", microphys.VentilationCoefficient(10e-6, &a), microphys.VentilationCoefficient(250e-6, &a))
	// Output:
	// 1.001 2.915
}

func ExampleDiffusionTerms() {
	fk, fd := microphys.DiffusionTerms(90000, 283.15)
	fmt.Printf("F_k %.4g, F_d %.4g s/m2\n", fk, fd)
	// Output:
	// F_k 6.404e+09, F_d 4.181e+09 s/m2
}

func ExampleEvaporationRate() {
	a := microphys.NewAir(90000, 283.15)
	fmt.Printf("dr/dt = %.4g m/s\n", microphys.EvaporationRate(100e-6, 0.8, &a))
	// Output:
	// dr/dt = -2.969e-07 m/s
}

func ExampleSubCloudLayer_State() {
	l := microphys.SubCloudLayer{BaseHeight: 600, BaseT: 285, BaseP: 94000, SurfaceRH: 0.7}
	p, T, S := l.State(0)
	fmt.Printf("surface: T %.4g K, p %.4g Pa, S %.4g\n", T, p, S)
	// Output:
	// surface: T 290.9 K, p 1.009e+05 Pa, S 0.7
}

func ExampleEvaporateDirect() {
	l := microphys.SubCloudLayer{BaseHeight: 600, BaseT: 285, BaseP: 94000, SurfaceRH: 0.7}
	for _, r0 := range []float64{50e-6, 250e-6} {
		e := microphys.EvaporateDirect(r0, l)
		fmt.Printf("r0 %g m: reached %v, surface radius %.4g m, evaporated at %.4g m\n", r0, e.Reached, e.SurfaceRadius, e.EvapHeight)
	}
	// Output:
	// r0 5e-05 m: reached false, surface radius 0 m, evaporated at 520.6 m
	// r0 0.00025 m: reached true, surface radius 0.0001799 m, evaporated at NaN m
}

func ExampleEvaporateConstant() {
	a := microphys.NewAir(90000, 283.15)
	e := microphys.EvaporateConstant(10e-6, 0.9, a, nil, false, 0)
	fmt.Printf("lifetime %.4g s, fall %.4g m\n", e.Time, -e.Z)
	// Output:
	// lifetime 5.292 s, fall 0.03297 m
}

func ExampleDefaultDrizzleDSD() {
	d := microphys.DefaultDrizzleDSD()
	fmt.Printf("mean %g m, above %g m, shape %g\n", d.MeanRadius, d.MinRadius, d.Shape)
	// Output:
	// mean 5e-05 m, above 2e-05 m, shape 0
}

func ExampleDrizzleDSD_PDF() {
	d := microphys.DefaultDrizzleDSD()
	fmt.Printf("f(20 µm) %.4g, f(100 µm) %.4g per m\n", d.PDF(20e-6), d.PDF(100e-6))
	// Output:
	// f(20 µm) 3.333e+04, f(100 µm) 2316 per m
}

func ExampleDrizzleFluxMoment() {
	a := microphys.NewAir(95000, 286)
	fmt.Printf("M = %.4g m4/s\n", microphys.DrizzleFluxMoment(microphys.DefaultDrizzleDSD(), a))
	// Output:
	// M = 2.814e-13 m4/s
}

func ExampleDrizzleNumber() {
	a := microphys.NewAir(95000, 286)
	n := microphys.DrizzleNumber(1.0/86400, microphys.DefaultDrizzleDSD(), a) // 1 mm/day
	fmt.Printf("%.4g drops per litre\n", n*1e-3)
	// Output:
	// 9.819 drops per litre
}

func ExampleSurfaceDrizzleFraction() {
	d := microphys.DefaultDrizzleDSD()
	for _, zb := range []float64{300, 600} {
		l := microphys.SubCloudLayer{BaseHeight: zb, BaseT: 286, BaseP: 101325 - 11.6*zb, WellMixed: true}
		fmt.Printf("base %g m: %.3g of the cloud-base flux reaches the surface\n", zb, microphys.SurfaceDrizzleFraction(d, l))
	}
	// Output:
	// base 300 m: 0.396 of the cloud-base flux reaches the surface
	// base 600 m: 0.0797 of the cloud-base flux reaches the surface
}
