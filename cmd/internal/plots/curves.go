package plots

import (
	"fmt"
	"image/color"
	"io"
	"math"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/warmrain/warmrain/cmd/internal/summary"
)

// CurveOptions configure POPCurves and SusceptibilityCurves.
type CurveOptions struct {
	Width, Height int // picture size in px; 0 = DefaultWidth, DefaultHeight
	// Title is the first title line; "" = a default naming the quantity.
	Title string
	// Subtitle is a second title line for region, time span and key parameters.
	Subtitle string
	// NdBins are the N_d bins drawn by POPCurves; nil = up to 5 bins spread evenly over
	// those with data.
	NdBins []int
	// MinCount hides bins with fewer columns; 0 = the MinCount of the summary.
	MinCount int
	// RegressionSE draws the regression standard error as susceptibility error bars even
	// when a bootstrap one exists.
	RegressionSE bool
}

type xyErrs struct {
	plotter.XYs
	plotter.YErrors
}

// seriesColour returns colour k of n, spread over viridis but stopping short of its
// light yellow end, which is hard to see on white.
func seriesColour(k, n int) color.Color {
	if n <= 1 {
		return Viridis().At(0.3)
	}
	return Viridis().At(0.82 * float64(k) / float64(n-1))
}

var markers = []draw.GlyphDrawer{draw.CircleGlyph{}, draw.SquareGlyph{}, draw.TriangleGlyph{}, draw.PyramidGlyph{}, draw.RingGlyph{}, draw.CrossGlyph{}, draw.PlusGlyph{}, draw.BoxGlyph{}}

func title2(t, sub string) string {
	if sub != "" {
		return t + "\n" + sub
	}
	return t
}

// addSeries adds a line with markers and error bars, and a legend entry.
func addSeries(p *plot.Plot, pts xyErrs, name string, col color.Color, k int, dashed bool) error {
	line, sc, err := plotter.NewLinePoints(pts.XYs)
	if err != nil {
		return err
	}
	line.Color, line.Width = col, px(2)
	if dashed {
		line.Dashes = []vg.Length{px(6), px(4)}
	}
	sc.Color, sc.Shape, sc.Radius = col, markers[k%len(markers)], px(4)
	eb, err := plotter.NewYErrorBars(pts)
	if err != nil {
		return err
	}
	eb.Color, eb.Width, eb.CapWidth = col, px(1.2), px(8)
	p.Add(eb, line, sc)
	p.Legend.Add(name, line, sc)
	return nil
}

func lwpAxis(p *plot.Plot, r *summary.Result) {
	p.X.Scale = plot.LogScale{}
	p.X.Tick.Marker = logTicks125{}
	p.X.Min = r.LWP.Edges[0] * 1e3
	p.X.Max = r.LWP.Edges[r.LWP.N()] * 1e3
}

