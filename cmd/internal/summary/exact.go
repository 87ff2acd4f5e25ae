package summary

import (
	"math"
	"math/big"
	"math/bits"
)

// ExactSum is the exact sum of float64 values, or of their exact squares: a fixed-point
// integer in 32-bit limbs whose unit is 2^-exactZero, far below the smallest square of a
// float64. Additions are integer additions, so the sum does not depend on the order of
// the values, and two sums merge exactly (Merge): the gridded statistics of any number of
// files in any order, and of partial summaries merged later, are bit-identical
// (doc/science.md#gridded-summaries). Memory grows only with the range of exponents
// seen (a few limbs for the values of one diagnostic), never with the number of values.
//
// The zero value is an empty sum. Non-finite values must not be added (the callers
// skip them).
type ExactSum struct {
	limbs []int64 // signed; not normalised between Normalise calls
	base  int32   // index of limbs[0]: limb k holds bits 32k .. 32k+31 above 2^-exactZero
	adds  int32   // additions since the last carry propagation
}

// exactZero places bit 0 below the exact square of the smallest subnormal
// (2^-1074 squared is 2^-2148), with room to spare.
const exactZero = 2304

// split returns x = ±m × 2^e with m an integer below 2^53 (IEEE 754 fields).
func split(x float64) (neg bool, m uint64, e int) {
	b := math.Float64bits(x)
	neg = b>>63 != 0
	be := int(b>>52) & 0x7ff
	m = b & (1<<52 - 1)
	if be == 0 { // subnormal
		return neg, m, -1074
	}
	return neg, m | 1<<52, be - 1075
}

// Add adds x exactly.
func (s *ExactSum) Add(x float64) {
	if x == 0 {
		return
	}
	neg, m, e := split(x)
	// m < 2^53 shifted by sh < 32 spans three limbs.
	p := e + exactZero
	k, sh := p/32, uint(p%32)
	if s.limbs == nil || k < int(s.base) || k+2 > int(s.base)+len(s.limbs)-1 {
		s.grow(k, k+2)
	}
	const m32 = 0xffffffff
	v0, v1 := (m&m32)<<sh, (m>>32)<<sh
	l := s.limbs[k-int(s.base) : k-int(s.base)+3 : k-int(s.base)+3]
	a0, a1, a2 := int64(v0&m32), int64(v0>>32)+int64(v1&m32), int64(v1>>32)
	if neg {
		l[0] -= a0
		l[1] -= a1
		l[2] -= a2
	} else {
		l[0] += a0
		l[1] += a1
		l[2] += a2
	}
	if s.adds++; s.adds >= 1<<29 {
		s.Normalise()
	}
}

// AddSquare adds x² exactly (the 106-bit square of the mantissa, not the rounded
// float64 product).
func (s *ExactSum) AddSquare(x float64) {
	if x == 0 {
		return
	}
	_, m, e := split(x)
	hi, lo := bits.Mul64(m, m) // < 2^106: with the shift, five limbs
	s.addAt(false, hi, lo, 2*e+exactZero)
}

// addAt adds (or subtracts) the 128-bit integer (hi, lo) times 2^p.
func (s *ExactSum) addAt(neg bool, hi, lo uint64, p int) {
	k, sh := p/32, uint(p%32)
	if s.limbs == nil || k < int(s.base) || k+4 > int(s.base)+len(s.limbs)-1 {
		s.grow(k, k+4)
	}
	const m32 = 0xffffffff
	// Four 32-bit pieces, each shifted into at most 64 bits (sh < 32).
	v0, v1, v2, v3 := (lo&m32)<<sh, (lo>>32)<<sh, (hi&m32)<<sh, (hi>>32)<<sh
	l := s.limbs[k-int(s.base) : k-int(s.base)+5 : k-int(s.base)+5]
	a0 := int64(v0 & m32)
	a1 := int64(v0>>32) + int64(v1&m32)
	a2 := int64(v1>>32) + int64(v2&m32)
	a3 := int64(v2>>32) + int64(v3&m32)
	a4 := int64(v3 >> 32)
	if neg {
		l[0] -= a0
		l[1] -= a1
		l[2] -= a2
		l[3] -= a3
		l[4] -= a4
	} else {
		l[0] += a0
		l[1] += a1
		l[2] += a2
		l[3] += a3
		l[4] += a4
	}
	// Each limb takes less than 2^33 per addition: 2^29 additions stay far below the
	// int64 range.
	if s.adds++; s.adds >= 1<<29 {
		s.Normalise()
	}
}

// grow makes limbs lo..hi (inclusive) addressable.
func (s *ExactSum) grow(lo, hi int) {
	if s.limbs == nil {
		s.base = int32(lo)
		s.limbs = make([]int64, hi-lo+1)
		return
	}
	if lo < int(s.base) {
		n := make([]int64, len(s.limbs)+int(s.base)-lo)
		copy(n[int(s.base)-lo:], s.limbs)
		s.limbs, s.base = n, int32(lo)
	}
	if top := int(s.base) + len(s.limbs) - 1; hi > top {
		s.limbs = append(s.limbs, make([]int64, hi-top)...)
	}
}

