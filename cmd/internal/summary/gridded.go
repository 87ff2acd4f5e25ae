package summary

import (
	"fmt"
	"math"
	"slices"
)

// LatLonGrid is a regular global latitude–longitude grid of Step-degree cells: rows from
// the South Pole (row 0 spans -90 .. -90+Step), columns from 180° W (column 0 spans
// -180 .. -180+Step). A point on a cell's southern or western edge belongs to that cell;
// latitude 90 belongs to the last row; longitudes in -180..180 and 0..360 (any value)
// are reduced modulo 360.
type LatLonGrid struct {
	Step       float64 // degrees
	NLat, NLon int
}

// NewLatLonGrid returns the grid of step degrees; 180/step must be a whole number.
func NewLatLonGrid(step float64) (LatLonGrid, error) {
	if !(step > 0) || step > 90 || math.IsInf(step, 0) {
		return LatLonGrid{}, fmt.Errorf("summary: grid step %g: expected degrees in (0, 90]", step)
	}
	n := 180 / step
	if r := math.Round(n); math.Abs(n-r) > 1e-9*r {
		return LatLonGrid{}, fmt.Errorf("summary: grid step %g: 180/%g = %g is not a whole number of cells (try 0.25, 0.5, 1, 2.5, 5)", step, step, n)
	}
	nl := int(math.Round(n))
	if nl*2*nl > 1<<26 {
		return LatLonGrid{}, fmt.Errorf("summary: grid step %g gives %d x %d cells; expected at most 64 Mi cells", step, nl, 2*nl)
	}
	return LatLonGrid{Step: step, NLat: nl, NLon: 2 * nl}, nil
}

// Index returns the cell of (lat, lon) as row*NLon + column, or -1 for a non-finite
// coordinate or a latitude outside -90..90.
func (g LatLonGrid) Index(lat, lon float64) int {
	if math.IsNaN(lat) || math.IsNaN(lon) || math.IsInf(lon, 0) || lat < -90 || lat > 90 {
		return -1
	}
	i := min(int(math.Floor((lat+90)/g.Step)), g.NLat-1)
	l := lon + 180 // 0 at 180° W
	if l < 0 || l >= 360 {
		l = wrap360(l)
	}
	j := min(int(math.Floor(l/g.Step)), g.NLon-1)
	return i*g.NLon + j
}

// LatCentre and LonCentre give the centre of row i and column j (LonCentre in
// -180..180 for j in 0..NLon-1; larger j continue past 180).
func (g LatLonGrid) LatCentre(i int) float64 { return -90 + (float64(i)+0.5)*g.Step }

// LonCentre: see LatCentre.
func (g LatLonGrid) LonCentre(j int) float64 { return -180 + (float64(j)+0.5)*g.Step }

// GriddedOptions configure a Gridded accumulator.
type GriddedOptions struct {
	Grid   LatLonGrid
	Region *Region // nil: everywhere
	Window Window  // zero: all times
	// Names are the diagnostics gridded, in output order (never latitude or longitude,
	// which are the coordinates).
	Names []string
	// Reasons are the names of the screening reasons; bit k of a column's reason mask
	// is Reasons[k] (at most 32).
	Reasons []string
	// POP, LWP and CritLWP name the fields (among Names) of the drizzle occurrence
	// frequencies: POP > POPThreshold, and LWP > CritLWP (the critical liquid water
	// path LWP*). Empty names leave the frequency out.
	POP, LWP, CritLWP string
	POPThreshold      float64
}

// CellSums are the sums of one grid cell: everything a Gridded keeps, exactly, so that
// cells merge by addition (partial summaries).
type CellSums struct {
	Columns  int64   // selected columns located in the cell (screened or not)
	Screened []int64 // per reason: columns screened with that reason
	// ScreenedAny counts the columns screened for any reason (a column may have
	// several reasons, so it is not the sum of Screened).
	ScreenedAny int64
	Moments     []Moments // per name: the finite values of valid (unscreened) columns
	POPN        int64     // valid columns with a finite POP
	POPAbove    int64     // of those, POP > POPThreshold
	LWPN        int64     // valid columns with finite LWP and LWP*
	LWPAbove    int64     // of those, LWP > LWP*
}

func (c *CellSums) merge(o *CellSums) {
	c.Columns += o.Columns
	c.ScreenedAny += o.ScreenedAny
	for k := range c.Screened {
		c.Screened[k] += o.Screened[k]
	}
	for k := range c.Moments {
		c.Moments[k].Merge(&o.Moments[k])
	}
	c.POPN += o.POPN
	c.POPAbove += o.POPAbove
	c.LWPN += o.LWPN
	c.LWPAbove += o.LWPAbove
}

