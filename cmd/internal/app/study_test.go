package app

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"io/fs"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/warmrain/warmrain/cmd/internal/batch"
	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/grid/gridtest"
	"github.com/warmrain/warmrain/microphys"
)

// globalText reads a global text attribute of a file.
func globalText(t *testing.T, path, name string) string {
	t.Helper()
	fi, err := grid.Describe(path)
	if err != nil {
		t.Fatal(err)
	}
	a, ok := fi.Global(name)
	if !ok {
		return ""
	}
	s, _ := a.Text()
	return s
}

// A study run from a parameter file, then again with --params-from its output, gives
// the same data, bit for bit: the provenance carries every parameter exactly. Options
// on the command line override the file. (Software behaviour; no physics is checked.)
func TestParamsFileReproduces(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	dir := t.TempDir()
	pf := filepath.Join(dir, "study.toml")
	if code, _, errs := runProc(t, "params", "--write", pf); code != 0 {
		t.Fatalf("params --write: exit %d: %s", code, errs)
	}
	written, _ := os.ReadFile(pf)
	// The file is never replaced without --force.
	if code, _, errs := runProc(t, "params", "--write", pf, "--onset-radius", "12"); code != ExitFailure || !strings.Contains(errs, "exists") {
		t.Errorf("params --write over an existing file: exit %d: %s", code, errs)
	}
	if now, _ := os.ReadFile(pf); string(now) != string(written) {
		t.Error("params --write replaced an existing file without --force")
	}
	// The file written holds every option, each once, and reads back to the defaults.
	for _, rows := range optionGroups() {
		if n := len(regexp.MustCompile(`(?m)^`+regexp.QuoteMeta(rows[0].Option)+` = `).FindAll(written, -1)); n != 1 {
			t.Errorf("written file: %d lines for %s, want 1", n, rows[0].Option)
		}
	}
	in := samplePath(t)
	defOut := filepath.Join(dir, "defaults.nc")
	if code, _, errs := runProc(t, "process", in, "-o", defOut, "--params", pf); code != 0 {
		t.Fatalf("process --params (defaults): exit %d: %s", code, errs)
	}
	plain := filepath.Join(dir, "plain.nc")
	if code, _, errs := runProc(t, "process", in, "-o", plain); code != 0 {
		t.Fatalf("process: exit %d: %s", code, errs)
	}
	if got, want := globalText(t, defOut, attrDigest), globalText(t, plain, attrDigest); got != want {
		t.Errorf("the written defaults give digest %s, the defaults %s", got, want)
	}

	// A study's own values: units as the options take them, another unit converted,
	// an array for an option of several numbers.
	study := `# a study of the onset
onset-radius = "13.5 um"
adiabatic-fraction = 0.85
gamma-shape = 7
re-range = ["5 um", "0.028 mm"]
autoconversion = "kessler1969"
drizzle-law = "0.4,1.7,1.6"
`
	if err := os.WriteFile(pf, []byte(study), 0o644); err != nil {
		t.Fatal(err)
	}
	a := filepath.Join(dir, "a.nc")
	if code, _, errs := runProc(t, "process", in, "-o", a, "--params", pf); code != 0 {
		t.Fatalf("process --params: exit %d: %s", code, errs)
	}
	for attr, want := range map[string]string{"onset_radius": "13.5 um", "adiabatic_fraction": "0.85", "gamma_shape": "7",
		"re_range_min": "5 um", "re_range_max": "28 um", "autoconversion": "kessler1969", "drizzle_law_a": "0.4", "drizzle_law_c": "1.6", "k_ratio": "0.8"} {
		if got := globalText(t, a, attrParamPrefix+attr); got != want {
			t.Errorf("%s%s = %q, want %q", attrParamPrefix, attr, got, want)
		}
	}
	// The same values as options give the same digest.
	c := filepath.Join(dir, "c.nc")
	if code, _, errs := runProc(t, "process", in, "-o", c, "--onset-radius", "13.5", "--adiabatic-fraction", "0.85", "--gamma-shape", "7",
		"--re-range", "5,28", "--autoconversion", "kessler1969", "--drizzle-law", "0.4,1.7,1.6"); code != 0 {
		t.Fatalf("process with options: exit %d: %s", code, errs)
	}
	if globalText(t, a, attrDigest) != globalText(t, c, attrDigest) {
		t.Error("the parameter file and the same options give different parameter digests")
	}
	// Reproduction: every parameter from a's provenance.
	b := filepath.Join(dir, "b.nc")
	if code, _, errs := runProc(t, "process", in, "-o", b, "--params-from", a); code != 0 {
		t.Fatalf("process --params-from: exit %d: %s", code, errs)
	}
	sameDigest(t, "--params-from its output", dataDigest(t, b), dataDigest(t, a))
	// The command line overrides the file.
	d := filepath.Join(dir, "d.nc")
	if code, _, errs := runProc(t, "process", in, "-o", d, "--params", pf, "--onset-radius", "12"); code != 0 {
		t.Fatalf("process --params with an option: exit %d: %s", code, errs)
	}
	if got := globalText(t, d, attrParamPrefix+"onset_radius"); got != "12 um" {
		t.Errorf("--onset-radius 12 over the file: provenance %q", got)
	}
	if got := globalText(t, d, attrParamPrefix+"gamma_shape"); got != "7" {
		t.Errorf("gamma-shape of the file with another option given: %q", got)
	}
	// params --params-from writes a file that gives the same run again.
	pf2 := filepath.Join(dir, "again.toml")
	if code, _, errs := runProc(t, "params", "--params-from", a, "--write", pf2); code != 0 {
		t.Fatalf("params --params-from --write: exit %d: %s", code, errs)
	}
	e := filepath.Join(dir, "e.nc")
	if code, _, errs := runProc(t, "process", in, "-o", e, "--params", pf2); code != 0 {
		t.Fatalf("process --params of the rewritten file: exit %d: %s", code, errs)
	}
	sameDigest(t, "the file params writes from an output", dataDigest(t, e), dataDigest(t, a))
	// column takes them too.
	code, out, errs := runProc(t, "column", "--lwp", "120", "--re", "14", "--params", pf, "--json")
	if code != 0 || !strings.Contains(out, "kessler") {
		t.Errorf("column --params: exit %d: %s %s", code, errs, out)
	}
}

