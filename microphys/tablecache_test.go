package microphys

import (
	"errors"
	"fmt"
	"math"
	"testing"
)

// The saved tables (tablecache.go) are a software interface, and these tests hold no check
// values from the literature: every expected value is the model's own (derived: a Model
// rebuilt from Model.Tables must compute bit for bit what the Model that saved them computes,
// and must refuse bytes not built by this layout for these parameters). The columns are the
// invented test sample marineScSample (table_test.go); FNV-1a is common practice.

func TestTablesRoundTrip(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	p := DefaultParams()
	m, err := NewModel(p)
	if err != nil {
		t.Fatal(err)
	}
	data := m.Tables()
	if len(data) == 0 {
		t.Fatal("Tables: empty for the default parameters, which build tables")
	}
	m2, err := NewModelTables(p, data)
	if err != nil {
		t.Fatalf("NewModelTables of the bytes just saved: %v", err)
	}
	// Invented columns (marineScSample, table_test.go), with and without CTH.
	for _, cth := range []bool{false, true} {
		in := marineScSample(3000, 5, cth)
		for i := range in {
			var a, b Outputs
			m.Column(&in[i], &a)
			m2.Column(&in[i], &b)
			if !sameOutputs(a, b) {
				t.Fatalf("column %d (cth %v): rebuilt model gives %+v, built one %+v", i, cth, b, a)
			}
		}
	}
	// Saving the rebuilt model gives the same bytes.
	if string(m2.Tables()) != string(data) {
		t.Error("Tables of the rebuilt model differ from the bytes it was built from")
	}
}

func sameOutputs(a, b Outputs) bool {
	fa := []float64{a.Nd, a.H, a.Cw, a.ReTop, a.Autoconv, a.Efficiency, a.DrizzleRate,
		a.POP, a.LWPCrit, a.CollectorRadius, a.CollectorTime, a.SurfaceRadius, a.EvapHeight}
	fb := []float64{b.Nd, b.H, b.Cw, b.ReTop, b.Autoconv, b.Efficiency, b.DrizzleRate,
		b.POP, b.LWPCrit, b.CollectorRadius, b.CollectorTime, b.SurfaceRadius, b.EvapHeight}
	for i := range fa {
		if math.Float64bits(fa[i]) != math.Float64bits(fb[i]) && !(math.IsNaN(fa[i]) && math.IsNaN(fb[i])) {
			return false
		}
	}
	return a.QC == b.QC
}

func TestTablesRefused(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	p := DefaultParams()
	m, err := NewModel(p)
	if err != nil {
		t.Fatal(err)
	}
	data := m.Tables()
	rehash := func(b []byte) []byte {
		b = append([]byte(nil), b...)
		h := fnv64(b[:len(b)-8])
		for i := 0; i < 8; i++ {
			b[len(b)-8+i] = byte(h >> (8 * i))
		}
		return b
	}
	other := p
	other.SurfacePressure = 100000
	flipped := append([]byte(nil), data...)
	flipped[len(flipped)/2] ^= 1
	// A saved collector value that the code would no longer compute (as after a change of
	// the physics): one of the verified nodes, with a valid hash.
	changed := append([]byte(nil), data...)
	off := len(tableMagic) + 4 + len(p.TableKey()) + 4 + 4*tabVals*spreadIndex(0, len(m.tab.coll.state))
	changed[off] ^= 0x10
	changed = rehash(changed)
	// The same for a verified threshold node.
	thr := append([]byte(nil), data...)
	nColl := len(m.tab.coll.state)
	off = len(tableMagic) + 4 + len(p.TableKey()) + 4 + 4*tabVals*nColl + 4 + nColl + 4 + 4*spreadIndex(0, len(m.tab.evap.thr.vals))
	thr[off] ^= 0x10
	thr = rehash(thr)
	cases := []struct {
		name string
		p    Params
		data []byte
	}{
		{"other parameters", other, data},
		{"one bit flipped", p, flipped},
		{"truncated", p, data[:len(data)-100]},
		{"empty", p, nil},
		{"changed collector node", p, changed},
		{"changed threshold node", p, thr},
		{"trailing bytes", p, rehash(append(append([]byte(nil), data[:len(data)-8]...), 0, 0, 0, 0, 0, 0, 0, 0, 0))},
	}
	for _, c := range cases {
		if _, err := NewModelTables(c.p, c.data); !errors.Is(err, ErrTablesMismatch) {
			t.Errorf("%s: NewModelTables gives %v, want ErrTablesMismatch", c.name, err)
		}
	}
	// Without tables (collector off) the bytes are ignored and the model is NewModel's.
	bulk := p
	bulk.EnableCollector, bulk.EnableEvaporation = false, false
	if bulk.TableKey() != "" {
		t.Errorf("TableKey with the collector off: %q, want empty", bulk.TableKey())
	}
	if _, err := NewModelTables(bulk, []byte("anything")); err != nil {
		t.Errorf("NewModelTables without tables: %v", err)
	}
	// Invalid parameters give the validation error, not a mismatch.
	bad := p
	bad.K = -1
	if _, err := NewModelTables(bad, data); err == nil || errors.Is(err, ErrTablesMismatch) {
		t.Errorf("invalid parameters: %v, want the Params error", err)
	}
}

