package app

import (
	"encoding/json"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/microphys"
)

// Product families read end to end: each fixture is written here with the real tools
// (netCDF4-python, xarray, ncgen) in the product's own packing and flag conventions,
// decoded independently by netCDF4-python, processed by warmrain, and a few columns are
// recomputed with microphys directly. The scenes are invented test data.

const py3 = "/usr/bin/python3"

// pyWrite runs a Python script (argv[1] = output file, argv[2] = a JSON file for the
// script's independent decoding) and returns the decoded reference arrays.
func pyWrite(t *testing.T, script, out string) map[string][]float64 {
	t.Helper()
	if exec.Command(py3, "-c", "import netCDF4, numpy, xarray").Run() != nil {
		skipOrFailMissing(t, "python3-netcdf4/xarray")
	}
	ref := out + ".json"
	full := "import sys, json, numpy as np, netCDF4\n" + script + `
def dump(names):
    d = netCDF4.Dataset(sys.argv[1])
    r = {}
    for n in names:
        v = d[n]
        v.set_auto_maskandscale(True)
        a = np.ma.asarray(v[...]).astype("float64").filled(np.nan).ravel()
        r[n] = [None if np.isnan(x) else float(x) for x in a]
        v.set_auto_maskandscale(False)
        r[n + ".raw"] = [float(x) for x in np.asarray(v[...]).ravel()]
    json.dump(r, open(sys.argv[2], "w"))
dump(DUMP)
`
	if b, err := exec.Command(py3, "-c", full, out, ref).CombinedOutput(); err != nil {
		t.Fatalf("python writer: %v\n%s", err, b)
	}
	b, err := os.ReadFile(ref)
	if err != nil {
		t.Fatal(err)
	}
	var raw map[string][]*float64
	if err := json.Unmarshal(b, &raw); err != nil {
		t.Fatal(err)
	}
	m := map[string][]float64{}
	for k, v := range raw {
		m[k] = make([]float64, len(v))
		for i, x := range v {
			m[k][i] = math.NaN()
			if x != nil {
				m[k][i] = *x
			}
		}
	}
	return m
}

func nanInputs() microphys.Inputs {
	n := math.NaN()
	return microphys.Inputs{LWP: n, Re: n, Tau: n, CTT: n, CTP: n, CTH: n, LWPStd: n, SurfaceRH: n}
}

// productGrids reads every output variable on the grid (the QC variable's dimensions),
// decoded (fill -> NaN).
func productGrids(t *testing.T, path string) map[string][]float64 {
	t.Helper()
	fi, err := grid.Describe(path)
	if err != nil {
		t.Fatal(err)
	}
	m := map[string][]float64{}
	dims := strings.Join(fi.Var(qcName).Dims, ",")
	for _, v := range fi.Vars {
		if strings.Join(v.Dims, ",") != dims {
			continue
		}
		d, _, err := grid.ReadVariable(path, v.Name)
		if err != nil {
			t.Fatal(err)
		}
		m[v.Name] = d
	}
	return m
}

// qcOf reads the written QC flag of column i (32 bits).
func qcOf(g map[string][]float64, i int) uint32 { return uint32(g[qcName][i]) }

func qcNames32(q uint32) []string {
	return append(microphys.QCNames(uint16(q)), microphys.InputQCNames(q)...)
}

// column computes one column with microphys directly (completion, then Column).
func column(t *testing.T, m *microphys.Model, in microphys.Inputs, nd, cf float64, gridMean bool) (microphys.Outputs, uint32, microphys.Inputs) {
	t.Helper()
	var o microphys.Outputs
	q := m.Complete(&in, nd, cf, gridMean)
	if q&(microphys.QCInputScreenMask|uint32(microphys.QCScreenMask)) != 0 {
		return o, q, in
	}
	m.Column(&in, &o)
	return o, q | uint32(o.QC), in
}

