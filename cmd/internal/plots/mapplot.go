package plots

import (
	"errors"
	"fmt"
	"image"
	"image/color"
	"io"
	"math"
	"sort"
	"strings"
	"time"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/warmrain/warmrain/cmd/internal/summary"
)

// MapOptions configure Map. The zero value is a 900 x 600 px viridis map with an
// automatic linear colour range in display units.
type MapOptions struct {
	Width, Height int // picture size in px; 0 = DefaultWidth, DefaultHeight

	// Title is the first title line; "" = the field's LongName (or Name).
	Title string
	// Time, when not zero, is shown in UTC on the second title line.
	Time time.Time
	// When is free text for the second line instead of or besides Time, for example
	// "mean of 2026-07-01 to 2026-07-31 (124 steps)".
	When string
	// Params are the parameters the field depends on, shown in small type under the
	// map (wrapped at commas), for example "k 0.8, Q_ext 2, onset r_e 12–16 µm"
	// (ParamLine writes them for an output).
	Params string

	// ColorMap is the colour table; zero = Viridis.
	ColorMap ColorMap
	// Log selects a logarithmic colour scale (for rates); values <= 0 get the lowest
	// colour.
	Log bool
	// Min and Max fix the colour range in display units. When !(Max > Min) the range is
	// automatic: the finite minimum and maximum (linear), or the 1st and 99th
	// percentiles of the positive values (log). Values outside are clamped.
	Min, Max float64

	// Scale and Units override the display conversion: shown value = SI value × Scale,
	// labelled Units. Scale 0 = DisplayUnits(field.Units), unless KeepUnits is set.
	Scale float64
	Units string
	// KeepUnits shows the field in its own units (factor 1).
	KeepUnits bool

	// TimeIndex picks the time step when the field has NT*NY*NX values.
	TimeIndex int

	// FreeAspect fills the picture; by default one degree of latitude and one of
	// longitude get the same length (plate carrée), and the map is centred.
	FreeAspect bool

	// NoData gives, per cell (NY*NX, y-major), why a cell whose value is NaN has
	// none; nil or NoDataNone: NoValue. Cells with a value show it whatever their
	// class.
	NoData []NoData
	// Region, when set, crops the map to the box (intersected with the data's extent)
	// and draws the cells outside it as OutsideRegion.
	Region *summary.Region
	// IntegerTicks labels the colour bar at whole numbers only (counts).
	IntegerTicks bool
	// NoCoast leaves the coastlines out. Without the coastline files
	// (CoastlinesAvailable) they are left out anyway.
	NoCoast bool
}

// ErrNoData is returned by Map when a field has no finite value to set a colour range.
var ErrNoData = errors.New("plots: no finite values to map")

// mapGeom maps pixel positions to cell indices.
type mapGeom struct {
	xmin, xmax, ymin, ymax float64
	// 1-D grids: cell edges, ascending, and whether the original order was descending
	lonEdges, latEdges []float64
	lonDesc, latDesc   bool
	// 2-D grids: centres (unwrapped) and half sizes
	twoD        bool
	lon, lat    []float64
	hlon, hlat  []float64
	ny, nx      int
	cellColours []color.NRGBA // per cell, y-major
}

// edgesOf returns ascending cell edges for ascending or descending centres, or an error
// when the centres are not strictly monotonic.
func edgesOf(c []float64, what string) (edges []float64, desc bool, err error) {
	n := len(c)
	v := append([]float64(nil), c...)
	if n > 1 && v[0] > v[n-1] {
		desc = true
		for i, j := 0, n-1; i < j; i, j = i+1, j-1 {
			v[i], v[j] = v[j], v[i]
		}
	}
	for i := 1; i < n; i++ {
		if !(v[i] > v[i-1]) {
			return nil, false, fmt.Errorf("plots: %s coordinates are not strictly monotonic at index %d (%g after %g)", what, i, v[i], v[i-1])
		}
	}
	for _, x := range v {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return nil, false, fmt.Errorf("plots: %s coordinates hold a non-finite value", what)
		}
	}
	edges = make([]float64, n+1)
	if n == 1 {
		edges[0], edges[1] = v[0]-0.5, v[0]+0.5
		return edges, desc, nil
	}
	for i := 1; i < n; i++ {
		edges[i] = (v[i-1] + v[i]) / 2
	}
	edges[0] = v[0] - (v[1]-v[0])/2
	edges[n] = v[n-1] + (v[n-1]-v[n-2])/2
	return edges, desc, nil
}

