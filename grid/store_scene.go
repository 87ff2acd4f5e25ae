package grid

import (
	"bytes"
	"fmt"
	"math"
	"os"
	"slices"
	"strings"
	"unsafe"
)

// The storage layer. An input is a scene: one file, or several files of the same
// scene joined with "+" (one variable per file, as CMIP/CFMIP model output and
// the separate granules of some level-2 products are written). Each file is a
// netCDF file (every group of it), or an HDF4 file read through the SD interface
// (c_hdf4.go). Each VarInfo carries its own source, so the rest of the package
// reads a variable the same way wherever it lives: v.readIO(start, count, buf).

// varSource is where one variable's values live (used on the I/O thread only).
type varSource struct {
	grp  int      // netCDF: id of the variable's group (the root ncid for the root group)
	hdf4 *sdsFile // HDF4: the open SD file; the variable's SDS index is VarInfo.ID
}

// storeFile is one open file of a scene.
type storeFile struct {
	path string
	nc   int // root ncid when netCDF
	hdf4 *sdsFile
}

func (f *storeFile) closeIO() error {
	if f.hdf4 != nil {
		return f.hdf4.close()
	}
	return ncClose(f.nc)
}

// readIO reads the hyperslab start/count of v in its stored type into buf (I/O
// thread).
func (v *VarInfo) readIO(start, count []uint64, buf unsafe.Pointer) error {
	switch {
	case v.src == nil:
		return fmt.Errorf("the file holding it is closed")
	case v.src.hdf4 != nil:
		return v.src.hdf4.read(v, start, count, buf)
	}
	return ncGetVara(v.src.grp, v.ID, start, count, buf)
}

// setCacheIO sets v's chunk cache (netCDF-4 only; a no-op elsewhere).
func (v *VarInfo) setCacheIO(bytes, slots int, preemption float64) error {
	if v.src == nil || v.src.hdf4 != nil {
		return nil
	}
	return ncSetVarChunkCache(v.src.grp, v.ID, bytes, slots, preemption)
}

// Base is the variable's name without its group path.
func (v *VarInfo) Base() string { return baseName(v.Name) }

// lookup finds a variable by name (see FileInfo.Var); more than one variable
// of that plain name in different groups is reported as such.
func (f *FileInfo) lookup(name string) (*VarInfo, []string) {
	for i := range f.Vars {
		if f.Vars[i].Name == name {
			return &f.Vars[i], nil
		}
	}
	if rest, ok := strings.CutPrefix(name, "/"); ok && rest != "" && !strings.Contains(rest, "/") {
		for i := range f.Vars {
			if f.Vars[i].Name == rest {
				return &f.Vars[i], nil
			}
		}
	}
	if strings.Contains(name, "/") {
		if !strings.HasPrefix(name, "/") { // a group path without its leading slash
			return f.lookup("/" + name)
		}
		return nil, nil
	}
	var found *VarInfo
	var all []string
	for i := range f.Vars {
		if f.Vars[i].Base() == name {
			if found == nil {
				found = &f.Vars[i]
			}
			all = append(all, f.Vars[i].Name)
		}
	}
	if len(all) > 1 {
		return nil, all
	}
	return found, nil
}

// Resolve finds the variable a CF attribute of variable from names (in
// coordinates, bounds, ancillary_variables, grid_mapping): an absolute path
// ("/navigation_data/latitude"), a path relative to from's group
// ("../navigation_data/latitude", "sub/x"), or a plain name, searched in from's
// group and then its parents up to the root (CF 1.8 §2.7), and last, when
// unique, anywhere in the file. It returns nil when nothing matches.
func (f *FileInfo) Resolve(from *VarInfo, name string) *VarInfo {
	group := "/"
	if from != nil && from.Group != "" {
		group = from.Group
	}
	if strings.HasPrefix(name, "/") {
		v, _ := f.lookup(name)
		return v
	}
	if strings.Contains(name, "/") {
		parts := strings.Split(strings.TrimSuffix(group, "/"), "/")
		for _, p := range strings.Split(name, "/") {
			switch p {
			case "..":
				if len(parts) > 1 {
					parts = parts[:len(parts)-1]
				}
			case ".", "":
			default:
				parts = append(parts, p)
			}
		}
		v, _ := f.lookup(strings.Join(parts, "/"))
		return v
	}
	for g := group; ; {
		if v := f.exact(groupPath(g, name)); v != nil {
			return v
		}
		if g == "/" {
			break
		}
		g = g[:strings.LastIndexByte(g, '/')]
		if g == "" {
			g = "/"
		}
	}
	v, _ := f.lookup(name)
	return v
}

