package grid

import (
	"os"
	"path/filepath"
	"testing"

	"github.com/warmrain/warmrain/grid/gridtest"
)

// The same 1000 x 1000 grid of two packed int16 inputs written by one C
// program (ncgen-hdf -c), built once against libmfhdf (an HDF4 file) and once
// against libnetcdf (a netCDF-3 classic file), then read and decoded whole by
// Input.Stats: the cost of reading HDF4 through libmfhdf next to libnetcdf's,
// both contiguous and uncompressed. Run side by side:
//
//	go test ./grid -run '^$' -bench 'ReadStats' -benchtime 20x

const benchCDL = `netcdf bench_scene {
dimensions:
	y = 1000 ;
	x = 1000 ;
variables:
	short lwp(y, x) ;
		lwp:units = "g m-2" ;
		lwp:scale_factor = 0.1 ;
		lwp:add_offset = 0. ;
		lwp:_FillValue = -9999s ;
	short re(y, x) ;
		re:units = "um" ;
		re:scale_factor = 0.01 ;
		re:add_offset = 0. ;
		re:_FillValue = -9999s ;
}
`

const benchFill = `static short buf[1000000];
long st[2] = {0, 0}, ed[2] = {1000, 1000};
long i;
for (i = 0; i < 1000000; i++) buf[i] = (short)(i % 97 == 0 ? -9999 : 300 + i % 2000);
ncvarput(ncid, lwp_id, st, ed, (void *)buf);
for (i = 0; i < 1000000; i++) buf[i] = (short)(600 + i % 1500);
ncvarput(ncid, re_id, st, ed, (void *)buf);`

// benchInput writes the bench grid in dir (HDF4, or netCDF-3 with nc3).
func benchInput(b *testing.B, nc3 bool) string {
	b.Helper()
	return gridtest.NCGenC(b, b.TempDir(), benchCDL, nil, benchFill, nc3)
}

func benchReadStats(b *testing.B, path string) {
	b.ReportAllocs()
	b.ResetTimer()
	b.SetBytes(2 * 1000 * 1000 * 2) // stored bytes of the two inputs
	for i := 0; i < b.N; i++ {
		in, err := Open(path, OpenOptions{})
		if err != nil {
			b.Fatal(err)
		}
		st, err := in.Stats()
		if err != nil || len(st) != 2 || st[0].Valid == 0 {
			b.Fatal(st, err)
		}
		in.Close()
	}
}

func BenchmarkReadStatsHDF4(b *testing.B) {
	benchReadStats(b, benchInput(b, false))
}

func BenchmarkReadStatsNetCDF3(b *testing.B) {
	benchReadStats(b, benchInput(b, true))
}

// TestBenchInputsAgree: the two bench files decode to the same values (the
// HDF4 calibration equals CF's here, add_offset being 0).
func TestBenchInputsAgree(t *testing.T) {
	if testing.Short() {
		t.Skip("writes two 4 MB files")
	}
	d := t.TempDir()
	h := gridtest.NCGenC(t, d, benchCDL, nil, benchFill, false)
	os.Mkdir(filepath.Join(d, "nc3"), 0o755)
	n := gridtest.NCGenC(t, filepath.Join(d, "nc3"), benchCDL, nil, benchFill, true)
	for _, v := range []string{"lwp", "re"} {
		a, _, err := ReadVariableAt(h, v, []int{990, 0}, []int{10, 1000})
		if err != nil {
			t.Fatal(err)
		}
		c, _, err := ReadVariableAt(n, v, []int{990, 0}, []int{10, 1000})
		if err != nil {
			t.Fatal(err)
		}
		sameValues(t, v, a, c, 0)
	}
}
