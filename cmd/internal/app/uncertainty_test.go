package app

import (
	"encoding/json"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/grid/gridtest"
	"github.com/warmrain/warmrain/microphys"
)

// TestProcessUncertaintySample: the sample carries an LWP standard error (standard_error
// modifier, g m-2) and r_e and tau uncertainties in percent (ancillary_variables). Every
// output gets <name>_standard_error, linked from it, CF-clean; N_d's equals the closed form
// sqrt((s_tau/2)^2 + (5/2 s_r)^2) of the tau-and-r_e form (derived, doc/science.md#uncertainty)
// with the percentages decoded; the LWP's is the input's.
func TestProcessUncertaintySample(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	in := samplePath(t)
	out := filepath.Join(t.TempDir(), "unc.nc")
	if code, _, stderr := runProc(t, "process", in, "-o", out); code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	lintClean(t, out)
	nd, ndSE := readVar(t, out, "droplet_number"), readVar(t, out, "droplet_number"+seSuffix)
	reU, tauU := readVar(t, in, "re_uncertainty"), readVar(t, in, "cot_uncertainty")
	lwpSE, lwpOutSE := readVar(t, in, "lwp_standard_error"), readVar(t, out, "liquid_water_path"+seSuffix)
	checked := 0
	for i := range nd {
		if math.IsNaN(nd[i]) {
			if !math.IsNaN(ndSE[i]) {
				t.Fatalf("column %d: N_d missing but its error is %g", i, ndSE[i])
			}
			continue
		}
		sr, st := reU[i]/100, tauU[i]/100
		want := nd[i] * math.Sqrt(st*st/4+6.25*sr*sr)
		if math.Abs(ndSE[i]-want) > 1e-5*want {
			t.Fatalf("column %d: sigma_N %g, closed form %g (r_e %g %%, tau %g %%)", i, ndSE[i], want, reU[i], tauU[i])
		}
		if math.Abs(lwpOutSE[i]-lwpSE[i]) > 1e-6*lwpSE[i] {
			t.Fatalf("column %d: LWP standard error %g written, %g given", i, lwpOutSE[i], lwpSE[i])
		}
		checked++
	}
	if checked < 10000 {
		t.Fatalf("only %d columns checked", checked)
	}
	// metadata, read by an outside library
	got := gridtest.Python(t, `
import sys, netCDF4
d = netCDF4.Dataset(sys.argv[1])
v = d["droplet_number_standard_error"]
print(v.standard_name)
print(v.units)
print(d["droplet_number"].ancillary_variables)
print(d["warm_rain_uncertainty_flag"].flag_meanings.split()[1])
`, out)
	want := "number_concentration_of_cloud_liquid_water_particles_in_air_at_liquid_water_cloud_top standard_error\ncm-3\nwarm_rain_qc droplet_number_standard_error\ndroplet_number_error_nonlinear\n"
	if got != want {
		t.Errorf("netCDF4-python reads\n%s\nwant\n%s", got, want)
	}
}

// TestProcessWithoutUncertaintyUnchanged: an input without standard errors gives no new
// variables, and the outputs' data are byte-identical to those of the same input with
// them (the uncertainty never changes a diagnostic). The copy without the three
// uncertainty variables is written by netCDF4-python with the stored bytes unchanged.
func TestProcessWithoutUncertaintyUnchanged(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	in := samplePath(t)
	dir := t.TempDir()
	plain := filepath.Join(dir, "plain.nc")
	gridtest.Python(t, `
import sys, netCDF4
src = netCDF4.Dataset(sys.argv[1]); dst = netCDF4.Dataset(sys.argv[2], "w", format="NETCDF4_CLASSIC")
drop = {"lwp_standard_error", "re_uncertainty", "cot_uncertainty"}
dst.setncatts({a: src.getncattr(a) for a in src.ncattrs()})
for n, d in src.dimensions.items(): dst.createDimension(n, None if d.isunlimited() else len(d))
for n, v in src.variables.items():
    if n in drop: continue
    v.set_auto_maskandscale(False)
    fill = v.getncattr("_FillValue") if "_FillValue" in v.ncattrs() else None
    w = dst.createVariable(n, v.dtype, v.dimensions, fill_value=fill)
    w.set_auto_maskandscale(False)
    atts = {a: v.getncattr(a) for a in v.ncattrs() if a != "_FillValue"}
    if "ancillary_variables" in atts:
        atts["ancillary_variables"] = " ".join(x for x in atts["ancillary_variables"].split() if x not in drop)
        if not atts["ancillary_variables"]: del atts["ancillary_variables"]
    w.setncatts(atts)
    w[...] = v[...]
dst.close()
`, in, plain)
	a, b := filepath.Join(dir, "a.nc"), filepath.Join(dir, "b.nc")
	for _, c := range [][2]string{{plain, a}, {in, b}} {
		if code, _, stderr := runProc(t, "process", c[0], "-o", c[1]); code != 0 {
			t.Fatalf("exit %d: %s", code, stderr)
		}
	}
	defs, _ := selectOutputs("all", microphys.DefaultParams())
	names := append(outputNames(defs), qcName)
	info, err := grid.Describe(a)
	if err != nil {
		t.Fatal(err)
	}
	for _, v := range info.Vars {
		if strings.HasSuffix(v.Name, seSuffix) || strings.HasSuffix(v.Name, spreadSuffix) || v.Name == uncFlagName {
			t.Errorf("%s written without input uncertainties", v.Name)
		}
		if anc := v.Text("ancillary_variables"); strings.Contains(anc, seSuffix) {
			t.Errorf("%s: ancillary_variables %q", v.Name, anc)
		}
	}
	for _, n := range names {
		x, y := readVar(t, a, n), readVar(t, b, n)
		for i := range x {
			if math.Float64bits(x[i]) != math.Float64bits(y[i]) && !(math.IsNaN(x[i]) && math.IsNaN(y[i])) {
				t.Fatalf("%s[%d]: %g without uncertainties, %g with", n, i, x[i], y[i])
			}
		}
	}
}

