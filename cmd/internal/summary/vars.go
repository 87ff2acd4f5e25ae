package summary

import "fmt"

// Var is one variable of the summary file, described for a CF NetCDF writer: dimension
// names (outermost first), SI units, CF attributes and the data flattened row-major.
// NaN marks missing values (the writer sets _FillValue). Int variables hold whole
// numbers and should be written as int32 (or int64 if a count can exceed 2^31-1).
type Var struct {
	Name         string
	Dims         []string
	Units        string
	StandardName string // only names from the CF standard-name table; "" = none
	LongName     string
	Comment      string
	Bounds       string // name of the bounds variable, for coordinates
	Ancillary    string // ancillary_variables attribute
	// ConfidenceLevel, when > 0, is the level of a confidence limit (attribute
	// confidence_level).
	ConfidenceLevel float64
	Int             bool
	Data            []float64
}

// Dimension names of the summary file.
const (
	DimLWP    = "lwp_bin"
	DimNd     = "nd_bin"
	DimBounds = "nv" // 2: lower and upper bin edge
)

// Dims returns the dimension lengths of the summary file.
func (r *Result) Dims() map[string]int {
	return map[string]int{DimLWP: r.LWP.N(), DimNd: r.Nd.N(), DimBounds: 2}
}

func bounds(a Axis) []float64 {
	b := make([]float64, 0, 2*a.N())
	for i := 0; i < a.N(); i++ {
		lo, hi := a.Bounds(i)
		b = append(b, lo, hi)
	}
	return b
}

func ints(v []int) []float64 {
	d := make([]float64, len(v))
	for i, x := range v {
		d[i] = float64(x)
	}
	return d
}

