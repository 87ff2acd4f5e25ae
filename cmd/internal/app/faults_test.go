package app

// Faults and determinism of `warmrain process`, through the built
// command in child processes: kill -9 at seeded random moments while it
// writes (the final name is absent or a complete file), SIGTERM/SIGINT (no
// temporary file, exit 1, a rerun completes), a full disk (a clear error, no
// partial output), inputs byte-identical after every run, and identical
// output data with --jobs 1, --jobs 2 and a --redo rerun.

import (
	"bufio"
	"context"
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/grid/cflint"
)

// buildTools builds warmrain and gensample into dir (go build caches the work).
func buildTools(t *testing.T, dir string) (warmrain, gensample string) {
	t.Helper()
	goTool, err := exec.LookPath("go")
	if err != nil {
		skipOrFailMissing(t, "the go command")
	}
	cmd := exec.Command(goTool, "build", "-o", dir+string(filepath.Separator),
		"github.com/warmrain/warmrain/cmd/warmrain", "github.com/warmrain/warmrain/samples/cmd/gensample")
	if b, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, b)
	}
	return filepath.Join(dir, "warmrain"), filepath.Join(dir, "gensample")
}

// runTool runs a command to completion (at most two minutes) and returns its exit code and streams.
func runTool(t *testing.T, name string, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
	defer cancel()
	cmd := exec.CommandContext(ctx, name, args...)
	var o, e strings.Builder
	cmd.Stdout, cmd.Stderr = &o, &e
	err := cmd.Run()
	if ctx.Err() != nil {
		t.Fatalf("%s %v: timed out", name, args)
	}
	code = 0
	if err != nil {
		ee, ok := err.(*exec.ExitError)
		if !ok {
			t.Fatalf("%s: %v", name, err)
		}
		code = ee.ExitCode()
	}
	return code, o.String(), e.String()
}

// tmpFiles lists the temporary outputs (".NAME.tmp-XXXX") in dir.
func tmpFiles(t *testing.T, dir string) []string {
	t.Helper()
	var out []string
	for _, n := range dirNames(t, dir) {
		if strings.HasPrefix(n, ".") && strings.Contains(n, ".tmp-") {
			out = append(out, n)
		}
	}
	return out
}

// dataDigest is the SHA-256 of every variable's decoded values (NaN as one bit
// pattern), of the variables' attributes, and of the global attributes except
// history, date_created and those in ignore: what must not change between
// equivalent runs.
func dataDigest(t *testing.T, path string, ignore ...string) map[string]string {
	t.Helper()
	fi, err := grid.Describe(path)
	if err != nil {
		t.Fatalf("%s does not open: %v", path, err)
	}
	d := map[string]string{}
	for _, v := range fi.Vars {
		h := sha256.New()
		fmt.Fprintf(h, "%s %v %v\n", v.Type, v.Dims, v.Shape)
		for _, a := range v.Attrs {
			fmt.Fprintf(h, "%s=%s\n", a.Name, a)
		}
		if v.Type.Numeric() {
			data, _, err := grid.ReadVariable(path, v.Name)
			if err != nil {
				t.Fatalf("%s: variable %s cannot be read: %v", path, v.Name, err)
			}
			var b [8]byte
			for _, x := range data {
				if math.IsNaN(x) {
					x = math.NaN()
				}
				binary.LittleEndian.PutUint64(b[:], math.Float64bits(x))
				h.Write(b[:])
			}
		}
		d[v.Name] = hex.EncodeToString(h.Sum(nil))
	}
	g := sha256.New()
	for _, a := range fi.Globals {
		if a.Name == "history" || a.Name == "date_created" || slices.Contains(ignore, a.Name) {
			continue
		}
		fmt.Fprintf(g, "%s=%s\n", a.Name, a)
	}
	d["(global attributes)"] = hex.EncodeToString(g.Sum(nil))
	return d
}

// sameDigest reports the variables whose digests differ.
func sameDigest(t *testing.T, what string, got, want map[string]string) {
	t.Helper()
	var names []string
	for k := range want {
		names = append(names, k)
	}
	for k := range got {
		if _, ok := want[k]; !ok {
			names = append(names, k)
		}
	}
	slices.Sort(names)
	for _, k := range slices.Compact(names) {
		if got[k] != want[k] {
			t.Errorf("%s: %s differs (got %.12s, want %.12s)", what, k, got[k], want[k])
		}
	}
}

