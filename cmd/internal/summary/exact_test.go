package summary

import (
	"math"
	"math/big"
	"math/rand/v2"
	"testing"
)

// TestExactSumOrder: sums of values over 60 decades with both signs are the same bit
// for bit in every order, equal the exact sum computed with math/big (an independent
// exact computation), and survive Parts and Merge.
func TestExactSumOrder(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	x := make([]float64, 5000)
	for i := range x {
		x[i] = math.Exp(rng.NormFloat64()*30) * float64(1-2*(i%2))
	}
	x = append(x, 1e300, -1e300, 5e-324, 1e-200)
	want := new(big.Float).SetPrec(4000)
	wantSq := new(big.Float).SetPrec(8000)
	for _, v := range x {
		want.Add(want, new(big.Float).SetFloat64(v))
		b := new(big.Float).SetPrec(200).SetFloat64(v)
		wantSq.Add(wantSq, b.Mul(b, b))
	}
	w, _ := want.Float64()
	wsq, _ := wantSq.Float64()
	var first ExactSum
	for k := 0; k < 4; k++ {
		rng.Shuffle(len(x), func(i, j int) { x[i], x[j] = x[j], x[i] })
		var s, sq, a, b ExactSum
		for i, v := range x {
			s.Add(v)
			sq.AddSquare(v)
			if i%3 == 0 {
				a.Add(v)
			} else {
				b.Add(v)
			}
		}
		a.Merge(&b)
		if s.Float64() != w || a.Float64() != w {
			t.Fatalf("order %d: sum %v, merged %v, exact %v", k, s.Float64(), a.Float64(), w)
		}
		if sq.Float64() != wsq {
			t.Fatalf("order %d: sum of squares %v, exact %v", k, sq.Float64(), wsq)
		}
		if k == 0 {
			first = s
		}
		var r ExactSum
		for _, p := range s.Parts() {
			r.Add(p)
		}
		v1, e1 := r.Int()
		v0, e0 := first.Int()
		if intFloat(v1, e1).Cmp(intFloat(v0, e0)) != 0 {
			t.Fatalf("order %d: the parts %v do not restore the exact sum", k, s.Parts())
		}
	}
}

// TestMomentsCancellation: the standard deviation of values with a huge common offset
// (1e9 + small noise) is exact, where the floating-point one-pass formula loses every
// digit (a textbook failure case, common practice).
func TestMomentsCancellation(t *testing.T) {
	var m Moments
	d := []float64{4, 7, 13, 16}
	for _, v := range d {
		m.Add(1e9 + v)
	}
	// mean 1e9+10, deviations -6 -3 3 6: variance 90/3 = 30.
	if got := m.Mean(); got != 1e9+10 {
		t.Errorf("mean %v", got)
	}
	if got, want := m.SD(), math.Sqrt(30); got != want {
		t.Errorf("sd %v, want %v", got, want)
	}
	var e Moments
	if !math.IsNaN(e.Mean()) || !math.IsNaN(e.SD()) {
		t.Error("empty moments are not NaN")
	}
}
