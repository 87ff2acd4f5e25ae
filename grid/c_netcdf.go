package grid

// Gap fillers over libnetcdf for what github.com/fhs/go-netcdf v1.2.1 lacks
// (dimension listing, chunking, chunk cache, fill, format, quantize, untyped
// reads and writes, NC_CHAR/NC_STRING attributes, abort/sync). They share the
// ncids of go-netcdf because the process loads one libnetcdf. Every function here
// must run on the I/O thread (see c_thread.go).

// #cgo pkg-config: netcdf
// #include <stdlib.h>
// #include <netcdf.h>
// static int warmrain_get_att_strings(int ncid, int varid, const char *name, size_t n, char **out) {
//   return nc_get_att_string(ncid, varid, name, out);
// }
import "C"

import (
	"errors"
	"fmt"
	"unsafe"

	"github.com/fhs/go-netcdf/netcdf"
)

// ncError is a libnetcdf status with its nc_strerror text.
type ncError struct {
	code int
	msg  string
}

func (e *ncError) Error() string { return e.msg }

// Is maps "not a netCDF file" to ErrNotNetCDF.
func (e *ncError) Is(target error) bool {
	return target == ErrNotNetCDF && e.code == C.NC_ENOTNC
}

func ncErr(status C.int) error {
	if status == C.NC_NOERR {
		return nil
	}
	return &ncError{code: int(status), msg: C.GoString(C.nc_strerror(status))}
}

// fromGoNetCDF turns a go-netcdf error into an ncError.
func fromGoNetCDF(err error) error {
	var e netcdf.Error
	if errors.As(err, &e) {
		return ncErr(C.int(e))
	}
	return err
}

func cstr(s string) *C.char { return C.CString(s) }

func ncInq(ncid int) (ndims, nvars, ngatts, unlim int, err error) {
	var a, b, c, d C.int
	err = ncErr(C.nc_inq(C.int(ncid), &a, &b, &c, &d))
	return int(a), int(b), int(c), int(d), err
}

func ncUnlimDims(ncid int) ([]int, error) {
	var n C.int
	if err := ncErr(C.nc_inq_unlimdims(C.int(ncid), &n, nil)); err != nil {
		return nil, err
	}
	if n == 0 {
		return nil, nil
	}
	ids := make([]C.int, n)
	if err := ncErr(C.nc_inq_unlimdims(C.int(ncid), &n, &ids[0])); err != nil {
		return nil, err
	}
	out := make([]int, n)
	for i := range ids {
		out[i] = int(ids[i])
	}
	return out, nil
}

func ncDimIDs(ncid int) ([]int, error) {
	var n C.int
	if err := ncErr(C.nc_inq_dimids(C.int(ncid), &n, nil, 0)); err != nil {
		return nil, err
	}
	if n == 0 {
		return nil, nil
	}
	ids := make([]C.int, n)
	if err := ncErr(C.nc_inq_dimids(C.int(ncid), &n, &ids[0], 0)); err != nil {
		return nil, err
	}
	out := make([]int, n)
	for i := range ids {
		out[i] = int(ids[i])
	}
	return out, nil
}

func ncDim(ncid, dimid int) (string, int, error) {
	var name [C.NC_MAX_NAME + 1]C.char
	var n C.size_t
	if err := ncErr(C.nc_inq_dim(C.int(ncid), C.int(dimid), &name[0], &n)); err != nil {
		return "", 0, err
	}
	return C.GoString(&name[0]), int(n), nil
}

func ncVar(ncid, varid int) (name string, typ Type, dimids []int, natts int, err error) {
	var cname [C.NC_MAX_NAME + 1]C.char
	var t C.nc_type
	var nd, na C.int
	if err = ncErr(C.nc_inq_var(C.int(ncid), C.int(varid), &cname[0], &t, &nd, nil, &na)); err != nil {
		return
	}
	if nd > 0 {
		ids := make([]C.int, nd)
		if err = ncErr(C.nc_inq_vardimid(C.int(ncid), C.int(varid), &ids[0])); err != nil {
			return
		}
		dimids = make([]int, nd)
		for i := range ids {
			dimids[i] = int(ids[i])
		}
	}
	return C.GoString(&cname[0]), Type(t), dimids, int(na), nil
}

