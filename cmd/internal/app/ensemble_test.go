package app

import (
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
)

// TestEnsembleMembersEqualSingleRuns: each member of an ensemble output holds, value for
// value (raw stored bits, read by netCDF4-python without masking), what a single run with
// the same options writes; the file passes the CF lint; a rerun skips the complete
// output, and an edited ensemble file is refused without --redo.
func TestEnsembleMembersEqualSingleRuns(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	if _, err := os.Stat(sampleFile); err != nil {
		skipOrFailMissing(t, "the committed sample "+sampleFile)
	}
	dir := t.TempDir()
	sets := filepath.Join(dir, "sets.txt")
	text := "# onset and sub-adiabatic choices\nbase:\nearly: --onset-radius 12\nlate: --onset-radius 16 --adiabatic-fraction 0.7\n"
	if err := os.WriteFile(sets, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	ens := filepath.Join(dir, "ens.nc")
	common := []string{"--outputs", "liquid_water_path,droplet_number,drizzle_probability,cloud_base_drizzle_rate", "--gamma-shape", "3"}
	if code, _, stderr := runCmd(append([]string{"process", sampleFile, "-o", ens, "--ensemble", sets}, common...)...); code != 0 {
		t.Fatalf("ensemble: exit %d\n%s", code, stderr)
	}
	singles := map[string][]string{"base": nil, "early": {"--onset-radius", "12"}, "late": {"--onset-radius", "16", "--adiabatic-fraction", "0.7"}}
	var paths []string
	for _, name := range []string{"base", "early", "late"} {
		p := filepath.Join(dir, name+".nc")
		args := append(append([]string{"process", sampleFile, "-o", p}, common...), singles[name]...)
		if code, _, stderr := runCmd(args...); code != 0 {
			t.Fatalf("single %s: exit %d\n%s", name, code, stderr)
		}
		paths = append(paths, p)
	}
	py := "/usr/bin/python3"
	if exec.Command(py, "-c", "import netCDF4, numpy").Run() != nil {
		skipOrFailMissing(t, "/usr/bin/python3 with netCDF4 (Debian python3-netcdf4)")
	}
	script := `
import sys, numpy as np, netCDF4
ens = netCDF4.Dataset(sys.argv[1]); ens.set_auto_maskandscale(False)
names = [str(x) for x in netCDF4.chartostring(ens["member_name"][:])]
texts = [str(x) for x in netCDF4.chartostring(ens["member_parameters"][:])]
assert texts == ["", "--onset-radius 12", "--onset-radius 16 --adiabatic-fraction 0.7"], texts
assert "member_name" in ens["drizzle_probability"].coordinates.split()
assert names == ["base", "early", "late"], names
bad = []
for k, path in enumerate(sys.argv[2:]):
    one = netCDF4.Dataset(path); one.set_auto_maskandscale(False)
    for v in ["liquid_water_path", "droplet_number", "drizzle_probability", "cloud_base_drizzle_rate", "warm_rain_qc",
              "droplet_number_standard_error", "drizzle_probability_standard_error", "warm_rain_uncertainty_flag"]:
        a, b = ens[v][k], one[v][:]
        if ens[v].dimensions[0] != "member" or a.dtype != b.dtype or a.tobytes() != b.tobytes():
            bad.append("%s member %s" % (v, names[k]))
    for v in ["lat", "lon", "time"]:
        if ens[v][:].tobytes() != one[v][:].tobytes():
            bad.append(v)
# the members differ where the parameters differ
if ens["drizzle_probability"][0].tobytes() == ens["drizzle_probability"][1].tobytes():
    bad.append("members base and early are equal")
print(";".join(bad) or "ok")
`
	out, err := exec.Command(py, append([]string{"-c", script, ens}, paths...)...).CombinedOutput()
	if err != nil || strings.TrimSpace(string(out)) != "ok" {
		t.Fatalf("members differ from the single runs: %v\n%s", err, out)
	}
	lintSummary(t, ens)
	// The summary pools the members and says so.
	if code, _, stderr := runCmd("summary", ens); code != 0 || !strings.Contains(stderr, "3 ensemble members") {
		t.Errorf("summary of the ensemble: exit %d, want a note on the pooled members:\n%s", code, stderr)
	}

	// Resume: the same command skips; an edited ensemble file is other parameters.
	code, _, stderr := runCmd(append([]string{"process", sampleFile, "-o", ens, "--ensemble", sets}, common...)...)
	if code != 0 || !strings.Contains(stderr, "skipped") {
		t.Errorf("rerun: exit %d, want a skip\n%s", code, stderr)
	}
	if err := os.WriteFile(sets, []byte(text+"wide: --onset-radius 18\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, stderr = runCmd(append([]string{"process", sampleFile, "-o", ens, "--ensemble", sets}, common...)...)
	if code == 0 {
		t.Errorf("an edited ensemble file replaced the output without --redo:\n%s", stderr)
	}
}

func TestEnsembleFileErrors(t *testing.T) {
	dir := t.TempDir()
	for _, c := range []struct{ text, want string }{
		{"a: --onset-radius 12\na: --onset-radius 13\n", "already defined on line 1"},
		{"a --onset-radius 12\n", "expected NAME:"},
		{"a: --no-such-option 1\n", "line 1"},
		{"a: --onset-radius\n", "line 1"},
		{"a: --onset-radius 12 extra\n", "unexpected \"extra\""},
		{"# only a comment\n", "no parameter sets"},
		{"a: --adiabatic-fraction 7\n", "adiabatic-fraction"},
	} {
		p := filepath.Join(dir, "sets.txt")
		if err := os.WriteFile(p, []byte(c.text), 0o644); err != nil {
			t.Fatal(err)
		}
		code, _, stderr := runCmd("process", sampleFile, "-o", filepath.Join(dir, "x.nc"), "--ensemble", p)
		if code == 0 || !strings.Contains(stderr, c.want) {
			t.Errorf("%q: exit %d, want an error with %q:\n%s", c.text, code, c.want, stderr)
		}
		if _, err := os.Stat(filepath.Join(dir, "x.nc")); err == nil {
			t.Errorf("%q: an output was written", c.text)
		}
	}
}
