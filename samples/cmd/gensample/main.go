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
	cells := fs.Int("cells", samples.DefaultConfig().NLat, "cells along each side of the 10° x 10° region (resolution 10°/cells)")
	days := fs.Int("days", samples.DefaultConfig().NTime, "daily time steps")
	if err := fs.Parse(args); err != nil {
		if err == flag.ErrHelp {
			return 0
		}
		return 2
	}
	if *out == "" || fs.NArg() != 0 {
		fmt.Fprintln(stderr, "usage: gensample -o FILE.nc [-seed N] [-cells N] [-days N]")
		return 2
	}
	cfg := samples.DefaultConfig()
	cfg.Seed = *seed
	if *cells != cfg.NLat {
		cfg.NLat, cfg.NLon, cfg.Res = *cells, *cells, 10/float64(*cells)
	}
	cfg.NTime = *days
	if err := samples.Generate(*out, cfg); err != nil {
		fmt.Fprintln(stderr, "gensample:", err)
		return 1
	}
	fmt.Fprintln(stdout, *out)
	return 0
}
