package samples

import (
	"fmt"

	"github.com/warmrain/warmrain/grid"
)

// libnetcdf is not thread-safe, so every netCDF call of this package runs on
// grid's I/O thread, the one thread of the process that calls libnetcdf (and on
// which HDF5's error printing is switched off).

// onNCThread runs fn on the netCDF thread and returns its error. It must not be
// called from fn (that would deadlock).
func onNCThread(fn func() error) error {
	var err error
	if e := grid.OnIOThread(func() {
		defer func() {
			if p := recover(); p != nil {
				err = panicError{p}
			}
		}()
		err = fn()
	}); e != nil {
		return e
	}
	return err
}

type panicError struct{ v any }

func (p panicError) Error() string {
	return fmt.Sprintf("samples: internal error on the netCDF thread: %v", p.v)
}
