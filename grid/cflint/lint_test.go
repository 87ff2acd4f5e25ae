package cflint

import (
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"testing"

	"github.com/warmrain/warmrain/grid"
)

// inCI reports whether missing tools or data must fail rather than skip.
func inCI() bool { return os.Getenv("CI") == "true" }

func needNcgen(t *testing.T) string {
	t.Helper()
	p, err := exec.LookPath("ncgen")
	if err != nil {
		if inCI() {
			t.Fatal("ncgen (Debian netcdf-bin) is required in CI")
		}
		t.Skip("ncgen not found (install netcdf-bin)")
	}
	return p
}

var (
	tableOnce sync.Once
	table     *Table
	tableErr  error
)

// needTable loads the CF standard name table v83 from $WARMRAIN_CF_TABLE (CI
// provides it); it is never part of the project.
func needTable(t *testing.T) *Table {
	t.Helper()
	tableOnce.Do(func() {
		var p string
		if p, tableErr = FindTable(); tableErr == nil {
			table, tableErr = LoadTable(p)
		}
	})
	if tableErr != nil {
		if inCI() {
			t.Fatalf("CF standard name table required in CI: %v", tableErr)
		}
		t.Skipf("CF standard name table not available: %v", tableErr)
	}
	return table
}

// ncgenCDL compiles CDL text into a netCDF-4 classic-model file in t.TempDir().
func ncgenCDL(t *testing.T, name, cdl string) string {
	t.Helper()
	ncgen := needNcgen(t)
	dir := t.TempDir()
	src := filepath.Join(dir, name+".cdl")
	if err := os.WriteFile(src, []byte(cdl), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, name+".nc")
	if b, err := exec.Command(ncgen, "-k", "nc7", "-o", out, src).CombinedOutput(); err != nil {
		t.Fatalf("ncgen %s: %v\n%s", name, err, b)
	}
	return out
}

func goodCDL(t *testing.T) string {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("testdata", "good.cdl"))
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

func TestTable(t *testing.T) {
	tab := needTable(t)
	if tab.Version != "83" {
		t.Errorf("table version %q, want 83", tab.Version)
	}
	// Values from the v83 table itself (doc/netcdf.md#standard-names lists them).
	for name, want := range map[string]string{
		"atmosphere_mass_content_of_cloud_liquid_water": "kg m-2",
		"atmosphere_cloud_liquid_water_content":         "kg m-2", // alias
		"air_pressure_at_cloud_top":                     "Pa",
		"latitude":                                      "degree_north",
		"time":                                          "s",
	} {
		if got, ok := tab.Lookup(name); !ok || got != want {
			t.Errorf("Lookup(%q) = %q, %v; want %q", name, got, ok, want)
		}
	}
	if _, ok := tab.Lookup("cloud_base_height"); ok {
		t.Error("cloud_base_height should not be in v83 (doc/netcdf.md#standard-names)")
	}
}

func TestGoodFileIsClean(t *testing.T) {
	tab := needTable(t)
	p := ncgenCDL(t, "good", goodCDL(t))
	fs, err := Check(p, Options{Table: tab, Ours: true})
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range fs {
		t.Errorf("unexpected finding: %v", f)
	}
}

