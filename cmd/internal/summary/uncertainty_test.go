package summary

import (
	"encoding/binary"
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"

	"github.com/warmrain/warmrain/grid/gridtest"
)

// smoothField returns ny*nx values of a stationary Gaussian field with unit variance and
// correlation that falls to zero beyond 2r cells: white noise averaged over a
// (2r+1) × (2r+1) box, periodic at the edges [derived: the box mean of independent
// N(0,1) values has variance 1/(2r+1)², rescaled here to 1].
func smoothField(rng *rand.Rand, ny, nx, r int) []float64 {
	w := make([]float64, ny*nx)
	for i := range w {
		w[i] = rng.NormFloat64()
	}
	L := 2*r + 1
	tmp := make([]float64, ny*nx)
	for y := 0; y < ny; y++ {
		for x := 0; x < nx; x++ {
			var s float64
			for d := -r; d <= r; d++ {
				s += w[y*nx+(x+d+nx)%nx]
			}
			tmp[y*nx+x] = s
		}
	}
	out := make([]float64, ny*nx)
	for y := 0; y < ny; y++ {
		for x := 0; x < nx; x++ {
			var s float64
			for d := -r; d <= r; d++ {
				s += tmp[((y+d+ny)%ny)*nx+x]
			}
			out[y*nx+x] = s / float64(L)
		}
	}
	return out
}

// normCDF is Φ(z) (Abramowitz & Stegun 7.1 through math.Erfc, derived).
func normCDF(z float64) float64 { return 0.5 * math.Erfc(-z/math.Sqrt2) }

// correlatedScene fills nt independent time steps of ny × nx columns: N_d log-uniform
// from 10 to 1000 cm-3 through Φ of one smooth field, and X = 0.05 (N_d/100 cm-3)^-s
// exp(σ g - σ²/2) with g a second, independent smooth field, so that E[X | N_d] =
// 0.05 (N_d/100 cm-3)^-s and the true susceptibility is s [derived: E[exp(σg - σ²/2)] = 1
// for g ~ N(0,1), independent of N_d]. LWP is 100 g m-2 everywhere (one LWP bin).
func correlatedScene(rng *rand.Rand, nt, ny, nx, r int, s, sigma float64) (Scene, *Columns) {
	n := nt * ny * nx
	c := &Columns{LWP: Field{Data: make([]float64, n)}, Nd: Field{Data: make([]float64, n)}, POP: Field{Data: make([]float64, n)}}
	for t := 0; t < nt; t++ {
		g1, g2 := smoothField(rng, ny, nx, r), smoothField(rng, ny, nx, r)
		for k := range g1 {
			i := t*ny*nx + k
			nd := 10e6 * math.Pow(100, normCDF(g1[k]))
			c.LWP.Data[i] = 0.1
			c.Nd.Data[i] = nd
			c.POP.Data[i] = 0.05 * math.Pow(nd/100e6, -s) * math.Exp(sigma*g2[k]-sigma*sigma/2)
		}
	}
	return Scene{NY: ny, NX: nx, NT: nt}, c
}