// unwrapLon returns lon or, if that is not monotonic, lon reduced to 0..360 when that is.
func unwrapLon(lon []float64) []float64 {
	mono := func(v []float64) bool {
		if len(v) < 2 {
			return true
		}
		up := v[1] > v[0]
		for i := 1; i < len(v); i++ {
			if (v[i] > v[i-1]) != up || v[i] == v[i-1] {
				return false
			}
		}
		return true
	}
	if mono(lon) {
		return lon
	}
	w := make([]float64, len(lon))
	for i, l := range lon {
		w[i] = math.Mod(math.Mod(l, 360)+360, 360)
	}
	if mono(w) {
		return w
	}
	return lon
}

func newGeom(s summary.Scene) (*mapGeom, error) {
	g := &mapGeom{ny: s.NY, nx: s.NX}
	if !s.TwoD() {
		var err error
		if g.lonEdges, g.lonDesc, err = edgesOf(unwrapLon(s.Lon), "longitude"); err != nil {
			return nil, err
		}
		if g.latEdges, g.latDesc, err = edgesOf(s.Lat, "latitude"); err != nil {
			return nil, err
		}
		g.xmin, g.xmax = g.lonEdges[0], g.lonEdges[len(g.lonEdges)-1]
		g.ymin, g.ymax = math.Max(-90, g.latEdges[0]), math.Min(90, g.latEdges[len(g.latEdges)-1])
		return g, nil
	}
	// 2-D: unwrap longitudes that straddle the antimeridian, then half sizes from neighbours
	g.twoD = true
	n := s.NY * s.NX
	g.lon, g.lat = make([]float64, n), append([]float64(nil), s.Lat...)
	lmin, lmax := math.Inf(1), math.Inf(-1)
	for _, l := range s.Lon {
		if !math.IsNaN(l) {
			lmin, lmax = math.Min(lmin, l), math.Max(lmax, l)
		}
	}
	for i, l := range s.Lon {
		g.lon[i] = l
		if lmax-lmin > 180 && l < 0 {
			g.lon[i] = l + 360
		}
	}
	g.hlon, g.hlat = make([]float64, n), make([]float64, n)
	g.xmin, g.xmax, g.ymin, g.ymax = math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
	for y := 0; y < s.NY; y++ {
		for x := 0; x < s.NX; x++ {
			k := y*s.NX + x
			if math.IsNaN(g.lon[k]) || math.IsNaN(g.lat[k]) {
				continue
			}
			var dl, dp float64
			for _, d := range [][2]int{{0, 1}, {0, -1}, {1, 0}, {-1, 0}} {
				yy, xx := y+d[0], x+d[1]
				if yy < 0 || yy >= s.NY || xx < 0 || xx >= s.NX {
					continue
				}
				q := yy*s.NX + xx
				if a := math.Abs(g.lon[q] - g.lon[k]); a < 90 {
					dl = math.Max(dl, a)
				}
				if a := math.Abs(g.lat[q] - g.lat[k]); !math.IsNaN(a) {
					dp = math.Max(dp, a)
				}
			}
			if dl == 0 {
				dl = dp
			}
			if dp == 0 {
				dp = dl
			}
			if dl == 0 {
				dl, dp = 0.5, 0.5
			}
			g.hlon[k], g.hlat[k] = dl/2, dp/2
			g.xmin, g.xmax = math.Min(g.xmin, g.lon[k]-dl/2), math.Max(g.xmax, g.lon[k]+dl/2)
			g.ymin, g.ymax = math.Min(g.ymin, g.lat[k]-dp/2), math.Max(g.ymax, g.lat[k]+dp/2)
		}
	}
	if math.IsInf(g.xmin, 1) {
		return nil, fmt.Errorf("plots: swath has no cell with finite coordinates")
	}
	g.ymin, g.ymax = math.Max(-90, g.ymin), math.Min(90, g.ymax)
	return g, nil
}

