package microphys

import "math"

// VentilationCoefficient returns the mean ventilation coefficient f_v (1) of the vapour
// diffusion to or from a water drop of radius r (m) falling at its Beard (1976) terminal speed
// V in the air a:
//
//	N_Re = 2 r V rho_a/eta,  N_Sc = eta/(rho_a D_v),  X = N_Sc^(1/3) N_Re^(1/2)
//	f_v = 1 + 0.108 X^2      (X < 1.4)
//	f_v = 0.78 + 0.308 X     (X >= 1.4)
//
// with D_v = VapourDiffusivity(a.P, a.T).
// Reference: [PruppacherKlett1997] eqs. 13-60, 13-61; [BeardPruppacher1971].
// Valid: N_Re < 2600 (r up to about 1.5 mm at sea level), validated experimentally; NaN for
// negative or NaN r or an invalid a.
func VentilationCoefficient(r float64, a *Air) float64 {
	if !(r >= 0) || math.IsInf(r, 1) || !a.ok() {
		return math.NaN()
	}
	return ventilation(r, a.FallSpeed(2*r), VapourDiffusivity(a.P, a.T), a)
}

func ventilation(r, V, dv float64, a *Air) float64 {
	re := 2 * r * V * a.Rho / a.Eta
	sc := a.Eta / (a.Rho * dv)
	x := math.Cbrt(sc) * math.Sqrt(re)
	if x < ventilationFit[1] {
		return 1 + ventilationFit[0]*x*x
	}
	return ventilationFit[2] + ventilationFit[3]*x
}

// DiffusionTerms returns the heat-conduction and vapour-diffusion terms of the diffusional
// growth equation, s m-2, at pressure p (Pa) and temperature T (K):
//
//	F_k = (L_v/(R_v T) - 1) L_v rho_w/(K_a T)
//	F_d = rho_w R_v T/(D_v e_s(T))
//
// with L_v = LatentHeat(T), K_a = ThermalConductivity(T), D_v = VapourDiffusivity(p, T),
// e_s = SatVapourPressure(T).
// Reference: [RogersYau1989] eq. 7.17; [PruppacherKlett1997] sec. 13.2.
// Valid: p in [AirPMin, AirPMax], T in [AirTMin, AirTMax]; NaN outside.
func DiffusionTerms(p, T float64) (Fk, Fd float64) {
	if !validP(p) || !validT(T) {
		return math.NaN(), math.NaN()
	}
	return diffusionTerms(p, T, VapourDiffusivity(p, T))
}

func diffusionTerms(p, T, dv float64) (Fk, Fd float64) {
	lv := LatentHeat(T)
	Fk = (lv/(GasConstantVapour*T) - 1) * lv * WaterDensity / (ThermalConductivity(T) * T)
	Fd = WaterDensity * GasConstantVapour * T / (dv * SatVapourPressure(T))
	return Fk, Fd
}

// EvaporationRate returns dr/dt (m s-1; negative when the drop shrinks) of a water drop of
// radius r (m) at saturation ratio S (1) in the air a, with ventilation, curvature and solute
// neglected:
//
//	r dr/dt = f_v (S - 1)/(F_k + F_d)
//
// with f_v = VentilationCoefficient(r, a) and F_k, F_d = DiffusionTerms(a.P, a.T).
// Reference: [RogersYau1989] eq. 7.18; [PruppacherKlett1997] eq. 13-28 (ventilated form).
// Valid: r >= 10 µm (curvature and solute negligible), S in [0, 1.1]; NaN for r <= 0, NaN
// input or an invalid a.
func EvaporationRate(r, S float64, a *Air) float64 {
	if !(r > 0) || math.IsInf(r, 1) || !(S >= 0 && S <= maxSaturation) || !a.ok() {
		return math.NaN()
	}
	dv := VapourDiffusivity(a.P, a.T)
	fk, fd := diffusionTerms(a.P, a.T, dv)
	return ventilation(r, a.FallSpeed(2*r), dv, a) * (S - 1) / ((fk + fd) * r)
}

// maxSaturation is the largest saturation ratio EvaporationRate accepts (common practice).
const maxSaturation = 1.1

// SubCloudLayer is a layer between the surface and cloud base with temperature along the dry
// adiabat and hydrostatic pressure. Its humidity is either that of a well-mixed layer
// (WellMixed: the vapour mixing ratio of cloud base, conserved down to the surface) or, for a
// layer decoupled from the cloud, relative humidity linear in height from SurfaceRH at the
// surface to 1 at cloud base.
type SubCloudLayer struct {
	// BaseHeight is the cloud-base height above the surface, m.
	BaseHeight float64
	// BaseT is the temperature at cloud base, K.
	BaseT float64
	// BaseP is the pressure at cloud base, Pa.
	BaseP float64
	// SurfaceRH is the relative humidity at the surface (1, i.e. a fraction); not used when
	// WellMixed is true.
	SurfaceRH float64
	// WellMixed selects the humidity of a well-mixed layer: the saturation mixing ratio of
	// cloud base, conserved below it (false: linear in height from SurfaceRH).
	WellMixed bool
}

