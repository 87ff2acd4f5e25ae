package app

import (
	"encoding/json"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/microphys"
)

// shapeFixture is what grid/testdata/shapes.py prints about the input it wrote, read
// back with netCDF4-python (LWP kg m-2 and r_e m in file order, null = missing).
type shapeFixture struct {
	LWP, Re []*float64
	Dims    []string
	Coords  map[string]struct {
		Dims   []string
		Values []float64
	}
	Time []float64
}

// pyOutput is what netCDF4-python reads of a processed file.
type pyOutput struct {
	Dims   map[string][]string
	Coords map[string][]float64
	Time   []float64 // seconds since 1970, from num2date
	Data   map[string][]*float64
}

const pyReadOutput = `
import sys, json, datetime, numpy as np, netCDF4
d = netCDF4.Dataset(sys.argv[1])
out = {"dims": {}, "coords": {}, "time": None, "data": {}}
for n, v in d.variables.items():
    out["dims"][n] = list(v.dimensions)
    if n in sys.argv[2].split(","):
        out["coords"][n] = [float(x) for x in np.ma.filled(v[:].astype("f8"), np.nan).ravel()]
    if n in ("droplet_number", "drizzle_probability", "warm_rain_qc"):
        out["data"][n] = [None if np.ma.is_masked(x) else float(x) for x in v[:].ravel()]
if "time" in d.variables:
    t = d["time"]
    e = datetime.datetime(1970, 1, 1)
    out["time"] = [(x._to_real_datetime() - e).total_seconds() if hasattr(x, "_to_real_datetime") else (datetime.datetime(x.year, x.month, x.day, x.hour, x.minute, x.second, x.microsecond) - e).total_seconds()
                   for x in netCDF4.num2date(t[:], t.units, getattr(t, "calendar", "standard"))]
print(json.dumps(out))
`

func needPython(t *testing.T) string {
	t.Helper()
	py := "/usr/bin/python3"
	if exec.Command(py, "-c", "import xarray, netCDF4").Run() != nil {
		if os.Getenv("CI") == "true" {
			t.Fatal("python3-xarray and python3-netcdf4 are required in CI")
		}
		t.Skip("python3-xarray/netCDF4 not installed")
	}
	return py
}

func pyRun(t *testing.T, py string, args ...string) string {
	t.Helper()
	cmd := exec.Command(py, args...)
	var stderr strings.Builder
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("python %s: %v\n%s", args[0], err, stderr.String())
	}
	return string(out)
}

func writeShape(t *testing.T, py, family, dir string) (string, shapeFixture) {
	t.Helper()
	path := filepath.Join(dir, family+".nc")
	var f shapeFixture
	out := pyRun(t, py, filepath.Join("..", "..", "..", "grid", "testdata", "shapes.py"), family, path)
	if err := json.Unmarshal([]byte(out), &f); err != nil {
		t.Fatalf("%s: %v", family, err)
	}
	return path, f
}

func isScreened(qc uint16) bool {
	for _, w := range microphys.QCNames(qc) {
		if slices.Contains(screenWords, w) {
			return true
		}
	}
	return false
}

var reColumns = regexp.MustCompile(`Columns: (\d+) seen, (\d+) selected .*?, (\d+) valid, `)

