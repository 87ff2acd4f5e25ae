package app

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/warmrain/warmrain/cmd/internal/batch"
	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/grid/gridtest"
	"github.com/warmrain/warmrain/microphys"
)

// Real product layouts through inspect, process and summary: an HDF4 level-2
// swath (ncgen-hdf), a netCDF-4 granule with groups (netCDF4-python) and
// one-variable-per-file model output joined with + (ncgen). Inputs are decoded
// independently (ncdump-hdf with the HDF4 calibration, netCDF4-python) and the
// outputs compared column by column with microphys called directly. Invented
// numbers throughout.

// productInputs are the SI inputs of every column, decoded outside warmrain
// (NaN = absent or missing).
type productInputs struct {
	lwp, re, tau, ctt []float64
}

func (c productInputs) at(x []float64, i int) float64 {
	if x == nil {
		return math.NaN()
	}
	return x[i]
}

// checkOutputsAgainstMicrophys compares the output's diagnostics with
// microphys.Model.Column on the independently decoded inputs, every column.
func checkOutputsAgainstMicrophys(t *testing.T, out string, in productInputs) {
	t.Helper()
	m, err := microphys.NewModel(microphys.DefaultParams())
	if err != nil {
		t.Fatal(err)
	}
	nd := readVar(t, out, "droplet_number")
	h := readVar(t, out, "cloud_thickness")
	pop := readVar(t, out, "drizzle_probability")
	rate := readVar(t, out, "cloud_base_drizzle_rate")
	rad := readVar(t, out, "collector_exit_radius")
	qc := readVar(t, out, qcName)
	if len(nd) != len(in.lwp) {
		t.Fatalf("%d output columns, %d inputs", len(nd), len(in.lwp))
	}
	computed := 0
	for i := range in.lwp {
		x := microphys.Inputs{LWP: in.lwp[i], Re: in.re[i], Tau: in.at(in.tau, i), CTT: in.at(in.ctt, i),
			CTP: math.NaN(), CTH: math.NaN(), LWPStd: math.NaN(), SurfaceRH: math.NaN()}
		o, q, _ := column(t, m, x, math.NaN(), math.NaN(), false)                // completion, then Column, as process does
		if q&(microphys.QCInputScreenMask|uint32(microphys.QCScreenMask)) != 0 { // screened: fill values in the file
			nan := math.NaN()
			o.Nd, o.H, o.POP, o.DrizzleRate, o.CollectorRadius = nan, nan, nan, nan, nan
		}
		if uint32(qc[i]) != q {
			t.Fatalf("column %d: QC %v in the file, %v direct", i, qcNames32(uint32(qc[i])), qcNames32(q))
		}
		if !close32(nd[i], o.Nd*1e-6) || !close32(h[i], o.H) || !close32(pop[i], o.POP) ||
			!close32(rate[i], o.DrizzleRate*86400) || !close32(rad[i], o.CollectorRadius*1e6) {
			t.Fatalf("column %d: file N_d %g H %g POP %g R_CB %g r %g; direct %g %g %g %g %g", i, nd[i], h[i], pop[i], rate[i], rad[i],
				o.Nd*1e-6, o.H, o.POP, o.DrizzleRate*86400, o.CollectorRadius*1e6)
		}
		if !math.IsNaN(o.Nd) {
			computed++
		}
	}
	if computed < len(in.lwp)/2 {
		t.Fatalf("only %d of %d columns computed", computed, len(in.lwp))
	}
}

func scaled(x []float64, f float64) []float64 {
	out := make([]float64, len(x))
	for i, v := range x {
		out[i] = v * f
	}
	return out
}