// Variables returns the summary file's variables in writing order: the two bin
// coordinates with bounds, the joint (lwp_bin, nd_bin) statistics, the
// susceptibilities per LWP bin with their standard errors, and the surface fraction.
// Scalars such as Counts belong in global attributes (see Attributes).
func (r *Result) Variables() []Var {
	jt := &r.Joint
	two := []string{DimLWP, DimNd}
	one := []string{DimLWP}
	fit := fmt.Sprintf("weighted least-squares slope of ln(bin mean) against ln(N_d bin centre) over N_d bins with at least %d columns and %g drizzling columns expected (at least %d bins), weights = column counts; [FeingoldSiebert2009] definition, from memory. %s", r.Options.MinCount, r.Options.MinDrizzling, r.Options.MinBins, LawNote(r.Options.LawNdExponent))
	vs := []Var{
		{Name: "lwp_bin", Dims: []string{DimLWP}, Units: "kg m-2", StandardName: "atmosphere_mass_content_of_cloud_liquid_water",
			LongName: "liquid water path bin centre (geometric mean of the edges)", Bounds: "lwp_bin_bounds", Data: r.LWP.Centres()},
		{Name: "lwp_bin_bounds", Dims: []string{DimLWP, DimBounds}, Data: bounds(r.LWP)}, // inherits units (CF §7.1)
		{Name: "nd_bin", Dims: []string{DimNd}, Units: "m-3",
			LongName: "cloud droplet number concentration bin centre (geometric mean of the edges)", Bounds: "nd_bin_bounds", Data: r.Nd.Centres()},
		{Name: "nd_bin_bounds", Dims: []string{DimNd, DimBounds}, Data: bounds(r.Nd)},

		{Name: "column_count", Dims: two, Units: "1", Int: true, LongName: "number of valid columns in the bin", Data: ints(jt.Count)},
		{Name: "drizzle_probability_mean", Dims: two, Units: "1", LongName: "mean drizzle probability (POP) in the bin",
			Ancillary: "drizzle_probability_mean_standard_error column_count", Data: jt.MeanPOP},
		{Name: "drizzle_probability_mean_standard_error", Dims: two, Units: "1", LongName: "standard error of the mean drizzle probability, s/sqrt(n)", Data: jt.SEPOP},
		{Name: "rate_count", Dims: two, Units: "1", Int: true, LongName: "number of columns in the bin with a cloud-base drizzle rate", Data: ints(jt.CountRate)},
		{Name: "cloud_base_drizzle_rate_mean", Dims: two, Units: "kg m-2 s-1", LongName: "mean cloud-base drizzle rate in the bin",
			Ancillary: "cloud_base_drizzle_rate_mean_standard_error rate_count", Data: jt.MeanRate},
		{Name: "cloud_base_drizzle_rate_mean_standard_error", Dims: two, Units: "kg m-2 s-1", LongName: "standard error of the mean cloud-base drizzle rate, s/sqrt(n)", Data: jt.SERate},
		{Name: "conditional_drizzle_rate_mean", Dims: two, Units: "kg m-2 s-1",
			LongName: "conditional drizzle rate I = mean rate / mean drizzle probability",
			Comment:  fmt.Sprintf("rate of the precipitating part; [Terai2012] decomposition, from memory; missing where the bin's expected drizzling columns (sum of POP) are fewer than %g", r.Options.MinDrizzling), Data: jt.MeanCond},
	}
	// Sampling errors with tiles as the independent units (doc/science.md#summary-uncertainty).
	tileNote := fmt.Sprintf("cluster standard error with contiguous tiles of %s as the independent units: sqrt(T/(T-1) sum_t (S_t - mean n_t)^2) / n over the T tiles with columns in the bin (S_t, n_t: sum and count of the tile's columns); Cochran (1977) ratio estimator, from memory; holds when the spatial correlation is shorter than a tile", tileText(r))
	// vs[5] is drizzle_probability_mean, vs[8] cloud_base_drizzle_rate_mean
	vs[5].Ancillary += " drizzle_probability_mean_tile_standard_error drizzle_probability_mean_effective_count"
	vs[8].Ancillary += " cloud_base_drizzle_rate_mean_tile_standard_error cloud_base_drizzle_rate_mean_effective_count"
	if jt.HaveErrPOP {
		vs[5].Ancillary += " drizzle_probability_mean_retrieval_error"
	}
	if jt.HaveErrRate {
		vs[8].Ancillary += " cloud_base_drizzle_rate_mean_retrieval_error"
	}
	vs = append(vs,
		Var{Name: "tile_count", Dims: two, Units: "1", Int: true, LongName: "number of tiles with valid columns in the bin", Data: ints(jt.Tiles)},
		Var{Name: "drizzle_probability_mean_tile_standard_error", Dims: two, Units: "1", LongName: "standard error of the mean drizzle probability with tiles as independent units", Comment: tileNote, Ancillary: "tile_count", Data: jt.TileSEPOP},
		Var{Name: "drizzle_probability_mean_effective_count", Dims: two, Units: "1", LongName: "effective number of independent columns of the mean drizzle probability",
			Comment: "n (standard_error / tile_standard_error)^2, at most n", Data: jt.NEffPOP},
		Var{Name: "cloud_base_drizzle_rate_mean_tile_standard_error", Dims: two, Units: "kg m-2 s-1", LongName: "standard error of the mean cloud-base drizzle rate with tiles as independent units", Comment: tileNote, Ancillary: "tile_count", Data: jt.TileSERate},
		Var{Name: "cloud_base_drizzle_rate_mean_effective_count", Dims: two, Units: "1", LongName: "effective number of independent columns of the mean cloud-base drizzle rate",
			Comment: "n (standard_error / tile_standard_error)^2, at most n", Data: jt.NEffRate},
	)
	if jt.HaveErrPOP {
		vs = append(vs, Var{Name: "drizzle_probability_mean_retrieval_error", Dims: two, Units: "1", LongName: "mean retrieval standard error of the drizzle probability of the columns in the bin",
			Comment: "mean of drizzle_probability_standard_error of the processed files over the bin's columns; the error of one column, not of the bin mean", Data: jt.ErrPOP})
	}
	if jt.HaveErrRate {
		vs = append(vs, Var{Name: "cloud_base_drizzle_rate_mean_retrieval_error", Dims: two, Units: "kg m-2 s-1", LongName: "mean retrieval standard error of the cloud-base drizzle rate of the columns in the bin",
			Comment: "mean of cloud_base_drizzle_rate_standard_error of the processed files over the bin's columns; the error of one column, not of the bin mean", Data: jt.ErrRate})
	}
	for _, s := range []struct {
		name, what string
		sl         []Slope
	}{
		{"susceptibility_pop", "drizzle probability (S_POP)", r.SPOP},
		{"susceptibility_rate", "mean cloud-base drizzle rate (S_R)", r.SRate},
		{"susceptibility_conditional_rate", "conditional drizzle rate (S_I = S_R - S_POP)", r.SCond},
	} {
		S, se, bse, nb, nboot := make([]float64, len(s.sl)), make([]float64, len(s.sl)), make([]float64, len(s.sl)), make([]float64, len(s.sl)), make([]float64, len(s.sl))
		for i, x := range s.sl {
			S[i], se[i], bse[i], nb[i], nboot[i] = x.S, x.SE, x.BootSE, float64(x.Bins), float64(x.BootN)
		}
		anc := s.name + "_standard_error " + s.name + "_bins"
		if r.Options.Bootstrap > 0 {
			anc += " " + s.name + "_bootstrap_standard_error " + s.name + "_lower_limit " + s.name + "_upper_limit"
		}
		vs = append(vs,
			Var{Name: s.name, Dims: one, Units: "1", LongName: "precipitation susceptibility -d ln X / d ln N_d of the " + s.what, Comment: fit, Ancillary: anc, Data: S},
			Var{Name: s.name + "_standard_error", Dims: one, Units: "1", LongName: "regression standard error of " + s.name, Data: se},
			Var{Name: s.name + "_bins", Dims: one, Units: "1", Int: true, LongName: "number of N_d bins in the fit of " + s.name, Data: nb},
		)
		if r.Options.Bootstrap > 0 {
			lo, hi := make([]float64, len(s.sl)), make([]float64, len(s.sl))
			for i, x := range s.sl {
				lo[i], hi[i] = x.CILow, x.CIHigh
			}
			boot := fmt.Sprintf("tile bootstrap: contiguous tiles of %s resampled with Poisson(1) weights, %d replicates, seed %d (block bootstrap over non-overlapping blocks, Carlstein 1986 and Künsch 1989; Lahiri 2003 for spatial blocks); replicates with a defined slope in %s_bootstrap_count",
				tileText(r), r.Options.Bootstrap, r.Options.Seed, s.name)
			ci := fmt.Sprintf("%s; percentile interval (Efron), missing with fewer than %d replicates or a slope defined in fewer than 90%% of them", boot, minCIReplicates)
			vs = append(vs, Var{Name: s.name + "_bootstrap_standard_error", Dims: one, Units: "1",
				LongName: "tile-bootstrap standard error of " + s.name, Comment: boot, Data: bse},
				Var{Name: s.name + "_bootstrap_count", Dims: one, Units: "1", Int: true, LongName: "bootstrap replicates with a defined " + s.name, Data: nboot},
				Var{Name: s.name + "_lower_limit", Dims: one, Units: "1", LongName: fmt.Sprintf("lower limit of the %g%% confidence interval of %s", 100*r.Options.CILevel, s.name),
					Comment: ci, ConfidenceLevel: r.Options.CILevel, Data: lo},
				Var{Name: s.name + "_upper_limit", Dims: one, Units: "1", LongName: fmt.Sprintf("upper limit of the %g%% confidence interval of %s", 100*r.Options.CILevel, s.name),
					Comment: ci, ConfidenceLevel: r.Options.CILevel, Data: hi})
		}
	}
	if r.HaveSurface {
		sf, sn := make([]float64, len(r.SurfaceByLWP)), make([]float64, len(r.SurfaceByLWP))
		for i, f := range r.SurfaceByLWP {
			sf[i], sn[i] = f.Value, float64(f.Columns)
		}
		vs = append(vs,
			Var{Name: "surface_drizzle_fraction", Dims: one, Units: "1", LongName: "flux-weighted fraction of cloud-base drizzle that reaches the surface",
				Comment:   "flux-weighted ratio of sums: sum of surface_drizzle_rate over sum of cloud_base_drizzle_rate, over the valid columns in the bin with both rates finite and cloud_base_drizzle_rate > 0",
				Ancillary: "drizzle_column_count", Data: sf},
			Var{Name: "drizzle_column_count", Dims: one, Units: "1", Int: true, LongName: "number of columns in surface_drizzle_fraction (both rates finite, cloud-base rate > 0)", Data: sn},
		)
	}
	return vs
}

