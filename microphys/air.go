package microphys

import "math"

// Envelope of air states accepted by the air-property functions. Outside it (or for NaN/Inf
// input) they return NaN. The fits themselves are stated for narrower ranges (see each
// function's Valid line); inside the envelope but outside a fit's range the fit is
// extrapolated.
const (
	// AirTMin and AirTMax bound the accepted air temperature, K.
	AirTMin = 180.0
	AirTMax = 340.0
	// AirPMin and AirPMax bound the accepted air pressure, Pa.
	AirPMin = 1e3
	AirPMax = 1.2e5
)

func validT(T float64) bool { return T >= AirTMin && T <= AirTMax }
func validP(p float64) bool { return p >= AirPMin && p <= AirPMax }

// SatVapourPressure returns the saturation vapour pressure over plane liquid water, Pa, at air
// temperature T (K):
//
//	e_s = 611.2 exp(17.67 T_c/(T_c + 243.5)),  T_c = T - 273.15
//
// Reference: [Bolton1980] eq. 10.
// Valid: -30 to 35 degC (accuracy 0.1 % stated by Bolton); extrapolated inside
// [AirTMin, AirTMax]; NaN outside or for NaN T.
func SatVapourPressure(T float64) float64 {
	if !validT(T) {
		return math.NaN()
	}
	tc := T - kelvinOffset
	return boltonEs[0] * math.Exp(boltonEs[1]*tc/(tc+boltonEs[2]))
}

// LatentHeat returns the latent heat of vaporization of water, J kg-1, at T (K):
//
//	L_v = (2.501 - 0.00237 T_c) 1e6
//
// Reference: [Bolton1980] eq. 2.
// Valid: -30 to 35 degC; extrapolated inside [AirTMin, AirTMax]; NaN outside.
func LatentHeat(T float64) float64 {
	if !validT(T) {
		return math.NaN()
	}
	tc := T - kelvinOffset
	return (boltonLv[0] - boltonLv[1]*tc) * boltonLv[2]
}

// SurfaceTension returns the surface tension of water against air, N m-1, at T (K):
//
//	sigma_w = (76.10 - 0.155 T_c) 1e-3
//
// Reference: [PruppacherKlett1997] (linear fit, as used with [Beard1976]).
// Valid: -20 to 40 degC; extrapolated inside [AirTMin, AirTMax]; NaN outside.
func SurfaceTension(T float64) float64 {
	if !validT(T) {
		return math.NaN()
	}
	tc := T - kelvinOffset
	return (surfaceTensionFit[0] - surfaceTensionFit[1]*tc) * surfaceTensionFit[2]
}

// ViscosityPK returns the dynamic viscosity of air, Pa s, at T (K):
//
//	eta = 1.718e-5 + 4.9e-8 T_c                  (T_c >= 0)
//	eta = 1.718e-5 + 4.9e-8 T_c - 1.2e-10 T_c^2  (T_c < 0)
//
// Reference: [PruppacherKlett1997] eq. 10-107a.
// Valid: -40 to 40 degC; extrapolated inside [AirTMin, AirTMax]; NaN outside.
func ViscosityPK(T float64) float64 {
	if !validT(T) {
		return math.NaN()
	}
	tc := T - kelvinOffset
	eta := viscosityPKFit[0] + viscosityPKFit[1]*tc
	if tc < 0 {
		eta -= viscosityPKFit[2] * tc * tc
	}
	return eta
}

// ViscositySutherland returns the dynamic viscosity of air, Pa s, at T (K), by Sutherland's
// law (a cross-check of ViscosityPK):
//
//	eta = beta T^(3/2)/(T + S),  beta = 1.458e-6 kg m-1 s-1 K^-1/2,  S = 110.4 K
//
// Reference: [USStdAtm1976] eq. 51.
// Valid: 180-340 K (the standard atmosphere uses it over 86 km of altitude); NaN outside
// [AirTMin, AirTMax].
func ViscositySutherland(T float64) float64 {
	if !validT(T) {
		return math.NaN()
	}
	return sutherlandFit[0] * T * math.Sqrt(T) / (T + sutherlandFit[1])
}

// MeanFreePath returns the mean free path of air molecules, m, at pressure p (Pa) and
// temperature T (K), scaled from Beard's reference state with the viscosity of ViscosityPK:
//
//	lambda = lambda0 (eta/eta0) (p0/p) (T/T0)^(1/2)
//	lambda0 = 6.62e-8 m, eta0 = 1.818e-5 Pa s, p0 = 101325 Pa, T0 = 293.15 K
//
// Reference: [Beard1976] text after eq. 6.
// Valid: p in [AirPMin, AirPMax], T in [AirTMin, AirTMax]; NaN outside.
func MeanFreePath(p, T float64) float64 {
	if !validP(p) || !validT(T) {
		return math.NaN()
	}
	return meanFreePath(p, T, ViscosityPK(T))
}

