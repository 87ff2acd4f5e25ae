package microphys

import (
	"errors"
	"fmt"
	"hash/maphash"
	"math"
	"strconv"
	"strings"
)

// Saved tables. NewModel spends about a second integrating the collector and evaporation
// tables (table.go); a process that handles one file, or a batch of short jobs, pays that
// each time. Model.Tables serializes the node values of those tables and NewModelTables
// rebuilds a Model from them without integrating, after checking that they were built by
// this table layout for the same parameters and re-integrating a few sampled nodes
// directly. Storing the bytes (a cache file, say) is the caller's business: microphys does
// no I/O.
//
// Format (little endian): the magic line tableMagic, the key (uint32 length + bytes), then
// per grid a uint32 count of float32 values, the values, a uint32 count of state bytes and
// the bytes, and at the end the FNV-1a 64-bit hash of everything before it.

const tableMagic = "warmrain tables 1\n"

// tableLayout names the layout of the tables (axes, node counts and what a node holds); it
// changes whenever table.go changes what the nodes mean, so that saved tables of an older
// layout are refused.
var tableLayout = fmt.Sprintf("coll %v %v %v; thr %v %v %v; val %v %v %v %g %d %g %d; flux %v %v %v %g; mixed u %g",
	collGrid.lo, collGrid.hi, collGrid.n,
	evapAxes.thrLo, evapAxes.thrHi, evapAxes.thrN,
	evapAxes.valLo, evapAxes.valHi, evapAxes.valN, evapAxes.sReach, evapAxes.nReach, evapAxes.sEvap, evapAxes.nEvap,
	fluxAxes.lo, fluxAxes.hi, fluxAxes.n, fluxLnMin, evMixedU)

// tableVerifyNodes is how many nodes of each table NewModelTables integrates again to check
// saved values (a few milliseconds in all).
const tableVerifyNodes = 6

// TableKey identifies the tables NewModel builds for p: the table layout and every
// parameter (ParamDecls, SI values), so that two Params with the same key build the same tables. It is
// empty when p builds no tables (collector off, or CollectorMethod direct).
//
// Reference: none (software interface).
// Valid: any Params.
func (p Params) TableKey() string {
	if !p.EnableCollector || p.CollectorMethod != CollectorTable {
		return ""
	}
	var b strings.Builder
	b.WriteString(tableLayout)
	for i := range ParamDecls { // SI values, exactly: Settings rounds through the users' units
		b.WriteString("; ")
		b.WriteString(ParamDecls[i].Name)
		b.WriteString("=")
		b.WriteString(strconv.FormatFloat(ParamDecls[i].Get(&p), 'g', -1, 64))
	}
	return b.String()
}

// Tables returns the node values of m's collector and evaporation tables, to be given
// back to NewModelTables; nil when m has no tables.
//
// Reference: none (software interface).
// Valid: any Model.
func (m *Model) Tables() []byte {
	if m.tab == nil {
		return nil
	}
	var w tableWriter
	w.bytes([]byte(tableMagic))
	w.str(m.p.TableKey())
	w.grid(m.tab.coll.vals, m.tab.coll.state)
	if e := m.tab.evap; e != nil {
		w.grid(e.thr.vals, nil)
		w.grid(e.reach.vals, nil)
		w.grid(e.evap.vals, nil)
		w.grid(e.flux.vals, nil)
	}
	w.u64(fnv64(w.b))
	return w.b
}

// ErrTablesMismatch is returned (wrapped) by NewModelTables when saved tables do not belong
// to the parameters, the table layout or this code, or are damaged.
var ErrTablesMismatch = errors.New("saved tables do not match")

