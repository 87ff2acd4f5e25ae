package app

import (
	"math"
	"path/filepath"
	"testing"

	"github.com/warmrain/warmrain/microphys"
)

// TestProcessThreadsAgree: one compute goroutine and four over small slabs (many slabs in
// flight between the I/O thread and the workers) write the same values in every output. It
// is also the in-process concurrency test that .ci/race.sh runs under the race detector.
func TestProcessThreadsAgree(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	in := samplePath(t)
	dir := t.TempDir()
	one, four := filepath.Join(dir, "one.nc"), filepath.Join(dir, "four.nc")
	for _, r := range [][]string{{one, "1"}, {four, "4"}} {
		if code, _, stderr := runProc(t, "process", in, "-o", r[0], "-q", "--threads", r[1], "--slab-mb", "1"); code != 0 {
			t.Fatalf("process --threads %s: %d\n%s", r[1], code, stderr)
		}
	}
	names := []string{microphys.QCOutputName}
	for _, d := range microphys.OutputDecls {
		names = append(names, d.Name)
	}
	for _, n := range names {
		a, b := readVar(t, one, n), readVar(t, four, n)
		if len(a) != len(b) || len(a) == 0 {
			t.Fatalf("%s: %d and %d values", n, len(a), len(b))
		}
		for i := range a {
			if a[i] != b[i] && !(math.IsNaN(a[i]) && math.IsNaN(b[i])) {
				t.Fatalf("%s[%d]: %v with one thread, %v with four", n, i, a[i], b[i])
			}
		}
	}
}