// Mistakes in a parameter file are usage errors that name the file, the line and what
// is wrong; nothing is processed.
func TestParamsFileErrors(t *testing.T) {
	dir := t.TempDir()
	in := samplePath(t)
	for _, c := range []struct{ text, want string }{
		{"k-ratio = 0.8\n\nonset-radus = \"14 um\"\n", ":3: unknown parameter \"onset-radus\""},
		{"onset_radius = 14\n", ":1: unknown parameter \"onset_radius\" (parameters are named as the options: onset-radius)"},
		{"# jobs\njobs = 4\n", ":2: \"jobs\" is an option of the command, not a physics parameter"},
		{"onset-radius = \"14 kg\"\n", ":1: onset-radius: \"14 kg\": unit \"kg\" cannot be converted to um"},
		{"k-ratio = \"0.8 um\"\n", ":1: k-ratio: \"0.8 um\": this parameter is a pure number"},
		{"no-collector = \"yes\"\n", ":1: no-collector: want true or false"},
		{"re-range = [4]\n", ":1: re-range: want 2 values, got 1"},
		{"\n[physics]\nk-ratio = 0.8\n", ":2: [physics]: a parameter file has no tables"},
		{"k-ratio = 0.8\nk-ratio 0.9\n", ":2: not a parameter file in TOML form"},
		{"\n\nk-ratio = 1.5\n", ":3: k-ratio must be above 0 and at most 1 (got 1.5)"},
		{"autoconversion = \"kk2001\"\n", ":1: autoconversion \"kk2001\": want one of kk2000"},
	} {
		pf := filepath.Join(dir, "p.toml")
		os.WriteFile(pf, []byte(c.text), 0o644)
		out := filepath.Join(dir, "o.nc")
		code, _, errs := runProc(t, "process", in, "-o", out, "--params", pf)
		if code != ExitUsage || !strings.Contains(errs, pf+c.want) {
			t.Errorf("%q: exit %d, stderr %q, want %q", c.text, code, errs, pf+c.want)
		}
		if fileExists(out) {
			t.Errorf("%q: an output was written", c.text)
		}
	}
	code, _, errs := runProc(t, "process", in, "-o", filepath.Join(dir, "o.nc"), "--params", "x.toml", "--params-from", "y.nc")
	if code != ExitUsage || !strings.Contains(errs, "cannot be combined") {
		t.Errorf("--params with --params-from: exit %d: %s", code, errs)
	}
	code, _, errs = runProc(t, "process", in, "-o", filepath.Join(dir, "o.nc"), "--params-from", in)
	if code != ExitUsage || !strings.Contains(errs, "not written by warmrain process") {
		t.Errorf("--params-from an input: exit %d: %s", code, errs)
	}
}

