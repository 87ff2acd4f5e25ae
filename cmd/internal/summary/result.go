package summary

import "math"

// Joint holds the per-bin statistics, flat and row-major over (LWP bin i, N_d bin j):
// element i*NNd + j (see Index).
type Joint struct {
	NLWP, NNd int
	Count     []int     // valid columns in the bin
	MeanPOP   []float64 // mean drizzle probability (1); NaN for an empty bin
	SEPOP     []float64 // standard error of MeanPOP, s/sqrt(n); NaN for n < 2
	CountRate []int     // columns in the bin with a finite drizzle rate
	MeanRate  []float64 // mean cloud-base drizzle rate (kg m-2 s-1); NaN when CountRate = 0
	SERate    []float64 // standard error of MeanRate; NaN for CountRate < 2
	// MeanCond is the conditional rate I = MeanRate / (mean POP over the same columns),
	// kg m-2 s-1: the mean rate of the precipitating part (Terai et al. 2012 [from memory]);
	// with rates R̄ = POP × I per column it is the POP-weighted mean of the columns'
	// intensities. NaN when the bin's expected drizzling columns n × mean POP are fewer
	// than Options.MinDrizzling.
	MeanCond []float64
	// Tiles is the number of tiles with columns in the bin (doc/science.md#summary-uncertainty).
	Tiles []int
	// TileSEPOP and TileSERate are the standard errors of MeanPOP and MeanRate with the
	// tiles, not the columns, as independent units (cluster standard errors): they hold
	// under spatial correlation shorter than a tile. NaN for fewer than 2 tiles.
	TileSEPOP, TileSERate []float64
	// NEffPOP and NEffRate are the effective sample sizes s²/TileSE², the number of
	// independent columns that would give the tile standard error, at most the count.
	NEffPOP, NEffRate []float64
	// ErrPOP and ErrRate are the mean retrieval standard errors of the columns in the bin
	// (from the processed files' <name>_standard_error); NaN when absent.
	ErrPOP, ErrRate []float64
	// HaveErrPOP and HaveErrRate say whether any scene had those retrieval errors.
	HaveErrPOP, HaveErrRate bool
}

// Index returns the flat index of bin (i, j).
func (j *Joint) Index(iLWP, jNd int) int { return iLWP*j.NNd + jNd }

// Slope is one susceptibility estimate, S = -d ln X / d ln N_d, for one LWP bin.
type Slope struct {
	S      float64 // susceptibility (1); NaN when fewer than MinBins N_d bins qualify
	SE     float64 // regression standard error of S (1)
	BootSE float64 // bootstrap standard error of S (1); NaN without bootstrap
	BootN  int     // bootstrap replicates in which the slope was defined
	// CILow and CIHigh bound the bootstrap percentile confidence interval of S at
	// Options.CILevel; NaN without bootstrap or with fewer than 20 defined replicates.
	CILow, CIHigh float64
	Bins          int // N_d bins used in the fit
	Columns       int // columns in those bins
}

// Fraction is the flux-weighted fraction of drizzle reaching the surface: a ratio of
// sums of rates, not a mean of per-column ratios.
type Fraction struct {
	Columns           int     // columns with both rates finite and a cloud-base rate > 0
	SurfaceSum, CBSum float64 // Σ R_sfc and Σ R_CB over those columns, kg m-2 s-1
	Value             float64 // SurfaceSum / CBSum; NaN when Columns == 0
}

func newFraction(f fluxSum) Fraction {
	r := Fraction{Columns: f.n, SurfaceSum: f.sfc, CBSum: f.cb, Value: math.NaN()}
	if f.n > 0 && f.cb > 0 {
		r.Value = f.sfc / f.cb
	}
	return r
}

