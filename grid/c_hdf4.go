package grid

// HDF4 Scientific Data (SD) files, read through libmfhdf (Debian's libhdf4-0, the
// runtime of libhdf4-dev), on the I/O thread like every libnetcdf call.
//
// Why dlopen: the Debian build of libmfhdf embeds the old netCDF-2 interface and
// exports symbols libnetcdf exports too (ncopen, ncvarget, NC_check_id,
// NC_findattr, NC_var_shape, ...). Linked into one executable, one library's
// internal calls would jump into the other's functions of the same name. So
// libdf (no clash) is loaded into the global namespace and libmfhdf with
// RTLD_LOCAL | RTLD_DEEPBIND: its own symbols first, invisible to libnetcdf. Its
// headers are not used either, because /usr/include/hdf holds a netcdf.h that
// would shadow libnetcdf's for the whole package; the few types and constants
// needed are declared here (values from hdf.h, hntdefs.h and hlimits.h of HDF
// 4.2).

/*
#cgo LDFLAGS: -ldl
#include <dlfcn.h>
#include <stdlib.h>
#include <string.h>

typedef int wr_int32;
typedef int wr_intn;

static void *wr_df, *wr_mf;
static wr_int32 (*p_SDstart)(const char *, wr_int32);
static wr_intn (*p_SDend)(wr_int32);
static wr_intn (*p_SDfileinfo)(wr_int32, wr_int32 *, wr_int32 *);
static wr_int32 (*p_SDselect)(wr_int32, wr_int32);
static wr_intn (*p_SDendaccess)(wr_int32);
static wr_intn (*p_SDgetinfo)(wr_int32, char *, wr_int32 *, wr_int32 *, wr_int32 *, wr_int32 *);
static wr_int32 (*p_SDgetdimid)(wr_int32, wr_intn);
static wr_intn (*p_SDdiminfo)(wr_int32, char *, wr_int32 *, wr_int32 *, wr_int32 *);
static wr_intn (*p_SDattrinfo)(wr_int32, wr_int32, char *, wr_int32 *, wr_int32 *);
static wr_intn (*p_SDreadattr)(wr_int32, wr_int32, void *);
static wr_intn (*p_SDreaddata)(wr_int32, wr_int32 *, wr_int32 *, wr_int32 *, void *);
static wr_intn (*p_SDiscoordvar)(wr_int32);
static wr_intn (*p_SDgetchunkinfo)(wr_int32, void *, wr_int32 *);
static wr_intn (*p_SDgetcompinfo)(wr_int32, int *, void *);
static short (*p_HEvalue)(wr_int32);
static const char *(*p_HEstring)(int);

static const char *wr_open_lib(void **h, const char *a, const char *b, int flags) {
	*h = dlopen(a, flags);
	if (!*h) *h = dlopen(b, flags);
	return *h ? NULL : dlerror();
}

#define WR_LOAD(h, n) do { *(void **)(&p_##n) = dlsym(h, #n); if (!p_##n) return "libmfhdf lacks " #n; } while (0)

static const char *wr_hdf4_load(void) {
	const char *e;
	if (wr_mf) return NULL;
	if ((e = wr_open_lib(&wr_df, "libdf.so.0", "libdf.so", RTLD_NOW | RTLD_GLOBAL))) return e;
	if ((e = wr_open_lib(&wr_mf, "libmfhdf.so.0", "libmfhdf.so", RTLD_NOW | RTLD_LOCAL | RTLD_DEEPBIND))) return e;
	WR_LOAD(wr_mf, SDstart); WR_LOAD(wr_mf, SDend); WR_LOAD(wr_mf, SDfileinfo);
	WR_LOAD(wr_mf, SDselect); WR_LOAD(wr_mf, SDendaccess); WR_LOAD(wr_mf, SDgetinfo);
	WR_LOAD(wr_mf, SDgetdimid); WR_LOAD(wr_mf, SDdiminfo); WR_LOAD(wr_mf, SDattrinfo);
	WR_LOAD(wr_mf, SDreadattr); WR_LOAD(wr_mf, SDreaddata); WR_LOAD(wr_mf, SDiscoordvar);
	WR_LOAD(wr_mf, SDgetchunkinfo); WR_LOAD(wr_mf, SDgetcompinfo);
	WR_LOAD(wr_df, HEvalue); WR_LOAD(wr_df, HEstring);
	return NULL;
}

static wr_int32 wr_SDstart(const char *p) { return p_SDstart(p, 1); } // DFACC_READ
static wr_intn wr_SDend(wr_int32 id) { return p_SDend(id); }
static wr_intn wr_SDfileinfo(wr_int32 id, wr_int32 *nd, wr_int32 *na) { return p_SDfileinfo(id, nd, na); }
static wr_int32 wr_SDselect(wr_int32 id, wr_int32 i) { return p_SDselect(id, i); }
static wr_intn wr_SDendaccess(wr_int32 id) { return p_SDendaccess(id); }
static wr_intn wr_SDgetinfo(wr_int32 id, char *name, wr_int32 *rank, wr_int32 *dims, wr_int32 *nt, wr_int32 *na) {
	return p_SDgetinfo(id, name, rank, dims, nt, na);
}
static wr_int32 wr_SDgetdimid(wr_int32 id, int i) { return p_SDgetdimid(id, i); }
static wr_intn wr_SDdiminfo(wr_int32 id, char *name, wr_int32 *size, wr_int32 *nt, wr_int32 *na) {
	return p_SDdiminfo(id, name, size, nt, na);
}
static wr_intn wr_SDattrinfo(wr_int32 id, wr_int32 i, char *name, wr_int32 *nt, wr_int32 *count) {
	return p_SDattrinfo(id, i, name, nt, count);
}
static wr_intn wr_SDreadattr(wr_int32 id, wr_int32 i, void *buf) { return p_SDreadattr(id, i, buf); }
static wr_intn wr_SDreaddata(wr_int32 id, wr_int32 *start, wr_int32 *edge, void *buf) {
	return p_SDreaddata(id, start, NULL, edge, buf);
}
static wr_intn wr_SDiscoordvar(wr_int32 id) { return p_SDiscoordvar(id); }
// wr_SDstorage reports the chunk lengths (flags & 1: chunked; HDF_CHUNK_DEF
// starts with them) and the compression (4 = deflate, with its level first in
// comp_info) of a data set. The unions are read through buffers larger than
// either (HDF_CHUNK_DEF and comp_info of HDF 4.2 are a few hundred bytes).
static int wr_SDstorage(wr_int32 id, wr_int32 *chunks, int *comp, int *level) {
	union { wr_int32 lengths[32]; char pad[4096]; } def;
	union { int level; char pad[4096]; } info;
	wr_int32 flags = 0;
	*comp = 0; *level = 0;
	memset(&def, 0, sizeof def);
	if (p_SDgetchunkinfo(id, &def, &flags) < 0) return -1;
	for (int i = 0; i < 32; i++) chunks[i] = (flags & 1) ? def.lengths[i] : 0;
	memset(&info, 0, sizeof info);
	if (p_SDgetcompinfo(id, comp, &info) < 0) { *comp = 0; return 0; }
	if (*comp == 4) *level = info.level;
	return 0;
}
static const char *wr_HElast(void) {
	short c = p_HEvalue(1);
	return c ? p_HEstring(c) : "no HDF4 error code";
}
*/
import "C"