// raster is the map's plotter: it paints the cells into an image the size of the data
// area in pixels and draws it there.
type raster struct{ g *mapGeom }

func (r raster) Plot(c draw.Canvas, p *plot.Plot) {
	g := r.g
	w := int(math.Round(c.Max.X.Dots(dpi) - c.Min.X.Dots(dpi)))
	h := int(math.Round(c.Max.Y.Dots(dpi) - c.Min.Y.Dots(dpi)))
	if w < 1 || h < 1 {
		return
	}
	img := image.NewNRGBA(image.Rect(0, 0, w, h))
	xAt := func(i float64) float64 { return p.X.Min + (i+0.5)/float64(w)*(p.X.Max-p.X.Min) }
	yAt := func(j float64) float64 { return p.Y.Max - (j+0.5)/float64(h)*(p.Y.Max-p.Y.Min) } // row 0 at the top
	if !g.twoD {
		find := func(edges []float64, desc bool, v float64) int {
			n := len(edges) - 1
			if v < edges[0] || v > edges[n] {
				return -1
			}
			k := sort.SearchFloat64s(edges, v) - 1
			k = min(max(k, 0), n-1)
			if desc {
				k = n - 1 - k
			}
			return k
		}
		ix := make([]int, w)
		for i := range ix {
			ix[i] = -1
			for _, sh := range []float64{0, -360, 360} { // a map across the antimeridian
				if k := find(g.lonEdges, g.lonDesc, xAt(float64(i))+sh); k >= 0 {
					ix[i] = k
					break
				}
			}
		}
		for j := 0; j < h; j++ {
			iy := find(g.latEdges, g.latDesc, yAt(float64(j)))
			if iy < 0 {
				continue
			}
			for i := 0; i < w; i++ {
				if ix[i] >= 0 {
					img.SetNRGBA(i, j, g.cellColours[iy*g.nx+ix[i]])
				}
			}
		}
	} else {
		toPx := func(x, y float64) (float64, float64) {
			return (x - p.X.Min) / (p.X.Max - p.X.Min) * float64(w), (p.Y.Max - y) / (p.Y.Max - p.Y.Min) * float64(h)
		}
		for k := range g.lon {
			if math.IsNaN(g.lon[k]) || math.IsNaN(g.lat[k]) {
				continue
			}
			for _, sh := range []float64{0, -360, 360} { // a map across the antimeridian
				x0, y0 := toPx(g.lon[k]+sh-g.hlon[k], g.lat[k]+g.hlat[k])
				x1, y1 := toPx(g.lon[k]+sh+g.hlon[k], g.lat[k]-g.hlat[k])
				i0, i1 := max(int(math.Floor(x0)), 0), min(int(math.Ceil(x1)), w)
				j0, j1 := max(int(math.Floor(y0)), 0), min(int(math.Ceil(y1)), h)
				col := g.cellColours[k]
				for j := j0; j < j1; j++ {
					for i := i0; i < i1; i++ {
						img.SetNRGBA(i, j, col)
					}
				}
			}
		}
	}
	c.DrawImage(c.Rectangle, img)
}

// colourScale maps display values to [0, 1].
type colourScale struct {
	lo, hi float64
	log    bool
}

func (s colourScale) norm(v float64) float64 {
	if math.IsNaN(v) {
		return math.NaN()
	}
	if s.log {
		if v <= 0 {
			return 0
		}
		return (math.Log10(v) - math.Log10(s.lo)) / (math.Log10(s.hi) - math.Log10(s.lo))
	}
	return (v - s.lo) / (s.hi - s.lo)
}

func percentile(sorted []float64, q float64) float64 {
	k := int(math.Round(q * float64(len(sorted)-1)))
	return sorted[min(max(k, 0), len(sorted)-1)]
}

