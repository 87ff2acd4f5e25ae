package grid

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
)

// DatasetWriter writes a Dataset whose large variables come in pieces: the variables
// with Data are written when it is created, those without by Put, one hyperslab at a
// time, so the memory is one piece, not the file. Like WriteDataset it writes a
// temporary file in the target folder that Commit renames into place (the path holds
// the whole file or is left as it was) and Abort removes.
type DatasetWriter struct {
	path, tmp string
	replace   bool // force: Commit may replace a file at path
	ncid      int
	ds        *Dataset
	ids       map[string]int
	vars      map[string]*VarSpec
	fills     map[string]float64
	done      bool
}

// CreateDataset checks ds (as WriteDataset does; variables may have nil Data, to be
// written with Put), creates the temporary file and writes the definitions and every
// variable that has Data. An existing path is refused (ErrExists) unless force.
func CreateDataset(path string, ds *Dataset, force bool) (*DatasetWriter, error) {
	if isURL(path) {
		return nil, &VarError{File: path, Problem: "outputs must be plain file paths (no URLs)", Err: ErrLayout}
	}
	if st, err := os.Stat(path); err == nil {
		if st.IsDir() {
			return nil, &VarError{File: path, Problem: "is a directory; expected an output file name", Err: ErrExists}
		}
		if !force {
			return nil, &VarError{File: path, Problem: "already exists; refusing to overwrite it without force", Err: ErrExists}
		}
	}
	if err := checkDataset(path, ds, true); err != nil {
		return nil, err
	}
	if st, err := os.Stat(filepath.Dir(path)); err != nil || !st.IsDir() {
		return nil, &VarError{File: path, Problem: fmt.Sprintf("output folder %q does not exist", filepath.Dir(path)), Err: os.ErrNotExist}
	}
	tmp, err := createTemp(path)
	if err != nil {
		return nil, err
	}
	w := &DatasetWriter{path: path, tmp: tmp, replace: force, ds: ds, ids: map[string]int{}, vars: map[string]*VarSpec{}, fills: map[string]float64{}}
	var werr error
	if e := onIO(func() {
		ncid, err := ncCreate(tmp, datasetMode(ds))
		if err != nil {
			werr = &VarError{File: path, Problem: "cannot create: " + err.Error(), Err: err}
			return
		}
		w.ncid = ncid
		ids, data, err := defineDatasetIO(path, ncid, ds)
		if err != nil {
			werr = err
			return
		}
		for k := range ds.Vars {
			v := &ds.Vars[k]
			w.ids[v.Name], w.vars[v.Name] = ids[k], v
			w.fills[v.Name] = math.NaN()
			for _, a := range v.Attrs {
				if a.Name == "_FillValue" {
					w.fills[v.Name] = toFloat64s(a.Value)[0]
				}
			}
			if data[k] == nil {
				continue
			}
			st, ct := w.whole(v)
			if err := ncPutVara(ncid, ids[k], st, ct, typedPtr(data[k])); err != nil {
				werr = &VarError{File: path, Var: v.Name, Problem: "cannot write data: " + err.Error(), Err: err}
				return
			}
		}
	}); e != nil {
		werr = e
	}
	if werr != nil {
		w.Abort()
		return nil, werr
	}
	return w, nil
}

func (w *DatasetWriter) whole(v *VarSpec) (st, ct []uint64) {
	st, ct = make([]uint64, len(v.Dims)), make([]uint64, len(v.Dims))
	for i, d := range v.Dims {
		for _, dd := range w.ds.Dims {
			if dd.Name == d {
				ct[i] = uint64(dd.Len)
			}
		}
	}
	return st, ct
}

// Put writes data (row-major, NaN = missing, converted to the variable's type as
// WriteDataset does) into the hyperslab start/count of variable name.
func (w *DatasetWriter) Put(name string, start, count []int, data []float64) error {
	v, ok := w.vars[name]
	if !ok || w.done {
		return &VarError{File: w.path, Var: name, Problem: "no such variable in the dataset being written, or the writer is closed", Err: ErrLayout}
	}
	_, whole := w.whole(v)
	if len(start) != len(v.Dims) || len(count) != len(v.Dims) {
		return &VarError{File: w.path, Var: name, Problem: fmt.Sprintf("start %v and count %v do not fit its dimensions %v", start, count, v.Dims), Err: ErrLayout}
	}
	n := 1
	st, ct := make([]uint64, len(start)), make([]uint64, len(count))
	for i := range start {
		if start[i] < 0 || count[i] < 0 || uint64(start[i]+count[i]) > whole[i] {
			return &VarError{File: w.path, Var: name, Problem: fmt.Sprintf("start %v and count %v exceed its shape %v", start, count, whole), Err: ErrLayout}
		}
		st[i], ct[i] = uint64(start[i]), uint64(count[i])
		n *= count[i]
	}
	if len(data) != n {
		return &VarError{File: w.path, Var: name, Problem: fmt.Sprintf("%d values for a hyperslab of %d", len(data), n), Err: ErrLayout}
	}
	fill := w.fills[name]
	piece := VarSpec{Name: name, Type: v.Type, Data: data}
	typed := datasetValues(piece, fill, !math.IsNaN(fill))
	var werr error
	if e := onIO(func() {
		if err := ncPutVara(w.ncid, w.ids[name], st, ct, typedPtr(typed)); err != nil {
			werr = &VarError{File: w.path, Var: name, Problem: "cannot write data: " + err.Error(), Err: err}
		}
	}); e != nil {
		werr = e
	}
	return werr
}

// Commit closes the file, syncs it and moves it into place (grid/store_tempfile.go's
// commitTemp, the second half of WriteAtomic).
func (w *DatasetWriter) Commit() error {
	if w.done {
		return &VarError{File: w.path, Problem: "commit of a closed writer", Err: ErrLayout}
	}
	w.done = true
	var werr error
	if e := onIO(func() {
		if err := ncClose(w.ncid); err != nil {
			werr = &VarError{File: w.path, Problem: "closing the output failed (disk full?): " + err.Error(), Err: err}
		}
	}); e != nil {
		werr = e
	}
	if werr != nil {
		os.Remove(w.tmp)
		return werr
	}
	return commitTemp(w.tmp, w.path, w.replace) // as WriteAtomic: no replace unless force
}

// Abort discards the temporary file; the path is left as it was. Safe after Commit.
func (w *DatasetWriter) Abort() {
	if w.done {
		return
	}
	w.done = true
	_ = onIO(func() {
		if ncAbort(w.ncid) != nil {
			ncClose(w.ncid)
		}
	})
	os.Remove(w.tmp)
}
