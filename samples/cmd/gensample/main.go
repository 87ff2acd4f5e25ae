// Command gensample writes warmrain's synthetic demo scenario (invented data)
// to a netCDF file.
//
// Usage:
//
//	go run ./samples/cmd/gensample -o samples/data/stratocumulus_demo.nc
//
// Exit codes: 0 success, 1 failure, 2 usage.
package main

import (
	"flag"
	"fmt"
	"io"
	"os"

	"github.com/warmrain/warmrain/samples"
)

func main() { os.Exit(run(os.Args[1:], os.Stdout, os.Stderr)) }

func run(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("gensample", flag.ContinueOnError)
	fs.SetOutput(stderr)
	out := fs.String("o", "", "output netCDF file (required)")
	seed := fs.Uint64("seed", samples.DefaultConfig().Seed, "texture seed")
	if err := fs.Parse(args); err != nil {
		if err == flag.ErrHelp {
			return 0
		}
		return 2
	}
	if *out == "" || fs.NArg() != 0 {
		fmt.Fprintln(stderr, "usage: gensample -o FILE.nc [-seed N]")
		return 2
	}
	cfg := samples.DefaultConfig()
	cfg.Seed = *seed
	if err := samples.Generate(*out, cfg); err != nil {
		fmt.Fprintln(stderr, "gensample:", err)
		return 1
	}
	fmt.Fprintln(stdout, *out)
	return 0
}