// TestProductSwathQuality: an imager swath whose LWP holds flag codes inside its valid
// range (sea ice, land), a separate quality flag, a solar zenith angle, a cloud phase and a
// multi-layer flag, the CF way (flag_values/flag_meanings). Every screened column carries
// the bit of what removed it; the others equal netCDF4-python's decoding and microphys.
func TestProductSwathQuality(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	dir := t.TempDir()
	in := filepath.Join(dir, "swath_l2.nc")
	ref := pyWrite(t, `
ny, nx = 6, 8
d = netCDF4.Dataset(sys.argv[1], "w")
d.createDimension("along", ny); d.createDimension("across", nx)
y, x = np.meshgrid(np.arange(ny), np.arange(nx), indexing="ij")
lat = d.createVariable("lat", "f4", ("along", "across")); lat.standard_name = "latitude"; lat.units = "degrees_north"; lat[:] = -25 + 0.1 * y
lon = d.createVariable("lon", "f4", ("along", "across")); lon.standard_name = "longitude"; lon.units = "degrees_east"; lon[:] = -85 + 0.1 * x
lwp = d.createVariable("lwp", "i2", ("along", "across"), fill_value=np.int16(-32768))
lwp.set_auto_maskandscale(False)
lwp.standard_name = "atmosphere_mass_content_of_cloud_liquid_water"; lwp.units = "g m-2"
lwp.scale_factor = np.float32(0.1); lwp.add_offset = np.float32(0)
lwp.valid_range = np.array([0, 32767], "i2")
lwp.flag_values = np.array([32001, 32002], "i2"); lwp.flag_meanings = "sea_ice land"
lwp.coordinates = "lat lon"
raw = (400 + 100 * x + 37 * y).astype("i2")      # 40 to 128 g m-2
raw[0, 0] = 32001; raw[0, 1] = 32001; raw[5, 7] = 32002; raw[3, 3] = 32002; raw[2, 6] = -32768
lwp[:] = raw
cer = d.createVariable("cer", "f4", ("along", "across"), fill_value=np.float32(-999))
cer.standard_name = "effective_radius_of_cloud_liquid_water_particles_at_liquid_water_cloud_top"; cer.units = "um"
cer[:] = 9 + 0.8 * x + 0.3 * y
ctt = d.createVariable("ctt", "f4", ("along", "across")); ctt.units = "K"; ctt[:] = 288 - 0.4 * x
qa = d.createVariable("qa", "i1", ("along", "across")); qa.standard_name = "quality_flag"
qa.flag_values = np.array([0, 1, 2, 3], "i1"); qa.flag_meanings = "no_confidence marginal good very_good"
q = np.full((ny, nx), 3, "i1"); q[1, 2] = 0; q[4, 5] = 1; q[1, 3] = 2
qa[:] = q
sza = d.createVariable("sza", "f4", ("along", "across")); sza.standard_name = "solar_zenith_angle"; sza.units = "degree"
s = 30 + 2.0 * x; s[5, :] = 70; sza[:] = s
ph = d.createVariable("cloud_phase", "i1", ("along", "across"))
ph.standard_name = "thermodynamic_phase_of_cloud_water_particles_at_cloud_top"
ph.flag_values = np.array([1, 2, 3, 4], "i1"); ph.flag_meanings = "liquid ice mixed unknown"
p = np.ones((ny, nx), "i1"); p[2, 2] = 2; p[3, 5] = 3; ph[:] = p
ml = d.createVariable("cloud_multi_layer_flag", "i1", ("along", "across"))
ml.flag_values = np.array([0, 1], "i1"); ml.flag_meanings = "single_layer multi_layer"
mm = np.zeros((ny, nx), "i1"); mm[4, 1] = 1; ml[:] = mm
d.close()
DUMP = ["lwp", "cer", "ctt", "qa", "sza", "cloud_phase", "cloud_multi_layer_flag"]
`, in)

	// inspect counts each mask and each flag code.
	code, stdout, stderr := runCmd("inspect", in, "--json", "--mask", "qa:no_confidence,marginal", "--mask", "sza>65")
	if code != ExitOK {
		t.Fatalf("inspect: exit %d\n%s", code, stderr)
	}
	var rep inspectReport
	if err := json.Unmarshal([]byte(stdout), &rep); err != nil {
		t.Fatal(err)
	}
	count := func(name string, f func(i int) bool) int64 {
		n := int64(0)
		for i := range ref[name] {
			if f(i) {
				n++
			}
		}
		return n
	}
	raw := ref["lwp.raw"]
	wantMasks := map[string]int64{
		"qa:no_confidence,marginal":            count("qa.raw", func(i int) bool { return ref["qa.raw"][i] <= 1 }),
		"sza>65":                               count("sza", func(i int) bool { return ref["sza"][i] > 65 }),
		"phase not liquid (cloud_phase)":       count("cloud_phase.raw", func(i int) bool { return ref["cloud_phase.raw"][i] != 1 }),
		"multi-layer (cloud_multi_layer_flag)": count("cloud_multi_layer_flag.raw", func(i int) bool { return ref["cloud_multi_layer_flag.raw"][i] == 1 }),
	}
	if rep.Quality == nil || len(rep.Quality.Masks) != len(wantMasks) {
		t.Fatalf("inspect quality %+v", rep.Quality)
	}
	for _, m := range rep.Quality.Masks {
		if want, ok := wantMasks[m.Mask]; !ok || m.Columns != want || want == 0 {
			t.Errorf("inspect mask %q: %d columns, want %d", m.Mask, m.Columns, want)
		}
	}
	var lwpRole *roleReport
	for k := range rep.Roles {
		if rep.Roles[k].Role == "lwp" {
			lwpRole = &rep.Roles[k]
		}
	}
	wantCodes := []string{
		"sea_ice: " + strconv.FormatInt(count("lwp.raw", func(i int) bool { return raw[i] == 32001 }), 10),
		"land: " + strconv.FormatInt(count("lwp.raw", func(i int) bool { return raw[i] == 32002 }), 10),
	}
	if lwpRole == nil || strings.Join(lwpRole.FlagCodes, "; ") != strings.Join(wantCodes, "; ") {
		t.Errorf("inspect lwp flag codes %v, want %v", lwpRole.FlagCodes, wantCodes)
	}

	out, stderr := processOK(t, in, "--mask", "qa:no_confidence,marginal", "--mask", "sza>65", "--no-collector")
	for _, w := range []string{"sea_ice (flag code of lwp): 2", "land (flag code of lwp): 2", "sza>65: 8"} {
		if !strings.Contains(stderr, w) {
			t.Errorf("per-file summary lacks %q:\n%s", w, stderr)
		}
	}
	g := productGrids(t, out)
	p := microphys.DefaultParams()
	p.EnableCollector, p.EnableEvaporation = false, false
	m, err := microphys.NewModel(p)
	if err != nil {
		t.Fatal(err)
	}
	for i := range raw {
		var want uint32
		if raw[i] == 32001 || raw[i] == 32002 {
			want |= microphys.QCFlagCode
		}
		if ref["qa.raw"][i] <= 1 {
			want |= microphys.QCMaskedByMeaning
		}
		if ref["sza"][i] > 65 {
			want |= microphys.QCMaskedByThreshold
		}
		if ref["cloud_phase.raw"][i] != 1 {
			want |= microphys.QCPhaseNotLiquid
		}
		if ref["cloud_multi_layer_flag.raw"][i] == 1 {
			want |= microphys.QCMultiLayer
		}
		got := qcOf(g, i)
		if want != 0 {
			if got&microphys.QCInputScreenMask != want || !math.IsNaN(g["droplet_number"][i]) {
				t.Errorf("column %d: QC %v, want %v and fill", i, qcNames32(got), qcNames32(want))
			}
			continue
		}
		// Unscreened: the LWP equals netCDF4-python's decoding (float32 output), and
		// the physics microphys's. The codes 32001/32002 are values to netCDF4-python
		// (it knows no flags in data); they were screened above.
		lwp := ref["lwp"][i] * 1e-3
		if !close32(g["liquid_water_path"][i], ref["lwp"][i]) {
			t.Errorf("column %d: LWP %g, netCDF4-python %g", i, g["liquid_water_path"][i], ref["lwp"][i])
		}
		in := nanInputs()
		in.LWP, in.Re, in.CTT = lwp, ref["cer"][i]*1e-6, ref["ctt"][i]
		o, q, _ := column(t, m, in, math.NaN(), math.NaN(), false)
		if math.IsNaN(lwp) {
			if got&uint32(microphys.QCInputMissing) == 0 {
				t.Errorf("column %d: fill LWP, QC %v", i, qcNames32(got))
			}
			continue
		}
		if got != q || !close32(g["droplet_number"][i], o.Nd*1e-6) || !close32(g["cloud_base_drizzle_rate"][i], o.DrizzleRate*86400) {
			t.Errorf("column %d: QC %v N_d %g R %g, microphys QC %v N_d %g R %g", i, qcNames32(got), g["droplet_number"][i],
				g["cloud_base_drizzle_rate"][i], qcNames32(q), o.Nd*1e-6, o.DrizzleRate*86400)
		}
	}
	// summary leaves every screened column out (QC-masked), by the bits' meanings.
	screened := 0
	for i := range raw {
		if qcOf(g, i)&(microphys.QCInputScreenMask|uint32(microphys.QCScreenMask)) != 0 {
			screened++
		}
	}
	code, stdout, stderr = runCmd("summary", out)
	if code != ExitOK || !strings.Contains(stdout, strconv.Itoa(screened)+" QC-masked") {
		t.Errorf("summary: exit %d, want %d QC-masked:\n%s%s", code, screened, stdout, stderr)
	}
	// The QC variable declares the new bits.
	fi, err := grid.Describe(out)
	if err != nil {
		t.Fatal(err)
	}
	meanings := fi.Var(qcName).Text("flag_meanings")
	for _, f := range microphys.InputQCFlags {
		if !strings.Contains(meanings, f.Name) {
			t.Errorf("flag_meanings lacks %s", f.Name)
		}
	}
	// A meaning the flag variable does not have is a clear error naming it.
	code, _, stderr = runCmd("process", in, "-o", filepath.Join(dir, "x.nc"), "--mask", "qa:snow")
	if code == ExitOK || !strings.Contains(stderr, `"qa"`) || !strings.Contains(stderr, "no_confidence marginal good very_good") {
		t.Errorf("unknown meaning: exit %d, stderr %s", code, stderr)
	}
	if _, err := os.Stat(filepath.Join(dir, "x.nc")); err == nil {
		t.Error("output written for a bad mask")
	}
}

