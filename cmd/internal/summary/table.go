package summary

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"github.com/warmrain/warmrain/microphys"
)

// Display scales from SI to the units of the text table: those of the processed files
// (microphys.OutputDecls).
var (
	lwpToGm2       = microphys.OutputByName("liquid_water_path").Scale       // kg m-2 -> g m-2
	ndToPerCm3     = microphys.OutputByName("droplet_number").Scale          // m-3 -> cm-3
	rateToMmPerDay = microphys.OutputByName("cloud_base_drizzle_rate").Scale // kg m-2 s-1 (= mm s-1 of water) -> mm day-1
)

// num3 formats v with 3 significant digits and never an exponent for the bin edges
// met in practice (0.001 to 99999).
func num3(v float64) string {
	s := strconv.FormatFloat(v, 'g', 3, 64)
	if strings.ContainsAny(s, "e") && math.Abs(v) >= 1 {
		s = strconv.FormatFloat(v, 'f', 0, 64)
	}
	return s
}

func rangeLabel(lo, hi float64) string {
	return num3(lo) + "-" + num3(hi)
}

// WriteTable writes r as readable text: column counts, the joint bins (count, mean POP,
// mean rate), the susceptibilities per LWP bin and the surface fraction. Display units:
// LWP g m-2, N_d cm-3, rate mm day-1. Empty bins are shown as "." and bins below
// MinCount (not used in the fits) are marked with "*".
func WriteTable(w io.Writer, r *Result) error {
	bw := bufio.NewWriter(w)
	c := r.Counts
	fmt.Fprintf(bw, "Columns: %d seen, %d selected (region and time window), %d QC-masked, %d invalid, %d valid, %d valid outside the bins\n",
		c.Seen, c.Selected, c.Masked, c.Invalid, c.Valid, c.OutOfRange)
	if r.Options.Region != nil {
		g := r.Options.Region
		fmt.Fprintf(bw, "Region: latitude %g to %g, longitude %g to %g (degrees)\n", g.LatMin, g.LatMax, g.LonMin, g.LonMax)
	}
	if !r.Options.Window.IsZero() {
		fmt.Fprintf(bw, "Time window: %s\n", r.Options.Window)
	}

	jt := &r.Joint
	minCount := r.Options.MinCount
	matrix := func(title string, cell func(b int) string) {
		fmt.Fprintf(bw, "\n%s\n", title)
		fmt.Fprintf(bw, "%-13s", "LWP \\ N_d")
		for j := 0; j < jt.NNd; j++ {
			lo, hi := r.Nd.Bounds(j)
			fmt.Fprintf(bw, " %9s", rangeLabel(lo*ndToPerCm3, hi*ndToPerCm3))
		}
		fmt.Fprintln(bw)
		for i := 0; i < jt.NLWP; i++ {
			lo, hi := r.LWP.Bounds(i)
			fmt.Fprintf(bw, "%-13s", rangeLabel(lo*lwpToGm2, hi*lwpToGm2))
			for j := 0; j < jt.NNd; j++ {
				fmt.Fprintf(bw, " %9s", cell(jt.Index(i, j)))
			}
			fmt.Fprintln(bw)
		}
	}
	mark := func(b int) string {
		if jt.Count[b] < minCount {
			return "*"
		}
		return ""
	}
	matrix("Number of valid columns per bin (LWP in g m-2 down, N_d in cm-3 across)", func(b int) string {
		if jt.Count[b] == 0 {
			return "."
		}
		return fmt.Sprintf("%d", jt.Count[b])
	})
	matrix(fmt.Sprintf("Mean drizzle probability POP (1); * = fewer than %d columns, not fitted", minCount), func(b int) string {
		if math.IsNaN(jt.MeanPOP[b]) {
			return "."
		}
		return fmt.Sprintf("%.3f%s", jt.MeanPOP[b], mark(b))
	})
	matrix(fmt.Sprintf("Mean cloud-base drizzle rate, cell mean R (mm day-1); * = fewer than %d columns", minCount), func(b int) string {
		if math.IsNaN(jt.MeanRate[b]) {
			return "."
		}
		return fmt.Sprintf("%.3g%s", jt.MeanRate[b]*rateToMmPerDay, mark(b))
	})
	matrix(fmt.Sprintf("Conditional rate I = mean R / mean POP, the drizzling part (mm day-1); . = fewer than %g drizzling columns expected", r.Options.MinDrizzling), func(b int) string {
		if math.IsNaN(jt.MeanCond[b]) {
			return "."
		}
		return fmt.Sprintf("%.3g%s", jt.MeanCond[b]*rateToMmPerDay, mark(b))
	})

	// Sampling errors of the bin means: tile standard errors (doc/science.md#summary-uncertainty).
	matrix(fmt.Sprintf("Standard error of mean POP with tiles of %s as independent units (1); . = fewer than 2 tiles", tileText(r)), func(b int) string {
		if math.IsNaN(jt.TileSEPOP[b]) {
			return "."
		}
		return fmt.Sprintf("%.2g%s", jt.TileSEPOP[b], mark(b))
	})
	matrix("Effective number of independent columns of mean POP, n (SE_iid / SE_tile)^2, at most n", func(b int) string {
		if math.IsNaN(jt.NEffPOP[b]) {
			return "."
		}
		return fmt.Sprintf("%.0f%s", jt.NEffPOP[b], mark(b))
	})
	matrix("Standard error of mean rate with tiles as independent units (mm day-1)", func(b int) string {
		if math.IsNaN(jt.TileSERate[b]) {
			return "."
		}
		return fmt.Sprintf("%.2g%s", jt.TileSERate[b]*rateToMmPerDay, mark(b))
	})
	if jt.HaveErrPOP {
		matrix("Mean retrieval standard error of POP of the columns (1), from drizzle_probability_standard_error", func(b int) string {
			if math.IsNaN(jt.ErrPOP[b]) {
				return "."
			}
			return fmt.Sprintf("%.2g%s", jt.ErrPOP[b], mark(b))
		})
	}
	if jt.HaveErrRate {
		matrix("Mean retrieval standard error of the rate of the columns (mm day-1), from cloud_base_drizzle_rate_standard_error", func(b int) string {
			if math.IsNaN(jt.ErrRate[b]) {
				return "."
			}
			return fmt.Sprintf("%.2g%s", jt.ErrRate[b]*rateToMmPerDay, mark(b))
		})
	}

	fmt.Fprintf(bw, "\nPrecipitation susceptibility S = -d ln X / d ln N_d per LWP bin\n")
	fmt.Fprintf(bw, "(weighted least squares over N_d bins with >= %d columns and >= %g drizzling columns expected, at least %d bins; SE = regression standard error",
		minCount, r.Options.MinDrizzling, r.Options.MinBins)
	boot := r.Options.Bootstrap > 0
	if boot {
		fmt.Fprintf(bw, ";\nboot = tile-bootstrap standard error and CI = %g%% percentile interval over %d replicates, seed %d, tiles of %s resampled",
			100*r.Options.CILevel, r.Options.Bootstrap, r.Options.Seed, tileText(r))
	}
	fmt.Fprintf(bw, ")\n")
	head := []string{"S_POP", "S_R", "S_I"}
	fmt.Fprintf(bw, "%-13s", "LWP (g m-2)")
	for _, h := range head {
		if boot {
			fmt.Fprintf(bw, " | %7s %6s %6s %15s %4s", h, "SE", "boot", "CI", "bins")
		} else {
			fmt.Fprintf(bw, " | %7s %6s %4s", h, "SE", "bins")
		}
	}
	fmt.Fprintln(bw)
	num := func(v float64, f string) string {
		if math.IsNaN(v) {
			return "-"
		}
		return fmt.Sprintf(f, v)
	}
	for i := 0; i < r.LWP.N(); i++ {
		lo, hi := r.LWP.Bounds(i)
		fmt.Fprintf(bw, "%-13s", rangeLabel(lo*lwpToGm2, hi*lwpToGm2))
		for _, s := range []Slope{r.SPOP[i], r.SRate[i], r.SCond[i]} {
			if boot {
				ci := "-"
				if !math.IsNaN(s.CILow) {
					ci = fmt.Sprintf("%.3f..%.3f", s.CILow, s.CIHigh)
				}
				fmt.Fprintf(bw, " | %7s %6s %6s %15s %4d", num(s.S, "%.3f"), num(s.SE, "%.3f"), num(s.BootSE, "%.3f"), ci, s.Bins)
			} else {
				fmt.Fprintf(bw, " | %7s %6s %4d", num(s.S, "%.3f"), num(s.SE, "%.3f"), s.Bins)
			}
		}
		fmt.Fprintln(bw)
	}
	if !boot {
		fmt.Fprintf(bw, "The regression SE assumes independent bin means; with spatially correlated scenes use --bootstrap for intervals over tiles.\n")
	}
	fmt.Fprintf(bw, "S_R = S_POP + S_I when the same bins are used (Terai et al. 2012 decomposition).\n")
	fmt.Fprintf(bw, "%s\n", LawNote(r.Options.LawNdExponent))

	fmt.Fprintf(bw, "\nFraction of drizzle reaching the surface (flux-weighted: sum of surface rate / sum of cloud-base rate)\n")
	if !r.HaveSurface {
		fmt.Fprintf(bw, "- (the processed files have no surface drizzle rate; reprocess them to get it)\n")
	} else {
		frac := func(f Fraction) string {
			if f.Columns == 0 || !(f.CBSum > 0) {
				return "- (no drizzling columns)"
			}
			n := float64(f.Columns)
			return fmt.Sprintf("%.3f  (mean surface %s / cloud-base %s mm day-1, %d columns)", f.Value,
				num3(f.SurfaceSum/n*rateToMmPerDay), num3(f.CBSum/n*rateToMmPerDay), f.Columns)
		}
		fmt.Fprintf(bw, "%-13s %s\n", "all LWP", frac(r.Surface))
		for i, f := range r.SurfaceByLWP {
			lo, hi := r.LWP.Bounds(i)
			fmt.Fprintf(bw, "%-13s %s\n", rangeLabel(lo*lwpToGm2, hi*lwpToGm2), frac(f))
		}
		if r.HaveBase {
			fmt.Fprintf(bw, "by cloud-base height (m above the surface)\n")
			for i, f := range r.SurfaceByBase {
				if f.Columns == 0 {
					continue
				}
				fmt.Fprintf(bw, "%-13s %s\n", rangeLabel(BaseHeightEdges[i], BaseHeightEdges[i+1]), frac(f))
			}
		}
	}
	fmt.Fprintf(bw, "Research diagnostics only; not for operational forecasting or flight-safety decisions.\n")
	return bw.Flush()
}

// tileText describes the tiles: "9 x 9 cells (243 tiles)".
func tileText(r *Result) string {
	switch {
	case r.TileSide < 0:
		return fmt.Sprintf("the automatic side of each scene (%d tiles)", r.Tiles)
	case r.TileSide == 0:
		return "no tiles"
	case r.TileSide == 1:
		return fmt.Sprintf("single columns (%d)", r.Tiles)
	}
	return fmt.Sprintf("%d x %d cells (%d tiles)", r.TileSide, r.TileSide, r.Tiles)
}

// LawNote is the sentence that says where S_R and S_I come from: the rates are a model,
// so the N_d exponent c of its local law R = a LWP^b N_d^-c sets S_I (S_I -> c where POP
// -> 1) and with it S_R; only S_POP depends on the onset. c <= 0 means unknown.
func LawNote(c float64) string {
	law := "the N_d exponent c of the drizzle law R = a LWP^b N_d^-c"
	if c > 0 {
		law = fmt.Sprintf("the N_d exponent c = %g of the drizzle law R = a LWP^b N_d^-c", c)
	}
	return "S_R and S_I are set by " + law + " (S_I -> c where POP -> 1), not measured; S_POP comes from the onset model."
}