// TestShapesEndToEnd runs every column family through inspect, process and summary:
// the output keeps the input's dimensions and coordinates (read by netCDF4-python),
// every column equals microphys on the inputs netCDF4-python decoded, and the summary
// bins exactly the valid columns, with or without maps as the shape allows.
func TestShapesEndToEnd(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	py := needPython(t)
	m, err := microphys.NewModel(microphys.DefaultParams())
	if err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		family   string
		inspect  string // in inspect's layout
		noMaps   string // in summary's stderr, "" when maps are made
		from, to string // a time window of summary ("" = none)
		selected int    // columns the window selects
	}{
		// The second step of the CDO axis: 600 cells.
		{"icon", "cells along ncells", "single horizontal dimension ncells", "2026-07-01T06:00", "2026-07-02", 600},
		{"sites", "cells along loc", "single horizontal dimension loc", "", "", 0},
		// Steps at 3, 6 and 9 h of 9 sites stored as (loc, time).
		{"sites_loc_first", "cells along loc", "single horizontal dimension loc", "2026-07-01T03:00", "2026-07-01T09:01", 27},
		// 720 steps of 2 min read from "decimal hours since midnight": 6 h.
		{"series", "none (a time series at one site)", "time series at one site", "2026-07-01T06:00", "2026-07-01T12:00", 180},
		{"swath", "y = scan, x = pixel", "", "", "", 0},
		{"members", "y = lat, x = lon", "", "", "", 0},
	}
	for _, c := range cases {
		t.Run(c.family, func(t *testing.T) {
			dir := t.TempDir()
			in, f := writeShape(t, py, c.family, dir)
			code, stdout, stderr := runProc(t, "inspect", in)
			if code != 0 || !strings.Contains(stdout, c.inspect) {
				t.Fatalf("inspect exit %d, want %q in:\n%s%s", code, c.inspect, stdout, stderr)
			}
			out := filepath.Join(dir, "out.nc")
			if code, _, stderr := runProc(t, "process", in, "-o", out); code != 0 {
				t.Fatalf("process exit %d: %s", code, stderr)
			}
			var coordNames []string
			for n := range f.Coords {
				coordNames = append(coordNames, n)
			}
			var o pyOutput
			if err := json.Unmarshal([]byte(pyRun(t, py, "-c", pyReadOutput, out, strings.Join(coordNames, ","))), &o); err != nil {
				t.Fatal(err)
			}
			// Dimensions and coordinates kept.
			for _, n := range []string{"droplet_number", "drizzle_probability", qcName} {
				if !slices.Equal(o.Dims[n], f.Dims) {
					t.Errorf("%s has dimensions %v; the input's LWP %v", n, o.Dims[n], f.Dims)
				}
			}
			for n, cv := range f.Coords {
				if n == "time" {
					continue // checked as instants below (CDO's axis is rewritten in CF units)
				}
				got, ok := o.Coords[n]
				if !ok || !slices.Equal(o.Dims[n], cv.Dims) || len(got) != len(cv.Values) {
					t.Errorf("coordinate %s: output dims %v (%d values); input %v (%d values)", n, o.Dims[n], len(got), cv.Dims, len(cv.Values))
					continue
				}
				for i := range got {
					if got[i] != cv.Values[i] && !(math.IsNaN(got[i]) && math.IsNaN(cv.Values[i])) {
						t.Fatalf("coordinate %s[%d] = %v, input %v", n, i, got[i], cv.Values[i])
					}
				}
			}
			if f.Time != nil {
				if len(o.Time) != len(f.Time) {
					t.Fatalf("output time has %d values; input %d", len(o.Time), len(f.Time))
				}
				for i := range f.Time {
					if math.Abs(o.Time[i]-f.Time[i]) > 1e-3 {
						t.Fatalf("output time[%d] = %v s; input %v s (Python datetime)", i, o.Time[i], f.Time[i])
					}
				}
			}
			// Every column against microphys on netCDF4-python's inputs.
			val := func(p *float64) float64 {
				if p == nil {
					return math.NaN()
				}
				return *p
			}
			valid := 0
			for i := range f.LWP {
				inp := microphys.Inputs{LWP: val(f.LWP[i]), Re: val(f.Re[i]), Tau: math.NaN(), CTT: math.NaN(), CTP: math.NaN(), CTH: math.NaN(), LWPStd: math.NaN(), SurfaceRH: math.NaN()}
				var r microphys.Outputs
				m.Column(&inp, &r)
				qc := uint16(val(o.Data[qcName][i]))
				if qc != r.QC {
					t.Fatalf("column %d: QC %v in the file, %v direct", i, microphys.QCNames(qc), microphys.QCNames(r.QC))
				}
				nd, pop := val(o.Data["droplet_number"][i]), val(o.Data["drizzle_probability"][i])
				if !close32(nd, r.Nd*1e-6) || !close32(pop, r.POP) {
					t.Fatalf("column %d: N_d %g POP %g in the file; direct %g %g", i, nd, pop, r.Nd*1e-6, r.POP)
				}
				if !isScreened(r.QC) && inp.LWP > 0 && r.Nd > 0 && !math.IsNaN(r.POP) {
					valid++
				}
			}
			if valid == 0 {
				t.Fatal("no valid column: the fixture tests nothing")
			}
			// Summary: statistics over every column, maps as the shape allows.
			sumNC := filepath.Join(dir, "summary.nc")
			code, stdout, stderr = runProc(t, "summary", out, "-o", sumNC)
			if code != 0 {
				t.Fatalf("summary exit %d: %s", code, stderr)
			}
			mm := reColumns.FindStringSubmatch(stdout)
			if mm == nil {
				t.Fatalf("no column counts in:\n%s", stdout)
			}
			if seen, _ := strconv.Atoi(mm[1]); seen != len(f.LWP) {
				t.Errorf("summary saw %d columns; the input has %d", seen, len(f.LWP))
			}
			if v, _ := strconv.Atoi(mm[3]); v != valid {
				t.Errorf("summary binned %d valid columns; microphys gives %d", v, valid)
			}
			sfi, err := grid.Describe(sumNC)
			if err != nil {
				t.Fatal(err)
			}
			hasMaps := sfi.Var("drizzle_probability_time_mean") != nil
			if c.noMaps != "" {
				if !strings.Contains(stderr, "no maps") || !strings.Contains(stderr, c.noMaps) || hasMaps {
					t.Errorf("want maps skipped because of %q; stderr %q, maps in file %v", c.noMaps, stderr, hasMaps)
				}
			} else if !hasMaps || strings.Contains(stderr, "no maps") {
				t.Errorf("want maps; stderr %q, maps in file %v", stderr, hasMaps)
			}
			if c.from != "" {
				code, stdout, stderr := runProc(t, "summary", out, "--from", c.from, "--to", c.to)
				mm := reColumns.FindStringSubmatch(stdout)
				if code != 0 || mm == nil {
					t.Fatalf("summary --from --to: exit %d: %s", code, stderr)
				}
				if sel, _ := strconv.Atoi(mm[2]); sel != c.selected {
					t.Errorf("the window selects %d columns; want %d", sel, c.selected)
				}
			}
			if c.family == "icon" {
				checkRegion(t, out, f)
			}
			// --grid bins every family with coordinates (meshes and sites too) onto
			// one latitude-longitude grid: every column lands in a cell.
			if c.family != "series" {
				gNC := filepath.Join(dir, "gridded.nc")
				code, _, stderr := runProc(t, "summary", out, "--grid", "5", "-o", gNC)
				if code != 0 || strings.Contains(stderr, "no maps") {
					t.Fatalf("summary --grid: exit %d: %s", code, stderr)
				}
				var n float64
				for _, v := range readVar(t, gNC, "cell_column_count") {
					n += v
				}
				if int(n) != len(f.LWP) {
					t.Errorf("--grid: %g columns in the cells; the input has %d", n, len(f.LWP))
				}
			}
		})
	}
}

