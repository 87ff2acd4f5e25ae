package summary

import (
	"fmt"
	"math"
	"sort"
)

// Axis is a binned coordinate: Edges are ascending (len = bins + 1), bin i is
// [Edges[i], Edges[i+1]) and the last bin also holds its upper edge.
type Axis struct {
	Name, Units string
	Edges       []float64
}

// N returns the number of bins.
func (a Axis) N() int {
	if len(a.Edges) < 2 {
		return 0
	}
	return len(a.Edges) - 1
}

// Centre returns the geometric centre sqrt(e_i e_{i+1}) of bin i (the natural centre of a
// logarithmic bin).
func (a Axis) Centre(i int) float64 { return math.Sqrt(a.Edges[i] * a.Edges[i+1]) }

// Centres returns the geometric centres of all bins.
func (a Axis) Centres() []float64 {
	c := make([]float64, a.N())
	for i := range c {
		c[i] = a.Centre(i)
	}
	return c
}

// Bounds returns the edges of bin i.
func (a Axis) Bounds(i int) (lo, hi float64) { return a.Edges[i], a.Edges[i+1] }

// Find returns the bin holding v, or -1 when v is NaN or outside the edges.
func (a Axis) Find(v float64) int {
	n := a.N()
	if n == 0 || !(v >= a.Edges[0] && v <= a.Edges[n]) {
		return -1
	}
	if v == a.Edges[n] {
		return n - 1
	}
	// first edge > v, minus one
	return sort.Search(len(a.Edges), func(k int) bool { return a.Edges[k] > v }) - 1
}

// checkEdges returns an error unless edges are at least two finite, positive and strictly
// ascending values (positive because the bins and fits are logarithmic).
func checkEdges(name string, edges []float64) error {
	if len(edges) < 2 {
		return fmt.Errorf("summary: %s bin edges: need at least 2, got %d", name, len(edges))
	}
	for i, e := range edges {
		if !(e > 0) || math.IsInf(e, 0) {
			return fmt.Errorf("summary: %s bin edge %d is %g, want finite and > 0 (logarithmic bins)", name, i, e)
		}
		if i > 0 && !(e > edges[i-1]) {
			return fmt.Errorf("summary: %s bin edges must ascend strictly: edge %d (%g) <= edge %d (%g)", name, i, e, i-1, edges[i-1])
		}
	}
	return nil
}

// LogEdges returns n+1 logarithmically spaced edges from lo to hi (both > 0, lo < hi,
// n >= 1); the end points are exact. It panics on bad arguments (programmer error).
func LogEdges(lo, hi float64, n int) []float64 {
	if !(lo > 0) || !(hi > lo) || n < 1 || math.IsInf(hi, 0) {
		panic(fmt.Sprintf("summary: LogEdges(%g, %g, %d): want 0 < lo < hi and n >= 1", lo, hi, n))
	}
	e := make([]float64, n+1)
	r := math.Log(hi / lo)
	for i := range e {
		e[i] = lo * math.Exp(r*float64(i)/float64(n))
	}
	e[0], e[n] = lo, hi
	return e
}

// DefaultLWPEdges returns the default LWP bins: 10 logarithmic bins from 20 to 500 g m-2
// (in kg m-2), the range of marine stratocumulus and drizzle onset (doc/science.md#typical-stratocumulus,
// doc/science.md#drizzle-onset).
func DefaultLWPEdges() []float64 { return LogEdges(0.020, 0.500, 10) }

// DefaultNdEdges returns the default N_d bins: 10 logarithmic bins from 10 to 1000 cm-3
// (in m-3), five per decade.
func DefaultNdEdges() []float64 { return LogEdges(10e6, 1000e6, 10) }
