package app

import (
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strings"
	"testing"

	"github.com/warmrain/warmrain/bench/synth"
	"github.com/warmrain/warmrain/grid/gridtest"
)

// cmpOutputs runs bench/cmp_outputs.py (every variable's data, type and
// attributes, read by netCDF4-python) on two outputs.
func cmpOutputs(t *testing.T, a, b string) {
	t.Helper()
	_, file, _, _ := runtime.Caller(0)
	script := filepath.Join(filepath.Dir(file), "..", "..", "..", "bench", "cmp_outputs.py")
	py := "/usr/bin/python3"
	gridtest.Need(t, "python3-netcdf4", exec.Command(py, "-c", "import netCDF4").Run() == nil)
	if out, err := exec.Command(py, script, a, b).CombinedOutput(); err != nil {
		t.Errorf("%s and %s differ: %v\n%s", filepath.Base(a), filepath.Base(b), err, out)
	}
}

// cdoSame checks with CDO's own reader that every variable of two files holds
// the same values (cdo diffn prints no record that differs).
func cdoSame(t *testing.T, a, b string) {
	t.Helper()
	_, err := exec.LookPath("cdo")
	gridtest.Need(t, "cdo (Debian cdo)", err == nil)
	out, err := exec.Command("cdo", "-s", "diffn", a, b).CombinedOutput()
	if err != nil {
		t.Fatalf("cdo diffn: %v\n%s", err, out)
	}
	if s := strings.TrimSpace(string(out)); strings.Contains(s, "differ") && !strings.Contains(s, " 0 of ") {
		t.Errorf("cdo diffn finds differences:\n%s", s)
	}
}

// TestWritersGiveSameOutputs: process with the direct chunk writer and with
// libnetcdf's writes the same data and metadata for the sample and for a
// benchmark input (bench/synth, deflated float32, a grid of 700² columns that
// the output chunks do not divide), with every output, CF-packed outputs and
// quantized outputs (--significant-digits), without compression and at
// another level in a copy of the input (--augment), under 1 and 2 threads. netCDF4-python
// (bench/cmp_outputs.py) and CDO read them. The direct writer's files are at most 2 %
// larger.
func TestWritersGiveSameOutputs(t *testing.T) {
	dir := t.TempDir()
	synthIn := filepath.Join(dir, "synth.nc")
	if err := synth.Write(synthIn, synth.Config{N: 700, Variant: "deflate"}); err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name string
		in   string
		args []string
	}{
		{"sample", samplePath(t), nil},
		{"sample-pack", samplePath(t), []string{"--pack"}},
		{"sample-digits", samplePath(t), []string{"--significant-digits", "3"}},
		{"sample-deflate0", samplePath(t), []string{"--deflate", "0"}},
		{"sample-deflate5-augment", samplePath(t), []string{"--deflate", "5", "--augment"}},
		{"synth", synthIn, []string{"--slab-mb", "4"}},
		{"synth-digits-pack", synthIn, []string{"--slab-mb", "4", "--significant-digits", "2", "--pack"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			var outs []string
			for _, w := range []struct{ writer, threads string }{{"libnetcdf", "1"}, {"direct", "1"}, {"direct", "2"}} {
				out := filepath.Join(t.TempDir(), c.name+"_"+w.writer+w.threads+".nc")
				args := append([]string{"process", c.in, "-o", out, "-q", "--pipeline-stats", "--writer", w.writer, "--threads", w.threads}, c.args...)
				code, _, stderr := runProc(t, args...)
				if code != 0 {
					t.Fatalf("%v: exit %d\n%s", args, code, stderr)
				}
				if !strings.Contains(stderr, "writer "+w.writer+"\n") {
					t.Errorf("%s: the run did not use the %s writer:\n%s", c.name, w.writer, stderr)
				}
				outs = append(outs, out)
			}
			cmpOutputs(t, outs[0], outs[1])
			cmpOutputs(t, outs[1], outs[2])
			// The direct writer's encoders (grid.isalLevel) write no more than 2 %
			// more bytes than zlib inside libnetcdf at the same level, the budget of
			// doc/netcdf.md#direct-chunks (measured, not a law: a change of encoder
			// that costs bytes shows here).
			lib, dir := fileSize(t, outs[0]), fileSize(t, outs[1])
			t.Logf("%s: direct %d bytes, libnetcdf %d: ratio %.4f", c.name, dir, lib, float64(dir)/float64(lib))
			if float64(dir) > 1.02*float64(lib) {
				t.Errorf("%s: the direct writer's output is %d bytes, more than 1.02 x libnetcdf's %d", c.name, dir, lib)
			}
			if c.name == "sample" || c.name == "synth" {
				cdoSame(t, outs[0], outs[1])
			}
		})
	}
}

// fileSize is the size of a file in bytes.
func fileSize(t *testing.T, path string) int64 {
	t.Helper()
	st, err := os.Stat(path)
	if err != nil {
		t.Fatal(err)
	}
	return st.Size()
}