// TestTileIntervalsCoverTruth checks the tile bootstrap on spatially correlated fields
// whose susceptibility is known: its 95 % percentile intervals cover the truth in about
// 95 % of independent scenes, and they are wider than the intervals of the column
// (i.i.d.) bootstrap, which ignore the correlation.
func TestTileIntervalsCoverTruth(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	t.Parallel()
	const (
		trials = 80
		truth  = 0.7
		B      = 200
	)
	opt := Options{LWPEdges: []float64{0.05, 0.2}, NdEdges: LogEdges(10e6, 1000e6, 8), MinCount: 50, Bootstrap: B}
	rng := rand.New(rand.NewPCG(11, 12))
	var covTile, covIID, covReg int
	var wTile, wIID float64
	// one bin mean across the independent scenes: its spread, and the mean of its
	// tile and i.i.d. standard errors
	var means []float64
	var seTile2, seIID2 float64
	const probe = 4 // N_d bin 56-100 cm-3
	for k := 0; k < trials; k++ {
		sc, c := correlatedScene(rng, 3, 80, 80, 2, truth, 1.0)
		run := func(tile int) Slope {
			o := opt
			o.Tile, o.Seed = tile, uint64(k+1)
			a, err := New(o)
			if err != nil {
				t.Fatal(err)
			}
			if err := a.Add(sc, c); err != nil {
				t.Fatal(err)
			}
			r := a.Result()
			if tile == 0 {
				means = append(means, r.Joint.MeanPOP[probe])
				seTile2 += r.Joint.TileSEPOP[probe] * r.Joint.TileSEPOP[probe]
				seIID2 += r.Joint.SEPOP[probe] * r.Joint.SEPOP[probe]
			}
			return r.SPOP[0]
		}
		tl, iid := run(0), run(1) // 0: automatic side, TileSide(80, 80) = 9 cells
		if math.IsNaN(tl.CILow) || math.IsNaN(iid.CILow) {
			t.Fatalf("trial %d: no interval (tile %v, iid %v)", k, tl, iid)
		}
		if tl.CILow <= truth && truth <= tl.CIHigh {
			covTile++
		}
		if iid.CILow <= truth && truth <= iid.CIHigh {
			covIID++
		}
		if math.Abs(tl.S-truth) <= 1.96*tl.SE {
			covReg++
		}
		wTile += tl.CIHigh - tl.CILow
		wIID += iid.CIHigh - iid.CILow
	}
	// The tile standard error of a bin mean matches the spread of that mean over
	// independent scenes; s/sqrt(n) does not. 80 scenes give the spread within about
	// 8 % (1/sqrt(2·79), common practice); the bounds allow for the tile error's own
	// small bias with a few hundred tiles.
	sdMean := sd(means)
	qt, qi := math.Sqrt(seTile2/trials)/sdMean, math.Sqrt(seIID2/trials)/sdMean
	t.Logf("bin mean POP over %d scenes: sd %.5f; rms tile SE / sd = %.3f, rms i.i.d. SE / sd = %.3f", trials, sdMean, qt, qi)
	if qt < 0.75 || qt > 1.3 {
		t.Errorf("tile standard error of the bin mean is %.3f of its spread over independent scenes, want about 1", qt)
	}
	if qi > 0.7 {
		t.Errorf("i.i.d. standard error is %.3f of the spread: the fields are not correlated enough for this test", qi)
	}
	ct, ci := float64(covTile)/trials, float64(covIID)/trials
	t.Logf("coverage of 95%% intervals over %d scenes: tile %.3f, column (i.i.d.) %.3f, regression ±1.96 SE %.3f; mean width tile %.4f, i.i.d. %.4f",
		trials, ct, ci, float64(covReg)/trials, wTile/trials, wIID/trials)
	// Nominal 0.95; with 80 trials the binomial standard deviation is 0.024, and a
	// percentile interval from a few hundred tiles undercovers slightly [common
	// practice]: 0.85 leaves four standard deviations.
	if ct < 0.85 {
		t.Errorf("tile intervals cover the true susceptibility in %.3f of the scenes, want about 0.95 (>= 0.85)", ct)
	}
	if wTile < 1.5*wIID {
		t.Errorf("tile intervals (mean width %.4f) are not clearly wider than the i.i.d. ones (%.4f) on correlated fields", wTile/trials, wIID/trials)
	}
	if ci >= ct {
		t.Errorf("i.i.d. intervals cover %.3f, the tile ones %.3f: the correlation should make the i.i.d. ones undercover", ci, ct)
	}
}