// TestProductMicrowaveLWPOnly: a microwave-like LWP-only file, CF-packed with float32
// scale_factor/add_offset whose packed zero leaves about 1e-9 when unpacked in float64
// (netCDF4-python unpacks in float32 and gets 0), negative values in the valid range (clear-sky noise). With --droplet-number r_e
// follows from N_d; the assumption is stated in every output's comment.
func TestProductMicrowaveLWPOnly(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	dir := t.TempDir()
	in := filepath.Join(dir, "mw_lwp.nc")
	ref := pyWrite(t, `
d = netCDF4.Dataset(sys.argv[1], "w")
d.createDimension("lat", 4); d.createDimension("lon", 6)
la = d.createVariable("lat", "f4", ("lat",)); la.units = "degrees_north"; la[:] = [-30, -29.75, -29.5, -29.25]
lo = d.createVariable("lon", "f4", ("lon",)); lo.units = "degrees_east"; lo[:] = np.arange(6) * 0.25 - 100
v = d.createVariable("cloud_liquid_water_path", "i2", ("lat", "lon"), fill_value=np.int16(-1))
v.set_auto_maskandscale(False)
v.standard_name = "atmosphere_mass_content_of_cloud_liquid_water"; v.units = "kg m-2"
v.scale_factor = np.float32(0.001); v.add_offset = np.float32(-0.05)
v.valid_range = np.array([0, 2550], "i2")
raw = np.array([[50, 50, 30, 45, 60, 80], [100, 130, 150, 200, -1, 250], [90, 110, 70, 65, 300, 400], [52, 58, 75, 95, 120, 180]], "i2")
v[:] = raw
d.close()
DUMP = ["cloud_liquid_water_path"]
`, in)
	// Without r_e and without a droplet number: a clear error naming the role and the option.
	code, _, stderr := runCmd("process", in, "-o", filepath.Join(dir, "none.nc"))
	if code == ExitOK || !strings.Contains(stderr, "(re)") || !strings.Contains(stderr, "--droplet-number") {
		t.Fatalf("no r_e: exit %d, stderr %s", code, stderr)
	}
	out, _ := processOK(t, in, "--droplet-number", "100", "--no-collector")
	g := productGrids(t, out)
	p := microphys.DefaultParams()
	p.EnableCollector, p.EnableEvaporation = false, false
	p.DropletNumber = 100e6 // --droplet-number 100 (cm-3)
	m, _ := microphys.NewModel(p)
	raw, dec := ref["cloud_liquid_water_path.raw"], ref["cloud_liquid_water_path"]
	sawZero := false
	for i := range raw {
		got := qcOf(g, i)
		if raw[i] == 50 { // the packed zero
			sawZero = true
			// In float64 the float32 attributes leave a residue (about 1.6e-9 kg m-2);
			// netCDF4-python unpacks in float32 and gets 0, as warmrain must.
			if res := raw[i]*float64(float32(0.001)) + float64(float32(-0.05)); res == 0 || math.Abs(res) > 1e-8 {
				t.Fatalf("the fixture's packed zero leaves no float64 residue (%g)", res)
			}
			if dec[i] != 0 {
				t.Errorf("netCDF4-python decodes the packed zero to %g", dec[i])
			}
			if got&microphys.QCClearSky == 0 || got&uint32(microphys.QCInputInvalid) != 0 || g["liquid_water_path"][i] != 0 {
				t.Errorf("column %d (packed zero): QC %v LWP %g, want clear_sky and 0", i, qcNames32(got), g["liquid_water_path"][i])
			}
			continue
		}
		if raw[i] < 50 && raw[i] >= 0 { // negative LWP inside the valid range
			if got&microphys.QCClearSky == 0 || got&uint32(microphys.QCInputInvalid) != 0 {
				t.Errorf("column %d (LWP %g): QC %v, want clear_sky", i, dec[i], qcNames32(got))
			}
			continue
		}
		if math.IsNaN(dec[i]) {
			continue
		}
		in := nanInputs()
		// unpacked in float64 as warmrain does (netCDF4-python's float32 unpacking differs in
		// the 7th digit, which the drizzle model's steep onset can amplify tenfold; derived)
		in.LWP = raw[i]*float64(float32(0.001)) + float64(float32(-0.05))
		o, q, _ := column(t, m, in, math.NaN(), math.NaN(), false)
		if got != q || got&microphys.QCDropletNumberAssumed == 0 {
			t.Errorf("column %d: QC %v, microphys %v", i, qcNames32(got), qcNames32(q))
		}
		if q&uint32(microphys.QCScreenMask) == 0 && (!close32(g["droplet_number"][i], 100) || !close32(g["cloud_base_drizzle_rate"][i], o.DrizzleRate*86400)) {
			t.Errorf("column %d: N_d %g (want the assumed 100 cm-3), R %g (microphys %g)", i, g["droplet_number"][i], g["cloud_base_drizzle_rate"][i], o.DrizzleRate*86400)
		}
	}
	if !sawZero {
		t.Fatal("fixture has no packed zero")
	}
	fi, err := grid.Describe(out)
	if err != nil {
		t.Fatal(err)
	}
	for _, v := range fi.Vars {
		if len(v.Dims) == 2 && !strings.Contains(v.Text("comment"), "Assumed constant droplet number concentration 100 cm-3") {
			t.Errorf("%s comment %q does not state the assumption", v.Name, v.Text("comment"))
		}
	}
	if a, ok := fi.Global("warmrain_assumptions"); !ok || !strings.Contains(a.String(), "100 cm-3") {
		t.Errorf("global warmrain_assumptions %v", a)
	}
}

