package microphys

import "math"

// The U.S. Standard Atmosphere 1976 below 32 km geopotential altitude, identical there to
// the ICAO Standard Atmosphere [USSA1976]: three layers of constant lapse rate from the
// sea-level state, hydrostatic with the gas constant of dry air R = R*/M_0.
const (
	saT0     = 288.15     // K, sea-level temperature
	saP0     = 101325.0   // Pa, sea-level pressure
	saRStar  = 8.31432    // J mol-1 K-1, the standard's universal gas constant
	saM0     = 28.9644e-3 // kg mol-1, mean molar mass of air
	saR      = saRStar / saM0
	saL1     = -0.0065              // K m-1, 0-11 km (temperature falls with height)
	saH11    = 11000.0              // m, tropopause
	saT11    = 216.65               // K, 11-20 km (isothermal)
	saH20    = 20000.0              // m
	saL3     = 0.001                // K m-1, 20-32 km
	saH32    = 32000.0              // m, top of the layers used here
	saHBelow = -5000.0              // m, the standard's tables start 5 km below sea level
	saPMax   = 1.2e5                // Pa, highest pressure accepted (about 1.6 km below sea level)
	saPMin   = 868.0                // Pa, about the pressure at 32 km
	saGrav   = Gravity              // m s-2, the standard's g_0 (exact, [CGPM1901])
	saExpTro = -saL1 * saR / saGrav // ln T/ln p exponent of the troposphere, 1/5.255876
)

// Layer base pressures, Pa, from the layer formulas (derived; the standard tabulates
// 22632.06 Pa at 11 km and 5474.889 Pa at 20 km).
var (
	saP11 = saP0 * math.Pow(saT11/saT0, 1/saExpTro)
	saP20 = saP11 * math.Exp(-saGrav*(saH20-saH11)/(saR*saT11))
)

// StandardAtmosphere returns the pressure p (Pa) and temperature T (K) of the U.S.
// Standard Atmosphere 1976 (ICAO below 32 km) at geopotential altitude z (m):
//
//	z <= 11 km:  T = T_0 + L_1 z,  p = p_0 (T/T_0)^(-g_0/(L_1 R))        (L_1 = -6.5 K km-1)
//	11-20 km:    T = 216.65 K,     p = p_11 exp(-g_0 (z - 11 km)/(R T))
//	20-32 km:    T = 216.65 K + L_3 (z - 20 km), p = p_20 (T/T_20)^(-g_0/(L_3 R))  (L_3 = 1 K km-1)
//
// with T_0 = 288.15 K, p_0 = 101325 Pa, g_0 = 9.80665 m s-2, R = R*/M_0 = 8.31432/0.0289644
// J kg-1 K-1. A cloud-top height above the sea surface is its altitude.
//
// Reference: [USSA1976] Part 1, Table 4 (layers) and the hydrostatic layer equations
// (eqs. 33a and 33b; equation numbers from memory).
// Valid: -5 km <= z <= 32 km; NaN outside.
func StandardAtmosphere(z float64) (p, T float64) {
	switch {
	case !(z >= saHBelow && z <= saH32):
		return math.NaN(), math.NaN()
	case z <= saH11:
		T = saT0 + saL1*z
		return saP0 * math.Pow(T/saT0, 1/saExpTro), T
	case z <= saH20:
		return saP11 * math.Exp(-saGrav*(z-saH11)/(saR*saT11)), saT11
	}
	T = saT11 + saL3*(z-saH20)
	return saP20 * math.Pow(T/saT11, -saGrav/(saL3*saR)), T
}

// StandardAtmosphereTemperature returns the temperature (K) of the U.S. Standard Atmosphere
// 1976 at pressure p (Pa), the inverse of StandardAtmosphere's pressure in each layer:
//
//	p >= p_11:        T = T_0 (p/p_0)^(-L_1 R/g_0)     (exponent 1/5.255876)
//	p_20 <= p < p_11: T = 216.65 K
//	p < p_20:         T = 216.65 K (p/p_20)^(-L_3 R/g_0)
//
// Used for a cloud-top temperature when a product gives only the cloud-top pressure: the
// standard atmosphere is a mid-latitude annual mean, so the result is a rough air state
// (a tropical boundary-layer top is some 10 K warmer), good enough to screen high, cold
// (possibly ice) tops.
//
// Reference: [USSA1976] Part 1, eqs. 33a and 33b inverted (numbers from memory).
// Valid: 868 Pa <= p <= 1.2e5 Pa (32 km down to about 1.6 km below sea level); NaN outside.
func StandardAtmosphereTemperature(p float64) float64 {
	switch {
	case !(p >= saPMin && p <= saPMax):
		return math.NaN()
	case p >= saP11:
		return saT0 * math.Pow(p/saP0, saExpTro)
	case p >= saP20:
		return saT11
	}
	return saT11 * math.Pow(p/saP20, -saL3*saR/saGrav)
}