// checkRegion: --region selects ICON's cells by their own coordinates, radians read
// as degrees.
func checkRegion(t *testing.T, out string, f shapeFixture) {
	t.Helper()
	lat, lon := f.Coords["clat"].Values, f.Coords["clon"].Values
	inBox := 0
	for i := range lat {
		la, lo := lat[i]*180/math.Pi, lon[i]*180/math.Pi
		if la >= -10 && la <= 10 && lo >= -85 && lo <= -75 {
			inBox++
		}
	}
	if inBox == 0 || inBox == len(lat) {
		t.Fatalf("%d of %d cells in the box: the test selects nothing or everything", inBox, len(lat))
	}
	code, stdout, stderr := runProc(t, "summary", out, "--region", "-10,10,-85,-75")
	mm := reColumns.FindStringSubmatch(stdout)
	if code != 0 || mm == nil {
		t.Fatalf("summary exit %d: %s", code, stderr)
	}
	if sel, _ := strconv.Atoi(mm[2]); sel != 3*inBox {
		t.Errorf("%d columns selected; the box holds %d cells at 3 times", sel, inBox)
	}
}

// TestShapesRefusedEarly: a time axis that cannot be read stops inspect and process,
// naming the file, the variable and the expected units, and nothing is written.
func TestShapesRefusedEarly(t *testing.T) {
	_, err := exec.LookPath("ncgen")
	if err != nil {
		t.Skip("ncgen not installed")
	}
	dir := t.TempDir()
	cdl := filepath.Join(dir, "noday.cdl")
	in := filepath.Join(dir, "noday.nc")
	os.WriteFile(cdl, []byte(`netcdf noday {
dimensions: time = 2 ;
variables:
  double time(time) ; time:units = "decimal hours since midnight" ;
  float lwp(time) ; lwp:units = "g m-2" ;
  float re(time) ; re:units = "um" ;
data: time = 0, 1 ; lwp = 80, 90 ; re = 12, 13 ;
}`), 0o644)
	if b, err := exec.Command("ncgen", "-k", "nc4", "-o", in, cdl).CombinedOutput(); err != nil {
		t.Fatalf("ncgen: %v %s", err, b)
	}
	for _, cmd := range [][]string{{"inspect", in}, {"process", in, "-o", filepath.Join(dir, "out.nc")}} {
		code, _, stderr := runProc(t, cmd...)
		if code == 0 || !strings.Contains(stderr, in) || !strings.Contains(stderr, `"time"`) || !strings.Contains(stderr, "the day is not stated") {
			t.Errorf("%s: exit %d, stderr %q; want a refusal naming the file, time and the missing day", cmd[0], code, stderr)
		}
	}
	if _, err := os.Stat(filepath.Join(dir, "out.nc")); err == nil {
		t.Error("process wrote an output")
	}
}