// TestProductOpticalOnly: an optical retrieval with tau and r_e but no LWP (ncgen):
// LWP = (5/9) rho_w tau r_e [Brenguier2000], or (2/3) for a uniform cloud [Stephens1978].
func TestProductOpticalOnly(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	ncgen := requireTool(t, "ncgen")
	dir := t.TempDir()
	cdl := filepath.Join(dir, "optical.cdl")
	in := filepath.Join(dir, "optical.nc")
	os.WriteFile(cdl, []byte(`netcdf optical {
dimensions: y = 2 ; x = 3 ;
variables:
	float cot(y, x) ; cot:standard_name = "atmosphere_optical_thickness_due_to_cloud" ; cot:units = "1" ; cot:_FillValue = -999.f ;
	float cer(y, x) ; cer:units = "um" ; cer:_FillValue = -999.f ;
	float ctt(y, x) ; ctt:units = "K" ;
data:
	cot = 8, 12, 20, 0, -999, 35 ;
	cer = 10, 12, 14, 9, 11, 16 ;
	ctt = 285, 284, 283, 286, 285, 281 ;
}
`), 0o644)
	if b, err := exec.Command(ncgen, "-k", "nc4", "-o", in, cdl).CombinedOutput(); err != nil {
		t.Fatalf("ncgen: %v\n%s", err, b)
	}
	tau := []float64{8, 12, 20, 0, math.NaN(), 35}
	re := []float64{10, 12, 14, 9, 11, 16}
	for _, prof := range []string{"adiabatic", "uniform"} {
		out, _ := processOK(t, in, "--no-collector", "--lwp-profile", prof)
		g := productGrids(t, out)
		c := 5.0 / 9
		if prof == "uniform" {
			c = 2.0 / 3
		}
		for i := range tau {
			want := c * 1000 * tau[i] * re[i] * 1e-6 * 1e3 // g m-2
			got := qcOf(g, i)
			switch {
			case math.IsNaN(tau[i]):
				if got&uint32(microphys.QCInputMissing) == 0 {
					t.Errorf("%s column %d: QC %v", prof, i, qcNames32(got))
				}
			case tau[i] == 0:
				if got&microphys.QCClearSky == 0 {
					t.Errorf("%s column %d (tau 0): QC %v, want clear_sky", prof, i, qcNames32(got))
				}
			default:
				if !close32(g["liquid_water_path"][i], want) || got&microphys.QCLWPFromOptics == 0 {
					t.Errorf("%s column %d: LWP %g QC %v, want %g and lwp_from_optical_thickness", prof, i, g["liquid_water_path"][i], qcNames32(got), want)
				}
			}
		}
		fi, _ := grid.Describe(out)
		if !strings.Contains(fi.Var("droplet_number").Text("comment"), "LWP = "+map[string]string{"adiabatic": "5/9", "uniform": "2/3"}[prof]) {
			t.Errorf("%s: comment %q", prof, fi.Var("droplet_number").Text("comment"))
		}
	}
}

