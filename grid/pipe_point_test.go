package grid

import (
	"math"
	"path/filepath"
	"testing"
)

// samplePath is the committed sample scenario (read only).
var samplePath = filepath.Join("..", "samples", "data", "stratocumulus_demo.nc")

// ReadColumn gives the value Process decodes: the stored value unpacked and converted to
// canonical units, here compared with the generic reader (CF unpacking) and the unit factor
// of g m-2 to kg m-2 (UDUNITS, exact power of ten).
func TestReadColumnAndNearest(t *testing.T) {
	in, err := Open(samplePath, OpenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer in.Close()
	for _, ix := range [][]int{{0, 0, 0}, {1, 61, 49}, {2, 99, 99}, {1, 37, 12}} {
		s, err := in.ReadColumn(ix)
		if err != nil {
			t.Fatal(err)
		}
		raw, _, err := ReadVariableAt(samplePath, "lwp", ix, []int{1, 1, 1})
		if err != nil {
			t.Fatal(err)
		}
		got, want := s.In[RoleLWP.Index()][0], raw[0]*1e-3
		if !(got == want || math.IsNaN(got) && math.IsNaN(want)) {
			t.Errorf("%v: lwp %g kg m-2, the file holds %g g m-2", ix, got, raw[0])
		}
	}
	if _, err := in.ReadColumn([]int{0, 100, 0}); err == nil {
		t.Error("an index outside the grid was read")
	}
	// The sample's cells are 0.1° wide, centres at x.x5: the nearest centre to a point
	// is the one 0.05° or less away in latitude and longitude.
	for _, q := range [][2]float64{{-21.13, -80.07}, {-15.01, -84.99}, {-24.96, -75.02}, {-19.5, -80.5}} {
		pl, err := in.Nearest(q[0], q[1])
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(pl.Lat-q[0]) > 0.05+1e-9 || math.Abs(pl.Lon-q[1]) > 0.05+1e-9 {
			t.Errorf("%v: nearest centre %g, %g", q, pl.Lat, pl.Lon)
		}
		if d := GreatCircleKm(q[0], q[1], pl.Lat, pl.Lon); d != pl.DistanceKm || d > 8 {
			t.Errorf("%v: distance %g km, haversine %g km", q, pl.DistanceKm, d)
		}
	}
}

// One degree of latitude is 2 pi R / 360 = 111.195 km on the sphere of the IUGG mean
// radius (derived); longitudes 360° apart are one place.
func TestGreatCircle(t *testing.T) {
	if d := GreatCircleKm(10, 20, 11, 20); math.Abs(d-2*math.Pi*EarthRadiusKm/360) > 1e-9 {
		t.Errorf("one degree of latitude: %g km", d)
	}
	if d := GreatCircleKm(-20, 179.9, -20, -179.9); math.Abs(d-GreatCircleKm(-20, 0, -20, 0.2)) > 1e-9 {
		t.Errorf("across 180°: %g km", d)
	}
	if g := lonGap(179.9, -179.9); math.Abs(g-0.2) > 1e-9 {
		t.Errorf("lonGap across 180°: %g", g)
	}
}

// Stored gives what a reader gets back: float32 rounding, packed values within half a
// step, NaN for fill and for values outside valid_range (CF §2.5.1, §8.1).
func TestOutputVarStored(t *testing.T) {
	f := OutputVar{Name: "x", Type: Float32, Fill: -999, ValidMin: 0, ValidMax: 1000}
	if got := f.Stored(0.1); got != float64(float32(0.1)) {
		t.Errorf("float32: %v", got)
	}
	for _, x := range []float64{math.NaN(), math.Inf(1), 2000, -1} {
		if got := f.Stored(x); !math.IsNaN(got) {
			t.Errorf("float32 %g: %g, want missing", x, got)
		}
	}
	p := OutputVar{Name: "p", Type: Int16, Fill: -32768, ValidMin: 0, ValidMax: 1, Scale: 1.0 / 65534, Offset: 0.5}
	for _, x := range []float64{0, 0.3, 0.77777, 1} {
		if got := p.Stored(x); math.Abs(got-x) > 0.5/65534+1e-7 {
			t.Errorf("packed %g: %g", x, got)
		}
	}
	if got := p.Stored(1.5); !math.IsNaN(got) {
		t.Errorf("packed 1.5 outside [0, 1]: %g", got)
	}
}
