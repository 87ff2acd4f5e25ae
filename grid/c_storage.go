package grid

// #include <stdlib.h>
// #include <netcdf.h>
import "C"

import (
	"fmt"
	"unsafe"

	"github.com/fhs/go-netcdf/netcdf"
)

// DefStorage sets the storage of the variable name of a go-netcdf dataset in define
// mode: chunks of the given sizes, or contiguous when sizes is nil (go-netcdf has no
// call for nc_def_var_chunking). Like every libnetcdf call it must run on the I/O
// thread (OnIOThread). It is the one binding the file generators of samples and bench
// use beside go-netcdf, so that grid stays the repository's only cgo code for netCDF.
func DefStorage(ds netcdf.Dataset, name string, sizes []int) error {
	cname := cstr(name)
	defer C.free(unsafe.Pointer(cname))
	var varid C.int
	if err := ncErr(C.nc_inq_varid(C.int(ds), cname, &varid)); err != nil {
		return fmt.Errorf("nc_inq_varid %s: %w", name, err)
	}
	if sizes == nil {
		if err := ncErr(C.nc_def_var_chunking(C.int(ds), varid, C.NC_CONTIGUOUS, nil)); err != nil {
			return fmt.Errorf("nc_def_var_chunking %s: %w", name, err)
		}
		return nil
	}
	if err := ncDefChunking(int(ds), int(varid), sizes); err != nil {
		return fmt.Errorf("nc_def_var_chunking %s: %w", name, err)
	}
	return nil
}