// TestProductModelGridMean: CMIP-style model output (xarray, one time step): grid-box-mean
// LWP (cell_methods "area: time: mean", source_id) with a cloud fraction in percent. In-cloud
// LWP = LWP / fraction (common practice); below --min-cloud-fraction screened; without a
// cloud fraction a warning and a flag.
func TestProductModelGridMean(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	dir := t.TempDir()
	in := filepath.Join(dir, "lwp_CFday_model.nc")
	ref := pyWrite(t, `
import xarray as xr
ny, nx = 3, 4
lwp = np.array([[0.02, 0.04, 0.06, 0.08], [0.05, 0.0, 0.03, 0.09], [0.07, 0.01, 0.02, 0.1]])
clt = np.array([[50, 80, 100, 40], [25, 0, 2, 90], [70, 60, 30, 100.]])
re = np.full((ny, nx), 11e-6)
ds = xr.Dataset({
  "lwp": (("time", "lat", "lon"), lwp[None], {"standard_name": "atmosphere_mass_content_of_cloud_liquid_water", "units": "kg m-2", "cell_methods": "area: time: mean"}),
  "clt": (("time", "lat", "lon"), clt[None], {"standard_name": "cloud_area_fraction", "units": "%", "cell_methods": "area: time: mean"}),
  "reffclwtop": (("time", "lat", "lon"), re[None], {"standard_name": "effective_radius_of_cloud_liquid_water_particles_at_liquid_water_cloud_top", "units": "m"}),
  "lat_bnds": (("lat", "bnds"), np.array([[-31, -29], [-29, -27], [-27, -25.]])),
  },
  coords={"time": ("time", [0.5], {"units": "days since 2015-01-01", "standard_name": "time"}),
          "lat": ("lat", [-30., -28, -26], {"units": "degrees_north", "bounds": "lat_bnds"}),
          "lon": ("lon", [0., 2, 4, 6], {"units": "degrees_east"})},
  attrs={"source_id": "TOY-MODEL", "experiment_id": "amip", "mip_era": "CMIP6"})
ds.to_netcdf(sys.argv[1], encoding={"time": {"dtype": "float64"}})
DUMP = ["lwp", "clt"]
`, in)
	out, stderr := processOK(t, in, "--no-collector")
	if strings.Contains(stderr, "warning") {
		t.Errorf("unexpected warning: %s", stderr)
	}
	g := productGrids(t, out)
	for i, lwp := range ref["lwp"] {
		f := ref["clt"][i] / 100
		got := qcOf(g, i)
		switch {
		case lwp <= 0:
			if got&microphys.QCClearSky == 0 {
				t.Errorf("column %d: QC %v, want clear_sky", i, qcNames32(got))
			}
		case f < microphys.DefaultParams().MinCloudFraction:
			if got&microphys.QCCloudFractionLow == 0 {
				t.Errorf("column %d (fraction %g): QC %v, want cloud_fraction_below_minimum", i, f, qcNames32(got))
			}
		default:
			if got&microphys.QCInCloudLWP == 0 || !close32(g["liquid_water_path"][i], lwp/f*1e3) {
				t.Errorf("column %d: LWP %g QC %v, want in-cloud %g", i, g["liquid_water_path"][i], qcNames32(got), lwp/f*1e3)
			}
		}
	}
	screened := 0
	for i := range ref["lwp"] {
		if qcOf(g, i)&(microphys.QCInputScreenMask|uint32(microphys.QCScreenMask)) != 0 {
			screened++
		}
	}
	code, stdout, stderr := runCmd("summary", out)
	if code != ExitOK || !strings.Contains(stdout, strconv.Itoa(screened)+" QC-masked") {
		t.Errorf("summary: exit %d, want %d QC-masked:\n%s%s", code, screened, stdout, stderr)
	}
	// Without the cloud fraction: one warning, the grid_mean_lwp_used flag.
	in2 := filepath.Join(dir, "lwp_only_model.nc")
	if b, err := exec.Command(py3, "-c", `import sys, xarray as xr
xr.open_dataset(sys.argv[1]).drop_vars("clt").to_netcdf(sys.argv[2])`, in, in2).CombinedOutput(); err != nil {
		t.Fatalf("%v\n%s", err, b)
	}
	out2, stderr2 := processOK(t, in2, "--no-collector")
	stderr = stderr2
	if n := strings.Count(stderr, "warning:"); n != 1 || !strings.Contains(stderr, "grid-box mean") {
		t.Errorf("want one warning about the grid-box mean, got:\n%s", stderr)
	}
	g2 := productGrids(t, out2)
	if got := qcOf(g2, 0); got&microphys.QCGridMeanLWPUsed == 0 {
		t.Errorf("QC %v, want grid_mean_lwp_used", qcNames32(got))
	}
}

