package microphys

import "math"

// Drizzle leaving cloud base as a drop-size distribution, and the part of its flux that
// reaches the surface.
//
// A single collector drop leaves a stratocumulus at 25-30 µm and evaporates within tens of
// metres below cloud base, while the drizzle that reaches the surface is carried by the
// large-drop tail of the distribution. So the surface drizzle rate comes from a size
// distribution of fixed shape at cloud base whose number is set by the cloud-base rate: each
// size class falls and evaporates on its own (EvaporateDirect; number flux conserved, no
// coalescence or break-up below cloud base), and the fraction of the mass flux that arrives,
// SurfaceDrizzleFraction, does not depend on the number, only on the layer and the shape.

// DrizzleDSD is the size distribution of the drizzle drops at cloud base: a gamma
// distribution in radius above a truncation radius, normalized to one drop,
//
//	f(r) = lambda^(mu+1) (r - r_min)^mu exp(-lambda (r - r_min))/Gamma(mu + 1),  r >= r_min
//	lambda = (mu + 1)/(rbar - r_min)
//
// so that the mean radius is rbar = MeanRadius; mu = Shape = 0 is the truncated exponential.
type DrizzleDSD struct {
	// MeanRadius is the mean radius rbar of the drizzle drops, m.
	MeanRadius float64
	// MinRadius is the truncation radius r_min below which drops count as cloud droplets, m.
	MinRadius float64
	// Shape is the gamma shape mu >= 0 (0: exponential), 1.
	Shape float64
}

// Defaults of the drizzle size distribution.
const (
	// DefaultDrizzleMinRadius is the smallest drizzle radius, m: 20 µm, the cloud/drizzle
	// split of the in-situ drizzle spectra of [Wood2005].
	DefaultDrizzleMinRadius = 20e-6
	// DefaultDrizzleMeanRadius is the mean drizzle radius at cloud base, m: 50 µm (mean-volume
	// radius 68 µm for the truncated exponential), from memory of the drizzle radii near the
	// base of marine stratocumulus [Wood2005a]; with it about a quarter of the cloud-base
	// flux reaches the surface through a 400 m well-mixed layer and a few per cent through
	// 800 m (TestSurfaceDrizzlePlausible).
	DefaultDrizzleMeanRadius = 50e-6
)

// DefaultDrizzleDSD returns the default drizzle size distribution: exponential (Shape 0)
// above MinRadius 20 µm with MeanRadius 50 µm.
//
// Reference: [Wood2005] (truncated exponential, r > 20 µm); [Wood2005a] (size, from
// memory); [VanZanten2005] (drizzling regions differ in drop number, not size).
// Valid: always.
func DefaultDrizzleDSD() DrizzleDSD {
	return DrizzleDSD{MeanRadius: DefaultDrizzleMeanRadius, MinRadius: DefaultDrizzleMinRadius}
}

// ok reports whether d is a valid distribution (the ranges of Params.Validate).
func (d DrizzleDSD) ok() bool {
	return d.MinRadius >= 0 && d.MinRadius <= 100e-6 && d.MeanRadius > d.MinRadius &&
		d.MeanRadius >= 2e-6 && d.MeanRadius <= 200e-6 && d.Shape >= 0 && d.Shape <= 20
}

func (d DrizzleDSD) lambda() float64 { return (d.Shape + 1) / (d.MeanRadius - d.MinRadius) }

// PDF returns the normalized distribution f(r), m-1, at radius r (m) (see DrizzleDSD).
//
// Reference: gamma distribution (common practice); [Wood2005] (truncated exponential).
// Valid: a valid d (the ranges of Params.Validate); 0 below MinRadius; NaN for NaN r or an
// invalid d.
func (d DrizzleDSD) PDF(r float64) float64 {
	if !d.ok() || math.IsNaN(r) {
		return math.NaN()
	}
	if r < d.MinRadius || math.IsInf(r, 1) {
		return 0
	}
	lam := d.lambda()
	x := lam * (r - d.MinRadius)
	lg, _ := math.Lgamma(d.Shape + 1)
	if d.Shape == 0 {
		return lam * math.Exp(-x)
	}
	if x == 0 {
		return 0
	}
	return lam * math.Exp(d.Shape*math.Log(x)-x-lg)
}

// dsdTail is the number of e-foldings of exp(-lambda (r - r_min)) beyond the shape's own
// powers at which the quadratures stop: the flux beyond is below e^-40 of the total (derived:
// the integrands are r^(mu+4) e^(-lambda r) at most, common practice for such cut-offs).
const dsdTail = 40

// upper is the largest radius of the quadratures, m: r_min + (mu + 4 + dsdTail)/lambda, at
// most Beard's largest drop (BeardDMax/2).
func (d DrizzleDSD) upper() float64 {
	return math.Min(d.MinRadius+(d.Shape+4+dsdTail)/d.lambda(), BeardDMax/2)
}

// dsdPanels is the number of Gauss-Legendre panels (of gaussLegendreN nodes) of dsdIntegral:
// 24 evaluations agree with the closed form of linearFraction to 1e-7 relative
// (TestSurfaceFractionClosedForm) and with a 1500-class sum of EvaporateDirect drops to its
// own accuracy (TestSurfaceFractionAgainstClasses).
const dsdPanels = 1

