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

// NoDataColor is the neutral light grey used for cells without a value (NaN). It is far
// from every entry of both colour maps (tested).
var NoDataColor = color.NRGBA{R: 0xd4, G: 0xd4, B: 0xd4, A: 0xff}

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
