package summary

import (
	"encoding/binary"
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"testing"
)

// randomSwath is a curved swath of ny x nx columns around (lat0, lon0) with 2-D
// coordinates (invented test data), longitudes in 0..360 when east360, two fields with
// missing values and a screening mask on some columns.
func randomSwath(rng *rand.Rand, ny, nx int, lat0, lon0 float64, east360 bool) (Scene, []uint32, []Field) {
	n := ny * nx
	s := Scene{NY: ny, NX: nx, NT: 1, Lat: make([]float64, n), Lon: make([]float64, n), Time: []float64{1.78e9 + rng.Float64()*1e5}}
	a, b := make([]float64, n), make([]float64, n)
	reasons := make([]uint32, n)
	for y := 0; y < ny; y++ {
		for x := 0; x < nx; x++ {
			k := y*nx + x
			lat := lat0 + 0.07*float64(y) + 0.02*float64(x) + 0.01*rng.NormFloat64()
			lon := lon0 + 0.09*float64(x) - 0.015*float64(y)
			lon = math.Mod(lon+540, 360) - 180 // -180..180
			if east360 && lon < 0 {
				lon += 360
			}
			s.Lat[k], s.Lon[k] = lat, lon
			a[k] = 50 + 40*rng.ExpFloat64()          // an LWP-like field
			b[k] = 1e8 * (1 + rng.NormFloat64()*0.3) // an N_d-like field in m-3: large offset
			switch {
			case k%29 == 0:
				s.Lat[k], s.Lon[k] = math.NaN(), math.NaN() // fill coordinates
			case k%11 == 0:
				a[k] = math.NaN()
			case k%13 == 0:
				reasons[k] = 1 + 2*uint32(k%2)
			}
		}
	}
	return s, reasons, []Field{{Name: "a", Data: a}, {Name: "b", Data: b}}
}

func f64bytes(d []float64) []byte {
	out := make([]byte, 8*len(d))
	for i, v := range d {
		binary.LittleEndian.PutUint64(out[8*i:], math.Float64bits(v))
	}
	return out
}