// TestProductCTPOnly: cloud-top pressure and no temperature, with ice-topped columns: the
// temperature comes from the 1976 standard atmosphere and the high tops are screened as
// possible ice; a real CTP is never paired with the default 285 K.
func TestProductCTPOnly(t *testing.T) {
	ncgen := requireTool(t, "ncgen")
	dir := t.TempDir()
	cdl := filepath.Join(dir, "ctp.cdl")
	in := filepath.Join(dir, "ctp.nc")
	os.WriteFile(cdl, []byte(`netcdf ctp {
dimensions: y = 2 ; x = 3 ;
variables:
	float lwp(y, x) ; lwp:units = "g m-2" ;
	float re(y, x) ; re:units = "um" ;
	short ctp(y, x) ; ctp:standard_name = "air_pressure_at_cloud_top" ; ctp:units = "hPa" ; ctp:scale_factor = 0.1f ; ctp:_FillValue = -1s ;
data:
	lwp = 80, 120, 150, 90, 60, 200 ;
	re = 10, 12, 14, 11, 9, 16 ;
	ctp = 9000, 8500, 3000, 4500, 7800, 2500 ;
}
`), 0o644)
	if b, err := exec.Command(ncgen, "-k", "nc4", "-o", in, cdl).CombinedOutput(); err != nil {
		t.Fatalf("ncgen: %v\n%s", err, b)
	}
	ctp := []float64{900, 850, 300, 450, 780, 250}
	lwp := []float64{80, 120, 150, 90, 60, 200}
	re := []float64{10, 12, 14, 11, 9, 16}
	out, _ := processOK(t, in, "--no-collector")
	g := productGrids(t, out)
	p := microphys.DefaultParams()
	p.EnableCollector, p.EnableEvaporation = false, false
	m, _ := microphys.NewModel(p)
	ice := 0
	for i := range ctp {
		T := microphys.StandardAtmosphereTemperature(ctp[i] * 100)
		got := qcOf(g, i)
		if got&uint32(microphys.QCAirStateAssumed) != 0 || got&microphys.QCStandardAtmosphere == 0 {
			t.Errorf("column %d: QC %v, want air_state_standard_atmosphere and never air_state_assumed", i, qcNames32(got))
		}
		if T < p.MinCTT {
			ice++
			if got&uint32(microphys.QCPossibleIce) == 0 {
				t.Errorf("column %d (CTP %g hPa, %g K): QC %v, want possible_ice", i, ctp[i], T, qcNames32(got))
			}
			continue
		}
		in := nanInputs()
		in.LWP, in.Re, in.CTP = lwp[i]*1e-3, re[i]*1e-6, ctp[i]*100
		o, q, _ := column(t, m, in, math.NaN(), math.NaN(), false)
		if got != q || !close32(g["condensation_rate"][i], o.Cw*1e6) {
			t.Errorf("column %d: QC %v c_w %g, microphys %v %g", i, qcNames32(got), g["condensation_rate"][i], qcNames32(q), o.Cw*1e6)
		}
	}
	if ice == 0 || ice == len(ctp) {
		t.Fatalf("fixture needs warm and ice-topped columns (%d ice)", ice)
	}
	fi, _ := grid.Describe(out)
	if !strings.Contains(fi.Var("cloud_thickness").Text("comment"), "Standard Atmosphere 1976") {
		t.Errorf("comment %q", fi.Var("cloud_thickness").Text("comment"))
	}
}

