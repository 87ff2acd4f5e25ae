package samples

import (
	"fmt"
	"runtime"
	"sync"
)

// libnetcdf is not thread-safe, so every netCDF call of this package runs on
// one long-lived goroutine locked to its OS thread. Being long-lived matters
// too: when this thread is the first to call libnetcdf, the library's
// one-time switch-off of HDF5 error printing applies to it, so reads made
// here print no HDF5-DIAG stacks.

var (
	ncOnce sync.Once
	ncJobs chan func()
)

// onNCThread runs fn on the package's netCDF thread and returns its error.
// It must not be called from fn (that would deadlock).
func onNCThread(fn func() error) error {
	ncOnce.Do(func() {
		ncJobs = make(chan func())
		go func() {
			runtime.LockOSThread() // never unlocked: the goroutine owns the thread
			for job := range ncJobs {
				job()
			}
		}()
	})
	done := make(chan error, 1)
	ncJobs <- func() {
		defer func() {
			if p := recover(); p != nil {
				done <- panicError{p}
			}
		}()
		done <- fn()
	}
	return <-done
}

type panicError struct{ v any }

func (p panicError) Error() string {
	return fmt.Sprintf("samples: internal error on the netCDF thread: %v", p.v)
}