func ncVarID(ncid int, name string) (int, error) {
	c := cstr(name)
	defer C.free(unsafe.Pointer(c))
	var id C.int
	err := ncErr(C.nc_inq_varid(C.int(ncid), c, &id))
	return int(id), err
}

func ncAttName(ncid, varid, i int) (string, error) {
	var name [C.NC_MAX_NAME + 1]C.char
	err := ncErr(C.nc_inq_attname(C.int(ncid), C.int(varid), C.int(i), &name[0]))
	return C.GoString(&name[0]), err
}

// ncGetAtt reads one attribute as a Go value: string for NC_CHAR, []string for
// NC_STRING, a typed slice for numbers.
func ncGetAtt(ncid, varid int, name string) (Attr, error) {
	c := cstr(name)
	defer C.free(unsafe.Pointer(c))
	var t C.nc_type
	var n C.size_t
	if err := ncErr(C.nc_inq_att(C.int(ncid), C.int(varid), c, &t, &n)); err != nil {
		return Attr{}, err
	}
	a := Attr{Name: name, Type: Type(t)}
	switch Type(t) {
	case Char:
		if n == 0 {
			a.Value = ""
			return a, nil
		}
		b := make([]byte, n)
		if err := ncErr(C.nc_get_att_text(C.int(ncid), C.int(varid), c, (*C.char)(unsafe.Pointer(&b[0])))); err != nil {
			return a, err
		}
		// Trailing NULs are padding some writers add.
		for len(b) > 0 && b[len(b)-1] == 0 {
			b = b[:len(b)-1]
		}
		a.Value = string(b)
		return a, nil
	case String:
		if n == 0 {
			a.Value = []string{}
			return a, nil
		}
		ptrs := make([]*C.char, n)
		if err := ncErr(C.warmrain_get_att_strings(C.int(ncid), C.int(varid), c, n, &ptrs[0])); err != nil {
			return a, err
		}
		ss := make([]string, n)
		for i, p := range ptrs {
			if p != nil {
				ss[i] = C.GoString(p)
			}
		}
		C.nc_free_string(n, &ptrs[0])
		a.Value = ss
		return a, nil
	}
	size := Type(t).Size()
	if size == 0 {
		return a, fmt.Errorf("attribute %q has user-defined type %d, which this program does not read", name, int(t))
	}
	if n == 0 {
		a.Value = newTyped(Type(t), 0)
		return a, nil
	}
	v := newTyped(Type(t), int(n))
	if err := ncErr(C.nc_get_att(C.int(ncid), C.int(varid), c, typedPtr(v))); err != nil {
		return a, err
	}
	a.Value = v
	return a, nil
}

// ncPutAtt writes a string as NC_CHAR or a typed slice as its type (target type t
// may differ from the slice's type only for numbers, converted by libnetcdf).
func ncPutAtt(ncid, varid int, name string, t Type, value any) error {
	c := cstr(name)
	defer C.free(unsafe.Pointer(c))
	switch v := value.(type) {
	case string:
		if len(v) == 0 {
			return ncErr(C.nc_put_att_text(C.int(ncid), C.int(varid), c, 0, nil))
		}
		cs := C.CString(v)
		defer C.free(unsafe.Pointer(cs))
		return ncErr(C.nc_put_att_text(C.int(ncid), C.int(varid), c, C.size_t(len(v)), cs))
	case []string:
		return ncPutAtt(ncid, varid, name, Char, joinStrings(v))
	}
	n := typedLen(value)
	if n == 0 {
		return fmt.Errorf("attribute %q: empty numeric attribute", name)
	}
	vt := typedType(value)
	if t == 0 {
		t = vt
	}
	if t != vt {
		value = convertTyped(value, t)
	}
	return ncErr(C.nc_put_att(C.int(ncid), C.int(varid), c, C.nc_type(t), C.size_t(n), typedPtr(value)))
}

func ncDelAtt(ncid, varid int, name string) error {
	c := cstr(name)
	defer C.free(unsafe.Pointer(c))
	return ncErr(C.nc_del_att(C.int(ncid), C.int(varid), c))
}