// An output that does not record a parameter (written before it existed; rewritten here with
// xarray) cannot be
// reproduced exactly: --params-from says which, and accepts them from the command line.
func TestParamsFromMissingParameter(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	py := requireTool(t, "/usr/bin/python3")
	dir := t.TempDir()
	a := filepath.Join(dir, "a.nc")
	if code, _, errs := runProc(t, "process", samplePath(t), "-o", a, "--onset-width", "3", "--outputs", "drizzle_probability"); code != 0 {
		t.Fatalf("process: exit %d: %s", code, errs)
	}
	old := filepath.Join(dir, "old.nc")
	// The file as an older warmrain would have written it, through xarray.
	script := `import sys, xarray as xr
ds = xr.open_dataset(sys.argv[1], decode_cf=False)
del ds.attrs["warmrain_parameter_onset_width"]
ds.attrs["warmrain_bindings"] = "lwp=lwp"
ds.to_netcdf(sys.argv[2])`
	if b, err := exec.Command(py, "-c", script, a, old).CombinedOutput(); err != nil {
		t.Fatalf("xarray: %v\n%s", err, b)
	}
	code, _, errs := runProc(t, "params", "--params-from", old)
	if code != ExitUsage || !strings.Contains(errs, "records no value of --onset-width") {
		t.Errorf("missing parameter: exit %d: %s", code, errs)
	}
	code, out, errs := runProc(t, "params", "--params-from", old, "--onset-width", "3")
	if code != 0 || !strings.Contains(out, "--onset-width 3 um") || !strings.Contains(errs, "bindings are not parameters: give them again") {
		t.Errorf("missing parameter given: exit %d: %s\n%s", code, errs, out)
	}
}

// warmrain params lists every option with its unit, default, valid range, published
// range and source.
func TestParamsList(t *testing.T) {
	code, out, errs := runProc(t, "params")
	if code != 0 || errs != "" {
		t.Fatalf("params: exit %d: %s", code, errs)
	}
	d := microphys.DefaultParams()
	for _, rows := range optionGroups() {
		r := rows[0]
		i := strings.Index(out, "\n--"+r.Option+" ")
		if r == &microphys.ParamDecls[0] {
			i = strings.Index(out, "--"+r.Option+" ")
		}
		if i < 0 {
			t.Errorf("params: no entry for --%s", r.Option)
			continue
		}
		entry := out[i:]
		if j := strings.Index(entry[1:], "\n\n"); j > 0 {
			entry = entry[:j+1]
		}
		for _, want := range []string{paramValueText(rows, &d), "default: ", "published: ", "source: "} {
			if !strings.Contains(entry, want) {
				t.Errorf("params: --%s lacks %q:\n%s", r.Option, want, entry)
			}
		}
		if r.Literature != "" && !strings.Contains(strings.Join(strings.Fields(entry), " "), r.Literature) {
			t.Errorf("params: --%s does not show its published range %q", r.Option, r.Literature)
		}
	}
	code, out, _ = runProc(t, "params", "--onset-radius", "13")
	if code != 0 || !strings.Contains(out, "--onset-radius 13 um (default 14 um)") {
		t.Errorf("params --onset-radius 13: exit %d:\n%s", code, out)
	}
}