import (
	"fmt"
	"unsafe"
)

// FormatHDF4 is the format of HDF4 files read through the SD interface.
const FormatHDF4 Format = "HDF4 (SD)"

// HDF4 number types (hntdefs.h) and limits (hlimits.h).
const (
	dfntUchar8  = 3
	dfntChar8   = 4
	dfntFloat32 = 5
	dfntFloat64 = 6
	dfntInt8    = 20
	dfntUint8   = 21
	dfntInt16   = 22
	dfntUint16  = 23
	dfntInt32   = 24
	dfntUint32  = 25
	dfntInt64   = 26
	dfntUint64  = 27
	dfntFlags   = 0x1000 | 0x2000 | 0x4000 // native, custom and little-endian bits
	h4MaxName   = 256
	h4MaxDims   = 32
)

// hdf4Type maps an HDF4 number type to a netCDF type (0 when unknown).
func hdf4Type(nt C.wr_int32) Type {
	switch int(nt) &^ dfntFlags {
	case dfntChar8:
		return Char
	case dfntUchar8, dfntUint8:
		return Ubyte
	case dfntInt8:
		return Byte
	case dfntInt16:
		return Short
	case dfntUint16:
		return Ushort
	case dfntInt32:
		return Int
	case dfntUint32:
		return Uint
	case dfntInt64:
		return Int64
	case dfntUint64:
		return Uint64
	case dfntFloat32:
		return Float
	case dfntFloat64:
		return Double
	}
	return 0
}

