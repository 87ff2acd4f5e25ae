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

// VarInfo describes one variable. ID is its libnetcdf id within its group (or
// its HDF4 SDS index). Name is its name in the root group, or its full group
// path ("/geophysical_data/cloud_water_path") in a netCDF-4 subgroup; HDF4 SD
// names may contain blanks.
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
	// File is the file that holds the variable (one of FileInfo.Files), Group
	// its group's full path ("/" for the root group and for HDF4).
	File  string
	Group string
	// HDF4 marks an HDF4 SD data set: its scale_factor and add_offset, written
	// by SDsetcal, mean value = scale_factor * (stored - add_offset).
	HDF4 bool

	src *varSource // where its values are read from; nil once the file is closed
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

// FileInfo describes an input: one file, every group of it included, or a
// scene of several files joined with "+" seen as one (see store_scene.go).
// Path is the first (or only) file, Files every file of the scene in the order
// given.
type FileInfo struct {
	Path    string
	Format  Format
	Dims    []DimInfo
	Vars    []VarInfo
	Globals []Attr

	Files []string
}

// Var returns the named variable or nil. name is a root-group name, a full
// group path ("/group/name"; "/name" for the root group), or the plain name of
// a variable in a subgroup when no other variable has that name.
func (f *FileInfo) Var(name string) *VarInfo {
	v, _ := f.lookup(name)
	return v
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

// Describe opens path (a file, an NCZarr URL, an HDF4 file, or several files of
// one scene joined with "+"), reads its metadata and closes it.
func Describe(path string) (*FileInfo, error) {
	files := SceneFiles(path)
	if err := checkScene(files); err != nil {
		return nil, err
	}
	var fi *FileInfo
	var err error
	if e := onIO(func() {
		var open []*storeFile
		fi, open, err = openSceneIO(files)
		for _, f := range open {
			f.closeIO()
		}
		if fi != nil {
			fi.detach()
		}
	}); e != nil {
		return nil, e
	}
	return fi, err
}

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

// describeIO runs on the I/O thread. It describes every group of the file:
// variables and dimensions of subgroups are named by their full path
// ("/geophysical_data/lwp"), those of the root group by their name.
func describeIO(ncid int, path string) (*FileInfo, error) {
	fi := &FileInfo{Path: path, Files: []string{path}}
	var err error
	if fi.Format, err = ncFormat(ncid); err != nil {
		return nil, &VarError{File: path, Problem: "cannot read format: " + err.Error(), Err: err}
	}
	_, _, ngatts, _, err := ncInq(ncid)
	if err != nil {
		return nil, &VarError{File: path, Problem: err.Error(), Err: err}
	}
	if fi.Globals, err = readAttrsIO(ncid, globalID, ngatts); err != nil {
		return nil, &VarError{File: path, Problem: err.Error(), Err: err}
	}
	byID := map[int]DimInfo{}
	if err := describeGroupIO(fi, ncid, "/", byID); err != nil {
		return nil, err
	}
	return fi, nil
}

// groupPath joins a group path and a name: "/" + "x" is "x" (root names stay
// plain), "/g" + "x" is "/g/x".
func groupPath(group, name string) string {
	if group == "/" || group == "" {
		return name
	}
	return group + "/" + name
}

// describeGroupIO adds the dimensions and variables of one group and of its
// subgroups to fi (I/O thread). byID maps the file's dimension ids, which
// netCDF-4 numbers across the whole file.
func describeGroupIO(fi *FileInfo, gid int, group string, byID map[int]DimInfo) error {
	path := fi.Path
	_, nvars, _, _, err := ncInq(gid)
	if err != nil {
		return &VarError{File: path, Problem: err.Error(), Err: err}
	}
	unl, err := ncUnlimDims(gid)
	if err != nil {
		return &VarError{File: path, Problem: err.Error(), Err: err}
	}
	dimids, err := ncDimIDs(gid)
	if err != nil {
		return &VarError{File: path, Problem: err.Error(), Err: err}
	}
	for _, id := range dimids {
		name, n, err := ncDim(gid, id)
		if err != nil {
			return &VarError{File: path, Problem: err.Error(), Err: err}
		}
		d := DimInfo{ID: id, Name: groupPath(group, name), Len: n}
		for _, u := range unl {
			d.Unlimited = d.Unlimited || u == id
		}
		byID[id] = d
		fi.Dims = append(fi.Dims, d)
	}
	src := &varSource{grp: gid}
	for id := 0; id < nvars; id++ {
		name, t, vd, natts, err := ncVar(gid, id)
		if err != nil {
			return &VarError{File: path, Problem: err.Error(), Err: err}
		}
		full := groupPath(group, name)
		v := VarInfo{ID: id, Name: full, Type: t, DimIDs: vd, File: path, Group: group, src: src}
		for _, d := range vd {
			di, ok := byID[d]
			if !ok { // a dimension of a parent group not seen yet cannot happen; be safe
				var n int
				if name, n, err = ncDim(gid, d); err != nil {
					return &VarError{File: path, Var: full, Problem: err.Error(), Err: err}
				}
				di = DimInfo{ID: d, Name: name, Len: n}
			}
			v.Dims = append(v.Dims, di.Name)
			v.Shape = append(v.Shape, di.Len)
		}
		if v.Attrs, err = readAttrsIO(gid, id, natts); err != nil {
			return &VarError{File: path, Var: full, Problem: err.Error(), Err: err}
		}
		if fi.Format == FormatNetCDF4 || fi.Format == FormatNetCDF4Classic || fi.Format == FormatNCZarr {
			if v.Chunks, err = ncInqChunking(gid, id, len(vd)); err != nil {
				return &VarError{File: path, Var: full, Problem: err.Error(), Err: err}
			}
			if sh, lev, err := ncInqDeflate(gid, id); err == nil {
				v.Shuffle, v.Deflate = sh, lev
			}
		}
		fi.Vars = append(fi.Vars, v)
	}
	if fi.Format != FormatNetCDF4 && fi.Format != FormatNCZarr {
		return nil
	}
	kids, err := ncInqGrps(gid)
	if err != nil {
		return &VarError{File: path, Problem: "cannot list the groups of " + group + ": " + err.Error(), Err: err}
	}
	for _, k := range kids {
		name, err := ncGrpName(k)
		if err != nil {
			return &VarError{File: path, Problem: err.Error(), Err: err}
		}
		sub := "/" + name
		if group != "/" {
			sub = group + "/" + name
		}
		if err := describeGroupIO(fi, k, sub, byID); err != nil {
			return err
		}
	}
	return nil
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

func dimsString(v *VarInfo) string {
	parts := make([]string, len(v.Dims))
	for i := range v.Dims {
		parts[i] = fmt.Sprintf("%s=%d", v.Dims[i], v.Shape[i])
	}
	return "(" + strings.Join(parts, ", ") + ")"
}
