package microphys

import (
	"fmt"
	"math"
	"strings"
)

// AutoconvScheme names an autoconversion (cloud water to drizzle) parameterization. The
// zero value is AutoconvKK2000.
type AutoconvScheme int

const (
	// AutoconvKK2000 is Khairoutdinov & Kogan (2000), the default [KhairoutdinovKogan2000].
	AutoconvKK2000 AutoconvScheme = iota
	// AutoconvKessler1969 is the Kessler (1969) threshold-linear form [Kessler1969].
	AutoconvKessler1969
	// AutoconvLiuDaum2004 is Liu & Daum (2004) in the form of Wood (2005) table 1
	// [LiuDaum2004], [Wood2005].
	AutoconvLiuDaum2004
	// AutoconvSeifertBeheng2001 is Seifert & Beheng (2001) with no rain water present
	// (internal time tau = 0) [SeifertBeheng2001].
	AutoconvSeifertBeheng2001
)

var autoconvNames = [...]string{"kk2000", "kessler1969", "liu-daum2004", "seifert-beheng2001"}

func autoconvNameList() string { return strings.Join(autoconvNames[:], ", ") }

// String returns the scheme's name ("kk2000", "kessler1969", "liu-daum2004",
// "seifert-beheng2001").
//
// Reference: none (software interface).
// Valid: always.
func (s AutoconvScheme) String() string {
	if s < 0 || int(s) >= len(autoconvNames) {
		return fmt.Sprintf("AutoconvScheme(%d)", int(s))
	}
	return autoconvNames[s]
}

// autoconvCitations cite each scheme (by index), for output metadata.
var autoconvCitations = [...]string{
	"Khairoutdinov and Kogan (2000) Mon. Wea. Rev. 128, 229-243",
	"Kessler (1969) Meteor. Monogr. No. 32, Amer. Meteor. Soc.",
	"Liu and Daum (2004) J. Atmos. Sci. 61, 1539-1548",
	"Seifert and Beheng (2001) Atmos. Res. 59-60, 265-281",
}

// Citation returns the short citation of the scheme's paper (authors, year, journal,
// volume, pages), for the references attribute of outputs that depend on it.
//
// Reference: [KhairoutdinovKogan2000], [Kessler1969], [LiuDaum2004], [SeifertBeheng2001].
// Valid: the schemes of AutoconvScheme; others give "".
func (s AutoconvScheme) Citation() string {
	if s < 0 || int(s) >= len(autoconvCitations) {
		return ""
	}
	return autoconvCitations[s]
}

// ParseAutoconvScheme returns the scheme named name (see AutoconvScheme.String), or an
// error listing the valid names.
//
// Reference: none (software interface).
// Valid: any string; unknown names give an error.
func ParseAutoconvScheme(name string) (AutoconvScheme, error) {
	for i, n := range autoconvNames {
		if name == n {
			return AutoconvScheme(i), nil
		}
	}
	return 0, fmt.Errorf("microphys: unknown autoconversion scheme %q (want one of %s)", name, autoconvNameList())
}

// Fit coefficients of the autoconversion schemes.
var (
	// kk2000Auto: rate = a q_c^b N^-c, q_c in kg kg-1, N in cm-3, rate kg kg-1 s-1
	// [KhairoutdinovKogan2000] eq. 29. Order: a, b, c, cm-3 per m-3.
	kk2000Auto = [4]float64{1350, 2.47, 1.79, 1e-6}
	// liuDaumAuto: P = kappa2 beta6^6 L^3/N for R6 > R6c; beta6 = ((r_v+3)/r_v)^(1/3) (r_v in
	// µm); R6c = 7.5 L^(-1/6) R6^(-1/2) µm with L in kg m-3 [LiuDaum2004] as tabulated in
	// [Wood2005] table 1. Order: kappa2 (m3 kg-2 s-1), 3 µm, 7.5 µm.
	liuDaumAuto = [3]float64{1.08e10, 3, 7.5}
	// sbAuto: k_c (m3 kg-2 s-1), x* (kg), the factor 20 of k_c/(20 x*), and the shape offsets
	// (nu+2)(nu+4)/(nu+1)^2 [SeifertBeheng2001] eq. A1.
	sbAuto = [3]float64{9.44e9, 2.6e-10, 20}
)

