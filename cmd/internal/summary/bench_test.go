package summary

import (
	"math/rand/v2"
	"testing"
)

func benchColumns(n int) (Scene, *Columns) {
	r := rand.New(rand.NewPCG(1, 1))
	s := flatScene(n)
	c := &Columns{LWP: Field{Data: make([]float64, n)}, Nd: Field{Data: make([]float64, n)},
		POP: Field{Data: make([]float64, n)}, Rate: Field{Data: make([]float64, n)}, SurfaceRate: Field{Data: make([]float64, n)}}
	for k := 0; k < n; k++ {
		c.LWP.Data[k], c.Nd.Data[k] = logUniform(r, 0.02, 0.5), logUniform(r, 10e6, 1000e6)
		c.POP.Data[k] = lawPOP(c.LWP.Data[k], c.Nd.Data[k])
		c.Rate.Data[k] = c.POP.Data[k] * lawI(c.LWP.Data[k], c.Nd.Data[k])
	}
	return s, c
}

// BenchmarkAdd measures Accumulator.Add per 100 000-column scene.
func BenchmarkAdd(b *testing.B) {
	s, c := benchColumns(100000)
	for _, k := range []struct {
		name       string
		boot, tile int
	}{{"noboot", 0, 0}, {"boot100", 100, 0}, {"boot100_columns", 100, 1}} {
		b.Run(k.name, func(b *testing.B) {
			a, _ := New(Options{Bootstrap: k.boot, Tile: k.tile, Region: &Region{-90, 90, -180, 180}})
			b.ReportAllocs()
			for b.Loop() {
				if err := a.Add(s, c); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkResult measures the fits, including 100 bootstrap replicates.
func BenchmarkResult(b *testing.B) {
	s, c := benchColumns(10000)
	a, _ := New(Options{Bootstrap: 100})
	if err := a.Add(s, c); err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		_ = a.Result()
	}
}

// BenchmarkMaps measures MapAccumulator.Accumulate of two fields on a 1000 x 1000 grid.
func BenchmarkMaps(b *testing.B) {
	s := Scene{NY: 1000, NX: 1000, NT: 1, Lat: make([]float64, 1000), Lon: make([]float64, 1000)}
	for i := range s.Lat {
		s.Lat[i], s.Lon[i] = -50+0.1*float64(i), 0.1*float64(i)
	}
	f1 := Field{Name: "a", Data: make([]float64, 1000000)}
	f2 := Field{Name: "b", Data: make([]float64, 1000000)}
	m, _ := NewMaps(nil, Window{})
	b.ReportAllocs()
	for b.Loop() {
		if err := m.Accumulate(s, f1, f2); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkGridded measures Gridded.Add of the same two fields and 1000 x 1000 scene as
// BenchmarkMaps, binned into 0.25-degree cells with exact sums (run the two side by
// side: go test -bench 'Maps|Gridded' ./cmd/internal/summary).
func BenchmarkGridded(b *testing.B) {
	r := rand.New(rand.NewPCG(2, 2))
	s := Scene{NY: 1000, NX: 1000, NT: 1, Lat: make([]float64, 1000), Lon: make([]float64, 1000)}
	for i := range s.Lat {
		s.Lat[i], s.Lon[i] = -50+0.1*float64(i), 0.1*float64(i)
	}
	f1 := Field{Name: "a", Data: make([]float64, 1000000)}
	f2 := Field{Name: "b", Data: make([]float64, 1000000)}
	for i := range f1.Data {
		f1.Data[i], f2.Data[i] = 0.05+0.2*r.Float64(), 1e8*(0.5+r.Float64())
	}
	g, _ := NewLatLonGrid(0.25)
	m, _ := NewGridded(GriddedOptions{Grid: g, Names: []string{"a", "b"}})
	b.ReportAllocs()
	for b.Loop() {
		if err := m.Add(s, nil, f1, f2); err != nil {
			b.Fatal(err)
		}
	}
}
