package grid

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
)

// Generic small-file I/O: whole variables or hyperslabs of any file decoded to
// float64 (Reader, ReadVariable, ReadVariableAt), and small self-described files
// written in one go (Dataset, WriteDataset). Used by the summary command; the
// streaming pipeline of Open/Create/Process is for the big per-column files.

// Reader is an open netCDF file for reading variables by name. Every call runs
// on the I/O thread; a Reader may be used from one goroutine at a time.
type Reader struct {
	path  string
	files []*storeFile
	info  *FileInfo
	open  bool
}

// OpenReader opens path (a file, an NCZarr URL, an HDF4 file or a scene of
// files joined with "+") and reads its metadata.
func OpenReader(path string) (*Reader, error) {
	files := SceneFiles(path)
	if err := checkScene(files); err != nil {
		return nil, err
	}
	r := &Reader{path: path}
	var err error
	if e := onIO(func() {
		r.info, r.files, err = openSceneIO(files)
		r.open = err == nil
	}); e != nil {
		return nil, e
	}
	if err != nil {
		return nil, err
	}
	return r, nil
}

// Info returns the file's description (shared; do not modify).
func (r *Reader) Info() *FileInfo { return r.info }

// Close closes the file. It is safe to call more than once.
func (r *Reader) Close() error {
	if !r.open {
		return nil
	}
	r.open = false
	var err error
	if e := onIO(func() {
		for _, f := range r.files {
			if cerr := f.closeIO(); cerr != nil && err == nil {
				err = cerr
			}
		}
		r.info.detach()
	}); e != nil {
		return e
	}
	if err != nil {
		return &VarError{File: r.path, Problem: "close failed: " + err.Error(), Err: err}
	}
	return nil
}

// Read reads the hyperslab start/count of variable name (nil start and count:
// the whole variable) and decodes it to float64: values equal to _FillValue (or
// the library's default fill), to missing_value or outside valid_min/valid_max/
// valid_range, and NaN, become NaN; scale_factor and add_offset are applied (CF
// §2.5.1, §8.1; see Decoder). No unit conversion is made: the values are in the
// variable's units attribute. dims describe the returned block: the variable's
// dimensions, with Len the count read along each. Errors name the file and the
// variable and wrap ErrNoVariable (no such variable), ErrLayout (non-numeric
// variable, bad start/count) or ErrDecode (bad missing-value attributes).
func (r *Reader) Read(name string, start, count []int) (data []float64, dims []DimInfo, err error) {
	if !r.open {
		return nil, nil, &VarError{File: r.path, Var: name, Problem: "read after Close", Err: ErrLayout}
	}
	v := r.info.Var(name)
	if v == nil {
		return nil, nil, varErr(ErrNoVariable, r.path, name, "not found; the file has %s", varNames(r.info))
	}
	nd := len(v.Shape)
	if start == nil && count == nil {
		start = make([]int, nd)
		count = append([]int(nil), v.Shape...)
	}
	if len(start) != nd || len(count) != nd {
		return nil, nil, varErr(ErrLayout, r.path, name, "has %d dimensions %s; start %v and count %v must have one entry each", nd, dimsString(v), start, count)
	}
	n := 1
	st := make([]uint64, nd)
	ct := make([]uint64, nd)
	for i := range start {
		if start[i] < 0 || count[i] < 0 || start[i]+count[i] > v.Shape[i] {
			return nil, nil, varErr(ErrLayout, r.path, name, "slab start %v count %v lies outside its shape %v %s", start, count, v.Shape, dimsString(v))
		}
		st[i], ct[i] = uint64(start[i]), uint64(count[i])
		n *= count[i]
	}
	dec, err := storedUnitsDecoder(r.path, v)
	if err != nil {
		return nil, nil, err
	}
	dims = make([]DimInfo, nd)
	for i, id := range v.DimIDs {
		for _, d := range r.info.Dims {
			if d.ID == id {
				dims[i] = d
			}
		}
		dims[i].Len = count[i]
	}
	data = make([]float64, n)
	if n == 0 {
		return data, dims, nil
	}
	raw := newTyped(v.Type, n)
	var rerr error
	if e := onIO(func() { rerr = v.readIO(st, ct, typedPtr(raw)) }); e != nil {
		return nil, nil, e
	}
	if rerr != nil {
		return nil, nil, varErr(rerr, r.path, name, "read of start %v count %v failed: %v", start, count, rerr)
	}
	dec.Decode(data, typedPtr(raw))
	return data, dims, nil
}