// TestShapesNoCoordinates: a file without coordinates gives the statistics, says why
// it has no maps, and refuses a region with a clear message.
func TestShapesNoCoordinates(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	if _, err := exec.LookPath("ncgen"); err != nil {
		t.Skip("ncgen not installed")
	}
	dir := t.TempDir()
	cdl := filepath.Join(dir, "bare.cdl")
	bare := filepath.Join(dir, "bare.nc")
	os.WriteFile(cdl, []byte(`netcdf bare {
dimensions: ncells = 4 ;
variables:
  float lwp(ncells) ; lwp:units = "g m-2" ;
  float re(ncells) ; re:units = "um" ;
data: lwp = 60, 120, 240, 30 ; re = 9, 12, 16, 20 ;
}`), 0o644)
	if b, err := exec.Command("ncgen", "-k", "nc4", "-o", bare, cdl).CombinedOutput(); err != nil {
		t.Fatalf("ncgen: %v %s", err, b)
	}
	bareOut := filepath.Join(dir, "bare_out.nc")
	if code, _, stderr := runProc(t, "process", bare, "-o", bareOut); code != 0 {
		t.Fatalf("process: %s", stderr)
	}
	code, stdout, stderr := runProc(t, "summary", bareOut)
	if mm := reColumns.FindStringSubmatch(stdout); code != 0 || mm == nil || mm[1] != "4" || !strings.Contains(stderr, "no maps") {
		t.Errorf("summary of a file without coordinates: exit %d, stdout %q, stderr %q", code, stdout, stderr)
	}
	code, _, stderr = runProc(t, "summary", bareOut, "--region", "-10,10,-85,-75")
	if code == 0 || !strings.Contains(stderr, "latitude and longitude") || !strings.Contains(stderr, bareOut) {
		t.Errorf("--region without coordinates: exit %d, stderr %q", code, stderr)
	}
}

// TestShapesNoLeapCalendar: model output in a noleap calendar is processed and
// summarised; only a time window, which needs Gregorian dates, is refused.
func TestShapesNoLeapCalendar(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	if _, err := exec.LookPath("ncgen"); err != nil {
		t.Skip("ncgen not installed")
	}
	dir := t.TempDir()
	cdl := filepath.Join(dir, "noleap.cdl")
	in := filepath.Join(dir, "noleap.nc")
	os.WriteFile(cdl, []byte(`netcdf noleap {
dimensions: time = 2 ; lat = 2 ; lon = 2 ;
variables:
  double time(time) ; time:units = "days since 2000-01-01" ; time:calendar = "noleap" ;
  float lat(lat) ; lat:units = "degrees_north" ; float lon(lon) ; lon:units = "degrees_east" ;
  float lwp(time, lat, lon) ; lwp:units = "g m-2" ;
  float re(time, lat, lon) ; re:units = "um" ;
data: time = 0, 365 ; lat = 10, 20 ; lon = 30, 40 ;
  lwp = 80, 90, 100, 110, 120, 130, 140, 150 ; re = 12, 13, 14, 15, 16, 17, 18, 19 ;
}`), 0o644)
	if b, err := exec.Command("ncgen", "-k", "nc4", "-o", in, cdl).CombinedOutput(); err != nil {
		t.Fatalf("ncgen: %v %s", err, b)
	}
	out := filepath.Join(dir, "out.nc")
	if code, _, stderr := runProc(t, "process", in, "-o", out); code != 0 {
		t.Fatalf("process: %s", stderr)
	}
	code, stdout, stderr := runProc(t, "summary", out)
	if mm := reColumns.FindStringSubmatch(stdout); code != 0 || mm == nil || mm[1] != "8" {
		t.Fatalf("summary: exit %d, %q %q", code, stdout, stderr)
	}
	// A window in the noleap calendar: day 365 is 2001-01-01 there (no leap day in
	// 2000), so --from 2001-01-01 keeps the second step (4 columns) and
	// --from 2000-12-31 --to 2001-01-01 nothing (in the standard calendar day 365 is
	// 2000-12-31 and would be kept).
	code, stdout, stderr = runProc(t, "summary", out, "--from", "2001-01-01")
	if mm := reColumns.FindStringSubmatch(stdout); code != 0 || mm == nil || mm[2] != "4" {
		t.Errorf("--from 2001-01-01 on a noleap axis: exit %d, %q %q", code, stdout, stderr)
	}
	code, _, stderr = runProc(t, "summary", out, "--from", "2000-12-31", "--to", "2001-01-01")
	if code != 1 || !strings.Contains(stderr, "nothing selected") || !strings.Contains(stderr, "2001-01-01T00:00:00Z (noleap calendar)") {
		t.Errorf("an empty window on a noleap axis: exit %d, %q", code, stderr)
	}
}

