//go:build faults

package app

// The fault storms of warmrain process (build tag faults: make faults, and
// CI): kill -9 at seeded random moments while it writes, SIGTERM, SIGINT and
// SIGHUP, SIGTERM to a --jobs batch, kill -9 of a batch's parent, a closed
// stderr, and full disks for the outputs and for the manifest. They run the
// built command dozens of times, so the default test run leaves them out.

import (
	"errors"
	"fmt"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strings"
	"syscall"
	"testing"
	"time"
)

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
	// Two timed runs, the shorter counts: the first one also fills caches (the
	// page cache, the table cache), and a kill delay scaled on a slow run would
	// mostly land after the process ended.
	var writing time.Duration
	for k, out := range []string{filepath.Join(refDir, "warm.nc"), ref} {
		before := dirNames(t, refDir)
		s := start(t, exe, args(out)...)
		t0, _ := waitWriting(t, s, refDir, before)
		if code := s.wait(t); code != 0 {
			t.Fatalf("reference run: exit %d\n%s", code, s.stderr)
		}
		if d := time.Since(t0); k == 0 || d < writing {
			writing = d
		}
	}
	t.Logf("reference run: %v from the temporary file to exit (the shorter of two)", writing.Round(time.Millisecond))
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

	for _, sig := range []syscall.Signal{syscall.SIGTERM, syscall.SIGINT, syscall.SIGHUP} {
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

	t.Run("kill9_parent_jobs2", func(t *testing.T) {
		// The parent of a --jobs 2 batch is killed with kill -9 while its workers
		// write: the workers stop cleanly, remove their temporary files and record
		// their files as interrupted in the manifest themselves.
		inDir := filepath.Join(work, "orphans")
		outDir := filepath.Join(work, "orphans_out")
		for _, d := range []string{inDir, outDir} {
			if err := os.Mkdir(d, 0o755); err != nil {
				t.Fatal(err)
			}
		}
		ins := linkInputs(t, in, inDir, "a.nc", "b.nc")
		batch := append(append([]string{"process"}, ins...), "-o", outDir+"/", "--jobs", "2", "--no-collector", "-q")
		s := start(t, exe, batch...)
		if _, ok := waitWriting(t, s, outDir, []string{"warmrain-manifest.jsonl"}); !ok {
			t.Fatalf("finished before the kill:\n%s", s.stderr)
		}
		time.Sleep(writing / 4)
		_ = s.cmd.Process.Kill()
		s.wait(t)
		mp := filepath.Join(outDir, "warmrain-manifest.jsonl")
		deadline := time.Now().Add(60 * time.Second)
		for (len(tmpFiles(t, outDir)) > 0 || len(manifest(t, mp)) < 2) && time.Now().Before(deadline) {
			time.Sleep(20 * time.Millisecond)
		}
		if n := tmpFiles(t, outDir); len(n) != 0 {
			t.Errorf("temporary files left by the orphaned workers: %v", n)
		}
		recs := manifest(t, mp)
		if len(recs) != 2 {
			t.Fatalf("%d records after the parent's kill -9, want 2: %v", len(recs), recs)
		}
		for _, r := range recs {
			if r["status"] != "interrupted" && r["status"] != "done" {
				t.Errorf("record %v", r)
			}
		}
		if code, _, stderr := runTool(t, exe, batch...); code != 0 {
			t.Fatalf("rerun: exit %d\n%s", code, stderr)
		}
	})

	t.Run("closed_stderr", func(t *testing.T) {
		// stderr is a pipe nobody reads (its reader closed): the first message
		// (the batch's start line, so before any file completes) ends the run
		// cleanly; every file that completed has its record, and no output or
		// temporary file is left without one.
		inDir := filepath.Join(work, "pipe")
		outDir := filepath.Join(work, "pipe_out")
		for _, d := range []string{inDir, outDir} {
			if err := os.Mkdir(d, 0o755); err != nil {
				t.Fatal(err)
			}
		}
		ins := linkInputs(t, in, inDir, "a.nc", "b.nc", "c.nc")
		r, w, err := os.Pipe()
		if err != nil {
			t.Fatal(err)
		}
		r.Close()
		cmd := exec.Command(exe, append(append([]string{"process"}, ins...), "-o", outDir, "--no-collector")...)
		cmd.Stderr = w
		err = cmd.Run()
		w.Close()
		t.Logf("closed stderr: %v", err)
		var ee *exec.ExitError
		if !errors.As(err, &ee) || ee.ExitCode() != ExitFailure {
			t.Errorf("exit: %v, want exit %d", err, ExitFailure)
		}
		recs := manifest(t, filepath.Join(outDir, "warmrain-manifest.jsonl"))
		done := 0
		for _, r := range recs {
			if r["status"] == "done" {
				done++
				if !fileExists(r["output"].(string)) {
					t.Errorf("record without output: %v", r)
				}
			}
		}
		outs := 0
		for _, n := range dirNames(t, outDir) {
			if strings.HasSuffix(n, "_warmrain.nc") {
				outs++
			}
		}
		if outs != done {
			t.Errorf("%d outputs, %d done records: %v", outs, done, recs)
		}
		if n := tmpFiles(t, outDir); len(n) != 0 {
			t.Errorf("temporary files left: %v", n)
		}
	})

	t.Run("manifest_full_disk", func(t *testing.T) {
		// The manifest's file system is full: the output is written, but the run
		// must not say that all went well.
		dir := filepath.Join(work, "manfull")
		if err := os.Mkdir(dir, 0o755); err != nil {
			t.Fatal(err)
		}
		mountOrSkip(t, "tmpfs", "tmpfs", dir, "-o", "size=64k")
		mp := filepath.Join(dir, "m.jsonl")
		os.WriteFile(mp, nil, 0o644)
		filler, _ := os.Create(filepath.Join(dir, "filler"))
		filler.Write(make([]byte, 1<<20)) // fails when the 64 KiB are used up
		filler.Close()
		out := filepath.Join(work, "manfull.nc")
		code, _, stderr := runTool(t, exe, "process", sampleFile, "-o", out, "--no-collector", "--manifest", mp)
		t.Logf("manifest on a full disk: exit %d: %s", code, strings.TrimSpace(stderr))
		if code != ExitFailure || !strings.Contains(stderr, "manifest") || !strings.Contains(stderr, "no space left") {
			t.Errorf("exit %d; want %d naming the manifest and the full disk", code, ExitFailure)
		}
	})
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