// treeState records every file and folder under dir: name, size, time and contents.
func treeState(t *testing.T, dirs ...string) map[string]string {
	t.Helper()
	s := map[string]string{}
	for _, dir := range dirs {
		filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
			if err != nil {
				t.Fatal(err)
			}
			st, _ := os.Lstat(p)
			v := st.Mode().String() + " " + strconv.FormatInt(st.Size(), 10) + " " + st.ModTime().Format(time.RFC3339Nano)
			if st.Mode().IsRegular() {
				b, _ := os.ReadFile(p)
				h := sha256.Sum256(b)
				v += " " + hex.EncodeToString(h[:])
			}
			s[p] = v
			return nil
		})
	}
	return s
}

// The dry run gives each file the decision a run would take (skip a complete output,
// redo one whose input changed, refuse a file in the way, fail an unreadable input,
// process the rest) with the bindings of its variables, and writes nothing: no output,
// folder, manifest, log or table; inputs and their times untouched.
func TestDryRunWritesNothing(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	dir := t.TempDir()
	ins := filepath.Join(dir, "in")
	out := filepath.Join(dir, "out")
	os.Mkdir(ins, 0o755)
	src, _ := os.ReadFile(samplePath(t))
	var paths []string
	for _, n := range []string{"d1", "d2", "d3", "d4"} {
		p := filepath.Join(ins, n+".nc")
		os.WriteFile(p, src, 0o644)
		paths = append(paths, p)
	}
	bad := filepath.Join(ins, "d5.nc")
	os.WriteFile(bad, []byte("not a netCDF file\n"), 0o644)
	if code, _, errs := runProc(t, "process", paths[0], paths[1], "-o", out+"/"); code != 0 {
		t.Fatalf("first run: exit %d: %s", code, errs)
	}
	later := time.Now().Add(time.Hour)
	os.Chtimes(paths[1], later, later) // d2 changed: its output is redone
	os.WriteFile(filepath.Join(out, "d3_warmrain.nc"), []byte("a user's notes\n"), 0o644)
	before := treeState(t, dir)
	args := []string{"process", filepath.Join(ins, "*.nc"), "-o", out + "/", "--dry-run", "--log", filepath.Join(dir, "run.log"), "--manifest", filepath.Join(dir, "m.jsonl")}
	code, stdout, errs := runProc(t, args...)
	if code != ExitFailure || !strings.Contains(errs, "2 of 5 files would not be processed") {
		t.Errorf("dry run: exit %d, stderr %q", code, errs)
	}
	want := map[string]string{"d1": ": skip: ", "d2": ": redo: the input changed since it was written", "d3": ": refuse: ", "d4": ": process\n", "d5": ": fail: "}
	for n, w := range want {
		line := filepath.Join(ins, n+".nc") + " -> " + filepath.Join(out, n+"_warmrain.nc") + w
		if !strings.Contains(stdout, line) {
			t.Errorf("dry run: no line %q in\n%s", line, stdout)
		}
	}
	if !strings.Contains(stdout, `    lwp = lwp: units "g m-2" (attribute), conversion x*0.001 (g m-2 -> kg m-2)`) ||
		!strings.Contains(stdout, `    re = re: units "um" (attribute), conversion x*1e-06 (um -> m)`) {
		t.Errorf("dry run: bindings missing:\n%s", stdout)
	}
	if !strings.Contains(stdout, "# process 1, skip 1, redo 1, refuse 1, fail 1") {
		t.Errorf("dry run: tally missing:\n%s", stdout)
	}
	if after := treeState(t, dir); len(after) != len(before) {
		t.Errorf("dry run changed the tree: %d entries before, %d after", len(before), len(after))
	} else {
		for p, v := range before {
			if after[p] != v {
				t.Errorf("dry run changed %s: %s -> %s", p, v, after[p])
			}
		}
	}
	// --json: the same decisions as one JSON document on stdout, the same exit code and
	// message on stderr, and still nothing written.
	code, jsout, jerrs := runProc(t, append(args, "--json")...)
	if code != ExitFailure || jerrs != errs {
		t.Errorf("dry run --json: exit %d, stderr %q (text: %q)", code, jerrs, errs)
	}
	var rep struct {
		Digest string `json:"parameters_digest"`
		Inputs int    `json:"inputs"`
		Files  []struct {
			Input, Output, Decision, Reason string
			Roles                           []struct {
				Role, Variable string
				UnitsGiven     string `json:"units_given"`
				Canonical      string `json:"canonical_units"`
				Conversion     string
			}
		}
		Tally map[string]int
	}
	if err := json.Unmarshal([]byte(jsout), &rep); err != nil {
		t.Fatalf("dry run --json: %v\n%s", err, jsout)
	}
	if !strings.Contains(stdout, "parameters digest "+rep.Digest+";") || rep.Inputs != 5 || len(rep.Files) != 5 {
		t.Errorf("dry run --json: digest %q, %d inputs, %d files; text:\n%s", rep.Digest, rep.Inputs, len(rep.Files), stdout)
	}
	textDecisions := ""
	for _, f := range rep.Files {
		n := strings.TrimSuffix(filepath.Base(f.Input), ".nc")
		verdict := f.Decision
		if f.Reason != "" {
			verdict += ": " + f.Reason
		}
		if line := f.Input + " -> " + f.Output + ": " + verdict + "\n"; !strings.Contains(stdout, line) || !strings.HasPrefix(want[n], ": "+f.Decision) {
			t.Errorf("dry run --json: %s: %s, %q; text:\n%s", n, f.Decision, f.Reason, stdout)
		}
		textDecisions += n + " " + f.Decision + "\n"
		if n == "d4" {
			r := f.Roles[0]
			if r.Role != "lwp" || r.Variable != "lwp" || r.UnitsGiven != "g m-2" || r.Canonical != "kg m-2" || r.Conversion != "x*0.001 (g m-2 -> kg m-2)" {
				t.Errorf("dry run --json: d4's first role %+v", r)
			}
		}
	}
	if rep.Tally["process"] != 1 || rep.Tally["skip"] != 1 || rep.Tally["refuse"] != 1 || rep.Tally["fail"] != 1 || rep.Tally["redo"] != 1 {
		t.Errorf("dry run --json: tally %v", rep.Tally)
	}
	// An outside reader: Debian's python3 json module reads the same decisions.
	jf := filepath.Join(t.TempDir(), "plan.json")
	os.WriteFile(jf, []byte(jsout), 0o644)
	py := gridtest.Python(t, `
import json, os, sys
d = json.load(open(sys.argv[1]))
for f in d["files"]:
    print(os.path.basename(f["input"])[:-3], f["decision"])
`, jf)
	if py != textDecisions || !strings.Contains(py, "d1 skip\n") || !strings.Contains(py, "d3 refuse\n") || !strings.Contains(py, "d4 process\n") {
		t.Errorf("python json reads\n%s\nwant\n%s", py, textDecisions)
	}
	if after := treeState(t, dir); len(after) != len(before) {
		t.Errorf("dry run --json changed the tree: %d entries before, %d after", len(before), len(after))
	} else {
		for p, v := range before {
			if after[p] != v {
				t.Errorf("dry run --json changed %s: %s -> %s", p, v, after[p])
			}
		}
	}
	// A missing output folder is not made; a shard lists its own files only.
	newOut := filepath.Join(dir, "new") + "/"
	code, stdout, errs = runProc(t, "process", filepath.Join(ins, "d[1-4].nc"), "-o", newOut, "--dry-run", "--shard", "1/2")
	if code != 0 || !strings.Contains(stdout, "a run would make it") || fileExists(newOut) {
		t.Errorf("dry run to a new folder: exit %d, %s\n%s", code, errs, stdout)
	}
	mine := batch.Shard{Index: 1, Count: 2}.Select(paths)
	if n := strings.Count(stdout, ": process\n"); n != len(mine) || !strings.Contains(stdout, "shard 1/2 (--shard): 2 of 4 inputs") {
		t.Errorf("shard 1/2: %d files listed, want %d:\n%s", n, len(mine), stdout)
	}
	for _, i := range mine {
		if !strings.Contains(stdout, paths[i]+" -> ") {
			t.Errorf("shard 1/2: %s not listed", paths[i])
		}
	}
	// A Slurm array task lists its shard.
	t.Setenv("SLURM_ARRAY_TASK_ID", "3")
	t.Setenv("SLURM_ARRAY_TASK_COUNT", "4")
	t.Setenv("SLURM_ARRAY_TASK_MIN", "0")
	t.Setenv("SLURM_ARRAY_TASK_MAX", "3")
	code, stdout, _ = runProc(t, "process", filepath.Join(ins, "d[1-4].nc"), "-o", newOut, "--dry-run")
	mine = batch.Shard{Index: 3, Count: 4}.Select(paths)
	if code != 0 || !strings.Contains(stdout, "shard 3/4 (slurm): 1 of 4 inputs") || !strings.Contains(stdout, paths[mine[0]]+" -> ") {
		t.Errorf("Slurm task 3 of 4: exit %d:\n%s", code, stdout)
	}
}

