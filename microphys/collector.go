package microphys

import "math"

// CollectorSetup holds the settings of the collector-drop growth model (CollectDirect).
type CollectorSetup struct {
	// R0 is the collector radius at release, m.
	R0 float64
	// Updraft is the constant vertical air speed w, m s-1. When w <= 0 the collector is
	// released at cloud top and falls through (w < 0 is a downdraft); when w > 0 it enters at
	// cloud base, rises while V(R) < w, then falls.
	Updraft float64
	// DrizzleRadius is the radius at which the collector counts as a drizzle drop, m.
	DrizzleRadius float64
	// Collision is the collision-efficiency law.
	Collision CollisionKind
	// Coalescence is the coalescence-efficiency law.
	Coalescence CoalescenceKind
	// RelTol is the relative tolerance per step of the adaptive integrator. The Hall table is
	// piecewise bilinear, so the right-hand side has kinks the error estimate cannot see: at
	// the default 1e-6 the global error of ExitRadius and ExitTime is up to about 1e-3 (1e-4
	// typical); at 1e-10 it is below 1e-6 (tests against RK4 and scipy).
	RelTol float64
}

// Defaults of the collector model.
const (
	// DefaultCollectorR0 is the default collector start radius, m: 25 µm, the radius of the
	// new drizzle drops of the Khairoutdinov & Kogan (2000) scheme (the embryo that
	// autoconversion creates) [KhairoutdinovKogan2000]; collection is efficient from there
	// on in the Hall (1980) table (E rises from 0.03 to 0.5 between 20 and 40 µm) [Hall1980].
	// A collector no larger than the cloud-top mean-volume droplets is flagged
	// (QCCollectorNotLarger): the continuous-collection picture needs a drop larger than the
	// droplets it sweeps up.
	DefaultCollectorR0 = 25e-6
	// DefaultDrizzleRadius is the default drizzle radius, m: 100 µm, the lower end of the
	// drizzle diameter range 0.2-0.5 mm of the CF standard-name table (description of
	// mass_concentration_of_drizzle_in_air) [CFStdNames2023].
	DefaultDrizzleRadius = 100e-6
	// DefaultCollectorRelTol is the default relative tolerance of the integrator.
	DefaultCollectorRelTol = 1e-6
)

// DefaultCollectorSetup returns the default collector settings:
//
//	R0 = 25 µm, Updraft = 0 (release at cloud top), DrizzleRadius = 100 µm,
//	Collision = CollisionHall, Coalescence = CoalescenceBlend, RelTol = 1e-6
//
// Updraft 0 is the stratocumulus picture: a steady updraft that carries the drop up
// through the cloud first is a cumulus picture (in marine stratocumulus columns an updraft
// of 0.5 m s-1 or more carries the collector out through cloud top).
//
// Reference: [KhairoutdinovKogan2000] (R0, the drizzle-embryo radius), [Hall1980],
// [CFStdNames2023] (drizzle: diameter 0.2-0.5 mm).
// Valid: always.
func DefaultCollectorSetup() CollectorSetup {
	return CollectorSetup{
		R0:            DefaultCollectorR0,
		DrizzleRadius: DefaultDrizzleRadius,
		Collision:     CollisionHall,
		Coalescence:   CoalescenceBlend,
		RelTol:        DefaultCollectorRelTol,
	}
}

// CloudColumn is the adiabatic cloud a collector falls through.
type CloudColumn struct {
	// H is the cloud geometric thickness, m.
	H float64
	// Gamma is f_ad c_w, kg m-4: LWC(zeta) = Gamma zeta at height zeta above cloud base.
	Gamma float64
	// Nd is the cloud droplet number concentration, m-3; the cloud-droplet mean-volume radius
	// is r(zeta) = (3 LWC/(4 pi rho_w Nd))^(1/3).
	Nd float64
	// Air is the air in the cloud (one state for the whole column).
	Air Air
}