// Gridded bins columns of any number of scenes (grids, swaths, meshes with per-cell
// coordinates; each on its own coordinates) onto a LatLonGrid: per cell the count, mean
// and standard deviation of each diagnostic, the fraction of columns screened by each
// reason and the drizzle occurrence frequencies. Sums are exact (ExactSum), so the
// result is bit-identical whatever the order of scenes and columns, and Merge of
// partial accumulators equals a single pass. Memory is bounded by the number of grid
// cells that received columns (and a pointer per cell of each grid row that did), never
// by the number of scenes.
type Gridded struct {
	opt        GriddedOptions
	pop, lwp   int // indices into Names, -1 when absent
	crit       int
	rows       [][]*CellSums // per grid row, allocated when the row receives columns
	ncells     int
	steps      int
	tmin, tmax float64
}

// NewGridded returns an empty accumulator.
func NewGridded(o GriddedOptions) (*Gridded, error) {
	if o.Grid.NLat < 1 {
		return nil, fmt.Errorf("summary: NewGridded: no grid")
	}
	if err := o.Region.Check(); err != nil {
		return nil, err
	}
	if len(o.Reasons) > 32 {
		return nil, fmt.Errorf("summary: NewGridded: %d screening reasons, at most 32", len(o.Reasons))
	}
	for _, n := range o.Names {
		switch n {
		case "lat", "lon", "latitude", "longitude":
			return nil, fmt.Errorf("summary: NewGridded: %s is a coordinate, not a diagnostic", n)
		}
	}
	g := &Gridded{opt: o, rows: make([][]*CellSums, o.Grid.NLat), tmin: math.Inf(1), tmax: math.Inf(-1)}
	g.opt.Names = slices.Clone(o.Names)
	g.opt.Reasons = slices.Clone(o.Reasons)
	g.pop, g.lwp, g.crit = slices.Index(o.Names, o.POP), slices.Index(o.Names, o.LWP), slices.Index(o.Names, o.CritLWP)
	if o.POP == "" {
		g.pop = -1
	}
	if o.LWP == "" || o.CritLWP == "" {
		g.lwp, g.crit = -1, -1
	}
	return g, nil
}

// Options returns the options in use.
func (g *Gridded) Options() GriddedOptions { return g.opt }

func (g *Gridded) cell(k int) *CellSums {
	nl := g.opt.Grid.NLon
	row := g.rows[k/nl]
	if row == nil {
		row = make([]*CellSums, nl)
		g.rows[k/nl] = row
	}
	c := row[k%nl]
	if c == nil {
		g.ncells++
		c = &CellSums{Screened: make([]int64, len(g.opt.Reasons)), Moments: make([]Moments, len(g.opt.Names))}
		row[k%nl] = c
	}
	return c
}

// Add bins every selected column of the scene. The scene needs coordinates; fields
// are matched to Names by Name (a missing field adds nothing to its name), each with
// NT*NY*NX values. reasons (nil: none) gives per column the mask of screening reasons;
// a column with a non-zero mask counts in Columns and Screened only.
func (g *Gridded) Add(s Scene, reasons []uint32, fields ...Field) error {
	if err := s.Check(); err != nil {
		return err
	}
	if !s.HasCoords() {
		return fmt.Errorf("%w: gridding needs latitude and longitude", ErrShape)
	}
	data := make([][]float64, len(g.opt.Names))
	for _, f := range fields {
		if err := s.checkField(f, "gridded", false); err != nil {
			return err
		}
		if k := slices.Index(g.opt.Names, f.Name); k >= 0 {
			data[k] = f.Data
		}
	}
	if reasons != nil && len(reasons) != s.NT*s.Cells() {
		return fmt.Errorf("%w: %d screening masks, want NT*NY*NX = %d", ErrShape, len(reasons), s.NT*s.Cells())
	}
	cells := s.Cells()
	idx := make([]int, cells)
	for y := 0; y < s.NY; y++ {
		for x := 0; x < s.NX; x++ {
			lat, lon := s.LatLon(y, x)
			k := -1
			if g.opt.Region.Contains(lat, lon) {
				k = g.opt.Grid.Index(lat, lon)
			}
			idx[y*s.NX+x] = k
		}
	}
	// The cells of the scene's columns, found once for all its steps (neighbouring
	// columns mostly share a cell: the last one is kept at hand).
	ptr := make([]*CellSums, cells)
	lastK, last := -1, (*CellSums)(nil)
	for t := 0; t < s.NT; t++ {
		if !timeSelected(s, g.opt.Window, t) {
			continue
		}
		g.steps++
		if s.Time != nil {
			g.tmin, g.tmax = math.Min(g.tmin, s.Time[t]), math.Max(g.tmax, s.Time[t])
		}
		for c, k := range idx {
			if k < 0 {
				continue
			}
			i := t*cells + c
			cs := ptr[c]
			if cs == nil {
				if k != lastK {
					lastK, last = k, g.cell(k)
				}
				cs, ptr[c] = last, last
			}
			cs.Columns++
			if reasons != nil && reasons[i] != 0 {
				cs.ScreenedAny++
				for r := range cs.Screened {
					if reasons[i]&(1<<r) != 0 {
						cs.Screened[r]++
					}
				}
				continue
			}
			for v, d := range data {
				if d != nil {
					cs.Moments[v].Add(d[i])
				}
			}
			if g.pop >= 0 && data[g.pop] != nil {
				if p := data[g.pop][i]; !math.IsNaN(p) {
					cs.POPN++
					if p > g.opt.POPThreshold {
						cs.POPAbove++
					}
				}
			}
			if g.lwp >= 0 && data[g.lwp] != nil && data[g.crit] != nil {
				l, c := data[g.lwp][i], data[g.crit][i]
				if !math.IsNaN(l) && !math.IsNaN(c) && !math.IsInf(l, 0) && !math.IsInf(c, 0) {
					cs.LWPN++
					if l > c {
						cs.LWPAbove++
					}
				}
			}
		}
	}
	return nil
}

