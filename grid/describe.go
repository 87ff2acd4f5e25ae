package grid

import (
	"errors"
	"fmt"
	"os"
	"strings"
)

// Format is a file's storage format.
type Format string

// The formats libnetcdf reports.
const (
	FormatClassic        Format = "classic"
	Format64BitOffset    Format = "64-bit offset"
	FormatCDF5           Format = "CDF-5"
	FormatNetCDF4        Format = "netCDF-4"
	FormatNetCDF4Classic Format = "netCDF-4 classic model"
	FormatNCZarr         Format = "NCZarr"
	FormatDAP            Format = "OPeNDAP"
)

// DimInfo describes one dimension.
type DimInfo struct {
	ID        int
	Name      string
	Len       int
	Unlimited bool
}

// VarInfo describes one variable.
type VarInfo struct {
	ID      int
	Name    string
	Type    Type
	Dims    []string // dimension names, slowest first
	DimIDs  []int
	Shape   []int
	Attrs   []Attr
	Chunks  []int // nil when contiguous
	Shuffle bool
	Deflate int // deflate level, 0 = none
}

// Attr returns the named attribute.
func (v *VarInfo) Attr(name string) (Attr, bool) { return findAttr(v.Attrs, name) }

// Text returns a text attribute ("" when absent or numeric).
func (v *VarInfo) Text(name string) string {
	a, ok := v.Attr(name)
	if !ok {
		return ""
	}
	s, _ := a.Text()
	return s
}

// Len is the number of values.
func (v *VarInfo) Len() int {
	n := 1
	for _, s := range v.Shape {
		n *= s
	}
	return n
}

// FileInfo is a generic description of a netCDF file (root group only).
type FileInfo struct {
	Path    string
	Format  Format
	Dims    []DimInfo
	Vars    []VarInfo
	Globals []Attr
}

// Var returns the named variable or nil.
func (f *FileInfo) Var(name string) *VarInfo {
	for i := range f.Vars {
		if f.Vars[i].Name == name {
			return &f.Vars[i]
		}
	}
	return nil
}

// Dim returns the named dimension.
func (f *FileInfo) Dim(name string) (DimInfo, bool) {
	for _, d := range f.Dims {
		if d.Name == name {
			return d, true
		}
	}
	return DimInfo{}, false
}

// Global returns the named global attribute.
func (f *FileInfo) Global(name string) (Attr, bool) { return findAttr(f.Globals, name) }

func findAttr(as []Attr, name string) (Attr, bool) {
	for _, a := range as {
		if a.Name == name {
			return a, true
		}
	}
	return Attr{}, false
}

// Describe opens path (a file or an NCZarr URL), reads its metadata and closes it.
func Describe(path string) (*FileInfo, error) {
	if err := checkReadable(path); err != nil {
		return nil, err
	}
	var fi *FileInfo
	var err error
	if e := onIO(func() {
		var ncid int
		ncid, err = ncOpen(path)
		if err != nil {
			err = openError(path, err)
			return
		}
		defer ncClose(ncid)
		fi, err = describeIO(ncid, path)
	}); e != nil {
		return nil, e
	}
	return fi, err
}

// isURL reports whether path is a URL (NCZarr, OPeNDAP) rather than a file name.
func isURL(path string) bool { return strings.Contains(path, "://") }

// checkReadable gives clear errors for missing, empty and unreadable files before
// libnetcdf sees them.
func checkReadable(path string) error {
	if isURL(path) {
		return checkZarrStore(path)
	}
	st, err := os.Stat(path)
	if err != nil {
		return err
	}
	if st.IsDir() && isZarrDir(path) {
		return zarrDirError(path)
	}
	if st.IsDir() {
		return &VarError{File: path, Problem: "is a directory, not a netCDF file (an NCZarr store is opened as file:///abs/path#mode=nczarr,file)", Err: ErrNotNetCDF}
	}
	if st.Size() == 0 {
		return &VarError{File: path, Problem: "is empty (0 bytes); expected a netCDF file", Err: ErrNotNetCDF}
	}
	return checkClassicSize(path, st.Size())
}