// TestGriddedAgainstNumpy bins three random swaths that cross 180° (one in 0..360, one
// in -180..180 longitudes) and compares counts, means, standard deviations and screened
// fractions with an independent numpy computation; then checks that every order of
// the swaths and a merge of partial accumulators give bit-identical results.
func TestGriddedAgainstNumpy(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	type sw struct {
		s Scene
		r []uint32
		f []Field
	}
	var sws []sw
	for k, c := range [][3]float64{{-20, 178, 1}, {-19.5, -179.5, 0}, {-21, 175, 0}} {
		s, r, f := randomSwath(rng, 30+k, 40, c[0], c[1], c[2] == 1)
		sws = append(sws, sw{s, r, f})
	}
	grid, err := NewLatLonGrid(0.5)
	if err != nil {
		t.Fatal(err)
	}
	opt := GriddedOptions{Grid: grid, Names: []string{"a", "b"}, Reasons: []string{"r0", "r1"}, POP: "a", POPThreshold: 80}
	run := func(order []int, split bool) *GriddedResult {
		g, _ := NewGridded(opt)
		h, _ := NewGridded(opt)
		for i, k := range order {
			dst := g
			if split && i%2 == 1 {
				dst = h
			}
			if err := dst.Add(sws[k].s, sws[k].r, sws[k].f...); err != nil {
				t.Fatal(err)
			}
		}
		if split {
			if err := g.Merge(h); err != nil {
				t.Fatal(err)
			}
		}
		return g.Result(g.Extent())
	}
	ref := run([]int{0, 1, 2}, false)
	if ref.Extent.NX > 40 || ref.Lon[0] > 180 || ref.Lon[len(ref.Lon)-1] < 180 {
		t.Errorf("extent %+v, lon %g..%g: want the short arc across 180°", ref.Extent, ref.Lon[0], ref.Lon[len(ref.Lon)-1])
	}
	for _, c := range []struct {
		order []int
		split bool
	}{{[]int{2, 1, 0}, false}, {[]int{1, 0, 2}, true}, {[]int{2, 0, 1}, true}} {
		got := run(c.order, c.split)
		for v := range ref.Names {
			for i := range ref.Mean[v] {
				m0, m1, s0, s1 := ref.Mean[v][i], got.Mean[v][i], ref.SD[v][i], got.SD[v][i]
				if math.Float64bits(m0) != math.Float64bits(m1) || math.Float64bits(s0) != math.Float64bits(s1) || ref.Count[v][i] != got.Count[v][i] {
					t.Fatalf("order %v split %v: %s cell %d: mean %v sd %v, first order %v %v", c.order, c.split, ref.Names[v], i, m1, s1, m0, s0)
				}
			}
		}
	}

	// numpy, independently: write the columns and the expected layout.
	dir := t.TempDir()
	var lat, lon, a, b, rs []float64
	for _, s := range sws {
		lat, lon = append(lat, s.s.Lat...), append(lon, s.s.Lon...)
		a, b = append(a, s.f[0].Data...), append(b, s.f[1].Data...)
		for _, r := range s.r {
			rs = append(rs, float64(r))
		}
	}
	for name, d := range map[string][]float64{"lat": lat, "lon": lon, "a": a, "b": b, "r": rs} {
		if err := os.WriteFile(filepath.Join(dir, name+".bin"), f64bytes(d), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	py := `import numpy as np, json, sys, os
d = sys.argv[1]; step = 0.5
L = {k: np.fromfile(os.path.join(d, k + ".bin"), "<f8") for k in ("lat", "lon", "a", "b", "r")}
ok = np.isfinite(L["lat"]) & np.isfinite(L["lon"])
row = np.minimum(np.floor((L["lat"] + 90) / step), 359).astype(int)
col = np.floor(np.mod(L["lon"] + 180, 360) / step).astype(int)
cell = np.where(ok, row * 720 + col, -1)
out = {}
for c in np.unique(cell[ok]):
    m = cell == c
    valid = m & (L["r"] == 0)
    rec = {"columns": int(m.sum()), "r0": int((m & (L["r"].astype(int) & 1 != 0)).sum())}
    for k in ("a", "b"):
        v = L[k][valid]; v = v[np.isfinite(v)]
        rec[k] = [int(v.size), float(v.mean()) if v.size else None, float(v.std(ddof=1)) if v.size > 1 else None]
    pa = L["a"][valid]; pa = pa[np.isfinite(pa)]
    rec["freq"] = float((pa > 80).mean()) if pa.size else None
    out[str(int(c))] = rec
json.dump(out, sys.stdout)`
	outb, err := exec.Command("/usr/bin/python3", "-c", py, dir).Output()
	if err != nil {
		t.Skipf("numpy: %v", err)
	}
	var want map[string]struct {
		Columns int64 `json:"columns"`
		R0      int64 `json:"r0"`
		A, B    []*float64
		Freq    *float64 `json:"freq"`
	}
	if err := json.Unmarshal(outb, &want); err != nil {
		t.Fatal(err)
	}
	e := ref.Extent
	seen := 0
	for y := 0; y < e.NY; y++ {
		for x := 0; x < e.NX; x++ {
			o := y*e.NX + x
			if ref.Columns[o] == 0 {
				continue
			}
			seen++
			key := (e.Y0+y)*grid.NLon + (e.X0+x)%grid.NLon
			w, ok := want[itoa(key)]
			if !ok {
				t.Fatalf("cell %d has %d columns; numpy has none there", key, ref.Columns[o])
			}
			if w.Columns != ref.Columns[o] || math.Abs(ref.ScreenedFraction[0][o]-float64(w.R0)/float64(w.Columns)) > 1e-15 {
				t.Errorf("cell %d: columns %d, r0 fraction %g; numpy %d, %d", key, ref.Columns[o], ref.ScreenedFraction[0][o], w.Columns, w.R0)
			}
			for v, wv := range [][]*float64{w.A, w.B} {
				if int64(*wv[0]) != ref.Count[v][o] {
					t.Errorf("cell %d %s: count %d, numpy %g", key, ref.Names[v], ref.Count[v][o], *wv[0])
				}
				// numpy's pairwise float sums are not exact: agreement to 1e-12 relative
				// for the mean and 1e-9 for the standard deviation (common practice).
				if wv[1] != nil && math.Abs(ref.Mean[v][o]-*wv[1]) > 1e-12*math.Abs(*wv[1]) {
					t.Errorf("cell %d %s: mean %v, numpy %v", key, ref.Names[v], ref.Mean[v][o], *wv[1])
				}
				if wv[2] != nil && math.Abs(ref.SD[v][o]-*wv[2]) > 1e-9*math.Abs(*wv[2]) {
					t.Errorf("cell %d %s: sd %v, numpy %v", key, ref.Names[v], ref.SD[v][o], *wv[2])
				}
			}
			if w.Freq != nil && math.Abs(ref.POPFrequency[o]-*w.Freq) > 1e-15 {
				t.Errorf("cell %d: frequency %v, numpy %v", key, ref.POPFrequency[o], *w.Freq)
			}
		}
	}
	if seen != len(want) || seen < 50 {
		t.Errorf("%d cells with columns, numpy %d", seen, len(want))
	}
}

func itoa(k int) string { b, _ := json.Marshal(k); return string(b) }

// TestLatLonGridIndex: both longitude conventions give the same cell; the poles and
// the antimeridian fall in the documented cells.
func TestLatLonGridIndex(t *testing.T) {
	g, err := NewLatLonGrid(1)
	if err != nil {
		t.Fatal(err)
	}
	if g.Index(10.5, -170.5) != g.Index(10.5, 189.5) {
		t.Error("-170.5 and 189.5 differ")
	}
	if got := g.Index(90, 180); got != 179*360+0 {
		t.Errorf("(90, 180) in cell %d, want row 179 column 0", got)
	}
	if got := g.Index(-90, 179.999); got != 359 {
		t.Errorf("(-90, 179.999) in cell %d", got)
	}
	if g.Index(math.NaN(), 0) != -1 || g.Index(91, 0) != -1 {
		t.Error("bad coordinates placed in a cell")
	}
	if _, err := NewLatLonGrid(0.7); err == nil {
		t.Error("0.7 degrees accepted (180/0.7 is not whole)")
	}
	if _, err := NewGridded(GriddedOptions{Grid: g, Names: []string{"lat"}}); err == nil {
		t.Error("latitude accepted as a diagnostic")
	}
}

// TestGriddedMemoryBounded: memory depends on the cells with columns, not on the
// number of scenes: 200 scenes over the same 3° x 3° area stay within its cells, each
// exact sum within a few limbs.
func TestGriddedMemoryBounded(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 1))
	g, _ := NewLatLonGrid(1)
	acc, _ := NewGridded(GriddedOptions{Grid: g, Names: []string{"a", "b"}})
	for i := 1; i <= 200; i++ {
		s, r, f := randomSwath(rng, 20, 20, -20+rng.Float64(), 10+rng.Float64(), false)
		if err := acc.Add(s, r, f...); err != nil {
			t.Fatal(err)
		}
	}
	cells, most := 0, 0
	for _, k := range acc.Cells() {
		c := acc.Sums(k)
		cells++
		for v := range c.Moments {
			most = max(most, len(c.Moments[v].Sum.limbs), len(c.Moments[v].SumSq.limbs))
		}
	}
	// The swaths reach 1.4° beyond their corner: at most 4 x 4 one-degree cells; values
	// within a factor 2^5 of each other: an exact sum spans at most 3 + 1 + carries
	// limbs, a sum of squares 5 + 1 + carries (derived from ExactSum's layout).
	if cells > 16 || most > 8 {
		t.Errorf("200 scenes: %d cells, largest exact sum %d limbs", cells, most)
	}
}
