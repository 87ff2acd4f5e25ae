package microphys

import "math"

// Unit factors of the cloud-base drizzle law (R in mm day-1, LWP in g m-2, N_d in cm-3).
var drizzleUnits = [3]float64{
	1e3,     // g per kg (LWP kg m-2 -> g m-2)
	1e-6,    // cm-3 per m-3
	86400.0, // s per day (mm day-1 -> kg m-2 s-1, 1 mm of water = 1 kg m-2)
}

// DrizzleRate returns the cloud-base drizzle rate, kg m-2 s-1 (= mm s-1 of water), from
// liquid water path lwp (kg m-2) and droplet number nd (m-3), with the power law
//
//	R_CB = a LWP^b N_d^-c      (R_CB mm day-1, LWP g m-2, N_d cm-3)
//
// The defaults a = 0.37, b = c = 1.75 give R_CB = 0.37 (LWP/N_d)^1.75 of [Comstock2004]
// (coefficients from memory, see Params.DrizzleCoef).
//
// Reference: [Comstock2004]; the H^3/N scaling of [VanZanten2005] is the same physics.
// Valid: lwp >= 0, nd > 0, a > 0, b, c >= 0, finite; NaN otherwise. Fitted to EPIC 2001
// south-east Pacific stratocumulus (from memory).
func DrizzleRate(lwp, nd, a, b, c float64) float64 {
	if !(lwp >= 0 && nd > 0 && a > 0 && b >= 0 && c >= 0) || math.IsInf(lwp, 1) || math.IsInf(nd, 1) ||
		math.IsInf(a, 1) || math.IsInf(b, 1) || math.IsInf(c, 1) {
		return math.NaN()
	}
	if lwp == 0 {
		if b == 0 {
			return a * math.Exp(-c*math.Log(nd*drizzleUnits[1])) / drizzleUnits[2]
		}
		return 0
	}
	ln := b*math.Log(lwp*drizzleUnits[0]) - c*math.Log(nd*drizzleUnits[1])
	return a * math.Exp(ln) / drizzleUnits[2]
}

// WarmRainEfficiency returns the warm-rain efficiency, s-1: the column conversion rate
// pcol (kg m-2 s-1) divided by the liquid water path lwp (kg m-2), the fraction of the
// column's cloud water turned into drizzle per unit time:
//
//	eta = P_col/LWP
//
// Reference: the definition of this package (derived); P_col from ColumnAutoconversion
// [KhairoutdinovKogan2000].
// Valid: pcol >= 0, lwp > 0, finite; NaN otherwise.
func WarmRainEfficiency(pcol, lwp float64) float64 {
	if !(pcol >= 0 && lwp > 0) || math.IsInf(pcol, 1) || math.IsInf(lwp, 1) {
		return math.NaN()
	}
	return pcol / lwp
}
