package grid

import (
	"encoding/json"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// The tests of this file are not parallel: a python3 child started while HDF5
// holds a file open for writing inherits the descriptor (HDF5 opens without
// O_CLOEXEC) and with it the file's flock, so a parallel read of that file fails
// with "HDF error" until the child exits.

// genericDataset is a small file with every kind of variable WriteDataset takes:
// a double coordinate, a float field with NaN -> _FillValue, an int count, a
// packed short and a scalar.
func genericDataset() *Dataset {
	nan := math.NaN()
	return &Dataset{
		Dims: []DimSpec{{"time", 2}, {"y", 2}, {"x", 3}, {"nv", 2}},
		Vars: []VarSpec{
			{Name: "x", Dims: []string{"x"}, Type: Double, Data: []float64{10, 20, 30},
				Attrs: []Attr{{Name: "units", Value: "m"}, {Name: "bounds", Value: "x_bnds"}}},
			{Name: "x_bnds", Dims: []string{"x", "nv"}, Type: Double, Data: []float64{5, 15, 15, 25, 25, 35}},
			{Name: "field", Dims: []string{"time", "y", "x"}, Type: Float,
				Data: []float64{1, 2, nan, 4, 5, 6, 7, 8, 9, 10, 11, nan},
				Attrs: []Attr{{Name: "_FillValue", Value: []float64{-999}}, {Name: "units", Value: "cm-3"},
					{Name: "valid_range", Value: []float64{0, 100}}}},
			{Name: "count", Dims: []string{"y", "x"}, Type: Int, Data: []float64{0, 1, 2, 3, 4, 5},
				Attrs: []Attr{{Name: "units", Value: "1"}}},
			{Name: "packed", Dims: []string{"x"}, Type: Short, Data: []int16{100, 200, -32767},
				Attrs: []Attr{{Name: "_FillValue", Value: []int16{-32767}}, {Name: "scale_factor", Type: Float, Value: []float32{0.5}},
					{Name: "add_offset", Type: Float, Value: []float32{1}}}},
			{Name: "scalar", Type: Double, Data: []float64{42}},
		},
		Globals: []Attr{{Name: "Conventions", Value: "CF-1.13 ACDD-1.3"}, {Name: "answer", Value: []int32{42}}},
	}
}

func TestWriteDatasetRoundTrip(t *testing.T) {
	path := filepath.Join(t.TempDir(), "d.nc")
	if err := WriteDataset(path, genericDataset(), false); err != nil {
		t.Fatal(err)
	}
	fi, err := Describe(path)
	if err != nil {
		t.Fatal(err)
	}
	if fi.Format != FormatNetCDF4Classic {
		t.Errorf("format %s, want %s", fi.Format, FormatNetCDF4Classic)
	}
	f := fi.Var("field")
	if f == nil || f.Type != Float || f.Deflate != 1 || !f.Shuffle {
		t.Fatalf("field: %+v; want float, deflate 1, shuffle", f)
	}
	if a, ok := f.Attr("_FillValue"); !ok || a.Type != Float || a.Float64s()[0] != -999 {
		t.Errorf("_FillValue %+v; want float -999", a)
	}
	if a, _ := f.Attr("valid_range"); a.Type != Float {
		t.Errorf("valid_range type %s; want the variable's type float", a.Type)
	}
	if a, _ := fi.Global("answer"); a.Type != Int || a.Float64s()[0] != 42 {
		t.Errorf("global answer %+v", a)
	}
	// Whole variable: NaN written as fill reads back as NaN.
	d, dims, err := ReadVariable(path, "field")
	if err != nil {
		t.Fatal(err)
	}
	want := genericDataset().Vars[2].Data.([]float64)
	if len(d) != len(want) || len(dims) != 3 || dims[0].Name != "time" || dims[2].Len != 3 {
		t.Fatalf("got %d values, dims %+v", len(d), dims)
	}
	for i := range want {
		if !(d[i] == want[i] || math.IsNaN(d[i]) && math.IsNaN(want[i])) {
			t.Errorf("field[%d] = %v, want %v", i, d[i], want[i])
		}
	}
	// A slab: the second time step, second row.
	d, dims, err = ReadVariableAt(path, "field", []int{1, 1, 0}, []int{1, 1, 3})
	if err != nil {
		t.Fatal(err)
	}
	if len(d) != 3 || d[0] != 10 || d[1] != 11 || !math.IsNaN(d[2]) || dims[1].Len != 1 {
		t.Errorf("slab = %v dims %+v; want [10 11 NaN]", d, dims)
	}
	// Packing: x*0.5+1, fill -> NaN (CF §8.1).
	d, _, err = ReadVariable(path, "packed")
	if err != nil {
		t.Fatal(err)
	}
	if d[0] != 51 || d[1] != 101 || !math.IsNaN(d[2]) {
		t.Errorf("packed = %v; want [51 101 NaN]", d)
	}
	d, _, err = ReadVariable(path, "count")
	if err != nil || d[5] != 5 {
		t.Errorf("count = %v, %v", d, err)
	}
	d, dims, err = ReadVariable(path, "scalar")
	if err != nil || len(d) != 1 || d[0] != 42 || len(dims) != 0 {
		t.Errorf("scalar = %v %v %v", d, dims, err)
	}
}

func TestWriteDatasetRefusesAndLeavesNoTemp(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "d.nc")
	if err := os.WriteFile(path, []byte("keep me"), 0o644); err != nil {
		t.Fatal(err)
	}
	err := WriteDataset(path, genericDataset(), false)
	if !errors.Is(err, ErrExists) {
		t.Fatalf("err = %v; want ErrExists", err)
	}
	if b, _ := os.ReadFile(path); string(b) != "keep me" {
		t.Fatal("existing file changed")
	}
	bad := genericDataset()
	bad.Vars[2].Dims = []string{"time", "y", "nope"}
	if err := WriteDataset(path, bad, true); !errors.Is(err, ErrLayout) || !strings.Contains(err.Error(), "nope") {
		t.Errorf("unknown dimension: err = %v", err)
	}
	bad = genericDataset()
	bad.Vars[3].Data = []float64{1, 2}
	if err := WriteDataset(path, bad, true); !errors.Is(err, ErrLayout) || !strings.Contains(err.Error(), `"count"`) {
		t.Errorf("short data: err = %v", err)
	}
	if b, _ := os.ReadFile(path); string(b) != "keep me" {
		t.Fatal("existing file changed by a refused write")
	}
	if err := WriteDataset(path, genericDataset(), true); err != nil {
		t.Fatalf("force: %v", err)
	}
	ents, _ := os.ReadDir(dir)
	if len(ents) != 1 {
		t.Errorf("folder holds %d entries; want only d.nc (no temporary file left)", len(ents))
	}
}