// NewModelTables is NewModel with the collector and evaporation tables taken from data (the
// bytes of Model.Tables) instead of integrated. It checks the magic, the key (TableKey of p),
// the sizes and the hash, and integrates tableVerifyNodes nodes of each table directly,
// which must give the saved values exactly; any mismatch gives an error wrapping
// ErrTablesMismatch (the caller then uses NewModel). Params without tables ignore data.
//
// Reference: see NewModel.
// Valid: any Params; invalid ones give the error of Params.Validate.
func NewModelTables(p Params, data []byte) (*Model, error) {
	if err := p.Validate(); err != nil {
		return nil, err
	}
	m := newModelBase(p)
	if p.TableKey() == "" {
		return m, nil // no tables to take
	}
	t, err := readTables(m, data)
	if err != nil {
		return nil, fmt.Errorf("%w: %v", ErrTablesMismatch, err)
	}
	if err := verifyTables(m, t); err != nil {
		return nil, fmt.Errorf("%w: %v", ErrTablesMismatch, err)
	}
	m.tab = t
	return m, nil
}

func readTables(m *Model, data []byte) (*collTable, error) {
	if len(data) < len(tableMagic)+8 || string(data[:len(tableMagic)]) != tableMagic {
		return nil, errors.New("not warmrain tables of this format")
	}
	body := data[:len(data)-8]
	r := tableReader{b: data[len(tableMagic):]}
	if h := fnv64(body); h != leU64(data[len(data)-8:]) {
		return nil, errors.New("hash differs (damaged)")
	}
	r.b = r.b[:len(r.b)-8]
	if key, ok := r.str(); !ok || key != m.p.TableKey() {
		return nil, errors.New("built for other parameters or another table layout")
	}
	t := newTableShells(m.p)
	if !r.grid(t.coll.vals, t.coll.state) {
		return nil, errors.New("collector table has the wrong size")
	}
	if e := t.evap; e != nil {
		if !r.grid(e.thr.vals, nil) || !r.grid(e.reach.vals, nil) || !r.grid(e.evap.vals, nil) || !r.grid(e.flux.vals, nil) {
			return nil, errors.New("evaporation tables have the wrong size")
		}
	}
	if len(r.b) != 0 {
		return nil, errors.New("trailing bytes")
	}
	t.widen()
	return t, nil
}

// verifyTables integrates a spread of nodes of t again and compares them with the saved
// values bit for bit (the node functions are deterministic).
func verifyTables(m *Model, t *collTable) error {
	g := t.coll
	total := len(g.state)
	var v [tabVals + 1]float64
	for k := 0; k < tableVerifyNodes; k++ {
		i := spreadIndex(k, total)
		m.collNode(g.node(i), v[:])
		if st := stateByte(v[tabVals]); st != g.state[i] {
			return fmt.Errorf("collector node %d: state %d, saved %d", i, st, g.state[i])
		}
		for q := 0; q < tabVals; q++ {
			if !sameF32(float32(v[q]), g.vals[i*tabVals+q]) {
				return fmt.Errorf("collector node %d: value %g, saved %g", i, float32(v[q]), g.vals[i*tabVals+q])
			}
		}
	}
	if t.evap == nil {
		return nil
	}
	thr := t.evap.thr
	for k := 0; k < tableVerifyNodes; k++ {
		i := spreadIndex(k, len(thr.vals))
		if got := t.evap.thrNode(i); !sameF32(got, thr.vals[i]) {
			return fmt.Errorf("threshold node %d: value %g, saved %g", i, got, thr.vals[i])
		}
	}
	// Flux table: two nodes (about 2 ms each).
	for k := 0; k < 2; k++ {
		i := spreadIndex(k, len(t.evap.flux.vals))
		if got := t.evap.fluxNode(i); !sameF32(got, t.evap.flux.vals[i]) {
			return fmt.Errorf("flux node %d: value %g, saved %g", i, got, t.evap.flux.vals[i])
		}
	}
	// Value tables: one whole layer (s-line) of each, rebuilt into scratch copies.
	ref := newEvapTable(m.p)
	ns := evapAxes.nReach
	nLay := len(ref.reach.vals) / ns
	for k := 0; k < 2; k++ {
		lay := spreadIndex(k, nLay)
		fillEvapLayer(ref, lay)
		for _, pair := range [][2]*nGrid{{ref.reach, t.evap.reach}, {ref.evap, t.evap.evap}} {
			n := pair[0].n[4]
			a, b := pair[0].vals[lay*n:(lay+1)*n], pair[1].vals[lay*n:(lay+1)*n]
			for q := range a {
				if !sameF32(a[q], b[q]) {
					return fmt.Errorf("evaporation layer %d node %d: value %g, saved %g", lay, q, a[q], b[q])
				}
			}
		}
	}
	return nil
}

