package app

import (
	"image"
	"image/color"
	"image/png"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"github.com/warmrain/warmrain/cmd/internal/plots"
	"github.com/warmrain/warmrain/cmd/internal/summary"
	"github.com/warmrain/warmrain/grid"
)

// countColour counts the pixels of the picture that have exactly colour c.
func countColour(t *testing.T, path string, c color.NRGBA) int {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	n := 0
	b := img.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			if color.NRGBAModel.Convert(img.At(x, y)).(color.NRGBA) == c {
				n++
			}
		}
	}
	return n
}

// TestSummaryGridFractionMaps grids one 360_day step (day 59 after 2001-01-01, which
// is 2001-02-30 in that calendar: 12 months of 30 days, CF conventions §4.4.1) of
// five 1° cells of four columns each: A valid, B without LWP (input_missing), C with
// an LWP below --min-lwp (thin cloud), D valid with its POP then removed from the
// processed file (netCDF4), E valid one cell east of an empty cell. The file's
// screened fractions and POP frequency are checked per cell; in the PNG of the POP
// frequency, the cells B, C and D show the classes input missing, screened and no
// value (each a whole cell of pixels, not only its legend swatch); the frequency and
// screened-share maps decode; the titles give the date in the 360_day calendar.
func TestSummaryGridFractionMaps(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	if _, err := exec.LookPath("ncgen"); err != nil {
		skipOrFailMissing(t, "ncgen")
	}
	if exec.Command("/usr/bin/python3", "-c", "import netCDF4, numpy").Run() != nil {
		skipOrFailMissing(t, "/usr/bin/python3 with numpy and netCDF4")
	}
	dir := t.TempDir()
	cdl := filepath.Join(dir, "c.cdl")
	in := filepath.Join(dir, "c.nc")
	// lon: cells 30 (A), 31 (B), 32 (C), 33 (D), 35 (E); 34 has no column.
	lwpRow := "120, 130, _, _, 1, 1, 100, 110, 90, 95"
	reRow := "15, 16, 14, 14, 14, 14, 14, 15, 13, 13"
	if err := os.WriteFile(cdl, []byte(`netcdf c {
dimensions: time = 1 ; lat = 2 ; lon = 10 ;
variables:
  double time(time) ; time:units = "days since 2001-01-01" ; time:calendar = "360_day" ;
  float lat(lat) ; lat:units = "degrees_north" ;
  float lon(lon) ; lon:units = "degrees_east" ;
  float lwp(time, lat, lon) ; lwp:units = "g m-2" ; lwp:_FillValue = -999.f ;
  float re(time, lat, lon) ; re:units = "um" ;
data: time = 59 ; lat = 10.2, 10.7 ;
  lon = 30.2, 30.7, 31.2, 31.7, 32.2, 32.7, 33.2, 33.7, 35.2, 35.7 ;
  lwp = `+lwpRow+", "+lwpRow+` ;
  re = `+reRow+", "+reRow+` ;
}`), 0o644); err != nil {
		t.Fatal(err)
	}
	if b, err := exec.Command("ncgen", "-k", "nc4", "-o", in, cdl).CombinedOutput(); err != nil {
		t.Fatalf("ncgen: %v %s", err, b)
	}
	proc := filepath.Join(dir, "c_warmrain.nc")
	mustRun(t, "process", in, "-o", proc)
	// D: a valid column whose POP is undefined (removed after processing).
	py := `import sys, netCDF4, numpy as np
with netCDF4.Dataset(sys.argv[1], "r+") as d:
    lon = d["lon"][:]
    v = d["drizzle_probability"]
    sel = (lon > 33) & (lon < 34)
    a = v[:]
    a[..., sel] = np.ma.masked
    v[:] = a
`
	if b, err := exec.Command("/usr/bin/python3", "-c", py, proc).CombinedOutput(); err != nil {
		t.Fatalf("python: %v %s", err, b)
	}
	out := filepath.Join(dir, "g.nc")
	pics := filepath.Join(dir, "pics")
	mustRun(t, "summary", proc, "--grid", "1", "-o", out, "--plots", pics)

	v := gridSummaryVars(t, out)
	lon := v["lon"]
	cell := func(l float64) int {
		for j, x := range lon {
			if math.Abs(x-l) < 1e-9 {
				return j // one row of cells
			}
		}
		t.Fatalf("no cell at lon %g in %v", l, lon)
		return -1
	}
	nan := math.NaN()
	for _, c := range []struct {
		name            string
		lon             float64
		cols, scr, freq float64
	}{{"A", 30.5, 4, 0, -1}, {"B", 31.5, 4, 1, nan}, {"C", 32.5, 4, 1, nan}, {"D", 33.5, 4, 0, nan}, {"no columns", 34.5, 0, nan, nan}, {"E", 35.5, 4, 0, -1}} {
		k := cell(c.lon)
		cols, scr, freq := v["cell_column_count"][k], v["screened_fraction"][k], v["drizzle_frequency_pop"][k]
		same := func(a, b float64) bool { return a == b || math.IsNaN(a) && math.IsNaN(b) }
		if cols != c.cols || !same(scr, c.scr) || (c.freq >= 0 || math.IsNaN(c.freq)) && !same(freq, c.freq) || c.freq < 0 && !(freq >= 0 && freq <= 1) {
			t.Errorf("cell %s: columns %g, screened fraction %g, POP frequency %g; want %g, %g, %g (-1: a fraction)", c.name, cols, scr, freq, c.cols, c.scr, c.freq)
		}
	}

	// The pictures: one cell is about 80 px square at the default size; a legend
	// swatch is under 300 px.
	const cellPx = 1500
	pop := filepath.Join(pics, "map_drizzle_frequency_pop.png")
	for _, cl := range []plots.NoData{plots.MissingInput, plots.Screened, plots.NoValue} {
		if n := countColour(t, pop, cl.Colour()); n < cellPx {
			t.Errorf("%s: %d pixels of the class %q, want a cell (>= %d)", pop, n, cl.Label(), cellPx)
		}
	}
	for _, f := range []string{"map_drizzle_frequency_lwp.png", "map_screened_fraction.png", "map_screened_fraction_input_missing.png"} {
		p := filepath.Join(pics, f)
		fh, err := os.Open(p)
		if err != nil {
			t.Errorf("%s: %v", f, err)
			continue
		}
		cfg, _, err := image.DecodeConfig(fh)
		fh.Close()
		if err != nil || cfg.Width < 100 {
			t.Errorf("%s: %v (%d px wide)", f, err, cfg.Width)
		}
	}
	// The screened shares have a value in every cell with columns: no cell of
	// another no-data class than "no columns" (anti-aliased text may hit a class
	// colour in a few pixels).
	scr := filepath.Join(pics, "map_screened_fraction.png")
	for _, cl := range []plots.NoData{plots.MissingInput, plots.Screened, plots.NoValue} {
		if n := countColour(t, scr, cl.Colour()); n >= 300 {
			t.Errorf("%s: %d pixels of the class %q, want no cell of it", scr, n, cl.Label())
		}
	}

	// The title's date, from the summary's own time bounds, in the 360_day calendar.
	fi, err := grid.Describe(out)
	if err != nil {
		t.Fatal(err)
	}
	cal, _ := grid.CalendarKind(fi.Var("time").Text("calendar"))
	tb := readVar(t, out, "time_bnds")
	st := &summaryState{calendar: cal, files: 1}
	got := st.spanText(summary.MapSet{Steps: 1, TimeMin: (tb[0] + tb[1]) / 2, TimeMax: (tb[0] + tb[1]) / 2})
	if want := "2001-02-30 00:00 (360_day calendar) (1 time step)"; got != want {
		t.Errorf("360_day title line %q, want %q", got, want)
	}
	// The table's window, as written, in the file's calendar; 2001-02-30 selects the
	// step and 2001-02-31 is no date of 360_day.
	table := mustRun(t, "summary", proc, "--from", "2001-02-30")
	if want := "Time window: 2001-02-30T00:00:00Z to open (end excluded), dates of the 360_day calendar\n"; !strings.Contains(table, want) || !strings.Contains(table, " 20 selected") {
		t.Errorf("--from 2001-02-30 on a 360_day file: table\n%s\nwant the line %q and 20 selected columns", table, want)
	}
	if code, _, stderr := runCmd("summary", proc, "--from", "2001-02-31"); code != 2 || !strings.Contains(stderr, "2001-02-31: the 360_day calendar has 30 days a month") {
		t.Errorf("--from 2001-02-31 on a 360_day file: exit %d, %s", code, stderr)
	}
}