func varNames(fi *FileInfo) string {
	if len(fi.Vars) == 0 {
		return "no variables"
	}
	n := make([]string, len(fi.Vars))
	for i, v := range fi.Vars {
		n[i] = v.Name
	}
	return "the variables " + strings.Join(n, ", ")
}

// ReadVariable opens path, reads variable name whole (decoded as by Reader.Read)
// and closes the file.
func ReadVariable(path, name string) (data []float64, dims []DimInfo, err error) {
	return ReadVariableAt(path, name, nil, nil)
}

// ReadVariableAt opens path, reads the hyperslab start/count of variable name
// (decoded as by Reader.Read) and closes the file. To read many slabs of one
// file, use OpenReader and Reader.Read, which keep the file open.
func ReadVariableAt(path, name string, start, count []int) (data []float64, dims []DimInfo, err error) {
	r, err := OpenReader(path)
	if err != nil {
		return nil, nil, err
	}
	defer r.Close()
	return r.Read(name, start, count)
}

// DimSpec is one dimension of a Dataset (fixed length > 0).
type DimSpec struct {
	Name string
	Len  int
}

// VarSpec is one variable of a Dataset. Dims name DimSpecs (slowest first; none
// for a scalar). Type is the stored type, one of the classic-model types Byte,
// Char, Short, Int, Float, Double, or an unsigned integer type Ubyte, Ushort or Uint
// (a bit-mask flag variable such as the QC of process outputs), which makes the file
// netCDF-4 rather than the classic model (datasetMode). Data holds the values
// row-major, len = product of the dimension lengths: []float64, []float32,
// []int32, []int16 or []int8 (or any other numeric slice), or []byte for a Char
// variable (text padded with NULs, see CharRows); it is converted to Type
// when the types differ (integers rounded to nearest and saturated). Attrs are
// written in order; a _FillValue attribute (any numeric type) is written in the
// variable's type before any data, and NaN values of float data become it; the
// attributes missing_value, valid_min, valid_max, valid_range, flag_values and
// flag_masks are written in the variable's type too, others in their own type
// (text for string values).
type VarSpec struct {
	Name  string
	Dims  []string
	Type  Type
	Attrs []Attr
	Data  any
}

// CharRows returns texts as the data of a Char variable of dimensions (len(texts),
// width): each text in a row of width bytes, padded with NULs, and the width (the
// longest text, at least 1).
func CharRows(texts []string) ([]byte, int) {
	w := 1
	for _, t := range texts {
		w = max(w, len(t))
	}
	b := make([]byte, w*len(texts))
	for i, t := range texts {
		copy(b[i*w:], t)
	}
	return b, w
}

// Dataset is a small netCDF file described whole, for WriteDataset.
type Dataset struct {
	Dims    []DimSpec
	Vars    []VarSpec
	Globals []Attr
}

// WriteDataset writes ds to path as a netCDF-4 classic model file (netCDF-4 with an
// unsigned variable, see datasetMode), every
// variable with dimensions deflated at level 1 with shuffle. The file is written
// to a temporary file in the target folder and renamed into place, so path holds
// the whole file or is left as it was. An existing path is refused (ErrExists)
// unless force. Inconsistent datasets (unknown dimension, wrong data length,
// unsupported type, duplicate names) are refused with ErrLayout before anything is
// written.
func WriteDataset(path string, ds *Dataset, force bool) error {
	if isURL(path) {
		return &VarError{File: path, Problem: "outputs must be plain file paths (no URLs)", Err: ErrLayout}
	}
	if st, err := os.Stat(path); err == nil {
		if st.IsDir() {
			return &VarError{File: path, Problem: "is a directory; expected an output file name", Err: ErrExists}
		}
		if !force {
			return &VarError{File: path, Problem: "already exists; refusing to overwrite it without force", Err: ErrExists}
		}
	}
	if err := checkDataset(path, ds, false); err != nil {
		return err
	}
	dir := filepath.Dir(path)
	if st, err := os.Stat(dir); err != nil || !st.IsDir() {
		return &VarError{File: path, Problem: fmt.Sprintf("output folder %q does not exist", dir), Err: os.ErrNotExist}
	}
	return WriteAtomic(path, force, func(tmp string) error {
		var werr error
		if e := onIO(func() { werr = writeDatasetIO(path, tmp, ds) }); e != nil {
			werr = e
		}
		return werr
	})
}