// Cells returns the indices (row*NLon + column) of the cells with columns, ascending.
func (g *Gridded) Cells() []int {
	k := make([]int, 0, g.ncells)
	for r, row := range g.rows {
		for j, c := range row {
			if c != nil {
				k = append(k, r*g.opt.Grid.NLon+j)
			}
		}
	}
	return k
}

// Sums returns the sums of cell k (nil when it has none). The caller must not change them.
func (g *Gridded) Sums(k int) *CellSums {
	nl := g.opt.Grid.NLon
	if k < 0 || k/nl >= len(g.rows) || g.rows[k/nl] == nil {
		return nil
	}
	return g.rows[k/nl][k%nl]
}

// MergeCell adds the sums of cell k (from a partial summary) exactly. c must have one
// Screened entry per reason and one Moments entry per name.
func (g *Gridded) MergeCell(k int, c *CellSums) error {
	if k < 0 || k >= g.opt.Grid.NLat*g.opt.Grid.NLon {
		return fmt.Errorf("summary: MergeCell: cell %d outside the grid", k)
	}
	if len(c.Screened) != len(g.opt.Reasons) || len(c.Moments) != len(g.opt.Names) {
		return fmt.Errorf("summary: MergeCell: %d reasons and %d diagnostics, want %d and %d", len(c.Screened), len(c.Moments), len(g.opt.Reasons), len(g.opt.Names))
	}
	g.cell(k).merge(c)
	return nil
}

// Merge adds everything of o (same grid, names and reasons) exactly.
func (g *Gridded) Merge(o *Gridded) error {
	if o.opt.Grid != g.opt.Grid || !slices.Equal(o.opt.Names, g.opt.Names) || !slices.Equal(o.opt.Reasons, g.opt.Reasons) {
		return fmt.Errorf("summary: Merge: the gridded summaries differ in grid, diagnostics or reasons")
	}
	for _, k := range o.Cells() {
		g.cell(k).merge(o.Sums(k))
	}
	g.AddSteps(o.steps, o.tmin, o.tmax)
	return nil
}

// AddSteps counts time steps accumulated elsewhere (a partial summary) with their time
// range (±Inf when none had times).
func (g *Gridded) AddSteps(n int, tmin, tmax float64) {
	g.steps += n
	g.tmin, g.tmax = math.Min(g.tmin, tmin), math.Max(g.tmax, tmax)
}

// Steps returns the number of time steps accumulated and their time range (NaN
// without times).
func (g *Gridded) Steps() (n int, tmin, tmax float64) {
	if math.IsInf(g.tmin, 1) {
		return g.steps, math.NaN(), math.NaN()
	}
	return g.steps, g.tmin, g.tmax
}

// Extent is the part of the grid a result covers: rows Y0 .. Y0+NY-1 and columns
// X0 .. X0+NX-1, where columns beyond NLon-1 wrap around (their longitudes continue
// past 180°).
type Extent struct{ Y0, NY, X0, NX int }