func summarizeProduct(t *testing.T, out string) {
	t.Helper()
	sum := filepath.Join(filepath.Dir(out), "summary.nc")
	code, stdout, stderr := runProc(t, "summary", out, "-o", sum)
	if code != 0 || !strings.Contains(stdout, "valid") {
		t.Fatalf("summary: exit %d\n%s\n%s", code, stdout, stderr)
	}
	fi, err := grid.Describe(sum)
	if err != nil {
		t.Fatal(err)
	}
	if fi.Var("droplet_number_time_mean") == nil {
		t.Fatalf("summary has no map of droplet_number: %v", fi.Vars)
	}
	for _, v := range fi.Vars { // a swath's 2-D coordinates are not diagnostics to map
		if strings.HasPrefix(strings.ToLower(v.Name), "lat") && strings.HasSuffix(v.Name, "_time_mean") {
			t.Fatalf("summary maps the coordinate %s", v.Name)
		}
	}
}

// TestProductHDF4Swath: an HDF4 level-2 swath whose 16-bit values are
// calibrated the HDF4 way, with an r_e data set named with blanks.
func TestProductHDF4Swath(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	dir := t.TempDir()
	path := gridtest.HDF4Swath(t, dir)
	binds := []string{"--bind", "lwp=Cloud_Water_Path", "--bind", "re=Cloud Effective Radius"}

	rep, code, stderr := inspectJSON(t, append([]string{path}, binds...)...)
	if code != 0 {
		t.Fatalf("inspect: exit %d: %s", code, stderr)
	}
	if rep.Format != string(grid.FormatHDF4) || rep.Layout.Lat != "Latitude" || !rep.Layout.LatLon2D {
		t.Fatalf("format %q, layout %+v", rep.Format, rep.Layout)
	}
	re := roleOf(rep, grid.RoleRe)
	if re.Variable != "Cloud Effective Radius" || !strings.Contains(re.Packing, "HDF4") || !strings.Contains(re.Packing, "scale_factor*(x - add_offset)") {
		t.Fatalf("r_e role %+v", re)
	}
	if tau := roleOf(rep, grid.RoleTau); tau.Variable != "Cloud_Optical_Thickness" || tau.Stats == nil || tau.Stats.Valid != 20 {
		t.Fatalf("tau role %+v", tau)
	}

	out := filepath.Join(dir, "swath_wr.nc")
	if code, _, stderr := runProc(t, append([]string{"process", path, "-o", out}, binds...)...); code != 0 {
		t.Fatalf("process: exit %d: %s", code, stderr)
	}
	// Independent decoding: ncdump-hdf's stored numbers, calibrated as HDF4 says.
	dec := func(name string, scale, offset, fill, hi float64) []float64 {
		return gridtest.HDF4Decode(gridtest.NCDumpHDF(t, path, name), scale, offset, fill, 0, hi)
	}
	in := productInputs{
		lwp: scaled(dec("Cloud_Water_Path", 0.5, -40, -9999, 10000), 1e-3),
		re:  scaled(dec("Cloud Effective Radius", 0.01, 100, -9999, 10000), 1e-6),
		tau: dec("Cloud_Optical_Thickness", 0.01, 0, -9999, 15000),
		ctt: dec("Cloud_Top_Temperature", 0.01, -15000, -32768, 20000),
	}
	checkOutputsAgainstMicrophys(t, out, in)
	// One column by hand: stored 60 is 0.5*(60+40) = 50 g m-2 (CF's reading would be -10).
	if lwp := readVar(t, out, "liquid_water_path"); lwp[0] != 50 {
		t.Fatalf("liquid_water_path[0] = %g g m-2, want 50 (HDF4 calibration)", lwp[0])
	}
	// Column 15 (stored 11500: 0.01*(11500+15000) = 265 K) is screened as possible ice.
	if qc := readVar(t, out, qcName); uint16(qc[15])&microphys.QCPossibleIce == 0 {
		t.Fatalf("column 15 (265 K) QC %v; want possible_ice", microphys.QCNames(uint16(qc[15])))
	}
	// --augment copies the HDF4 data sets with CF packing attributes: netCDF4-python
	// (CF decoding) reads the values HDF4 means.
	aug := filepath.Join(dir, "swath_aug.nc")
	if code, _, stderr := runProc(t, append([]string{"process", path, "-o", aug, "--augment"}, binds...)...); code != 0 {
		t.Fatalf("process --augment: exit %d: %s", code, stderr)
	}
	var raw map[string][]*float64
	script := `
import sys, json, numpy as np, netCDF4
d = netCDF4.Dataset(sys.argv[1])
f = lambda n: [None if np.ma.is_masked(x) else float(x) for x in d[n][:].ravel()]
print(json.dumps({"cwp": f("Cloud_Water_Path"), "re": f("Cloud Effective Radius"), "ctt": f("Cloud_Top_Temperature")}))
`
	if err := json.Unmarshal([]byte(gridtest.Python(t, script, aug)), &raw); err != nil {
		t.Fatal(err)
	}
	for name, want := range map[string][]float64{"cwp": scaled(in.lwp, 1e3), "re": scaled(in.re, 1e6), "ctt": in.ctt} {
		got := gridtest.Floats(raw[name])
		for i := range want {
			if math.IsNaN(want[i]) != math.IsNaN(got[i]) || (!math.IsNaN(want[i]) && math.Abs(got[i]-want[i]) > 1e-6*math.Abs(want[i])) {
				t.Fatalf("augmented %s[%d] read by netCDF4-python = %g, want %g", name, i, got[i], want[i])
			}
		}
	}
	lat := readVar(t, out, "Latitude")
	if len(lat) != 20 || math.Abs(lat[19]+21.9) > 1e-5 {
		t.Fatalf("2-D latitude not kept: %v", lat)
	}
	summarizeProduct(t, out)
}

