package plots

import (
	"bytes"
	"image"
	"image/color"
	"image/png"
	"math"
	"os"
	"strings"
	"testing"

	"github.com/warmrain/warmrain/cmd/internal/summary"
	"github.com/warmrain/warmrain/microphys"
)

// needCoast fails (under CI) or skips when the GSHHG files are not installed.
func needCoast(t *testing.T) {
	t.Helper()
	if err := CoastlinesAvailable(); err != nil {
		if ci() {
			t.Fatalf("coastlines: %v (.ci/deps.sh installs gmt-gshhg-low)", err)
		}
		t.Skipf("coastlines: %v", err)
	}
}

// regularScene is a 1-D lat/lon grid of cells of size step over the box with a
// constant field (value v in SI m-3, droplet number).
func regularScene(latMin, latMax, lonMin, lonMax, step, v float64) (summary.Scene, summary.Field) {
	s := summary.Scene{NT: 1}
	for la := latMin + step/2; la < latMax; la += step {
		s.Lat = append(s.Lat, la)
	}
	for lo := lonMin + step/2; lo < lonMax; lo += step {
		s.Lon = append(s.Lon, lo)
	}
	s.NY, s.NX = len(s.Lat), len(s.Lon)
	f := summary.Field{Name: "droplet_number", Units: "m-3", Data: make([]float64, s.NY*s.NX)}
	for i := range f.Data {
		f.Data[i] = v
	}
	return s, f
}

// dataBox finds the map's data area: from the first pixel of the cells' colour c on
// the picture's middle row, the run of pixels to the right up to the frame (grey) or
// the background (white), coastlines included, and likewise up and down the run's
// middle column.
func dataBox(img image.Image, c color.NRGBA) image.Rectangle {
	b := img.Bounds()
	want := [3]uint8{c.R, c.G, c.B}
	inside := func(x, y int) bool {
		p := rgb(img.At(x, y))
		lo, hi := min(p[0], p[1], p[2]), max(p[0], p[1], p[2])
		return !(hi-lo < 10 && lo >= 30) // not white, not the grey frame or its blends
	}
	y := (b.Min.Y + b.Max.Y) / 2
	x0 := b.Min.X
	for x0 < b.Max.X && rgb(img.At(x0, y)) != want {
		x0++
	}
	x1 := x0
	for x1 < b.Max.X && inside(x1, y) {
		x1++
	}
	xm := (x0 + x1) / 2
	y0, y1 := y, y
	for y0 > b.Min.Y && inside(xm, y0-1) {
		y0--
	}
	for y1 < b.Max.Y && inside(xm, y1) {
		y1++
	}
	return image.Rect(x0, y0, x1, y1)
}

// isCoastPixel: the coastline's black core; neither colour map comes near (the darkest
// entries are (68, 1, 84) and (0, 34, 78)).
func isCoastPixel(c color.Color) bool {
	p := rgb(c)
	return max(p[0], p[1], p[2]) < 30
}

func coastMap(t *testing.T, latMin, latMax, lonMin, lonMax float64, opt MapOptions) (image.Image, image.Rectangle) {
	t.Helper()
	s, f := regularScene(latMin, latMax, lonMin, lonMax, 0.5, 100e6)
	opt.Width, opt.Height = 900, 600
	Style(f.Name, f.Units, nil, &opt)
	var buf bytes.Buffer
	if err := Map(&buf, s, f, opt); err != nil {
		t.Fatal(err)
	}
	img := decode(t, buf.Bytes(), 900, 600)
	cell := Viridis().At(0.5) // 100 cm-3 on the declared log scale 10..1000
	box := dataBox(img, cell)
	if box.Dx() < 300 || box.Dy() < 200 {
		t.Fatalf("map cells of colour %v cover only %v", cell, box)
	}
	return img, box
}

