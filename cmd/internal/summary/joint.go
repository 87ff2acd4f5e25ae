package summary

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// Options configure an Accumulator. The zero value gives the documented defaults.
type Options struct {
	// LWPEdges are the LWP bin edges in kg m-2 (ascending, > 0); nil = DefaultLWPEdges.
	LWPEdges []float64
	// NdEdges are the N_d bin edges in m-3 (ascending, > 0); nil = DefaultNdEdges.
	NdEdges []float64
	// Region selects columns by position; nil = everywhere.
	Region *Region
	// Window selects time steps; zero = all times.
	Window Window
	// QCMask excludes columns with QC & QCMask != 0; 0 = rely on NaN screening only.
	QCMask uint16
	// MinCount is the least number of columns an (LWP, N_d) bin needs to enter a
	// susceptibility fit; 0 = 50.
	MinCount int
	// MinBins is the least number of N_d bins a fit needs; 0 = 3 (the smallest number
	// with a regression standard error). Values below 3 are refused.
	MinBins int
	// MinDrizzling is the least expected number of drizzling columns, n × mean POP, an
	// (LWP, N_d) bin needs to enter the susceptibility fits and to show a conditional rate;
	// 0 = 10. A bin whose columns would hold fewer drizzling columns than that has no
	// observable drizzle probability or intensity (its POP can be 1e-40 in the model).
	MinDrizzling float64
	// LawNdExponent is the N_d exponent c of the local drizzle law R = a LWP^b N_d^-c that
	// made the rates (0 = unknown); the table and plot say that S_R and S_I follow from it.
	LawNdExponent float64
	// Bootstrap is the number of tile-bootstrap replicates; 0 = no bootstrap.
	Bootstrap int
	// Seed seeds the bootstrap generator (PCG); equal seeds and equal scene keys give
	// equal results, whatever the order of the scenes.
	Seed uint64
	// Tile is the side, in cells, of the square tiles (runs of cells for a scene of one
	// row) that the tile standard errors and the bootstrap treat as independent units;
	// 0 = the rule of TileSide per scene; 1 = every column independent (the i.i.d.
	// bootstrap).
	Tile int
	// CILevel is the level of the bootstrap confidence intervals of the
	// susceptibilities, in (0, 1); 0 = 0.95.
	CILevel float64
}

const (
	defaultMinCount     = 50
	defaultMinBins      = 3
	defaultMinDrizzling = 10
)

// withDefaults fills zero values and validates.
func (o Options) withDefaults() (Options, error) {
	if o.LWPEdges == nil {
		o.LWPEdges = DefaultLWPEdges()
	}
	if o.NdEdges == nil {
		o.NdEdges = DefaultNdEdges()
	}
	if err := checkEdges("LWP", o.LWPEdges); err != nil {
		return o, err
	}
	if err := checkEdges("N_d", o.NdEdges); err != nil {
		return o, err
	}
	if err := o.Region.Check(); err != nil {
		return o, err
	}
	if !o.Window.Start.IsZero() && !o.Window.End.IsZero() && !o.Window.End.After(o.Window.Start) {
		return o, fmt.Errorf("summary: time window %s..%s is empty: End must be after Start",
			o.Window.Start.Format("2006-01-02T15:04:05Z07:00"), o.Window.End.Format("2006-01-02T15:04:05Z07:00"))
	}
	if !(o.MinDrizzling >= 0) || math.IsInf(o.MinDrizzling, 0) {
		return o, fmt.Errorf("summary: MinDrizzling is %g, want a finite number >= 0", o.MinDrizzling)
	}
	if o.MinDrizzling == 0 {
		o.MinDrizzling = defaultMinDrizzling
	}
	if o.CILevel == 0 {
		o.CILevel = 0.95
	}
	if !(o.CILevel > 0 && o.CILevel < 1) {
		return o, fmt.Errorf("summary: CILevel is %g, want a level between 0 and 1 (0.95 for 95%%)", o.CILevel)
	}
	if o.Tile < 0 {
		return o, fmt.Errorf("summary: Tile is %d, want 0 (automatic) or a side of 1 or more cells", o.Tile)
	}
	if o.MinCount < 0 || o.MinBins < 0 || o.Bootstrap < 0 {
		return o, fmt.Errorf("summary: MinCount (%d), MinBins (%d) and Bootstrap (%d) must not be negative",
			o.MinCount, o.MinBins, o.Bootstrap)
	}
	if o.MinCount == 0 {
		o.MinCount = defaultMinCount
	}
	if o.MinBins == 0 {
		o.MinBins = defaultMinBins
	}
	if o.MinBins < 3 {
		return o, fmt.Errorf("summary: MinBins is %d, want >= 3 (a standard error needs one degree of freedom)", o.MinBins)
	}
	// copy the slices so later changes by the caller do not alter the bins
	o.LWPEdges = append([]float64(nil), o.LWPEdges...)
	o.NdEdges = append([]float64(nil), o.NdEdges...)
	return o, nil
}