// TestProductGroups: a granule with its data in netCDF-4 groups, two
// retrievals per quantity, bound by group path.
func TestProductGroups(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	dir := t.TempDir()
	path, want := gridtest.PyGroups(t, dir)
	// Ambiguous roles: a clear error naming the file and the group paths; nothing written.
	out := filepath.Join(dir, "granule_wr.nc")
	code, _, stderr := runProc(t, "process", path, "-o", out)
	if code != ExitFailure || !strings.Contains(stderr, path) || !strings.Contains(stderr, "/geophysical_data/cwp_21") || hasPanic(stderr) {
		t.Fatalf("ambiguous: exit %d: %s", code, stderr)
	}
	if fileExists(out) {
		t.Fatal("an output was written for an ambiguous input")
	}
	binds := []string{"--bind", "lwp=/geophysical_data/cwp_21", "--bind", "re=/geophysical_data/cer_21"}
	rep, code, stderr := inspectJSON(t, append([]string{path}, binds...)...)
	if code != 0 {
		t.Fatalf("inspect: exit %d: %s", code, stderr)
	}
	if tau := roleOf(rep, grid.RoleTau); tau.Variable != "/geophysical_data/cot_21" {
		t.Fatalf("tau not found in its group: %+v", tau)
	}
	if rep.Layout.Lat != "/navigation_data/latitude" || !rep.Layout.LatLon2D {
		t.Fatalf("coordinates by relative group path not resolved: %+v", rep.Layout)
	}
	if code, _, stderr := runProc(t, append([]string{"process", path, "-o", out}, binds...)...); code != 0 {
		t.Fatalf("process: exit %d: %s", code, stderr)
	}
	checkOutputsAgainstMicrophys(t, out, productInputs{
		lwp: scaled(want["cwp_21"], 1e-3), re: scaled(want["cer_21"], 1e-6), tau: want["cot_21"]})
	// The output is flat: the navigation group's coordinates by their plain names.
	fi, err := grid.Describe(out)
	if err != nil {
		t.Fatal(err)
	}
	if v := fi.Var("droplet_number"); v == nil || v.Text("coordinates") != "longitude latitude" || fi.Var("latitude") == nil {
		t.Fatalf("output coordinates: %s", v.Text("coordinates"))
	}
	summarizeProduct(t, out)
}