// TestSummaryModelCalendars: --from and --to are dates of the file's calendar. Day 365
// after 2000-01-01 is 2001-01-01 in noleap, 2001-01-06 in 360_day (12 months of 30
// days) and 2000-12-31 in all_leap and julian (2000 has a 29 February in both): CF
// conventions §4.4.1 calendars, derived.
func TestSummaryModelCalendars(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	if _, err := exec.LookPath("ncgen"); err != nil {
		t.Skip("ncgen not installed")
	}
	for _, c := range []struct{ cal, day365 string }{
		{"noleap", "2001-01-01"}, {"365_day", "2001-01-01"}, {"360_day", "2001-01-06"}, {"all_leap", "2000-12-31"}, {"julian", "2000-12-31"},
	} {
		dir := t.TempDir()
		cdl := filepath.Join(dir, "m.cdl")
		in := filepath.Join(dir, "m.nc")
		os.WriteFile(cdl, []byte(`netcdf m {
dimensions: time = 2 ; lat = 2 ; lon = 2 ;
variables:
  double time(time) ; time:units = "days since 2000-01-01" ; time:calendar = "`+c.cal+`" ;
  float lat(lat) ; lat:units = "degrees_north" ; float lon(lon) ; lon:units = "degrees_east" ;
  float lwp(time, lat, lon) ; lwp:units = "g m-2" ;
  float re(time, lat, lon) ; re:units = "um" ;
data: time = 0, 365 ; lat = 10, 20 ; lon = 30, 40 ;
  lwp = 80, 90, 100, 110, 120, 130, 140, 150 ; re = 12, 13, 14, 15, 16, 17, 18, 19 ;
}`), 0o644)
		if b, err := exec.Command("ncgen", "-k", "nc4", "-o", in, cdl).CombinedOutput(); err != nil {
			t.Fatalf("ncgen: %v %s", err, b)
		}
		out := filepath.Join(dir, "out.nc")
		if code, _, stderr := runProc(t, "process", in, "-o", out); code != 0 {
			t.Fatalf("%s: process: %s", c.cal, stderr)
		}
		for _, w := range [][]string{{"--from", c.day365}, {"--to", c.day365}} {
			code, stdout, stderr := runProc(t, append([]string{"summary", out}, w...)...)
			if mm := reColumns.FindStringSubmatch(stdout); code != 0 || mm == nil || mm[2] != "4" {
				t.Errorf("%s %v: exit %d, %q %q; want the 4 columns of one step", c.cal, w, code, stdout, stderr)
			}
		}
		sum := filepath.Join(dir, "s.nc")
		if code, _, stderr := runProc(t, "summary", out, "-o", sum); code != 0 {
			t.Fatalf("%s: summary: %s", c.cal, stderr)
		}
		fi, err := grid.Describe(sum)
		if err != nil {
			t.Fatal(err)
		}
		// Without time_bnds the steps reach half-way to each other and half a
		// spacing beyond: 730 days in all, in the file's calendar.
		tb := readVar(t, sum, "time_bnds")
		if cal := fi.Var("time").Text("calendar"); cal != c.cal && !(c.cal == "365_day" && cal == "noleap") || tb[1]-tb[0] != 730*86400 {
			t.Errorf("%s: time calendar %q, bounds %v", c.cal, cal, tb)
		}
	}
}