func autoScale(vals []float64, opt MapOptions) (colourScale, error) {
	sc := colourScale{lo: opt.Min, hi: opt.Max, log: opt.Log}
	if opt.Max > opt.Min {
		if opt.Log && !(opt.Min > 0) {
			return sc, fmt.Errorf("plots: log colour range %g..%g: Min must be > 0", opt.Min, opt.Max)
		}
		return sc, nil
	}
	var fin []float64
	for _, v := range vals {
		if !math.IsNaN(v) && !math.IsInf(v, 0) && (!opt.Log || v > 0) {
			fin = append(fin, v)
		}
	}
	if len(fin) == 0 {
		if opt.Log && hasFinite(vals) {
			sc.lo, sc.hi = 1e-3, 1 // all values <= 0: every cell gets the lowest colour
			return sc, nil
		}
		return sc, ErrNoData
	}
	sort.Float64s(fin)
	if opt.Log {
		sc.lo, sc.hi = percentile(fin, 0.01), percentile(fin, 0.99)
		if !(sc.hi > sc.lo) {
			sc.lo, sc.hi = sc.lo/10, sc.lo*10
		}
		return sc, nil
	}
	sc.lo, sc.hi = fin[0], fin[len(fin)-1]
	if !(sc.hi > sc.lo) {
		d := math.Max(math.Abs(sc.lo)*0.1, 1e-12)
		sc.lo, sc.hi = sc.lo-d, sc.hi+d
	}
	return sc, nil
}

func hasFinite(v []float64) bool {
	for _, x := range v {
		if !math.IsNaN(x) && !math.IsInf(x, 0) {
			return true
		}
	}
	return false
}

