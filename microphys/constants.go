package microphys

import "math"

// Physical constants and fit coefficients. Every value is in SI base units and states its
// source and whether it is exact (by definition) or its uncertainty as far as the source gives
// one. Fit coefficients are named arrays that cite their table or equation; formulas elsewhere
// in the package use these names and no bare literals other than 0, 1 and 2.

// Physical constants.
const (
	// Gravity is standard gravity g, m s-2. Exact by definition [CGPM1901].
	Gravity = 9.80665

	// GasConstantDry is the specific gas constant of dry air R_d, J kg-1 K-1.
	// Value as used by [Bolton1980]; 287.05 is also common (difference 3.5e-5 relative,
	// which is the practical uncertainty).
	GasConstantDry = 287.04

	// GasConstantVapour is the specific gas constant of water vapour R_v, J kg-1 K-1
	// [RogersYau1989] (table 2.1 value 461.5; uncertainty about 0.1 J kg-1 K-1).
	GasConstantVapour = 461.5

	// Epsilon is R_d/R_v, dimensionless (0.62197 with the values above; 0.622 is the
	// common rounded value). Derived from GasConstantDry and GasConstantVapour.
	Epsilon = GasConstantDry / GasConstantVapour

	// SpecificHeatDryAir is c_pd, the isobaric specific heat of dry air, J kg-1 K-1
	// [Bolton1980] (1004-1005 also used; uncertainty about 1 J kg-1 K-1).
	SpecificHeatDryAir = 1005.7

	// WaterDensity is the nominal density of liquid water rho_w, kg m-3 (998.2 at 20 degC
	// [PruppacherKlett1997]; the nominal value is common practice, within 0.2 % for 0-20 degC).
	WaterDensity = 1000.0

	// T0 is the ice point, 0 degC, in K. Exact by definition of the Celsius scale.
	T0 = 273.15
)

// Beard (1976) reference constants of the mean free path and slip correction
// [Beard1976] (text below eq. 6; exact as stated in the paper).
const (
	// BeardLambda0 is the mean free path of air at the reference state, m.
	BeardLambda0 = 6.62e-8
	// BeardEta0 is the dynamic viscosity of air at the reference state, Pa s.
	BeardEta0 = 1.818e-5
	// BeardP0 is the reference pressure, Pa.
	BeardP0 = 101325.0
	// BeardT0 is the reference temperature (20 degC), K.
	BeardT0 = 293.15
	// BeardSlip is the slip-correction coefficient in C_sc = 1 + BeardSlip*lambda/d,
	// dimensionless.
	BeardSlip = 2.51
	// BeardD1 is the upper diameter of Beard's regime 1 (slip-corrected Stokes), m.
	BeardD1 = 19e-6
	// BeardD2 is the upper diameter of Beard's regime 2 (Davies-number fit), m.
	BeardD2 = 1.07e-3
	// BeardDMax is the largest diameter of Beard's regime 3, m; FallSpeed is capped
	// at V(BeardDMax) above it.
	BeardDMax = 7e-3
	// BeardDMin is the smallest diameter Beard's regime 1 is stated for, m.
	BeardDMin = 0.5e-6
)

// Beard (1976) polynomial fit coefficients.
var (
	// beardB are b0..b6 of regime 2, Y = sum b_i X^i, X = ln N_Da [Beard1976] table 1.
	beardB = [7]float64{-3.18657, 0.992696, -1.53193e-3, -9.87059e-4, -5.78878e-4, 8.55176e-5, -3.27815e-6}
	// beardC are c0..c5 of regime 3, Y = sum c_i X^i, X = ln(Bo N_P^(1/6)) [Beard1976] table 1.
	beardC = [6]float64{-5.00015, 5.23778, -2.04914, 0.475294, -5.42819e-2, 2.38449e-3}
)

// Numerical factors that appear in formulas (named so that formulas hold no bare literals).
const (
	oneThird      = 1.0 / 3.0
	oneSixth      = 1.0 / 6.0
	threeHalves   = 1.5
	three         = 3.0
	four          = 4.0
	stokesFactor  = 18.0      // 18 in V = Delta rho g d^2/(18 eta), Stokes drag
	sphereVolume  = 4.0 / 3.0 // (4/3) in (4/3) pi r^3
	twelve        = 12.0      // pi rho_w/12 in the Low-List collision kinetic energy
	microPerMetre = 1e6       // µm per m
	kelvinOffset  = T0        // T_c = T - kelvinOffset
)