// A batch says where it stands: a start line with the digest the outputs record, one
// whole line per file with k of N, the rate and the time left, and a closing tally whose
// screening counts are those of the outputs' QC bits; --log appends the same lines.
func TestBatchReport(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	dir := t.TempDir()
	src, _ := os.ReadFile(samplePath(t))
	var paths []string
	for _, n := range []string{"a", "b", "c"} {
		p := filepath.Join(dir, n+".nc")
		os.WriteFile(p, src, 0o644)
		paths = append(paths, p)
	}
	out := filepath.Join(dir, "out") + "/"
	logf := filepath.Join(dir, "run.log")
	code, stdout, errs := runProc(t, "process", filepath.Join(dir, "*.nc"), "-o", out, "--log", logf, "--jobs", "2")
	if code != 0 || stdout != "" {
		t.Fatalf("batch: exit %d, stdout %q: %s", code, stdout, errs)
	}
	if strings.Contains(errs, "\r") {
		t.Error("the batch messages hold carriage returns")
	}
	lines := strings.Split(strings.TrimSuffix(errs, "\n"), "\n")
	digest := globalText(t, filepath.Join(out, "a_warmrain.nc"), attrDigest)
	if !regexp.MustCompile(`^warmrain: start \S+Z: 3 files, parameters digest ` + digest + `, --jobs 2, warmrain `).MatchString(lines[0]) {
		t.Errorf("start line: %q", lines[0])
	}
	for k := 1; k <= 3; k++ {
		re := regexp.MustCompile(`(?m)^warmrain: \[` + strconv.Itoa(k) + `/3\] \S+\.nc -> \S+_warmrain\.nc: 30000 columns, [0-9.]+ % screened, [0-9.]+ s; [0-9.e+]+ files/min`)
		if !re.MatchString(errs) {
			t.Errorf("no line for file %d of 3:\n%s", k, errs)
		}
	}
	// The tally's counts by reason are those of the outputs' QC variables.
	count := map[string]int64{}
	var screened int64
	for _, p := range paths {
		qc := readVar(t, filepath.Join(out, strings.TrimSuffix(filepath.Base(p), ".nc")+"_warmrain.nc"), microphys.QCOutputName)
		for _, x := range qc {
			q := uint32(x)
			any := false
			for _, f := range screenFlags {
				if q&(1<<f.bit) != 0 {
					count[f.name]++
					any = true
				}
			}
			if any {
				screened++
			}
		}
	}
	end := regexp.MustCompile(`(?m)^warmrain: end \S+Z: 3 done, 0 skipped, 0 failed, 0 interrupted of 3 files in \S+; 90000 columns processed, ` + strconv.FormatInt(screened, 10) + ` screened$`)
	if !end.MatchString(errs) {
		t.Errorf("closing line (want %d screened):\n%s", screened, errs)
	}
	var names []string
	for n := range count {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, n := range names {
		if !strings.Contains(errs, " "+n+" "+strconv.FormatInt(count[n], 10)) {
			t.Errorf("tally: want %s %d:\n%s", n, count[n], errs)
		}
	}
	// The manifest records the same counts per file.
	var manScreened float64
	for _, rec := range manifest(t, filepath.Join(out, "warmrain-manifest.jsonl")) {
		manScreened += rec["screened"].(float64)
		if qc, _ := rec["screened_qc"].([]any); len(qc) != len(count) {
			t.Errorf("manifest: screened_qc %v, want %d reasons", rec["screened_qc"], len(count))
		}
	}
	if int64(manScreened) != screened {
		t.Errorf("manifest: %v columns screened, the outputs' QC %d", manScreened, screened)
	}
	logText, _ := os.ReadFile(logf)
	if string(logText) != errs {
		t.Errorf("the log differs from stderr:\nlog:\n%s\nstderr:\n%s", logText, errs)
	}
	// A rerun appends; --quiet drops the lines per file from stderr, not from the log.
	code, _, errs = runProc(t, "process", filepath.Join(dir, "*.nc"), "-o", out, "--log", logf, "--quiet")
	if code != 0 || strings.Contains(errs, "[1/3]") || !strings.Contains(errs, "0 done, 3 skipped, 0 failed, 0 interrupted of 3 files") {
		t.Errorf("quiet rerun: exit %d:\n%s", code, errs)
	}
	logText, _ = os.ReadFile(logf)
	if strings.Count(string(logText), "warmrain: start ") != 2 || !strings.Contains(string(logText), "[3/3] ") || strings.Count(string(logText), ": complete output ") != 3 {
		t.Errorf("log after the rerun:\n%s", logText)
	}
}

// inspect over an archive compares every file with what most have: the files are the
// sample at later days (as most), one with LWP written in kg m-2, one on a subset of the
// grid, one a copy of the first days under another name, and one that is no input.
// Written with xarray, an outside library.
func TestInspectArchive(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	py := requireTool(t, "/usr/bin/python3")
	dir := t.TempDir()
	script := `import sys, xarray as xr
xr.set_options(keep_attrs=True)
src, dir = sys.argv[1], sys.argv[2]
def shifted(days):
    ds = xr.open_dataset(src, decode_cf=False)
    ds["time"] = ds["time"] + days * 86400.0
    ds["time_bnds"] = ds["time_bnds"] + days * 86400.0
    return ds
shifted(3).to_netcdf(dir + "/a2.nc")
shifted(6).to_netcdf(dir + "/a3.nc")
shifted(9).to_netcdf(dir + "/a4.nc")
ds = shifted(12)
ds["lwp"].attrs["units"] = "kg m-2"
ds["lwp"].attrs["scale_factor"] = ds["lwp"].attrs.get("scale_factor", 1.0) * 1e-3
ds["lwp"].attrs["add_offset"] = ds["lwp"].attrs.get("add_offset", 0.0) * 1e-3
ds.to_netcdf(dir + "/a5_kg.nc")
shifted(15).isel(lat=slice(0, 50)).to_netcdf(dir + "/a6_half.nc")
open(dir + "/a7_notes.nc", "w").write("notes\n")
`
	if b, err := exec.Command(py, "-c", script, samplePath(t), dir).CombinedOutput(); err != nil {
		t.Fatalf("xarray: %v\n%s", err, b)
	}
	src, _ := os.ReadFile(samplePath(t))
	os.WriteFile(filepath.Join(dir, "a1.nc"), src, 0o644)
	os.WriteFile(filepath.Join(dir, "a1_copy.nc"), src, 0o644)
	list := filepath.Join(dir, "list")
	os.WriteFile(list, []byte("# the archive\na1.nc\na1_copy.nc\na2.nc\n"), 0o644)

	code, stdout, errs := runProc(t, "inspect", filepath.Join(dir, "a[1-7]*.nc"), "--json")
	var rep archiveReport
	if err := json.Unmarshal([]byte(stdout), &rep); err != nil {
		t.Fatalf("inspect --json: %v\n%s", err, stdout)
	}
	if code != ExitFailure || !strings.Contains(errs, "4 of 8 files differ from the others or cannot be read") {
		t.Errorf("archive: exit %d: %s", code, errs)
	}
	if rep.Files != 8 || rep.Consistent != 4 || rep.Odd != 3 || rep.Unreadable != 1 {
		t.Errorf("archive: %d files, %d as most, %d differ, %d unreadable; want 8, 4, 3, 1", rep.Files, rep.Consistent, rep.Odd, rep.Unreadable)
	}
	want := map[string]string{
		"a1_copy.nc":  "time: 2026-09-21T12:00:00Z .. 2026-09-23T12:00:00Z overlaps",
		"a5_kg.nc":    `units: lwp "kg m-2"`,
		"a6_half.nc":  "grid: lat=50, lon=100",
		"a7_notes.nc": "",
	}
	for _, f := range rep.List {
		w, odd := want[filepath.Base(f.File)]
		switch {
		case !odd && (len(f.Differs) > 0 || f.Problem != ""):
			t.Errorf("%s: reported as odd: %v %s", f.File, f.Differs, f.Problem)
		case odd && w == "" && f.Problem == "":
			t.Errorf("%s: not reported as unreadable", f.File)
		case odd && w != "" && !strings.Contains(strings.Join(f.Differs, "\n"), w):
			t.Errorf("%s: differences %q, want %q", f.File, f.Differs, w)
		}
		if f.Problem == "" && f.Aspects["time step"] != "3 steps of 24h0m0s" {
			t.Errorf("%s: time step %q", f.File, f.Aspects["time step"])
		}
	}
	// A list file, and the text form.
	code, stdout, _ = runProc(t, "inspect", "@"+list)
	if code != ExitFailure || !strings.Contains(stdout, "a2.nc (2026-09-24T12:00:00Z .. 2026-09-26T12:00:00Z): as most") ||
		!strings.Contains(stdout, "2 of 3 files as most, 1 differ, 0 cannot be read") {
		t.Errorf("inspect @list: exit %d:\n%s", code, stdout)
	}
	code, stdout, _ = runProc(t, "inspect", filepath.Join(dir, "a1.nc"), filepath.Join(dir, "a2.nc"), filepath.Join(dir, "a3.nc"))
	if code != 0 || !strings.Contains(stdout, "3 of 3 files as most, 0 differ, 0 cannot be read") {
		t.Errorf("consistent archive: exit %d:\n%s", code, stdout)
	}
}

// An ensemble takes the parameter file as the base of every member: each member equals
// the single run with the file and the member's options.
func TestEnsembleOverParamsFile(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	dir := t.TempDir()
	pf := filepath.Join(dir, "study.toml")
	os.WriteFile(pf, []byte("gamma-shape = 3\nonset-width = \"2 um\"\n"), 0o644)
	sets := filepath.Join(dir, "sets.txt")
	os.WriteFile(sets, []byte("base:\nearly: --onset-radius 12\n"), 0o644)
	in := samplePath(t)
	ens := filepath.Join(dir, "ens.nc")
	outs := []string{"--outputs", "drizzle_probability"}
	if code, _, errs := runProc(t, append([]string{"process", in, "-o", ens, "--ensemble", sets, "--params", pf}, outs...)...); code != 0 {
		t.Fatalf("ensemble with --params: exit %d: %s", code, errs)
	}
	all := readVar(t, ens, "drizzle_probability")
	for k, extra := range [][]string{nil, {"--onset-radius", "12"}} {
		one := filepath.Join(dir, "one"+strconv.Itoa(k)+".nc")
		args := append(append([]string{"process", in, "-o", one, "--params", pf}, outs...), extra...)
		if code, _, errs := runProc(t, args...); code != 0 {
			t.Fatalf("single run %v: exit %d: %s", extra, code, errs)
		}
		want := readVar(t, one, "drizzle_probability")
		got := all[k*len(want) : (k+1)*len(want)]
		for i := range want {
			if math.Float64bits(got[i]) != math.Float64bits(want[i]) && !(math.IsNaN(got[i]) && math.IsNaN(want[i])) {
				t.Fatalf("member %d differs from the single run with the file at %d: %v != %v", k, i, got[i], want[i])
			}
		}
	}
	if code, _, errs := runProc(t, "process", in, "-o", filepath.Join(dir, "x.nc"), "--ensemble", sets, "--dry-run"); code != ExitUsage || !strings.Contains(errs, "cannot be combined") {
		t.Errorf("--dry-run with --ensemble: exit %d: %s", code, errs)
	}
}

// --json prints the dry run; without --dry-run it is a usage error that says so, before
// any work (the output folder named here does not exist).
func TestProcessJSONNeedsDryRun(t *testing.T) {
	out := filepath.Join(t.TempDir(), "none") + "/"
	code, stdout, errs := runProc(t, "process", samplePath(t), "-o", out, "--json")
	if code != ExitUsage || stdout != "" || !strings.Contains(errs, "--json is for --dry-run") || fileExists(out) {
		t.Errorf("--json without --dry-run: exit %d, stdout %q, stderr %q", code, stdout, errs)
	}
}