// verifySalt makes every process check other nodes: a saved table altered at nodes
// other than a fixed few (and its hash recomputed) is found by some of the loads.
var verifySalt = maphash.Bytes(maphash.MakeSeed(), nil)

// spreadIndex is the k-th of tableVerifyNodes indices spread over [0, n): a
// pseudo-random pick that changes with verifySalt from process to process, so that
// every part of a table is sampled over the verifications.
func spreadIndex(k, n int) int {
	h := (uint64(k+1) + verifySalt) * 0x9e3779b97f4a7c15
	h ^= h >> 29
	return int(h % uint64(n))
}

// sameF32 is bit equality, with every NaN equal to every NaN.
func sameF32(a, b float32) bool {
	if a != a || b != b {
		return a != a && b != b
	}
	return math.Float32bits(a) == math.Float32bits(b)
}

// fnv64 is the FNV-1a 64-bit hash (Fowler, Noll and Vo; common practice).
func fnv64(b []byte) uint64 {
	h := uint64(14695981039346656037)
	for _, c := range b {
		h ^= uint64(c)
		h *= 1099511628211
	}
	return h
}

func leU64(b []byte) uint64 {
	var v uint64
	for i := 7; i >= 0; i-- {
		v = v<<8 | uint64(b[i])
	}
	return v
}

type tableWriter struct{ b []byte }

func (w *tableWriter) bytes(p []byte) { w.b = append(w.b, p...) }
func (w *tableWriter) u32(v uint32) {
	w.b = append(w.b, byte(v), byte(v>>8), byte(v>>16), byte(v>>24))
}
func (w *tableWriter) u64(v uint64) {
	for i := 0; i < 8; i++ {
		w.b = append(w.b, byte(v>>(8*i)))
	}
}
func (w *tableWriter) str(s string) { w.u32(uint32(len(s))); w.b = append(w.b, s...) }
func (w *tableWriter) grid(vals []float32, state []uint8) {
	w.u32(uint32(len(vals)))
	for _, v := range vals {
		w.u32(math.Float32bits(v))
	}
	w.u32(uint32(len(state)))
	w.b = append(w.b, state...)
}

type tableReader struct{ b []byte }

func (r *tableReader) u32() (uint32, bool) {
	if len(r.b) < 4 {
		return 0, false
	}
	v := uint32(r.b[0]) | uint32(r.b[1])<<8 | uint32(r.b[2])<<16 | uint32(r.b[3])<<24
	r.b = r.b[4:]
	return v, true
}

func (r *tableReader) str() (string, bool) {
	n, ok := r.u32()
	if !ok || uint64(n) > uint64(len(r.b)) {
		return "", false
	}
	s := string(r.b[:n])
	r.b = r.b[n:]
	return s, true
}

// grid reads one grid's values into vals and states into state (nil: none saved); false
// when the saved counts differ from len(vals) and len(state).
func (r *tableReader) grid(vals []float32, state []uint8) bool {
	n, ok := r.u32()
	if !ok || int(n) != len(vals) || len(r.b) < 4*len(vals) {
		return false
	}
	for i := range vals {
		v, _ := r.u32()
		vals[i] = math.Float32frombits(v)
	}
	n, ok = r.u32()
	if !ok || int(n) != len(state) || len(r.b) < len(state) {
		return false
	}
	copy(state, r.b[:len(state)])
	r.b = r.b[len(state):]
	return true
}
