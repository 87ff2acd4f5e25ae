// Package summary computes the researcher's statistics over processed warmrain columns:
// joint LWP × N_d bins of drizzle probability and cloud-base drizzle rate, precipitation
// susceptibility per LWP bin, the fraction of drizzle that reaches the surface, and
// time-mean maps. It works on plain Go data (Field, Scene, Columns); reading processed
// NetCDF files is done by the caller through package grid.
//
// # Conventions
//
// Everything in memory is in SI base units: LWP in kg m-2, N_d in m-3, POP in 1,
// drizzle rate in kg m-2 s-1 (= mm s-1 of water), drizzle radius in m. Missing is NaN.
// Field data are row-major over (time, y, x): index (t*NY+y)*NX+x. Only the text table
// (WriteTable) converts to display units (g m-2, cm-3, mm day-1, µm).
//
// Streaming: Accumulator.Add, MapAccumulator.Accumulate and Gridded.Add take one scene
// at a time (any number of files and time steps); memory is bounded by the bins, one map
// per diagnostic or the cells of the grid, never by the number of columns.
//
// # Gridded statistics and merging
//
// Gridded bins the columns of scenes on any coordinates (grids, swaths, meshes) into the
// cells of a regular LatLonGrid, with exact sums (ExactSum, Moments): the results are
// bit-identical whatever the order of the scenes, and Gridded.Merge or MergeCell of
// partial accumulators equals one pass. Accumulator.State, FromState and Merge carry the
// joint bins between processes (equal to one pass up to rounding). See
// doc/science.md#gridded-summaries.
//
// # Selection
//
// A Region is a latitude/longitude box; longitudes of the box and of the data may each
// be given in -180..180 or 0..360 (both are reduced modulo 360), and a box whose
// western edge lies east of its eastern edge crosses the antimeridian (LonMin 170,
// LonMax -170 is the 20° box around 180°). A Window is a half-open time interval
// [Start, End); a zero Start or End is unbounded.
//
// A column is valid when it is selected, not masked by Options.QCMask, and has finite,
// positive LWP and N_d and a finite POP. Valid columns outside the bin edges are counted
// in Counts.OutOfRange, so the bin counts plus OutOfRange equal Counts.Valid.
//
// # Method: joint bins
//
// Bins are logarithmic (LogEdges); the bin centre used in fits is the geometric centre
// sqrt(e_i e_{i+1}). Per bin the mean POP and mean rate are plain means over the
// columns in the bin, with their standard errors s/sqrt(n).
//
// # Method: precipitation susceptibility
//
// Following Feingold & Siebert (2009) [from memory], the susceptibility of a quantity X
// to droplet number at fixed LWP is
//
//	S_X = -d ln X / d ln N_d
//
// computed over a region, not per pixel (doc/science.md#probability-and-susceptibility,
// recommended practice [from memory]). For each LWP bin i we take the N_d bins j with at
// least Options.MinCount columns, at least Options.MinDrizzling drizzling columns expected
// (the sum of the columns' POP; a bin of model columns can have a POP of 1e-40, which no
// sample could observe) and a positive mean, and fit by weighted least squares
//
//	ln X̄_ij = a_i - S_i ln N_c,j ,   weights w_j = n_ij
//
// where N_c,j is the geometric centre of N_d bin j and n_ij the number of columns in the
// bin (count weights: var(ln X̄) ∝ 1/n, common practice). The regression standard error
// is
//
//	SE(S) = sqrt( Σ w r² / (m-2) / Σ w (x - x̄_w)² )
//
// with m fitted bins and residuals r; a slope needs m ≥ Options.MinBins (default 3).
// Using the geometric bin centre is exact for a power law X ∝ N_d^-s when N_d is
// log-uniform within the bins (the bin mean of N_d^-s is then proportional to N_c^-s)
// [derived].
//
// Three susceptibilities are reported: S_POP (X = POP), S_R (X = mean cloud-base drizzle
// rate) and S_I (X = I = mean rate / mean POP, the conditional rate of the precipitating
// part). Terai et al. (2012) [from memory] decompose S_R = S_POP + S_I; because the fit
// is linear in ln X and R̄ = POP̄ · I, the three reported slopes obey the decomposition
// exactly whenever they use the same bins [derived]; the three fits use the same bins.
// warmrain's rates are the cell means R̄ = POP × I of one sub-grid model, so the bin's
// conditional rate is the POP-weighted mean of the columns' intensities, and S_I and S_R
// are set by the N_d exponent of the model's local drizzle law (Options.LawNdExponent):
// they restate the law, while S_POP reflects the onset model.
//
// # Method: sampling errors over tiles
//
// Neighbouring columns are correlated, so the errors treat contiguous tiles of each time
// step (Options.Tile cells a side, by default TileSide) as the independent units
// (doc/science.md#summary-uncertainty): each bin mean has, besides s/sqrt(n), a tile
// (cluster) standard error and an effective sample size; the optional bootstrap
// (Options.Bootstrap replicates) gives every tile a Poisson(1) weight per replicate (the
// block bootstrap over non-overlapping blocks of Carlstein 1986 and Künsch 1989, spatial
// as in Lahiri 2003, in streaming form [from memory]), refits
// each replicate with the same rules, and reports the replicate standard deviation and
// the percentile interval at Options.CILevel. The weights follow from (Seed, Scene.Key,
// tile), so the result does not depend on the order of the scenes and Merge combines
// accumulators exactly. Options.Tile = 1 gives the column (i.i.d.) bootstrap.
//
// # Method: drizzle reaching the surface
//
// The processed files carry, per column, the cell-mean cloud-base drizzle rate R_CB and
// the surface drizzle rate R_sfc left after evaporation of the cloud-base drizzle
// drop-size distribution in the sub-cloud layer (microphys.SurfaceDrizzleFraction). The
// surface fraction is flux-weighted, a ratio of sums
//
//	f_sfc = Σ R_sfc / Σ R_CB
//
// over the valid columns with both rates finite and R_CB > 0, overall, per LWP bin and,
// when the files carry cloud_base_height, per cloud-base height bin (BaseHeightEdges).
// Weighting by the flux makes f_sfc the fraction of the cloud-base drizzle mass flux
// that reaches the surface; a mean of per-column ratios would let columns with a trace
// of drizzle weigh as much as the heavily drizzling ones (common practice). Processed
// files without surface_drizzle_rate (older versions) give no surface fraction.
//
// Results are research diagnostics, not for operational forecasting or flight-safety
// decisions.
package summary
