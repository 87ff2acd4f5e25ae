package plots

import (
	"bytes"
	"errors"
	"image"
	"image/color"
	"image/png"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"testing"
	"time"

	"github.com/warmrain/warmrain/cmd/internal/summary"
)

func decode(t *testing.T, b []byte, w, h int) image.Image {
	t.Helper()
	img, err := png.Decode(bytes.NewReader(b))
	if err != nil {
		t.Fatalf("PNG does not decode: %v", err)
	}
	if got := img.Bounds(); got.Dx() != w || got.Dy() != h {
		t.Fatalf("PNG is %dx%d, want %dx%d", got.Dx(), got.Dy(), w, h)
	}
	return img
}

func rgb(c color.Color) [3]uint8 {
	r, g, b, _ := c.RGBA()
	return [3]uint8{uint8(r >> 8), uint8(g >> 8), uint8(b >> 8)}
}

// census counts distinct colours and the pixels of one colour.
func census(img image.Image, want color.Color) (distinct, matches int) {
	seen := map[[3]uint8]bool{}
	w := rgb(want)
	b := img.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			c := rgb(img.At(x, y))
			seen[c] = true
			if c == w {
				matches++
			}
		}
	}
	return len(seen), matches
}

func TestMapPNG(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	t.Parallel()
	s, lwp, _ := demoScene()
	filled := lwp
	filled.Data = append([]float64(nil), lwp.Data...)
	for i, v := range filled.Data {
		if math.IsNaN(v) {
			filled.Data[i] = 0.1
		}
	}
	tm := time.Date(2026, 7, 14, 12, 0, 0, 0, time.UTC)
	for _, tc := range []struct {
		name string
		f    summary.Field
		opt  MapOptions
		w, h int
	}{
		{"default size", lwp, MapOptions{Time: tm}, DefaultWidth, DefaultHeight},
		{"custom size, cividis, free aspect", lwp, MapOptions{Width: 640, Height: 480, ColorMap: Cividis(), FreeAspect: true}, 640, 480},
		{"no NaN", filled, MapOptions{}, DefaultWidth, DefaultHeight},
	} {
		var buf bytes.Buffer
		if err := Map(&buf, s, tc.f, tc.opt); err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		img := decode(t, buf.Bytes(), tc.w, tc.h)
		distinct, nodata := census(img, NoDataColor)
		t.Logf("%s: %d distinct colours, %d no-data pixels", tc.name, distinct, nodata)
		// 40 x 40 cells of a smooth field: many distinct colours (the map alone has
		// hundreds; the text and frame add a few grey levels).
		if distinct < 200 {
			t.Errorf("%s: only %d distinct colours", tc.name, distinct)
		}
		// The NaN block is 8 x 5 of 40 x 40 cells (2.5 % of the map, several thousand
		// pixels); without NaN only the legend swatch (14 x 14 px) has the no-data colour.
		if tc.name == "no NaN" {
			if nodata > 400 {
				t.Errorf("%s: %d no-data pixels, want only the swatch", tc.name, nodata)
			}
		} else if nodata < 2000 {
			t.Errorf("%s: %d no-data pixels, want the NaN block painted (> 2000)", tc.name, nodata)
		}
	}
}

func TestMapLogAndUnits(t *testing.T) {
	t.Parallel()
	s, _, rate := demoScene()
	var buf bytes.Buffer
	if err := Map(&buf, s, rate, MapOptions{Log: true, Width: 700, Height: 500}); err != nil {
		t.Fatal(err)
	}
	decode(t, buf.Bytes(), 700, 500)
	if err := Map(&buf, s, rate, MapOptions{Log: true, Min: -1, Max: 1}); err == nil {
		t.Error("log scale with Min <= 0 accepted")
	}
	if k, u := DisplayUnits("kg m-2 s-1"); k != 86400 || u != "mm day-1" {
		t.Errorf("DisplayUnits(kg m-2 s-1) = %v %q", k, u) // 1 kg m-2 of water is 1 mm; 86400 s per day [derived]
	}
	if k, u := DisplayUnits("m"); k != 1 || u != "m" {
		t.Errorf("DisplayUnits(m) = %v %q, want unchanged", k, u)
	}
}

