package app

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/warmrain/warmrain/microphys"
)

// TestMain keeps the table cache of the tests in a temporary folder (never the user's
// cache), shared by the tests of this package.
func TestMain(m *testing.M) {
	if os.Getenv(childEnv) != "" {
		// This test binary started as a worker process of a batch run in a test
		// (os.Executable is the test binary): be warmrain.
		os.Exit(Run(os.Args[1:], os.Stdout, os.Stderr))
	}
	dir, err := os.MkdirTemp("", "warmrain-tables-")
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(1)
	}
	os.Setenv(tableCacheEnv, dir)
	code := m.Run()
	os.RemoveAll(dir)
	os.Exit(code)
}

func cacheFiles(t *testing.T, dir string) []string {
	t.Helper()
	m, err := filepath.Glob(filepath.Join(dir, "tables-*.bin"))
	if err != nil {
		t.Fatal(err)
	}
	return m
}

func TestTableCache(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	dir := t.TempDir()
	t.Setenv(tableCacheEnv, dir)
	p := microphys.DefaultParams()
	p.SurfacePressure = 101000 // parameters of this test only

	builds := tableBuilds.Load()
	built, err := newModel(p)
	if err != nil {
		t.Fatal(err)
	}
	if tableBuilds.Load() != builds+1 {
		t.Fatal("empty cache: the tables were not built")
	}
	files := cacheFiles(t, dir)
	if len(files) != 1 {
		t.Fatalf("cache after one build: %v, want one tables file", files)
	}
	loaded, err := newModel(p)
	if err != nil {
		t.Fatal(err)
	}
	if tableBuilds.Load() != builds+1 {
		t.Fatal("second newModel integrated the tables again instead of loading them")
	}
	// The loaded model computes what the built one does (invented columns).
	rng := rand.New(rand.NewPCG(3, 4))
	for i := 0; i < 2000; i++ {
		in := microphys.Inputs{LWP: 0.02 + 0.3*rng.Float64(), Re: 6e-6 + 12e-6*rng.Float64(), CTT: 278 + 12*rng.Float64(),
			CTP: 85000 + 10000*rng.Float64()}
		nan := math.NaN()
		in.Tau, in.CTH, in.LWPStd, in.SurfaceRH = nan, nan, nan, nan
		var a, b microphys.Outputs
		built.Column(&in, &a)
		loaded.Column(&in, &b)
		if fmt.Sprint(a) != fmt.Sprint(b) {
			t.Fatalf("column %+v: loaded model %+v, built %+v", in, b, a)
		}
	}
	// Other parameters get their own file.
	q := p
	q.SurfaceRH = 0.7
	if _, err := newModel(q); err != nil {
		t.Fatal(err)
	}
	if n := len(cacheFiles(t, dir)); n != 2 || tableBuilds.Load() != builds+2 {
		t.Fatalf("other parameters: %d files, %d builds; want 2 and 2", n, tableBuilds.Load()-builds)
	}
	// A damaged file is rebuilt and replaced, silently.
	if err := os.WriteFile(files[0], []byte("not tables"), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := newModel(p); err != nil {
		t.Fatalf("damaged cache file: %v", err)
	}
	if _, err := newModel(p); err != nil {
		t.Fatal(err)
	}
	if tableBuilds.Load() != builds+3 {
		t.Fatalf("damaged cache file: %d builds, want 3 (one rebuild, then loaded)", tableBuilds.Load()-builds)
	}
	left, _ := filepath.Glob(filepath.Join(dir, ".tables-*"))
	if len(left) != 0 {
		t.Errorf("temporary files left in the cache: %v", left)
	}
}

func TestTableCacheUnusable(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	p := microphys.DefaultParams()
	p.SurfacePressure = 100500
	// A cache folder that cannot be created (under a regular file): built, no error.
	f := filepath.Join(t.TempDir(), "file")
	if err := os.WriteFile(f, nil, 0o644); err != nil {
		t.Fatal(err)
	}
	t.Setenv(tableCacheEnv, filepath.Join(f, "cache"))
	builds := tableBuilds.Load()
	if _, err := newModel(p); err != nil {
		t.Fatalf("unusable cache folder: %v", err)
	}
	if tableBuilds.Load() != builds+1 {
		t.Fatal("unusable cache folder: the tables were not built")
	}
	// Off: nothing is written anywhere.
	t.Setenv(tableCacheEnv, "off")
	if got := tableCacheDir(); got != "" {
		t.Errorf("%s=off: cache folder %q, want none", tableCacheEnv, got)
	}
	// Invalid parameters: the parameter error, whatever the cache.
	bad := p
	bad.K = 2
	if _, err := newModel(bad); err == nil || !strings.Contains(err.Error(), "--k-ratio") {
		t.Errorf("invalid parameters: %v, want the error naming --k-ratio", err)
	}
}

func TestTableCachePrune(t *testing.T) {
	dir := t.TempDir()
	old := time.Now().Add(-48 * time.Hour)
	for i := 0; i < tableCacheKeep+5; i++ {
		path := filepath.Join(dir, fmt.Sprintf("tables-old%02d.bin", i))
		if err := os.WriteFile(path, []byte("x"), 0o644); err != nil {
			t.Fatal(err)
		}
		if err := os.Chtimes(path, old, old.Add(time.Duration(i)*time.Minute)); err != nil {
			t.Fatal(err)
		}
	}
	other := filepath.Join(dir, "notes.txt") // not a tables file: kept
	if err := os.WriteFile(other, nil, 0o644); err != nil {
		t.Fatal(err)
	}
	mine := filepath.Join(dir, "tables-new.bin")
	saveTables(mine, []byte("data"))
	files := cacheFiles(t, dir)
	if len(files) != tableCacheKeep {
		t.Fatalf("after pruning: %d tables files, want %d", len(files), tableCacheKeep)
	}
	for _, gone := range []string{"tables-old00.bin", "tables-old04.bin"} {
		if _, err := os.Stat(filepath.Join(dir, gone)); err == nil {
			t.Errorf("oldest file %s kept", gone)
		}
	}
	for _, kept := range []string{mine, other, filepath.Join(dir, "tables-old20.bin")} {
		if _, err := os.Stat(kept); err != nil {
			t.Errorf("%s removed: %v", kept, err)
		}
	}
}

// TestTableCacheFIFO: a FIFO (or any non-regular file) at the cache path is
// not waited on: the tables are built and the run goes on.
func TestTableCacheFIFO(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	dir := t.TempDir()
	t.Setenv(tableCacheEnv, dir)
	p := microphys.DefaultParams()
	p.SurfacePressure = 100500 // parameters of this test only
	path := tableCachePath(dir, p)
	if err := syscall.Mkfifo(path, 0o644); err != nil {
		t.Skipf("mkfifo: %v", err)
	}
	done := make(chan error, 1)
	go func() { _, err := newModel(p); done <- err }()
	select {
	case err := <-done:
		if err != nil {
			t.Fatal(err)
		}
	case <-time.After(time.Minute):
		// Unblock the reader so that the test binary can end.
		if f, err := os.OpenFile(path, os.O_WRONLY|syscall.O_NONBLOCK, 0); err == nil {
			f.Close()
		}
		t.Fatal("newModel waits on a FIFO at the cache path")
	}
}
