package plots

import (
	"fmt"
	"image/color"
	"io"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
)

// Picture sizes.
const (
	DefaultWidth  = 900 // px
	DefaultHeight = 600 // px
	dpi           = 96  // pixels per inch of the PNG; font sizes are in points at this density
	minSide       = 200 // px; smaller pictures cannot hold the axes and labels
	maxSide       = 10000
)

// px converts a pixel count to a vg length at the PNG density.
func px(n float64) vg.Length { return vg.Length(n) * vg.Inch / dpi }

func size(w, h int) (int, int, error) {
	if w == 0 {
		w = DefaultWidth
	}
	if h == 0 {
		h = DefaultHeight
	}
	if w < minSide || h < minSide || w > maxSide || h > maxSide {
		return 0, 0, fmt.Errorf("plots: picture size %dx%d px: want each side in %d..%d", w, h, minSide, maxSide)
	}
	return w, h, nil
}

// writePNG renders fn on a white w x h px canvas and writes it as PNG.
func writePNG(out io.Writer, w, h int, fn func(dc draw.Canvas) error) error {
	c := vgimg.NewWith(vgimg.UseWH(px(float64(w)), px(float64(h))), vgimg.UseDPI(dpi), vgimg.UseBackgroundColor(color.White))
	if err := fn(draw.New(c)); err != nil {
		return err
	}
	if _, err := (vgimg.PngCanvas{Canvas: c}).WriteTo(out); err != nil {
		return fmt.Errorf("plots: writing PNG: %w", err)
	}
	return nil
}

// sans is the typeface of all our text (Liberation Sans, bundled with gonum plot).
var sans = font.Font{Typeface: "Liberation", Variant: "Sans"}

func textStyle(size vg.Length) text.Style {
	return text.Style{
		Color:   color.Black,
		Font:    font.From(sans, size),
		Handler: plot.DefaultTextHandler,
	}
}

// newPlot returns a plot with our type sizes: title 13 pt, axis labels 11 pt, ticks 10 pt.
func newPlot(title, xlabel, ylabel string) *plot.Plot {
	p := plot.New()
	p.Title.Text = title
	p.Title.TextStyle.Font = font.From(sans, 13)
	p.Title.Padding = px(10)
	p.X.Label.Text, p.Y.Label.Text = xlabel, ylabel
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Label.TextStyle.Font = font.From(sans, 11)
		a.Tick.Label.Font = font.From(sans, 10)
		a.Padding = px(4)
	}
	p.X.Label.Padding = px(4)
	p.Y.Label.Padding = px(6)
	p.Legend.TextStyle.Font = font.From(sans, 10)
	return p
}
