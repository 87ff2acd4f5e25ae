package grid

import (
	"flag"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the golden headers in testdata/")

// TestOutputHeaderGolden compares `ncdump -h` of an output with
// testdata/grid3d_out.cdl.golden (date_created and library versions blanked). On a mismatch it writes
// the new header to t.TempDir() and names it; -update rewrites the golden file.
func TestOutputHeaderGolden(t *testing.T) {
	_, err := exec.LookPath("ncdump")
	need(t, "ncdump (Debian netcdf-bin)", err == nil)
	inPath := ncgen(t, "grid3d.cdl", "nc4")
	outPath, _ := writeTestOutput(t, inPath, NewFile, DefaultSlabBytes)
	b, err := exec.Command("ncdump", "-hs", outPath).CombinedOutput()
	if err != nil {
		t.Fatalf("ncdump: %v %s", err, b)
	}
	got := regexp.MustCompile(`:date_created = "[^"]*"`).ReplaceAll(b, []byte(`:date_created = "<blank>"`))
	got = regexp.MustCompile(`:_NCProperties = "[^"]*"`).ReplaceAll(got, []byte(`:_NCProperties = "<library versions>"`))
	golden := filepath.Join("testdata", "grid3d_out.cdl.golden")
	if *update {
		if err := os.WriteFile(golden, got, 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(golden)
	if err != nil {
		t.Fatalf("%v (run go test -run TestOutputHeaderGolden -update ./grid/)", err)
	}
	if string(got) != string(want) {
		p := filepath.Join(t.TempDir(), "grid3d_out.cdl.got")
		os.WriteFile(p, got, 0o644)
		t.Errorf("output header differs from %s; got written to %s:\n%s", golden, p, got)
	}
}
