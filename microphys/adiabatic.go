package microphys

import "math"

// Adiabatic-cloud relations: condensation rate, LWP-tau-r_e, droplet number, thickness,
// profiles and the critical LWP of drizzle onset.

// Numerical factors of the adiabatic relations (named, see constants.go).
const (
	adLWPTauAdiabatic   = 5.0 / 9.0             // LWP = (5/9) rho_w tau r_e, adiabatic [Brenguier2000]
	adLWPTauHomogeneous = 2.0 / 3.0             // LWP = (2/3) rho_w tau r_e, homogeneous [Stephens1978]
	adQextGeometric     = 2.0                   // Q_ext of the geometric-optics limit in tau(LWP)
	adNdSqrtFive        = 2.2360679774997896964 // sqrt(5) in the N_d formula [Brenguier2000]
	adCritFactor        = 8.0 / 9.0             // LWP* = (8/9) pi^2 rho_w^2 k^2 N^2 r*^6 / Gamma (derived)
)

// CondensationRate returns the adiabatic condensation rate c_w = -rho_a dr_s/dz, the
// increase of liquid water content per metre of ascent along the moist adiabat, in kg m-4,
// at pressure p (Pa) and temperature T (K):
//
//	r_s  = eps e_s/(p - e_s)
//	G_d  = g/c_pd
//	G_m  = g (1 + L_v r_s/(R_d T)) / (c_pd + L_v^2 r_s eps/(R_d T^2))
//	c_w  = rho_a (c_pd/L_v) (G_d - G_m),   rho_a = AirDensity(p, T, r_s)
//
// with e_s = SatVapourPressure(T), L_v = LatentHeat(T) (saturated air density).
// Typical values are 1.5-2.8e-6 kg m-4; 1.9e-6 is the default of [Brenguier2000].
//
// Reference: [Glickman2000] "Moist-adiabatic lapse rate" (G_m); [Brenguier2000] (c_w).
// Valid: 240 K <= T <= 310 K, 2e4 Pa <= p <= 1.1e5 Pa and e_s < p; NaN outside
// (the Bolton e_s fit is stated for -35..35 degC).
func CondensationRate(p, T float64) float64 { return adiabaticState(T, p).cw }

// MoistLapseRate returns the saturated-adiabatic lapse rate G_m = -dT/dz, K m-1, at p (Pa)
// and T (K):
//
//	G_m = g (1 + L_v r_s/(R_d T)) / (c_pd + L_v^2 r_s eps/(R_d T^2))
//
// Reference: [Glickman2000] "Moist-adiabatic lapse rate".
// Valid: as CondensationRate; NaN outside.
func MoistLapseRate(p, T float64) float64 { return adiabaticState(T, p).gm }

// LWPAdiabatic returns the liquid water path (kg m-2) of an adiabatic cloud with optical
// thickness tau (1) and cloud-top effective radius re (m):
//
//	LWP = (5/9) rho_w tau r_e
//
// Reference: [Brenguier2000]; [WoodHartmann2006] (derived again in doc/science.md#adiabatic-cloud).
// Valid: tau >= 0, re > 0; NaN otherwise.
func LWPAdiabatic(tau, re float64) float64 {
	if !(tau >= 0 && re > 0) || math.IsInf(tau, 1) || math.IsInf(re, 1) {
		return math.NaN()
	}
	return adLWPTauAdiabatic * WaterDensity * tau * re
}

// LWPHomogeneous returns the liquid water path (kg m-2) of a vertically homogeneous cloud
// with optical thickness tau (1) and effective radius re (m):
//
//	LWP = (2/3) rho_w tau r_e
//
// Reference: [Stephens1978].
// Valid: tau >= 0, re > 0; NaN otherwise.
func LWPHomogeneous(tau, re float64) float64 {
	if !(tau >= 0 && re > 0) || math.IsInf(tau, 1) || math.IsInf(re, 1) {
		return math.NaN()
	}
	return adLWPTauHomogeneous * WaterDensity * tau * re
}