func meanFreePath(p, T, eta float64) float64 {
	return BeardLambda0 * (eta / BeardEta0) * (BeardP0 / p) * math.Sqrt(T/BeardT0)
}

// VapourDiffusivity returns the diffusivity of water vapour in air, m2 s-1, at p (Pa), T (K):
//
//	D_v = 0.211e-4 (T/273.15)^1.94 (101325/p)
//
// Reference: [PruppacherKlett1997] eq. 13-3.
// Valid: -40 to 40 degC; p in [AirPMin, AirPMax], T in [AirTMin, AirTMax]; NaN outside.
func VapourDiffusivity(p, T float64) float64 {
	if !validP(p) || !validT(T) {
		return math.NaN()
	}
	return diffusivityFit[0] * math.Exp(diffusivityFit[1]*math.Log(T/T0)) * (diffusivityFit[2] / p)
}

// ThermalConductivity returns the thermal conductivity of air, W m-1 K-1, at T (K):
//
//	K_a = 4.1868e-3 (5.69 + 0.017 T_c)
//
// (the source gives (5.69 + 0.017 T_c) 1e-5 cal cm-1 s-1 K-1).
// Reference: [PruppacherKlett1997] eq. 13-18a.
// Valid: -40 to 40 degC; extrapolated inside [AirTMin, AirTMax]; NaN outside.
func ThermalConductivity(T float64) float64 {
	if !validT(T) {
		return math.NaN()
	}
	tc := T - kelvinOffset
	return conductivityFit[2] * (conductivityFit[0] + conductivityFit[1]*tc)
}

// AirDensity returns the density of moist air, kg m-3, at p (Pa), T (K) and water-vapour
// mixing ratio qv (kg kg-1; 0 for dry air), through the virtual temperature:
//
//	rho_a = p/(R_d T_v),  T_v = T (1 + qv/eps)/(1 + qv)
//
// Reference: [RogersYau1989] eq. 1.11 (virtual temperature), ideal-gas law.
// Valid: p in [AirPMin, AirPMax], T in [AirTMin, AirTMax], qv in [0, 0.1]; NaN outside.
func AirDensity(p, T, qv float64) float64 {
	if !validP(p) || !validT(T) || !(qv >= 0 && qv <= maxMixingRatio) {
		return math.NaN()
	}
	tv := T * (1 + qv/Epsilon) / (1 + qv)
	return p / (GasConstantDry * tv)
}

// maxMixingRatio is the largest vapour mixing ratio accepted by AirDensity, kg kg-1
// (common practice: far above any tropospheric value).
const maxMixingRatio = 0.1

// Air holds the air and water properties used by the drop-physics functions, all SI:
// pressure P (Pa), temperature T (K), air density Rho (kg m-3), dynamic viscosity Eta (Pa s),
// mean free path Lambda (m), water surface tension Sigma (N m-1) and water density RhoW
// (kg m-3). Build it with NewAir; a literal with any field NaN or non-positive makes the
// functions that use it return NaN.
type Air struct {
	P, T, Rho, Eta, Lambda, Sigma, RhoW float64
}

// NewAir returns the properties of dry air at pressure p (Pa) and temperature T (K):
//
//	Rho = AirDensity(p, T, 0), Eta = ViscosityPK(T), Lambda = MeanFreePath(p, T),
//	Sigma = SurfaceTension(T), RhoW = WaterDensity
//
// Dry-air density is used; the moist correction is below 1 % in warm boundary layers.
// Reference: [Beard1976] (the property set of its fall-speed formulas), [PruppacherKlett1997].
// Valid: p in [AirPMin, AirPMax], T in [AirTMin, AirTMax]; every field except P and T is NaN
// outside.
func NewAir(p, T float64) Air {
	a := Air{P: p, T: T, RhoW: WaterDensity}
	if !validP(p) || !validT(T) {
		nan := math.NaN()
		a.Rho, a.Eta, a.Lambda, a.Sigma, a.RhoW = nan, nan, nan, nan, nan
		return a
	}
	a.Rho = AirDensity(p, T, 0)
	a.Eta = ViscosityPK(T)
	a.Lambda = meanFreePath(p, T, a.Eta)
	a.Sigma = SurfaceTension(T)
	return a
}

// ok reports whether every property of a is a positive finite number and water is denser
// than air.
func (a *Air) ok() bool {
	return a != nil && a.Rho > 0 && a.Eta > 0 && a.Lambda > 0 && a.Sigma > 0 &&
		a.RhoW > a.Rho && a.Rho < math.Inf(1) && a.Eta < math.Inf(1) &&
		a.Lambda < math.Inf(1) && a.Sigma < math.Inf(1) && a.RhoW < math.Inf(1)
}
