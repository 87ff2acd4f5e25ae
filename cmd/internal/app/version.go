package app

import (
	"fmt"
	"runtime"

	"github.com/warmrain/warmrain/grid"
)

const versionUsage = `Usage: warmrain version

Prints the version of warmrain, of the Go toolchain and of libnetcdf.
`

func runVersion(e *env, args []string) error {
	fs := newFlagSet(e, "version", versionUsage)
	if err := parseFlags(e, fs, versionUsage, args); err != nil {
		return err
	}
	if fs.NArg() > 0 {
		return usagef("version takes no arguments")
	}
	fmt.Fprintf(e.stdout, "warmrain %s\ngo %s %s/%s\nlibnetcdf %s\n", Version(), runtime.Version(), runtime.GOOS, runtime.GOARCH, grid.LibraryVersion())
	return nil
}