func (f *FileInfo) exact(name string) *VarInfo {
	for i := range f.Vars {
		if f.Vars[i].Name == name {
			return &f.Vars[i]
		}
	}
	return nil
}

// SceneFiles splits an input into its files: a path that exists (or a URL) is
// one file; otherwise, when every part of it split at "+" exists, those parts.
// Anything else is returned whole (opening it then reports it missing).
func SceneFiles(spec string) []string {
	if isURL(spec) || !strings.Contains(spec, "+") {
		return []string{spec}
	}
	if _, err := os.Stat(spec); err == nil {
		return []string{spec}
	}
	parts := strings.Split(spec, "+")
	for _, p := range parts {
		if p == "" {
			return []string{spec}
		}
		if _, err := os.Stat(p); err != nil && !isURL(p) {
			return []string{spec}
		}
	}
	return parts
}

// checkScene runs checkReadable on every file of a scene and refuses a file
// given twice.
func checkScene(files []string) error {
	if len(files) == 1 && strings.Contains(files[0], "+") && !isURL(files[0]) {
		if _, err := os.Stat(files[0]); err != nil {
			var missing []string
			parts := strings.Split(files[0], "+")
			for _, p := range parts {
				if _, err := os.Stat(p); err != nil {
					missing = append(missing, fmt.Sprintf("%q", p))
				}
			}
			if len(missing) < len(parts) {
				return &VarError{File: files[0], Problem: fmt.Sprintf("no such file; read as files of one scene joined with +, %s does not exist", strings.Join(missing, " and ")), Err: os.ErrNotExist}
			}
		}
	}
	seen := map[string]bool{}
	for _, p := range files {
		if seen[p] {
			return &VarError{File: p, Problem: "is given twice in one scene joined with +; expected each file once", Err: ErrLayout}
		}
		seen[p] = true
		if isHDF4(p) {
			if err := checkHDF4Readable(p); err != nil {
				return err
			}
			continue
		}
		if err := checkReadable(p); err != nil {
			return err
		}
	}
	return nil
}

// hdf4Magic opens every HDF4 file (HDF 4 "magic number" ^N^C^S^A).
var hdf4Magic = []byte{0x0e, 0x03, 0x13, 0x01}

// isHDF4 reports whether path is an HDF4 file (by its first four bytes).
func isHDF4(path string) bool {
	if isURL(path) {
		return false
	}
	f, err := os.Open(path)
	if err != nil {
		return false
	}
	defer f.Close()
	b := make([]byte, 4)
	if n, _ := f.Read(b); n != 4 {
		return false
	}
	return bytes.Equal(b, hdf4Magic)
}

func checkHDF4Readable(path string) error {
	st, err := os.Stat(path)
	if err != nil {
		return err
	}
	if st.IsDir() {
		return &VarError{File: path, Problem: "is a directory; expected an HDF4 file", Err: ErrNotNetCDF}
	}
	return nil
}

// openFileIO opens one file of a scene and describes it (I/O thread).
func openFileIO(path string) (*storeFile, *FileInfo, error) {
	if isHDF4(path) {
		h, err := openSDS(path)
		if err != nil {
			return nil, nil, err
		}
		fi, err := h.describe()
		if err != nil {
			h.close()
			return nil, nil, err
		}
		return &storeFile{path: path, nc: -1, hdf4: h}, fi, nil
	}
	ncid, err := ncOpen(path)
	if err != nil {
		return nil, nil, openError(path, err)
	}
	fi, err := describeIO(ncid, path)
	if err != nil {
		ncClose(ncid)
		return nil, nil, err
	}
	return &storeFile{path: path, nc: ncid}, fi, nil
}