// Result is the summary of everything added to an Accumulator.
type Result struct {
	LWP, Nd Axis // bins: LWP in kg m-2, N_d in m-3
	Joint   Joint
	// Susceptibilities per LWP bin (len LWP.N()): of POP, of the mean rate, and of the
	// conditional rate I.
	SPOP, SRate, SCond []Slope
	// Surface is the flux-weighted fraction of drizzle reaching the surface, Σ R_sfc /
	// Σ R_CB over the columns with both rates finite and R_CB > 0: overall (any LWP,
	// including outside the bins) and per LWP bin. HaveSurface is false when no scene
	// had a surface drizzle rate (older processed files).
	Surface      Fraction
	SurfaceByLWP []Fraction
	HaveSurface  bool
	// SurfaceByBase is the same fraction per cloud-base height bin (BaseHeightEdges);
	// HaveBase is false when no scene had a cloud-base height.
	SurfaceByBase []Fraction
	HaveBase      bool
	Counts        Counts
	Options       Options // the options in use, defaults filled in
	// TileSide is the side of the tiles in cells (-1 when scenes of different sizes got
	// different automatic sides); Tiles the number of tiles with binned columns.
	TileSide, Tiles int
}

// Result computes the statistics gathered so far. It may be called more than once and
// between calls to Add.
func (a *Accumulator) Result() *Result {
	nl, nn := a.lwp.N(), a.nd.N()
	nb := nl * nn
	r := &Result{
		LWP: a.lwp, Nd: a.nd, Counts: a.counts, Options: a.opt, TileSide: a.tileSide, Tiles: a.tiles,
		Joint: Joint{
			NLWP: nl, NNd: nn,
			Count: make([]int, nb), MeanPOP: make([]float64, nb), SEPOP: make([]float64, nb),
			CountRate: make([]int, nb), MeanRate: make([]float64, nb), SERate: make([]float64, nb),
			MeanCond: make([]float64, nb), Tiles: make([]int, nb),
			TileSEPOP: make([]float64, nb), TileSERate: make([]float64, nb), NEffPOP: make([]float64, nb), NEffRate: make([]float64, nb),
			ErrPOP: make([]float64, nb), ErrRate: make([]float64, nb), HaveErrPOP: a.havePOPErr, HaveErrRate: a.haveRateErr,
		},
	}
	r.LWP.Edges = append([]float64(nil), a.lwp.Edges...)
	r.Nd.Edges = append([]float64(nil), a.nd.Edges...)
	jt := &r.Joint
	nan := math.NaN()
	for b, st := range a.bins {
		jt.Count[b], jt.CountRate[b] = st.n, st.nR
		jt.MeanPOP[b], jt.SEPOP[b], jt.MeanRate[b], jt.SERate[b], jt.MeanCond[b] = nan, nan, nan, nan, nan
		if st.n > 0 {
			jt.MeanPOP[b] = st.meanP
		}
		if st.n > 1 {
			jt.SEPOP[b] = math.Sqrt(st.m2P / float64(st.n-1) / float64(st.n))
		}
		if st.nR > 0 {
			jt.MeanRate[b] = st.meanR
			if float64(st.n)*st.meanP >= a.opt.MinDrizzling && st.sumPR > 0 {
				jt.MeanCond[b] = st.meanR * float64(st.nR) / st.sumPR
			}
		}
		if st.nR > 1 {
			jt.SERate[b] = math.Sqrt(st.m2R / float64(st.nR-1) / float64(st.nR))
		}
		jt.Tiles[b] = st.tiles
		jt.TileSEPOP[b] = st.clP.se(st.meanP, float64(st.n))
		jt.TileSERate[b] = st.clR.se(st.meanR, float64(st.nR))
		jt.NEffPOP[b] = effN(st.n, jt.SEPOP[b], jt.TileSEPOP[b])
		jt.NEffRate[b] = effN(st.nR, jt.SERate[b], jt.TileSERate[b])
		jt.ErrPOP[b], jt.ErrRate[b] = nan, nan
		if st.nEP > 0 {
			jt.ErrPOP[b] = st.sEP / float64(st.nEP)
		}
		if st.nER > 0 {
			jt.ErrRate[b] = st.sER / float64(st.nER)
		}
	}

	// point estimates
	lnN := make([]float64, nn)
	for j := range lnN {
		lnN[j] = math.Log(a.nd.Centre(j))
	}
	r.SPOP, r.SRate, r.SCond = make([]Slope, nl), make([]Slope, nl), make([]Slope, nl)
	f := fitter{x: lnN, minCount: float64(a.opt.MinCount), minBins: a.opt.MinBins, minDrz: a.opt.MinDrizzling}
	for i := 0; i < nl; i++ {
		row := i * nn
		n := make([]float64, nn)
		nR := make([]float64, nn)
		drz := make([]float64, nn)
		for j := 0; j < nn; j++ {
			n[j] = float64(jt.Count[row+j])
			nR[j] = float64(jt.CountRate[row+j])
			drz[j] = float64(jt.Count[row+j]) * a.bins[row+j].meanP // Σ POP
		}
		r.SPOP[i] = f.slope(n, drz, jt.MeanPOP[row:row+nn])
		r.SRate[i] = f.slope(nR, drz, jt.MeanRate[row:row+nn])
		r.SCond[i] = f.slope(nR, drz, jt.MeanCond[row:row+nn])
	}

	// bootstrap
	if a.boot != nil {
		B := a.opt.Bootstrap
		sp, sr, sc := make([][]float64, nl), make([][]float64, nl), make([][]float64, nl)
		w, wR, wd := make([]float64, nn), make([]float64, nn), make([]float64, nn)
		mp, mr, mc := make([]float64, nn), make([]float64, nn), make([]float64, nn)
		for rep := 0; rep < B; rep++ {
			for i := 0; i < nl; i++ {
				for j := 0; j < nn; j++ {
					bb := a.boot[rep*nb+i*nn+j]
					w[j], wR[j], wd[j] = bb.w, bb.wR, bb.wp
					mp[j], mr[j], mc[j] = nan, nan, nan
					if bb.w > 0 {
						mp[j] = bb.wp / bb.w
					}
					if bb.wR > 0 {
						mr[j] = bb.wr / bb.wR
						if bb.wpr > 0 {
							mc[j] = bb.wr / bb.wpr
						}
					}
				}
				if s := f.slope(w, wd, mp); !math.IsNaN(s.S) {
					sp[i] = append(sp[i], s.S)
				}
				if s := f.slope(wR, wd, mr); !math.IsNaN(s.S) {
					sr[i] = append(sr[i], s.S)
				}
				if s := f.slope(wR, wd, mc); !math.IsNaN(s.S) {
					sc[i] = append(sc[i], s.S)
				}
			}
		}
		for i := 0; i < nl; i++ {
			for _, x := range []struct {
				s *Slope
				v []float64
			}{{&r.SPOP[i], sp[i]}, {&r.SRate[i], sr[i]}, {&r.SCond[i], sc[i]}} {
				x.s.BootSE, x.s.BootN = sd(x.v), len(x.v)
				// A percentile interval needs enough replicates to reach its tails and a
				// slope defined in nearly all of them (a slope missing in many replicates
				// would bias the interval towards the replicates that kept its bins).
				if len(x.v) >= minCIReplicates && float64(len(x.v)) >= 0.9*float64(B) {
					x.s.CILow, x.s.CIHigh = percentileInterval(x.v, a.opt.CILevel)
				}
			}
		}
	}

	// surface fraction
	r.Surface = newFraction(a.surfA)
	r.HaveSurface = a.haveSurf
	r.SurfaceByLWP = make([]Fraction, nl)
	for i := range r.SurfaceByLWP {
		r.SurfaceByLWP[i] = newFraction(a.surf[i])
	}
	r.HaveBase = a.haveBase
	r.SurfaceByBase = make([]Fraction, len(a.surfZ))
	for i := range r.SurfaceByBase {
		r.SurfaceByBase[i] = newFraction(a.surfZ[i])
	}
	return r
}

