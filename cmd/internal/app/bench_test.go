package app

import (
	"context"
	"fmt"
	"io"
	"path/filepath"
	"testing"
	"time"

	"github.com/warmrain/warmrain/bench/synth"
	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/microphys"
	"github.com/warmrain/warmrain/samples"
)

// Benchmarks of the slab pipeline end to end: one input file, read through grid,
// computed by Model.Column on every column, written with deflate 1 + shuffle and
// committed, exactly as `warmrain process` does for each file (processJob.one). The
// model (and its collector table) is built once outside the timer, so these measure
// the per-file steady state; bench/run.sh measures the whole command side by side
// with nccopy and an xarray script. Besides ns/op they report ns/column and columns/s.
//
// Inputs (benchmark data, invented, written into b.TempDir()):
//   - the input of bench/run.sh (package bench/synth): 1000 × 1000 columns of float32
//     LWP, its standard deviation, r_e, CTT and CTP, deflate 1 + shuffle, chunks 1000²;
//   - for BenchmarkPipelineAllCTH, the demo scenario of package samples on a 500 × 500
//     grid, which also has cloud-top height (CTH), optical thickness and cloud fraction.

const (
	benchSide        = 1000 // columns along each side of the synth input
	benchSamplesSide = 500  // the same for the samples scenario
)

// synthInput writes the bench/run.sh input into dir and returns its path.
func synthInput(b *testing.B, dir string) string {
	b.Helper()
	path := filepath.Join(dir, "bench_in.nc")
	if err := synth.Write(path, synth.Config{N: benchSide, Variant: "deflate"}); err != nil {
		b.Fatal(err)
	}
	return path
}

// samplesInput writes the samples scenario on a benchSamplesSide² grid into dir, without
// its retrieval uncertainties.
func samplesInput(b *testing.B, dir string) string { return samplesInputWith(b, dir, false) }

// samplesInputUnc is samplesInput with the uncertainties.
func samplesInputUnc(b *testing.B, dir string) string { return samplesInputWith(b, dir, true) }

func samplesInputWith(b *testing.B, dir string, unc bool) string {
	b.Helper()
	cfg := samples.DefaultConfig()
	cfg.NoUncertainty = !unc
	cfg.NLat, cfg.NLon, cfg.NTime = benchSamplesSide, benchSamplesSide, 1
	cfg.Res = 10.0 / benchSamplesSide // the scenario's 10° box
	cfg.Deflate = 1
	path := filepath.Join(dir, "bench_samples.nc")
	if err := samples.Generate(path, cfg); err != nil {
		b.Fatal(err)
	}
	return path
}

func benchPipeline(b *testing.B, p microphys.Params, ioOnly bool, mkInput func(*testing.B, string) string) {
	dir := b.TempDir()
	input := mkInput(b, dir)
	m, err := microphys.NewModel(p)
	if err != nil {
		b.Fatal(err)
	}
	defs, err := selectOutputs("all", p)
	if err != nil {
		b.Fatal(err)
	}
	job := &processJob{
		e:      &env{stdout: io.Discard, stderr: io.Discard, prog: "warmrain"},
		o:      processOptions{jobs: 1, deflate: 1, slabMB: grid.DefaultSlabBytes >> 20, memoryMB: defaultMemoryMB, ioOnly: ioOnly, quiet: true},
		params: p, defs: defs, model: m,
		args: []string{"process", input},
	}
	job.digest = job.paramDigest()
	ctx := context.Background()
	b.ReportAllocs()
	b.ResetTimer()
	t0 := time.Now()
	var cols int64
	for i := 0; i < b.N; i++ {
		out := filepath.Join(dir, fmt.Sprintf("out_%d.nc", i))
		r := job.one(ctx, input, out, false)
		if r.Status != "done" {
			b.Fatalf("process %s: %s %s", input, r.Status, r.Error)
		}
		cols += r.Columns
	}
	el := time.Since(t0)
	b.ReportMetric(float64(el.Nanoseconds())/float64(cols), "ns/column")
	b.ReportMetric(float64(cols)/el.Seconds(), "columns/s")
}

// BenchmarkPipelineAll is one file with every diagnostic (collector and evaporation table).
func BenchmarkPipelineAll(b *testing.B) {
	benchPipeline(b, microphys.DefaultParams(), false, synthInput)
}

// BenchmarkPipelineBulk is one file with the collector and evaporation off (--no-collector).
func BenchmarkPipelineBulk(b *testing.B) {
	p := microphys.DefaultParams()
	p.EnableCollector, p.EnableEvaporation = false, false
	benchPipeline(b, p, false, synthInput)
}

// BenchmarkPipelineIOOnly reads the inputs and writes every output variable with the
// same compression, the physics skipped (--io-only): the floor of the two above.
func BenchmarkPipelineIOOnly(b *testing.B) {
	benchPipeline(b, microphys.DefaultParams(), true, synthInput)
}

// BenchmarkPipelineAllCTH is every diagnostic on an input with cloud-top height
// (the samples scenario): the cloud-base height then comes from CTH.
func BenchmarkPipelineAllCTH(b *testing.B) {
	benchPipeline(b, microphys.DefaultParams(), false, samplesInput)
}

// BenchmarkPipelineUncertainty is BenchmarkPipelineAllCTH without (off) and with the
// retrieval uncertainties of the input (retrieval: every <name>_standard_error), and with
// --parameter-uncertainty too (both), side by side (README "Uncertainty").
func BenchmarkPipelineUncertainty(b *testing.B) {
	b.Run("off", func(b *testing.B) { benchPipeline(b, microphys.DefaultParams(), false, samplesInput) })
	b.Run("retrieval", func(b *testing.B) { benchPipeline(b, microphys.DefaultParams(), false, samplesInputUnc) })
	b.Run("both", func(b *testing.B) {
		p := microphys.DefaultParams()
		p.ParameterUncertainty = true
		benchPipeline(b, p, false, samplesInputUnc)
	})
}
