package summary

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"sort"
)

// Tiles: the spatial blocks of the sampling errors (doc/science.md#summary-uncertainty).
//
// Each time step of a scene is cut into contiguous tiles of Side × Side cells (a run of
// Side cells along a scene with one row). Every column's contribution to the bin sums is
// first gathered per tile; a finished tile is then folded, as one unit, into
//
//   - the tile (cluster) moments of every bin it touched, from which the standard error
//     of the bin mean follows without assuming independent columns (clusterMoments);
//   - each bootstrap replicate, with one Poisson(1) weight per tile and replicate drawn
//     from a generator seeded by (Options.Seed, the tile's identity), so the weights do
//     not depend on the order in which scenes arrive and two accumulators fed disjoint
//     scenes merge exactly into the one fed all of them (Merge).
//
// Memory: one row of tiles (NX/Side tiles × bins) while a time step is read, plus the
// replicate sums (Bootstrap × bins); never the columns.

// tileSums are the sums of one bin over the columns of one tile.
type tileSums struct {
	n, sp       float64 // columns, Σ POP
	nR, sr, sp2 float64 // columns with a rate, Σ rate, Σ POP over them
}

// clusterMoments are the moments of the tile means of one bin, weighted by the squared
// tile counts (West 1979 weighted update; Chan et al. 1979 pairwise merge [common
// practice]): T tiles, W = Σ n_t², mu = Σ n_t² m_t / W and M2 = Σ n_t² (m_t - mu)².
type clusterMoments struct {
	T         int
	W, mu, M2 float64
}

// add folds in one tile with n columns and mean m.
func (c *clusterMoments) add(n, m float64) {
	c.merge(clusterMoments{T: 1, W: n * n, mu: m})
}

// merge folds in another set of moments.
func (c *clusterMoments) merge(o clusterMoments) {
	if o.T == 0 {
		return
	}
	if c.T == 0 {
		*c = o
		return
	}
	w := c.W + o.W
	d := o.mu - c.mu
	c.mu += d * o.W / w
	c.M2 += o.M2 + d*d*c.W*o.W/w
	c.W = w
	c.T += o.T
}

// se returns the tile (cluster) standard error of the ratio mean xbar = Σ S_t / N of N
// columns in T tiles (Cochran 1977, ratio estimator over clusters [from memory]):
//
//	var(xbar) = T/(T-1) Σ_t n_t² (m_t - xbar)² / N² = T/(T-1) (M2 + W (mu - xbar)²) / N²
//
// NaN for fewer than 2 tiles.
func (c clusterMoments) se(xbar, N float64) float64 {
	if c.T < 2 || !(N > 0) {
		return math.NaN()
	}
	ss := c.M2 + c.W*(c.mu-xbar)*(c.mu-xbar)
	return math.Sqrt(float64(c.T)/float64(c.T-1)*ss) / N
}

// TileSide returns the side, in cells, of the tiles of a scene of ny × nx cells when
// Options.Tile is 0: the rule ℓ = round(N^(1/(d+2))) with N = ny·nx cells and d the
// number of dimensions with more than one cell (at least 1), so ℓ ≈ sqrt(side) for a
// square scene and ℓ ≈ N^(1/3) for a row: the order of the block length that minimises
// the error of block-bootstrap variance estimates for a d-dimensional field (Hall,
// Horowitz & Jing 1995 for d = 1; Nordman, Lahiri & Fridley 2007 and Lahiri 2003 ch. 12
// for spatial blocks; the exponent from memory).
// The rule fixes the order, not the constant: tiles should also be at least the
// decorrelation length of the scene, which Options.Tile sets when it is known.
func TileSide(ny, nx int) int {
	n := float64(ny) * float64(nx)
	d := 0
	if ny > 1 {
		d++
	}
	if nx > 1 {
		d++
	}
	if d == 0 {
		return 1
	}
	return max(1, int(math.Round(math.Pow(n, 1/float64(d+2)))))
}

// mix64 is the SplitMix64 finaliser (Steele, Lea & Flood 2014 [from memory]): a
// bijective hash that spreads neighbouring tile identities over 64 bits.
func mix64(z uint64) uint64 {
	z += 0x9e3779b97f4a7c15
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9
	z = (z ^ (z >> 27)) * 0x94d049bb133111eb
	return z ^ (z >> 31)
}

