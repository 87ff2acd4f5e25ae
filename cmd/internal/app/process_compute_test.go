package app

import (
	"math"
	"math/rand/v2"
	"reflect"
	"sync/atomic"
	"testing"
	"unsafe"

	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/microphys"
)

// TestComputeMatchesOutputValue: process's per-slab kernel (compute, which copies the
// diagnostics out of blocks of columns one output at a time) writes, for every column and
// output, what columnKernel.column and outputValue give for that column alone ('column
// --from' computes its numbers that way): diagnostics, the LWP used, NaN in screened
// columns, copies of an input, the QC word. Columns cover valid, screened (thin, cold,
// missing) and invalid inputs (invented values: the check is agreement, not physics), in
// ranges that do not start or end on a block boundary.
func TestComputeMatchesOutputValue(t *testing.T) {
	gin, err := grid.Open(sampleFile, grid.OpenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer gin.Close()
	p := microphys.DefaultParams()
	m, err := microphys.NewModel(p)
	if err != nil {
		t.Fatal(err)
	}
	defs, err := selectOutputs("all", p)
	if err != nil {
		t.Fatal(err)
	}
	// A copy of an input other than LWP (none is declared today; the kernel handles one).
	defs = append(defs, outputDef{name: "ctt_copy", input: grid.RoleCTT, scale: 1, decl: -1})
	// A diagnostic that is not one field of microphys.Outputs (called, not read).
	defs = append(defs, outputDef{name: "twice_nd", get: func(o *microphys.Outputs) float64 { return 2 * o.Nd }, scale: 1e-6, decl: -1})
	const n = 3*outBlock + 77
	s := &grid.Slab{N: n}
	for _, bd := range gin.Bindings() {
		s.In[bd.Role.Index()] = make([]float64, n)
	}
	if s.In[grid.RoleCTT.Index()] == nil {
		t.Fatal("the sample has no cloud-top temperature")
	}
	for i := 0; i < n; i++ {
		f := float64(i) / n
		set := func(r grid.Role, v float64) {
			if x := s.In[r.Index()]; x != nil {
				x[i] = v
			}
		}
		set(grid.RoleLWP, 0.01+0.3*f)
		set(grid.RoleRe, (6+14*math.Sin(11*f)*math.Sin(11*f))*1e-6)
		set(grid.RoleTau, math.NaN())
		set(grid.RoleCTT, 285-30*f)
		set(grid.RoleCTP, 85000)
		set(grid.RoleCTH, 1200)
		set(grid.RoleCloudFraction, 0.9)
		set(grid.RoleLWPSD, 0.03)
		switch i % 13 {
		case 1:
			set(grid.RoleLWP, math.NaN())
		case 4:
			set(grid.RoleLWP, 0.0005) // thin
		case 6:
			set(grid.RoleRe, math.NaN())
		case 9:
			set(grid.RoleLWP, -0.02)
		case 11:
			set(grid.RoleCTT, 240) // cold top
		}
	}
	outs := make([][]float64, len(defs)+1)
	for k := range outs {
		outs[k] = make([]float64, n)
		for i := range outs[k] {
			outs[k][i] = -12345 // a value no output takes
		}
	}
	var scr atomic.Int64
	var counts tally
	j := &processJob{params: p, defs: defs, model: m}
	f := j.compute(&scr, gin, &counts, nil, nil, false)
	for _, r := range [][2]int{{0, 3}, {3, outBlock + 5}, {outBlock + 5, n}} {
		f(s, outs, r[0], r[1])
	}
	// With outputs for the block only (grid.ProcessOptions.BlockOutputs): the same bits.
	var scrB atomic.Int64
	var countsB tally
	fb := j.compute(&scrB, gin, &countsB, nil, nil, true)
	for _, r := range [][2]int{{0, 3}, {3, outBlock + 5}, {outBlock + 5, n}} {
		blk := make([][]float64, len(outs))
		for k := range blk {
			blk[k] = make([]float64, r[1]-r[0])
		}
		fb(s, blk, r[0], r[1])
		for k := range blk {
			for i, x := range blk[k] {
				if math.Float64bits(x) != math.Float64bits(outs[k][r[0]+i]) {
					t.Errorf("block outputs: output %d column %d = %v, want %v", k, r[0]+i, x, outs[k][r[0]+i])
				}
			}
		}
	}
	if scrB.Load() != scr.Load() {
		t.Errorf("block outputs: %d columns screened, want %d", scrB.Load(), scr.Load())
	}
	k := newColumnKernel(m, gin)
	var local grid.QualityCounts
	ran0, screened := 0, 0
	for i := 0; i < n; i++ {
		var in microphys.Inputs
		var o microphys.Outputs
		q, _, ran := k.column(s, i, &in, &o, &local)
		if ran {
			ran0++
		} else {
			screened++
		}
		for c := range defs {
			d := &defs[c]
			want := outputValue(d, &in, &o, ran)
			if ran && d.get == nil && d.input != grid.RoleLWP {
				want = s.In[d.input.Index()][i] * d.scale
			}
			got := outs[c][i]
			if got != want && !(math.IsNaN(got) && math.IsNaN(want)) {
				t.Errorf("column %d (ran %v): %s = %g, want %g", i, ran, d.name, got, want)
			}
		}
		if outs[len(defs)][i] != float64(q) {
			t.Errorf("column %d: QC %g, want %d", i, outs[len(defs)][i], q)
		}
	}
	if ran0 < n/2 || screened < n/20 {
		t.Errorf("%d columns ran and %d were screened: the test needs both", ran0, screened)
	}
}

// outputField finds the field each declared output reads (every one is a plain field read
// today), the value at that offset is what Get returns, and a get that computes something
// is called instead.
func TestOutputField(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	for _, d := range microphys.OutputDecls {
		if d.Get == nil {
			continue
		}
		off := outputField(d.Get)
		if off == noField {
			t.Errorf("%s: no field found", d.Name)
			continue
		}
		for range 20 {
			var o microphys.Outputs
			v := reflect.ValueOf(&o).Elem()
			for f := range v.NumField() {
				if v.Field(f).Kind() == reflect.Float64 {
					v.Field(f).SetFloat(r.NormFloat64() * math.Pow(10, float64(r.IntN(40)-20)))
				}
			}
			o.QC = uint16(r.Uint32())
			got := *(*float64)(unsafe.Add(unsafe.Pointer(&o), off))
			if want := d.Get(&o); math.Float64bits(got) != math.Float64bits(want) {
				t.Errorf("%s: field at %d holds %g, Get returns %g", d.Name, off, got, want)
			}
		}
	}
	for name, get := range map[string]func(o *microphys.Outputs) float64{
		"scaled":   func(o *microphys.Outputs) float64 { return 2 * o.H },
		"clamped":  func(o *microphys.Outputs) float64 { return max(o.H, 0) },
		"constant": func(o *microphys.Outputs) float64 { return 1.25 },
		"qc-gated": func(o *microphys.Outputs) float64 {
			if o.QC != 0 {
				return math.NaN()
			}
			return o.POP
		},
		"sum": func(o *microphys.Outputs) float64 { return o.H + o.Nd },
	} {
		if off := outputField(get); off != noField {
			t.Errorf("%s: taken as the field at %d", name, off)
		}
	}
}
