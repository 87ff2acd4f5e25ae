package grid

import (
	"errors"
	"os"
	"testing"
)

// TestClassicExpectedSize checks the classic-header parser against files
// written by ncgen in the three classic formats (NUG classic format
// specification): the size the header implies must equal the file size, and
// a file cut short must be refused with a message naming it.
func TestClassicExpectedSize(t *testing.T) {
	for _, name := range []string{"grid3d.cdl", "alltypes.cdl", "packed.cdl"} {
		for _, kind := range []string{"classic", "64-bit offset", "cdf5"} {
			if name == "alltypes.cdl" && kind != "cdf5" {
				continue // unsigned and 64-bit types need CDF-5
			}
			p := ncgen(t, name, kind)
			st, err := os.Stat(p)
			if err != nil {
				t.Fatal(err)
			}
			f, _ := os.Open(p)
			want, ok, err := classicExpectedSize(f, st.Size())
			f.Close()
			if err != nil || !ok {
				t.Fatalf("%s %s: ok %v err %v", name, kind, ok, err)
			}
			if want > st.Size() || want < st.Size()-3 {
				t.Errorf("%s %s: header implies %d bytes, file has %d", name, kind, want, st.Size())
			}
			if err := checkReadable(p); err != nil {
				t.Errorf("%s %s: complete file refused: %v", name, kind, err)
			}
			if err := os.Truncate(p, st.Size()-16); err != nil {
				t.Fatal(err)
			}
			err = checkReadable(p)
			var ve *VarError
			if !errors.Is(err, ErrNotNetCDF) || !errors.As(err, &ve) || ve.File != p {
				t.Errorf("%s %s: truncated file: err = %v", name, kind, err)
			}
		}
	}
	// A netCDF-4 file is not parsed as classic.
	p := ncgen(t, "grid3d.cdl", "nc4")
	f, _ := os.Open(p)
	defer f.Close()
	st, _ := f.Stat()
	if _, ok, err := classicExpectedSize(f, st.Size()); ok || err != nil {
		t.Errorf("netCDF-4 taken for classic: ok %v err %v", ok, err)
	}
}

// TestStaleTempsRemoved: a temporary file left by a dead process of this
// host is removed when the same output is created again; one of a live
// process or of another host is kept.
func TestStaleTempsRemoved(t *testing.T) {
	dir := t.TempDir()
	out := dir + "/o.nc"
	host := tempHost()
	dead := dir + "/.o.nc.tmp-" + host + "-999999999-aaaaaa"
	live := dir + "/.o.nc.tmp-" + host + "-1-bbbbbb" // pid 1 always runs
	other := dir + "/.o.nc.tmp-otherhost-999999999-cccccc"
	for _, p := range []string{dead, live, other} {
		os.WriteFile(p, nil, 0o644)
	}
	tmp, err := createTemp(out)
	if err != nil {
		t.Fatal(err)
	}
	defer os.Remove(tmp)
	if _, err := os.Stat(dead); !os.IsNotExist(err) {
		t.Error("stale temporary file of a dead process kept")
	}
	for _, p := range []string{live, other} {
		if _, err := os.Stat(p); err != nil {
			t.Errorf("%s removed", p)
		}
	}
}