// dsdIntegral returns int_a^upper g(r) f(r) dr for a >= MinRadius, with the substitution
// r = a + t^4 (which makes the integrand smooth in t where g rises from zero as (r - a)^(3/4),
// the end of a drop that just evaporates at the surface, derived from r_s^4 ∝ r0 - r* for
// Stokes drops) and Gauss-Legendre quadrature in t over dsdPanels equal panels.
func (d DrizzleDSD) dsdIntegral(a float64, g func(r float64) float64) float64 {
	hi := d.upper()
	if !(a < hi) {
		return 0
	}
	tMax := math.Sqrt(math.Sqrt(hi - a))
	w := tMax / dsdPanels
	sum := 0.0
	for k := 0; k < dsdPanels; k++ {
		c := (float64(k) + colHalf) * w
		for i, x := range glNodes {
			t := c + x*w/2
			t2 := t * t
			r := a + t2*t2
			f := d.PDF(r)
			if f == 0 {
				continue
			}
			sum += glWeights[i] * w / 2 * four * t2 * t * g(r) * f
		}
	}
	return sum
}

// DrizzleFluxMoment returns the mass-flux moment of the distribution d in the air a,
// m^4 s-1:
//
//	M = int r^3 V(r) f(r) dr,  so that  R = (4/3) pi rho_w N M
//
// is the drizzle rate (kg m-2 s-1) of N drops per m3 falling at their Beard (1976)
// terminal speeds V.
// Reference: [Beard1976] (V); [Comstock2004] (rate from the drop-size distribution).
// Valid: a valid d and a valid a; NaN otherwise.
func DrizzleFluxMoment(d DrizzleDSD, a Air) float64 {
	if !d.ok() || !a.ok() {
		return math.NaN()
	}
	return d.fluxMoment(d.MinRadius, func(r float64) float64 { return a.FallSpeed(2 * r) }, nil)
}

// fluxMoment is int_a^upper rs(r)^3 V(r) f(r) dr (rs nil: rs(r) = r).
func (d DrizzleDSD) fluxMoment(a float64, V, rs func(r float64) float64) float64 {
	return d.dsdIntegral(a, func(r float64) float64 {
		x := r
		if rs != nil {
			x = rs(r)
		}
		return x * x * x * V(r)
	})
}

// DrizzleNumber returns the number concentration N (m-3) of drizzle drops of distribution d
// at cloud base in the air a that carries the drizzle rate rate (kg m-2 s-1):
//
//	N = rate/((4/3) pi rho_w M),  M = DrizzleFluxMoment(d, a)
//
// Reference: [Comstock2004]; [VanZanten2005] (fixed size, number set by the rate).
// Valid: rate >= 0 finite, a valid d and a; NaN otherwise.
func DrizzleNumber(rate float64, d DrizzleDSD, a Air) float64 {
	if !(rate >= 0) || math.IsInf(rate, 1) {
		return math.NaN()
	}
	return rate / (four / three * math.Pi * WaterDensity * DrizzleFluxMoment(d, a))
}

// SurfaceDrizzleFraction returns the fraction F (1) of the drizzle mass flux leaving cloud
// base with the size distribution d that reaches the surface through the sub-cloud layer l:
//
//	F = int_{r*} r_s(r)^3 V_b(r) f(r) dr / int r^3 V_b(r) f(r) dr
//
// where each size class keeps its number flux n(r) V_b(r) at cloud base (no coalescence or
// break-up), r_s(r) is its radius at the surface (EvaporateDirect), r* the cloud-base radius
// of the drop that just evaporates at the surface, and V_b the Beard (1976) speed in the
// cloud-base air. F does not depend on the drop number, so the surface rate is F times the
// cloud-base rate. Quadrature: dsdIntegral (24 Gauss-Legendre nodes in t, r = r* + t^4).
// Reference: [Wood2005a] (sedimentation-evaporation model below cloud base);
// [Beard1976]; see EvaporateDirect.
// Valid: a valid d; l as EvaporateDirect with SurfaceRH < 1 or WellMixed; NaN otherwise.
func SurfaceDrizzleFraction(d DrizzleDSD, l SubCloudLayer) float64 {
	return surfaceFraction(d, l, EvapRelTol)
}

// surfaceFraction is SurfaceDrizzleFraction with the evaporation tolerance rtol.
func surfaceFraction(d DrizzleDSD, l SubCloudLayer, rtol float64) float64 {
	if !d.ok() {
		return math.NaN()
	}
	rstar := evapThreshold(l)
	if !(rstar > 0) {
		return math.NaN()
	}
	a := NewAir(l.BaseP, l.BaseT)
	V := func(r float64) float64 { return a.FallSpeed(2 * r) }
	den := d.fluxMoment(d.MinRadius, V, nil)
	failed := false
	rs := func(r float64) float64 {
		e := evaporateTol(r, l, rtol)
		if !e.Reached {
			if math.IsNaN(e.EvapHeight) {
				failed = true
			}
			return 0
		}
		return e.SurfaceRadius
	}
	num := d.fluxMoment(math.Max(rstar, d.MinRadius), V, rs)
	if failed || !(den > 0) {
		return math.NaN()
	}
	return math.Min(num/den, 1)
}
