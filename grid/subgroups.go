package grid

// #cgo pkg-config: netcdf
// #include <stdlib.h>
// #include <netcdf.h>
import "C"

import "unsafe"

// ncSubGroupNames returns the names of the root group's sub-groups (I/O thread).
func ncSubGroupNames(ncid int) ([]string, error) {
	var n C.int
	if err := ncErr(C.nc_inq_grps(C.int(ncid), &n, nil)); err != nil || n == 0 {
		return nil, err
	}
	ids := make([]C.int, n)
	if err := ncErr(C.nc_inq_grps(C.int(ncid), &n, &ids[0])); err != nil {
		return nil, err
	}
	var names []string
	buf := (*C.char)(C.malloc(C.NC_MAX_NAME + 1))
	defer C.free(unsafe.Pointer(buf))
	for _, id := range ids {
		if err := ncErr(C.nc_inq_grpname(id, buf)); err != nil {
			return nil, err
		}
		names = append(names, C.GoString(buf))
	}
	return names, nil
}