// TestProcessUncertaintyUnitsAndBind: errors bound with --bind, in percent (units "%"),
// as a fraction (declared ":1") and absolute (um), decode to the same N_d error (the LWP-and-
// r_e form sqrt((s_L/2)^2 + (3 s_r)^2), derived); a bad unit names the file and variable;
// --parameter-uncertainty adds the spreads, CF-clean.
func TestProcessUncertaintyUnitsAndBind(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	ncgen := requireTool(t, "ncgen")
	dir := t.TempDir()
	cdl := `netcdf errs {
dimensions:
	x = 4 ;
variables:
	float lwp(x) ;
		lwp:standard_name = "atmosphere_mass_content_of_cloud_liquid_water" ;
		lwp:units = "g m-2" ;
	float re(x) ;
		re:standard_name = "effective_radius_of_cloud_liquid_water_particles_at_liquid_water_cloud_top" ;
		re:units = "um" ;
	float lwp_err(x) ;
		lwp_err:units = "1" ;
	float re_pct(x) ;
		re_pct:units = "%" ;
	float re_abs(x) ;
		re_abs:units = "um" ;
	float re_bad(x) ;
		re_bad:units = "K" ;
data:
	lwp = 60, 100, 140, 200 ;
	re = 10, 12, 14, 9 ;
	lwp_err = 0.1, 0.2, 0.05, 0.1 ;
	re_pct = 10, 5, 20, 8 ;
	re_abs = 1, 0.6, 2.8, 0.72 ;
	re_bad = 1, 1, 1, 1 ;
}
`
	src := filepath.Join(dir, "errs.cdl")
	if err := os.WriteFile(src, []byte(cdl), 0o644); err != nil {
		t.Fatal(err)
	}
	f := filepath.Join(dir, "errs.nc")
	if b, err := exec.Command(ncgen, "-k", "nc4", "-o", f, src).CombinedOutput(); err != nil {
		t.Fatalf("ncgen: %v\n%s", err, b)
	}
	sL, sR := []float64{0.1, 0.2, 0.05, 0.1}, []float64{0.1, 0.05, 0.2, 0.08}
	for _, re := range []string{"re_pct", "re_abs"} {
		out := filepath.Join(dir, re+".nc")
		code, _, stderr := runProc(t, "process", f, "-o", out, "--no-collector", "--bind", "lwp_se=lwp_err:1", "--bind", "re_se="+re)
		if code != 0 {
			t.Fatalf("%s: exit %d: %s", re, code, stderr)
		}
		nd, se := readVar(t, out, "droplet_number"), readVar(t, out, "droplet_number"+seSuffix)
		for i := range nd {
			want := nd[i] * math.Sqrt(sL[i]*sL[i]/4+9*sR[i]*sR[i])
			if math.Abs(se[i]-want) > 1e-5*want {
				t.Errorf("%s column %d: sigma_N %g, closed form %g", re, i, se[i], want)
			}
		}
	}
	out := filepath.Join(dir, "bad.nc")
	code, _, stderr := runProc(t, "process", f, "-o", out, "--no-collector", "--bind", "re_se=re_bad")
	if code == 0 || !strings.Contains(stderr, "re_bad") || !strings.Contains(stderr, "errs.nc") || !strings.Contains(stderr, "percentage") {
		t.Errorf("bad units: exit %d, %q", code, stderr)
	}
	out = filepath.Join(dir, "spread.nc")
	if code, _, stderr := runProc(t, "process", f, "-o", out, "--bind", "re_se=re_pct", "--parameter-uncertainty"); code != 0 {
		t.Fatalf("spread: exit %d: %s", code, stderr)
	}
	lintClean(t, out)
	sp := readVar(t, out, "droplet_number"+spreadSuffix)
	nd := readVar(t, out, "droplet_number")
	for i := range sp {
		// N_d ∝ f_ad^(1/2)/k (derived; doc/science.md#parameter-spread)
		a, b := (1/0.7-1/0.9)/2*0.8, 1-math.Sqrt(0.85)
		if want := nd[i] * math.Sqrt(a*a+b*b); math.Abs(sp[i]-want) > 1e-5*want {
			t.Errorf("column %d: N_d spread %g, want %g", i, sp[i], want)
		}
	}
}