// State returns pressure p (Pa), temperature T (K) and saturation ratio S (1) at height z (m
// above the surface) in the layer l:
//
//	T = BaseT + (g/c_pd)(BaseHeight - z)
//	p = BaseP (T/BaseT)^(c_pd/R_d)            (hydrostatic dry adiabat)
//	S = r_s(BaseT, BaseP)/r_s(T, p),  r_s = eps e_s/(p - e_s)   (WellMixed)
//	S = SurfaceRH + (1 - SurfaceRH) z/BaseHeight                (otherwise)
//
// with e_s = SatVapourPressure. In the well-mixed layer the total-water mixing ratio is
// conserved below cloud base, where the air is just saturated.
// Reference: [RogersYau1989] eqs. 2.8 and 3.2 (dry adiabat, hydrostatic balance), sec. 2.2
// (mixing ratio); [Wood2012] (well-mixed boundary layer).
// Valid: 0 <= z <= BaseHeight (extrapolated outside); NaN for NaN input or an air state
// outside [AirTMin, AirTMax] (WellMixed).
func (l SubCloudLayer) State(z float64) (p, T, S float64) {
	T = l.BaseT + Gravity/SpecificHeatDryAir*(l.BaseHeight-z)
	p = l.BaseP * math.Exp(SpecificHeatDryAir/GasConstantDry*math.Log(T/l.BaseT))
	if l.WellMixed {
		eb, es := SatVapourPressure(l.BaseT), SatVapourPressure(T)
		S = eb * (p - es) / (es * (l.BaseP - eb))
		return p, T, S
	}
	S = l.SurfaceRH + (1-l.SurfaceRH)*z/l.BaseHeight
	return p, T, S
}

// humidityOK reports whether l's humidity description is valid: WellMixed, or SurfaceRH in
// [0, 1] (hi: the largest SurfaceRH accepted).
func (l *SubCloudLayer) humidityOK(hi float64) bool {
	return l.WellMixed || l.SurfaceRH >= 0 && l.SurfaceRH <= hi
}

// EvapPath is the result of EvaporateDirect. Floats are NaN on invalid input or failure.
type EvapPath struct {
	// SurfaceRadius is the radius on reaching the surface, m (0 if it evaporated).
	SurfaceRadius float64
	// EvapHeight is the height above the surface where the drop evaporated, m (NaN if it
	// reached the surface).
	EvapHeight float64
	// Time is the time from cloud base to the surface or to complete evaporation, s.
	Time float64
	// Reached is true if the drop reached the surface.
	Reached bool
}

// Limits of the evaporation integration (common practice).
const (
	// EvapMaxSteps is the largest number of accepted steps before giving up (NaN result).
	EvapMaxSteps = 20000
	// EvapMaxTime is the longest fall time before giving up, s.
	// EvapRelTol is the relative tolerance of EvaporateDirect's integrator: 1e-8 on r^2 keeps
	// the surface radius within about 1e-6 relative even when most of the drop has evaporated.
	EvapRelTol    = 1e-8
	EvapMaxTime   = 1e6
	maxBaseHeight = 5000.0
	// evapRadiusScale is the radius scale of the absolute error tolerance on r^2, m: the
	// radius is resolved to RelTol relative down to about 1 µm.
	evapRadiusScale = 1e-6
)

// evapSys is d(r^2)/dt, dz/dt of a drop falling through a sub-cloud layer (or through constant
// air when layer is false).
type evapSys struct {
	l         SubCloudLayer
	layer     bool
	air       Air     // constant air (layer false)
	s         float64 // constant saturation ratio (layer false)
	ventilate bool
	fall      func(float64) float64 // nil: Beard
}

func (e evapSys) aux([2]float64) float64 { return 0 }

func (e evapSys) deriv(y [2]float64) [2]float64 {
	r := math.Sqrt(math.Max(y[0], 0))
	a, S := e.air, e.s
	if e.layer {
		p, T, s := e.l.State(y[1])
		a, S = NewAir(p, T), s
	}
	var V float64
	if e.fall != nil {
		V = e.fall(r)
	} else {
		V = a.FallSpeed(2 * r)
	}
	dv := VapourDiffusivity(a.P, a.T)
	fk, fd := diffusionTerms(a.P, a.T, dv)
	fv := 1.0
	if e.ventilate {
		fv = ventilation(r, V, dv, &a)
	}
	return [2]float64{2 * fv * (S - 1) / (fk + fd), -V}
}

