package plots

import (
	"fmt"
	"math"
	"strconv"

	"gonum.org/v1/plot"
)

// degreeTicks labels latitude (lat = true) or longitude ticks with degrees and a
// hemisphere letter: 30°S, 0°, 150°W, 180°.
// At most max labels are placed (0 = 8).
type degreeTicks struct {
	lat bool
	max int
}

// degreeSteps are the label spacings tried, in degrees (common practice for maps).
var degreeSteps = []float64{0.1, 0.2, 0.25, 0.5, 1, 2, 2.5, 5, 10, 15, 20, 30, 45, 60, 90, 120, 180}

func (d degreeTicks) Ticks(lo, hi float64) []plot.Tick {
	if !(hi > lo) {
		return nil
	}
	n := d.max
	if n == 0 {
		n = 8
	}
	// the finest step that places at most n labels (the labels are the multiples of
	// the step within lo..hi)
	step := degreeSteps[len(degreeSteps)-1]
	for _, s := range degreeSteps {
		if math.Floor(hi/s+1e-9)-math.Ceil(lo/s-1e-9)+1 <= float64(n) {
			step = s
			break
		}
	}
	var ts []plot.Tick
	minor := step / 2
	for v := math.Ceil(lo/minor) * minor; v <= hi+1e-9*step; v += minor {
		v := math.Round(v/minor) * minor
		t := plot.Tick{Value: v}
		if r := math.Mod(math.Abs(v)+1e-9*step, step); r < 2e-9*step {
			t.Label = degreeLabel(v, d.lat)
		}
		ts = append(ts, t)
	}
	return ts
}

func degreeLabel(v float64, lat bool) string {
	if !lat {
		v = math.Mod(v, 360)
		if v > 180 {
			v -= 360
		} else if v <= -180 {
			v += 360
		}
	}
	a := strconv.FormatFloat(math.Abs(v), 'f', -1, 64)
	if len(a) > 6 {
		a = strconv.FormatFloat(math.Abs(v), 'f', 2, 64)
	}
	switch {
	case v == 0 || (!lat && math.Abs(v) == 180):
		return a + "°"
	case lat && v > 0:
		return a + "°N"
	case lat:
		return a + "°S"
	case v > 0:
		return a + "°E"
	default:
		return a + "°W"
	}
}

// logTicks125 puts major ticks at 1, 2 and 5 times powers of ten (only at powers of ten
// when the range spans more than three decades), and unlabelled minor ticks between.
type logTicks125 struct{}

func (logTicks125) Ticks(lo, hi float64) []plot.Tick {
	if !(lo > 0) || !(hi > lo) {
		return nil
	}
	steps := []float64{1, 2, 5}
	if math.Log10(hi/lo) > 3 {
		steps = []float64{1}
	}
	var ts []plot.Tick
	for e := math.Floor(math.Log10(lo)); e <= math.Ceil(math.Log10(hi)); e++ {
		p := math.Pow(10, e)
		for m := 1; m <= 9; m++ {
			v := float64(m) * p
			if v < lo*(1-1e-9) || v > hi*(1+1e-9) {
				continue
			}
			major := false
			for _, s := range steps {
				if float64(m) == s {
					major = true
				}
			}
			t := plot.Tick{Value: v}
			if major {
				t.Label = tickNumber(v)
			}
			ts = append(ts, t)
		}
	}
	return ts
}

// tickNumber formats a tick value compactly without exponents between 1e-3 and 1e5.
func tickNumber(v float64) string {
	a := math.Abs(v)
	if a != 0 && (a < 1e-3 || a >= 1e5) {
		return fmt.Sprintf("%.0e", v)
	}
	if a >= 1000 { // 10000, not 1e+04
		return strconv.FormatFloat(v, 'f', -1, 64)
	}
	return strconv.FormatFloat(v, 'g', 4, 64)
}

// niceTicks places about n labelled ticks at multiples of 1, 2, 2.5 or 5 times a power
// of ten, with one unlabelled minor tick between labels.
type niceTicks struct{ n int }

func (t niceTicks) Ticks(lo, hi float64) []plot.Tick {
	if !(hi > lo) || math.IsInf(hi-lo, 0) {
		return nil
	}
	n := t.n
	if n < 2 {
		n = 6
	}
	raw := (hi - lo) / float64(n)
	mag := math.Pow(10, math.Floor(math.Log10(raw)))
	step := 10 * mag
	for _, m := range []float64{1, 2, 2.5, 5, 10} {
		if m*mag >= raw*(1-1e-9) {
			step = m * mag
			break
		}
	}
	minor := step / 2
	var ts []plot.Tick
	for k := math.Ceil(lo/minor - 1e-9); k*minor <= hi+1e-9*step; k++ {
		v := k * minor
		if math.Abs(v) < 1e-12*step {
			v = 0
		}
		tk := plot.Tick{Value: v}
		if int64(math.Round(k))%2 == 0 {
			tk.Label = tickNumber(v)
		}
		ts = append(ts, tk)
	}
	return ts
}
