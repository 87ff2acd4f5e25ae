package microphys

import (
	"math"
	"testing"
)

// evapCase is one column's sub-cloud layer, table coordinates and collector exit radius.
type evapCase struct {
	l        SubCloudLayer
	u, ps    float64
	r0, lnR0 float64
}

// evapCases collects the evaporation inputs of Column for the columns in (those with a layer
// and a collector that leaves through the base), in Column's own arithmetic. The benchmarks
// below take them from the invented samples of column_bench_test.go (typicalScSample: the
// typical marine-stratocumulus ranges of [Wood2012], from memory); nothing here is checked.
func evapCases(m *Model, in []Inputs) []evapCase {
	var cs []evapCase
	var out Outputs
	for i := range in {
		m.Column(&in[i], &out)
		if math.IsNaN(out.H) || math.IsNaN(out.CollectorRadius) {
			continue
		}
		rh := in[i].SurfaceRH
		u := m.lnDryRH
		if math.IsNaN(rh) {
			rh = m.p.SurfaceRH
		} else if !m.mixed {
			u = colLog(1 - rh)
		}
		var l SubCloudLayer
		if !m.subCloudFast(in[i].CTT, in[i].CTP, out.H, airStateFast(in[i].CTT, in[i].CTP).gm, in[i].CTH, rh, &l) {
			continue
		}
		cs = append(cs, evapCase{l: l, u: u, ps: m.surfacePressureFast(in[i].CTH, &l), r0: out.CollectorRadius, lnR0: math.Log(out.CollectorRadius)})
	}
	return cs
}

var benchEvapColSink float64

func benchEvapCols(b *testing.B, cs []evapCase) {
	m := defaultModel(b)
	b.ReportAllocs()
	b.ResetTimer()
	s := 0.0
	n := len(cs)
	for i := 0; i < b.N; i++ {
		c := &cs[i%n]
		var e evLook
		s += m.tab.evap.prepare(c.u, &c.l, c.ps, &e)
		var res colResult
		if m.tab.evaporate(c.r0, c.lnR0, &e, &res) {
			s += res.rs
		}
	}
	benchEvapColSink = s
}

// BenchmarkEvapColumns is the evaporation part of Column (evapTable.prepare and evaporate) over the
// layers and exit radii of BenchmarkColumnAll's columns.
func BenchmarkEvapColumns(b *testing.B) {
	benchEvapCols(b, evapCases(defaultModel(b), typicalScSample(4096, 11)))
}

// BenchmarkEvapColumnsCTH is BenchmarkEvapColumns over BenchmarkColumnAllCTH's columns.
func BenchmarkEvapColumnsCTH(b *testing.B) {
	benchEvapCols(b, evapCases(defaultModel(b), typicalScSampleCTH(4096, 11)))
}
