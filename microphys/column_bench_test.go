package microphys

import (
	"math"
	"math/rand/v2"
	"syscall"
	"testing"
)

var benchSink Outputs

// typicalScSample draws n columns within the typical marine-stratocumulus ranges of
// [Wood2012] (from memory, doc/science.md#typical-stratocumulus): LWP 40-200 g m-2, r_e 9-15 µm, T_top
// 280-290 K, p_top 850-950 hPa, with an LWP standard deviation of 40 % (gamma shape 6.25).
// Invented data for benchmarks.
func typicalScSample(n int, seed uint64) []Inputs {
	in := marineScSample(n, seed, false)
	rng := rand.New(rand.NewPCG(seed, 9))
	for i := range in {
		in[i].LWP = 0.04 * math.Exp(rng.Float64()*math.Log(5))
		in[i].Re = 9e-6 + 6e-6*rng.Float64()
		in[i].CTT = 280 + 10*rng.Float64()
		in[i].CTP = 85000 + 10000*rng.Float64()
		in[i].LWPStd = 0.4 * in[i].LWP
	}
	return in
}

// typicalScSampleCTH is typicalScSample with a cloud-top height on every column, consistent
// with the cloud-top pressure (the heights and surface humidities of marineScSampleCTH, the
// mean temperature of the layer below cloud top from the troposphere's lapse rate of the
// standard atmosphere, saL1, [USSA1976]). Invented data for benchmarks.
func typicalScSampleCTH(n int, seed uint64) []Inputs {
	in := typicalScSample(n, seed)
	cth := marineScSampleCTH(n, seed)
	for i := range in {
		tm := in[i].CTT - 0.5*saL1*cth[i].CTH
		ps := cth[i].CTP * math.Exp(Gravity*cth[i].CTH/(GasConstantDry*(cth[i].CTT-0.5*saL1*cth[i].CTH)))
		in[i].CTH, in[i].SurfaceRH = cth[i].CTH, cth[i].SurfaceRH
		in[i].CTP = ps * math.Exp(-Gravity*in[i].CTH/(GasConstantDry*tm))
	}
	return in
}

// benchColumns runs Column over the columns in (4096 of them) and reports, besides the
// time, the process's CPU time per column (cpu-ns/op: steadier than the time on a machine
// other processes share).
func benchColumns(b *testing.B, p Params, in []Inputs) {
	m, err := NewModel(p)
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	b.ResetTimer()
	c0 := cpuNow()
	var out Outputs
	for i := 0; i < b.N; i++ {
		m.Column(&in[i&4095], &out)
	}
	b.ReportMetric(float64(cpuNow()-c0)/float64(b.N), "cpu-ns/op")
	benchSink = out
}

// cpuNow returns the process's user and system CPU time, ns.
func cpuNow() int64 {
	var ru syscall.Rusage
	syscall.Getrusage(syscall.RUSAGE_SELF, &ru)
	return ru.Utime.Nano() + ru.Stime.Nano()
}

// BenchmarkColumnAll is Column with every diagnostic on (collector and evaporation
// tables) over typical marine-stratocumulus columns.
func BenchmarkColumnAll(b *testing.B) { benchColumns(b, DefaultParams(), typicalScSample(4096, 11)) }

// BenchmarkColumnAllWide is BenchmarkColumnAll over the widened sample of the table test
// (more low cloud bases, so more columns integrated directly near the evaporation boundary).
func BenchmarkColumnAllWide(b *testing.B) {
	in := marineScSample(4096, 11, false)
	for i := range in {
		in[i].LWPStd = 0.4 * in[i].LWP
	}
	benchColumns(b, DefaultParams(), in)
}

// BenchmarkColumnAllCTH is BenchmarkColumnAll with a cloud-top height on every column,
// consistent with the cloud-top pressure (the sample of TestTableAgainstDirectCTH, restricted
// to the typical ranges of typicalScSample).
func BenchmarkColumnAllCTH(b *testing.B) {
	benchColumns(b, DefaultParams(), typicalScSampleCTH(4096, 11))
}

// BenchmarkColumnBulk is Column with the collector and evaporation off.
func BenchmarkColumnBulk(b *testing.B) {
	p := DefaultParams()
	p.EnableCollector, p.EnableEvaporation = false, false
	benchColumns(b, p, typicalScSample(4096, 11))
}

// BenchmarkColumnBulkDefaultAir is BenchmarkColumnBulk without cloud-top temperature and
// pressure (the air state of Params.DefaultCTT and DefaultCTP, computed once per Model).
func BenchmarkColumnBulkDefaultAir(b *testing.B) {
	p := DefaultParams()
	p.EnableCollector, p.EnableEvaporation = false, false
	in := typicalScSample(4096, 11)
	for i := range in {
		in[i].CTT, in[i].CTP = math.NaN(), math.NaN()
	}
	benchColumns(b, p, in)
}

// BenchmarkNewModel is the table build of NewModel with DefaultParams (about 50000 direct
// integrations on all cores, table.go).
func BenchmarkNewModel(b *testing.B) {
	for i := 0; i < b.N; i++ {
		if _, err := NewModel(DefaultParams()); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkSubgridRamp is the sub-grid drizzle part of Column (subgridColumn) alone, for the
// ramp onset of DefaultParams over the columns of BenchmarkColumnAll (each with its own LWP
// standard deviation, so its own gamma shape); the collector and evaporation, which it does
// not use, are off.
func BenchmarkSubgridRamp(b *testing.B) {
	p := DefaultParams()
	p.EnableCollector, p.EnableEvaporation = false, false
	m, err := NewModel(p)
	if err != nil {
		b.Fatal(err)
	}
	type args struct{ lwp, crit, s, reTop, nu, sn float64 }
	in := typicalScSample(4096, 11)
	a := make([]args, len(in))
	var out Outputs
	for i := range in {
		m.Column(&in[i], &out)
		sn := in[i].LWP / in[i].LWPStd
		a[i] = args{in[i].LWP, out.LWPCrit, math.Cbrt(out.LWPCrit / in[i].LWP), out.ReTop, sn * sn, sn}
	}
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		c := &a[i&4095]
		m.subgridColumn(1, c.lwp, c.crit, c.s, c.reTop, c.nu, c.sn, math.NaN(), true, &out)
	}
	benchSink = out
}

// BenchmarkNewRampTable is the build of the ramp-onset tables (newRampTable) that NewModel
// does for a ramp onset, with the default rate exponent.
func BenchmarkNewRampTable(b *testing.B) {
	for i := 0; i < b.N; i++ {
		newRampTable(drizzleSevenQuarters)
	}
}