// TestCoastlines draws a constant field over western Australia and over the open
// South Pacific: the coast's black pixels lie along the known west coast (113-116°E
// between 22°S and 34°S, from any atlas) and are absent over open ocean.
func TestCoastlines(t *testing.T) {
	needCoast(t)
	img, box := coastMap(t, -36, -20, 105, 125, MapOptions{})
	xOf := func(lon float64) int { return box.Min.X + int((lon-105)/20*float64(box.Dx())) }
	yOf := func(lat float64) int { return box.Min.Y + int((-20-lat)/16*float64(box.Dy())) }
	for _, lat := range []float64{-24, -27, -30, -33} {
		found := false
		for y := yOf(lat) - 3; y <= yOf(lat)+3 && !found; y++ {
			for x := xOf(112.5); x <= xOf(116.5); x++ {
				found = found || isCoastPixel(img.At(x, y))
			}
		}
		if !found {
			var darkest [3]uint8 = [3]uint8{255, 255, 255}
			for x := xOf(112.5); x <= xOf(116.5); x++ {
				if p := rgb(img.At(x, yOf(lat))); max(p[0], p[1], p[2]) < max(darkest[0], darkest[1], darkest[2]) {
					darkest = p
				}
			}
			t.Errorf("no coastline pixel near %g°S between 112.5°E and 116.5°E (box %v, row %d, darkest %v)", -lat, box, yOf(lat), darkest)
		}
	}
	// west of 110°E is open ocean
	for y := box.Min.Y; y < box.Max.Y; y++ {
		for x := box.Min.X + 2; x < xOf(110); x++ {
			if isCoastPixel(img.At(x, y)) {
				t.Fatalf("coastline pixel at (%d, %d), over the open Indian Ocean", x, y)
			}
		}
	}
	save(t, "map_coast_australia.png", pngOf(t, img))

	// open South Pacific: 50-40°S, 140-120°W has no land
	img, box = coastMap(t, -50, -40, -140, -120, MapOptions{})
	for y := box.Min.Y + 2; y < box.Max.Y-2; y++ {
		for x := box.Min.X + 2; x < box.Max.X-2; x++ {
			if isCoastPixel(img.At(x, y)) {
				t.Fatalf("coastline pixel at (%d, %d) over the open South Pacific", x, y)
			}
		}
	}
}

// TestCoastlinesAbsent: without the files the map still draws, with no coastline, and
// CoastlinesAvailable says which package provides them.
func TestCoastlinesAbsent(t *testing.T) {
	old := CoastlineDir
	CoastlineDir = t.TempDir()
	defer func() { CoastlineDir = old }()
	err := CoastlinesAvailable()
	if err == nil || !strings.Contains(err.Error(), "gmt-gshhg-low") {
		t.Errorf("CoastlinesAvailable without files = %v; want an error naming gmt-gshhg-low", err)
	}
	img, box := coastMap(t, -36, -20, 105, 125, MapOptions{})
	for y := box.Min.Y; y < box.Max.Y; y++ {
		for x := box.Min.X; x < box.Max.X; x++ {
			if isCoastPixel(img.At(x, y)) {
				t.Fatalf("coastline pixel at (%d, %d) without coastline files", x, y)
			}
		}
	}
}

// TestCoastResolution: the resolution follows the map's extent.
func TestCoastResolution(t *testing.T) {
	for _, c := range []struct {
		span float64
		want byte
	}{{360, 'c'}, {61, 'c'}, {40, 'l'}, {10, 'i'}, {1, 'i'}} {
		if got := coastResolution(c.span); got != c.want {
			t.Errorf("coastResolution(%g) = %c, want %c", c.span, got, c.want)
		}
	}
}

// TestNoDataColours: every no-data class colour is far (RGB distance > 60 of 255) from
// every entry of every colour map, from the other classes and from the coastline.
func TestNoDataColours(t *testing.T) {
	dist := func(a, b color.NRGBA) float64 {
		dr, dg, db := float64(a.R)-float64(b.R), float64(a.G)-float64(b.G), float64(a.B)-float64(b.B)
		return math.Sqrt(dr*dr + dg*dg + db*db)
	}
	for c := NoValue; c < numNoData; c++ {
		for _, m := range ColorMaps() {
			for k := 0; k < 256; k++ {
				e := m.At((float64(k) + 0.5) / 256)
				if d := dist(c.Colour(), e); d < 60 {
					t.Errorf("%s colour %v is %.0f from %s entry %d %v", c.Label(), c.Colour(), d, m.Name, k, e)
				}
			}
		}
		if d := dist(c.Colour(), CoastColor); d < 60 {
			t.Errorf("%s colour is %.0f from the coastline colour", c.Label(), d)
		}
		for o := c + 1; o < numNoData; o++ {
			if d := dist(c.Colour(), o.Colour()); d < 30 {
				t.Errorf("%s and %s colours are only %.0f apart", c.Label(), o.Label(), d)
			}
		}
	}
}

