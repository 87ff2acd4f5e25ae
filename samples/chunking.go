package samples

// #cgo pkg-config: netcdf
// #include <stdlib.h>
// #include <netcdf.h>
import "C"

import (
	"fmt"
	"unsafe"

	"github.com/fhs/go-netcdf/netcdf"
)

// defChunking sets explicit chunk sizes on a variable (go-netcdf has no
// call for nc_def_var_chunking). It must run on the netCDF thread, in define
// mode.
func defChunking(ds netcdf.Dataset, name string, sizes []int) error {
	cname := C.CString(name)
	defer C.free(unsafe.Pointer(cname))
	var varid C.int
	if st := C.nc_inq_varid(C.int(ds), cname, &varid); st != C.NC_NOERR {
		return fmt.Errorf("nc_inq_varid %s: %s", name, C.GoString(C.nc_strerror(st)))
	}
	cs := make([]C.size_t, len(sizes))
	for i, s := range sizes {
		cs[i] = C.size_t(s)
	}
	if st := C.nc_def_var_chunking(C.int(ds), varid, C.NC_CHUNKED, &cs[0]); st != C.NC_NOERR {
		return fmt.Errorf("nc_def_var_chunking %s: %s", name, C.GoString(C.nc_strerror(st)))
	}
	return nil
}
