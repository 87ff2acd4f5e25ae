package app

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/microphys"
)

// columnFromJSON is the part of column --from --json these tests read.
type columnFromJSON struct {
	Source struct {
		Index      map[string]int `json:"index"`
		Lat        *float64       `json:"latitude"`
		Lon        *float64       `json:"longitude"`
		DistanceKm *float64       `json:"distance_km"`
		Time       string         `json:"time"`
	} `json:"source"`
	Diagnostics map[string]*float64 `json:"diagnostics"`
	Errors      map[string]*float64 `json:"standard_errors"`
	QC          qcJSON              `json:"qc"`
	Screening   []screenRule        `json:"screening"`
	NoScreen    string              `json:"no_screen"`
	Collector   *struct {
		ExitRadius float64 `json:"exit_radius_um"`
	} `json:"collector_path"`
}

func runColumnFrom(t *testing.T, args ...string) (columnFromJSON, string) {
	t.Helper()
	code, out, errs := runCmd(append([]string{"column", "--json"}, args...)...)
	if code != ExitOK {
		t.Fatalf("column %v: exit %d: %s", args, code, errs)
	}
	var c columnFromJSON
	if err := json.Unmarshal([]byte(out), &c); err != nil {
		t.Fatalf("column --json is not JSON: %v\n%s", err, out)
	}
	return c, errs
}

// fileValue reads one value of a processed file at index (file dimension order) through
// grid's generic reader (CF decoding: fill and valid_range to NaN, unpacking).
func fileValue(t *testing.T, path, name string, index []int) float64 {
	t.Helper()
	count := make([]int, len(index))
	for i := range count {
		count[i] = 1
	}
	v, _, err := grid.ReadVariableAt(path, name, index, count)
	if err != nil {
		t.Fatal(err)
	}
	return v[0]
}

// sameStored says whether the JSON value (10 significant digits) is the file's value: equal
// as float32 (the file's precision) up to the printing's rounding, or both missing.
func sameStored(got *float64, file float64) bool {
	if got == nil {
		return math.IsNaN(file)
	}
	if math.IsNaN(file) {
		return false
	}
	if float32(*got) == float32(file) {
		return true
	}
	// column --json prints 10 significant digits (jnum): a value within that rounding of
	// the midpoint between two float32 values may round to the other one, so the printed
	// value must lie within half a float32 step of the stored one, plus the printing's
	// half unit (derived).
	f := float32(file)
	step := float64(math.Nextafter32(f, float32(math.Inf(1))) - f)
	return math.Abs(*got-file) <= step/2+5e-10*math.Abs(*got)
}

// compareWithFile checks every diagnostic and the QC of a column --from result against
// the processed file at the same pixel.
func compareWithFile(t *testing.T, c columnFromJSON, processed string, index []int) {
	t.Helper()
	if len(c.Diagnostics) < 15 {
		t.Fatalf("only %d diagnostics", len(c.Diagnostics))
	}
	for name, got := range c.Diagnostics {
		if f := fileValue(t, processed, name, index); !sameStored(got, f) {
			t.Errorf("pixel %v: %s = %v, the processed file holds %g", index, name, val(got), f)
		}
	}
	for name, got := range c.Errors { // the retrieval errors, when the input has standard errors
		if f := fileValue(t, processed, name+seSuffix, index); !sameStored(got, f) {
			t.Errorf("pixel %v: %s standard error %v, the processed file holds %g", index, name, val(got), f)
		}
	}
	if q := fileValue(t, processed, qcName, index); uint32(q) != c.QC.Value {
		t.Errorf("pixel %v: QC %d %v, the processed file holds %d %v", index, c.QC.Value, c.QC.Flags, uint32(q), qcWords(uint32(q)))
	}
}

