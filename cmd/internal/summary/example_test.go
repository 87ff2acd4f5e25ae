package summary_test

import (
	"fmt"
	"math"

	"github.com/warmrain/warmrain/cmd/internal/summary"
)

// An invented scene: 4 N_d values (at the bin centres) × 3 LWP values, POP = 0.05 (N_d / 100 cm-3)^-0.5
// (LWP/100 g m-2), so S_POP = 0.5 in every LWP bin [derived].
func ExampleAccumulator() {
	lwps := []float64{0.05, 0.1, 0.2}                                       // kg m-2
	nds := summary.Axis{Edges: summary.LogEdges(10e6, 1000e6, 4)}.Centres() // m-3: 17.8, 56.2, 178, 562 cm-3
	s := summary.Scene{Lat: []float64{10, 11, 12}, Lon: []float64{200, 201, 202, 203}, NY: 3, NX: 4, NT: 1}
	var c summary.Columns
	for _, l := range lwps {
		for _, n := range nds {
			c.LWP.Data = append(c.LWP.Data, l)
			c.Nd.Data = append(c.Nd.Data, n)
			c.POP.Data = append(c.POP.Data, 0.05*math.Pow(n/100e6, -0.5)*l/0.1)
		}
	}
	a, err := summary.New(summary.Options{
		LWPEdges: []float64{0.04, 0.07, 0.14, 0.28},
		NdEdges:  summary.LogEdges(10e6, 1000e6, 4),
		MinCount: 1,
		// one column per bin: no floor on the expected drizzling columns
		MinDrizzling: 1e-3,
		Region:       &summary.Region{LatMin: 0, LatMax: 20, LonMin: -170, LonMax: -150}, // = 190..210 east
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	if err := a.Add(s, &c); err != nil {
		fmt.Println(err)
		return
	}
	r := a.Result()
	fmt.Println("valid columns:", r.Counts.Valid)
	for i, sl := range r.SPOP {
		lo, hi := r.LWP.Bounds(i)
		fmt.Printf("LWP %.0f-%.0f g m-2: S_POP = %.3f from %d N_d bins\n", lo*1e3, hi*1e3, sl.S, sl.Bins)
	}
	// Output:
	// valid columns: 12
	// LWP 40-70 g m-2: S_POP = 0.500 from 4 N_d bins
	// LWP 70-140 g m-2: S_POP = 0.500 from 4 N_d bins
	// LWP 140-280 g m-2: S_POP = 0.500 from 4 N_d bins
}