// CollectorPath is the result of CollectDirect. Every float is NaN when the input was invalid
// or the integration failed (step or time limit).
type CollectorPath struct {
	// ExitRadius is the collector radius on leaving the cloud, m.
	ExitRadius float64
	// ExitTime is the time from release to leaving the cloud, s.
	ExitTime float64
	// TopHeight is the highest level reached, m above cloud base.
	TopHeight float64
	// DrizzleTime is the time from release to reaching DrizzleRadius, s; NaN if never.
	DrizzleTime float64
	// ExitBase is true if the collector left through cloud base, false if it was carried out
	// through the top (or on failure).
	ExitBase bool
	// Steps is the number of accepted integrator steps.
	Steps int
}

// Limits of the adaptive integration (common practice: far beyond any realistic case).
const (
	// CollectorMaxSteps is the largest number of accepted steps before giving up (NaN result).
	CollectorMaxSteps = 20000
	// CollectorMaxTime is the longest simulated time before giving up, s (one day).
	CollectorMaxTime = 86400.0
)

// collectorSys is dR/dt, dz/dt of a collector in the adiabatic column.
type collectorSys struct {
	air         Air
	gamma, h, w float64
	rnorm       float64 // 3/(4 pi rho_w Nd): r^3 = LWC*rnorm
	coll        CollisionKind
	coal        CoalescenceKind
}

// aux is R - r(z): zero where collector and cloud droplets are the same size, the kink of
// |V(R) - v(r)|.
func (s collectorSys) aux(y [2]float64) float64 {
	lwc := s.gamma * math.Max(0, math.Min(y[1], s.h))
	return y[0] - math.Cbrt(lwc*s.rnorm)
}

func (s collectorSys) deriv(y [2]float64) [2]float64 {
	R, z := y[0], y[1]
	if !(R > 0) {
		return [2]float64{math.NaN(), math.NaN()}
	}
	V := s.air.FallSpeed(2 * R)
	dz := s.w - V
	zc := math.Max(0, math.Min(z, s.h))
	lwc := s.gamma * zc
	if !(lwc > 0) {
		return [2]float64{0, dz}
	}
	r := math.Cbrt(lwc * s.rnorm)
	v := s.air.FallSpeed(2 * r)
	e := s.coll.Efficiency(R, r) * coalescenceSpeeds(s.coal, R, r, V, v, &s.air)
	sum := R + r
	return [2]float64{e * lwc * math.Abs(V-v) * sum * sum / (four * s.air.RhoW * R * R), dz}
}

