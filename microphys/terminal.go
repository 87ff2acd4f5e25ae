package microphys

import "math"

// FallSpeed returns the terminal fall speed, m s-1, of a water drop of equivalent-sphere
// diameter d (m) in the air a, by the three regimes of Beard (1976):
//
//	C_sc = 1 + 2.51 lambda/d,  Delta rho = rho_w - rho_a
//	regime 1, d < 19 µm:       V = Delta rho g d^2 C_sc/(18 eta)
//	regime 2, d < 1.07 mm:     X = ln(4 rho_a Delta rho g d^3/(3 eta^2)),
//	                           N_Re = C_sc exp(sum_{i=0..6} b_i X^i),  V = eta N_Re/(rho_a d)
//	regime 3, d <= 7 mm:       Bo = 4 Delta rho g d^2/(3 sigma),
//	                           N_P = sigma^3 rho_a^2/(eta^4 Delta rho g),
//	                           X = ln(Bo N_P^(1/6)),
//	                           N_Re = N_P^(1/6) exp(sum_{i=0..5} c_i X^i),  V = eta N_Re/(rho_a d)
//
// The pressure and temperature dependence enters only through a (rho_a, eta, lambda, sigma).
// Above 7 mm V is capped at V(7 mm); d = 0 gives 0.
// Reference: [Beard1976] eqs. 6-8 and table 1 (checked against the measurements of
// [GunnKinzer1949] table 2).
// Valid: 0.5 µm <= d <= 7 mm (regime 1 extrapolated below 0.5 µm); NaN for negative, NaN or
// infinite d and for an Air with invalid fields.
func (a *Air) FallSpeed(d float64) float64 {
	if !(d >= 0) || math.IsInf(d, 1) || !a.ok() {
		return math.NaN()
	}
	if d == 0 {
		return 0
	}
	if d > BeardDMax {
		d = BeardDMax
	}
	drho := a.RhoW - a.Rho
	if d < BeardD1 {
		// d^2 C_sc written as d (d + 2.51 lambda): no overflow for subnormal d
		return drho * Gravity * d * (d + BeardSlip*a.Lambda) / (stokesFactor * a.Eta)
	}
	if d < BeardD2 {
		csc := 1 + BeardSlip*a.Lambda/d
		nda := four * a.Rho * drho * Gravity * d * d * d / (three * a.Eta * a.Eta)
		x := math.Log(nda)
		y := beardB[6]
		for i := 5; i >= 0; i-- {
			y = y*x + beardB[i]
		}
		return a.Eta * csc * math.Exp(y) / (a.Rho * d)
	}
	bo := four * drho * Gravity * d * d / (three * a.Sigma)
	eta2 := a.Eta * a.Eta
	np := a.Sigma * a.Sigma * a.Sigma * a.Rho * a.Rho / (eta2 * eta2 * drho * Gravity)
	np6 := math.Cbrt(math.Sqrt(np))
	x := math.Log(bo * np6)
	y := beardC[5]
	for i := 4; i >= 0; i-- {
		y = y*x + beardC[i]
	}
	return a.Eta * np6 * math.Exp(y) / (a.Rho * d)
}

// FallSpeedBeard returns the Beard (1976) terminal fall speed, m s-1, of a water drop of
// diameter d (m) in dry air at pressure p (Pa) and temperature T (K):
//
//	V = a.FallSpeed(d),  a = NewAir(p, T)
//
// Reference: [Beard1976] eqs. 6-8.
// Valid: 0.5 µm <= d <= 7 mm (capped above), p in [AirPMin, AirPMax], T in [AirTMin, AirTMax];
// NaN outside.
func FallSpeedBeard(d, p, T float64) float64 {
	a := NewAir(p, T)
	return a.FallSpeed(d)
}

// FallSpeedStokes returns the Stokes-law terminal fall speed, m s-1, of a sphere of water of
// diameter d (m) in dry air at p (Pa) and T (K), without slip correction:
//
//	V = (rho_w - rho_a) g d^2/(18 eta) = k1 r^2,  k1 = 2 g (rho_w - rho_a)/(9 eta)
//
// Reference: [RogersYau1989] eq. 8.5; [PruppacherKlett1997] sec. 10.2.
// Valid: Reynolds number below about 0.1-1 (d up to about 60 µm; within 5 % of [Beard1976]
// for 14 µm <= d <= 60 µm); NaN for negative or non-finite d, d > 7 mm, or invalid p, T.
func FallSpeedStokes(d, p, T float64) float64 {
	a := NewAir(p, T)
	if !(d >= 0 && d <= BeardDMax) || !a.ok() {
		return math.NaN()
	}
	return (a.RhoW - a.Rho) * Gravity * d * d / (stokesFactor * a.Eta)
}