// minCIReplicates is the least number of replicates with a defined slope for a
// percentile interval (common practice: far fewer leave the 2.5 % tail to one or two
// values).
const minCIReplicates = 20

// effN returns the effective sample size n (se/tileSE)², capped at n; NaN when either
// error is undefined.
func effN(n int, se, tileSE float64) float64 {
	if math.IsNaN(se) || math.IsNaN(tileSE) || n < 2 {
		return math.NaN()
	}
	if !(tileSE > 0) {
		return float64(n)
	}
	return math.Min(float64(n), float64(n)*(se/tileSE)*(se/tileSE))
}

// sd returns the sample standard deviation, NaN for fewer than 2 values.
func sd(v []float64) float64 {
	if len(v) < 2 {
		return math.NaN()
	}
	var m float64
	for _, x := range v {
		m += x
	}
	m /= float64(len(v))
	var s float64
	for _, x := range v {
		s += (x - m) * (x - m)
	}
	return math.Sqrt(s / float64(len(v)-1))
}

// fitter fits ln(mean) against x = ln N_c with count weights.
type fitter struct {
	x        []float64
	minCount float64
	minBins  int
	minDrz   float64 // least expected drizzling columns (Σ POP) of a fitted bin
}

// slope returns the susceptibility -b of the weighted least-squares line
// ln(mean_j) = a + b x_j over the bins with n_j >= minCount, expected drizzling columns
// drz_j >= minDrz and mean_j > 0 (the same bins for S_POP, S_R and S_I, so that
// S_R = S_POP + S_I holds).
func (f fitter) slope(n, drz, mean []float64) Slope {
	var xs, ys, ws [16]float64
	x, y, w := xs[:0], ys[:0], ws[:0]
	cols := 0
	for j := range f.x {
		if n[j] >= f.minCount && drz[j] >= f.minDrz && mean[j] > 0 && !math.IsInf(mean[j], 0) {
			x = append(x, f.x[j])
			y = append(y, math.Log(mean[j]))
			w = append(w, n[j])
			cols += int(n[j])
		}
	}
	s := Slope{S: math.NaN(), SE: math.NaN(), BootSE: math.NaN(), CILow: math.NaN(), CIHigh: math.NaN(), Bins: len(x), Columns: cols}
	if len(x) < f.minBins {
		return s
	}
	b, se := WeightedSlope(x, y, w)
	s.S, s.SE = -b, se
	return s
}