// CollectDirect integrates the growth of one collector drop by continuous collection through
// the adiabatic column c with the settings s:
//
//	dR/dt = E(R, r) E_coal(R, r) LWC(z) |V(R) - v(r)| (R + r)^2/(4 rho_w R^2)
//	dz/dt = w - V(R)
//	LWC(z) = Gamma z,  r(z) = (3 LWC/(4 pi rho_w Nd))^(1/3),  0 <= z <= H
//
// with V, v from Beard (1976) in c.Air, E from s.Collision and E_coal from s.Coalescence.
// With w <= 0 the drop starts at cloud top (z = H); with w > 0 it starts at cloud base
// (z = 0) and rises while V(R) < w (if V(R0) >= w it leaves at once: ExitTime 0). The path
// ends when z reaches 0 (ExitBase) or H from below (carried out through the top). The
// integrator is an embedded Dormand-Prince 5(4) pair with step-size control on the mixed
// error |e_i| <= RelTol (|y_i| + scale_i) (scale R0 for R, max(H, 1 m) for z); the exit
// level is located by re-stepping exactly onto it, and the integrator also steps exactly
// across the known jumps and kinks of the right-hand side (the Beard regime joins of V(R)
// and v(r), and R = r where |V - v| has its kink). DrizzleTime and TopHeight inside a step
// come from cubic Hermite interpolation. See CollectorSetup.RelTol for the accuracy.
// Deviation: |V - v| in place of V - v, so that a collector smaller than the cloud droplets
// still gains mass (the larger drop sweeps the smaller; the merged mass is the same).
// Reference: [Bowen1950] (continuous collection), [PruppacherKlett1997] eq. 15-5,
// [Beard1976], [Hall1980], [DormandPrince1980].
// Valid: H in (0, 10 km], Gamma in [0, 1e-4] kg m-4, Nd > 0 with a mean-volume droplet radius
// at cloud top of at most 100 µm (cloud droplets, not drizzle), R0 in (0, 3.5 mm], |w| <= 20 m s-1,
// DrizzleRadius > 0, RelTol in [1e-12, 1e-2], valid Air and kinds; otherwise every float of
// the result is NaN.
func CollectDirect(c CloudColumn, s CollectorSetup) CollectorPath {
	bad := CollectorPath{ExitRadius: math.NaN(), ExitTime: math.NaN(), TopHeight: math.NaN(), DrizzleTime: math.NaN()}
	if !(c.H > 0 && c.H <= maxCloudThickness && c.Gamma >= 0 && c.Gamma <= maxGamma &&
		c.Nd > 0 && c.Nd < math.Inf(1) && c.Air.ok() &&
		s.R0 > 0 && s.R0 <= BeardDMax/2 && math.Abs(s.Updraft) <= maxUpdraft &&
		s.DrizzleRadius > 0 && s.DrizzleRadius < math.Inf(1) &&
		s.RelTol >= minRelTol && s.RelTol <= maxRelTol &&
		s.Collision.valid() && s.Coalescence.valid()) {
		return bad
	}
	if rTop3 := 3 * c.Gamma * c.H / (4 * math.Pi * WaterDensity * c.Nd); rTop3 > maxDropletRadius*maxDropletRadius*maxDropletRadius {
		return bad
	}
	sys := collectorSys{
		air: c.Air, gamma: c.Gamma, h: c.H, w: s.Updraft,
		rnorm: 1 / (sphereVolume * math.Pi * c.Air.RhoW * c.Nd),
		coll:  s.Collision, coal: s.Coalescence,
	}
	obs := collectorObserver{drizzleR: s.DrizzleRadius, drizzleT: math.NaN()}
	var y0 [2]float64
	var ev eventSet
	if s.Updraft <= 0 {
		y0 = [2]float64{s.R0, c.H}
		obs.top = c.H
		ev.add(1, 0, -1)
	} else {
		y0 = [2]float64{s.R0, 0}
		if c.Air.FallSpeed(2*s.R0) >= s.Updraft {
			p := CollectorPath{ExitRadius: s.R0, ExitTime: 0, TopHeight: 0, DrizzleTime: math.NaN(), ExitBase: true}
			if s.R0 >= s.DrizzleRadius {
				p.DrizzleTime = 0
			}
			return p
		}
		ev.add(1, 0, -1)
		ev.add(1, c.H, +1)
	}
	if s.R0 >= s.DrizzleRadius {
		obs.drizzleT = 0
	}
	// Breakpoints: the Beard regime joins of the collector (jumps of V(R) of up to 1 %) and
	// the level where the cloud droplets cross the 19 µm join (a jump of v(r)).
	for _, rj := range [...]float64{BeardD1 / 2, BeardD2 / 2} {
		if rj > s.R0 {
			ev.addBreak(0, rj)
		}
	}
	if c.Gamma > 0 {
		ev.addBreak(auxComp, 0) // R = r(z)
		rj := BeardD1 / 2
		if zj := rj * rj * rj / (c.Gamma * sys.rnorm); zj > 0 && zj < c.H {
			ev.addBreak(1, zj)
		}
	}
	opt := odeOptions{
		rtol:     s.RelTol,
		atol:     [2]float64{s.RelTol * s.R0, s.RelTol * math.Max(c.H, 1)},
		tEnd:     CollectorMaxTime,
		maxSteps: CollectorMaxSteps,
	}
	res := integrate(sys, y0, opt, &ev, &obs)
	if res.event < 0 {
		return bad
	}
	return CollectorPath{
		ExitRadius:  res.y[0],
		ExitTime:    res.t,
		TopHeight:   obs.top,
		DrizzleTime: obs.drizzleT,
		ExitBase:    res.event == 0,
		Steps:       res.steps,
	}
}