// AutoconvKK2000Rate returns the local Khairoutdinov & Kogan (2000) autoconversion rate,
// kg kg-1 s-1, for cloud-water mixing ratio qc (kg kg-1) and droplet number nd (m-3):
//
//	dq_r/dt = 1350 q_c^2.47 (N_d/1e6)^-1.79      (N_d/1e6 in cm-3)
//
// Reference: [KhairoutdinovKogan2000] eq. 29.
// Valid: fitted to LES of marine stratocumulus, q_c up to about 1e-3 kg kg-1 and N_d
// 1e7-1e9 m-3 (from memory); qc >= 0, nd > 0 finite, NaN otherwise.
func AutoconvKK2000Rate(qc, nd float64) float64 {
	if !(qc >= 0 && nd > 0) || math.IsInf(qc, 1) || math.IsInf(nd, 1) {
		return math.NaN()
	}
	return kk2000Auto[0] * math.Pow(qc, kk2000Auto[1]) * math.Pow(nd*kk2000Auto[3], -kk2000Auto[2])
}

// AutoconvKesslerRate returns the local Kessler (1969) autoconversion rate, kg kg-1 s-1,
// for cloud-water mixing ratio qc (kg kg-1), rate constant k1 (s-1) and threshold qc0
// (kg kg-1):
//
//	dq_r/dt = k1 max(q_c - q_c0, 0)
//
// Reference: [Kessler1969]; k1 = 1e-3 s-1 as in [GrabowskiSmolarkiewicz1996] eq. 5a.
// Valid: qc >= 0, k1 >= 0, qc0 >= 0, all finite; NaN otherwise.
func AutoconvKesslerRate(qc, k1, qc0 float64) float64 {
	if !(qc >= 0 && k1 >= 0 && qc0 >= 0) || math.IsInf(qc, 1) || math.IsInf(k1, 1) || math.IsInf(qc0, 1) {
		return math.NaN()
	}
	return k1 * math.Max(qc-qc0, 0)
}

// AutoconvLiuDaumRate returns the local Liu & Daum (2004) autoconversion rate,
// kg m-3 s-1, for liquid water content lwc (kg m-3) and droplet number nd (m-3):
//
//	P     = kappa2 beta6^6 L^3/N  if R6 > R6c, else 0;   kappa2 = 1.08e10 m3 kg-2 s-1
//	r_v   = (3 L/(4 pi rho_w N))^(1/3);  beta6 = ((r_v + 3)/r_v)^(1/3) (r_v in µm)
//	R6    = beta6 r_v;  R6c = 7.5 L^(-1/6) R6^(-1/2) µm (L in kg m-3)
//
// Reference: [LiuDaum2004] in the form of [Wood2005] table 1. The units of L in the
// threshold are uncertain there; kg m-3 gives R6c near 8 µm, a plausible value.
// Valid: lwc >= 0, nd > 0, finite; NaN otherwise.
func AutoconvLiuDaumRate(lwc, nd float64) float64 {
	if !(lwc >= 0 && nd > 0) || math.IsInf(lwc, 1) || math.IsInf(nd, 1) {
		return math.NaN()
	}
	if lwc == 0 {
		return 0
	}
	b6, above := liuDaumBeta(lwc, nd)
	if !above {
		return 0
	}
	b3 := b6 * b6 * b6
	return liuDaumAuto[0] * b3 * b3 * lwc * lwc * lwc / nd
}

// liuDaumBeta returns beta6 and whether R6 > R6c for liquid water content lwc and number nd.
func liuDaumBeta(lwc, nd float64) (beta6 float64, above bool) {
	rv := math.Cbrt(three*lwc/(four*math.Pi*WaterDensity*nd)) * microPerMetre
	b6 := math.Cbrt((rv + liuDaumAuto[1]) / rv)
	r6 := b6 * rv
	r6c := liuDaumAuto[2] / (math.Pow(lwc, oneSixth) * math.Sqrt(r6))
	return b6, r6 > r6c
}