// tileKey identifies tile (ty, tx) of time step t of the scene with key k.
func tileKey(k uint64, t, ty, tx int) uint64 {
	h := mix64(k)
	h = mix64(h ^ uint64(t))
	h = mix64(h ^ uint64(ty)<<32 ^ uint64(tx))
	return h
}

// tiler gathers the current row of tiles of one scene.
type tiler struct {
	side, ntx, nb int
	buf           []tileSums // ntx × nb
	touched       [][]int32  // per tile: the bins with columns
	w             []float64  // Bootstrap weights of the tile being folded
}

func (a *Accumulator) tilerFor(s Scene) *tiler {
	side := a.opt.Tile
	if side == 0 {
		side = TileSide(s.NY, s.NX)
	}
	ntx := (s.NX + side - 1) / side
	if s.NY == 1 {
		ntx = 1 // one live tile: a row's tiles are folded one after the other
	}
	nb := len(a.bins)
	t := a.tl
	if t == nil || t.side != side || t.ntx != ntx {
		t = &tiler{side: side, ntx: ntx, nb: nb, buf: make([]tileSums, ntx*nb), touched: make([][]int32, ntx), w: make([]float64, a.opt.Bootstrap)}
		a.tl = t
	}
	switch {
	case a.tileSide == 0:
		a.tileSide = side
	case a.tileSide != side:
		a.tileSide = -1
	}
	return t
}

// put adds one binned column to tile tx.
func (t *tiler) put(tx, b int, pop, rate float64, rateOK bool) {
	ts := &t.buf[tx*t.nb+b]
	if ts.n == 0 && ts.nR == 0 {
		t.touched[tx] = append(t.touched[tx], int32(b))
	}
	ts.n++
	ts.sp += pop
	if rateOK {
		ts.nR++
		ts.sr += rate
		ts.sp2 += pop
	}
}

// flushRow folds every tile of the current row (tile row ty of time step step) into
// the accumulator and empties the row.
func (a *Accumulator) flushRow(t *tiler, key uint64, step, ty int) {
	for tx := 0; tx < t.ntx; tx++ {
		a.flushTile(t, key, step, ty, tx, tx)
	}
}

// flushTile folds the tile in slot of the row buffer, tile (ty, tx) of time step step,
// into the bins and the bootstrap replicates, and empties the slot.
func (a *Accumulator) flushTile(t *tiler, key uint64, step, ty, tx, slot int) {
	nb := t.nb
	if len(t.touched[slot]) == 0 {
		return
	}
	a.tiles++
	if a.opt.Bootstrap > 0 {
		if a.pcg == nil {
			a.pcg = rand.NewPCG(0, 0)
			a.rng = rand.New(a.pcg)
		}
		a.pcg.Seed(a.opt.Seed, tileKey(key, step, ty, tx)) // the tile's own stream
		for r := range t.w {
			t.w[r] = a.poisson1(a.rng)
		}
	}
	for _, b32 := range t.touched[slot] {
		b := int(b32)
		ts := &t.buf[slot*nb+b]
		st := &a.bins[b]
		st.tiles++
		if ts.n > 0 {
			st.clP.add(ts.n, ts.sp/ts.n)
		}
		if ts.nR > 0 {
			st.clR.add(ts.nR, ts.sr/ts.nR)
		}
		for r, w := range t.w {
			if w == 0 {
				continue
			}
			bb := &a.boot[r*nb+b]
			bb.w += w * ts.n
			bb.wp += w * ts.sp
			bb.wR += w * ts.nR
			bb.wr += w * ts.sr
			bb.wpr += w * ts.sp2
		}
		*ts = tileSums{}
	}
	t.touched[slot] = t.touched[slot][:0]
}

