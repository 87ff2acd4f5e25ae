package plots

import (
	"io"
	"testing"
)

// BenchmarkMap draws a 900 x 600 px map of a 0.1° grid over 40° x 30° (120 000 cells)
// off a coast, with and without the coastlines (low resolution, read once per process
// and cached), to measure what the coastline layer costs per map.
func BenchmarkMap(b *testing.B) {
	s, f := regularScene(-40, -10, -95, -55, 0.1, 100e6)
	for _, c := range []struct {
		name    string
		noCoast bool
	}{{"coast", false}, {"nocoast", true}} {
		b.Run(c.name, func(b *testing.B) {
			if !c.noCoast && CoastlinesAvailable() != nil {
				b.Skip("no coastline files")
			}
			opt := MapOptions{NoCoast: c.noCoast}
			Style(f.Name, f.Units, nil, &opt)
			for b.Loop() {
				if err := Map(io.Discard, s, f, opt); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkCoastLoad reads the intermediate-resolution shore file (2.2 MB), as the
// first map of a region below 15° does once per process.
func BenchmarkCoastLoad(b *testing.B) {
	if CoastlinesAvailable() != nil {
		b.Skip("no coastline files")
	}
	for b.Loop() {
		if _, err := readCoast(coastFile('i')); err != nil {
			b.Fatal(err)
		}
	}
}