// TestTileIntervalsOnIndependentColumns: without spatial correlation the tile and
// column bootstraps estimate the same spread (a block bootstrap is consistent for
// independent data too (Künsch 1989, Lahiri 2003 [from memory])).
func TestTileIntervalsOnIndependentColumns(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	t.Parallel()
	rng := rand.New(rand.NewPCG(3, 4))
	sc, c := correlatedScene(rng, 2, 120, 120, 0, 0.7, 1.0) // r = 0: independent columns
	opt := Options{LWPEdges: []float64{0.05, 0.2}, NdEdges: LogEdges(10e6, 1000e6, 8), MinCount: 50, Bootstrap: 400, Seed: 5}
	se := map[int]float64{}
	for _, tile := range []int{0, 1} {
		o := opt
		o.Tile = tile
		a, _ := New(o)
		if err := a.Add(sc, c); err != nil {
			t.Fatal(err)
		}
		se[tile] = a.Result().SPOP[0].BootSE
	}
	// 400 replicates: each SE within about 3.5 % [common practice, 1/sqrt(2B)]; the two
	// share the data, so 20 % is generous.
	if q := se[0] / se[1]; q < 0.8 || q > 1.25 {
		t.Errorf("independent columns: tile bootstrap SE %.5f vs column bootstrap SE %.5f (ratio %.3f), want within 20%%", se[0], se[1], q)
	}
}