// faults are single edits of testdata/good.cdl, each breaking one rule.
var faults = []struct {
	name     string
	rule     string
	old, new string
	also     []string // other rules the edit legitimately breaks
}{
	{"conventions-old", RuleConventions, `"CF-1.13 ACDD-1.3"`, `"CF-1.8 ACDD-1.3"`, nil},
	{"conventions-missing", RuleConventions, `:Conventions = "CF-1.13 ACDD-1.3" ;`, ``, nil},
	{"conventions-no-acdd", RuleACDD, `"CF-1.13 ACDD-1.3"`, `"CF-1.13"`, nil},
	{"history-ctime", RuleHistory, `"2026-12-01T10:00:00Z: warmrain`, `"Tue Dec  1 10:00:00 2026: warmrain`, nil},
	{"history-no-zone", RuleHistory, `\n2026-11-30T09:00:00.5Z:`, `\n2026-11-30 09:00:00:`, nil},
	{"history-missing", RuleHistory, `:history = "2026-12-01T10:00:00Z: warmrain 0.0.0 process in.nc -o out.nc\n2026-11-30T09:00:00.5Z: made by hand" ;`, ``, nil},
	{"standard-name-invented", RuleStandardName, `"air_pressure_at_cloud_top"`, `"cloud_top_pressure_of_air"`, nil},
	{"standard-name-base-height", RuleStandardName, `"air_pressure_at_cloud_top"`, `"cloud_base_height"`, nil},
	{"modifier-unknown", RuleModifier, `cloud_top standard_error"`, `cloud_top uncertainty"`, nil},
	{"modifier-extra-word", RuleModifier, `cloud_top standard_error"`, `cloud_top standard_error extra"`, nil},
	{"canonical-wrong", RuleCanonical, `ctp:units = "hPa"`, `ctp:units = "K"`, nil},
	{"canonical-modifier", RuleCanonical, `nd_standard_error:units = "m-3"`, `nd_standard_error:units = "m-2"`, nil},
	{"canonical-missing-units", RuleCanonical, `lwp:units = "g m-2" ;`, ``, nil},
	{"canonical-latitude", RuleCanonical, `lat:units = "degrees_north"`, `lat:units = "degrees"`, nil},
	{"units-mb", RuleUnitsMb, `ctp:units = "hPa"`, `ctp:units = "mb"`, []string{RuleCanonical}},
	{"units-unparsable", RuleUnitsParse, `drizzle_probability:units = "1"`, `drizzle_probability:units = "probability"`, nil},
	{"units-blank", RuleUnitsParse, `drizzle_probability:units = "1"`, `drizzle_probability:units = " "`, nil},
	{"time-after", RuleTimeUnits, `"seconds since 1970-01-01 00:00:00"`, `"seconds after 1970-01-01 00:00:00"`, []string{RuleUnitsParse, RuleCanonical}},
	{"time-month-13", RuleTimeUnits, `"seconds since 1970-01-01 00:00:00"`, `"seconds since 1970-13-01 00:00:00"`, []string{RuleUnitsParse, RuleCanonical}},
	{"time-not-time", RuleTimeUnits, `"seconds since 1970-01-01 00:00:00"`, `"metres since 1970-01-01 00:00:00"`, []string{RuleCanonical, RuleUnitsParse}},
	{"time-no-units", RuleTimeUnits, `time:units = "seconds since 1970-01-01 00:00:00" ;`, ``, []string{RuleCanonical}},
	// ncgen converts _FillValue to the variable's type and refuses vectors,
	// so those faults are tested in memory (TestFillValueInMemory).
	{"missing-value-double", RuleAttrType, `nd:_FillValue = -999.f ;`, `nd:_FillValue = -999.f ; nd:missing_value = -999. ;`, nil},
	{"valid-range-unpacked", RuleAttrType, `lwp:valid_range = 0s, 30000s`, `lwp:valid_range = 0.f, 3000.f`, nil},
	{"valid-min-type", RuleAttrType, `nd:valid_min = 0.f`, `nd:valid_min = 0`, nil},
	{"flag-masks-type", RuleAttrType, `flag_masks = 1b, 2b, 4b, 8b`, `flag_masks = 1s, 2s, 4s, 8s`, nil},
	{"flag-values-type", RuleAttrType, `flag_values = 0b, 1b, 2b`, `flag_values = 0, 1, 2`, nil},
	{"text-units-number", RuleTextAttr, `ctt:units = "K"`, `ctt:units = 1`, []string{RuleCanonical, RuleUnitsMeta}},
	{"valid-range-three", RuleValidRange, `valid_range = 0.f, 1.f`, `valid_range = 0.f, 0.5f, 1.f`, nil},
	{"valid-range-reversed", RuleValidRange, `valid_range = 0.f, 1.f`, `valid_range = 1.f, 0.f`, nil},
	{"valid-range-and-min", RuleValidRange, `valid_range = 0.f, 1.f ;`, `valid_range = 0.f, 1.f ; drizzle_probability:valid_min = 0.f ;`, nil},
	{"valid-min-above-max", RuleValidRange, `nd:valid_min = 0.f`, `nd:valid_min = 6000.f`, nil},
	{"flag-values-count", RuleFlagMeanings, `"clear_sky liquid ice"`, `"clear_sky liquid"`, nil},
	{"flag-masks-count", RuleFlagMeanings, `flag_masks = 1b, 2b, 4b, 8b`, `flag_masks = 1b, 2b, 4b, 8b, 16b`, nil},
	{"flag-phrase-blank", RuleFlagMeanings, `"clear_sky liquid ice"`, `"clear sky liquid ice"`, nil},
	{"flag-meanings-alone", RuleFlagMeanings, `phase:flag_values = 0b, 1b, 2b ;`, ``, nil},
	{"flag-values-alone", RuleFlagMeanings, `phase:flag_meanings = "clear_sky liquid ice" ;`, ``, nil},
	{"flag-word-chars", RuleFlagWords, `"clear_sky liquid ice"`, `"clear_sky liquid ice/mixed"`, nil},
	{"ref-ancillary", RuleReference, `"nd_standard_error warm_cloud_qc"`, `"nd_standard_error nd_qc"`, nil},
	{"ref-coordinates", RuleReference, `"swath_lat swath_lon"`, `"swath_lat longitude"`, nil},
	{"ref-bounds", RuleReference, `lat:bounds = "lat_bnds"`, `lat:bounds = "latitude_bounds"`, nil},
	{"ref-grid-mapping", RuleReference, `lwp:grid_mapping = "crs"`, `lwp:grid_mapping = "crs_wgs84"`, nil},
	{"ref-grid-mapping-no-name", RuleReference, `crs:grid_mapping_name = "latitude_longitude" ;`, `crs:long_name = "grid" ;`, nil},
	{"ref-grid-mapping-extended", RuleReference, `"crs: lat lon"`, `"crs: lat longitude"`, nil},
	{"ref-ancillary-dims", RuleRefDims, `nd:ancillary_variables = "nd_standard_error warm_cloud_qc"`, `nd:ancillary_variables = "nd_standard_error warm_cloud_qc swath_re"`, nil},
	{"ref-coordinates-dims", RuleRefDims, `swath_re:coordinates = "swath_lat swath_lon"`, `swath_re:coordinates = "swath_lat swath_lon lat"`, nil},
	{"cell-methods-method", RuleCellMethods, `nd:cell_methods = "time: point"`, `nd:cell_methods = "time: average"`, nil},
	{"cell-methods-name", RuleCellMethods, `nd:cell_methods = "time: point"`, `nd:cell_methods = "day: point"`, nil},
	{"cell-methods-no-method", RuleCellMethods, `nd:cell_methods = "time: point"`, `nd:cell_methods = "time: point lat:"`, nil},
	{"cell-methods-no-name", RuleCellMethods, `nd:cell_methods = "time: point"`, `nd:cell_methods = "mean"`, nil},
	{"cell-methods-paren", RuleCellMethods, `nd:cell_methods = "time: point"`, `nd:cell_methods = "time: mean (interval: 1 hr"`, nil},
	{"units-metadata-value", RuleUnitsMeta, `"temperature: on_scale"`, `"temperature: absolute"`, nil},
	{"units-metadata-not-temperature", RuleUnitsMeta, `ctp:units = "hPa" ;`, `ctp:units = "hPa" ; ctp:units_metadata = "temperature: on_scale" ;`, nil},
	{"bounds-dims-order", RuleBoundsShape, `double lat_bnds(lat, nv)`, `double lat_bnds(nv, lat)`, nil},
	{"bounds-missing-dim", RuleBoundsShape, `double lon_bnds(lon, nv)`, `double lon_bnds(lon)`, nil},
	{"bounds-2d-two-vertices", RuleBoundsShape, `swath_lat_bnds(y, x, nv4)`, `swath_lat_bnds(y, x, nv)`, nil},
	{"bounds-1d-four-vertices", RuleBoundsShape, `double time_bnds(time, nv)`, `double time_bnds(time, nv4)`, nil},
	{"packing-mixed-types", RulePacking, `lwp:add_offset = 0.f`, `lwp:add_offset = 0.`, nil},
	{"packing-integer-scale", RulePacking, `lwp:scale_factor = 0.1f ; lwp:add_offset = 0.f ;`, `lwp:scale_factor = 1s ; lwp:add_offset = 0s ;`, nil},
}