func TestMapGlobalAndSwath(t *testing.T) {
	t.Parallel()
	// global grid in 0..360, 2.5 degrees
	g := summary.Scene{NY: 72, NX: 144, NT: 1}
	for y := 0; y < g.NY; y++ {
		g.Lat = append(g.Lat, -88.75+2.5*float64(y))
	}
	for x := 0; x < g.NX; x++ {
		g.Lon = append(g.Lon, 1.25+2.5*float64(x))
	}
	f := summary.Field{Name: "nd", Units: "m-3", Data: make([]float64, g.NY*g.NX)}
	for i := range f.Data {
		f.Data[i] = 50e6 + 200e6*math.Abs(math.Sin(float64(i)/300))
	}
	var buf bytes.Buffer
	if err := Map(&buf, g, f, MapOptions{}); err != nil {
		t.Fatal(err)
	}
	if d, _ := census(decode(t, buf.Bytes(), DefaultWidth, DefaultHeight), NoDataColor); d < 200 {
		t.Errorf("global map: %d distinct colours", d)
	}
	save(t, "map_global_nd.png", buf.Bytes())

	// a tilted swath across the antimeridian (2-D coordinates), with a NaN stripe
	sw := summary.Scene{NY: 60, NX: 30, NT: 1}
	pop := summary.Field{Name: "pop", Units: "1", LongName: "drizzle probability"}
	for y := 0; y < sw.NY; y++ {
		for x := 0; x < sw.NX; x++ {
			lat := -30 + 0.5*float64(y) + 0.1*float64(x)
			lon := 170 + 0.5*float64(x) + 0.15*float64(y)
			if lon > 180 {
				lon -= 360
			}
			sw.Lat, sw.Lon = append(sw.Lat, lat), append(sw.Lon, lon)
			v := float64(x) / float64(sw.NX)
			if y > 25 && y < 30 {
				v = math.NaN()
			}
			pop.Data = append(pop.Data, v)
		}
	}
	buf.Reset()
	if err := Map(&buf, sw, pop, MapOptions{Params: "swath demo"}); err != nil {
		t.Fatal(err)
	}
	img := decode(t, buf.Bytes(), DefaultWidth, DefaultHeight)
	d, nodata := census(img, NoDataColor)
	if d < 30 || nodata < 1000 {
		t.Errorf("swath map: %d distinct colours, %d no-data pixels", d, nodata)
	}
	save(t, "map_swath_pop.png", buf.Bytes())
}

func TestMapErrors(t *testing.T) {
	t.Parallel()
	s, lwp, _ := demoScene()
	var buf bytes.Buffer
	allNaN := summary.Field{Name: "x", Data: make([]float64, len(lwp.Data))}
	for i := range allNaN.Data {
		allNaN.Data[i] = math.NaN()
	}
	if err := Map(&buf, s, allNaN, MapOptions{}); !errors.Is(err, ErrNoData) {
		t.Errorf("all-NaN field: %v, want ErrNoData", err)
	}
	if err := Map(&buf, s, summary.Field{Name: "short", Data: []float64{1}}, MapOptions{}); err == nil {
		t.Error("short field accepted")
	}
	if err := Map(&buf, s, lwp, MapOptions{Width: 50}); err == nil {
		t.Error("50 px wide picture accepted")
	}
	bad := s
	bad.Lon = append([]float64(nil), s.Lon...)
	bad.Lon[3] = bad.Lon[2]
	if err := Map(&buf, bad, lwp, MapOptions{}); err == nil {
		t.Error("non-monotonic longitudes accepted")
	}
}

// srgbToLstar returns CIE L* of an sRGB colour (IEC 61966-2-1 transfer, D65; CIE 1976 L*) [common practice].
func srgbToLstar(c [3]float64) float64 {
	lin := func(v float64) float64 {
		if v <= 0.04045 {
			return v / 12.92
		}
		return math.Pow((v+0.055)/1.055, 2.4)
	}
	y := 0.2126*lin(c[0]) + 0.7152*lin(c[1]) + 0.0722*lin(c[2])
	if y > 216.0/24389 {
		return 116*math.Cbrt(y) - 16
	}
	return y * 24389 / 27
}