// Merge adds everything gathered by o to a, as if a had been fed o's scenes too: the
// bins, counts, surface fractions, tile moments and bootstrap replicate sums. Because
// the tile weights depend only on (Seed, tile identity), merging accumulators fed
// disjoint scenes with distinct keys gives the statistics of one accumulator fed all
// of them (equal up to the rounding of the sums' order). a and o must have equal bin
// edges, Bootstrap, Seed, Tile and QCMask; selection options are a's.
func (a *Accumulator) Merge(o *Accumulator) error {
	if !slices.Equal(a.opt.LWPEdges, o.opt.LWPEdges) || !slices.Equal(a.opt.NdEdges, o.opt.NdEdges) {
		return fmt.Errorf("summary: Merge: the accumulators have different bin edges")
	}
	if a.opt.Bootstrap != o.opt.Bootstrap || a.opt.Seed != o.opt.Seed || a.opt.Tile != o.opt.Tile || a.opt.QCMask != o.opt.QCMask {
		return fmt.Errorf("summary: Merge: bootstrap (%d, seed %d, tile %d, QC mask %d) differs from (%d, seed %d, tile %d, QC mask %d)",
			a.opt.Bootstrap, a.opt.Seed, a.opt.Tile, a.opt.QCMask, o.opt.Bootstrap, o.opt.Seed, o.opt.Tile, o.opt.QCMask)
	}
	for b := range a.bins {
		a.bins[b].merge(&o.bins[b])
	}
	for i := range a.boot {
		x, y := &a.boot[i], o.boot[i]
		x.w += y.w
		x.wp += y.wp
		x.wR += y.wR
		x.wr += y.wr
		x.wpr += y.wpr
	}
	for i := range a.surf {
		a.surf[i].merge(o.surf[i])
	}
	for i := range a.surfZ {
		a.surfZ[i].merge(o.surfZ[i])
	}
	a.surfA.merge(o.surfA)
	a.haveSurf = a.haveSurf || o.haveSurf
	a.haveBase = a.haveBase || o.haveBase
	a.havePOPErr = a.havePOPErr || o.havePOPErr
	a.haveRateErr = a.haveRateErr || o.haveRateErr
	c, d := &a.counts, o.counts
	c.Seen += d.Seen
	c.Selected += d.Selected
	c.Masked += d.Masked
	c.Invalid += d.Invalid
	c.Valid += d.Valid
	c.OutOfRange += d.OutOfRange
	a.tiles += o.tiles
	a.adds += o.adds
	switch {
	case o.tileSide == 0:
	case a.tileSide == 0:
		a.tileSide = o.tileSide
	case a.tileSide != o.tileSide:
		a.tileSide = -1
	}
	return nil
}

// merge folds o into st (Chan et al. 1979 pairwise update of the Welford moments).
func (st *binStats) merge(o *binStats) {
	mergeMoments(&st.n, &st.meanP, &st.m2P, o.n, o.meanP, o.m2P)
	mergeMoments(&st.nR, &st.meanR, &st.m2R, o.nR, o.meanR, o.m2R)
	st.sumPR += o.sumPR
	st.clP.merge(o.clP)
	st.clR.merge(o.clR)
	st.tiles += o.tiles
	st.nEP += o.nEP
	st.sEP += o.sEP
	st.nER += o.nER
	st.sER += o.sER
}

func mergeMoments(n *int, mean, m2 *float64, on int, omean, om2 float64) {
	if on == 0 {
		return
	}
	if *n == 0 {
		*n, *mean, *m2 = on, omean, om2
		return
	}
	na, nb := float64(*n), float64(on)
	d := omean - *mean
	*mean += d * nb / (na + nb)
	*m2 += om2 + d*d*na*nb/(na+nb)
	*n += on
}

func (f *fluxSum) merge(o fluxSum) { f.n += o.n; f.sfc += o.sfc; f.cb += o.cb }

// quantile returns the q-quantile of the sorted values v by linear interpolation between
// order statistics (Hyndman & Fan 1996 definition 7 [from memory]); NaN for no values.
func quantile(v []float64, q float64) float64 {
	if len(v) == 0 {
		return math.NaN()
	}
	h := q * float64(len(v)-1)
	lo := int(math.Floor(h))
	if lo >= len(v)-1 {
		return v[len(v)-1]
	}
	return v[lo] + (h-float64(lo))*(v[lo+1]-v[lo])
}

// percentileInterval returns the central level interval of the replicate values
// (Efron's percentile interval [common practice]); v is sorted in place.
func percentileInterval(v []float64, level float64) (lo, hi float64) {
	sort.Float64s(v)
	a := (1 - level) / 2
	return quantile(v, a), quantile(v, 1-a)
}