// Attributes returns global attributes describing the selection and the column counts
// (the writer adds Conventions, history, source and references).
func (r *Result) Attributes() map[string]string {
	a := map[string]string{
		"columns_seen":              fmt.Sprint(r.Counts.Seen),
		"columns_selected":          fmt.Sprint(r.Counts.Selected),
		"columns_qc_masked":         fmt.Sprint(r.Counts.Masked),
		"columns_invalid":           fmt.Sprint(r.Counts.Invalid),
		"columns_valid":             fmt.Sprint(r.Counts.Valid),
		"columns_outside_bins":      fmt.Sprint(r.Counts.OutOfRange),
		"fit_min_columns":           fmt.Sprint(r.Options.MinCount),
		"fit_min_bins":              fmt.Sprint(r.Options.MinBins),
		"fit_min_drizzling_columns": fmt.Sprint(r.Options.MinDrizzling),
		"qc_mask":                   fmt.Sprint(r.Options.QCMask),
		"bootstrap_replicates":      fmt.Sprint(r.Options.Bootstrap),
		"tile_side_cells":           fmt.Sprint(r.TileSide),
		"tile_count":                fmt.Sprint(r.Tiles),
		"tile_rule":                 "standard errors of the bin means and the bootstrap of the susceptibilities treat contiguous tiles of each time step as independent units; side " + tileText(r) + "; automatic side round(N^(1/(d+2))) for N cells in d dimensions (see doc/science.md of warmrain)",
	}
	if r.Options.Bootstrap > 0 {
		a["bootstrap_seed"] = fmt.Sprint(r.Options.Seed)
		a["confidence_level"] = fmt.Sprint(r.Options.CILevel)
	}
	if r.HaveSurface {
		a["surface_fraction_all"] = fmt.Sprint(r.Surface.Value)
		a["surface_fraction_rule"] = "flux-weighted: sum of surface_drizzle_rate / sum of cloud_base_drizzle_rate over valid columns with both finite and cloud-base rate > 0"
	} else {
		a["surface_fraction_rule"] = "not computed: the processed files have no surface_drizzle_rate"
	}
	if g := r.Options.Region; g != nil {
		a["region"] = fmt.Sprintf("lat %g..%g, lon %g..%g (degrees)", g.LatMin, g.LatMax, g.LonMin, g.LonMax)
	}
	if w := r.Options.Window; !w.IsZero() {
		a["time_window"] = w.String()
	}
	return a
}

// Variables returns the map file's variables: for each map "<name>_mean" (units of the
// input, cell_methods "time: mean" belongs on it) and "<name>_count". Dimensions are
// ("lat", "lon") for a 1-D grid, or ("y", "x") with 2-D "lat" and "lon" variables the
// writer must add and reference through the coordinates attribute.
func (ms MapSet) Variables() []Var {
	dims := []string{"lat", "lon"}
	if ms.Grid.TwoD() {
		dims = []string{"y", "x"}
	}
	var vs []Var
	for _, m := range ms.Maps {
		c := m.CountField()
		long := m.Mean.LongName
		if long == "" {
			long = "time mean of " + m.Mean.Name
		}
		vs = append(vs,
			Var{Name: m.Mean.Name + "_mean", Dims: dims, Units: m.Mean.Units, LongName: long,
				Comment: "mean over the selected time steps of the non-missing values; cell_methods: time: mean", Ancillary: c.Name, Data: m.Mean.Data},
			Var{Name: c.Name, Dims: dims, Units: "1", Int: true, LongName: c.LongName, Data: c.Data})
	}
	return vs
}