func ExampleParams_TableKey() {
	p := DefaultParams()
	same := DefaultParams()
	other := DefaultParams()
	other.SurfacePressure = 100000
	fmt.Println(p.TableKey() == same.TableKey(), p.TableKey() == other.TableKey())
	// Output: true false
}

func ExampleModel_Tables() {
	m, _ := NewModel(DefaultParams())
	data := m.Tables() // store these bytes, e.g. in a cache file
	fmt.Println(len(data) > 0)
	// Output: true
}

func ExampleNewModelTables() {
	p := DefaultParams()
	m, _ := NewModel(p)
	data := m.Tables()
	m2, err := NewModelTables(p, data) // no integration: the tables come from data
	fmt.Println(err == nil, m2.Params().SurfacePressure == p.SurfacePressure)
	_, err = NewModelTables(p, data[:10])
	fmt.Println(errors.Is(err, ErrTablesMismatch))
	// Output:
	// true true
	// true
}

// BenchmarkNewModelTables is NewModel from saved tables (Model.Tables): the POP table, the
// checks and the re-integration of the verified nodes, against BenchmarkNewModel's build.
func BenchmarkNewModelTables(b *testing.B) {
	p := DefaultParams()
	m, err := NewModel(p)
	if err != nil {
		b.Fatal(err)
	}
	data := m.Tables()
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := NewModelTables(p, data); err != nil {
			b.Fatal(err)
		}
	}
}

// TestTablesCheckVaries: a saved table altered at one collector node that this
// process does not check (its hash recomputed) is found when other processes
// (other salts) check other nodes: the checked nodes vary (common practice for
// sampled integrity checks).
func TestTablesCheckVaries(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	p := DefaultParams()
	m, err := NewModel(p)
	if err != nil {
		t.Fatal(err)
	}
	data := m.Tables()
	nColl := len(m.tab.coll.state)
	saved := verifySalt
	defer func() { verifySalt = saved }()
	checked := map[int]bool{}
	for k := 0; k < tableVerifyNodes; k++ {
		checked[spreadIndex(k, nColl)] = true
	}
	node := -1
	for i := nColl / 3; i < nColl; i++ { // a node whose value matters (not a NaN one)
		if !checked[i] && m.tab.coll.vals[i*tabVals] == m.tab.coll.vals[i*tabVals] && m.tab.coll.vals[i*tabVals] != 0 {
			node = i
			break
		}
	}
	off := len(tableMagic) + 4 + len(p.TableKey()) + 4 + 4*tabVals*node
	bad := append([]byte(nil), data...)
	bad[off+2] ^= 0x10
	h := fnv64(bad[:len(bad)-8])
	for i := 0; i < 8; i++ {
		bad[len(bad)-8+i] = byte(h >> (8 * i))
	}
	if _, err := NewModelTables(p, bad); err != nil {
		t.Fatalf("this process's check found a node it does not sample: %v", err)
	}
	picks := map[int]bool{}
	found := 0
	for salt := uint64(1); salt <= 4*uint64(nColl)/tableVerifyNodes; salt++ {
		verifySalt = salt * 0x51ed27
		for k := 0; k < tableVerifyNodes; k++ {
			picks[spreadIndex(k, nColl)] = true
		}
		if picks[node] {
			if _, err := NewModelTables(p, bad); !errors.Is(err, ErrTablesMismatch) {
				t.Fatalf("salt %d checks node %d but accepts the altered table: %v", salt, node, err)
			}
			found++
			break
		}
	}
	if found == 0 {
		t.Fatalf("no salt checks node %d; %d of %d nodes sampled", node, len(picks), nColl)
	}
}