// TestBinErrorsAgainstNumpy compares the bin means, their i.i.d. and tile standard
// errors, the effective sample sizes and the mean retrieval errors with an independent
// numpy computation over the same columns (the tile standard error as the cluster
// variance of a ratio mean, Cochran 1977 [from memory]).
func TestBinErrorsAgainstNumpy(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	t.Parallel()
	const nt, ny, nx, tile = 2, 37, 45, 7 // 7 does not divide 37 or 45: partial edge tiles
	rng := rand.New(rand.NewPCG(21, 22))
	sc, c := correlatedScene(rng, nt, ny, nx, 2, 0.7, 0.8)
	n := nt * ny * nx
	c.Rate = Field{Data: make([]float64, n)}
	c.POPError = Field{Data: make([]float64, n)}
	c.RateError = Field{Data: make([]float64, n)}
	for i := 0; i < n; i++ {
		c.LWP.Data[i] = logUniform(rng, 0.03, 0.3)
		c.Rate.Data[i] = c.POP.Data[i] * 1e-5 * (1 + rng.Float64())
		c.POPError.Data[i] = 0.1 * c.POP.Data[i] * rng.Float64()
		c.RateError.Data[i] = 0.3 * c.Rate.Data[i]
		if i%17 == 0 {
			c.Rate.Data[i] = math.NaN()
		}
		if i%23 == 0 {
			c.POPError.Data[i] = math.NaN()
		}
	}
	opt := Options{LWPEdges: LogEdges(0.03, 0.3, 3), NdEdges: LogEdges(10e6, 1000e6, 4), Tile: tile}
	a, err := New(opt)
	if err != nil {
		t.Fatal(err)
	}
	if err := a.Add(sc, c); err != nil {
		t.Fatal(err)
	}
	res := a.Result()

	dir := t.TempDir()
	path := filepath.Join(dir, "cols.bin")
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	for _, d := range [][]float64{c.LWP.Data, c.Nd.Data, c.POP.Data, c.Rate.Data, c.POPError.Data, c.RateError.Data} {
		if err := binary.Write(f, binary.LittleEndian, d); err != nil {
			t.Fatal(err)
		}
	}
	f.Close()
	edges, _ := json.Marshal(map[string]any{"lwp": opt.LWPEdges, "nd": opt.NdEdges})
	const script = `
import sys, json, numpy as np
path, nt, ny, nx, tile, edges = sys.argv[1], int(sys.argv[2]), int(sys.argv[3]), int(sys.argv[4]), int(sys.argv[5]), json.loads(sys.argv[6])
n = nt*ny*nx
lwp, nd, pop, rate, epop, erate = np.fromfile(path, dtype='<f8').reshape(6, n)
t, k = np.divmod(np.arange(n), ny*nx)
y, x = np.divmod(k, nx)
tid = (t*1000 + y//tile)*1000 + x//tile
le, ne = np.array(edges['lwp']), np.array(edges['nd'])
i = np.searchsorted(le, lwp, side='right') - 1
j = np.searchsorted(ne, nd, side='right') - 1
nl, nn = len(le)-1, len(ne)-1
out = {}
def stats(v, sel):
    v = v[sel]; ids = tid[sel]; N = len(v)
    if N == 0: return [0, None, None, None, None]
    m = v.mean()
    se = v.std(ddof=1)/np.sqrt(N) if N > 1 else None
    u, inv = np.unique(ids, return_inverse=True)
    S = np.bincount(inv, weights=v); nt_ = np.bincount(inv).astype(float)
    T = len(u)
    tse = np.sqrt(T/(T-1)*np.sum((S - m*nt_)**2))/N if T > 1 else None
    neff = None if (se is None or tse is None) else float(min(N, N*(se/tse)**2))
    return [N, float(m), se, tse, neff]
for a in range(nl):
    for b in range(nn):
        sel = (i == a) & (j == b)
        okr = sel & np.isfinite(rate)
        oke = sel & np.isfinite(epop)
        oker = okr & np.isfinite(erate)
        out['%d,%d' % (a, b)] = {'pop': stats(pop, sel), 'rate': stats(rate, okr),
            'epop': float(epop[oke].mean()) if oke.any() else None,
            'erate': float(erate[oker].mean()) if oker.any() else None}
print(json.dumps(out))
`
	out := gridtest.Python(t, script, path, "2", "37", "45", "7", string(edges))
	var want map[string]struct {
		POP, Rate   []*float64
		EPOP, ERate *float64
	}
	if err := json.Unmarshal([]byte(out), &want); err != nil {
		t.Fatal(err)
	}
	close := func(what string, got float64, w *float64) {
		t.Helper()
		if w == nil {
			if !math.IsNaN(got) {
				t.Errorf("%s = %g, numpy has none", what, got)
			}
			return
		}
		if !(math.Abs(got-*w) <= 1e-9*math.Abs(*w)+1e-300) {
			t.Errorf("%s = %.12g, numpy %.12g", what, got, *w)
		}
	}
	jt := &res.Joint
	checked := 0
	for i := 0; i < jt.NLWP; i++ {
		for j := 0; j < jt.NNd; j++ {
			b := jt.Index(i, j)
			w := want[fmtKey(i, j)]
			if int(*w.POP[0]) != jt.Count[b] || int(*w.Rate[0]) != jt.CountRate[b] {
				t.Fatalf("bin %d,%d: counts %d/%d, numpy %v/%v", i, j, jt.Count[b], jt.CountRate[b], *w.POP[0], *w.Rate[0])
			}
			if jt.Count[b] == 0 {
				continue
			}
			checked++
			close("mean POP", jt.MeanPOP[b], w.POP[1])
			close("SE POP", jt.SEPOP[b], w.POP[2])
			close("tile SE POP", jt.TileSEPOP[b], w.POP[3])
			close("n_eff POP", jt.NEffPOP[b], w.POP[4])
			close("mean rate", jt.MeanRate[b], w.Rate[1])
			close("SE rate", jt.SERate[b], w.Rate[2])
			close("tile SE rate", jt.TileSERate[b], w.Rate[3])
			close("n_eff rate", jt.NEffRate[b], w.Rate[4])
			close("mean POP error", jt.ErrPOP[b], w.EPOP)
			close("mean rate error", jt.ErrRate[b], w.ERate)
		}
	}
	if checked < 8 {
		t.Fatalf("only %d bins with columns", checked)
	}
	if !jt.HaveErrPOP || !jt.HaveErrRate {
		t.Error("retrieval errors given but not reported")
	}
}

func fmtKey(i, j int) string { return string(rune('0'+i)) + "," + string(rune('0'+j)) }