// TestNoDataClassesAndRegion: NaN cells take their class's colour, the region crops the
// map (cells outside it are not drawn) and the legend lists the classes shown.
func TestNoDataClassesAndRegion(t *testing.T) {
	s, f := regularScene(-30, -10, -100, -70, 0.5, 100e6)
	classes := make([]NoData, s.NY*s.NX)
	for i := range f.Data {
		y, x := i/s.NX, i%s.NX
		switch {
		case x < 10 && y < 10:
			f.Data[i], classes[i] = math.NaN(), MissingInput
		case x > 50 && y > 30:
			f.Data[i], classes[i] = math.NaN(), Screened
		case x > 50 && y < 5:
			classes[i] = Screened // has a value: shows it
		}
	}
	opt := MapOptions{NoData: classes, NoCoast: true}
	Style(f.Name, f.Units, nil, &opt)
	var buf bytes.Buffer
	if err := Map(&buf, s, f, opt); err != nil {
		t.Fatal(err)
	}
	img := decode(t, buf.Bytes(), DefaultWidth, DefaultHeight)
	_, miss := census(img, MissingInput.Colour())
	_, scr := census(img, Screened.Colour())
	if miss < 500 || scr < 500 {
		t.Errorf("class pixels: %d input missing, %d screened; want many of each", miss, scr)
	}
	// cropped to a region: the map's cells span the whole data width of the picture for a
	// smaller box, and cells outside the (non-rectangular in cells) region are not shown
	full := dataBox(img, Viridis().At(0.5))
	opt.Region = &summary.Region{LatMin: -25, LatMax: -15, LonMin: -90, LonMax: -80}
	buf.Reset()
	if err := Map(&buf, s, f, opt); err != nil {
		t.Fatal(err)
	}
	img2 := decode(t, buf.Bytes(), DefaultWidth, DefaultHeight)
	crop := dataBox(img2, Viridis().At(0.5))
	save(t, "map_region_classes.png", buf.Bytes())
	// 10° x 10° instead of 30° x 20°: drawn taller than the full map's 20° of latitude
	if !(crop.Dy() > full.Dy()*9/10) || crop.Dx() > crop.Dy()*11/10 {
		t.Errorf("region map cells %v (full map %v); want a square map filling the height", crop, full)
	}
	if _, n := census(img2, Screened.Colour()); n > 300 { // only the legend swatch
		t.Errorf("%d screened pixels in a region without screened cells", n)
	}
	if err := Map(&buf, s, f, MapOptions{Region: &summary.Region{LatMin: 10, LatMax: 20, LonMin: 0, LonMax: 10}}); err == nil {
		t.Error("a region outside the data drew a map")
	}
	if err := Map(&buf, s, f, MapOptions{NoData: classes[:5]}); err == nil {
		t.Error("NoData of the wrong length accepted")
	}
}

// TestStyleDeclared: the colour scale and limits come from microphys.OutputDecls, the
// user's --range replaces them, undeclared variables keep the automatic range.
func TestStyleDeclared(t *testing.T) {
	var o MapOptions
	if !Style("droplet_number", "m-3", nil, &o) || !o.Log || o.Min != 10 || o.Max != 1000 || o.Units != "cm-3" || o.Scale != 1e-6 {
		t.Errorf("droplet_number: %+v; want the declared log 10..1000 cm-3", o)
	}
	for _, d := range microphys.OutputDecls {
		var o MapOptions
		if !Style(d.Name, d.SIUnits, nil, &o) {
			t.Errorf("%s has no declared colour limits", d.Name)
		}
		if o.Log && !(o.Min > 0) {
			t.Errorf("%s: log scale from %g", d.Name, o.Min)
		}
	}
	for _, n := range []string{"droplet_number", "critical_lwp", "cloud_base_drizzle_rate", "surface_drizzle_rate", "column_autoconversion_rate"} {
		if d := microphys.OutputByName(n); !d.MapLog {
			t.Errorf("%s spans decades; want a log scale", n)
		}
	}
	o = MapOptions{}
	if !Style("column_autoconversion_rate", "kg m-2 s-1", Ranges{"column_autoconversion_rate": {Lo: 0, Hi: 5}}, &o) || o.Log || o.Max != 5 || o.Units != "mm day-1" {
		t.Errorf("user range: %+v", o)
	}
	o = MapOptions{}
	if Style("sea_surface_temperature", "K", nil, &o) || o.Max > o.Min {
		t.Errorf("undeclared variable got fixed limits: %+v", o)
	}
	// a declared name in other units (not the processed file's SI) is not styled by the declaration
	o = MapOptions{}
	if Style("droplet_number", "cm-3", nil, &o) {
		t.Errorf("droplet_number in cm-3 took the declaration meant for SI values: %+v", o)
	}
}