// Format codes (nc_inq_format, nc_inq_format_extended).
func ncFormat(ncid int) (Format, error) {
	var f, x, mode C.int
	if err := ncErr(C.nc_inq_format(C.int(ncid), &f)); err != nil {
		return "", err
	}
	if err := ncErr(C.nc_inq_format_extended(C.int(ncid), &x, &mode)); err != nil {
		return "", err
	}
	switch {
	case x == C.NC_FORMATX_NCZARR:
		return FormatNCZarr, nil
	case x == C.NC_FORMATX_DAP2 || x == C.NC_FORMATX_DAP4:
		return FormatDAP, nil
	}
	switch f {
	case C.NC_FORMAT_CLASSIC:
		return FormatClassic, nil
	case C.NC_FORMAT_64BIT_OFFSET:
		return Format64BitOffset, nil
	case C.NC_FORMAT_CDF5:
		return FormatCDF5, nil
	case C.NC_FORMAT_NETCDF4:
		return FormatNetCDF4, nil
	case C.NC_FORMAT_NETCDF4_CLASSIC:
		return FormatNetCDF4Classic, nil
	}
	return Format(fmt.Sprintf("format %d/%d", int(f), int(x))), nil
}

// ncInqChunking returns nil sizes for a contiguous or compact variable.
func ncInqChunking(ncid, varid, ndims int) ([]int, error) {
	if ndims == 0 {
		return nil, nil
	}
	var storage C.int
	sizes := make([]C.size_t, ndims)
	if err := ncErr(C.nc_inq_var_chunking(C.int(ncid), C.int(varid), &storage, &sizes[0])); err != nil {
		return nil, err
	}
	if storage != C.NC_CHUNKED {
		return nil, nil
	}
	out := make([]int, ndims)
	for i, s := range sizes {
		out[i] = int(s)
	}
	return out, nil
}

func ncDefChunking(ncid, varid int, sizes []int) error {
	cs := make([]C.size_t, len(sizes))
	for i, s := range sizes {
		cs[i] = C.size_t(s)
	}
	return ncErr(C.nc_def_var_chunking(C.int(ncid), C.int(varid), C.NC_CHUNKED, &cs[0]))
}

func ncDefDeflate(ncid, varid int, shuffle bool, level int) error {
	sh := C.int(0)
	if shuffle {
		sh = 1
	}
	return ncErr(C.nc_def_var_deflate(C.int(ncid), C.int(varid), sh, 1, C.int(level)))
}

// ncInqDeflate reports shuffle and the deflate level (0 = off).
func ncInqDeflate(ncid, varid int) (bool, int, error) {
	var sh, def, lev C.int
	err := ncErr(C.nc_inq_var_deflate(C.int(ncid), C.int(varid), &sh, &def, &lev))
	if def == 0 {
		lev = 0
	}
	return sh != 0, int(lev), err
}

func ncSetVarChunkCache(ncid, varid int, bytes, slots int, preemption float64) error {
	return ncErr(C.nc_set_var_chunk_cache(C.int(ncid), C.int(varid), C.size_t(bytes), C.size_t(slots), C.float(preemption)))
}

// ncDefFill sets the fill value; value must be a one-element typed slice of the
// variable's type.
func ncDefFill(ncid, varid int, value any) error {
	return ncErr(C.nc_def_var_fill(C.int(ncid), C.int(varid), 0, typedPtr(value)))
}

// ncDefQuantize switches on Granular BitRound quantization keeping nsd significant
// decimal digits.
func ncDefQuantize(ncid, varid, nsd int) error {
	return ncErr(C.nc_def_var_quantize(C.int(ncid), C.int(varid), C.NC_QUANTIZE_GRANULARBR, C.int(nsd)))
}

func ncSync(ncid int) error  { return ncErr(C.nc_sync(C.int(ncid))) }
func ncAbort(ncid int) error { return ncErr(C.nc_abort(C.int(ncid))) }
func ncEndDef(ncid int) error {
	return ncErr(C.nc_enddef(C.int(ncid)))
}
func ncRedef(ncid int) error { return ncErr(C.nc_redef(C.int(ncid))) }

