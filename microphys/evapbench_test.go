package microphys

import (
	"math"
	"syscall"
	"testing"
)

// evapCase is one column's sub-cloud layer, table coordinates and collector exit radius.
type evapCase struct {
	l        SubCloudLayer
	u, ps    float64
	r0, lnR0 float64
}

// evapCases collects the evaporation inputs of Column for the columns in (those with a layer
// and a collector that leaves through the base), in Column's own arithmetic.
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
			s += res.rs + res.zev*0
		}
	}
	benchEvapColSink = s
}

// BenchmarkEvapColumns is the evaporation part of Column (fraction and evaporate) over the
// layers and exit radii of BenchmarkColumnAll's columns.
func BenchmarkEvapColumns(b *testing.B) {
	benchEvapCols(b, evapCases(defaultModel(b), typicalScSample(4096, 11)))
}

// BenchmarkEvapColumnsCTH is BenchmarkEvapColumns over BenchmarkColumnAllCTH's columns.
func BenchmarkEvapColumnsCTH(b *testing.B) {
	in := typicalScSample(4096, 11)
	cth := marineScSampleCTH(4096, 11)
	for i := range in {
		tm := in[i].CTT + 0.5*6.5e-3*cth[i].CTH
		ps := cth[i].CTP * math.Exp(Gravity*cth[i].CTH/(GasConstantDry*(cth[i].CTT+0.5*6.5e-3*cth[i].CTH)))
		in[i].CTH, in[i].SurfaceRH = cth[i].CTH, cth[i].SurfaceRH
		in[i].CTP = ps * math.Exp(-Gravity*in[i].CTH/(GasConstantDry*tm))
	}
	benchEvapCols(b, evapCases(defaultModel(b), in))
}

// cpuNow returns the process's user+system CPU time, ns.
func cpuNow() int64 {
	var ru syscall.Rusage
	syscall.Getrusage(syscall.RUSAGE_SELF, &ru)
	return ru.Utime.Nano() + ru.Stime.Nano()
}

// benchColumnsCPU is benchColumns reporting CPU ns per column (robust on a loaded machine).
func benchColumnsCPU(b *testing.B, p Params, in []Inputs) {
	m, err := NewModel(p)
	if err != nil {
		b.Fatal(err)
	}
	var out Outputs
	b.ResetTimer()
	c0 := cpuNow()
	for i := 0; i < b.N; i++ {
		m.Column(&in[i&4095], &out)
	}
	b.ReportMetric(float64(cpuNow()-c0)/float64(b.N), "cpu-ns/op")
	benchSink = out
}

func BenchmarkCPUColumnAll(b *testing.B) {
	benchColumnsCPU(b, DefaultParams(), typicalScSample(4096, 11))
}

func BenchmarkCPUColumnAllCTH(b *testing.B) {
	in := typicalScSample(4096, 11)
	cth := marineScSampleCTH(4096, 11)
	for i := range in {
		tm := in[i].CTT + 0.5*6.5e-3*cth[i].CTH
		ps := cth[i].CTP * math.Exp(Gravity*cth[i].CTH/(GasConstantDry*(cth[i].CTT+0.5*6.5e-3*cth[i].CTH)))
		in[i].CTH, in[i].SurfaceRH = cth[i].CTH, cth[i].SurfaceRH
		in[i].CTP = ps * math.Exp(-Gravity*in[i].CTH/(GasConstantDry*tm))
	}
	benchColumnsCPU(b, DefaultParams(), in)
}

func BenchmarkCPUColumnBulk(b *testing.B) {
	p := DefaultParams()
	p.EnableCollector, p.EnableEvaporation = false, false
	benchColumnsCPU(b, p, typicalScSample(4096, 11))
}
