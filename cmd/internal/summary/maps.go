package summary

import (
	"fmt"
	"math"
)

// MapAccumulator builds time-mean maps of any number of fields on one fixed grid,
// streaming: memory is one sum and one count map per field, whatever the number of
// scenes and time steps. The first call to Accumulate fixes the grid and the field
// names; later scenes must have the same grid (ErrGrid otherwise) and the same fields.
// Cells outside the region and time steps outside the window are not counted.
//
// Swaths (2-D coordinates that change from file to file) cannot be time-averaged cell by
// cell; regrid them first, or pass each swath to the quick-look map directly.
type MapAccumulator struct {
	region *Region
	window Window
	grid   Scene // NT = 1, Time = nil
	fields []Field
	sum    [][]float64
	count  [][]int32
	in     []bool
	steps  int
	tmin   float64
	tmax   float64
}

// NewMaps returns an empty MapAccumulator with the given selection (nil region and zero
// window select everything).
func NewMaps(region *Region, window Window) (*MapAccumulator, error) {
	if err := region.Check(); err != nil {
		return nil, err
	}
	return &MapAccumulator{region: region, window: window, tmin: math.Inf(1), tmax: math.Inf(-1)}, nil
}

func sameCoords(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] && !(math.Abs(a[i]-b[i]) <= 1e-6*math.Max(1, math.Abs(a[i]))) {
			return false
		}
	}
	return true
}

// Accumulate adds every selected time step of the scene for each field. Fields are
// matched by Name. It returns an error (and adds nothing) on a shape mismatch, a grid
// different from the first scene's, or a set of field names different from the first
// call's.
func (m *MapAccumulator) Accumulate(s Scene, fields ...Field) error {
	if err := s.Check(); err != nil {
		return err
	}
	for _, f := range fields {
		if err := s.checkField(f, "map", false); err != nil {
			return err
		}
	}
	if m.fields == nil {
		if len(fields) == 0 {
			return fmt.Errorf("summary: Accumulate: no fields given")
		}
		seen := map[string]bool{}
		for _, f := range fields {
			if seen[f.Name] {
				return fmt.Errorf("summary: Accumulate: field name %q given twice", f.Name)
			}
			seen[f.Name] = true
			m.fields = append(m.fields, Field{Name: f.Name, Units: f.Units, LongName: f.LongName})
			m.sum = append(m.sum, make([]float64, s.Cells()))
			m.count = append(m.count, make([]int32, s.Cells()))
		}
		m.grid = Scene{Lat: append([]float64(nil), s.Lat...), Lon: append([]float64(nil), s.Lon...), NY: s.NY, NX: s.NX, NT: 1}
		m.in = regionMask(m.grid, m.region)
	} else {
		if s.NY != m.grid.NY || s.NX != m.grid.NX || !sameCoords(s.Lat, m.grid.Lat) || !sameCoords(s.Lon, m.grid.Lon) {
			return fmt.Errorf("%w: scene grid (NY=%d, NX=%d) differs from the first scene's (NY=%d, NX=%d) or its coordinates do",
				ErrGrid, s.NY, s.NX, m.grid.NY, m.grid.NX)
		}
		if len(fields) != len(m.fields) {
			return fmt.Errorf("summary: Accumulate: %d fields given, the first call had %d", len(fields), len(m.fields))
		}
	}
	order := make([]int, len(fields)) // index into m.fields
	for k, f := range fields {
		order[k] = -1
		for q, g := range m.fields {
			if g.Name == f.Name {
				order[k] = q
			}
		}
		if order[k] < 0 {
			return fmt.Errorf("summary: Accumulate: field %q was not in the first call", f.Name)
		}
	}
	cells := s.Cells()
	for t := 0; t < s.NT; t++ {
		if !timeSelected(s, m.window, t) {
			continue
		}
		m.steps++
		if s.Time != nil {
			m.tmin = math.Min(m.tmin, s.Time[t])
			m.tmax = math.Max(m.tmax, s.Time[t])
		}
		for k, f := range fields {
			sum, cnt := m.sum[order[k]], m.count[order[k]]
			d := f.Data[t*cells : (t+1)*cells]
			for c, v := range d {
				if m.in[c] && !math.IsNaN(v) && !math.IsInf(v, 0) {
					sum[c] += v
					cnt[c]++
				}
			}
		}
	}
	return nil
}

// Map is the time mean of one field with the number of values averaged per cell.
type Map struct {
	Mean  Field   // Name, Units and LongName of the input; Data NY*NX, NaN where Count = 0
	Count []int32 // values averaged per cell
}

// MapSet is the result of a MapAccumulator.
type MapSet struct {
	Grid  Scene // the grid (NT = 1, Time nil)
	Maps  []Map // in the order of the first Accumulate call
	Steps int   // time steps accumulated
	// TimeMin and TimeMax are the first and last accumulated times (s since 1970), NaN
	// when no accumulated scene had a time axis.
	TimeMin, TimeMax float64
}

// Result returns the time means so far (nil Maps before the first Accumulate).
func (m *MapAccumulator) Result() MapSet {
	out := MapSet{Grid: m.grid, Steps: m.steps, TimeMin: m.tmin, TimeMax: m.tmax}
	if math.IsInf(m.tmin, 1) {
		out.TimeMin, out.TimeMax = math.NaN(), math.NaN()
	}
	for q, f := range m.fields {
		mean := make([]float64, len(m.sum[q]))
		for c := range mean {
			if n := m.count[q][c]; n > 0 {
				mean[c] = m.sum[q][c] / float64(n)
			} else {
				mean[c] = math.NaN()
			}
		}
		g := f
		g.Data = mean
		if g.LongName != "" {
			g.LongName = "time mean of " + g.LongName
		}
		out.Maps = append(out.Maps, Map{Mean: g, Count: append([]int32(nil), m.count[q]...)})
	}
	return out
}

// CountField returns the per-cell counts of m as a Field (name "<name>_count", units
// "1"), for writing or mapping beside the mean.
func (m Map) CountField() Field {
	d := make([]float64, len(m.Count))
	for i, c := range m.Count {
		d[i] = float64(c)
	}
	return Field{Name: m.Mean.Name + "_count", Units: "1", LongName: "number of values averaged for " + m.Mean.Name, Data: d}
}