// POPCurves writes a PNG of mean drizzle probability against LWP (log axis, g m-2), one
// line with markers and ±1 standard-error bars per N_d bin, with a legend of the N_d
// ranges (cm-3). Bins with fewer than MinCount columns are left out. It returns
// ErrNoData when no bin has enough columns.
func POPCurves(w io.Writer, r *summary.Result, opt CurveOptions) error {
	width, height, err := size(opt.Width, opt.Height)
	if err != nil {
		return err
	}
	jt := &r.Joint
	minCount := opt.MinCount
	if minCount == 0 {
		minCount = r.Options.MinCount
	}
	has := func(j int) bool {
		for i := 0; i < jt.NLWP; i++ {
			if jt.Count[jt.Index(i, j)] >= minCount && !math.IsNaN(jt.MeanPOP[jt.Index(i, j)]) {
				return true
			}
		}
		return false
	}
	bins := opt.NdBins
	if bins == nil {
		var avail []int
		for j := 0; j < jt.NNd; j++ {
			if has(j) {
				avail = append(avail, j)
			}
		}
		if len(avail) <= 5 {
			bins = avail
		} else {
			for k := 0; k < 5; k++ {
				bins = append(bins, avail[int(math.Round(float64(k)*float64(len(avail)-1)/4))])
			}
		}
	}
	t := opt.Title
	if t == "" {
		t = "Drizzle probability against liquid water path, by droplet number"
	}
	p := newPlot(title2(t, opt.Subtitle), "liquid water path LWP (g m-2)", "drizzle probability POP (1)")
	lwpAxis(p, r)
	p.Y.Min, p.Y.Max = 0, 1
	p.Y.Tick.Marker = niceTicks{n: 6}
	p.Add(plotter.NewGrid())
	drawn := 0
	for k, j := range bins {
		if j < 0 || j >= jt.NNd {
			return fmt.Errorf("plots: N_d bin %d out of range 0..%d", j, jt.NNd-1)
		}
		var pts xyErrs
		for i := 0; i < jt.NLWP; i++ {
			b := jt.Index(i, j)
			if jt.Count[b] < minCount || math.IsNaN(jt.MeanPOP[b]) {
				continue
			}
			se := jt.SEPOP[b]
			if math.IsNaN(se) {
				se = 0
			}
			pts.XYs = append(pts.XYs, plotter.XY{X: r.LWP.Centre(i) * 1e3, Y: jt.MeanPOP[b]})
			pts.YErrors = append(pts.YErrors, struct{ Low, High float64 }{se, se})
		}
		if len(pts.XYs) == 0 {
			continue
		}
		lo, hi := r.Nd.Bounds(j)
		name := fmt.Sprintf("%s-%s cm-3", fmtNum(lo*1e-6), fmtNum(hi*1e-6))
		if err := addSeries(p, pts, name, seriesColour(k, len(bins)), k, false); err != nil {
			return err
		}
		drawn++
	}
	if drawn == 0 {
		return fmt.Errorf("plots: POP curves: no (LWP, N_d) bin has %d or more columns: %w", minCount, ErrNoData)
	}
	p.Y.Min, p.Y.Max = -0.02, 1.03 // room for markers at 0 and 1
	return writeWithLegend(w, width, height, p, 170, "droplet number N_d", "±1 standard error")
}

// writeWithLegend draws p with its legend moved out of the axes into a column of
// legendW px on the right, under a header, with a note line below the entries.
func writeWithLegend(w io.Writer, width, height int, p *plot.Plot, legendW float64, header, note string) error {
	leg := p.Legend
	p.Legend = plot.NewLegend()
	return writePNG(w, width, height, func(dc draw.Canvas) error {
		dc = draw.Crop(dc, px(6), -px(10), px(4), -px(8))
		main := draw.Crop(dc, 0, -px(legendW), 0, 0)
		da := p.DataCanvas(main)
		p.Draw(main)
		col := draw.Crop(dc, main.Max.X-dc.Min.X+px(14), 0, 0, 0)
		col.Max.Y = da.Max.Y - px(22)
		hs := textStyle(11)
		hs.XAlign, hs.YAlign = draw.XLeft, draw.YBottom
		dc.FillText(hs, vg.Point{X: col.Min.X, Y: col.Max.Y + px(6)}, header)
		leg.Top, leg.Left = true, true
		leg.Padding = px(5)
		leg.ThumbnailWidth = px(28)
		leg.Draw(col)
		if note != "" {
			ns := textStyle(9)
			ns.XAlign, ns.YAlign = draw.XLeft, draw.YTop
			ns.Color = color.Gray{Y: 0x40}
			h := leg.Rectangle(col)
			dc.FillText(ns, vg.Point{X: col.Min.X, Y: h.Min.Y - px(8)}, note)
		}
		return nil
	})
}

func fmtNum(v float64) string {
	s := strconv.FormatFloat(v, 'g', 3, 64)
	if math.Abs(v) >= 1000 {
		s = strconv.FormatFloat(v, 'f', 0, 64)
	}
	return s
}