// openSceneIO opens every file of a scene and merges their descriptions into
// one (I/O thread). On error nothing stays open.
func openSceneIO(files []string) (*FileInfo, []*storeFile, error) {
	var open []*storeFile
	var infos []*FileInfo
	fail := func(err error) (*FileInfo, []*storeFile, error) {
		for _, f := range open {
			f.closeIO()
		}
		return nil, nil, err
	}
	for _, p := range files {
		f, fi, err := openFileIO(p)
		if err != nil {
			return fail(err)
		}
		open = append(open, f)
		infos = append(infos, fi)
	}
	if len(infos) == 1 {
		return infos[0], open, nil
	}
	fi, err := mergeInfos(infos)
	if err != nil {
		return fail(err)
	}
	if err := checkSharedCoordsIO(fi, infos); err != nil {
		return fail(err)
	}
	return fi, open, nil
}

// mergeInfos joins the descriptions of the files of one scene. Dimensions of
// the same name and length are one dimension; a variable found in an earlier
// file (the coordinates every file of a scene repeats) is kept from the first
// file that has it. Dimension ids are renumbered across the scene.
func mergeInfos(infos []*FileInfo) (*FileInfo, error) {
	out := &FileInfo{Path: infos[0].Path, Format: infos[0].Format, Globals: infos[0].Globals}
	var formats []string
	for _, fi := range infos {
		out.Files = append(out.Files, fi.Path)
		if !slices.Contains(formats, string(fi.Format)) {
			formats = append(formats, string(fi.Format))
		}
	}
	if len(formats) > 1 {
		out.Format = Format(strings.Join(formats, " + "))
	}
	byName := map[string]int{} // dimension name -> index in out.Dims
	for _, fi := range infos {
		remap := map[int]int{}
		for _, d := range fi.Dims {
			if k, ok := byName[d.Name]; ok && out.Dims[k].Len == d.Len {
				remap[d.ID] = out.Dims[k].ID
				continue
			}
			nd := d
			nd.ID = len(out.Dims)
			remap[d.ID] = nd.ID
			if _, ok := byName[d.Name]; !ok {
				byName[d.Name] = len(out.Dims)
			}
			out.Dims = append(out.Dims, nd)
		}
		for _, v := range fi.Vars {
			if prev := out.exact(v.Name); prev != nil {
				continue
			}
			nv := v
			nv.DimIDs = make([]int, len(v.DimIDs))
			for i, id := range v.DimIDs {
				nv.DimIDs[i] = remap[id]
			}
			out.Vars = append(out.Vars, nv)
		}
	}
	return out, nil
}

// checkSharedCoordsIO requires the coordinates that several files of a scene
// repeat (coordinate variables: 1-D, named like their dimension; and 1-D or 2-D
// latitudes and longitudes, as split level-2 granules carry) to hold the same
// values: the files must describe one grid.
func checkSharedCoordsIO(scene *FileInfo, infos []*FileInfo) error {
	for _, first := range scene.Vars {
		coord := len(first.Dims) == 1 && first.Dims[0] == first.Name
		latlon := len(first.Dims) <= 2 && (isLat(&first) || isLon(&first))
		if !(coord || latlon) || !first.Type.Numeric() || first.Len() > 1<<24 {
			continue
		}
		a, err := readStoredIO(&first)
		if err != nil {
			return err
		}
		for _, fi := range infos {
			if fi.Path == first.File {
				continue
			}
			other := fi.exact(first.Name)
			if other == nil {
				continue
			}
			if !slices.Equal(other.Shape, first.Shape) {
				return &VarError{File: other.File, Var: other.Name, Problem: fmt.Sprintf(
					"has dimensions %s in this file but %s in %s; files joined with + must share one grid", dimsString(other), dimsString(&first), first.File), Err: ErrLayout}
			}
			b, err := readStoredIO(other)
			if err != nil {
				return err
			}
			for i := range a {
				if a[i] != b[i] && !(math.IsNaN(a[i]) && math.IsNaN(b[i])) && math.Abs(a[i]-b[i]) > 1e-6*math.Max(math.Abs(a[i]), math.Abs(b[i])) {
					return &VarError{File: other.File, Var: other.Name, Problem: fmt.Sprintf(
						"coordinate value %d is %g here but %g in %s; files joined with + must share one grid", i, b[i], a[i], first.File), Err: ErrLayout}
				}
			}
		}
	}
	return nil
}