func ncDefDim(ncid int, name string, n int) (int, error) {
	c := cstr(name)
	defer C.free(unsafe.Pointer(c))
	var id C.int
	err := ncErr(C.nc_def_dim(C.int(ncid), c, C.size_t(n), &id))
	return int(id), err
}

func ncDefVar(ncid int, name string, t Type, dimids []int) (int, error) {
	c := cstr(name)
	defer C.free(unsafe.Pointer(c))
	var id C.int
	var p *C.int
	ids := make([]C.int, len(dimids))
	for i, d := range dimids {
		ids[i] = C.int(d)
	}
	if len(ids) > 0 {
		p = &ids[0]
	}
	err := ncErr(C.nc_def_var(C.int(ncid), c, C.nc_type(t), C.int(len(ids)), p, &id))
	return int(id), err
}

// ncGetVara reads a hyperslab in the variable's own type into buf (raw bytes).
// start and count are reused by the caller (no allocation here).
func ncGetVara(ncid, varid int, start, count []uint64, buf unsafe.Pointer) error {
	var sp, cp *C.size_t
	if len(start) > 0 {
		sp = (*C.size_t)(unsafe.Pointer(&start[0]))
		cp = (*C.size_t)(unsafe.Pointer(&count[0]))
	}
	return ncErr(C.nc_get_vara(C.int(ncid), C.int(varid), sp, cp, buf))
}

func ncPutVara(ncid, varid int, start, count []uint64, buf unsafe.Pointer) error {
	var sp, cp *C.size_t
	if len(start) > 0 {
		sp = (*C.size_t)(unsafe.Pointer(&start[0]))
		cp = (*C.size_t)(unsafe.Pointer(&count[0]))
	}
	return ncErr(C.nc_put_vara(C.int(ncid), C.int(varid), sp, cp, buf))
}

func ncOpen(path string) (int, error) {
	ds, err := netcdf.OpenFile(path, netcdf.NOWRITE)
	if err != nil {
		return -1, fromGoNetCDF(err)
	}
	return int(ds), nil
}

// ncOpenWrite opens a file for writing (our own temporary outputs only).
func ncOpenWrite(path string) (int, error) {
	ds, err := netcdf.OpenFile(path, netcdf.WRITE)
	if err != nil {
		return -1, fromGoNetCDF(err)
	}
	return int(ds), nil
}

func ncCreate(path string, mode int) (int, error) {
	ds, err := netcdf.CreateFile(path, netcdf.FileMode(mode))
	if err != nil {
		return -1, fromGoNetCDF(err)
	}
	return int(ds), nil
}

func ncClose(ncid int) error { return fromGoNetCDF(netcdf.Dataset(ncid).Close()) }

const (
	modeNetCDF4Classic = C.NC_NETCDF4 | C.NC_CLASSIC_MODEL | C.NC_CLOBBER // the temp file exists already
	modeNetCDF4        = C.NC_NETCDF4 | C.NC_CLOBBER
	globalID           = C.NC_GLOBAL
)

// LibraryVersion is the libnetcdf version string (for provenance).
func LibraryVersion() string { return netcdf.Version() }

// ncInqGrps lists the child groups of a group (netCDF-4; none for netCDF-3).
func ncInqGrps(ncid int) ([]int, error) {
	var n C.int
	if err := ncErr(C.nc_inq_grps(C.int(ncid), &n, nil)); err != nil {
		return nil, err
	}
	if n == 0 {
		return nil, nil
	}
	ids := make([]C.int, n)
	if err := ncErr(C.nc_inq_grps(C.int(ncid), &n, &ids[0])); err != nil {
		return nil, err
	}
	out := make([]int, n)
	for i := range ids {
		out[i] = int(ids[i])
	}
	return out, nil
}

// ncGrpName is the name of a group ("/" for the root group).
func ncGrpName(ncid int) (string, error) {
	var name [C.NC_MAX_NAME + 1]C.char
	err := ncErr(C.nc_inq_grpname(C.int(ncid), &name[0]))
	return C.GoString(&name[0]), err
}