// Map writes a PNG quick-look map of field f (one time step) on the grid of s.
//
// 1-D coordinates give a regular raster of cells (edges half-way between centres;
// longitudes may be in -180..180 or 0..360 and may run either way). 2-D (swath)
// coordinates are drawn as one lat/lon-aligned rectangle per cell, centred on the cell
// and sized from its neighbours; areas no cell covers stay white, cells with NaN are
// NoDataColor. It returns ErrNoData when the field has no finite value.
func Map(w io.Writer, s summary.Scene, f summary.Field, opt MapOptions) error {
	width, height, err := size(opt.Width, opt.Height)
	if err != nil {
		return err
	}
	if err := s.Check(); err != nil {
		return err
	}
	cells := s.NY * s.NX
	data := f.Data
	switch {
	case len(data) == cells:
	case len(data) == s.NT*cells && opt.TimeIndex >= 0 && opt.TimeIndex < s.NT:
		data = data[opt.TimeIndex*cells : (opt.TimeIndex+1)*cells]
	default:
		return fmt.Errorf("plots: field %s has %d values, want NY*NX = %d or NT*NY*NX = %d with TimeIndex in 0..%d (got %d)",
			f.Name, len(f.Data), cells, s.NT*cells, s.NT-1, opt.TimeIndex)
	}
	scale, units := opt.Scale, opt.Units
	if scale == 0 {
		scale, units = 1, f.Units
		if !opt.KeepUnits {
			scale, units = DisplayUnits(f.Units)
		}
	}
	vals := make([]float64, cells)
	for i, v := range data {
		vals[i] = v * scale
	}
	if opt.NoData != nil && len(opt.NoData) != cells {
		return fmt.Errorf("plots: map of %s: NoData has %d classes, want one per cell (%d)", f.Name, len(opt.NoData), cells)
	}
	if !hasFinite(vals) {
		return fmt.Errorf("plots: map of %s: %w", f.Name, ErrNoData)
	}
	sc, err := autoScale(vals, opt)
	if err != nil {
		return fmt.Errorf("plots: map of %s: %w", f.Name, err)
	}
	cm := opt.ColorMap
	if cm.table == nil {
		cm = Viridis()
	}
	g, err := newGeom(s)
	if err != nil {
		return fmt.Errorf("plots: map of %s: %w", f.Name, err)
	}
	if opt.Region != nil {
		if err := g.crop(opt.Region); err != nil {
			return fmt.Errorf("plots: map of %s: %w", f.Name, err)
		}
	}
	g.cellColours = make([]color.NRGBA, cells)
	var present [numNoData]bool
	under, over := false, false
	for i, v := range vals {
		class := NoDataNone
		if opt.NoData != nil && math.IsNaN(v) {
			class = opt.NoData[i]
		}
		if opt.Region != nil {
			if la, lo := s.LatLon(i/s.NX, i%s.NX); !opt.Region.Contains(la, lo) {
				class = OutsideRegion
			}
		}
		if class == NoDataNone && math.IsNaN(v) {
			class = NoValue
		}
		if class != NoDataNone {
			g.cellColours[i] = class.Colour()
			if la, lo := s.LatLon(i/s.NX, i%s.NX); g.inView(la, lo) {
				present[class] = true // in the legend only when some cell shows it
			}
			continue
		}
		f := sc.norm(v)
		under, over = under || f < -1e-9, over || f > 1+1e-9
		g.cellColours[i] = cm.At(f)
	}
	var coast []coastSegment
	if !opt.NoCoast {
		coast, _ = coastLines(g.xmin, g.xmax, g.ymin, g.ymax) // no files: no coastlines (CoastlinesAvailable says why)
	}

	title := opt.Title
	if title == "" {
		title = f.LongName
	}
	if title == "" {
		title = f.Name
	}
	var second []string
	if !opt.Time.IsZero() {
		second = append(second, opt.Time.UTC().Format("2006-01-02 15:04 UTC"))
	}
	if opt.When != "" {
		second = append(second, opt.When)
	}
	if len(second) > 0 {
		title += "\n" + strings.Join(second, "   ·   ")
	}
	// The title is centred over the picture minus the colour-bar column: break lines
	// that would not fit (measured in the title's font).
	title = fitLines(title, textStyle(13), px(float64(width-8-150-12)))

	p := newPlot(title, "longitude", "latitude")
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = g.xmin, g.xmax, g.ymin, g.ymax
	p.X.Padding, p.Y.Padding = 0, 0 // axes touch the map frame
	p.X.Tick.Marker = degreeTicks{lat: false, max: 6}
	p.Y.Tick.Marker = degreeTicks{lat: true}
	p.Add(raster{g})
	if len(coast) > 0 {
		p.Add(coastPlotter{coast}) // above the cells; the axes and labels are drawn outside the data area
	}

	return writePNG(w, width, height, func(dc draw.Canvas) error {
		const barColumn = 150                            // px kept on the right for the colour bar and its labels
		dc = draw.Crop(dc, px(4), -px(4), px(4), -px(8)) // margins
		if opt.Params != "" {                            // the parameter footnote under the map, 9 pt
			fs := textStyle(9)
			lines := strings.Split(fitLines("parameters: "+opt.Params, fs, px(float64(width-20))), "\n")
			fs.Color = color.Gray{Y: 0x30}
			fs.XAlign, fs.YAlign = draw.XLeft, draw.YBottom
			for i := range lines {
				y := dc.Min.Y + vg.Length(len(lines)-1-i)*px(13)
				dc.FillText(fs, vg.Point{X: dc.Min.X + px(4), Y: y}, lines[i])
			}
			dc = draw.Crop(dc, 0, 0, vg.Length(len(lines))*px(13)+px(4), 0)
		}
		main := draw.Crop(dc, 0, -px(barColumn), 0, 0)
		// as many latitude labels as fit, about 40 px apart (set before the layout:
		// their width sets the data area's)
		if da := p.DataCanvas(main); true {
			p.Y.Tick.Marker = degreeTicks{lat: true, max: max(2, min(8, int(float64(da.Max.Y-da.Min.Y)/float64(px(40)))))}
		}
		da := p.DataCanvas(main)
		if !opt.FreeAspect {
			ratio := (g.xmax - g.xmin) / (g.ymax - g.ymin)
			dw, dh := da.Max.X-da.Min.X, da.Max.Y-da.Min.Y
			if float64(dw/dh) > ratio {
				extra := dw - vg.Length(ratio)*dh
				main = draw.Crop(dc, extra/2, -px(barColumn)-extra/2, 0, 0)
			} else {
				extra := dh - dw/vg.Length(ratio)
				main = draw.Crop(main, 0, 0, extra/2, -extra/2)
			}
			da = p.DataCanvas(main)
		}
		// as many longitude labels as fit: about 75 px a label ("172.5°W" at 10 pt)
		p.X.Tick.Marker = degreeTicks{lat: false, max: max(2, int(float64(da.Max.X-da.Min.X)/float64(px(75))))}
		da = p.DataCanvas(main) // end labels that overhang the data area narrow it slightly
		p.Draw(main)
		// frame around the map
		dc.StrokeLines(draw.LineStyle{Color: color.Gray{Y: 0x40}, Width: px(1)}, []vg.Point{
			{X: da.Min.X, Y: da.Min.Y}, {X: da.Max.X, Y: da.Min.Y}, {X: da.Max.X, Y: da.Max.Y}, {X: da.Min.X, Y: da.Max.Y}, {X: da.Min.X, Y: da.Min.Y}})
		var classes []NoData
		for c := NoValue; c < numNoData; c++ {
			if present[c] {
				classes = append(classes, c)
			}
		}
		drawColourBar(dc, main.Max.X+px(18), da.Min.Y, da.Max.Y, cm, sc, units, under, over, classes, opt.IntegerTicks)
		return nil
	})
}

