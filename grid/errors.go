package grid

import (
	"errors"
	"fmt"
	"syscall"
)

// Sentinel errors. Every error returned by this package wraps one of them (or an
// *os.PathError for a missing file) and names the file, the variable and what was
// expected.
var (
	ErrNoVariable     = errors.New("grid: variable not found")
	ErrAmbiguous      = errors.New("grid: ambiguous variable")
	ErrUnits          = errors.New("grid: bad units")
	ErrLayout         = errors.New("grid: unsupported layout")
	ErrNotNetCDF      = errors.New("grid: not a netCDF file")
	ErrExists         = errors.New("grid: output exists")
	ErrInputOverwrite = errors.New("grid: refusing to write into an input")
	ErrDecode         = errors.New("grid: bad packing or missing-value attributes")
	ErrOverride       = errors.New("grid: bad override")
	ErrCanceled       = errors.New("grid: canceled")
)

// VarError is a problem with one variable of one file. Err, when set, is the
// sentinel (or underlying error) it wraps.
type VarError struct {
	File    string
	Var     string // empty for a file-level problem
	Problem string
	Err     error
}

func (e *VarError) Error() string {
	if e.Var == "" {
		return fmt.Sprintf("%s: %s", e.File, e.Problem)
	}
	return fmt.Sprintf("%s: variable %q: %s", e.File, e.Var, e.Problem)
}

func (e *VarError) Unwrap() error { return e.Err }

func varErr(sentinel error, file, v, format string, args ...any) error {
	return &VarError{File: file, Var: v, Problem: fmt.Sprintf(format, args...), Err: sentinel}
}

// plainErr is an error whose text is its message alone and which wraps a sentinel (for
// errors.Is), so that a user reads what is wrong, not the package's category.
type plainErr struct {
	msg string
	err error
}

func (e plainErr) Error() string { return e.msg }
func (e plainErr) Unwrap() error { return e.err }

// errOverride is a problem with a role binding or a mask as the user wrote it; it wraps
// ErrOverride.
func errOverride(format string, args ...any) error {
	return plainErr{fmt.Sprintf(format, args...), ErrOverride}
}

// errUnits is a problem with units as written in a file or an option; it wraps ErrUnits.
func errUnits(format string, args ...any) error {
	return plainErr{fmt.Sprintf(format, args...), ErrUnits}
}

// diskFullMargin: a failed write with less free space than this in the output's
// file system is reported as a full disk (libnetcdf and HDF5 report ENOSPC only
// as "HDF error"; one slab write of one variable is at most a few 4 MiB chunks).
const diskFullMargin = 16 << 20

// noSpace adds "no space left on device" (and wraps syscall.ENOSPC) to a write
// error of an output in folder dir when that file system is (nearly) full. Call
// it before Abort, while the temporary file still holds its space.
func noSpace(e *VarError, dir string) error {
	var st syscall.Statfs_t
	if syscall.Statfs(dir, &st) != nil {
		return e
	}
	free := uint64(st.Bavail) * uint64(st.Bsize)
	if free >= diskFullMargin {
		return e
	}
	e.Problem += fmt.Sprintf("; no space left on device: the file system of %s has %d bytes free; expected room for the whole output", dir, free)
	e.Err = errors.Join(e.Err, syscall.ENOSPC)
	return e
}

func firstErr(errs ...error) error {
	for _, e := range errs {
		if e != nil {
			return e
		}
	}
	return nil
}