// sdsFile is an open HDF4 file (SD interface) with its data sets selected.
type sdsFile struct {
	path string
	sd   C.wr_int32
	sds  []C.wr_int32 // by SDS index
}

func hdf4Error(path, what string) error {
	return &VarError{File: path, Problem: fmt.Sprintf("%s (HDF4: %s)", what, C.GoString(C.wr_HElast())), Err: ErrNotNetCDF}
}

// openSDS opens an HDF4 file for reading (I/O thread).
func openSDS(path string) (*sdsFile, error) {
	if e := C.wr_hdf4_load(); e != nil {
		return nil, &VarError{File: path, Problem: "is an HDF4 file, and the HDF4 library could not be loaded (" + C.GoString(e) +
			"); install Debian's libhdf4-0 (with libhdf4-dev)", Err: ErrNotNetCDF}
	}
	cp := C.CString(path)
	defer C.free(unsafe.Pointer(cp))
	sd := C.wr_SDstart(cp)
	if sd < 0 {
		return nil, hdf4Error(path, "cannot be opened as an HDF4 SD file; expected a readable HDF4 file with scientific data sets (the file may be truncated)")
	}
	return &sdsFile{path: path, sd: sd}, nil
}

func (h *sdsFile) close() error {
	for _, s := range h.sds {
		if s >= 0 {
			C.wr_SDendaccess(s)
		}
	}
	h.sds = nil
	if C.wr_SDend(h.sd) < 0 {
		return hdf4Error(h.path, "close failed")
	}
	return nil
}

// attrs reads n attributes of an SD file or data set id.
func (h *sdsFile) attrs(id C.wr_int32, n int, owner string) ([]Attr, error) {
	var out []Attr
	for i := 0; i < n; i++ {
		var name [h4MaxName + 1]C.char
		var nt, count C.wr_int32
		if C.wr_SDattrinfo(id, C.wr_int32(i), &name[0], &nt, &count) < 0 {
			return nil, &VarError{File: h.path, Var: owner, Problem: fmt.Sprintf("cannot read attribute %d", i), Err: ErrDecode}
		}
		a := Attr{Name: C.GoString(&name[0])}
		t := hdf4Type(nt)
		base := int(nt) &^ dfntFlags
		if base == dfntChar8 || base == dfntUchar8 {
			b := make([]byte, int(count)+1)
			if count > 0 && C.wr_SDreadattr(id, C.wr_int32(i), unsafe.Pointer(&b[0])) < 0 {
				return nil, &VarError{File: h.path, Var: owner, Problem: "cannot read attribute " + a.Name, Err: ErrDecode}
			}
			b = b[:count]
			for len(b) > 0 && b[len(b)-1] == 0 {
				b = b[:len(b)-1]
			}
			a.Type, a.Value = Char, string(b)
			out = append(out, a)
			continue
		}
		if t == 0 || count <= 0 {
			continue // a type this program does not read: skip it
		}
		v := newTyped(t, int(count))
		if C.wr_SDreadattr(id, C.wr_int32(i), typedPtr(v)) < 0 {
			return nil, &VarError{File: h.path, Var: owner, Problem: "cannot read attribute " + a.Name, Err: ErrDecode}
		}
		a.Type, a.Value = t, v
		out = append(out, a)
	}
	return out, nil
}