// EvaporateDirect integrates the fall and evaporation of a drop of radius r0 (m) leaving cloud
// base into the sub-cloud layer l:
//
//	d(r^2)/dt = 2 f_v (S(z) - 1)/(F_k + F_d),  dz/dt = -V(r)
//
// with T(z), p(z), S(z) from l.State, f_v = VentilationCoefficient, F_k, F_d = DiffusionTerms
// and V from Beard (1976), all at the local state. The squared radius is the integrated
// variable (its rate stays finite as r -> 0); the same adaptive Dormand-Prince 5(4)
// integrator as CollectDirect (RelTol EvapRelTol = 1e-8) locates the evaporation point
// (r = 0) or the surface (z = 0) by re-stepping.
// Reference: [RogersYau1989] eq. 7.18; [PruppacherKlett1997] eqs. 13-28, 13-60, 13-61;
// [BeardPruppacher1971]; [Beard1976]; [DormandPrince1980].
// Valid: r0 in (0, 3.5 mm], BaseHeight in (0, 5 km], SurfaceRH in [0, 1] (or WellMixed), the air at base and
// at the surface inside [AirTMin, AirTMax] x [AirPMin, AirPMax]; NaN fields otherwise, or
// when EvapMaxSteps or EvapMaxTime is exceeded.
func EvaporateDirect(r0 float64, l SubCloudLayer) EvapPath { return evaporateTol(r0, l, EvapRelTol) }

// evaporateTol is EvaporateDirect with the relative tolerance rtol (the table build uses a
// looser one; same system, events and absolute-tolerance scales).
func evaporateTol(r0 float64, l SubCloudLayer, rtol float64) EvapPath {
	bad := EvapPath{SurfaceRadius: math.NaN(), EvapHeight: math.NaN(), Time: math.NaN()}
	if !(r0 > 0 && r0 <= BeardDMax/2 && l.BaseHeight > 0 && l.BaseHeight <= maxBaseHeight &&
		l.humidityOK(1) && validT(l.BaseT) && validP(l.BaseP)) {
		return bad
	}
	if ps, Ts, _ := l.State(0); !validT(Ts) || !validP(ps) {
		return bad
	}
	sys := evapSys{l: l, layer: true, ventilate: true}
	var ev eventSet
	ev.add(0, 0, -1)
	ev.add(1, 0, -1)
	opt := odeOptions{
		rtol:     rtol,
		atol:     [2]float64{rtol * evapRadiusScale * evapRadiusScale, rtol * l.BaseHeight},
		tEnd:     EvapMaxTime,
		maxSteps: EvapMaxSteps,
	}
	res := integrate(sys, [2]float64{r0 * r0, l.BaseHeight}, opt, &ev, nil)
	switch res.event {
	case 0:
		return EvapPath{SurfaceRadius: 0, EvapHeight: res.y[1], Time: res.t}
	case 1:
		return EvapPath{SurfaceRadius: math.Sqrt(math.Max(res.y[0], 0)), EvapHeight: math.NaN(), Time: res.t, Reached: true}
	}
	return bad
}

// EvaporateConstant integrates the evaporation of a drop of radius r0 (m) falling in still,
// uniform air a at constant saturation ratio S < 1 until it has evaporated:
//
//	d(r^2)/dt = 2 f_v (S - 1)/(F_k + F_d),  dz/dt = -V(r)
//
// with f_v = VentilationCoefficient (or 1 when ventilate is false) and V = fall(r) (Beard
// (1976) in a when fall is nil). It returns R = 0, Z = -(fall distance) (m), Time = lifetime
// (s). Without ventilation the closed forms are t = r0^2/(2A), z = k1 r0^4/(4A) for
// V = k1 r^2 and z = k3 r0^3/(3A) for V = k3 r, A = (1 - S)/(F_k + F_d).
// Reference: [RogersYau1989] eq. 7.18 and sec. 7.3; [DormandPrince1980].
// Valid: r0 in (0, 3.5 mm], S in [0, 1), valid a, relTol in [1e-12, 1e-2] (0 means 1e-6); NaN
// fields otherwise.
func EvaporateConstant(r0, S float64, a Air, fall func(r float64) float64, ventilate bool, relTol float64) ConstantPath {
	bad := ConstantPath{R: math.NaN(), Z: math.NaN(), Time: math.NaN()}
	if relTol == 0 {
		relTol = DefaultCollectorRelTol
	}
	if !(r0 > 0 && r0 <= BeardDMax/2 && S >= 0 && S < 1 && a.ok() && validP(a.P) && validT(a.T) &&
		relTol >= minRelTol && relTol <= maxRelTol) {
		return bad
	}
	sys := evapSys{air: a, s: S, ventilate: ventilate, fall: fall}
	var ev eventSet
	ev.add(0, 0, -1)
	opt := odeOptions{
		rtol:     relTol,
		atol:     [2]float64{relTol * r0 * r0, relTol * r0},
		tEnd:     EvapMaxTime,
		maxSteps: EvapMaxSteps,
	}
	res := integrate(sys, [2]float64{r0 * r0, 0}, opt, &ev, nil)
	if res.event != 0 {
		return bad
	}
	return ConstantPath{R: 0, Z: res.y[1], Time: res.t, Steps: res.steps}
}
