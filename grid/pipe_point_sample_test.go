package grid

import (
	"path/filepath"
	"slices"
	"testing"
)

// TestSampleCollector: the sample a run collects from the blocks it computes
// (SampleCollector) is what Sample reads when the sample holds every column, and, when it
// does not, the first n valid values of each role in processing order over the first
// sampleMaxColumns*n columns, whatever order the blocks come in (common practice:
// a plausibility check must not depend on thread scheduling).
func TestSampleCollector(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "in.nc")
	if err := makeBenchInput(path, 120, 40, 50); err != nil {
		t.Fatal(err)
	}
	in, err := Open(path, OpenOptions{SlabBytes: 30000})
	if err != nil {
		t.Fatal(err)
	}
	defer in.Close()
	run := func(n, workers int) *SampleCollector {
		c := in.NewSampleCollector(n)
		out, err := Create(filepath.Join(dir, "o.nc"), in, testVars(), WriteOptions{Force: true, Deflate: 1})
		if err != nil {
			t.Fatal(err)
		}
		err = Process(in, out, ProcessOptions{Workers: workers}, func(s *Slab, outs [][]float64, lo, hi int) {
			c.Add(s, lo, hi)
			testCompute(s, outs, lo, hi)
		})
		out.Abort()
		if err != nil {
			t.Fatal(err)
		}
		return c
	}
	// Every column sampled (n above the 14 400 columns): the same as Sample.
	want, err := in.Sample(20000)
	if err != nil {
		t.Fatal(err)
	}
	if got := run(20000, 2).Result(); !slices.Equal(got, want) || len(got) != 2 {
		t.Errorf("collector %+v, Sample %+v", got, want)
	}
	// Survey's sample, from its one read of the whole input, is Sample's too, and its
	// statistics are those of Stats.
	st, _, sv, err := in.Survey(20000)
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(sv, want) {
		t.Errorf("Survey %+v, Sample %+v", sv, want)
	}
	if st0, err := in.Stats(); err != nil || !slices.Equal(st, st0) || len(st) != 2 {
		t.Errorf("Survey statistics %+v, Stats %+v (%v)", st, st0, err)
	}
	// A part of the columns: the first n valid values in processing order, the same for
	// one worker and for blocks computed out of order.
	one := run(300, 1)
	ref := one.Result()
	if len(ref) != 2 || ref[0].Valid != 300 || ref[1].Valid != 300 {
		t.Fatalf("sample of 300: %+v", ref)
	}
	for range 3 {
		if got := run(300, 2).Result(); !slices.Equal(got, ref) {
			t.Errorf("2 workers: %+v, 1 worker: %+v", got, ref)
		}
	}
	rev := in.NewSampleCollector(300)
	for i := len(one.blocks) - 1; i >= 0; i-- {
		rev.blocks = append(rev.blocks, one.blocks[i])
	}
	if got := rev.Result(); !slices.Equal(got, ref) {
		t.Errorf("blocks in reverse order: %+v, in order: %+v", got, ref)
	}
	// The reference by hand: the first 300 valid values of each role over the slabs read in
	// processing order by the plan Process used.
	out, err := Create(filepath.Join(dir, "o.nc"), in, testVars(), WriteOptions{Force: true, Deflate: 1})
	if err != nil {
		t.Fatal(err)
	}
	p := out.plan
	out.Abort()
	if p.count < 3 {
		t.Fatalf("the plan has %d slabs; the test needs several", p.count)
	}
	buf := newInBuf(in, p)
	defer buf.release()
	var vals [NumRoles][]float64
	if err := in.eachDecoded(p, buf, func(int, int, int, int, int) error {
		in.appendSample(&vals, &buf.slab, 0, buf.slab.N, 300)
		return nil
	}); err != nil {
		t.Fatal(err)
	}
	if got := in.summarise(&vals); !slices.Equal(got, ref) {
		t.Errorf("by hand %+v, collector %+v", got, ref)
	}
}
