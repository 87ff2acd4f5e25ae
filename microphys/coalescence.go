package microphys

import (
	"fmt"
	"math"
	"strings"
)

// CoalescenceKind names a coalescence-efficiency law. The zero value is CoalescenceBlend.
type CoalescenceKind int

// Coalescence-efficiency laws.
const (
	// CoalescenceBlend is the Seifert et al. (2005) blend of Beard & Ochs (1995) for small
	// and Low & List (1982) for large drops (name "seifert2005").
	CoalescenceBlend CoalescenceKind = iota
	// CoalescenceBeardOchs is Beard & Ochs (1995) alone (name "beard-ochs1995").
	CoalescenceBeardOchs
	// CoalescenceLowList is Low & List (1982) alone (name "low-list1982").
	CoalescenceLowList
	// CoalescenceUnity is E_coal = 1 (name "unity").
	CoalescenceUnity
)

var coalescenceNames = [...]string{
	CoalescenceBlend:     "seifert2005",
	CoalescenceBeardOchs: "beard-ochs1995",
	CoalescenceLowList:   "low-list1982",
	CoalescenceUnity:     "unity",
}

// String returns the name of k ("seifert2005", "beard-ochs1995", "low-list1982", "unity"),
// or "CoalescenceKind(N)" if unknown.
//
// Reference: [Seifert2005], [BeardOchs1995], [LowList1982] (the laws named).
// Valid: any k.
func (k CoalescenceKind) String() string {
	if k >= 0 && int(k) < len(coalescenceNames) {
		return coalescenceNames[k]
	}
	return fmt.Sprintf("CoalescenceKind(%d)", int(k))
}

// ParseCoalescenceKind returns the coalescence law with the given name (case-insensitive),
// or an error listing the valid names.
//
// Reference: [Seifert2005], [BeardOchs1995], [LowList1982] (the laws named).
// Valid: any string.
func ParseCoalescenceKind(name string) (CoalescenceKind, error) {
	for k, n := range coalescenceNames {
		if strings.EqualFold(strings.TrimSpace(name), n) {
			return CoalescenceKind(k), nil
		}
	}
	return 0, fmt.Errorf("microphys: unknown coalescence efficiency %q (valid: %s)", name,
		strings.Join(coalescenceNames[:], ", "))
}

// Efficiency returns the coalescence efficiency (1) of the law k for drops of radii R and r
// (m, either order) falling at their Beard (1976) terminal speeds in the air a:
//
//	CoalescenceBlend:     CoalescenceSeifert(R, r, a)
//	CoalescenceBeardOchs: CoalescenceBeardOchs1995(R, r, a)
//	CoalescenceLowList:   CoalescenceLowList1982(R, r, a)
//	CoalescenceUnity:     1
//
// Reference: [Seifert2005], [BeardOchs1995], [LowList1982].
// Valid: as the chosen law; NaN for an unknown k, negative or NaN radii, or (except for
// CoalescenceUnity) a nil or invalid a.
func (k CoalescenceKind) Efficiency(R, r float64, a *Air) float64 {
	switch k {
	case CoalescenceBlend:
		return CoalescenceSeifert(R, r, a)
	case CoalescenceBeardOchs:
		return CoalescenceBeardOchs1995(R, r, a)
	case CoalescenceLowList:
		return CoalescenceLowList1982(R, r, a)
	case CoalescenceUnity:
		if !(R >= 0 && r >= 0) || math.IsInf(R, 1) || math.IsInf(r, 1) {
			return math.NaN()
		}
		return 1
	}
	return math.NaN()
}

// orderRadii returns (large, small) or ok = false for bad radii or air.
func orderRadii(R, r float64, a *Air) (rl, rs float64, ok bool) {
	if !(R >= 0 && r >= 0) || math.IsInf(R, 1) || math.IsInf(r, 1) || !a.ok() {
		return 0, 0, false
	}
	if r > R {
		R, r = r, R
	}
	return R, r, R > 0
}

func clip01(x float64) float64 { return math.Max(0, math.Min(1, x)) }

// CoalescenceBeardOchs1995 returns the Beard & Ochs (1995) coalescence efficiency (1) of drops
// of radii R and r (m, either order; r_L the larger, r_s the smaller) in the air a:
//
//	p = r_s/r_L,  We = rho_w r_s (V_L - V_s)^2/sigma   (V from a.FallSpeed)
//	G(p) = [2^(3/2)/(6 pi)] p^4 (1 + p)/[(1 + p^2)(1 + p^3)]
//	E1 = 0.767 - 10.14 G(p) We^(1/2)
//	E2 from  ln r_s + ln(r_L/200) = 5.07 - 5.94 E2 + 7.27 E2^2 - 5.29 E2^3   (radii in µm)
//	E = max(E1, E2) clipped to [0, 1]
//
// The cubic is monotone decreasing in E2 on [0, 1] (its derivative has no real root); it is
// solved by a safeguarded Newton iteration (about 4 steps) and clipped to [0, 1].
// Deviation: sigma is a.Sigma (the T-dependent fit) instead of the paper's 72.8e-3 N m-1.
// Reference: [BeardOchs1995] eqs. for E in the text (formula 1 and formula 2).
// Valid: both radii <= 300 µm (used up to 400 µm mean radius by the blend); NaN for negative
// or NaN radii, both zero, or an invalid a.
func CoalescenceBeardOchs1995(R, r float64, a *Air) float64 {
	rl, rs, ok := orderRadii(R, r, a)
	if !ok {
		return math.NaN()
	}
	return beardOchs(rl, rs, a.FallSpeed(2*rl), a.FallSpeed(2*rs), a)
}