// binStats holds running (Welford) moments of one (LWP, N_d) bin.
type binStats struct {
	n          int
	meanP, m2P float64 // POP
	nR         int
	meanR, m2R float64        // drizzle rate
	sumPR      float64        // sum of POP over the columns with a rate
	tiles      int            // tiles with columns in the bin
	clP, clR   clusterMoments // tile moments of POP and of the rate
	nEP, nER   int            // columns with a retrieval error of POP, of the rate
	sEP, sER   float64        // Σ of those retrieval errors
}

// fluxSum sums the surface and cloud-base drizzle rates over the columns that have both.
type fluxSum struct {
	n       int
	sfc, cb float64
}

func (f *fluxSum) add(sfc, cb float64) { f.n++; f.sfc += sfc; f.cb += cb }

// Counts tallies what happened to the columns offered to an Accumulator.
type Counts struct {
	Seen       int // columns offered (all time steps, all cells)
	Selected   int // inside the region and time window
	Masked     int // selected but excluded by QCMask
	Invalid    int // selected, not masked, but LWP or N_d not finite and > 0 or POP not finite
	Valid      int // selected, not masked, with finite positive LWP, N_d and finite POP
	OutOfRange int // valid but outside the LWP or N_d bin edges
}

// Accumulator gathers the joint statistics over any number of scenes. Create it with
// New, feed it with Add and read it with Result. It is not safe for concurrent use.
type Accumulator struct {
	opt      Options
	lwp      Axis
	nd       Axis
	bins     []binStats
	surf     []fluxSum // per LWP bin: surface and cloud-base rate sums
	surfA    fluxSum   // all valid columns (any LWP)
	haveSurf bool      // some scene had a surface drizzle rate
	surfZ    []fluxSum // per cloud-base height bin (BaseHeightEdges)
	haveBase bool      // some scene had a surface drizzle rate and a cloud-base height
	counts   Counts

	havePOPErr, haveRateErr bool // some scene had retrieval errors of POP, of the rate

	boot     []bootBin  // Bootstrap * nbins, replicate-major
	cdf      []float64  // Poisson(1) cumulative probabilities
	tl       *tiler     // the row of tiles being gathered
	tileSide int        // side of the tiles used (-1: varied between scenes)
	tiles    int        // tiles folded in
	adds     uint64     // calls of Add (the key of scenes without one)
	pcg      *rand.PCG  // reseeded for every tile
	rng      *rand.Rand // reads pcg
}

type bootBin struct {
	w, wp, wR, wr, wpr float64 // Σk, Σk·POP, Σk over rate columns, Σk·rate, Σk·POP over rate columns
}

// New returns an Accumulator for the given options (zero fields get the defaults).
func New(opt Options) (*Accumulator, error) {
	o, err := opt.withDefaults()
	if err != nil {
		return nil, err
	}
	a := &Accumulator{
		opt: o,
		lwp: Axis{Name: "lwp", Units: "kg m-2", Edges: o.LWPEdges},
		nd:  Axis{Name: "nd", Units: "m-3", Edges: o.NdEdges},
	}
	nb := a.lwp.N() * a.nd.N()
	a.bins = make([]binStats, nb)
	a.surf = make([]fluxSum, a.lwp.N())
	a.surfZ = make([]fluxSum, len(BaseHeightEdges)-1)
	if o.Bootstrap > 0 {
		a.boot = make([]bootBin, o.Bootstrap*nb)
		// Poisson(1): P(k) = e^-1 / k!; 20 terms reach 1 - 1e-19.
		p, c := math.Exp(-1), 0.0
		for k := 0; k < 20; k++ {
			c += p
			a.cdf = append(a.cdf, c)
			p /= float64(k + 1)
		}
	}
	return a, nil
}

// Options returns the options in use, with defaults filled in.
func (a *Accumulator) Options() Options { return a.opt }

// poisson1 draws from Poisson(1) by inversion.
func (a *Accumulator) poisson1(rng *rand.Rand) float64 {
	u := rng.Float64()
	for k, c := range a.cdf {
		if u < c {
			return float64(k)
		}
	}
	return float64(len(a.cdf))
}

// regionMask returns, per cell, whether it lies in the region (nil when every cell does).
// A scene without coordinates is wholly selected by a nil region and not at all by
// any other.
func regionMask(s Scene, r *Region) []bool {
	n := s.Cells()
	m := make([]bool, n)
	if !s.HasCoords() {
		for i := range m {
			m[i] = r == nil
		}
		return m
	}
	for y := 0; y < s.NY; y++ {
		for x := 0; x < s.NX; x++ {
			lat, lon := s.LatLon(y, x)
			m[y*s.NX+x] = r.Contains(lat, lon)
		}
	}
	return m
}