// Validity limits of CollectDirect (common practice).
const (
	maxCloudThickness = 1e4
	maxGamma          = 1e-4   // kg m-4: 30x the largest adiabatic c_w (about 3e-6 at 300 K)
	maxDropletRadius  = 100e-6 // m: cloud droplets at cloud top (drizzle is larger)
	maxUpdraft        = 20.0
	minRelTol         = 1e-12
	maxRelTol         = 1e-2
)

func (k CollisionKind) valid() bool   { return k >= 0 && int(k) < len(collisionNames) }
func (k CoalescenceKind) valid() bool { return k >= 0 && int(k) < len(coalescenceNames) }

// coalescenceSpeeds is CoalescenceKind.Efficiency with the fall speeds vl = V(R), vs = V(r)
// already known (R >= 0, r >= 0, a valid).
func coalescenceSpeeds(k CoalescenceKind, R, r, vR, vr float64, a *Air) float64 {
	if r > R {
		R, r, vR, vr = r, R, vr, vR
	}
	switch k {
	case CoalescenceUnity:
		return 1
	case CoalescenceBeardOchs:
		return beardOchs(R, r, vR, vr, a)
	case CoalescenceLowList:
		return lowList(R, r, vR, vr, a)
	}
	q := (R + r) / 2
	switch {
	case q <= seifertBlend[0]:
		return beardOchs(R, r, vR, vr, a)
	case q >= seifertBlend[1]:
		return lowList(R, r, vR, vr, a)
	}
	x := (q - seifertBlend[0]) / (seifertBlend[1] - seifertBlend[0])
	sl := math.Sin(math.Pi * x / 2)
	sb := math.Sin(math.Pi * (1 - x) / 2)
	return clip01(sl*sl*lowList(R, r, vR, vr, a) + sb*sb*beardOchs(R, r, vR, vr, a))
}

// collectorObserver records the drizzle time and the highest level from each accepted step.
type collectorObserver struct {
	drizzleR, drizzleT, top float64
}

func (o *collectorObserver) step(t0 float64, y0, f0 [2]float64, t1 float64, y1, f1 [2]float64) {
	h := t1 - t0
	if math.IsNaN(o.drizzleT) && y0[0] < o.drizzleR && y1[0] >= o.drizzleR {
		o.drizzleT = t0 + h*hermiteRoot(y0[0], f0[0], y1[0], f1[0], h, o.drizzleR)
	}
	if y1[1] > o.top {
		o.top = y1[1]
	}
	if f0[1] > 0 && f1[1] < 0 { // maximum of z inside the step
		if zm := hermiteMax(y0[1], f0[1], y1[1], f1[1], h); zm > o.top {
			o.top = zm
		}
	}
}

// ConstantCollector is the Bowen-type test problem of CollectConstant: a collector in a cloud
// of constant LWC with constant efficiency, constant updraft and a given fall-speed law.
type ConstantCollector struct {
	// R0 is the start radius, m.
	R0 float64
	// Updraft is the constant vertical air speed U, m s-1 (any sign).
	Updraft float64
	// LWC is the constant liquid water content M, kg m-3.
	LWC float64
	// Efficiency is the constant collection efficiency E (1).
	Efficiency float64
	// Fall is the fall-speed law V(R), m s-1, of radius R (m).
	Fall func(R float64) float64
	// StopRadius ends the path when R reaches it (m); 0 for no such stop.
	StopRadius float64
	// StopTime ends the path at this time (s); 0 for no such stop (CollectorMaxTime applies).
	StopTime float64
	// StopReturn ends the path when the drop comes back down to its start level.
	StopReturn bool
	// RelTol is the relative tolerance of the integrator (DefaultCollectorRelTol if 0).
	RelTol float64
}

// ConstantPath is the end state of CollectConstant: radius R (m), height Z above the start
// (m), time (s) and accepted steps; NaN on invalid input or failure.
type ConstantPath struct {
	R, Z, Time float64
	Steps      int
}

