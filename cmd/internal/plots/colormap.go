package plots

import (
	"image/color"
	"math"
)

// ColorMap is a 256-entry colour table indexed by a fraction in [0, 1].
type ColorMap struct {
	Name  string
	table *[256][3]float64
}

// Viridis returns the viridis colour map (sequential; the default).
func Viridis() ColorMap { return ColorMap{Name: "viridis", table: &viridisRGB} }

// Cividis returns the cividis colour map (sequential, optimised for colour-vision
// deficiency).
func Cividis() ColorMap { return ColorMap{Name: "cividis", table: &cividisRGB} }

// ColorMapByName returns the colour map called name ("viridis" or "cividis").
func ColorMapByName(name string) (ColorMap, bool) {
	switch name {
	case "viridis":
		return Viridis(), true
	case "cividis":
		return Cividis(), true
	}
	return ColorMap{}, false
}

// NoData says why a map cell has no colour of the scale. The zero value means the
// cell shows its value; a cell whose value is NaN and whose class is NoDataNone is
// drawn as NoValue.
type NoData uint8

// The no-data classes, each with a colour no colour map uses (tested) and a legend entry.
const (
	NoDataNone    NoData = iota
	NoValue              // no value and no known reason (e.g. a rate's intensity where it never drizzles)
	MissingInput         // an input was missing (QC bit input_missing in every step)
	Screened             // screened by a QC bit (thin cloud, r_e out of range, possible ice, ...)
	OutsideRegion        // outside the --region box
	NoColumns            // no column reached the cell (gridded summaries: between swaths)
	numNoData
)

// noDataStyle is the colour and legend text of each class.
var noDataStyle = [numNoData]struct {
	colour color.NRGBA
	label  string
}{
	NoValue:       {color.NRGBA{R: 0xff, G: 0xf0, B: 0xc8, A: 0xff}, "no value"},
	MissingInput:  {color.NRGBA{R: 0xd0, G: 0xd0, B: 0xd0, A: 0xff}, "input missing"},
	Screened:      {color.NRGBA{R: 0xf0, G: 0xa8, B: 0xc0, A: 0xff}, "screened (QC)"},
	OutsideRegion: {color.NRGBA{R: 0xdc, G: 0xe8, B: 0xf4, A: 0xff}, "outside region"},
	NoColumns:     {color.NRGBA{R: 0xff, G: 0xff, B: 0xff, A: 0xff}, "no columns"},
}

// Colour returns the colour of the class (NoDataNone: the colour of NoValue).
func (c NoData) Colour() color.NRGBA {
	if c == NoDataNone || c >= numNoData {
		c = NoValue
	}
	return noDataStyle[c].colour
}

// Label returns the legend text of the class.
func (c NoData) Label() string {
	if c == NoDataNone || c >= numNoData {
		c = NoValue
	}
	return noDataStyle[c].label
}

// NoDataColor is the colour of a cell without a value and without a known reason
// (NoValue).
var NoDataColor = noDataStyle[NoValue].colour

// ColorMaps returns every colour map the pictures use.
func ColorMaps() []ColorMap { return []ColorMap{Viridis(), Cividis()} }

// At returns the colour at fraction f (clamped to [0, 1]); NaN gives NoDataColor.
func (m ColorMap) At(f float64) color.NRGBA {
	if math.IsNaN(f) {
		return NoDataColor
	}
	k := int(math.Floor(f * 256))
	k = min(max(k, 0), 255)
	c := m.table[k]
	return color.NRGBA{R: uint8(math.Round(c[0] * 255)), G: uint8(math.Round(c[1] * 255)), B: uint8(math.Round(c[2] * 255)), A: 0xff}
}
