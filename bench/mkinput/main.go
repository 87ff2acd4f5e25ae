// Command mkinput writes the synthetic inputs of the benchmark suite (bench/run.sh):
// N×N columns of invented cloud-top retrievals of a marine stratocumulus deck (see
// package github.com/warmrain/warmrain/bench/synth for the variables and variants).
//
//	go run ./bench/mkinput -n 4000 -variant deflate -o /tmp/in.nc
package main

import (
	"flag"
	"fmt"
	"os"

	"github.com/warmrain/warmrain/bench/synth"
)

func main() {
	var c synth.Config
	flag.IntVar(&c.N, "n", 1000, "columns along each side (N×N columns)")
	flag.IntVar(&c.Chunk, "chunk", 1000, "chunk side for the deflate and packed variants (capped at N)")
	flag.StringVar(&c.Variant, "variant", "deflate", "deflate (float32, deflate + shuffle), packed (int16, deflate + shuffle) or plain (float32, contiguous)")
	flag.IntVar(&c.Deflate, "deflate", 1, "deflate level of the compressed variants, 1-9")
	flag.IntVar(&c.Y0, "y0", 0, "row offset of the tile in the global pattern")
	flag.IntVar(&c.X0, "x0", 0, "column offset of the tile in the global pattern")
	out := flag.String("o", "", "output file (required)")
	flag.Parse()
	if *out == "" || flag.NArg() > 0 {
		fmt.Fprintln(os.Stderr, "usage: mkinput -n N [-variant deflate|packed|plain] [-chunk C] [-deflate L] [-y0 Y] [-x0 X] -o FILE")
		os.Exit(2)
	}
	if err := synth.Write(*out, c); err != nil {
		fmt.Fprintf(os.Stderr, "mkinput: %v\n", err)
		os.Exit(1)
	}
}