func openError(path string, err error) error {
	var ne *ncError
	if errors.As(err, &ne) {
		switch {
		case errors.Is(err, ErrNotNetCDF):
			return &VarError{File: path, Problem: "not a netCDF file (" + ne.msg + "); expected netCDF-3, netCDF-4/HDF5 or an NCZarr store", Err: ErrNotNetCDF}
		case ne.code == -101 || ne.code == -128: // NC_EHDFERR, NC_ENOFILTER..., HDF5 without netCDF metadata
			return &VarError{File: path, Problem: "cannot be read as netCDF (" + ne.msg + "); the file may be truncated or an HDF5 file without netCDF metadata", Err: ErrNotNetCDF}
		}
		return &VarError{File: path, Problem: "cannot open: " + ne.msg + "; expected a readable netCDF-3, netCDF-4/HDF5 file or an NCZarr store (the header may be corrupt)", Err: ErrNotNetCDF}
	}
	return fmt.Errorf("%s: %w", path, err)
}

// describeIO runs on the I/O thread.
func describeIO(ncid int, path string) (*FileInfo, error) {
	fi := &FileInfo{Path: path}
	var err error
	if fi.Format, err = ncFormat(ncid); err != nil {
		return nil, &VarError{File: path, Problem: "cannot read format: " + err.Error(), Err: err}
	}
	_, nvars, ngatts, _, err := ncInq(ncid)
	if err != nil {
		return nil, &VarError{File: path, Problem: err.Error(), Err: err}
	}
	unl, err := ncUnlimDims(ncid)
	if err != nil {
		return nil, &VarError{File: path, Problem: err.Error(), Err: err}
	}
	dimids, err := ncDimIDs(ncid)
	if err != nil {
		return nil, &VarError{File: path, Problem: err.Error(), Err: err}
	}
	byID := map[int]DimInfo{}
	for _, id := range dimids {
		name, n, err := ncDim(ncid, id)
		if err != nil {
			return nil, &VarError{File: path, Problem: err.Error(), Err: err}
		}
		d := DimInfo{ID: id, Name: name, Len: n}
		for _, u := range unl {
			d.Unlimited = d.Unlimited || u == id
		}
		byID[id] = d
		fi.Dims = append(fi.Dims, d)
	}
	if fi.Globals, err = readAttrsIO(ncid, globalID, ngatts); err != nil {
		return nil, &VarError{File: path, Problem: err.Error(), Err: err}
	}
	for id := 0; id < nvars; id++ {
		name, t, vd, natts, err := ncVar(ncid, id)
		if err != nil {
			return nil, &VarError{File: path, Problem: err.Error(), Err: err}
		}
		v := VarInfo{ID: id, Name: name, Type: t, DimIDs: vd}
		for _, d := range vd {
			di := byID[d]
			v.Dims = append(v.Dims, di.Name)
			v.Shape = append(v.Shape, di.Len)
		}
		if v.Attrs, err = readAttrsIO(ncid, id, natts); err != nil {
			return nil, &VarError{File: path, Var: name, Problem: err.Error(), Err: err}
		}
		if fi.Format == FormatNetCDF4 || fi.Format == FormatNetCDF4Classic || fi.Format == FormatNCZarr {
			if v.Chunks, err = ncInqChunking(ncid, id, len(vd)); err != nil {
				return nil, &VarError{File: path, Var: name, Problem: err.Error(), Err: err}
			}
			if sh, lev, err := ncInqDeflate(ncid, id); err == nil {
				v.Shuffle, v.Deflate = sh, lev
			}
		}
		fi.Vars = append(fi.Vars, v)
	}
	return fi, nil
}

func readAttrsIO(ncid, varid, n int) ([]Attr, error) {
	var out []Attr
	for i := 0; i < n; i++ {
		name, err := ncAttName(ncid, varid, i)
		if err != nil {
			return nil, err
		}
		a, err := ncGetAtt(ncid, varid, name)
		if err != nil {
			return nil, fmt.Errorf("attribute %q: %w", name, err)
		}
		out = append(out, a)
	}
	return out, nil
}