type constantSys struct {
	k, u float64 // k = E M/(4 rho_w)
	fall func(float64) float64
}

func (s constantSys) aux([2]float64) float64 { return 0 }

func (s constantSys) deriv(y [2]float64) [2]float64 {
	v := s.fall(y[0])
	return [2]float64{s.k * v, s.u - v}
}

// CollectConstant integrates the Bowen form of continuous collection with the same adaptive
// integrator as CollectDirect (cloud-droplet size and speed neglected):
//
//	dR/dt = E M V(R)/(4 rho_w),  dz/dt = U - V(R),  R(0) = R0, z(0) = 0
//
// until R reaches StopRadius, t reaches StopTime, or (StopReturn) z comes back to 0 from
// above, whichever comes first. It exists to check the integrator against the closed forms
// (e.g. Bowen's return radius R_f = U/(k1 R0) for V = k1 R^2).
// Reference: [Bowen1950]; [DormandPrince1980].
// Valid: R0 > 0, M >= 0, E >= 0, finite U, Fall non-nil and non-negative; at least one stop
// (otherwise CollectorMaxTime ends it and the result is NaN); NaN result on invalid input or
// failure.
func CollectConstant(c ConstantCollector) ConstantPath {
	bad := ConstantPath{R: math.NaN(), Z: math.NaN(), Time: math.NaN()}
	rtol := c.RelTol
	if rtol == 0 {
		rtol = DefaultCollectorRelTol
	}
	if !(c.R0 > 0 && c.R0 < math.Inf(1) && c.LWC >= 0 && c.LWC < math.Inf(1) &&
		c.Efficiency >= 0 && c.Efficiency < math.Inf(1) && math.Abs(c.Updraft) < math.Inf(1) &&
		c.Fall != nil && rtol >= minRelTol && rtol <= maxRelTol &&
		c.StopRadius >= 0 && c.StopTime >= 0) {
		return bad
	}
	sys := constantSys{k: c.Efficiency * c.LWC / (four * WaterDensity), u: c.Updraft, fall: c.Fall}
	var ev eventSet
	if c.StopRadius > 0 {
		ev.add(0, c.StopRadius, +1)
	}
	if c.StopReturn {
		ev.add(1, 0, -1)
	}
	opt := odeOptions{
		rtol:     rtol,
		atol:     [2]float64{rtol * c.R0, rtol},
		tEnd:     CollectorMaxTime,
		maxSteps: CollectorMaxSteps,
	}
	timeStop := c.StopTime > 0
	if timeStop {
		opt.tEnd = c.StopTime
	}
	res := integrate(sys, [2]float64{c.R0, 0}, opt, &ev, nil)
	if res.event < 0 && !(timeStop && res.event == eventTime) {
		return bad
	}
	return ConstantPath{R: res.y[0], Z: res.y[1], Time: res.t, Steps: res.steps}
}

// ---------------------------------------------------------------------------------------
// Embedded Dormand-Prince 5(4) integrator for autonomous two-component systems.

// Dormand & Prince (1980) table 2 coefficients (RK5(4)7M), [DormandPrince1980].
var (
	dpA2 = [1]float64{1.0 / 5}
	dpA3 = [2]float64{3.0 / 40, 9.0 / 40}
	dpA4 = [3]float64{44.0 / 45, -56.0 / 15, 32.0 / 9}
	dpA5 = [4]float64{19372.0 / 6561, -25360.0 / 2187, 64448.0 / 6561, -212.0 / 729}
	dpA6 = [5]float64{9017.0 / 3168, -355.0 / 33, 46732.0 / 5247, 49.0 / 176, -5103.0 / 18656}
	// dpB is the fifth-order solution (also the seventh stage, FSAL).
	dpB = [6]float64{35.0 / 384, 0, 500.0 / 1113, 125.0 / 192, -2187.0 / 6784, 11.0 / 84}
	// dpE is the difference of the fifth- and fourth-order weights (stages 1..7).
	dpE = [7]float64{71.0 / 57600, 0, -71.0 / 16695, 71.0 / 1920, -17253.0 / 339200, 22.0 / 525, -1.0 / 40}
)