// TestSpanTextCalendars: the title's dates in each CF calendar (§4.4.1): day 59 after
// 1970-01-01 is 1970-02-30 in 360_day, 03-01 in noleap and in the standard calendar,
// 02-29 in all_leap; day 365 is 1970-12-31 in all_leap, 1971-01-01 in noleap and
// 1971-01-06 in 360_day (derived from the calendars' month lengths); the Julian
// count starts at 1970-01-01 of the Julian calendar.
func TestSpanTextCalendars(t *testing.T) {
	for _, c := range []struct {
		cal      string
		day      int
		from, to string
	}{
		{grid.Cal360, 59, "1970-02-30 06:00", "1970-02-30 06:00 (360_day calendar)"},
		{grid.CalNoLeap, 59, "1970-03-01 06:00", "1970-03-01 06:00 (noleap calendar)"},
		{grid.CalAllLeap, 59, "1970-02-29 06:00", "1970-02-29 06:00 (all_leap calendar)"},
		{grid.CalStandard, 59, "1970-03-01 06:00", "1970-03-01 06:00 UTC"},
		{grid.Cal360, 365, "1971-01-06 06:00", "1971-01-06 06:00 (360_day calendar)"},
		{grid.CalAllLeap, 365, "1970-12-31 06:00", "1970-12-31 06:00 (all_leap calendar)"},
		{grid.CalJulian, 0, "1970-01-01 06:00", "1970-01-01 06:00 (julian calendar)"},
	} {
		s := float64(c.day)*86400 + 6*3600
		st := &summaryState{calendar: c.cal, files: 1}
		one := st.spanText(summary.MapSet{Steps: 1, TimeMin: s, TimeMax: s})
		if !strings.HasPrefix(one, c.to) {
			t.Errorf("%s day %d: %q, want it to start %q", c.cal, c.day, one, c.to)
		}
		two := st.spanText(summary.MapSet{Steps: 2, TimeMin: 0, TimeMax: s})
		if want := c.from[5:]; c.day > 0 && (!strings.Contains(two, " to ") || !strings.Contains(two, want)) {
			t.Errorf("%s: span %q, want it to end at %q", c.cal, two, want)
		}
	}
}