// TestLogScaleColours: on the declared log scale 10..1000 cm-3, 100 cm-3 is the middle
// colour and 10 and 1000 the ends.
func TestLogScaleColours(t *testing.T) {
	sc := colourScale{lo: 10, hi: 1000, log: true}
	for _, c := range []struct{ v, f float64 }{{10, 0}, {100, 0.5}, {1000, 1}, {31.6227766, 0.25}} {
		if got := sc.norm(c.v); math.Abs(got-c.f) > 1e-6 {
			t.Errorf("log norm(%g) = %g, want %g", c.v, got, c.f)
		}
	}
	labels := []string{}
	for _, tk := range (logTicks125{}).Ticks(10, 1000) {
		if tk.Label != "" {
			labels = append(labels, tk.Label)
		}
	}
	if strings.Join(labels, " ") != "10 20 50 100 200 500 1000" {
		t.Errorf("log ticks 10..1000: %v", labels)
	}
	if got := tickNumber(10000); got != "10000" {
		t.Errorf("tickNumber(10000) = %q", got)
	}
}

func TestParseRange(t *testing.T) {
	n, r, err := ParseRange("droplet_number=20:500:log")
	if err != nil || n != "droplet_number" || r != (Range{Lo: 20, Hi: 500, Log: true}) {
		t.Errorf("ParseRange = %q %+v %v", n, r, err)
	}
	if _, r, err := ParseRange("drizzle_probability=0:0.5"); err != nil || r.Log || r.Hi != 0.5 {
		t.Errorf("linear range: %+v %v", r, err)
	}
	for _, bad := range []string{"droplet_number", "=1:2", "x=1", "x=1:2:3:4", "x=a:2", "x=5:1", "x=0:10:log", "x=1:10:cubic", "x=1:NaN"} {
		if _, _, err := ParseRange(bad); err == nil || !strings.Contains(err.Error(), "--range") {
			t.Errorf("ParseRange(%q): error %v; want one naming --range", bad, err)
		}
	}
	if _, err := ParseRanges([]string{"x=1:2", "x=3:4"}); err == nil || !strings.Contains(err.Error(), "twice") {
		t.Errorf("a variable given twice: %v", err)
	}
	rs, err := ParseRanges([]string{"a=1:2", "b=1:2"})
	if err != nil || len(rs.Unknown([]string{"a"})) != 1 {
		t.Errorf("Unknown: %v %v", rs, err)
	}
}

// TestDatelineTicks: a map from 170°E to 170°W (x from 170 to 190) gets increasing,
// distinct labels with 180° once; so does the same box seen from -190..-170, and any
// label count.
func TestDatelineTicks(t *testing.T) {
	for _, c := range []struct{ lo, hi float64 }{{170, 190}, {-190, -170}, {160, 200}, {172, 188}, {0, 360}, {-180, 180}} {
		for n := 2; n <= 12; n++ {
			var labels []string
			var vals []float64
			for _, tk := range (degreeTicks{max: n}).Ticks(c.lo, c.hi) {
				if tk.Label != "" {
					labels, vals = append(labels, tk.Label), append(vals, tk.Value)
				}
			}
			if (len(labels) > n && !(c.hi-c.lo >= 360 && len(labels) == 3)) || len(labels) < min(2, n-1) {
				t.Errorf("%g..%g, max %d: %d labels %v", c.lo, c.hi, n, len(labels), labels)
			}
			seen := map[string]bool{}
			for i, l := range labels {
				if seen[l] && !(i == len(labels)-1 && c.hi-c.lo >= 360) { // 0° and 360° at the two ends of a global map
					t.Errorf("%g..%g, max %d: label %q twice in %v", c.lo, c.hi, n, l, labels)
				}
				seen[l] = true
				if i > 0 && !(vals[i] > vals[i-1]) {
					t.Errorf("%g..%g: tick values not increasing: %v", c.lo, c.hi, vals)
				}
			}
		}
	}
	var labels []string
	for _, tk := range (degreeTicks{max: 5}).Ticks(170, 190) {
		if tk.Label != "" {
			labels = append(labels, tk.Label)
		}
	}
	if strings.Join(labels, " ") != "170°E 175°E 180° 175°W 170°W" {
		t.Errorf("170°E..170°W: %v", labels)
	}
}

