package summary

import (
	"fmt"
	"slices"
)

// BinState is the running state of one (LWP, N_d) bin: Welford moments of POP and of
// the drizzle rate, and the sum of POP over the columns with a rate.
type BinState struct {
	N          int
	MeanP, M2P float64
	NR         int
	MeanR, M2R float64
	SumPR      float64
}

// FluxState is a sum of surface and cloud-base drizzle rates over N columns.
type FluxState struct {
	N       int
	Sfc, CB float64
}

// State is everything an Accumulator keeps except the bootstrap replicates: what a
// partial summary file stores so that partial summaries can be merged (MergeState).
type State struct {
	LWPEdges, NdEdges []float64
	Bins              []BinState  // row-major (LWP bin, N_d bin)
	Surface           []FluxState // per LWP bin
	SurfaceAll        FluxState
	SurfaceByBase     []FluxState // per BaseHeightEdges bin
	HaveSurface       bool
	HaveBase          bool
	Counts            Counts
}

func fluxState(f fluxSum) FluxState { return FluxState{N: f.n, Sfc: f.sfc, CB: f.cb} }

// State returns the accumulator's state (copies).
func (a *Accumulator) State() State {
	s := State{LWPEdges: slices.Clone(a.opt.LWPEdges), NdEdges: slices.Clone(a.opt.NdEdges),
		SurfaceAll: fluxState(a.surfA), HaveSurface: a.haveSurf, HaveBase: a.haveBase, Counts: a.counts}
	for _, b := range a.bins {
		s.Bins = append(s.Bins, BinState{N: b.n, MeanP: b.meanP, M2P: b.m2P, NR: b.nR, MeanR: b.meanR, M2R: b.m2R, SumPR: b.sumPR})
	}
	for _, f := range a.surf {
		s.Surface = append(s.Surface, fluxState(f))
	}
	for _, f := range a.surfZ {
		s.SurfaceByBase = append(s.SurfaceByBase, fluxState(f))
	}
	return s
}

// chanMerge combines the moments (n, mean, M2) of two sets (Chan, Golub & LeVeque 1979
// [from memory]): n = na + nb, δ = mb - ma, mean = ma + δ nb/n, M2 = M2a + M2b + δ² na nb/n.
func chanMerge(na int, ma, m2a float64, nb int, mb, m2b float64) (int, float64, float64) {
	if nb == 0 {
		return na, ma, m2a
	}
	if na == 0 {
		return nb, mb, m2b
	}
	n := na + nb
	d := mb - ma
	fa, fb := float64(na), float64(nb)
	return n, ma + d*fb/float64(n), m2a + m2b + d*d*fa*fb/float64(n)
}

// MergeState adds a partial state (same bins) to the accumulator: counts and flux sums
// are added, the bins' moments combined with Chan's formula. The merged statistics equal
// those of a single pass over the same columns up to floating-point rounding (the
// single pass itself depends on the column order to that extent): relative differences
// of order 1e-15 (doc/science.md#gridded-summaries). The bootstrap cannot be merged
// (its replicates depend on the column order): MergeState refuses an accumulator with
// Options.Bootstrap > 0.
func (a *Accumulator) MergeState(s State) error {
	if a.opt.Bootstrap > 0 {
		return fmt.Errorf("summary: MergeState: the bootstrap cannot be merged from partial summaries; leave it out")
	}
	if !slices.Equal(s.LWPEdges, a.opt.LWPEdges) || !slices.Equal(s.NdEdges, a.opt.NdEdges) {
		return fmt.Errorf("summary: MergeState: the partial summary has other LWP or N_d bins (LWP edges %v, N_d edges %v; here %v, %v)", s.LWPEdges, s.NdEdges, a.opt.LWPEdges, a.opt.NdEdges)
	}
	if len(s.Bins) != len(a.bins) || len(s.Surface) != len(a.surf) || len(s.SurfaceByBase) != len(a.surfZ) {
		return fmt.Errorf("summary: MergeState: %d bins, %d LWP and %d base-height fractions; want %d, %d, %d", len(s.Bins), len(s.Surface), len(s.SurfaceByBase), len(a.bins), len(a.surf), len(a.surfZ))
	}
	for i, o := range s.Bins {
		b := &a.bins[i]
		b.n, b.meanP, b.m2P = chanMerge(b.n, b.meanP, b.m2P, o.N, o.MeanP, o.M2P)
		b.nR, b.meanR, b.m2R = chanMerge(b.nR, b.meanR, b.m2R, o.NR, o.MeanR, o.M2R)
		b.sumPR += o.SumPR
	}
	add := func(f *fluxSum, o FluxState) { f.n += o.N; f.sfc += o.Sfc; f.cb += o.CB }
	for i, o := range s.Surface {
		add(&a.surf[i], o)
	}
	for i, o := range s.SurfaceByBase {
		add(&a.surfZ[i], o)
	}
	add(&a.surfA, s.SurfaceAll)
	a.haveSurf = a.haveSurf || s.HaveSurface
	a.haveBase = a.haveBase || s.HaveBase
	c := &a.counts
	c.Seen += s.Counts.Seen
	c.Selected += s.Counts.Selected
	c.Masked += s.Counts.Masked
	c.Invalid += s.Counts.Invalid
	c.Valid += s.Counts.Valid
	c.OutOfRange += s.Counts.OutOfRange
	return nil
}
