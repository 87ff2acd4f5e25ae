package grid

import (
	"encoding/json"
	"errors"
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/warmrain/warmrain/grid/gridtest"
)

// TestDatasetWriterPieces writes a variable in hyperslabs along its leading dimension,
// with NaN as fill, beside a whole variable and a char label variable, and reads the
// file back with netCDF4-python (an outside reader).
func TestDatasetWriterPieces(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	dir := t.TempDir()
	path := filepath.Join(dir, "pieces.nc")
	labels, w := CharRows([]string{"base", "early", "late"})
	ds := &Dataset{
		Dims: []DimSpec{{Name: "member", Len: 3}, {Name: "y", Len: 4}, {Name: "x", Len: 5}, {Name: "n", Len: w}},
		Vars: []VarSpec{
			{Name: "member_name", Dims: []string{"member", "n"}, Type: Char, Data: labels},
			{Name: "x", Dims: []string{"x"}, Type: Double, Data: []float64{0, 1, 2, 3, 4}},
			{Name: "v", Dims: []string{"member", "y", "x"}, Type: Float, Attrs: []Attr{{Name: "_FillValue", Value: []float32{-999}}, {Name: "units", Value: "1"}}},
		},
	}
	dw, err := CreateDataset(path, ds, false)
	if err != nil {
		t.Fatal(err)
	}
	for m := 0; m < 3; m++ {
		for y := 0; y < 4; y += 3 { // pieces of 3 rows and 1 row
			n := min(3, 4-y)
			d := make([]float64, n*5)
			for i := range d {
				d[i] = float64(m*100 + (y+i/5)*10 + i%5)
			}
			if m == 1 && y == 0 {
				d[2] = math.NaN()
			}
			if err := dw.Put("v", []int{m, y, 0}, []int{1, n, 5}, d); err != nil {
				t.Fatal(err)
			}
		}
	}
	if err := dw.Put("v", []int{3, 0, 0}, []int{1, 1, 5}, make([]float64, 5)); err == nil {
		t.Error("a hyperslab outside the variable was accepted")
	}
	if _, err := os.Stat(path); err == nil {
		t.Fatal("the file appeared before Commit")
	}
	if err := dw.Commit(); err != nil {
		t.Fatal(err)
	}
	out := gridtest.Python(t, `
import sys, json, netCDF4, numpy as np
ds = netCDF4.Dataset(sys.argv[1]); ds.set_auto_maskandscale(False)
print(json.dumps({"v": ds["v"][:].astype(float).ravel().tolist(), "names": [str(s) for s in netCDF4.chartostring(ds["member_name"][:])]}))
`, path)
	var got struct {
		V     []float64
		Names []string
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatal(err)
	}
	for m := 0; m < 3; m++ {
		for k := 0; k < 20; k++ {
			want := float64(m*100 + (k/5)*10 + k%5)
			if m == 1 && k == 2 {
				want = -999
			}
			if g := got.V[m*20+k]; g != want {
				t.Errorf("v[%d,%d] = %g, want %g", m, k, g, want)
			}
		}
	}
	if len(got.Names) != 3 || got.Names[0] != "base" || got.Names[1] != "early" || got.Names[2] != "late" {
		t.Errorf("member names %v", got.Names)
	}

	// An existing file is refused without force; Abort leaves the path as it was.
	if _, err := CreateDataset(path, ds, false); !errors.Is(err, ErrExists) {
		t.Errorf("existing file: %v, want ErrExists", err)
	}
	before, _ := os.ReadFile(path)
	dw, err = CreateDataset(path, ds, true)
	if err != nil {
		t.Fatal(err)
	}
	dw.Abort()
	after, _ := os.ReadFile(path)
	if string(before) != string(after) {
		t.Error("Abort changed the existing file")
	}
	ents, _ := os.ReadDir(dir)
	if len(ents) != 1 {
		t.Errorf("the folder holds %d entries after Abort, want the file alone", len(ents))
	}
	// A char variable needs []byte of its exact length.
	bad := &Dataset{Dims: []DimSpec{{Name: "n", Len: 3}}, Vars: []VarSpec{{Name: "c", Dims: []string{"n"}, Type: Char, Data: []byte("ab")}}}
	if err := WriteDataset(filepath.Join(dir, "bad.nc"), bad, false); !errors.Is(err, ErrLayout) {
		t.Errorf("short char data: %v, want ErrLayout", err)
	}
}