// column --from prints the numbers process wrote for the pixel (same options: the table
// method process uses by default), for unscreened pixels and for pixels screened in
// different ways, with float32 and with packed outputs (derived: one kernel, one encoder).
func TestColumnFromMatchesProcessedSample(t *testing.T) {
	dir := t.TempDir()
	plain, packed := filepath.Join(dir, "plain.nc"), filepath.Join(dir, "packed.nc")
	for _, c := range [][]string{{"-o", plain}, {"-o", packed, "--pack"}} {
		if code, _, errs := runCmd(append([]string{"process", sampleFile, "-q"}, c...)...); code != ExitOK {
			t.Fatalf("process %v: %s", c, errs)
		}
	}
	// Pick pixels by their QC in the processed file: unscreened ones, and one of each
	// screening flag the sample holds (clear corner, thin fringe, ice-topped patch).
	qc, dims, err := grid.ReadVariable(plain, qcName)
	if err != nil {
		t.Fatal(err)
	}
	ny, nx := dims[1].Len, dims[2].Len
	picked := map[string][]int{}
	for i, q := range qc {
		var key string
		switch w := qcWords(uint32(q)); {
		case math.IsNaN(q):
			continue
		case uint32(q)&(microphys.QCInputScreenMask|uint32(microphys.QCScreenMask)) == 0:
			key = fmt.Sprintf("ok%d", len(picked)%3)
		default:
			key = strings.Join(w, "+")
		}
		if _, ok := picked[key]; !ok && i%7 == 3 {
			picked[key] = []int{i / (ny * nx), i / nx % ny, i % nx}
		}
	}
	screened := 0
	for key, ix := range picked {
		if !strings.HasPrefix(key, "ok") {
			screened++
		}
		// --index is row, column, then time.
		arg := fmt.Sprintf("%d,%d,%d", ix[1], ix[2], ix[0])
		c, _ := runColumnFrom(t, "--from", sampleFile, "--index", arg, "--collector-method", "table")
		compareWithFile(t, c, plain, ix)
		if key == "ok0" || screened == 1 {
			p, _ := runColumnFrom(t, "--from", sampleFile, "--index", arg, "--collector-method", "table", "--pack")
			compareWithFile(t, p, packed, ix)
		}
	}
	// --params-from: the output's own parameters (the table method among them).
	for _, ix := range picked {
		c, _ := runColumnFrom(t, "--from", sampleFile, "--index", fmt.Sprintf("%d,%d,%d", ix[1], ix[2], ix[0]), "--params-from", plain)
		compareWithFile(t, c, plain, ix)
		break
	}
	if screened < 3 || len(picked)-screened < 2 {
		t.Fatalf("picked %v: want at least 3 screened and 2 unscreened pixels", picked)
	}
	// By latitude, longitude and time: the pixel whose centre is nearest.
	c, _ := runColumnFrom(t, "--from", sampleFile, "--lat", "-18.23", "--lon", "-79.42", "--time", "2026-09-22T10:00", "--collector-method", "table")
	ix := []int{c.Source.Index["time"], c.Source.Index["lat"], c.Source.Index["lon"]}
	lat := fileValue(t, sampleFile, "lat", ix[1:2])
	lon := fileValue(t, sampleFile, "lon", ix[2:3])
	if ix[0] != 1 || math.Abs(lat+18.23) > 0.05 || math.Abs(lon+79.42) > 0.05 || c.Source.Time != "2026-09-22T12:00:00Z" {
		t.Errorf("nearest pixel %v at %g, %g, %s; want time 1 and a 0.1-degree cell around -18.23, -79.42", ix, lat, lon, c.Source.Time)
	}
	if d := grid.GreatCircleKm(-18.23, -79.42, lat, lon); !relClose(val(c.Source.DistanceKm), d, 1e-8) {
		t.Errorf("distance %v km, want %g", val(c.Source.DistanceKm), d)
	}
	compareWithFile(t, c, plain, ix)
}