// TestProductOlderNames: a file named the CMIP/older-table way (condensed water path, the
// older singular r_e name), with retrieval uncertainties and two droplet-number
// candidates the run does not use: the lower-priority names bind with a note in inspect,
// the uncertainties are never the sub-grid standard deviation, and the unused ambiguity is
// a warning.
func TestProductOlderNames(t *testing.T) {
	ncgen := requireTool(t, "ncgen")
	dir := t.TempDir()
	cdl := filepath.Join(dir, "older.cdl")
	in := filepath.Join(dir, "older.nc")
	os.WriteFile(cdl, []byte(`netcdf older {
dimensions: y = 2 ; x = 2 ; bnds = 2 ;
variables:
	float y(y) ; y:units = "km" ; y:bounds = "re" ;
	float condensed_path(y, x) ; condensed_path:standard_name = "atmosphere_mass_content_of_cloud_condensed_water" ; condensed_path:units = "kg m-2" ;
		condensed_path:ancillary_variables = "lwp_unc" ;
	float lwp_unc(y, x) ; lwp_unc:standard_name = "atmosphere_mass_content_of_cloud_condensed_water standard_error" ; lwp_unc:units = "kg m-2" ;
	float lwp_uncertainty(y, x) ; lwp_uncertainty:units = "kg m-2" ;
	float droplet_radius(y, x) ; droplet_radius:standard_name = "effective_radius_of_cloud_liquid_water_particle" ; droplet_radius:units = "um" ;
	float re(y, bnds) ; re:units = "um" ;
	float cdnc(y, x) ; cdnc:units = "cm-3" ;
	float CDNC(y, x) ; CDNC:units = "cm-3" ;
data:
	y = 0, 1 ;
	condensed_path = 0.08, 0.1, 0.12, 0.05 ;
	lwp_unc = 0.01, 0.01, 0.01, 0.01 ;
	lwp_uncertainty = 0.02, 0.02, 0.02, 0.02 ;
	droplet_radius = 10, 11, 12, 13 ;
	re = 1, 2, 3, 4 ;
	cdnc = 50, 60, 70, 80 ;
	CDNC = 55, 65, 75, 85 ;
}
`), 0o644)
	if b, err := exec.Command(ncgen, "-k", "nc4", "-o", in, cdl).CombinedOutput(); err != nil {
		t.Fatalf("ncgen: %v\n%s", err, b)
	}
	code, stdout, stderr := runCmd("inspect", in, "--json")
	if code != ExitOK {
		t.Fatalf("inspect exit %d: %s", code, stderr)
	}
	var rep inspectReport
	if err := json.Unmarshal([]byte(stdout), &rep); err != nil {
		t.Fatal(err)
	}
	bound := map[string]roleReport{}
	for _, r := range rep.Roles {
		bound[r.Role] = r
	}
	if r := bound["lwp"]; r.Variable != "condensed_path" || !strings.Contains(r.Note, "lower priority") || !strings.Contains(r.Note, "ice") {
		t.Errorf("lwp: %+v", r)
	}
	if r := bound["re"]; r.Variable != "droplet_radius" || !strings.Contains(r.Note, "lower priority") {
		t.Errorf("re: %q (the bounds variable re must never be offered) %+v", r.Variable, r)
	}
	if r := bound["lwp_sd"]; r.Found {
		t.Errorf("an uncertainty was taken as the sub-grid standard deviation: %+v", r)
	}
	if r := bound["nd"]; r.Found || len(rep.Warnings) != 1 || !strings.Contains(rep.Warnings[0], "cdnc") {
		t.Errorf("nd %+v, warnings %q", r, rep.Warnings)
	}
	out, _ := processOK(t, in, "--no-collector")
	g := productGrids(t, out)
	if qcOf(g, 0)&uint32(microphys.QCGammaShapeAssumed) == 0 {
		t.Errorf("QC %v: the gamma shape must be the assumed one", qcNames32(qcOf(g, 0)))
	}
	// Binding an uncertainty as lwp_sd by hand is refused, naming it.
	code, _, stderr = runCmd("process", in, "-o", filepath.Join(dir, "x.nc"), "--bind", "lwp_sd=lwp_uncertainty")
	if code == ExitOK || !strings.Contains(stderr, "lwp_uncertainty") || !strings.Contains(stderr, "uncertainty") {
		t.Errorf("exit %d, stderr %s", code, stderr)
	}
}