// State is everything an Accumulator has gathered, in flat exported slices, for
// writing partial summaries to a file and merging them later (FromState, Merge). Bins
// are row-major over (LWP bin, N_d bin); Boot is replicate-major (Bootstrap × bins × 5:
// Σw n, Σw POP, Σw n_rate, Σw rate, Σw POP over the rate columns); Flux holds
// (n, Σ R_sfc, Σ R_CB) for all LWP, then per LWP bin, then per cloud-base height bin.
type State struct {
	Options Options
	Counts  Counts
	// per bin, 20 values: n, mean POP, M2 POP, n rate, mean rate, M2 rate, Σ POP over the
	// rate columns, tiles, then (T, W, mu, M2) of the POP and of the rate tile moments,
	// then n and Σ of the POP and of the rate retrieval errors.
	Bins                                           []float64
	Boot                                           []float64
	Flux                                           []float64
	HaveSurface, HaveBase, HaveErrPOP, HaveErrRate bool
	TileSide, Tiles                                int
	Adds                                           uint64
}

// binWidth is the number of State.Bins values per bin.
const binWidth = 20

// State returns a copy of what a has gathered.
func (a *Accumulator) State() State {
	s := State{Options: a.opt, Counts: a.counts, HaveSurface: a.haveSurf, HaveBase: a.haveBase,
		HaveErrPOP: a.havePOPErr, HaveErrRate: a.haveRateErr, TileSide: a.tileSide, Tiles: a.tiles, Adds: a.adds}
	for _, b := range a.bins {
		s.Bins = append(s.Bins, float64(b.n), b.meanP, b.m2P, float64(b.nR), b.meanR, b.m2R, b.sumPR, float64(b.tiles),
			float64(b.clP.T), b.clP.W, b.clP.mu, b.clP.M2, float64(b.clR.T), b.clR.W, b.clR.mu, b.clR.M2,
			float64(b.nEP), b.sEP, float64(b.nER), b.sER)
	}
	for _, b := range a.boot {
		s.Boot = append(s.Boot, b.w, b.wp, b.wR, b.wr, b.wpr)
	}
	for _, f := range append(append([]fluxSum{a.surfA}, a.surf...), a.surfZ...) {
		s.Flux = append(s.Flux, float64(f.n), f.sfc, f.cb)
	}
	return s
}

// FromState returns an Accumulator holding s, which later Add and Merge calls extend.
// It returns an error when the lengths do not fit s.Options.
func FromState(s State) (*Accumulator, error) {
	a, err := New(s.Options)
	if err != nil {
		return nil, err
	}
	nb := len(a.bins)
	if len(s.Bins) != nb*binWidth || len(s.Boot) != len(a.boot)*5 || len(s.Flux) != 3*(1+len(a.surf)+len(a.surfZ)) {
		return nil, fmt.Errorf("summary: FromState: %d bin, %d bootstrap and %d flux values; the options need %d, %d and %d",
			len(s.Bins), len(s.Boot), len(s.Flux), nb*binWidth, len(a.boot)*5, 3*(1+len(a.surf)+len(a.surfZ)))
	}
	for k := range a.bins {
		v := s.Bins[k*binWidth : (k+1)*binWidth]
		a.bins[k] = binStats{n: int(v[0]), meanP: v[1], m2P: v[2], nR: int(v[3]), meanR: v[4], m2R: v[5], sumPR: v[6], tiles: int(v[7]),
			clP: clusterMoments{T: int(v[8]), W: v[9], mu: v[10], M2: v[11]}, clR: clusterMoments{T: int(v[12]), W: v[13], mu: v[14], M2: v[15]},
			nEP: int(v[16]), sEP: v[17], nER: int(v[18]), sER: v[19]}
	}
	for k := range a.boot {
		v := s.Boot[k*5 : (k+1)*5]
		a.boot[k] = bootBin{w: v[0], wp: v[1], wR: v[2], wr: v[3], wpr: v[4]}
	}
	flux := func(i int) fluxSum { return fluxSum{n: int(s.Flux[3*i]), sfc: s.Flux[3*i+1], cb: s.Flux[3*i+2]} }
	a.surfA = flux(0)
	for i := range a.surf {
		a.surf[i] = flux(1 + i)
	}
	for i := range a.surfZ {
		a.surfZ[i] = flux(1 + len(a.surf) + i)
	}
	a.counts, a.haveSurf, a.haveBase, a.havePOPErr, a.haveRateErr = s.Counts, s.HaveSurface, s.HaveBase, s.HaveErrPOP, s.HaveErrRate
	a.tileSide, a.tiles, a.adds = s.TileSide, s.Tiles, s.Adds
	return a, nil
}