// Step-size controller constants (common practice, Hairer, Norsett & Wanner ch. II.4).
const (
	dpSafety   = 0.9
	dpMinScale = 0.2
	dpMaxScale = 5.0
	dpExponent = 1.0 / 5.0
	dpFirst    = 0.01  // first step as a fraction of the shortest time scale
	dpMinStep  = 1e-12 // relative to the time scale: below this the integration fails
	rootIter   = 60    // iteration limit of the event and Hermite root finders
	rootTol    = 1e-12 // relative tolerance of the event location
	breakNudge = 1e-7  // relative distance past a breakpoint at which a step lands
	breakTol   = 5e-8  // relative tolerance of landing there (so the landing is always past it)
)

// odeSystem is an autonomous two-component system. aux is an extra event function of the
// state (event component auxComp), e.g. R - r(z) for the collector.
type odeSystem interface {
	deriv(y [2]float64) [2]float64
	aux(y [2]float64) float64
}

// auxComp is the event component that refers to odeSystem.aux.
const auxComp = 2

// component returns y[c], or sys.aux(y) for c == auxComp.
func component[S odeSystem](sys S, y [2]float64, c int) float64 {
	if c == auxComp {
		return sys.aux(y)
	}
	return y[c]
}

type odeOptions struct {
	rtol     float64
	atol     [2]float64
	tEnd     float64
	maxSteps int
}

// eventSet holds up to eight events: component comp crossing level in direction dir (+1
// upward, -1 downward, 0 either). A terminal event ends the integration; a non-terminal one
// is a breakpoint of the right-hand side (a jump or kink), onto which the integrator steps
// exactly (landing just past it) so that no step straddles it.
type eventSet struct {
	n        int
	comp     [8]int
	level    [8]float64
	dir      [8]float64
	terminal [8]bool
}

func (e *eventSet) add(comp int, level, dir float64) {
	e.comp[e.n], e.level[e.n], e.dir[e.n], e.terminal[e.n] = comp, level, dir, true
	e.n++
}

func (e *eventSet) addBreak(comp int, level float64) {
	e.comp[e.n], e.level[e.n], e.dir[e.n], e.terminal[e.n] = comp, level, 0, false
	e.n++
}

// Special values of odeResult.event.
const (
	eventTime   = -1 // tEnd reached
	eventFailed = -2 // step limit, step underflow or NaN
)

type odeResult struct {
	t     float64
	y     [2]float64
	event int
	steps int
}

// dpStep takes one Dormand-Prince step of size h from (y, f = deriv(y)); it returns the new
// state, its derivative (FSAL) and the error norm.
func dpStep[S odeSystem](sys S, y, f [2]float64, h float64, o *odeOptions) (y1, f1 [2]float64, errNorm float64) {
	var k2, k3, k4, k5, k6, yt [2]float64
	for i := range 2 {
		yt[i] = y[i] + h*dpA2[0]*f[i]
	}
	k2 = sys.deriv(yt)
	for i := range 2 {
		yt[i] = y[i] + h*(dpA3[0]*f[i]+dpA3[1]*k2[i])
	}
	k3 = sys.deriv(yt)
	for i := range 2 {
		yt[i] = y[i] + h*(dpA4[0]*f[i]+dpA4[1]*k2[i]+dpA4[2]*k3[i])
	}
	k4 = sys.deriv(yt)
	for i := range 2 {
		yt[i] = y[i] + h*(dpA5[0]*f[i]+dpA5[1]*k2[i]+dpA5[2]*k3[i]+dpA5[3]*k4[i])
	}
	k5 = sys.deriv(yt)
	for i := range 2 {
		yt[i] = y[i] + h*(dpA6[0]*f[i]+dpA6[1]*k2[i]+dpA6[2]*k3[i]+dpA6[3]*k4[i]+dpA6[4]*k5[i])
	}
	k6 = sys.deriv(yt)
	for i := range 2 {
		y1[i] = y[i] + h*(dpB[0]*f[i]+dpB[2]*k3[i]+dpB[3]*k4[i]+dpB[4]*k5[i]+dpB[5]*k6[i])
	}
	f1 = sys.deriv(y1)
	for i := range 2 {
		e := h * (dpE[0]*f[i] + dpE[2]*k3[i] + dpE[3]*k4[i] + dpE[4]*k5[i] + dpE[5]*k6[i] + dpE[6]*f1[i])
		sc := o.atol[i] + o.rtol*math.Max(math.Abs(y[i]), math.Abs(y1[i]))
		errNorm = math.Max(errNorm, math.Abs(e)/sc)
		if math.IsNaN(e) || math.IsNaN(y1[i]) {
			errNorm = math.Inf(1)
		}
	}
	return y1, f1, errNorm
}

