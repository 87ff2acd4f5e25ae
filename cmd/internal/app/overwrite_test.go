package app

// Nothing the user had is replaced unless asked: outputs of another input,
// of other parameters, and foreign files at an output path are refused before
// any work with what is there and how to proceed; a rebuild or --checksum
// redoes warmrain's own outputs of the same input.

import (
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
)

func mkdirs(t *testing.T, dirs ...string) {
	t.Helper()
	for _, d := range dirs {
		if err := os.MkdirAll(d, 0o755); err != nil {
			t.Fatal(err)
		}
	}
}

func TestProcessNeverOverwrite(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	src := samplePath(t)
	dir := t.TempDir()
	out := filepath.Join(dir, "out")
	mkdirs(t, filepath.Join(dir, "2019"), filepath.Join(dir, "2020"), out)
	in19, in20 := filepath.Join(dir, "2019", "jan.nc"), filepath.Join(dir, "2020", "jan.nc")
	copyFile(t, src, in19)
	copyFile(t, src, in20)
	target := filepath.Join(out, "jan_warmrain.nc")

	// Case 1: the same file name from another folder, in a later run.
	if code, _, stderr := runProc(t, "process", in19, "-o", out+"/", "--no-collector"); code != 0 {
		t.Fatalf("2019: exit %d: %s", code, stderr)
	}
	sum19 := fileSHA256(t, target)
	code, _, stderr := runProc(t, "process", in20, "-o", out+"/", "--no-collector")
	if code != ExitFailure || !strings.Contains(stderr, "another input") || !strings.Contains(stderr, in19) || !strings.Contains(stderr, "{relpath}") {
		t.Fatalf("2020 into the same folder: exit %d: %s", code, stderr)
	}
	if fileSHA256(t, target) != sum19 {
		t.Fatal("the 2019 output was replaced")
	}
	// Several inputs: refused before any work (no output, no manifest record).
	other := filepath.Join(dir, "2020", "feb.nc")
	copyFile(t, src, other)
	code, _, stderr = runProc(t, "process", other, in20, "-o", out, "--no-collector")
	if code != ExitFailure || !strings.Contains(stderr, "nothing was done") || fileExists(filepath.Join(out, "feb_warmrain.nc")) {
		t.Fatalf("batch with one output in the way: exit %d: %s", code, stderr)
	}
	// {relpath} tells them apart.
	t.Chdir(dir)
	code, _, stderr = runProc(t, "process", "2019/jan.nc", "2020/jan.nc", "-o", "out", "--name", "{relpath}_wr.nc", "--no-collector")
	if code != 0 || !fileExists(filepath.Join(out, "2019_jan_wr.nc")) || !fileExists(filepath.Join(out, "2020_jan_wr.nc")) {
		t.Fatalf("{relpath}: exit %d: %s", code, stderr)
	}

	// Case 2: a rerun with other parameters is refused; --redo replaces.
	code, _, stderr = runProc(t, "process", in19, "-o", out+"/", "--no-collector", "--gamma-shape", "2")
	if code != ExitFailure || !strings.Contains(stderr, "other parameters") || !strings.Contains(stderr, "--redo") {
		t.Fatalf("other parameters: exit %d: %s", code, stderr)
	}
	if fileSHA256(t, target) != sum19 {
		t.Fatal("the baseline output was replaced")
	}
	if code, _, stderr := runProc(t, "process", in19, "-o", out+"/", "--no-collector", "--gamma-shape", "2", "--redo"); code != 0 || fileSHA256(t, target) == sum19 {
		t.Fatalf("--redo: exit %d: %s", code, stderr)
	}
	// --redo never replaces another input's output.
	code, _, stderr = runProc(t, "process", in20, "-o", out+"/", "--no-collector", "--redo")
	if code != ExitFailure || !strings.Contains(stderr, "another input") {
		t.Fatalf("--redo onto another input's output: exit %d: %s", code, stderr)
	}

	// A file warmrain did not write is kept unless --force.
	foreign := filepath.Join(dir, "mine.nc")
	os.WriteFile(foreign, []byte("my notes"), 0o644)
	code, _, stderr = runProc(t, "process", in19, "-o", foreign, "--no-collector", "--redo")
	if code != ExitFailure || !strings.Contains(stderr, "not written by warmrain") || !strings.Contains(stderr, "--force") {
		t.Fatalf("foreign file: exit %d: %s", code, stderr)
	}
	if b, _ := os.ReadFile(foreign); string(b) != "my notes" {
		t.Fatal("a foreign file was replaced")
	}
	if code, _, stderr := runProc(t, "process", in19, "-o", foreign, "--no-collector", "--force"); code != 0 {
		t.Fatalf("--force: exit %d: %s", code, stderr)
	}
}