// Extent returns the smallest box of cells holding every cell with columns: the
// rows between the southern- and northernmost, and the shortest arc of columns
// (which may cross 180°). Zero NY when there are none.
func (g *Gridded) Extent() Extent {
	if g.ncells == 0 {
		return Extent{}
	}
	nl := g.opt.Grid.NLon
	rowMin, rowMax := math.MaxInt, -1
	used := make([]bool, nl)
	for _, k := range g.Cells() {
		r, c := k/nl, k%nl
		rowMin, rowMax = min(rowMin, r), max(rowMax, r)
		used[c] = true
	}
	// The largest run of unused columns (circular) is left out.
	bestLen, bestEnd := 0, -1
	run := 0
	for i := 0; i < 2*nl; i++ {
		if !used[i%nl] {
			run++
			if run > bestLen && run <= nl {
				bestLen, bestEnd = run, i
			}
		} else {
			run = 0
		}
	}
	e := Extent{Y0: rowMin, NY: rowMax - rowMin + 1}
	if bestLen == 0 {
		e.X0, e.NX = 0, nl
	} else {
		e.X0, e.NX = (bestEnd+1)%nl, nl-bestLen
	}
	return e
}

// GriddedResult holds the gridded statistics over an Extent, row-major (NY, NX).
type GriddedResult struct {
	Grid     LatLonGrid
	Extent   Extent
	Lat, Lon []float64 // cell centres (degrees; Lon increasing, may pass 180)
	Names    []string
	Count    [][]int64   // per name: values averaged
	Mean, SD [][]float64 // per name; NaN where Count is 0 (SD: below 2)
	Columns  []int64     // selected columns per cell
	Reasons  []string
	// ScreenedFraction per reason: screened columns / Columns (NaN where Columns = 0).
	ScreenedFraction [][]float64
	// ScreenedAnyFraction: columns screened for any reason / Columns (NaN where
	// Columns = 0), and ScreenedAny those columns.
	ScreenedAnyFraction []float64
	ScreenedAny         []int64
	// POPFrequency is the fraction of valid columns with POP > POPThreshold, and
	// LWPFrequency the fraction with LWP > LWP* (NaN without such columns); nil when
	// the option named no field.
	POPFrequency, LWPFrequency []float64
	POPThreshold               float64
	Steps                      int
	TimeMin, TimeMax           float64 // NaN without times
}

// Result computes the statistics over the extent (e) of the grid; use g.Extent() for
// the cells with data.
func (g *Gridded) Result(e Extent) *GriddedResult {
	n := e.NY * e.NX
	gr := g.opt.Grid
	r := &GriddedResult{Grid: gr, Extent: e, Names: g.opt.Names, Reasons: g.opt.Reasons, POPThreshold: g.opt.POPThreshold}
	r.Steps, r.TimeMin, r.TimeMax = g.Steps()
	for i := 0; i < e.NY; i++ {
		r.Lat = append(r.Lat, gr.LatCentre(e.Y0+i))
	}
	for j := 0; j < e.NX; j++ {
		r.Lon = append(r.Lon, gr.LonCentre(e.X0+j))
	}
	nan := func() []float64 {
		d := make([]float64, n)
		for i := range d {
			d[i] = math.NaN()
		}
		return d
	}
	for range g.opt.Names {
		r.Count = append(r.Count, make([]int64, n))
		r.Mean = append(r.Mean, nan())
		r.SD = append(r.SD, nan())
	}
	r.Columns = make([]int64, n)
	r.ScreenedAny = make([]int64, n)
	r.ScreenedAnyFraction = nan()
	for range g.opt.Reasons {
		r.ScreenedFraction = append(r.ScreenedFraction, nan())
	}
	if g.pop >= 0 {
		r.POPFrequency = nan()
	}
	if g.lwp >= 0 {
		r.LWPFrequency = nan()
	}
	for y := 0; y < e.NY; y++ {
		for x := 0; x < e.NX; x++ {
			c := g.Sums((e.Y0+y)*gr.NLon + (e.X0+x)%gr.NLon)
			if c == nil {
				continue
			}
			o := y*e.NX + x
			r.Columns[o] = c.Columns
			r.ScreenedAny[o] = c.ScreenedAny
			for v := range c.Moments {
				m := &c.Moments[v]
				r.Count[v][o] = m.N
				r.Mean[v][o], r.SD[v][o] = m.Mean(), m.SD()
			}
			if c.Columns > 0 {
				r.ScreenedAnyFraction[o] = float64(c.ScreenedAny) / float64(c.Columns)
				for k, s := range c.Screened {
					r.ScreenedFraction[k][o] = float64(s) / float64(c.Columns)
				}
			}
			if r.POPFrequency != nil && c.POPN > 0 {
				r.POPFrequency[o] = float64(c.POPAbove) / float64(c.POPN)
			}
			if r.LWPFrequency != nil && c.LWPN > 0 {
				r.LWPFrequency[o] = float64(c.LWPAbove) / float64(c.LWPN)
			}
		}
	}
	return r
}