// Normalise propagates the carries so that every limb but the top one lies in
// [0, 2^32). It does not change the value.
func (s *ExactSum) Normalise() {
	s.adds = 0
	if len(s.limbs) == 0 {
		return
	}
	// a top limb for the carries
	if s.limbs[len(s.limbs)-1] != 0 {
		s.limbs = append(s.limbs, 0)
	}
	for i := 0; i < len(s.limbs)-1; i++ {
		c := s.limbs[i] >> 32 // floor division by 2^32
		s.limbs[i] -= c << 32
		s.limbs[i+1] += c
	}
}

// Merge adds the sum o exactly.
func (s *ExactSum) Merge(o *ExactSum) {
	if len(o.limbs) == 0 {
		return
	}
	s.Normalise()
	s.grow(int(o.base), int(o.base)+len(o.limbs)-1)
	for i, v := range o.limbs {
		s.limbs[int(o.base)+i-int(s.base)] += v
	}
	s.Normalise()
}

// Int returns the sum as an integer V with sum = V × 2^e, exactly.
func (s *ExactSum) Int() (v *big.Int, e int) {
	v = new(big.Int)
	for i := len(s.limbs) - 1; i >= 0; i-- {
		v.Lsh(v, 32)
		v.Add(v, big.NewInt(s.limbs[i]))
	}
	return v, 32*int(s.base) - exactZero
}

// Float64 returns the sum rounded once to the nearest float64 (ties to even).
func (s *ExactSum) Float64() float64 {
	v, e := s.Int()
	f, _ := intFloat(v, e).Float64()
	return f
}

// intFloat returns v × 2^e as an exact big.Float.
func intFloat(v *big.Int, e int) *big.Float {
	f := new(big.Float).SetPrec(uint(max(64, v.BitLen()))).SetInt(v)
	return f.SetMantExp(f, e)
}

// Parts returns float64 values whose exact sum is the sum: the nearest float64, then
// the nearest float64 to what is left, and so on (a non-overlapping expansion, largest
// first; usually one to three values). Adding the parts to an empty ExactSum restores
// the sum exactly, which is how partial summary files keep exact sums
// (doc/netcdf.md#partial-summary-files). A remainder below the smallest float64
// (2^-1074, only possible for sums of squares of values below 1e-154) is dropped.
func (s *ExactSum) Parts() []float64 {
	v, e := s.Int()
	var out []float64
	for v.Sign() != 0 {
		d, _ := intFloat(v, e).Float64()
		if d == 0 || math.IsInf(d, 0) {
			break
		}
		out = append(out, d)
		frac, exp := math.Frexp(d)
		m := new(big.Int).SetInt64(int64(frac * (1 << 53)))
		if sh := exp - 53 - e; sh >= 0 {
			m.Lsh(m, uint(sh))
		} else { // a part below the unit: cannot happen, the unit is below every float64
			break
		}
		v.Sub(v, m)
	}
	return out
}

// Moments are the count, exact sum and exact sum of squares of the finite values of one
// quantity: the Welford/Chan statistics (mean and variance, combined exactly by Merge)
// held as exact sums so that the result does not depend on the order of the values.
type Moments struct {
	N     int64
	Sum   ExactSum
	SumSq ExactSum
}

// Add adds x when it is finite.
func (m *Moments) Add(x float64) {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return
	}
	m.N++
	m.Sum.Add(x)
	m.SumSq.AddSquare(x)
}

// Merge adds the values of o exactly (Chan et al. 1979 combine means and variances of
// two sets; with exact sums the combination is a plain addition).
func (m *Moments) Merge(o *Moments) {
	m.N += o.N
	m.Sum.Merge(&o.Sum)
	m.SumSq.Merge(&o.SumSq)
}

// Mean returns Σx/n rounded once (NaN for n = 0).
func (m *Moments) Mean() float64 {
	if m.N == 0 {
		return math.NaN()
	}
	v, e := m.Sum.Int()
	q := new(big.Float).SetPrec(53).Quo(intFloat(v, e), new(big.Float).SetInt64(m.N))
	f, _ := q.Float64()
	return f
}

// SD returns the sample standard deviation sqrt((n Σx² - (Σx)²) / (n (n-1))), computed
// exactly and rounded once (NaN for n < 2). Being exact, it has none of the
// cancellation of the one-pass formula in floating point.
func (m *Moments) SD() float64 {
	if m.N < 2 {
		return math.NaN()
	}
	s, es := m.Sum.Int()
	q, eq := m.SumSq.Int()
	// Both on the scale 2^eq: (Σx)² has scale 2^(2 es).
	num := new(big.Int).Mul(q, big.NewInt(m.N))
	s2 := new(big.Int).Mul(s, s)
	if d := 2*es - eq; d >= 0 {
		s2.Lsh(s2, uint(d))
	} else {
		num.Lsh(num, uint(-d))
		eq = 2 * es
	}
	num.Sub(num, s2)
	if num.Sign() <= 0 {
		return 0
	}
	den := new(big.Float).SetInt64(m.N)
	den.Mul(den, new(big.Float).SetInt64(m.N-1))
	prec := uint(max(128, num.BitLen()+64))
	v := new(big.Float).SetPrec(prec).Quo(intFloat(num, eq), den)
	r := new(big.Float).SetPrec(53).Sqrt(v)
	f, _ := r.Float64()
	return f
}