// TauAdiabatic returns the optical thickness (1) of an adiabatic cloud of liquid water path
// lwp (kg m-2) and cloud-top effective radius re (m), for extinction efficiency qext:
//
//	tau = (Q_ext/2) (9/5) LWP/(rho_w r_e)
//
// (the inverse of LWPAdiabatic for Q_ext = 2).
// Reference: [Brenguier2000].
// Valid: lwp >= 0, re > 0, qext > 0; NaN otherwise.
func TauAdiabatic(lwp, re, qext float64) float64 {
	if !(lwp >= 0 && re > 0 && qext > 0) || math.IsInf(lwp, 1) || math.IsInf(re, 1) || math.IsInf(qext, 1) {
		return math.NaN()
	}
	return qext / adQextGeometric * lwp / (adLWPTauAdiabatic * WaterDensity * re)
}

// DropletNumber returns the droplet number concentration N_d (m-3) of an adiabatic cloud
// from optical thickness tau (1) and cloud-top effective radius re (m):
//
//	N_d = (sqrt(5)/(2 pi k)) [f_ad c_w tau/(Q_ext rho_w r_e^5)]^(1/2)
//
// k = (r_v/r_e)^3 (1), qext = Q_ext (1), fad = f_ad (1), cw = c_w (kg m-4).
// With k = 0.8, Q_ext = 2, f_ad = 1, c_w = 1.9e-6: N_d = 1.3711e-5 tau^(1/2) r_e^(-5/2).
//
// Reference: [Brenguier2000]; [Quaas2006] eq. 1; [Grosvenor2018].
// Valid: tau >= 0, re > 0, 0 < k <= 1, qext > 0, 0 < fad <= 1, cw > 0; NaN otherwise.
func DropletNumber(tau, re, k, qext, fad, cw float64) float64 {
	if !(tau >= 0 && re > 0 && k > 0 && k <= 1 && qext > 0 && fad > 0 && fad <= 1 && cw > 0) ||
		math.IsInf(tau, 1) || math.IsInf(re, 1) || math.IsInf(qext, 1) || math.IsInf(cw, 1) {
		return math.NaN()
	}
	r2 := re * re
	return adNdSqrtFive / (2 * math.Pi * k) * math.Sqrt(fad*cw*tau/(qext*WaterDensity*r2*r2*re))
}

// DropletNumberLWP returns N_d (m-3) of an adiabatic cloud from liquid water path lwp
// (kg m-2) and cloud-top effective radius re (m), through H = Thickness(lwp, fad, cw):
//
//	N_d = 3 f_ad c_w H/(4 pi rho_w k r_e^3),   H = [2 LWP/(f_ad c_w)]^(1/2)
//
// It equals DropletNumber(TauAdiabatic(lwp, re, 2), re, k, 2, fad, cw).
// Reference: [Brenguier2000] (derived in doc/science.md#droplet-number-and-thickness).
// Valid: lwp >= 0, re > 0, 0 < k <= 1, 0 < fad <= 1, cw > 0; NaN otherwise.
func DropletNumberLWP(lwp, re, k, fad, cw float64) float64 {
	return DropletNumberH(Thickness(lwp, fad, cw), re, k, fad, cw)
}

// DropletNumberH returns N_d (m-3) of an adiabatic cloud of thickness h (m) whose
// cloud-top effective radius is re (m):
//
//	N_d = 3 f_ad c_w H/(4 pi rho_w k r_e^3)
//
// Reference: [Brenguier2000] (adiabatic consistency, derived in doc/science.md#droplet-number-and-thickness).
// Valid: h >= 0, re > 0, 0 < k <= 1, 0 < fad <= 1, cw > 0; NaN otherwise.
func DropletNumberH(h, re, k, fad, cw float64) float64 {
	if !(h >= 0 && re > 0 && k > 0 && k <= 1 && fad > 0 && fad <= 1 && cw > 0) ||
		math.IsInf(h, 1) || math.IsInf(re, 1) || math.IsInf(cw, 1) {
		return math.NaN()
	}
	return three * fad * cw * h / (four * math.Pi * WaterDensity * k * re * re * re)
}