// TestProductJoinedCMIP: model output with one variable per file, joined with
// + on the command line and in a list file; a pair on two grids is refused.
func TestProductJoinedCMIP(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	dir := t.TempDir()
	lwp, re := gridtest.CMIPPair(t, dir, 3, "-30, -20, -10")
	scene := lwp + "+" + re
	rep, code, stderr := inspectJSON(t, scene)
	if code != 0 || len(rep.Files) != 2 || roleOf(rep, grid.RoleRe).InFile != re || roleOf(rep, grid.RoleLWP).InFile != lwp {
		t.Fatalf("inspect: exit %d %s: %+v", code, stderr, rep)
	}
	outDir := filepath.Join(dir, "out")
	os.Mkdir(outDir, 0o755)
	list := filepath.Join(dir, "scenes.txt")
	os.WriteFile(list, []byte(filepath.Base(lwp)+"+"+filepath.Base(re)+"\n"), 0o644)
	if code, _, stderr := runProc(t, "process", "@"+list, "-o", outDir); code != 0 {
		t.Fatalf("process: exit %d: %s", code, stderr)
	}
	out := filepath.Join(outDir, strings.TrimSuffix(filepath.Base(lwp), ".nc")+"_warmrain.nc")
	script := `
import sys, json, numpy as np, netCDF4
f = lambda p, n: [None if np.ma.is_masked(x) else float(x) for x in netCDF4.Dataset(p)[n][:].ravel()]
print(json.dumps({"lwp": f(sys.argv[1], "lwp"), "re": f(sys.argv[2], "reffclwtop")}))
`
	var raw map[string][]*float64
	if err := json.Unmarshal([]byte(gridtest.Python(t, script, lwp, re)), &raw); err != nil {
		t.Fatal(err)
	}
	checkOutputsAgainstMicrophys(t, out, productInputs{lwp: gridtest.Floats(raw["lwp"]), re: gridtest.Floats(raw["re"])})
	// The manifest records the first file and all of them; the output's identity covers both.
	recs := manifest(t, filepath.Join(outDir, "warmrain-manifest.jsonl"))
	if len(recs) != 1 || recs[0]["input"] != lwp || len(recs[0]["inputs"].([]any)) != 2 || recs[0]["status"] != "done" {
		t.Fatalf("manifest %v", recs)
	}
	fi, err := grid.Describe(out)
	if err != nil {
		t.Fatal(err)
	}
	a, _ := fi.Global(attrIdentity)
	idText, _ := a.Text()
	id, _ := batch.InputIdentity(scene, false)
	if !id.Matches(idText) || !strings.Contains(idText, filepath.Base(re)) {
		t.Fatalf("identity %s", idText)
	}
	// Rerun: skipped; after the r_e file changes, redone.
	if _, _, stderr := runProc(t, "process", scene, "-o", outDir); !strings.Contains(stderr, "skipped") {
		t.Fatalf("rerun not skipped: %s", stderr)
	}
	copyFile(t, re, re+".tmp")
	os.Rename(re+".tmp", re)
	if _, _, stderr := runProc(t, "process", scene, "-o", outDir); strings.Contains(stderr, "skipped") {
		t.Fatalf("changed r_e file not redone: %s", stderr)
	}
	summarizeProduct(t, out)

	// Two grids: a clear error naming both files and the grid; nothing written.
	bad := t.TempDir()
	lwp2, re2 := gridtest.CMIPPair(t, bad, 2, "-30, -20")
	code, _, stderr = runProc(t, "process", lwp2+"+"+re2, "-o", bad+"/")
	if code != ExitFailure || !strings.Contains(stderr, lwp2) || !strings.Contains(stderr, re2) || !strings.Contains(stderr, "one grid") || hasPanic(stderr) {
		t.Fatalf("mismatched grids: exit %d: %s", code, stderr)
	}
	for _, n := range dirNames(t, bad) {
		if strings.HasSuffix(n, "_warmrain.nc") || strings.Contains(n, ".tmp") {
			t.Fatalf("output left for a refused scene: %s", n)
		}
	}
	if code, _, stderr := runProc(t, "inspect", lwp2+"+"+re2); code == 0 || !strings.Contains(stderr, "one grid") {
		t.Fatalf("inspect of mismatched grids: exit %d: %s", code, stderr)
	}
}