// WeightedSlope returns the weighted least-squares slope b of y = a + b x and its
// standard error, with the residual variance estimated from the data:
//
//	x̄ = Σwx/Σw,  ȳ = Σwy/Σw,  Sxx = Σw(x-x̄)²
//	b = Σw(x-x̄)(y-ȳ) / Sxx
//	SE(b) = sqrt( Σw(y-ȳ-b(x-x̄))² / (m-2) / Sxx )
//
// (common practice; the weights are relative, w_j ∝ 1/var(y_j)). It returns NaN slope
// for fewer than 2 points or no spread in x, and NaN SE for fewer than 3 points. It
// panics if the slices differ in length.
func WeightedSlope(x, y, w []float64) (b, se float64) {
	if len(x) != len(y) || len(x) != len(w) {
		panic("summary: WeightedSlope: x, y and w differ in length")
	}
	m := len(x)
	if m < 2 {
		return math.NaN(), math.NaN()
	}
	var sw, sx, sy float64
	for k := range x {
		sw += w[k]
		sx += w[k] * x[k]
		sy += w[k] * y[k]
	}
	xm, ym := sx/sw, sy/sw
	var sxx, sxy float64
	for k := range x {
		dx := x[k] - xm
		sxx += w[k] * dx * dx
		sxy += w[k] * dx * (y[k] - ym)
	}
	if !(sxx > 0) {
		return math.NaN(), math.NaN()
	}
	b = sxy / sxx
	if m < 3 {
		return b, math.NaN()
	}
	var rss float64
	for k := range x {
		r := y[k] - ym - b*(x[k]-xm)
		rss += w[k] * r * r
	}
	return b, math.Sqrt(rss / float64(m-2) / sxx)
}