func TestFaultsCaught(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	tab := needTable(t)
	good := goodCDL(t)
	// normalise the two packing lines onto one so the edit above applies
	good2 := strings.Replace(good, "lwp:scale_factor = 0.1f ;\n\t\tlwp:add_offset = 0.f ;", "lwp:scale_factor = 0.1f ; lwp:add_offset = 0.f ;", 1)
	for _, c := range faults {
		t.Run(c.name, func(t *testing.T) {
			if _, ok := RuleByID(c.rule); !ok {
				t.Fatalf("rule %q not in Rules", c.rule)
			}
			if !strings.Contains(good2, c.old) {
				t.Fatalf("edit %q not found in good.cdl", c.old)
			}
			p := ncgenCDL(t, c.name, strings.Replace(good2, c.old, c.new, 1))
			fs, err := Check(p, Options{Table: tab, Ours: true})
			if err != nil {
				t.Fatal(err)
			}
			caught := false
			for _, f := range fs {
				switch {
				case f.Rule == c.rule && f.Severity == Error:
					caught = true
					t.Log(f)
				case !hasWord(c.also, f.Rule):
					t.Errorf("unexpected finding: %v", f)
				}
			}
			if !caught {
				t.Errorf("fault %s not caught as %s; findings: %v", c.name, c.rule, fs)
			}
		})
	}
}