// swathCDL is a small curvilinear swath (2-D latitude and longitude, rotated against the
// meridians), invented values (demo data), with a thin pixel and a cold pixel.
const swathCDL = `netcdf swath {
dimensions:
	along = 3 ;
	across = 4 ;
variables:
	float lat(along, across) ;
		lat:standard_name = "latitude" ;
		lat:units = "degrees_north" ;
	float lon(along, across) ;
		lon:standard_name = "longitude" ;
		lon:units = "degrees_east" ;
	float lwp(along, across) ;
		lwp:standard_name = "atmosphere_mass_content_of_cloud_liquid_water" ;
		lwp:units = "g m-2" ;
		lwp:_FillValue = -1.f ;
		lwp:coordinates = "lat lon" ;
	float re(along, across) ;
		re:standard_name = "effective_radius_of_cloud_liquid_water_particles_at_liquid_water_cloud_top" ;
		re:units = "um" ;
		re:_FillValue = -1.f ;
		re:coordinates = "lat lon" ;
	float ctt(along, across) ;
		ctt:standard_name = "air_temperature_at_cloud_top" ;
		ctt:units = "K" ;
		ctt:_FillValue = -1.f ;
		ctt:coordinates = "lat lon" ;
	float ctp(along, across) ;
		ctp:standard_name = "air_pressure_at_cloud_top" ;
		ctp:units = "hPa" ;
		ctp:_FillValue = -1.f ;
		ctp:coordinates = "lat lon" ;
data:
	lat = -20, -20.1, -20.2, -20.3, -20.4, -20.5, -20.6, -20.7, -20.8, -20.9, -21, -21.1 ;
	lon = -85, -84.6, -84.2, -83.8, -84.9, -84.5, -84.1, -83.7, -84.8, -84.4, -84, -83.6 ;
	lwp = 120, 80, 3, 150, 95, 210, 60, 130, 110, 70, 160, 90 ;
	re = 14, 12, 9, 16, 13, 17, 11, 15, 14, 10, 15, 12 ;
	ctt = 284, 285, 286, 283, 284, 262, 285, 284, 283, 286, 284, 285 ;
	ctp = 880, 890, 900, 870, 880, 600, 900, 880, 870, 900, 880, 890 ;
}
`

// ncgenString compiles CDL text into a netCDF-4 file with the real ncgen.
func ncgenString(t *testing.T, dir, name, cdl string) string {
	t.Helper()
	ncgen := requireTool(t, "ncgen")
	src := filepath.Join(dir, name+".cdl")
	if err := os.WriteFile(src, []byte(cdl), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, name+".nc")
	if b, err := exec.Command(ncgen, "-k", "nc4", "-o", out, src).CombinedOutput(); err != nil {
		t.Fatalf("ncgen: %v\n%s", err, b)
	}
	return out
}

// On a curvilinear swath: the nearest pixel by great-circle distance (checked against
// every pixel), the numbers process writes with direct integration (column's default),
// and the collector path ending at the exit radius of the diagnostics (one integration).
func TestColumnFromSwathDirect(t *testing.T) {
	dir := t.TempDir()
	in := ncgenString(t, dir, "swath", swathCDL)
	processed := filepath.Join(dir, "swath_wr.nc")
	if code, _, errs := runCmd("process", in, "-o", processed, "-q", "--collector-method", "direct"); code != ExitOK {
		t.Fatal(errs)
	}
	lats, _, _ := grid.ReadVariable(in, "lat")
	lons, _, _ := grid.ReadVariable(in, "lon")
	for _, q := range [][2]float64{{-20.45, -84.52}, {-20.02, -84.95}, {-21.2, -83.5}, {-20.68, -84.12}} {
		c, _ := runColumnFrom(t, "--from", in, "--lat", fmt.Sprint(q[0]), "--lon", fmt.Sprint(q[1]))
		best, bd := -1, math.Inf(1)
		for i := range lats {
			if d := grid.GreatCircleKm(q[0], q[1], lats[i], lons[i]); d < bd {
				best, bd = i, d
			}
		}
		ix := []int{c.Source.Index["along"], c.Source.Index["across"]}
		if ix[0]*4+ix[1] != best || !relClose(val(c.Source.DistanceKm), bd, 1e-8) {
			t.Errorf("%v: pixel %v at %v km, want %d at %g km", q, ix, val(c.Source.DistanceKm), best, bd)
		}
		compareWithFile(t, c, processed, ix)
		if c.Collector != nil && float32(c.Collector.ExitRadius) != float32(val(c.Diagnostics["collector_exit_radius"])) {
			t.Errorf("%v: path exit %g um, diagnostics %g um", q, c.Collector.ExitRadius, val(c.Diagnostics["collector_exit_radius"]))
		}
	}
	// The thin pixel (LWP 3 g m-2) and the cold one (262 K) by index.
	thin, _ := runColumnFrom(t, "--from", in, "--index", "0,2")
	compareWithFile(t, thin, processed, []int{0, 2})
	cold, _ := runColumnFrom(t, "--from", in, "--index", "1,1")
	compareWithFile(t, cold, processed, []int{1, 1})
	for _, c := range []struct {
		got  columnFromJSON
		flag string
		rule string
	}{{thin, "thin_cloud", "--min-lwp 5 g m-2"}, {cold, "possible_ice", "--min-ctt 273.15 K"}} {
		found := false
		for _, r := range c.got.Screening {
			if r.Screened && r.Flag == c.flag && strings.Contains(r.Rule, c.rule) {
				found = true
			}
		}
		if !found || !c.got.QC.Screened {
			t.Errorf("%s: screening %+v", c.flag, c.got.Screening)
		}
	}
}