// integrate runs sys from y0 at t = 0 until a terminal event of ev, t = o.tEnd, or failure.
// A terminal event is located by re-stepping from the last accepted point with the step that
// lands on the event level (Illinois iteration), so the final state is a full fifth-order
// step. obs (may be nil) sees every accepted step.
func integrate[S odeSystem](sys S, y0 [2]float64, o odeOptions, ev *eventSet, obs *collectorObserver) odeResult {
	y := y0
	f := sys.deriv(y)
	t := 0.0
	// first step from the shortest time scale of the components
	scale := math.Inf(1)
	for i := range 2 {
		if f[i] != 0 {
			scale = math.Min(scale, (o.atol[i]/o.rtol+math.Abs(y[i]))/math.Abs(f[i]))
		}
	}
	if math.IsInf(scale, 1) || math.IsNaN(scale) {
		scale = o.tEnd
	}
	h := dpFirst * scale
	hMin := dpMinStep * scale
	steps := 0
	for steps < o.maxSteps {
		if t >= o.tEnd {
			return odeResult{t: t, y: y, event: eventTime, steps: steps}
		}
		last := false
		if t+h >= o.tEnd {
			h = o.tEnd - t
			last = true
		}
		y1, f1, en := dpStep(sys, y, f, h, &o)
		if !(en <= 1) {
			if math.IsNaN(en) || math.IsInf(en, 1) {
				h *= dpMinScale
			} else {
				h *= math.Max(dpMinScale, dpSafety*math.Exp(-dpExponent*math.Log(en)))
			}
			if h < hMin || math.IsNaN(h) {
				break
			}
			continue
		}
		t1 := t + h
		if last {
			t1 = o.tEnd
		}
		which := -1 // no event in this step
		best := h
		for k := 0; k < ev.n; k++ {
			c, lv, d := ev.comp[k], ev.level[k], ev.dir[k]
			g0, g1 := component(sys, y, c)-lv, component(sys, y1, c)-lv
			var sg float64 // orientation so that sg*g goes from < 0 to >= 0
			switch {
			case d >= 0 && g0 < 0 && g1 >= 0:
				sg = 1
			case d <= 0 && g0 > 0 && g1 <= 0:
				sg = -1
			default:
				continue
			}
			target := lv
			if !ev.terminal[k] {
				target = lv + sg*breakNudge*(math.Abs(lv)+scaleOf(&o, c))
				g0, g1 = component(sys, y, c)-target, component(sys, y1, c)-target
				if !(sg*g0 < 0 && sg*g1 >= 0) {
					continue
				}
			}
			guess, rel := 0.0, rootTol
			if c != auxComp {
				guess = h * hermiteRoot(sg*y[c], sg*f[c], sg*y1[c], sg*f1[c], h, sg*target)
			}
			if !ev.terminal[k] {
				rel = breakTol
			}
			hs := locate(sys, y, f, h, &o, c, target, sg, sg*g0, sg*g1, guess, rel)
			if which < 0 || hs < best {
				best, which = hs, k
			}
		}
		if which >= 0 {
			c := ev.comp[which]
			y1, f1, _ = dpStep(sys, y, f, best, &o)
			if ev.terminal[which] && c != auxComp {
				y1[c] = ev.level[which] // exact on the level (the residual is below rootTol)
			}
			t1 = t + best
			last = false
		}
		if obs != nil {
			obs.step(t, y, f, t1, y1, f1)
		}
		t, y, f = t1, y1, f1
		steps++
		if which >= 0 && ev.terminal[which] {
			return odeResult{t: t, y: y, event: which, steps: steps}
		}
		if last {
			return odeResult{t: t, y: y, event: eventTime, steps: steps}
		}
		if en == 0 {
			h *= dpMaxScale
		} else {
			h *= math.Min(dpMaxScale, dpSafety*math.Exp(-dpExponent*math.Log(en)))
		}
	}
	return odeResult{t: t, y: y, event: eventFailed, steps: steps}
}