// TestEveryRuleHasAFault keeps the rule table and the fault table in step.
func TestEveryRuleHasAFault(t *testing.T) {
	for _, r := range Rules {
		if r.Severity == Info {
			continue
		}
		n := 0
		for _, c := range faults {
			if c.rule == r.ID {
				n++
			}
		}
		if n == 0 {
			t.Errorf("rule %s has no fault case", r.ID)
		}
	}
}

// TestForeignHistoryIsWarning: without Options.Ours a free-form history
// line is only a warning, and ACDD is not required.
func TestForeignHistoryIsWarning(t *testing.T) {
	tab := needTable(t)
	cdl := strings.Replace(goodCDL(t), `"2026-12-01T10:00:00Z: warmrain`, `"Tue Dec  1 10:00:00 2026: warmrain`, 1)
	cdl = strings.Replace(cdl, `"CF-1.13 ACDD-1.3"`, `"CF-1.13"`, 1)
	fs, err := Check(ncgenCDL(t, "foreign", cdl), Options{Table: tab})
	if err != nil {
		t.Fatal(err)
	}
	if len(fs) != 1 || fs[0].Rule != RuleHistory || fs[0].Severity != Warning {
		t.Errorf("findings %v, want one history warning", fs)
	}
}

func TestNoTableIsInfo(t *testing.T) {
	cdl := strings.Replace(goodCDL(t), `"air_pressure_at_cloud_top"`, `"cloud_top_pressure_of_air"`, 1)
	fs, err := Check(ncgenCDL(t, "notable", cdl), Options{Ours: true})
	if err != nil {
		t.Fatal(err)
	}
	if len(fs) != 1 || fs[0].Rule != RuleNoTable || fs[0].Severity != Info {
		t.Errorf("findings %v, want only the no-table note", fs)
	}
}

func TestCheckMissingFile(t *testing.T) {
	p := filepath.Join(t.TempDir(), "absent.nc")
	if _, err := Check(p, Options{}); err == nil || !strings.Contains(err.Error(), "absent.nc") {
		t.Errorf("error %v does not name the file", err)
	}
}

// TestSamplePasses lints the committed demo sample (samples/data) as one of
// our own files: zero errors and zero warnings.
func TestSamplePasses(t *testing.T) {
	tab := needTable(t)
	p := filepath.Join("..", "..", "samples", "data", "stratocumulus_demo.nc")
	if _, err := os.Stat(p); err != nil {
		t.Fatalf("sample missing: %v", err)
	}
	fs, err := Check(p, Options{Table: tab, Ours: true})
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range fs {
		t.Errorf("sample: %v", f)
	}
}