// Bolton (1980) saturation vapour pressure over liquid water, eq. 10:
// e_s = a exp(b T_c/(T_c + c)), a in Pa, T_c in degC.
var boltonEs = [3]float64{611.2, 17.67, 243.5}

// Bolton (1980) latent heat of vaporization, eq. 2: L_v = (a - b T_c)*1e6 J kg-1.
var boltonLv = [3]float64{2.501, 0.00237, 1e6}

// Surface tension of water against air, sigma = (a - b T_c)*c N m-1
// [PruppacherKlett1997] (linear fit near 0-20 degC as used in Beard-1976 implementations).
var surfaceTensionFit = [3]float64{76.10, 0.155, 1e-3}

// Pruppacher & Klett (1997) eq. 10-107a dynamic viscosity of air (T_c in degC):
// eta = a + b T_c (T_c >= 0); eta = a + b T_c - c T_c^2 (T_c < 0), Pa s.
var viscosityPKFit = [3]float64{1.718e-5, 4.9e-8, 1.2e-10}

// Sutherland law as in the U.S. Standard Atmosphere 1976 [USStdAtm1976] eq. 51:
// eta = beta T^(3/2)/(T + S), beta in kg m-1 s-1 K^-1/2, S in K.
var sutherlandFit = [2]float64{1.458e-6, 110.4}

// Vapour diffusivity in air [PruppacherKlett1997] eq. 13-3:
// D_v = a (T/T0)^b (p0/p), a in m2 s-1, p0 in Pa.
var diffusivityFit = [3]float64{0.211e-4, 1.94, 101325.0}

// Thermal conductivity of air [PruppacherKlett1997] eq. 13-18a:
// K_a = (a + b T_c)*1e-5 cal cm-1 s-1 K-1 = (a + b T_c)*c W m-1 K-1, c = 4.1868e-3.
var conductivityFit = [3]float64{5.69, 0.017, 4.1868e-3}

// Ventilation coefficient [PruppacherKlett1997] eqs. 13-60, 13-61 after [BeardPruppacher1971]:
// f = 1 + a X^2 for X < xJoin; f = c + d X otherwise; X = N_Sc^(1/3) N_Re^(1/2).
// Order: a, xJoin, c, d.
var ventilationFit = [4]float64{0.108, 1.4, 0.78, 0.308}

// Long (1974) collision efficiency as quoted by [Simmel2002] eq. 13, converted to SI:
// E = a R^2 (1 - b/r) for R <= rMax, radii in m; a = 4.5e4 cm-2 = 4.5e8 m-2, b = 3e-4 cm =
// 3e-6 m, floor 1e-3, rMax = 50 µm. Order: a, b, floor, rMax.
var longFit = [4]float64{4.5e8, 3e-6, 1e-3, 50e-6}

// Beard & Ochs (1995) coalescence efficiency [BeardOchs1995].
// Formula 1: E1 = a - b G(p) We^(1/2) with G(p) = g p^4(1+p)/((1+p^2)(1+p^3)),
// g = 2^(3/2)/(6 pi). Order: a, b, g.
var beardOchs1 = [3]float64{0.767, 10.14, 2 * math.Sqrt2 / (three * 2 * math.Pi)}

// Beard & Ochs (1995) formula 2 (implicit, radii in µm):
// ln r_s + ln(r_L/rRef) = c0 + c1 E + c2 E^2 + c3 E^3. Order: rRef (µm), c0, c1, c2, c3.
var beardOchs2 = [5]float64{200, 5.07, -5.94, 7.27, -5.29}

// Low & List (1982) coalescence efficiency for large drops [LowList1982], SI form.
// E = a (1 + d_s/d_L)^-2 exp(-b sigma E_T^2/S_C) for E_T < eTMax, else 0.
// Order: a, b (m2 J-2), eTMax (J) (= 50 erg).
var lowListFit = [3]float64{0.778, 2.61e6, 5e-6}

// Seifert et al. (2005) blending radii of the coalescence efficiency, m: mean radius below
// the first uses Beard-Ochs, above the second Low-List [Seifert2005].
var seifertBlend = [2]float64{250e-6, 400e-6}