func checkDataset(path string, ds *Dataset, streamed bool) error {
	bad := func(v, format string, a ...any) error {
		return &VarError{File: path, Var: v, Problem: fmt.Sprintf(format, a...), Err: ErrLayout}
	}
	dims := map[string]int{}
	for _, d := range ds.Dims {
		if d.Name == "" {
			return bad("", "a dimension has no name")
		}
		if _, dup := dims[d.Name]; dup {
			return bad("", "dimension %q is defined twice", d.Name)
		}
		if d.Len <= 0 {
			return bad("", "dimension %q has length %d; expected > 0", d.Name, d.Len)
		}
		dims[d.Name] = d.Len
	}
	seen := map[string]bool{}
	for _, v := range ds.Vars {
		if v.Name == "" {
			return bad("", "a variable has no name")
		}
		if seen[v.Name] {
			return bad(v.Name, "is defined twice")
		}
		seen[v.Name] = true
		if !v.Type.classicOK() && !unsignedFlagType(v.Type) {
			return bad(v.Name, "has type %s; expected byte, char, short, int, float, double or an unsigned flag type (ubyte, ushort, uint)", v.Type)
		}
		n := 1
		for _, d := range v.Dims {
			l, ok := dims[d]
			if !ok {
				return bad(v.Name, "uses dimension %q, which the dataset does not define", d)
			}
			n *= l
		}
		if v.Data == nil && streamed {
			continue // written later by DatasetWriter.Put
		}
		if v.Type == Char { // text: one byte a character, padded with NULs (CF §2.2)
			if b, ok := v.Data.([]byte); !ok || len(b) != n {
				return bad(v.Name, "is a char variable with data of Go type %T (%d values); expected []byte of %d characters", v.Data, typedLen(v.Data), n)
			}
			continue
		}
		if typedType(v.Data) == 0 || typedType(v.Data) == Char || typedType(v.Data) == String {
			return bad(v.Name, "has data of Go type %T; expected a numeric slice", v.Data)
		}
		if l := typedLen(v.Data); l != n {
			return bad(v.Name, "has %d values; its dimensions %v hold %d", l, v.Dims, n)
		}
		for _, a := range v.Attrs {
			if a.Name == "_FillValue" {
				if f := toFloat64s(a.Value); len(f) != 1 {
					return bad(v.Name, "_FillValue has %d values; expected one number", len(f))
				}
			}
		}
	}
	return nil
}

// writeDatasetIO runs on the I/O thread.
func writeDatasetIO(path, tmp string, ds *Dataset) error {
	werr := func(v string, err error, what string) error {
		return &VarError{File: path, Var: v, Problem: what + ": " + err.Error(), Err: err}
	}
	ncid, err := ncCreate(tmp, datasetMode(ds))
	if err != nil {
		return werr("", err, "cannot create")
	}
	ok := false
	defer func() {
		if !ok {
			if ncAbort(ncid) != nil {
				ncClose(ncid)
			}
		}
	}()
	ids, data, err := defineDatasetIO(path, ncid, ds)
	if err != nil {
		return err
	}
	for k, v := range ds.Vars {
		nd := len(v.Dims)
		st := make([]uint64, nd)
		ct := make([]uint64, nd)
		for i, d := range v.Dims {
			for _, ds := range ds.Dims {
				if ds.Name == d {
					ct[i] = uint64(ds.Len)
				}
			}
		}
		if err := ncPutVara(ncid, ids[k], st, ct, typedPtr(data[k])); err != nil {
			return werr(v.Name, err, "cannot write data")
		}
	}
	ok = true
	if err := ncClose(ncid); err != nil {
		return werr("", err, "closing the output failed (disk full?)")
	}
	return nil
}

