package grid

import (
	"math"
	"testing"
)

// TestDecodeSelect: decodeT's loop for variables without missing_value (tests written as a
// select) screens what the tests written as branches screened: NaN, the fill value, values
// outside valid_min/valid_max, and nothing more for a NaN fill or NaN bound (invented
// values; CF's _FillValue and valid range, common practice).
func TestDecodeSelect(t *testing.T) {
	src := []float32{0, 1, -1, 5, 10, 10.5, -999, float32(math.NaN()), float32(math.Inf(1)), float32(math.Inf(-1)), 3e38, -0.5}
	nan := math.NaN()
	for _, d := range []Decoder{
		{a: 1, b: 0},
		{a: 2, b: 1, HasFill: true, Fill: -999},
		{a: 1e-3, b: 273.15, HasFill: true, Fill: -999, HasMin: true, Min: 0, HasMax: true, Max: 10},
		{a: 1, b: 0, HasMin: true, Min: -1},
		{a: 1, b: 0, HasMax: true, Max: 5},
		{a: 1, b: 0, HasFill: true, Fill: nan, HasMin: true, Min: nan, HasMax: true, Max: nan},
		{a: 1, b: 0, HasFill: true, Fill: math.Inf(1)},
	} {
		got := make([]float64, len(src))
		decodeT(&d, got, src)
		lo, hi := math.Inf(-1), math.Inf(1)
		if d.HasMin {
			lo = d.Min
		}
		if d.HasMax {
			hi = d.Max
		}
		for i, x := range src {
			v := float64(x)
			want := v*d.a + d.b
			if v != v || (d.HasFill && v == d.Fill) || v < lo || v > hi {
				want = nan
			}
			if math.Float64bits(got[i]) != math.Float64bits(want) && !(math.IsNaN(got[i]) && math.IsNaN(want)) {
				t.Errorf("decoder %+v: %g decodes to %g, want %g", d, v, got[i], want)
			}
		}
	}
}
