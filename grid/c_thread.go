package grid

// #cgo pkg-config: hdf5
// #include <hdf5.h>
// static void warmrain_hdf5_quiet(void) { H5Eset_auto2(H5E_DEFAULT, NULL, NULL); }
import "C"

import (
	"fmt"
	"runtime"
	"sync"
)

// The I/O thread. libnetcdf is not thread-safe and Debian's thread-safe HDF5 keeps
// its error-printing switch per OS thread, so every libnetcdf call in this package
// runs on one goroutine locked to one OS thread, on which HDF5's automatic error
// printing has been switched off. Work is sent to it as closures.

type ioReq struct {
	f    func()
	done chan any // receives nil or a recovered panic value
}

var (
	ioOnce sync.Once
	ioCh   chan *ioReq
)

func ioStart() {
	ioCh = make(chan *ioReq)
	ready := make(chan struct{})
	go func() {
		runtime.LockOSThread() // never unlocked: this goroutine owns the thread for the process' life
		C.warmrain_hdf5_quiet()
		close(ready)
		for r := range ioCh {
			r.done <- runGuarded(r.f)
		}
	}()
	<-ready
}

func runGuarded(f func()) (p any) {
	defer func() { p = recover() }()
	f()
	return nil
}

// onIO runs f on the I/O thread and waits for it. It must not be called from the
// I/O thread itself (it would deadlock); the package's internal helpers that assume
// they already run there are named *IO or documented so.
func onIO(f func()) error {
	ioOnce.Do(ioStart)
	r := &ioReq{f: f, done: make(chan any, 1)}
	ioCh <- r
	if p := <-r.done; p != nil {
		return fmt.Errorf("grid: internal error on the I/O thread: %v", p)
	}
	return nil
}

// OnIOThread runs f on the I/O thread, where every libnetcdf call of the process
// must run (libnetcdf is not thread-safe, and HDF5's error printing is switched off
// only there). It is for packages that call libnetcdf directly, such as the sample
// and benchmark-input generators; f must not call back into grid.
func OnIOThread(f func()) error { return onIO(f) }

// ioCall is a reusable request, for the hot path of the slab pipeline (no
// allocation per call after it is built).
type ioCall struct{ r ioReq }

func newIOCall(f func()) *ioCall {
	return &ioCall{r: ioReq{f: f, done: make(chan any, 1)}}
}

func (c *ioCall) run() error {
	ioOnce.Do(ioStart)
	ioCh <- &c.r
	if p := <-c.r.done; p != nil {
		return fmt.Errorf("grid: internal error on the I/O thread: %v", p)
	}
	return nil
}