// Thickness returns the geometric thickness H (m) of an adiabatic cloud of liquid water
// path lwp (kg m-2):
//
//	H = [2 LWP/(f_ad c_w)]^(1/2)
//
// Reference: [Brenguier2000].
// Valid: lwp >= 0, 0 < fad <= 1, cw > 0; NaN otherwise.
func Thickness(lwp, fad, cw float64) float64 {
	if !(lwp >= 0 && fad > 0 && fad <= 1 && cw > 0) || math.IsInf(lwp, 1) || math.IsInf(cw, 1) {
		return math.NaN()
	}
	return math.Sqrt(2 * lwp / (fad * cw))
}

// AdiabaticLWC returns the liquid water content (kg m-3) at height z (m) above cloud base
// of an adiabatic cloud:
//
//	LWC(z) = f_ad c_w z
//
// Reference: [Brenguier2000].
// Valid: z >= 0, 0 < fad <= 1, cw > 0; NaN otherwise.
func AdiabaticLWC(z, fad, cw float64) float64 {
	if !(z >= 0 && fad > 0 && fad <= 1 && cw > 0) || math.IsInf(z, 1) || math.IsInf(cw, 1) {
		return math.NaN()
	}
	return fad * cw * z
}

// MeanVolumeRadius returns the mean-volume radius r_v (m) at height z (m) above cloud base
// of an adiabatic cloud with droplet number nd (m-3):
//
//	r_v(z) = [3 f_ad c_w z/(4 pi rho_w N_d)]^(1/3)
//
// Reference: [Brenguier2000].
// Valid: z >= 0, nd > 0, 0 < fad <= 1, cw > 0; NaN otherwise.
func MeanVolumeRadius(z, nd, fad, cw float64) float64 {
	lwc := AdiabaticLWC(z, fad, cw)
	if !(nd > 0) || math.IsInf(nd, 1) {
		return math.NaN()
	}
	return math.Cbrt(three * lwc / (four * math.Pi * WaterDensity * nd))
}

// EffectiveRadius returns the effective radius r_e (m) at height z (m) above cloud base of
// an adiabatic cloud with droplet number nd (m-3):
//
//	r_e(z) = r_v(z)/k^(1/3),   k = (r_v/r_e)^3
//
// Reference: [Brenguier2000]; k defined as in [LebsockWitte2023].
// Valid: z >= 0, nd > 0, 0 < k <= 1, 0 < fad <= 1, cw > 0; NaN otherwise.
func EffectiveRadius(z, nd, k, fad, cw float64) float64 {
	if !(k > 0 && k <= 1) {
		return math.NaN()
	}
	return MeanVolumeRadius(z, nd, fad, cw) / math.Cbrt(k)
}

// CriticalLWP returns the liquid water path LWP* (kg m-2) at which the cloud-top effective
// radius of an adiabatic cloud with droplet number nd (m-3) reaches the onset radius
// reStar (m):
//
//	LWP* = 8 pi^2 rho_w^2 k^2 N_d^2 r_e*^6/(9 f_ad c_w),   H* = (2 LWP*/(f_ad c_w))^(1/2)
//
// Reference: [Brenguier2000] adiabatic model with r_e(H) = r_e* (derived, doc/science.md#drizzle-onset);
// onset radius [RosenfeldGutman1994].
// Valid: nd > 0, reStar > 0, 0 < k <= 1, 0 < fad <= 1, cw > 0; NaN otherwise.
func CriticalLWP(nd, reStar, k, fad, cw float64) float64 {
	if !(nd > 0 && reStar > 0 && k > 0 && k <= 1 && fad > 0 && fad <= 1 && cw > 0) ||
		math.IsInf(nd, 1) || math.IsInf(reStar, 1) || math.IsInf(cw, 1) {
		return math.NaN()
	}
	r3 := reStar * reStar * reStar
	a := math.Pi * WaterDensity * k * nd * r3
	return adCritFactor * a * a / (fad * cw)
}

// adState is the saturated air state at one level: c_w (kg m-4), moist lapse rate (K m-1)
// and saturated air density (kg m-3). NaN fields when (T, p) is outside CondensationRate's
// range.
type adState struct{ cw, gm, rho float64 }