// TestMergeEqualsOnePass: two accumulators fed disjoint scenes, merged, give the
// statistics of one accumulator fed both (the tile weights depend only on the seed and
// the scene key, not on the order or the accumulator).
func TestMergeEqualsOnePass(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(31, 32))
	s1, c1 := correlatedScene(rng, 2, 50, 60, 2, 0.7, 1)
	s2, c2 := correlatedScene(rng, 3, 50, 60, 2, 0.7, 1)
	s1.Key, s2.Key = 101, 202
	opt := Options{LWPEdges: []float64{0.05, 0.2}, NdEdges: LogEdges(10e6, 1000e6, 6), Bootstrap: 60, Seed: 9, MinCount: 20}
	one, _ := New(opt)
	// the other order in the single pass: order must not matter
	if err := one.Add(s2, c2); err != nil {
		t.Fatal(err)
	}
	if err := one.Add(s1, c1); err != nil {
		t.Fatal(err)
	}
	a, _ := New(opt)
	b, _ := New(opt)
	if err := a.Add(s1, c1); err != nil {
		t.Fatal(err)
	}
	if err := b.Add(s2, c2); err != nil {
		t.Fatal(err)
	}
	if err := a.Merge(b); err != nil {
		t.Fatal(err)
	}
	r1, r2 := one.Result(), a.Result()
	rel := func(x, y float64) bool {
		return x == y || (math.IsNaN(x) && math.IsNaN(y)) || math.Abs(x-y) <= 1e-12*math.Abs(y)
	}
	for k := range r1.Joint.Count {
		if r1.Joint.Count[k] != r2.Joint.Count[k] || r1.Joint.Tiles[k] != r2.Joint.Tiles[k] ||
			!rel(r1.Joint.MeanPOP[k], r2.Joint.MeanPOP[k]) || !rel(r1.Joint.TileSEPOP[k], r2.Joint.TileSEPOP[k]) || !rel(r1.Joint.SEPOP[k], r2.Joint.SEPOP[k]) {
			t.Errorf("bin %d: one pass n=%d mean %g tileSE %g; merged n=%d mean %g tileSE %g", k,
				r1.Joint.Count[k], r1.Joint.MeanPOP[k], r1.Joint.TileSEPOP[k], r2.Joint.Count[k], r2.Joint.MeanPOP[k], r2.Joint.TileSEPOP[k])
		}
	}
	x, y := r1.SPOP[0], r2.SPOP[0]
	if !rel(x.S, y.S) || !rel(x.BootSE, y.BootSE) || !rel(x.CILow, y.CILow) || !rel(x.CIHigh, y.CIHigh) || x.BootN != y.BootN {
		t.Errorf("S_POP one pass %+v, merged %+v", x, y)
	}
	if r1.Counts != r2.Counts || r1.Tiles != r2.Tiles {
		t.Errorf("counts %+v tiles %d vs %+v tiles %d", r1.Counts, r1.Tiles, r2.Counts, r2.Tiles)
	}
	// Through State and FromState (a partial summary written and read back) the merge
	// is the same.
	pa, _ := New(opt)
	if err := pa.Add(s1, c1); err != nil {
		t.Fatal(err)
	}
	back, err := FromState(pa.State())
	if err != nil {
		t.Fatal(err)
	}
	if err := back.Merge(b); err != nil {
		t.Fatal(err)
	}
	if r3 := back.Result(); r3.SPOP[0] != r2.SPOP[0] || r3.Counts != r2.Counts || r3.Joint.TileSEPOP[3] != r2.Joint.TileSEPOP[3] {
		t.Errorf("through State: S_POP %+v, want %+v", r3.SPOP[0], r2.SPOP[0])
	}
	if _, err := FromState(State{Options: opt, Bins: []float64{1}}); err == nil {
		t.Error("FromState accepted a state of the wrong length")
	}
	bad := opt
	bad.Seed = 10
	c, _ := New(bad)
	if err := a.Merge(c); err == nil {
		t.Error("merging accumulators with different seeds succeeded")
	}
}

func TestTileSideRule(t *testing.T) {
	t.Parallel()
	// ℓ = round(N^(1/(d+2))) [Lahiri 2003 ch. 12 order, from memory]
	for _, c := range []struct{ ny, nx, want int }{
		{1000, 1000, 32}, {80, 80, 9}, {1, 1000000, 100}, {1, 1, 1}, {100, 1, 5}, {406, 270, 18},
	} {
		if got := TileSide(c.ny, c.nx); got != c.want {
			t.Errorf("TileSide(%d, %d) = %d, want %d", c.ny, c.nx, got, c.want)
		}
	}
}
