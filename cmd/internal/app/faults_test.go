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
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strings"
	"syscall"
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

// started is a warmrain child process and its stderr.
type started struct {
	cmd    *exec.Cmd
	stderr *strings.Builder
	done   chan struct{}
	err    error
}

func start(t *testing.T, exe string, args ...string) *started {
	t.Helper()
	s := &started{cmd: exec.Command(exe, args...), stderr: &strings.Builder{}, done: make(chan struct{})}
	s.cmd.Stderr = s.stderr
	if err := s.cmd.Start(); err != nil {
		t.Fatal(err)
	}
	go func() { s.err = s.cmd.Wait(); close(s.done) }()
	t.Cleanup(func() {
		select {
		case <-s.done:
		default:
			_ = s.cmd.Process.Kill()
			<-s.done
		}
	})
	return s
}

// wait waits for the process (at most two minutes) and returns its exit code (-1 for a signal).
func (s *started) wait(t *testing.T) int {
	t.Helper()
	select {
	case <-s.done:
	case <-time.After(2 * time.Minute):
		t.Fatalf("process still running after two minutes; stderr:\n%s", s.stderr)
	}
	return s.cmd.ProcessState.ExitCode()
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

// waitWriting waits until a new entry appears in dir (a temporary output, or
// the output itself if it were written in place: the process is writing) and
// returns; ok is false if the process ended first.
func waitWriting(t *testing.T, s *started, dir string, before []string) (time.Time, bool) {
	t.Helper()
	deadline := time.Now().Add(2 * time.Minute)
	for time.Now().Before(deadline) {
		for _, n := range dirNames(t, dir) {
			if !slices.Contains(before, n) {
				return time.Now(), true
			}
		}
		select {
		case <-s.done:
			return time.Now(), false
		case <-time.After(2 * time.Millisecond):
		}
	}
	t.Fatalf("nothing written in %s after two minutes; stderr:\n%s", dir, s.stderr)
	return time.Time{}, false
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
func TestFaults(t *testing.T) {
	if testing.Short() {
		t.Skip("fault injection runs the command dozens of times")
	}
	tools := t.TempDir()
	exe, gensample := buildTools(t, tools)
	work := t.TempDir()
	in := filepath.Join(work, "big.nc")
	if code, _, stderr := runTool(t, gensample, "-o", in, "-cells", "600", "-days", "3"); code != 0 {
		t.Fatalf("gensample: exit %d\n%s", code, stderr)
	}
	inSum := fileSHA256(t, in)
	inputUnchanged := func(t *testing.T) {
		t.Helper()
		if fileSHA256(t, in) != inSum {
			t.Fatalf("the input %s changed", in)
		}
	}
	args := func(out string, more ...string) []string {
		return append([]string{"process", in, "-o", out, "--no-collector", "-q"}, more...)
	}

	// Reference: one complete run, timed from the moment its temporary file appears.
	refDir := filepath.Join(work, "ref")
	if err := os.Mkdir(refDir, 0o755); err != nil {
		t.Fatal(err)
	}
	ref := filepath.Join(refDir, "ref.nc")
	s := start(t, exe, args(ref)...)
	t0, _ := waitWriting(t, s, refDir, nil)
	if code := s.wait(t); code != 0 {
		t.Fatalf("reference run: exit %d\n%s", code, s.stderr)
	}
	writing := time.Since(t0)
	t.Logf("reference run: %v from the temporary file to exit", writing.Round(time.Millisecond))
	refDigest := dataDigest(t, ref)
	refOther := dataDigest(t, ref, attrIdentity) // for other input names
	lintClean(t, ref)
	inputUnchanged(t)

	// complete checks that out is a whole, valid output (every variable readable
	// whole, CF lint clean) equal to the reference.
	complete := func(t *testing.T, out string) {
		t.Helper()
		sameDigest(t, out, dataDigest(t, out), refDigest)
		lintClean(t, out)
	}

	t.Run("kill9", func(t *testing.T) {
		dir := filepath.Join(work, "kill9")
		if err := os.Mkdir(dir, 0o755); err != nil {
			t.Fatal(err)
		}
		const kills = 20
		rng := rand.New(rand.NewPCG(8, 20261201)) // seeded: the same moments on every run
		var absent, whole, leftover, hit int
		for i := 0; i < kills; i++ {
			out := filepath.Join(dir, fmt.Sprintf("k%02d.nc", i))
			// Delays from 0 to 1.3 times the writing time: most kills land while
			// the slabs are written, some after the rename.
			delay := time.Duration(rng.Float64() * 1.3 * float64(writing))
			// Every fourth run replaces a complete output (--redo): killed, it must
			// leave the old file whole.
			redo := i%4 == 3
			var more []string
			if redo {
				copyBytes(t, ref, out)
				more = []string{"--redo"}
			}
			before := dirNames(t, dir)
			s := start(t, exe, args(out, more...)...)
			if _, ok := waitWriting(t, s, dir, before); ok {
				time.Sleep(delay)
			}
			_ = s.cmd.Process.Signal(syscall.SIGKILL)
			code := s.wait(t)
			if code == -1 {
				hit++ // the kill reached a running process
			}
			if _, err := os.Stat(out); err == nil {
				whole++
				complete(t, out)
			} else {
				absent++
				if redo {
					t.Errorf("kill %d: the complete output %s replaced with --redo is gone", i, out)
				}
			}
			if strings.Contains(s.stderr.String(), "panic") {
				t.Errorf("kill %d: panic:\n%s", i, s.stderr)
			}
			// kill -9 cannot be cleaned up after: a temporary file may stay (never under the final name).
			for _, n := range tmpFiles(t, dir) {
				leftover++
				os.Remove(filepath.Join(dir, n))
			}
			inputUnchanged(t)
			t.Logf("kill %2d after %4d ms (redo %v): exit %d, output %v", i, delay.Milliseconds(), redo, code, map[bool]string{true: "complete", false: "absent"}[fileExists(out)])
		}
		t.Logf("%d kills: %d hit a running process; %d outputs absent, %d complete; %d temporary files left by kill -9", kills, hit, absent, whole, leftover)
		if hit < kills/2 {
			t.Errorf("only %d of %d kills reached a running process: the test did not test the writing", hit, kills)
		}
		// A rerun after a kill completes the file.
		last := filepath.Join(dir, fmt.Sprintf("k%02d.nc", kills-1))
		if code, _, stderr := runTool(t, exe, args(last)...); code != 0 {
			t.Fatalf("rerun after kill -9: exit %d\n%s", code, stderr)
		}
		complete(t, last)
		if n := tmpFiles(t, dir); len(n) != 0 {
			t.Errorf("temporary files after the rerun: %v", n)
		}
	})

	for _, sig := range []syscall.Signal{syscall.SIGTERM, syscall.SIGINT} {
		t.Run(strings.ToLower(sig.String()), func(t *testing.T) {
			dir := filepath.Join(work, "sig"+fmt.Sprint(int(sig)))
			if err := os.Mkdir(dir, 0o755); err != nil {
				t.Fatal(err)
			}
			out := filepath.Join(dir, "out.nc")
			rng := rand.New(rand.NewPCG(uint64(sig), 6))
			delay := time.Duration((0.05 + 0.25*rng.Float64()) * float64(writing))
			s := start(t, exe, args(out)...)
			if _, ok := waitWriting(t, s, dir, nil); !ok {
				t.Fatalf("finished before the signal:\n%s", s.stderr)
			}
			time.Sleep(delay)
			_ = s.cmd.Process.Signal(sig)
			code := s.wait(t)
			t.Logf("%v after %d ms: exit %d: %s", sig, delay.Milliseconds(), code, strings.TrimSpace(s.stderr.String()))
			if code != ExitFailure {
				t.Errorf("exit %d after %v, want %d", code, sig, ExitFailure)
			}
			if !strings.Contains(s.stderr.String(), "interrupted") {
				t.Errorf("stderr does not say interrupted:\n%s", s.stderr)
			}
			if n := tmpFiles(t, dir); len(n) != 0 {
				t.Errorf("temporary files left after %v: %v", sig, n)
			}
			if fileExists(out) {
				// The signal came after the rename: the output must be whole.
				t.Logf("%v came after the output was complete", sig)
				complete(t, out)
				return
			}
			if names := dirNames(t, dir); len(names) != 0 {
				t.Errorf("left %v after %v; want nothing", names, sig)
			}
			inputUnchanged(t)
			if code, _, stderr := runTool(t, exe, args(out)...); code != 0 {
				t.Fatalf("rerun: exit %d\n%s", code, stderr)
			}
			complete(t, out)
		})
	}

	t.Run("sigterm_jobs2", func(t *testing.T) {
		// Two inputs (hard links to the big one) processed by two --jobs processes.
		inDir := filepath.Join(work, "two")
		outDir := filepath.Join(work, "two_out")
		for _, d := range []string{inDir, outDir} {
			if err := os.Mkdir(d, 0o755); err != nil {
				t.Fatal(err)
			}
		}
		ins := linkInputs(t, in, inDir, "a.nc", "b.nc")
		batch := append(append([]string{"process"}, ins...), "-o", outDir+"/", "--jobs", "2", "--no-collector", "-q")
		s := start(t, exe, batch...)
		if _, ok := waitWriting(t, s, outDir, []string{"warmrain-manifest.jsonl"}); !ok {
			t.Fatalf("finished before the signal:\n%s", s.stderr)
		}
		time.Sleep(writing / 4)
		_ = s.cmd.Process.Signal(syscall.SIGTERM)
		code := s.wait(t)
		t.Logf("SIGTERM (--jobs 2): exit %d: %s", code, strings.TrimSpace(s.stderr.String()))
		if code == 0 {
			t.Errorf("exit 0 after SIGTERM, want non-zero")
		}
		// The children get the signal too; give them a moment to remove their files.
		deadline := time.Now().Add(30 * time.Second)
		for len(tmpFiles(t, outDir)) > 0 && time.Now().Before(deadline) {
			time.Sleep(20 * time.Millisecond)
		}
		if n := tmpFiles(t, outDir); len(n) != 0 {
			t.Errorf("temporary files left after SIGTERM: %v", n)
		}
		recs := manifest(t, filepath.Join(outDir, "warmrain-manifest.jsonl"))
		for _, r := range recs {
			if r["status"] != "interrupted" && r["status"] != "done" {
				t.Errorf("manifest record %v after SIGTERM", r)
			}
		}
		inputUnchanged(t)
		code, _, stderr := runTool(t, exe, batch...)
		if code != 0 {
			t.Fatalf("rerun: exit %d\n%s", code, stderr)
		}
		for _, n := range []string{"a_warmrain.nc", "b_warmrain.nc"} {
			p := filepath.Join(outDir, n)
			sameDigest(t, p, dataDigest(t, p, attrIdentity), refOther)
			lintClean(t, p)
		}
		if n := tmpFiles(t, outDir); len(n) != 0 {
			t.Errorf("temporary files after the rerun: %v", n)
		}
	})

	t.Run("full_disk", func(t *testing.T) {
		dir := filepath.Join(work, "small")
		if err := os.Mkdir(dir, 0o755); err != nil {
			t.Fatal(err)
		}
		// 2 MiB: the big output (about 33 MB) cannot fit, the sample's (0.9 MB) can.
		mountOrSkip(t, "tmpfs", "tmpfs", dir, "-o", "size=2m")
		inDir := filepath.Join(work, "full_in")
		if err := os.Mkdir(inDir, 0o755); err != nil {
			t.Fatal(err)
		}
		ins := linkInputs(t, in, inDir, "a.nc", "b.nc")
		small := filepath.Join(inDir, "c_small.nc")
		b, err := os.ReadFile(sampleFile)
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(small, b, 0o644); err != nil {
			t.Fatal(err)
		}
		smallSum := fileSHA256(t, small)
		ins = append(ins, small)
		// The built command (a child process: libnetcdf keeps the descriptor of a
		// file it failed to close, which would keep the mount busy in this one).
		batch := append(append([]string{"process"}, ins...), "-o", dir+"/", "--no-collector",
			"--manifest", filepath.Join(work, "full.jsonl"))
		code, stdout, stderr := runTool(t, exe, batch...)
		t.Logf("full disk: exit %d:\n%s", code, strings.TrimSpace(stderr))
		if code != ExitFailure || stdout != "" || hasPanic(stderr) {
			t.Errorf("exit %d, stdout %q; want exit %d, no panic", code, stdout, ExitFailure)
		}
		for _, n := range []string{"a_warmrain.nc", "b_warmrain.nc"} {
			out := filepath.Join(dir, n)
			line := ""
			for _, l := range strings.Split(stderr, "\n") {
				if strings.Contains(l, out) {
					line = l
				}
			}
			if !strings.Contains(line, "no space left on device") || !strings.Contains(line, dir) {
				t.Errorf("no line names %s with \"no space left on device\" and the folder:\n%s", out, stderr)
			}
			if fileExists(out) {
				t.Errorf("%s exists after a full disk", out)
			}
		}
		// The space of a failed output is given back: the small file after them fits.
		got := filepath.Join(dir, "c_small_warmrain.nc")
		if !fileExists(got) {
			t.Errorf("the small file after the failed ones was not written (space not freed?)")
		} else {
			lintClean(t, got)
		}
		if n := tmpFiles(t, dir); len(n) != 0 {
			t.Errorf("temporary files left on the full disk: %v", n)
		}
		if names := dirNames(t, dir); len(names) != 1 {
			t.Errorf("full disk holds %v; want only the small output", names)
		}
		inputUnchanged(t)
		if fileSHA256(t, small) != smallSum {
			t.Errorf("input %s changed", small)
		}
	})
}

func fileExists(p string) bool { _, err := os.Stat(p); return err == nil }

// copyBytes copies a file's bytes.
func copyBytes(t *testing.T, src, dst string) {
	t.Helper()
	b, err := os.ReadFile(src)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(dst, b, 0o644); err != nil {
		t.Fatal(err)
	}
}

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

// linkInputs hard-links file under each name in dir and returns the new paths.
func linkInputs(t *testing.T, file, dir string, names ...string) []string {
	t.Helper()
	var paths []string
	for _, n := range names {
		p := filepath.Join(dir, n)
		if err := os.Link(file, p); err != nil {
			t.Fatal(err)
		}
		paths = append(paths, p)
	}
	return paths
}