// TestColumnCompletes: the column command completes missing inputs as process does (the
// same Model.Complete): r_e from LWP and --droplet-number gives back N_d (derived), and
// LWP from tau and r_e is (5/9) rho_w tau r_e [Brenguier2000].
func TestColumnCompletes(t *testing.T) {
	code, stdout, stderr := runCmd("column", "--lwp", "100", "--droplet-number", "100", "--no-collector", "--json")
	if code != ExitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var r struct {
		Diagnostics map[string]float64       `json:"diagnostics"`
		Inputs      map[string]float64       `json:"inputs"`
		QC          struct{ Flags []string } `json:"qc"`
	}
	if err := json.Unmarshal([]byte(stdout), &r); err != nil {
		t.Fatal(err)
	}
	if math.Abs(r.Diagnostics["droplet_number"]-100) > 1e-6 || !strings.Contains(strings.Join(r.QC.Flags, " "), "droplet_number_assumed") {
		t.Errorf("N_d %g, flags %v", r.Diagnostics["droplet_number"], r.QC.Flags)
	}
	code, stdout, stderr = runCmd("column", "--tau", "12", "--re", "10", "--no-collector", "--json")
	if code != ExitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	if err := json.Unmarshal([]byte(stdout), &r); err != nil {
		t.Fatal(err)
	}
	if want := 5.0 / 9 * 1000 * 12 * 10e-6 * 1e3; math.Abs(r.Inputs["lwp"]/want-1) > 1e-9 {
		t.Errorf("LWP %g g m-2, want %g", r.Inputs["lwp"], want)
	}
	if code, _, stderr = runCmd("column", "--lwp", "100"); code != ExitUsage || !strings.Contains(stderr, "--droplet-number") {
		t.Errorf("no r_e: exit %d, %s", code, stderr)
	}
}