// TestParamLine: titles name only the parameters an output depends on.
func TestParamLine(t *testing.T) {
	params := map[string]string{"autoconversion": "kk2000", "onset_radius": "14 um", "onset_width": "4 um", "gamma_shape": "4",
		"k_ratio": "0.8", "extinction_efficiency": "2", "adiabatic_fraction": "1", "condensation_rate": "0 g m-3 km-1",
		"default_ctt": "285 K", "default_ctp": "900 hPa", "drizzle_law_a": "0.37", "drizzle_law_b": "1.75", "drizzle_law_c": "1.75"}
	if got := ParamLine("liquid_water_path", params, ""); got != "" {
		t.Errorf("LWP title line %q; the input depends on no parameter", got)
	}
	pop := ParamLine("drizzle_probability", params, "gamma shape from the LWP std. dev.")
	if !strings.Contains(pop, "onset r_e 12–16 µm") || !strings.Contains(pop, "LWP std. dev.") || strings.Contains(pop, "kk2000") || strings.Contains(pop, "gamma shape 4") {
		t.Errorf("POP title line %q", pop)
	}
	if ac := ParamLine("column_autoconversion_rate", params, ""); !strings.Contains(ac, "kk2000") || strings.Contains(ac, "onset") {
		t.Errorf("autoconversion title line %q", ac)
	}
	if ParamLine("lat", params, "") != "" {
		t.Error("a variable that is not an output got a parameter line")
	}
}

func TestIsCoordinate(t *testing.T) {
	for _, c := range []struct {
		name, std, units string
		want             bool
	}{
		{"lat", "", "", true}, {"y", "latitude", "degrees_north", true}, {"glon", "", "degrees_east", true},
		{"nav_lon", "", "degree_E", true}, {"droplet_number", "", "cm-3", false}, {"sza", "solar_zenith_angle", "degree", false},
	} {
		if got := IsCoordinate(c.name, c.std, c.units); got != c.want {
			t.Errorf("IsCoordinate(%q, %q, %q) = %v", c.name, c.std, c.units, got)
		}
	}
}

func ci() bool { return os.Getenv("CI") == "true" }

func pngOf(t *testing.T, img image.Image) []byte {
	t.Helper()
	var b bytes.Buffer
	if err := png.Encode(&b, img); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// TestRegionAcrossDateline: a global grid in -180..180 cropped to 170°E..170°W fills the
// whole 20° x 20° box, cells from both sides of the antimeridian, no gap.
func TestRegionAcrossDateline(t *testing.T) {
	s, f := regularScene(-90, 90, -180, 180, 1, 100e6)
	opt := MapOptions{NoCoast: true, Region: &summary.Region{LatMin: -30, LatMax: -10, LonMin: 170, LonMax: -170}}
	Style(f.Name, f.Units, nil, &opt)
	var buf bytes.Buffer
	if err := Map(&buf, s, f, opt); err != nil {
		t.Fatal(err)
	}
	img := decode(t, buf.Bytes(), DefaultWidth, DefaultHeight)
	box := dataBox(img, Viridis().At(0.5))
	if box.Dx() < 300 || math.Abs(float64(box.Dx())/float64(box.Dy())-1) > 0.05 {
		t.Fatalf("cells cover %v; want a square 20° x 20° map", box)
	}
	want := rgb(Viridis().At(0.5))
	for y := box.Min.Y + 1; y < box.Max.Y-1; y++ { // inside the frame
		for x := box.Min.X + 1; x < box.Max.X-1; x++ {
			if got := rgb(img.At(x, y)); got != want {
				save(t, "map_dateline_region.png", buf.Bytes())
				t.Fatalf("pixel (%d, %d) is %v inside the map %v; want every cell drawn (%v)", x, y, got, box, want)
			}
		}
	}
	save(t, "map_dateline_region.png", buf.Bytes())
}