// AutoconvSeifertBehengRate returns the local Seifert & Beheng (2001) autoconversion rate,
// kg m-3 s-1, for liquid water content lwc (kg m-3), droplet number nd (m-3) and cloud
// gamma shape nu (in mass), with no rain water yet (internal time tau = 0, Phi_au = 0):
//
//	dL_r/dt = k_c/(20 x*) (nu + 2)(nu + 4)/(nu + 1)^2 (L_c xbar_c)^2,  xbar_c = L_c/N_c
//	k_c = 9.44e9 m3 kg-2 s-1,  x* = 2.6e-10 kg
//
// Reference: [SeifertBeheng2001] eq. A1.
// Valid: lwc >= 0, nd > 0, nu >= 0, finite; NaN otherwise.
func AutoconvSeifertBehengRate(lwc, nd, nu float64) float64 {
	if !(lwc >= 0 && nd > 0 && nu >= 0) || math.IsInf(lwc, 1) || math.IsInf(nd, 1) || math.IsInf(nu, 1) {
		return math.NaN()
	}
	lx := lwc * lwc / nd
	return sbFactor(nu) * lx * lx
}

func sbFactor(nu float64) float64 {
	return sbAuto[0] / (sbAuto[2] * sbAuto[1]) * (nu + 2) * (nu + four) / ((nu + 1) * (nu + 1))
}

// AutoconvConfig holds the scheme and its constants for the column integral.
type AutoconvConfig struct {
	Scheme           AutoconvScheme
	KesslerRate      float64 // k1, s-1
	KesslerThreshold float64 // q_c0, kg kg-1
	SBShape          float64 // Seifert-Beheng nu
}

// AutoconvConfig returns the autoconversion part of p.
//
// Reference: none (software interface).
// Valid: always.
func (p Params) AutoconvConfig() AutoconvConfig {
	return AutoconvConfig{p.Autoconv, p.KesslerRate, p.KesslerThreshold, p.SBShape}
}

// ColumnAutoconvKK2000 returns the column-integrated Khairoutdinov & Kogan (2000)
// autoconversion rate, kg m-2 s-1 (= mm s-1 of water), of an adiabatic cloud of thickness h
// (m), LWC lapse gamma = f_ad c_w (kg m-4), droplet number nd (m-3) and air density rhoa
// (kg m-3), both constant in the column, in closed form:
//
//	q_c(z) = gamma z/rho_a
//	P_col  = int_0^H rho_a 1350 q_c^2.47 N^-1.79 dz = 1350 rho_a^-1.47 N^-1.79 gamma^2.47 H^3.47/3.47
//
// (N in cm-3 inside the fit).
// Reference: [KhairoutdinovKogan2000] eq. 29 integrated over the [Brenguier2000] adiabatic
// profile (derived, doc/science.md#autoconversion).
// Valid: h >= 0, gamma > 0, nd > 0, rhoa > 0, finite; NaN otherwise.
func ColumnAutoconvKK2000(h, gamma, nd, rhoa float64) float64 {
	if !(h >= 0 && gamma > 0 && nd > 0 && rhoa > 0) || math.IsInf(h, 1) || math.IsInf(gamma, 1) || math.IsInf(nd, 1) || math.IsInf(rhoa, 1) {
		return math.NaN()
	}
	b1 := kk2000Auto[1] + 1
	// exp/log form: one Exp instead of four Pow.
	lnP := math.Log(kk2000Auto[0]/b1) + (1-kk2000Auto[1])*math.Log(rhoa) -
		kk2000Auto[2]*math.Log(nd*kk2000Auto[3]) + kk2000Auto[1]*math.Log(gamma) + b1*math.Log(h)
	if h == 0 {
		return 0
	}
	return math.Exp(lnP)
}

// gaussLegendreN is the number of Gauss-Legendre nodes of the column quadrature.
const gaussLegendreN = 24

// Gauss-Legendre nodes x_i in (-1, 1) and weights w_i, computed once at start-up by Newton
// iteration on P_n [AbramowitzStegun1964] eq. 25.4.29.
var glNodes, glWeights [gaussLegendreN]float64

func init() {
	n := gaussLegendreN
	for i := 0; i < n; i++ {
		x := math.Cos(math.Pi * (float64(i) + 0.75) / (float64(n) + 0.5))
		var dp float64
		for it := 0; it < 100; it++ {
			p0, p1 := 1.0, x
			for k := 2; k <= n; k++ {
				p0, p1 = p1, ((2*float64(k)-1)*x*p1-float64(k-1)*p0)/float64(k)
			}
			dp = float64(n) * (x*p1 - p0) / (x*x - 1)
			dx := p1 / dp
			x -= dx
			if math.Abs(dx) < 1e-16 {
				break
			}
		}
		p0, p1 := 1.0, x
		for k := 2; k <= n; k++ {
			p0, p1 = p1, ((2*float64(k)-1)*x*p1-float64(k-1)*p0)/float64(k)
		}
		dp = float64(n) * (x*p1 - p0) / (x*x - 1)
		glNodes[i] = x
		glWeights[i] = 2 / ((1 - x*x) * dp * dp)
	}
}