// adiabaticState computes CondensationRate, MoistLapseRate and the saturated air density
// with one SatVapourPressure call; the two exported functions are this. CloudBase,
// the collector table's nodes and Column's direct integrations use it: the adaptive
// integrations respond to a last-bit change of their inputs by up to their tolerance, so
// they are kept on this exact arithmetic (airStateFast serves the bulk diagnostics).
func adiabaticState(T, p float64) adState {
	nan := math.NaN()
	if !(T >= 240 && T <= 310 && p >= 2e4 && p <= 1.1e5) {
		return adState{nan, nan, nan}
	}
	es := SatVapourPressure(T)
	if !(es < p) {
		return adState{nan, nan, nan}
	}
	lv := LatentHeat(T)
	rs := Epsilon * es / (p - es)
	gd := Gravity / SpecificHeatDryAir
	gm := Gravity * (1 + lv*rs/(GasConstantDry*T)) /
		(SpecificHeatDryAir + lv*lv*rs*Epsilon/(GasConstantDry*T*T))
	rho := AirDensity(p, T, rs)
	return adState{rho * SpecificHeatDryAir / lv * (gd - gm), gm, rho}
}

// airStateFast is adiabaticState for Column's bulk diagnostics: CondensationRate,
// MoistLapseRate and the saturated air density AirDensity(p, T, r_s) with one exponential
// (colExp) and two divisions after it: the same
// formulas with SatVapourPressure and LatentHeat written out (T is already inside their
// envelope here) and brought over common denominators (derived), with w = p - e_s,
// A = L_v eps e_s/(R_d T), B = L_v eps/T:
//
//	r_s = eps e_s/w,  G_m = g (w + A)/(c_pd w + A B),  rho_a = (p - (1 - eps) e_s)/(R_d T)
//	c_w = rho_a (c_pd/L_v) (g/c_pd - G_m) = rho_a g A (B - c_pd)/(L_v (c_pd w + A B))
//	    = rho_a g (eps e_s/(R_d T)) (B - c_pd)/(c_pd w + A B)
//
// within adStateTol relative of the exported functions (tested).
func airStateFast(T, p float64) adState {
	if !(T >= 240 && T <= 310 && p >= 2e4 && p <= 1.1e5) {
		nan := math.NaN()
		return adState{nan, nan, nan}
	}
	tc := T - kelvinOffset
	return airStateExp(T, p, colExp(airStateArg(tc)))
}

// airStateArg is the exponent of SatVapourPressure's exponential in airStateFast at
// tc = T - kelvinOffset (°C).
func airStateArg(tc float64) float64 { return boltonEs[1] * tc / (tc + boltonEs[2]) }

// airStateExp is airStateFast with the exponential of its vapour pressure known, ex =
// colExp(airStateArg(T - kelvinOffset)), so that a caller can take it together with another
// (colExp2): the same arithmetic.
func airStateExp(T, p, ex float64) adState {
	nan := math.NaN()
	if !(T >= 240 && T <= 310 && p >= 2e4 && p <= 1.1e5) {
		return adState{nan, nan, nan}
	}
	tc := T - kelvinOffset
	rt := 1 / (GasConstantDry * T)
	es := boltonEs[0] * ex // SatVapourPressure
	if !(es < p) {
		return adState{nan, nan, nan}
	}
	lv := (boltonLv[0] - boltonLv[1]*tc) * boltonLv[2] // LatentHeat
	w := p - es
	le := lv * Epsilon
	a := le * es * rt
	bb := le * GasConstantDry * rt
	inv := 1 / (SpecificHeatDryAir*w + a*bb)
	gm := Gravity * (w + a) * inv
	if !(Epsilon*es <= maxMixingRatio*w) { // AirDensity's bound r_s <= 0.1: no density, no c_w
		return adState{nan, gm, nan}
	}
	rho := (p - (1-Epsilon)*es) * rt
	// A/L_v = eps e_s/(R_d T): no division (derived)
	return adState{rho * Gravity * (Epsilon * es * rt) * (bb - SpecificHeatDryAir) * inv, gm, rho}
}