// TestColumnUncertainty: column prints value ± retrieval error (± parameter spread) and
// gives both in JSON; the N_d error is the closed form sqrt((s_L/2)^2 + (3 s_r)^2)
// (derived, doc/science.md#uncertainty); without errors nothing is added.
func TestColumnUncertainty(t *testing.T) {
	code, stdout, stderr := runProc(t, "column", "--lwp", "120", "--re", "12", "--lwp-se", "12", "--re-se", "5%", "--no-collector", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var r struct {
		Diagnostics     map[string]float64 `json:"diagnostics"`
		StandardErrors  map[string]float64 `json:"standard_errors"`
		ParameterSpread map[string]float64 `json:"parameter_spread"`
	}
	if err := json.Unmarshal([]byte(stdout), &r); err != nil {
		t.Fatal(err)
	}
	want := r.Diagnostics["droplet_number"] * math.Sqrt(0.05*0.05+9*0.05*0.05)
	if got := r.StandardErrors["droplet_number"]; math.Abs(got-want) > 1e-6*want {
		t.Errorf("sigma_N %g, closed form %g", got, want)
	}
	if r.ParameterSpread != nil {
		t.Errorf("parameter spread without --parameter-uncertainty")
	}
	code, stdout, _ = runProc(t, "column", "--lwp", "120", "--re", "12", "--re-se", "0.6", "--parameter-uncertainty", "--no-collector")
	if code != 0 || !strings.Contains(stdout, "value ± retrieval error ± parameter spread") || !strings.Contains(stdout, "(par.)") {
		t.Errorf("text output:\n%s", stdout)
	}
	code, stdout, _ = runProc(t, "column", "--lwp", "120", "--re", "12", "--no-collector", "--json")
	if code != 0 || strings.Contains(stdout, "standard_errors") || strings.Contains(stdout, "parameter_spread") {
		t.Errorf("uncertainty keys without errors:\n%s", stdout)
	}
	if code, _, stderr := runProc(t, "column", "--lwp", "120", "--re", "12", "--re-se", "ten"); code == 0 || !strings.Contains(stderr, "--re-se") {
		t.Errorf("bad --re-se: exit %d %q", code, stderr)
	}
}

// TestSummaryUncertaintyMaps: of the uncertainty outputs, summary maps the retrieval errors
// of N_d and of the cloud-base drizzle rate (the demo's uncertainty maps) and no other.
func TestSummaryUncertaintyMaps(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	dir := t.TempDir()
	out, pics := filepath.Join(dir, "unc.nc"), filepath.Join(dir, "plots")
	if code, _, stderr := runProc(t, "process", samplePath(t), "-o", out, "--no-collector"); code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	if code, _, stderr := runProc(t, "summary", out, "--plots", pics, "--plot-size", "640x480"); code != 0 {
		t.Fatalf("summary: exit %d: %s", code, stderr)
	}
	checkPNG(t, filepath.Join(pics, "map_droplet_number_standard_error_mean.png"), 640, 480)
	checkPNG(t, filepath.Join(pics, "map_cloud_base_drizzle_rate_standard_error_mean.png"), 640, 480)
	for _, n := range []string{"map_cloud_thickness_standard_error_mean.png", "map_liquid_water_path_standard_error_mean.png"} {
		if fileExists(filepath.Join(pics, n)) {
			t.Errorf("%s drawn", n)
		}
	}
}

// TestProcessLWPStandardError: the LWP output (a copy of the input LWP in g m-2) gets as
// its standard error the input's, converted to the output's units: from kg m-2 (a
// standard_error modifier) and from a percentage (bound with --bind) turned into an
// absolute error of the value; CF-clean, and column --from prints the same value. An input
// without errors gets no uncertainty variable. The inputs are written by netCDF4-python.
// The expected values are unit conversions (UDUNITS: 1 kg m-2 = 1000 g m-2; p % of x is
// p/100 x), no physics.
func TestProcessLWPStandardError(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	dir := t.TempDir()
	f, plain := filepath.Join(dir, "lwp_err.nc"), filepath.Join(dir, "no_err.nc")
	gridtest.Python(t, `
import sys, netCDF4, numpy as np
for path, errs in ((sys.argv[1], True), (sys.argv[2], False)):
    d = netCDF4.Dataset(path, "w", format="NETCDF4")
    d.createDimension("x", 4)
    v = d.createVariable("lwp", "f4", ("x",))
    v.standard_name = "atmosphere_mass_content_of_cloud_liquid_water"
    v.units = "kg m-2"
    v[:] = np.array([0.06, 0.1, 0.14, 0.2])
    v = d.createVariable("re", "f4", ("x",))
    v.standard_name = "effective_radius_of_cloud_liquid_water_particles_at_liquid_water_cloud_top"
    v.units = "um"
    v[:] = np.array([10, 12, 14, 9])
    if errs:
        v = d.createVariable("lwp_err", "f4", ("x",))
        v.standard_name = "atmosphere_mass_content_of_cloud_liquid_water standard_error"
        v.units = "kg m-2"
        v[:] = np.array([0.006, 0.015, 0.007, 0.03])
        v = d.createVariable("lwp_pct", "f4", ("x",))
        v.units = "%"
        v[:] = np.array([10, 15, 5, 15])
    d.close()
`, f, plain)
	lwp, abs, pct := readVar(t, f, "lwp"), readVar(t, f, "lwp_err"), readVar(t, f, "lwp_pct")
	for _, c := range []struct {
		name string
		args []string
		want func(i int) float64 // g m-2
	}{
		{"absolute", nil, func(i int) float64 { return abs[i] * 1e3 }},
		{"percent", []string{"--bind", "lwp_se=lwp_pct"}, func(i int) float64 { return pct[i] / 100 * lwp[i] * 1e3 }},
	} {
		out := filepath.Join(dir, c.name+".nc")
		args := append([]string{"process", f, "-o", out, "--no-collector"}, c.args...)
		if code, _, stderr := runProc(t, args...); code != 0 {
			t.Fatalf("%s: exit %d: %s", c.name, code, stderr)
		}
		lintClean(t, out)
		got := readVar(t, out, "liquid_water_path"+seSuffix)
		for i := range got {
			if w := c.want(i); math.Abs(got[i]-w) > 1e-5*w {
				t.Errorf("%s: column %d: liquid_water_path_standard_error %g g m-2, input's %g", c.name, i, got[i], w)
			}
		}
		// column --from prints the same error beside the LWP, in text and JSON.
		cargs := append([]string{"column", "--from", f, "--index", "1", "--no-collector", "--json"}, c.args...)
		code, stdout, stderr := runProc(t, cargs...)
		var r struct {
			StandardErrors map[string]float64 `json:"standard_errors"`
		}
		if code != 0 || json.Unmarshal([]byte(stdout), &r) != nil {
			t.Fatalf("%s: column --from: exit %d: %s\n%s", c.name, code, stderr, stdout)
		}
		if g, ok := r.StandardErrors["liquid_water_path"]; !ok || math.Abs(g-c.want(1)) > 1e-5*c.want(1) {
			t.Errorf("%s: column --from: LWP error %g (given: %v), want %g", c.name, g, ok, c.want(1))
		}
		code, stdout, _ = runProc(t, append(cargs[:len(cargs)-len(c.args)-1], c.args...)...)
		if line := regexp.MustCompile(`liquid_water_path +\S+ +± (\S+) +g m-2`).FindStringSubmatch(stdout); code != 0 || line == nil || line[1] == "-" {
			t.Errorf("%s: column --from text: no LWP error:\n%s", c.name, stdout)
		}
	}
	out := filepath.Join(dir, "plain.nc")
	if code, _, stderr := runProc(t, "process", plain, "-o", out, "--no-collector"); code != 0 {
		t.Fatalf("no errors: exit %d: %s", code, stderr)
	}
	names := gridtest.Python(t, `
import sys, netCDF4
print(" ".join(v for v in netCDF4.Dataset(sys.argv[1]).variables if "standard_error" in v or "uncertainty" in v))
`, out)
	if strings.TrimSpace(names) != "" {
		t.Errorf("an input without errors gives uncertainty variables: %s", names)
	}
}