// locate finds the step s in (0, h] whose Dormand-Prince step from y lands component c on lv,
// given the signed residuals g0 < 0 at s = 0 and g1 >= 0 at s = h (Illinois method), to the
// relative tolerance rel; guess in (0, h) (from Hermite interpolation) is tried first.
func locate[S odeSystem](sys S, y, f [2]float64, h float64, o *odeOptions, c int, lv, d, g0, g1, guess, rel float64) float64 {
	a, b := 0.0, h
	ga, gb := g0, g1
	tol := rel * (math.Abs(lv) + scaleOf(o, c))
	side := 0
	s := b
	for it := range rootIter {
		s = b - gb*(b-a)/(gb-ga)
		if it == 0 && guess > 0 && guess < h {
			s = guess
		}
		if !(s > a && s < b) {
			s = (a + b) / 2
		}
		y1, _, _ := dpStep(sys, y, f, s, o)
		g := d * (component(sys, y1, c) - lv)
		if math.Abs(g) <= tol || b-a <= rootTol*h {
			return s
		}
		if g < 0 {
			a, ga = s, g
			if side == -1 {
				gb /= 2
			}
			side = -1
		} else {
			b, gb = s, g
			if side == +1 {
				ga /= 2
			}
			side = +1
		}
	}
	return s
}

// scaleOf is the absolute scale of event component c.
func scaleOf(o *odeOptions, c int) float64 {
	if c == auxComp {
		return o.atol[0] / o.rtol
	}
	return o.atol[c] / o.rtol
}

// hermite returns the cubic Hermite interpolant at fraction s of a step of length h.
func hermite(y0, f0, y1, f1, h, s float64) float64 {
	s2 := s * s
	s3 := s2 * s
	return (2*s3-three*s2+1)*y0 + (s3-2*s2+s)*h*f0 + (three*s2-2*s3)*y1 + (s3-s2)*h*f1
}

// hermiteRoot returns s in [0, 1] where the Hermite interpolant equals v (bisection; the
// interpolant is assumed to cross v once).
func hermiteRoot(y0, f0, y1, f1, h, v float64) float64 {
	lo, hi := 0.0, 1.0
	for range rootIter {
		m := (lo + hi) / 2
		if hermite(y0, f0, y1, f1, h, m) < v {
			lo = m
		} else {
			hi = m
		}
	}
	return (lo + hi) / 2
}

// hermiteMax returns the maximum of the Hermite interpolant where its slope changes from
// positive to negative inside the step.
func hermiteMax(y0, f0, y1, f1, h float64) float64 {
	slope := func(s float64) float64 {
		return (six*s*s-six*s)*y0 + (three*s*s-four*s+1)*h*f0 + (six*s-six*s*s)*y1 + (three*s*s-2*s)*h*f1
	}
	lo, hi := 0.0, 1.0
	for range rootIter {
		m := (lo + hi) / 2
		if slope(m) > 0 {
			lo = m
		} else {
			hi = m
		}
	}
	return hermite(y0, f0, y1, f1, h, (lo+hi)/2)
}

const six = 6.0