func TestReadVariableErrors(t *testing.T) {
	path := filepath.Join(t.TempDir(), "d.nc")
	if err := WriteDataset(path, genericDataset(), false); err != nil {
		t.Fatal(err)
	}
	_, _, err := ReadVariable(path, "nothere")
	if !errors.Is(err, ErrNoVariable) || !strings.Contains(err.Error(), path) || !strings.Contains(err.Error(), "nothere") {
		t.Errorf("missing variable: %v", err)
	}
	_, _, err = ReadVariableAt(path, "field", []int{2, 0, 0}, []int{1, 2, 3})
	if !errors.Is(err, ErrLayout) || !strings.Contains(err.Error(), `"field"`) {
		t.Errorf("slab outside: %v", err)
	}
	_, _, err = ReadVariableAt(path, "field", []int{0}, []int{1})
	if !errors.Is(err, ErrLayout) {
		t.Errorf("wrong rank: %v", err)
	}
	_, _, err = ReadVariable(filepath.Join(t.TempDir(), "none.nc"), "field")
	if !errors.Is(err, os.ErrNotExist) {
		t.Errorf("missing file: %v", err)
	}
}

// TestDatasetXarray reads the written file with an outside library (Debian's
// python3-xarray), which applies the CF decoding itself.
func TestDatasetXarray(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	path := filepath.Join(t.TempDir(), "d.nc")
	if err := WriteDataset(path, genericDataset(), false); err != nil {
		t.Fatal(err)
	}
	out := runPy(t, `
import sys, json, math, xarray as xr
ds = xr.open_dataset(sys.argv[1])
f = ds["field"].values.ravel().tolist()
p = ds["packed"].values.tolist()
print(json.dumps({"field": [None if math.isnan(v) else v for v in f],
                  "packed": [None if math.isnan(v) else v for v in p],
                  "count": ds["count"].values.ravel().tolist(),
                  "x_units": ds["x"].attrs["units"], "answer": int(ds.attrs["answer"])}))
`, path)
	var got struct {
		Field  []*float64
		Packed []*float64
		Count  []int
		XUnits string `json:"x_units"`
		Answer int
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatalf("%v: %s", err, out)
	}
	want := genericDataset().Vars[2].Data.([]float64)
	for i, w := range want {
		g := got.Field[i]
		if math.IsNaN(w) != (g == nil) || (g != nil && *g != w) {
			t.Errorf("xarray field[%d] = %v, want %v", i, g, w)
		}
	}
	if got.Packed[0] == nil || *got.Packed[0] != 51 || got.Packed[2] != nil {
		t.Errorf("xarray packed = %v; want [51 101 NaN]", got.Packed)
	}
	if len(got.Count) != 6 || got.Count[5] != 5 || got.XUnits != "m" || got.Answer != 42 {
		t.Errorf("xarray: %+v", got)
	}
}