// ColumnAutoconversion returns the column-integrated autoconversion rate, kg m-2 s-1, of
// scheme c.Scheme over an adiabatic cloud of thickness h (m), LWC lapse gamma = f_ad c_w
// (kg m-4), droplet number nd (m-3) and air density rhoa (kg m-3), constant in the column:
//
//	P_col = int_0^H rho_a dq_r/dt(q_c(z)) dz,  q_c(z) = gamma z/rho_a,  L(z) = gamma z
//
// KK2000 uses the closed form (ColumnAutoconvKK2000); the others use a 24-node
// Gauss-Legendre quadrature over the part of the column above the scheme's threshold
// (ColumnAutoconversionQuad).
// Reference: [KhairoutdinovKogan2000], [Kessler1969], [LiuDaum2004], [SeifertBeheng2001]
// over the [Brenguier2000] profile.
// Valid: h >= 0, gamma > 0, nd > 0, rhoa > 0, finite; NaN otherwise.
func ColumnAutoconversion(c AutoconvConfig, h, gamma, nd, rhoa float64) float64 {
	if c.Scheme == AutoconvKK2000 {
		return ColumnAutoconvKK2000(h, gamma, nd, rhoa)
	}
	return ColumnAutoconversionQuad(c, h, gamma, nd, rhoa)
}

// ColumnAutoconversionQuad is ColumnAutoconversion by Gauss-Legendre quadrature for every
// scheme, KK2000 included (to check the closed form). Thresholds are located first
// (Kessler: z0 = q_c0 rho_a/gamma in closed form; Liu-Daum: bisection on R6 = R6c, which is
// monotone in z) and the quadrature runs from there to H. It does not allocate.
//
// Reference: as ColumnAutoconversion; nodes [AbramowitzStegun1964] eq. 25.4.29.
// Valid: as ColumnAutoconversion.
func ColumnAutoconversionQuad(c AutoconvConfig, h, gamma, nd, rhoa float64) float64 {
	if !(h >= 0 && gamma > 0 && nd > 0 && rhoa > 0) || math.IsInf(h, 1) || math.IsInf(gamma, 1) || math.IsInf(nd, 1) || math.IsInf(rhoa, 1) {
		return math.NaN()
	}
	z0 := 0.0
	switch c.Scheme {
	case AutoconvKK2000, AutoconvSeifertBeheng2001:
	case AutoconvKessler1969:
		z0 = c.KesslerThreshold * rhoa / gamma
	case AutoconvLiuDaum2004:
		if _, ok := liuDaumBeta(gamma*h, nd); !ok {
			return 0
		}
		lo, hi := 0.0, h
		for i := 0; i < 60 && hi-lo > 1e-12*h; i++ {
			mid := (lo + hi) / 2
			if _, ok := liuDaumBeta(gamma*mid, nd); ok {
				hi = mid
			} else {
				lo = mid
			}
		}
		z0 = hi
	default:
		return math.NaN()
	}
	if !(z0 < h) {
		return 0
	}
	half, mid := (h-z0)/2, (h+z0)/2
	sum := 0.0
	for i, x := range glNodes {
		z := mid + half*x
		var r float64
		switch c.Scheme {
		case AutoconvKK2000:
			r = rhoa * AutoconvKK2000Rate(gamma*z/rhoa, nd)
		case AutoconvKessler1969:
			r = rhoa * AutoconvKesslerRate(gamma*z/rhoa, c.KesslerRate, c.KesslerThreshold)
		case AutoconvLiuDaum2004:
			r = AutoconvLiuDaumRate(gamma*z, nd)
		case AutoconvSeifertBeheng2001:
			r = AutoconvSeifertBehengRate(gamma*z, nd, c.SBShape)
		}
		sum += glWeights[i] * r
	}
	return half * sum
}