// --no-screen runs a screened column with the thresholds off and says so; the option that
// screened it is named with its value in the units users type.
func TestColumnNoScreen(t *testing.T) {
	code, out, errs := runCmd("column", "--lwp", "3", "--re", "9", "--no-screen")
	if code != ExitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, want := range []string{"SCREENED  LWP at least --min-lwp 5 g m-2", "3 g m-2", "(--no-screen: screening thresholds switched off: --min-lwp 0",
		"adiabatic profile:", "collector drop (integrated directly)"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
	c := runColumnJSON(t, "--lwp", "3", "--re", "9", "--no-screen")
	if g := val(c.Diagnostics["droplet_number"]); !(g > 0) {
		t.Errorf("--no-screen: droplet number %v", g)
	}
	// Without --no-screen: fill values and the hint.
	code, out, _ = runCmd("column", "--lwp", "3", "--re", "9")
	if code != ExitOK || !strings.Contains(out, "--no-screen runs it") || strings.Contains(out, "adiabatic profile:") {
		t.Errorf("screened column without --no-screen:\n%s", out)
	}
}

// --bind with units that cannot be right for the role warns with the range expected: r_e
// declared in mm, and an LWP in g m-2 declared as kg m-2 (which would screen every column).
func TestBindUnitsWarning(t *testing.T) {
	in := ncgenTestdata(t, "inspect_swath")
	for _, c := range []struct {
		bind []string
		want []string
	}{
		{[]string{"--bind", "re=CER:mm"}, []string{"--bind re=CER:mm", "cloud-top effective radius", "1-60 um", "cannot be right"}},
		{[]string{"--bind", "lwp=odd_path:kg m-2"}, []string{"--bind lwp=odd_path:kg m-2", "liquid water path", "1-3000 g m-2", "cannot be right"}},
	} {
		out := filepath.Join(t.TempDir(), "o.nc")
		_, _, errs := runCmd(append([]string{"process", in, "-o", out, "-q", "--no-collector"}, c.bind...)...)
		for _, w := range c.want {
			if !strings.Contains(errs, w) {
				t.Errorf("%v: stderr lacks %q:\n%s", c.bind, w, errs)
			}
		}
		_, _, errs = runCmd(append([]string{"column", "--from", in, "--index", "0,0", "--no-collector"}, c.bind...)...)
		if !strings.Contains(errs, "cannot be right") {
			t.Errorf("column --from %v: no warning:\n%s", c.bind, errs)
		}
	}
	// Right units: no warning.
	out := filepath.Join(t.TempDir(), "o.nc")
	if _, _, errs := runCmd("process", in, "-o", out, "-q", "--no-collector", "--bind", "lwp=odd_path:g m-2"); strings.Contains(errs, "cannot be right") {
		t.Errorf("a warning for right units:\n%s", errs)
	}
}