// lintClean fails on CF lint errors (against the standard name table when found).
func lintClean(t *testing.T, path string) {
	t.Helper()
	opt := cflint.Options{Ours: true}
	if p, err := cflint.FindTable(); err == nil {
		if opt.Table, err = cflint.LoadTable(p); err != nil {
			t.Fatal(err)
		}
	}
	fs, err := cflint.Check(path, opt)
	if err != nil {
		t.Fatalf("cflint %s: %v", path, err)
	}
	for _, f := range cflint.Errors(fs) {
		t.Errorf("cflint %s: %s", path, f)
	}
}

// TestFaults shares one big input (gensample -cells 600 -days 3: 1.08 million
// columns) and one reference output between its subtests. The physics runs
// without the collector drop (--no-collector) so that one file takes seconds:
// what is tested is the writing.
func fileExists(p string) bool { _, err := os.Stat(p); return err == nil }

// manifest reads a JSON-lines manifest (absent: no records).
func manifest(t *testing.T, path string) []map[string]any {
	t.Helper()
	f, err := os.Open(path)
	if os.IsNotExist(err) {
		return nil
	}
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var recs []map[string]any
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		var r map[string]any
		if err := json.Unmarshal(sc.Bytes(), &r); err != nil {
			t.Fatalf("manifest line %q: %v", sc.Text(), err)
		}
		recs = append(recs, r)
	}
	return recs
}

// TestDeterminism: several inputs give identical output data (every variable,
// every attribute, global attributes but history and date_created) with
// --jobs 1, with --jobs 2 and on a --redo rerun, with the default physics
// (collector table built in each process).
func TestDeterminism(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	exe, gensample := buildTools(t, t.TempDir())
	inDir := t.TempDir()
	var ins []string
	for seed := 1; seed <= 3; seed++ {
		p := filepath.Join(inDir, fmt.Sprintf("scene%d.nc", seed))
		if code, _, stderr := runTool(t, gensample, "-o", p, "-cells", "40", "-days", "2", "-seed", fmt.Sprint(seed)); code != 0 {
			t.Fatalf("gensample: exit %d\n%s", code, stderr)
		}
		ins = append(ins, p)
	}
	sums := map[string]string{}
	for _, p := range ins {
		sums[p] = fileSHA256(t, p)
	}
	one, two := t.TempDir(), t.TempDir()
	run := func(out string, more ...string) {
		t.Helper()
		a := append(append([]string{"process"}, ins...), append([]string{"-o", out + "/", "-q"}, more...)...)
		if code, stdout, stderr := runTool(t, exe, a...); code != 0 || stdout != "" {
			t.Fatalf("%v: exit %d, stdout %q\n%s", more, code, stdout, stderr)
		}
		for _, p := range ins {
			if fileSHA256(t, p) != sums[p] {
				t.Fatalf("input %s changed", p)
			}
		}
	}
	digests := func(dir string) map[string]map[string]string {
		m := map[string]map[string]string{}
		for _, n := range dirNames(t, dir) {
			if strings.HasSuffix(n, ".nc") {
				m[n] = dataDigest(t, filepath.Join(dir, n))
			}
		}
		if len(m) != len(ins) {
			t.Fatalf("%s holds %v; want %d outputs", dir, dirNames(t, dir), len(ins))
		}
		return m
	}
	compare := func(what string, got, want map[string]map[string]string) {
		t.Helper()
		for n, w := range want {
			sameDigest(t, what+" "+n, got[n], w)
		}
	}
	run(one, "--jobs", "1")
	first := digests(one)
	run(two, "--jobs", "2")
	compare("--jobs 2 vs --jobs 1:", digests(two), first)
	run(one, "--jobs", "1", "--redo")
	compare("--redo rerun vs first run:", digests(one), first)
	// A rerun without --redo skips complete outputs and changes nothing.
	before := map[string]string{}
	for _, n := range dirNames(t, one) {
		if strings.HasSuffix(n, ".nc") {
			before[n] = fileSHA256(t, filepath.Join(one, n))
		}
	}
	run(one)
	for n, s := range before {
		if fileSHA256(t, filepath.Join(one, n)) != s {
			t.Errorf("a rerun without --redo rewrote %s", n)
		}
	}
}