// drawColourBar draws a vertical colour bar of width 20 px at x from y0 to y1, ticks and
// labels on its right, the units above, a triangle at an end whose values some cells
// exceed (they get the end colour), and below it a legend of the no-data classes
// present.
func drawColourBar(dc draw.Canvas, x, y0, y1 vg.Length, cm ColorMap, sc colourScale, units string, under, over bool, classes []NoData, integer bool) {
	const barW = 20
	tri := px(12) // height of an end triangle
	sw := px(14)  // legend swatch
	legendTop := y0 + px(4)
	if len(classes) > 0 {
		y0 += vg.Length(len(classes))*(sw+px(6)) + px(14) // room for the legend under the bar
	}
	if over {
		y1 -= tri
	}
	if under {
		y0 += tri
	}
	// the stripe: one pixel row per colour-table entry, top = high values
	stripe := image.NewNRGBA(image.Rect(0, 0, 1, 256))
	for k := 0; k < 256; k++ {
		stripe.SetNRGBA(0, 255-k, cm.At((float64(k)+0.5)/256))
	}
	rect := vg.Rectangle{Min: vg.Point{X: x, Y: y0}, Max: vg.Point{X: x + px(barW), Y: y1}}
	dc.DrawImage(rect, stripe)
	frame := draw.LineStyle{Color: color.Gray{Y: 0x40}, Width: px(1)}
	dc.StrokeLines(frame, []vg.Point{{X: x, Y: y0}, {X: x + px(barW), Y: y0}, {X: x + px(barW), Y: y1}, {X: x, Y: y1}, {X: x, Y: y0}})
	if over {
		t := []vg.Point{{X: x, Y: y1}, {X: x + px(barW), Y: y1}, {X: x + px(barW)/2, Y: y1 + tri}}
		dc.FillPolygon(cm.At(1), t)
		dc.StrokeLines(frame, append(t, t[0]))
	}
	if under {
		t := []vg.Point{{X: x, Y: y0}, {X: x + px(barW), Y: y0}, {X: x + px(barW)/2, Y: y0 - tri}}
		dc.FillPolygon(cm.At(0), t)
		dc.StrokeLines(frame, append(t, t[0]))
	}

	var ticks []plot.Tick
	if sc.log {
		ticks = logTicks125{}.Ticks(sc.lo, sc.hi)
	} else {
		ticks = niceTicks{n: 6}.Ticks(sc.lo, sc.hi)
	}
	lab := textStyle(10)
	lab.XAlign, lab.YAlign = draw.XLeft, draw.YCenter
	for _, t := range ticks {
		if integer && t.Value != math.Round(t.Value) {
			continue
		}
		if integer && t.Label == "" {
			t.Label = tickNumber(t.Value)
		}
		f := sc.norm(t.Value)
		if f < -1e-9 || f > 1+1e-9 {
			continue
		}
		y := y0 + vg.Length(f)*(y1-y0)
		l := px(3)
		if t.Label != "" {
			l = px(6)
		}
		dc.StrokeLine2(frame, x+px(barW), y, x+px(barW)+l, y)
		if t.Label != "" {
			dc.FillText(lab, vg.Point{X: x + px(barW+9), Y: y}, t.Label)
		}
	}
	// units above the bar
	ul := textStyle(11)
	ul.XAlign, ul.YAlign = draw.XLeft, draw.YBottom
	if units == "" {
		units = "(no units)"
	}
	if sc.log {
		units += "  (log scale)"
	}
	top := y1
	if over {
		top += tri
	}
	dc.FillText(ul, vg.Point{X: x, Y: top + px(8)}, units)
	// no-data legend below the bar
	sy := legendTop
	nd := textStyle(10)
	nd.XAlign, nd.YAlign = draw.XLeft, draw.YCenter
	for k := len(classes) - 1; k >= 0; k-- { // stacked upwards: the first on top
		c := classes[k]
		box := []vg.Point{{X: x, Y: sy}, {X: x + sw, Y: sy}, {X: x + sw, Y: sy + sw}, {X: x, Y: sy + sw}}
		dc.FillPolygon(c.Colour(), box)
		dc.StrokeLines(frame, append(box, box[0]))
		dc.FillText(nd, vg.Point{X: x + sw + px(6), Y: sy + sw/2}, c.Label())
		sy += sw + px(6)
	}
}