// describe lists the file's data sets and dimensions (I/O thread). Dimensions
// are shared by name, as HDF4 shares them.
func (h *sdsFile) describe() (*FileInfo, error) {
	fi := &FileInfo{Path: h.path, Files: []string{h.path}, Format: FormatHDF4}
	var nds, ngatts C.wr_int32
	if C.wr_SDfileinfo(h.sd, &nds, &ngatts) < 0 {
		return nil, hdf4Error(h.path, "cannot list the scientific data sets")
	}
	var err error
	if fi.Globals, err = h.attrs(h.sd, int(ngatts), ""); err != nil {
		return nil, err
	}
	dimByName := map[string]DimInfo{}
	src := &varSource{hdf4: h}
	h.sds = make([]C.wr_int32, nds)
	for i := range h.sds {
		h.sds[i] = -1
	}
	for i := 0; i < int(nds); i++ {
		s := C.wr_SDselect(h.sd, C.wr_int32(i))
		if s < 0 {
			return nil, hdf4Error(h.path, fmt.Sprintf("cannot select data set %d", i))
		}
		h.sds[i] = s
		var name [h4MaxName + 1]C.char
		var rank, nt, natts C.wr_int32
		var sizes [h4MaxDims]C.wr_int32
		if C.wr_SDgetinfo(s, &name[0], &rank, &sizes[0], &nt, &natts) < 0 {
			return nil, hdf4Error(h.path, fmt.Sprintf("cannot describe data set %d", i))
		}
		vname := C.GoString(&name[0])
		if C.wr_SDiscoordvar(s) > 0 {
			// A dimension record: a variable only when it holds a scale (a
			// coordinate variable written with values), which ncdump-hdf lists too.
			if rank != 1 || !h.hasData(s, sizes[0], hdf4Type(nt)) {
				continue
			}
		}
		v := VarInfo{ID: i, Name: vname, Type: hdf4Type(nt), File: h.path, Group: "/", src: src, HDF4: true}
		if v.Type == 0 {
			continue // a number type this program does not read
		}
		for j := 0; j < int(rank); j++ {
			did := C.wr_SDgetdimid(s, C.int(j))
			var dname [h4MaxName + 1]C.char
			var dsize, dnt, dnatts C.wr_int32
			if did < 0 || C.wr_SDdiminfo(did, &dname[0], &dsize, &dnt, &dnatts) < 0 {
				return nil, &VarError{File: h.path, Var: vname, Problem: fmt.Sprintf("cannot read dimension %d", j), Err: ErrLayout}
			}
			dn := C.GoString(&dname[0])
			n := int(sizes[j])
			d, ok := dimByName[dn]
			if !ok || d.Len != n {
				d = DimInfo{ID: len(fi.Dims), Name: dn, Len: n, Unlimited: dsize == 0}
				if !ok {
					dimByName[dn] = d
				}
				fi.Dims = append(fi.Dims, d)
			}
			v.Dims = append(v.Dims, d.Name)
			v.DimIDs = append(v.DimIDs, d.ID)
			v.Shape = append(v.Shape, d.Len)
		}
		if v.Attrs, err = h.attrs(s, int(natts), vname); err != nil {
			return nil, err
		}
		var chunks [h4MaxDims]C.wr_int32
		var comp, level C.int
		if C.wr_SDstorage(s, &chunks[0], &comp, &level) == 0 {
			if chunks[0] > 0 {
				for j := 0; j < int(rank); j++ {
					v.Chunks = append(v.Chunks, int(chunks[j]))
				}
			}
			if comp == 4 { // COMP_CODE_DEFLATE
				v.Deflate = max(1, int(level))
			}
		}
		fi.Vars = append(fi.Vars, v)
	}
	return fi, nil
}

// hasData reports whether a dimension record holds a scale (its values read).
func (h *sdsFile) hasData(s C.wr_int32, n C.wr_int32, t Type) bool {
	if t == 0 || t == Char || n <= 0 {
		return false
	}
	buf := make([]uint64, rawWords(int(n), t.Size()))
	start := [1]C.wr_int32{0}
	edge := [1]C.wr_int32{n}
	return C.wr_SDreaddata(s, &start[0], &edge[0], unsafe.Pointer(&buf[0])) >= 0
}

// read reads a hyperslab of v (an SDS of this file) in its own type, in native
// byte order (SDreaddata converts), into buf (I/O thread).
func (h *sdsFile) read(v *VarInfo, start, count []uint64, buf unsafe.Pointer) error {
	if v.ID < 0 || v.ID >= len(h.sds) || h.sds[v.ID] < 0 {
		return fmt.Errorf("the data set is not open")
	}
	nd := len(start)
	if nd > h4MaxDims {
		return fmt.Errorf("%d dimensions; HDF4 allows %d", nd, h4MaxDims)
	}
	var st, ed [h4MaxDims]C.wr_int32
	for i := 0; i < nd; i++ {
		if count[i] == 0 {
			return nil
		}
		st[i], ed[i] = C.wr_int32(start[i]), C.wr_int32(count[i])
	}
	if C.wr_SDreaddata(h.sds[v.ID], &st[0], &ed[0], buf) < 0 {
		return fmt.Errorf("SDreaddata failed (HDF4: %s)", C.GoString(C.wr_HElast()))
	}
	return nil
}