func TestFindTableEnv(t *testing.T) {
	t.Setenv(EnvTable, filepath.Join(t.TempDir(), "none.xml.gz"))
	if _, err := FindTable(); !errors.Is(err, ErrNoTable) {
		t.Errorf("FindTable with a missing $%s: %v, want ErrNoTable", EnvTable, err)
	}
}

func TestHistoryLine(t *testing.T) {
	for _, c := range []struct {
		line string
		ok   bool
	}{
		{"2026-12-01T00:00:00Z: gensample", true},
		{"2026-12-01T00:00:00.123Z warmrain process", true},
		{"2026-12-01T00:00:00Z", true},
		{"2026-12-01T00:00:00+00:00: x", false}, // we write Z
		{"2026-12-01 00:00:00Z: x", false},
		{"2026-13-01T00:00:00Z: x", false},
		{"2026-12-01T24:00:00Z: x", false},
		{"Tue Dec  1 00:00:00 2026: ncks", false},
		{"", false},
	} {
		if got := historyLine.MatchString(c.line); got != c.ok {
			t.Errorf("history line %q: %v, want %v", c.line, got, c.ok)
		}
	}
}

// TestFillValueInMemory covers the _FillValue faults ncgen cannot build: a
// description as grid.Describe would give for a file written by another tool.
func TestFillValueInMemory(t *testing.T) {
	mk := func(fill grid.Attr) *grid.FileInfo {
		return &grid.FileInfo{
			Globals: []grid.Attr{{Name: "Conventions", Type: grid.Char, Value: "CF-1.13"}},
			Vars: []grid.VarInfo{{Name: "nd", Type: grid.Float, Dims: []string{"x"}, Shape: []int{3},
				Attrs: []grid.Attr{fill, {Name: "long_name", Type: grid.Char, Value: "n"}}}},
		}
	}
	for _, c := range []struct {
		fill grid.Attr
		bad  bool
	}{
		{grid.Attr{Name: "_FillValue", Type: grid.Float, Value: []float32{-999}}, false},
		{grid.Attr{Name: "_FillValue", Type: grid.Double, Value: []float64{-999}}, true},
		{grid.Attr{Name: "_FillValue", Type: grid.Float, Value: []float32{-999, -998}}, true},
		{grid.Attr{Name: "_FillValue", Type: grid.String, Value: []string{"-999"}}, true},
	} {
		fs := Errors(CheckInfo(mk(c.fill), Options{}))
		if got := len(fs) > 0; got != c.bad {
			t.Errorf("_FillValue %v (%v): findings %v", c.fill, c.fill.Type, fs)
		}
		for _, f := range fs {
			if f.Rule != RuleAttrType {
				t.Errorf("unexpected finding %v", f)
			}
		}
	}
}

func TestCellMethodsForms(t *testing.T) {
	tab := needTable(t)
	fi := &grid.FileInfo{
		Globals: []grid.Attr{{Name: "Conventions", Type: grid.Char, Value: "CF-1.13"}},
		Vars: []grid.VarInfo{
			{Name: "lat", Type: grid.Double, Dims: []string{"lat"}, Shape: []int{2}},
			{Name: "v", Type: grid.Float, Dims: []string{"time", "lat", "lon"}, Shape: []int{1, 2, 2}},
		},
	}
	for _, c := range []struct {
		cm string
		ok bool
	}{
		// forms from CF 1.13 §7.3 and Appendix E
		{"time: point", true},
		{"time: mean area: mean where cloud", true},
		{"lat: lon: mean", true},
		{"time: mean (interval: 1 hr comment: sampled hourly)", true},
		{"time: maximum within days time: mean over days", true},
		{"area: standard_deviation where cloud", true},
		{"air_temperature: mean", true}, // a standard name
		{"time: mean where", false},
		{"time: middle", false},
		{"cloud: mean", false},
		{"time:", false},
	} {
		fi.Vars[1].Attrs = []grid.Attr{{Name: "cell_methods", Type: grid.Char, Value: c.cm}}
		fs := Errors(CheckInfo(fi, Options{Table: tab}))
		if got := len(fs) == 0; got != c.ok {
			t.Errorf("cell_methods %q: findings %v, want ok=%v", c.cm, fs, c.ok)
		}
	}
}