// Add adds every selected column of the scene. It returns an error wrapping ErrShape,
// and adds nothing, when the fields do not fit the scene.
func (a *Accumulator) Add(s Scene, c *Columns) error {
	if err := c.check(s); err != nil {
		return err
	}
	if a.opt.Region != nil && !s.HasCoords() {
		return fmt.Errorf("%w: a region is selected but the scene has no latitude and longitude", ErrShape)
	}
	in := regionMask(s, a.opt.Region)
	cells := s.Cells()
	haveRate := len(c.Rate.Data) > 0
	haveSurf := haveRate && len(c.SurfaceRate.Data) > 0
	a.haveSurf = a.haveSurf || haveSurf
	haveBase := haveSurf && len(c.BaseHeight.Data) > 0
	a.haveBase = a.haveBase || haveBase
	haveEP := len(c.POPError.Data) > 0
	haveER := haveRate && len(c.RateError.Data) > 0
	a.havePOPErr = a.havePOPErr || haveEP
	a.haveRateErr = a.haveRateErr || haveER
	nNd := a.nd.N()
	a.counts.Seen += s.NT * cells
	a.adds++
	key := s.Key
	if key == 0 {
		key = a.adds | 1<<63
	}
	tl := a.tilerFor(s)
	side, oneRow := tl.side, s.NY == 1
	for t := 0; t < s.NT; t++ {
		if !timeSelected(s, a.opt.Window, t) {
			continue
		}
		// (x, y) of cell k, its tile column tx, and the positions within the tile
		x, y, tx, xr, yr := -1, 0, 0, -1, 0
		for k := 0; k < cells; k++ {
			x++
			xr++
			switch {
			case x == s.NX: // next row (never in a scene of one row)
				x, xr, tx = 0, 0, 0
				y++
				if yr++; yr == side {
					a.flushRow(tl, key, t, y/side-1)
					yr = 0
				}
			case xr == side:
				xr = 0
				tx++
				if oneRow {
					a.flushTile(tl, key, t, 0, tx-1, 0)
				}
			}
			if !in[k] {
				continue
			}
			idx := t*cells + k
			a.counts.Selected++
			if c.QC != nil && c.QC[idx]&a.opt.QCMask != 0 {
				a.counts.Masked++
				continue
			}
			lwp, nd, pop := c.LWP.Data[idx], c.Nd.Data[idx], c.POP.Data[idx]
			if !(lwp > 0) || !(nd > 0) || math.IsInf(lwp, 0) || math.IsInf(nd, 0) || math.IsNaN(pop) || math.IsInf(pop, 0) {
				a.counts.Invalid++
				continue
			}
			a.counts.Valid++
			i := a.lwp.Find(lwp)
			if haveSurf {
				// Both rates finite, cloud-base rate > 0 and surface rate >= 0; Σ R_sfc /
				// Σ R_CB is then the flux-weighted fraction.
				rs, rc := c.SurfaceRate.Data[idx], c.Rate.Data[idx]
				if rc > 0 && rs >= 0 && !math.IsInf(rc, 0) && !math.IsInf(rs, 0) {
					a.surfA.add(rs, rc)
					if i >= 0 {
						a.surf[i].add(rs, rc)
					}
					if haveBase {
						if z := baseBin(c.BaseHeight.Data[idx]); z >= 0 {
							a.surfZ[z].add(rs, rc)
						}
					}
				}
			}
			j := a.nd.Find(nd)
			if i < 0 || j < 0 {
				a.counts.OutOfRange++
				continue
			}
			b := i*nNd + j
			st := &a.bins[b]
			st.n++
			d := pop - st.meanP
			st.meanP += d / float64(st.n)
			st.m2P += d * (pop - st.meanP)
			rate := math.NaN()
			if haveRate {
				rate = c.Rate.Data[idx]
			}
			rateOK := !math.IsNaN(rate) && !math.IsInf(rate, 0)
			if rateOK {
				st.nR++
				d := rate - st.meanR
				st.meanR += d / float64(st.nR)
				st.m2R += d * (rate - st.meanR)
				st.sumPR += pop
			}
			if haveEP {
				if e := c.POPError.Data[idx]; e >= 0 && !math.IsInf(e, 0) {
					st.nEP++
					st.sEP += e
				}
			}
			if haveER && rateOK {
				if e := c.RateError.Data[idx]; e >= 0 && !math.IsInf(e, 0) {
					st.nER++
					st.sER += e
				}
			}
			if oneRow {
				tl.put(0, b, pop, rate, rateOK)
			} else {
				tl.put(tx, b, pop, rate, rateOK)
			}
		}
		if oneRow {
			a.flushTile(tl, key, t, 0, (s.NX-1)/side, 0)
		} else {
			a.flushRow(tl, key, t, (s.NY-1)/side)
		}
	}
	return nil
}

// BaseHeightEdges are the cloud-base height bins (m above the surface) of the surface
// drizzle fraction: the depth of the sub-cloud layer the drizzle falls through, which
// sets how much of it evaporates (common practice: 200 m steps over the range of marine
// stratocumulus bases).
var BaseHeightEdges = []float64{0, 200, 400, 600, 800, 1000, 1500, 2000, 3000}

// baseBin returns the BaseHeightEdges bin of z, or -1 outside them or for NaN.
func baseBin(z float64) int {
	if !(z >= BaseHeightEdges[0]) {
		return -1
	}
	for i := 1; i < len(BaseHeightEdges); i++ {
		if z < BaseHeightEdges[i] {
			return i - 1
		}
	}
	return -1
}