// SusceptibilityCurves writes a PNG of S_POP, S_R and S_I against LWP (log axis, g m-2)
// with error bars: the tile-bootstrap percentile interval when there is a bootstrap
// (unless RegressionSE), else ±1 regression standard error; and a
// dotted zero line. LWP bins without a defined slope are left out. It returns ErrNoData
// when no LWP bin has a slope.
func SusceptibilityCurves(w io.Writer, r *summary.Result, opt CurveOptions) error {
	width, height, err := size(opt.Width, opt.Height)
	if err != nil {
		return err
	}
	boot := r.Options.Bootstrap > 0 && !opt.RegressionSE
	errNote := "error bars: ±1 regression standard error (assumes independent bins)"
	if boot {
		tiles := fmt.Sprintf("tiles %d cells a side", r.TileSide)
		if r.TileSide < 0 {
			tiles = "tiles of each scene's automatic size"
		}
		errNote = fmt.Sprintf("error bars: %g%% tile-bootstrap interval (%d replicates, %s)", 100*r.Options.CILevel, r.Options.Bootstrap, tiles)
	}
	t := opt.Title
	if t == "" {
		t = "Precipitation susceptibility S = -d ln X / d ln N_d"
	}
	sub := errNote
	if opt.Subtitle != "" {
		sub = opt.Subtitle + "   ·   " + errNote
	}
	p := newPlot(title2(t, sub), "liquid water path LWP (g m-2)", "susceptibility S (1)")
	lwpAxis(p, r)
	p.Y.Tick.Marker = niceTicks{n: 6}
	p.Add(plotter.NewGrid())
	zero, err := plotter.NewLine(plotter.XYs{{X: p.X.Min, Y: 0}, {X: p.X.Max, Y: 0}})
	if err != nil {
		return err
	}
	zero.Color, zero.Width, zero.Dashes = color.Gray{Y: 0x60}, px(1), []vg.Length{px(2), px(3)}
	p.Add(zero)
	series := []struct {
		name   string
		s      []summary.Slope
		shift  float64
		dashed bool
	}{
		{"S_POP  probability", r.SPOP, 0.97, false},
		{"S_R  mean rate", r.SRate, 1.0, false},
		{"S_I  conditional rate", r.SCond, 1.03, true},
	}
	drawn := 0
	for k, sr := range series {
		var pts xyErrs
		for i, s := range sr.s {
			if math.IsNaN(s.S) {
				continue
			}
			lo, hi := s.SE, s.SE
			if boot {
				lo, hi = s.S-s.CILow, s.CIHigh-s.S
			}
			if math.IsNaN(lo) || math.IsNaN(hi) {
				lo, hi = 0, 0
			}
			pts.XYs = append(pts.XYs, plotter.XY{X: r.LWP.Centre(i) * 1e3 * sr.shift, Y: s.S})
			pts.YErrors = append(pts.YErrors, struct{ Low, High float64 }{math.Max(lo, 0), math.Max(hi, 0)})
		}
		if len(pts.XYs) == 0 {
			continue
		}
		col := []color.Color{Viridis().At(0.0), Viridis().At(0.45), Viridis().At(0.75)}[k]
		if err := addSeries(p, pts, sr.name, col, k, sr.dashed); err != nil {
			return err
		}
		drawn++
	}
	if drawn == 0 {
		return fmt.Errorf("plots: susceptibility: no LWP bin has a slope: %w", ErrNoData)
	}
	pad := 0.06 * (p.Y.Max - p.Y.Min)
	p.Y.Min, p.Y.Max = p.Y.Min-pad, p.Y.Max+pad
	note := "S_R = S_POP + S_I\nS_R and S_I are set by the\nrate law's N_d exponent c\n(S_I -> c where POP -> 1)"
	if c := r.Options.LawNdExponent; c > 0 {
		note = fmt.Sprintf("S_R = S_POP + S_I\nS_R and S_I are set by the\nrate law's N_d exponent c = %g\n(S_I -> c where POP -> 1)", c)
	}
	return writeWithLegend(w, width, height, p, 190, "quantity X", note)
}