// readStoredIO reads a small variable whole as float64 (stored values, no
// decoding; I/O thread).
func readStoredIO(v *VarInfo) ([]float64, error) {
	buf, err := readStoredRawIO(v)
	if err != nil {
		return nil, err
	}
	n := v.Len()
	raw := newTyped(v.Type, n)
	copyRawTo(raw, unsafe.Pointer(&buf[0]), n*v.Type.Size())
	return toFloat64s(raw), nil
}

// detach forgets the sources of fi's variables (their files are closed).
func (fi *FileInfo) detach() {
	for i := range fi.Vars {
		fi.Vars[i].src = nil
	}
}

// findLatLon2D takes, when the layout has no latitude and longitude yet, the
// one 2-D latitude and the one 2-D longitude variable on exactly the grid's
// (y, x) dimensions, by standard_name, units or name: level-2 swaths of the
// polar imagers (HDF4) keep them so, without a coordinates attribute.
func findLatLon2D(fi *FileInfo, L *Layout) {
	if L.Lat != "" || L.Lon != "" {
		return
	}
	var lats, lons []string
	for i := range fi.Vars {
		v := &fi.Vars[i]
		if len(v.Dims) != 2 || v.Dims[0] != L.Y.Name || v.Dims[1] != L.X.Name || !v.Type.Numeric() {
			continue
		}
		switch {
		case isLat(v):
			lats = append(lats, v.Name)
		case isLon(v):
			lons = append(lons, v.Name)
		}
	}
	if len(lats) != 1 || len(lons) != 1 {
		return
	}
	L.Lat, L.Lon, L.LatLon2D = lats[0], lons[0], true
	for _, n := range []string{lats[0], lons[0]} {
		if !slices.Contains(L.Coords, n) {
			L.Coords = append(L.Coords, n)
		}
	}
}

// hdf4ToCF rewrites the add_offset of an HDF4 data set copied into a netCDF
// output so that CF readers get the values HDF4 means: scale_factor * (stored
// - add_offset) is stored * scale_factor + (-scale_factor * add_offset).
func hdf4ToCF(v *VarInfo, a Attr) Attr {
	if !v.HDF4 || a.Name != "add_offset" {
		return a
	}
	sa, ok := v.Attr("scale_factor")
	off := a.Float64s()
	if !ok || len(sa.Float64s()) != 1 || len(off) != 1 {
		return a
	}
	cf := -sa.Float64s()[0] * off[0]
	if cf == 0 {
		cf = 0 // no negative zero
	}
	a.Value = convertTyped([]float64{cf}, a.Type)
	return a
}

// readStoredRawIO reads a whole variable in its stored type (I/O thread).
func readStoredRawIO(v *VarInfo) ([]uint64, error) {
	n := v.Len()
	buf := make([]uint64, rawWords(n, v.Type.Size()))
	start := make([]uint64, len(v.Shape))
	count := make([]uint64, len(v.Shape))
	for i, s := range v.Shape {
		count[i] = uint64(s)
	}
	if err := v.readIO(start, count, unsafe.Pointer(&buf[0])); err != nil {
		return nil, varErr(err, v.File, v.Name, "read failed: %v", err)
	}
	return buf, nil
}