// inView reports whether the point lies in the map's box (longitudes modulo 360).
func (g *mapGeom) inView(lat, lon float64) bool {
	if !(lat >= g.ymin && lat <= g.ymax) {
		return false
	}
	for _, sh := range []float64{0, -360, 360, -720, 720} {
		if l := lon + sh; l >= g.xmin && l <= g.xmax {
			return true
		}
	}
	return false
}

// crop narrows the map to region r (shifted by whole turns to overlap the data),
// intersected with the data's extent.
func (g *mapGeom) crop(r *summary.Region) error {
	lo, hi := r.LonMin, r.LonMax
	if hi <= lo {
		hi += 360 // across the antimeridian
	}
	best, shift := -1.0, 0.0
	for _, sh := range []float64{-720, -360, 0, 360, 720} {
		if ov := math.Min(hi+sh, g.xmax) - math.Max(lo+sh, g.xmin); ov > best {
			best, shift = ov, sh
		}
	}
	x0, x1 := math.Max(lo+shift, g.xmin), math.Min(hi+shift, g.xmax)
	if g.xmax-g.xmin >= 360-1e-6 { // a global grid: the cells repeat every 360°
		shift = math.Floor((lo+180)/360) * -360
		x0, x1 = lo+shift, hi+shift
	}
	y0, y1 := math.Max(r.LatMin, g.ymin), math.Min(r.LatMax, g.ymax)
	if !(x1 > x0) || !(y1 > y0) {
		return fmt.Errorf("%w: the region %g..%g°N, %g..%g°E holds no cell of the map", ErrNoData, r.LatMin, r.LatMax, r.LonMin, r.LonMax)
	}
	g.xmin, g.xmax, g.ymin, g.ymax = x0, x1, y0, y1
	return nil
}

// fitLines re-breaks each line of text that is wider than max in style st, after a
// comma where it can, else at blanks.
func fitLines(text string, st text.Style, max vg.Length) string {
	fits := func(l string) bool { return st.Width(l) <= max }
	var out []string
	for _, line := range strings.Split(text, "\n") {
		if fits(line) {
			out = append(out, line)
			continue
		}
		cur := ""
		add := func(part, sep string) {
			switch {
			case cur == "":
				cur = part
			case fits(cur + sep + part):
				cur += sep + part
			default:
				out = append(out, cur)
				cur = part
			}
		}
		for _, part := range strings.SplitAfter(line, ", ") {
			part = strings.TrimSpace(part)
			if fits(part) {
				add(part, " ")
				continue
			}
			for _, w := range strings.Fields(part) { // a part longer than a line
				add(w, " ")
			}
		}
		if cur != "" {
			out = append(out, cur)
		}
	}
	return strings.Join(out, "\n")
}
