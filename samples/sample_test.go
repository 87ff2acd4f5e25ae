package samples

import (
	"bufio"
	"crypto/sha256"
	"encoding/hex"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/fhs/go-netcdf/netcdf"
)

const sampleFile = "stratocumulus_demo.nc"

func sha256File(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	s := sha256.Sum256(b)
	return hex.EncodeToString(s[:])
}

// recordedSum returns the SHA256 that data/SHA256SUMS records for name.
func recordedSum(t *testing.T, name string) string {
	t.Helper()
	fh, err := os.Open(filepath.Join("data", "SHA256SUMS"))
	if err != nil {
		t.Fatal(err)
	}
	defer fh.Close()
	sc := bufio.NewScanner(fh)
	for sc.Scan() {
		f := strings.Fields(sc.Text())
		if len(f) == 2 && strings.TrimPrefix(f[1], "*") == name {
			return f[0]
		}
	}
	t.Fatalf("data/SHA256SUMS has no line for %s", name)
	return ""
}

// TestSampleReproducible regenerates the sample twice into temporary
// folders and checks that the bytes equal each other, the SHA256 recorded in
// data/SHA256SUMS and the committed file. The bytes depend on the libnetcdf,
// HDF5 and zlib builds (Debian bookworm: libnetcdf 4.9.0, HDF5 1.10.8); after
// a library upgrade, regenerate with `go run ./samples/cmd/gensample -o
// samples/data/stratocumulus_demo.nc` and update SHA256SUMS.
func TestSampleReproducible(t *testing.T) {
	want := recordedSum(t, sampleFile)
	committed := sha256File(t, filepath.Join("data", sampleFile))
	if committed != want {
		t.Errorf("committed data/%s has SHA256 %s, SHA256SUMS says %s", sampleFile, committed, want)
	}
	var got [2]string
	for i := range got {
		p := filepath.Join(t.TempDir(), []string{sampleFile, "other_name.nc"}[i])
		if err := Generate(p, DefaultConfig()); err != nil {
			t.Fatal(err)
		}
		got[i] = sha256File(t, p)
	}
	if got[0] != got[1] {
		t.Fatalf("two runs differ: %s vs %s", got[0], got[1])
	}
	if got[0] != want {
		t.Errorf("regenerated sample has SHA256 %s, SHA256SUMS says %s (libnetcdf %s)", got[0], want, netcdf.Version())
	}
	fi, err := os.Stat(filepath.Join("data", sampleFile))
	if err != nil {
		t.Fatal(err)
	}
	if fi.Size() > 2<<20 {
		t.Errorf("sample is %d bytes, limit 2 MiB", fi.Size())
	}
}

// TestSampleReadBack reads the committed sample through libnetcdf and checks
// that it holds the generator's fields after unpacking, and its metadata.
func TestSampleReadBack(t *testing.T) {
	f, err := DefaultConfig().Fields()
	if err != nil {
		t.Fatal(err)
	}
	var lwp []int16
	var re, cf []float32
	var lat []float64
	var scale []float32
	var conv []byte
	err = onNCThread(func() error {
		ds, err := netcdf.OpenFile(filepath.Join("data", sampleFile), netcdf.NOWRITE)
		if err != nil {
			return err
		}
		defer ds.Close()
		v, err := ds.Var("lwp")
		if err != nil {
			return err
		}
		if lwp, err = netcdf.GetInt16s(v); err != nil {
			return err
		}
		scale = make([]float32, 1)
		if err := v.Attr("scale_factor").ReadFloat32s(scale); err != nil {
			return err
		}
		for name, dst := range map[string]*[]float32{"re": &re, "cloud_fraction": &cf} {
			v, err := ds.Var(name)
			if err != nil {
				return err
			}
			if *dst, err = netcdf.GetFloat32s(v); err != nil {
				return err
			}
		}
		if v, err = ds.Var("lat"); err != nil {
			return err
		}
		if lat, err = netcdf.GetFloat64s(v); err != nil {
			return err
		}
		conv, err = netcdf.GetBytes(ds.Attr("Conventions"))
		return err
	})
	if err != nil {
		t.Fatal(err)
	}
	if string(conv) != "CF-1.13 ACDD-1.3" {
		t.Errorf("Conventions = %q", conv)
	}
	if len(lat) != f.Cfg.NLat || !(lat[0] > lat[len(lat)-1]) {
		t.Errorf("lat not descending over %d rows", f.Cfg.NLat)
	}
	for k := range f.LWP {
		switch {
		case math.IsNaN(f.LWP[k]) != (lwp[k] == fillShort):
			t.Fatalf("cell %d: LWP fill mismatch", k)
		case !math.IsNaN(f.LWP[k]) && math.Abs(float64(lwp[k])*float64(scale[0])-f.LWP[k]) > 0.051:
			t.Fatalf("cell %d: LWP %g in file, %g generated", k, float64(lwp[k])*float64(scale[0]), f.LWP[k])
		case math.IsNaN(f.Re[k]) != (re[k] == fillFloat):
			t.Fatalf("cell %d: r_e fill mismatch", k)
		case !math.IsNaN(f.Re[k]) && float32(f.Re[k]) != re[k]:
			t.Fatalf("cell %d: r_e %g in file, %g generated", k, re[k], f.Re[k])
		case float32(f.CF[k]) != cf[k]:
			t.Fatalf("cell %d: cloud fraction %g in file, %g generated", k, cf[k], f.CF[k])
		}
	}
}

// TestGenerateKeepsTargetOnError checks that a failed write leaves no
// partial file and no temporary file behind.
func TestGenerateKeepsTargetOnError(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "missing_dir", "x.nc")
	if err := Generate(p, DefaultConfig()); err == nil {
		t.Fatal("no error for a missing folder")
	}
	ents, _ := os.ReadDir(dir)
	if len(ents) != 0 {
		t.Errorf("left %d entries in %s", len(ents), dir)
	}
}