// defineDatasetIO defines the dimensions, variables and attributes of ds in the open
// file ncid, ends define mode, and returns the variable ids and the data of each
// variable converted to its type (nil for a variable without Data). It runs on the
// I/O thread.
func defineDatasetIO(path string, ncid int, ds *Dataset) ([]int, []any, error) {
	werr := func(v string, err error, what string) error {
		return &VarError{File: path, Var: v, Problem: what + ": " + err.Error(), Err: err}
	}
	dimID := map[string]int{}
	for _, d := range ds.Dims {
		id, err := ncDefDim(ncid, d.Name, d.Len)
		if err != nil {
			return nil, nil, werr("", err, "cannot define dimension "+d.Name)
		}
		dimID[d.Name] = id
	}
	ids := make([]int, len(ds.Vars))
	data := make([]any, len(ds.Vars))
	for k, v := range ds.Vars {
		dd := make([]int, len(v.Dims))
		for i, d := range v.Dims {
			dd[i] = dimID[d]
		}
		id, err := ncDefVar(ncid, v.Name, v.Type, dd)
		if err != nil {
			return nil, nil, werr(v.Name, err, "cannot define")
		}
		ids[k] = id
		if len(dd) > 0 {
			if err := ncDefDeflate(ncid, id, true, 1); err != nil {
				return nil, nil, werr(v.Name, err, "cannot set compression")
			}
		}
		fill := math.NaN()
		hasFill := false
		for _, a := range v.Attrs {
			if a.Name == "_FillValue" {
				fill, hasFill = toFloat64s(a.Value)[0], true
				if err := ncDefFill(ncid, id, convertTyped([]float64{fill}, v.Type)); err != nil {
					return nil, nil, werr(v.Name, err, "cannot set _FillValue")
				}
			}
		}
		for _, a := range v.Attrs {
			if a.Name == "_FillValue" {
				continue
			}
			if err := putAttrConverted(ncid, id, a, v.Type); err != nil {
				return nil, nil, werr(v.Name, err, "cannot write attribute "+a.Name)
			}
		}
		if v.Data != nil {
			data[k] = datasetValues(v, fill, hasFill)
		}
	}
	for _, a := range ds.Globals {
		if err := putAttrConverted(ncid, globalID, a, 0); err != nil {
			return nil, nil, werr("", err, "cannot write global attribute "+a.Name)
		}
	}
	if err := ncEndDef(ncid); err != nil {
		return nil, nil, werr("", err, "cannot end define mode")
	}
	return ids, data, nil
}

func datasetValues(v VarSpec, fill float64, hasFill bool) any {
	if v.Type == Char {
		return v.Data
	}
	if typedType(v.Data) == v.Type && !v.Type.Integer() && !hasFill {
		return v.Data
	}
	f := toFloat64s(v.Data)
	if hasFill {
		for i, x := range f {
			if math.IsNaN(x) || (v.Type.Integer() && math.IsInf(x, 0)) {
				f[i] = fill
			}
		}
	}
	return convertTyped(f, v.Type)
}

// unsignedFlagType reports the unsigned integer types a Dataset may hold (bit masks).
func unsignedFlagType(t Type) bool { return t == Ubyte || t == Ushort || t == Uint }

// datasetMode is the create mode of a Dataset: the netCDF-4 classic model, or
// netCDF-4 when a variable has an unsigned type the classic model lacks.
func datasetMode(ds *Dataset) int {
	for _, v := range ds.Vars {
		if unsignedFlagType(v.Type) {
			return modeNetCDF4
		}
	}
	return modeNetCDF4Classic
}

// putAttrConverted copies an attribute into a classic-model file: NC_STRING
// becomes NC_CHAR, unsupported integer types become the next wider classic type,
// and _FillValue, missing_value and valid_* follow the variable's type vt.
func putAttrConverted(ncid, varid int, a Attr, vt Type) error {
	if s, ok := a.Text(); ok {
		return ncPutAtt(ncid, varid, a.Name, Char, s)
	}
	t, _ := classicType(a.Type)
	switch a.Name {
	case "_FillValue", "missing_value", "valid_min", "valid_max", "valid_range", "flag_values", "flag_masks":
		if vt != 0 && vt.Numeric() {
			t = vt
		}
	}
	if typedLen(a.Value) == 0 {
		return nil
	}
	return ncPutAtt(ncid, varid, a.Name, t, a.Value)
}

// classicType maps a type to one allowed in the netCDF-4 classic model.
func classicType(t Type) (Type, bool) {
	switch t {
	case Ubyte:
		return Short, true
	case Ushort:
		return Int, true
	case Uint, Int64, Uint64:
		return Double, true
	case String:
		return 0, false
	}
	return t, true
}