// TestProcessTwoRunsOneOutput: two runs with different parameters writing the
// same -o path at the same time: whatever the timing, exactly one succeeds
// (the other is refused, or finds at its final rename that the file appeared)
// and the output is the winner's whole file.
func TestProcessTwoRunsOneOutput(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	src := samplePath(t)
	dir := t.TempDir()
	in := filepath.Join(dir, "in.nc")
	copyFile(t, src, in)
	out := filepath.Join(dir, "same.nc")
	type result struct {
		code   int
		stderr string
	}
	res := make(chan result, 2)
	for _, more := range [][]string{nil, {"--gamma-shape", "2"}} {
		go func() {
			code, _, stderr := runProc(t, append([]string{"process", in, "-o", out, "--no-collector"}, more...)...)
			res <- result{code, stderr}
		}()
	}
	a, b := <-res, <-res
	if (a.code == 0) == (b.code == 0) {
		t.Fatalf("exit codes %d and %d, want one success and one failure:\n%s\n%s", a.code, b.code, a.stderr, b.stderr)
	}
	lost := a
	if a.code == 0 {
		lost = b
	}
	if !strings.Contains(lost.stderr, "appeared") && !strings.Contains(lost.stderr, "other parameters") {
		t.Errorf("the failed run does not say why: %s", lost.stderr)
	}
	if tmp := tmpFiles(t, dir); len(tmp) != 0 {
		t.Errorf("temporary files left: %v", tmp)
	}
	lintClean(t, out)
}

// TestProcessBuildIdentity: the provenance names the build by the hash of
// the executable; an output written by another build (here: its attribute
// rewritten with netCDF4-python, as an older build would have left it) is
// redone, not skipped; --checksum redoes an output recorded without one.
func TestProcessBuildIdentity(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	py := requireTool(t, "/usr/bin/python3")
	dir := t.TempDir()
	in := filepath.Join(dir, "in.nc")
	copyFile(t, samplePath(t), in)
	out := filepath.Join(dir, "out.nc")
	args := []string{"process", in, "-o", out, "--no-collector", "--manifest", filepath.Join(dir, "m.jsonl")}
	if code, _, stderr := runProc(t, args...); code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	ex, err := existing(out)
	if err != nil || ex == nil || !strings.HasPrefix(ex.Build, "sha256:") || len(ex.Build) != len("sha256:")+64 || ex.Build != buildID() {
		t.Fatalf("build identity %+v, %v", ex, err)
	}
	if _, _, stderr := runProc(t, args...); !strings.Contains(stderr, "skipped") {
		t.Fatalf("same build rerun not skipped: %s", stderr)
	}
	script := `import sys, netCDF4
with netCDF4.Dataset(sys.argv[1], "a") as d:
    d.setncattr("warmrain_build", "sha256:" + "0" * 64)
`
	if b, err := exec.Command(py, "-c", script, out).CombinedOutput(); err != nil {
		t.Fatalf("python: %v\n%s", err, b)
	}
	code, _, stderr := runProc(t, args...)
	if code != 0 || strings.Contains(stderr, "skipped") {
		t.Fatalf("another build's output: exit %d: %s", code, stderr)
	}
	if ex, _ := existing(out); ex.Build != buildID() {
		t.Fatalf("not rewritten by this build: %+v", ex)
	}
	// --checksum: the output has no checksum recorded, so it is redone once.
	code, _, stderr = runProc(t, append(args, "--checksum")...)
	if code != 0 || strings.Contains(stderr, "skipped") {
		t.Fatalf("--checksum over an output without one: exit %d: %s", code, stderr)
	}
	if _, _, stderr := runProc(t, append(args, "--checksum")...); !strings.Contains(stderr, "skipped") {
		t.Fatalf("--checksum rerun not skipped: %s", stderr)
	}
	recs := manifest(t, filepath.Join(dir, "m.jsonl"))
	last := recs[len(recs)-1]
	if last["build"] != buildID() || last["parameters_digest"] == "" {
		t.Errorf("manifest record without build or digest: %v", last)
	}
}

// TestProcessInputsNeverWritten: no option opens an input for writing
// (--manifest, --cpu-profile naming the input), and arguments the shell gave
// are taken literally (a file named day[1].nc is not globbed a second time).
func TestProcessInputsNeverWritten(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	src := samplePath(t)
	dir := t.TempDir()
	in := filepath.Join(dir, "a.nc")
	copyFile(t, src, in)
	sum := fileSHA256(t, in)
	out := filepath.Join(dir, "out.nc")
	for _, opt := range [][]string{{"--manifest", in}, {"--cpu-profile", in}} {
		code, _, stderr := runProc(t, append([]string{"process", in, "-o", out, "--no-collector"}, opt...)...)
		if code == 0 || fileSHA256(t, in) != sum {
			t.Fatalf("%v: exit %d, input changed: %v; %s", opt, code, fileSHA256(t, in) != sum, stderr)
		}
		t.Logf("%v: %s", opt, strings.TrimSpace(stderr))
	}
	// Case 8: names with glob characters, as the shell passes them.
	lit := filepath.Join(dir, "lit")
	mkdirs(t, lit)
	var ins []string
	for _, n := range []string{"day1.nc", "day[1].nc", "only[2].nc"} {
		copyFile(t, src, filepath.Join(lit, n))
		ins = append(ins, filepath.Join(lit, n))
	}
	o := filepath.Join(dir, "o")
	mkdirs(t, o)
	code, _, stderr := runProc(t, append(append([]string{"process"}, ins...), "-o", o, "--no-collector")...)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	for _, n := range []string{"day1_warmrain.nc", "day[1]_warmrain.nc", "only[2]_warmrain.nc"} {
		if !fileExists(filepath.Join(o, n)) {
			t.Errorf("%s missing: %s", n, stderr)
		}
	}
}