func TestColorMaps(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		m          ColorMap
		first, end color.NRGBA // published end colours, hex, from memory
	}{
		{Viridis(), color.NRGBA{0x44, 0x01, 0x54, 0xff}, color.NRGBA{0xfd, 0xe7, 0x25, 0xff}},
		{Cividis(), color.NRGBA{0x00, 0x22, 0x4e, 0xff}, color.NRGBA{0xfe, 0xe8, 0x38, 0xff}},
	} {
		if got := tc.m.At(0); got != tc.first {
			t.Errorf("%s At(0) = %v, want %v", tc.m.Name, got, tc.first)
		}
		if got := tc.m.At(1); got != tc.end {
			t.Errorf("%s At(1) = %v, want %v", tc.m.Name, got, tc.end)
		}
		if tc.m.At(math.NaN()) != NoDataColor || tc.m.At(-3) != tc.first || tc.m.At(7) != tc.end {
			t.Errorf("%s: NaN or clamping wrong", tc.m.Name)
		}
		// Perceptually uniform sequential maps have lightness rising monotonically
		// (property of viridis and cividis by design).
		prev := -1.0
		for k, c := range tc.m.table {
			l := srgbToLstar(c)
			if l <= prev {
				t.Errorf("%s entry %d: L* %.2f does not rise (previous %.2f)", tc.m.Name, k, l, prev)
			}
			prev = l
			// The no-data grey must not be mistaken for a data colour.
			nd := rgb(NoDataColor)
			d := math.Sqrt(math.Pow(c[0]*255-float64(nd[0]), 2) + math.Pow(c[1]*255-float64(nd[1]), 2) + math.Pow(c[2]*255-float64(nd[2]), 2))
			if d < 60 {
				t.Errorf("%s entry %d is only %.0f (RGB units) from the no-data colour", tc.m.Name, k, d)
			}
		}
	}
	if _, ok := ColorMapByName("jet"); ok {
		t.Error("jet is not offered")
	}
}

// TestGeneratedColourTables reruns the generator (Debian python3-matplotlib) and
// compares its output with the committed zcolormaps.go.
func TestGeneratedColourTables(t *testing.T) {
	t.Parallel()
	py := "/usr/bin/python3"
	if err := exec.Command(py, "-c", "import matplotlib._cm_listed").Run(); err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatalf("python3-matplotlib is required in CI: %v", err)
		}
		t.Skipf("python3-matplotlib not available: %v", err)
	}
	script, err := filepath.Abs("gen_colormaps.py")
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	cmd := exec.Command(py, script)
	cmd.Dir = dir
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("generator failed: %v\n%s", err, out)
	}
	got, err := os.ReadFile(filepath.Join(dir, "zcolormaps.go"))
	if err != nil {
		t.Fatal(err)
	}
	want, err := os.ReadFile("zcolormaps.go")
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, want) {
		t.Error("zcolormaps.go differs from the generator's output; run go generate")
	}
}

func TestCurvesPNG(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	t.Parallel()
	res := demoResult(t, 0)
	var buf bytes.Buffer
	if err := POPCurves(&buf, res, CurveOptions{Width: 800, Height: 500}); err != nil {
		t.Fatal(err)
	}
	if d, _ := census(decode(t, buf.Bytes(), 800, 500), color.White); d < 20 {
		t.Errorf("POP curves: %d distinct colours", d)
	}
	buf.Reset()
	if err := SusceptibilityCurves(&buf, res, CurveOptions{}); err != nil {
		t.Fatal(err)
	}
	if d, _ := census(decode(t, buf.Bytes(), DefaultWidth, DefaultHeight), color.White); d < 20 {
		t.Errorf("susceptibility: %d distinct colours", d)
	}
	if err := POPCurves(&buf, res, CurveOptions{NdBins: []int{99}}); err == nil {
		t.Error("N_d bin 99 accepted")
	}
	// an empty summary has nothing to draw
	a, _ := summary.New(summary.Options{})
	empty := a.Result()
	if err := POPCurves(&buf, empty, CurveOptions{}); !errors.Is(err, ErrNoData) {
		t.Errorf("empty POP curves: %v", err)
	}
	if err := SusceptibilityCurves(&buf, empty, CurveOptions{}); !errors.Is(err, ErrNoData) {
		t.Errorf("empty susceptibility: %v", err)
	}
}

func TestTickLabels(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		v    float64
		lat  bool
		want string
	}{
		{-30, true, "30°S"}, {0, true, "0°"}, {45, true, "45°N"},
		{-150, false, "150°W"}, {210, false, "150°W"}, {180, false, "180°"}, {-180, false, "180°"},
		{20, false, "20°E"}, {360, false, "0°"}, {2.5, false, "2.5°E"},
	} {
		if got := degreeLabel(tc.v, tc.lat); got != tc.want {
			t.Errorf("degreeLabel(%v, %v) = %q, want %q", tc.v, tc.lat, got, tc.want)
		}
	}
	var labels []string
	for _, tk := range (logTicks125{}).Ticks(20, 500) {
		if tk.Label != "" {
			labels = append(labels, tk.Label)
		}
	}
	if got := len(labels); got != 5 || labels[0] != "20" || labels[4] != "500" {
		t.Errorf("log ticks 20..500: %v, want 20 50 100 200 500", labels)
	}
}