// beardOchs is CoalescenceBeardOchs1995 for rl >= rs >= 0, rl > 0, with fall speeds vl, vs.
func beardOchs(rl, rs, vl, vs float64, a *Air) float64 {
	if rs == 0 {
		return 1
	}
	dv := vl - vs
	we := a.RhoW * rs * dv * dv / a.Sigma
	p := rs / rl
	p2 := p * p
	g := beardOchs1[2] * p2 * p2 * (1 + p) / ((1 + p2) * (1 + p2*p))
	e1 := beardOchs1[0] - beardOchs1[1]*g*math.Sqrt(we)
	rhs := math.Log(rs * microPerMetre * rl * microPerMetre / beardOchs2[0])
	e2 := solveBeardOchs2(rhs)
	return clip01(math.Max(e1, e2))
}

// solveBeardOchs2 solves c0 + c1 E + c2 E^2 + c3 E^3 = rhs for E in [0, 1], clipping.
func solveBeardOchs2(rhs float64) float64 {
	c0, c1, c2, c3 := beardOchs2[1], beardOchs2[2], beardOchs2[3], beardOchs2[4]
	f0 := c0 - rhs
	if !(f0 > 0) { // rhs >= value at E = 0 (or NaN handled by caller)
		if math.IsNaN(f0) {
			return math.NaN()
		}
		return 0
	}
	f1 := c0 + c1 + c2 + c3 - rhs
	if f1 >= 0 {
		return 1
	}
	lo, hi := 0.0, 1.0
	e := f0 / (f0 - f1) // secant start
	for range newtonMaxIter {
		f := ((c3*e+c2)*e+c1)*e + c0 - rhs
		if f > 0 {
			lo = e
		} else {
			hi = e
		}
		df := (three*c3*e+2*c2)*e + c1
		next := e - f/df
		if !(next > lo && next < hi) {
			next = (lo + hi) / 2
		}
		if math.Abs(next-e) < newtonTol {
			return next
		}
		e = next
	}
	return e
}

// Newton iteration limits of the Beard-Ochs cubic (common practice).
const (
	newtonMaxIter = 40
	newtonTol     = 1e-13
)

// CoalescenceLowList1982 returns the Low & List (1982) coalescence efficiency (1) of drops of
// radii R and r (m, either order; diameters d_L > d_s) in the air a:
//
//	CKE = (pi rho_w/12) (V_L - V_s)^2 d_L^3 d_s^3/(d_L^3 + d_s^3)
//	S_T = pi sigma (d_L^2 + d_s^2),  S_C = pi sigma (d_L^3 + d_s^3)^(2/3)
//	E_T = CKE + S_T - S_C
//	E = 0.778 (1 + d_s/d_L)^-2 exp(-2.61e6 sigma E_T^2/S_C)   for E_T < 5e-6 J, else 0
//
// (SI form of the cgs original: 50 erg = 5e-6 J, 2.61e-4 cm2 erg-2 = 2.61e6 m2 J-2.)
// Reference: [LowList1982] eqs. 4.5-4.7.
// Valid: raindrops, d_s >= 0.4 mm and d_L up to 4.4 mm in the experiments; NaN for negative or
// NaN radii, both zero, or an invalid a.
func CoalescenceLowList1982(R, r float64, a *Air) float64 {
	rl, rs, ok := orderRadii(R, r, a)
	if !ok {
		return math.NaN()
	}
	return lowList(rl, rs, a.FallSpeed(2*rl), a.FallSpeed(2*rs), a)
}

// lowList is CoalescenceLowList1982 for rl >= rs >= 0, rl > 0, with fall speeds vl, vs.
func lowList(rl, rs, vl, vs float64, a *Air) float64 {
	dl, ds := 2*rl, 2*rs
	dv := vl - vs
	dl3, ds3 := dl*dl*dl, ds*ds*ds
	cke := math.Pi * a.RhoW / twelve * dv * dv * dl3 * ds3 / (dl3 + ds3)
	st := math.Pi * a.Sigma * (dl*dl + ds*ds)
	sum3 := dl3 + ds3
	sc := math.Pi * a.Sigma * math.Cbrt(sum3*sum3)
	et := cke + st - sc
	if et >= lowListFit[2] {
		return 0
	}
	q := 1 + ds/dl
	return clip01(lowListFit[0] / (q * q) * math.Exp(-lowListFit[1]*a.Sigma*et*et/sc))
}

// CoalescenceSeifert returns the coalescence efficiency (1) of drops of radii R and r (m,
// either order) in the air a by the blend of Seifert et al. (2005):
//
//	q = (R + r)/2
//	E = E_BO                                         q <= 250 µm
//	E = sin^2(pi x/2) E_LL + sin^2(pi (1-x)/2) E_BO,  x = (q - 250 µm)/(150 µm)
//	E = E_LL                                         q >= 400 µm
//
// with E_BO = CoalescenceBeardOchs1995 and E_LL = CoalescenceLowList1982; clipped to [0, 1].
// Reference: [Seifert2005] sec. 2 (blend), [BeardOchs1995], [LowList1982].
// Valid: cloud drops to raindrops; NaN for negative or NaN radii, both zero, or an invalid a.
func CoalescenceSeifert(R, r float64, a *Air) float64 {
	rl, rs, ok := orderRadii(R, r, a)
	if !ok {
		return math.NaN()
	}
	return coalescenceSpeeds(CoalescenceBlend, rl, rs, a.FallSpeed(2*rl), a.FallSpeed(2*rs), a)
}
