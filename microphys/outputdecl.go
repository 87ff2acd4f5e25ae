package microphys

// QCOutputName is the name of the output variable that holds Outputs.QC (its bits are
// declared in QCFlags).
const QCOutputName = "warm_rain_qc"

// OutputDecl declares one output variable: where its value comes from, its units in memory
// and in files, and its CF metadata. OutputDecls lists them all; process (the files and
// their attributes), column, inspect, summary and the pictures, the README table and the
// manual all take names, units and scales from that one table.
type OutputDecl struct {
	Name    string  // variable name in output files
	SIUnits string  // units of the value in memory (SI base units, UDUNITS spelling)
	Units   string  // units in files: file value = SI value × Scale
	Scale   float64 // from SIUnits to Units (tested against udunits by cmd/internal/app)
	// StandardName is a name of the CF standard-name table v83, or "" (checked by the CF
	// lint test).
	StandardName string
	LongName     string // the long_name attribute: one sentence
	Title        string // a short title for pictures and tables
	// ValidMin and ValidMax are the valid range in Units (also the packing range).
	ValidMin, ValidMax float64
	Comment            string
	// References is the references attribute; when SchemeReference is set the chosen
	// autoconversion scheme's citation (AutoconvScheme.Citation) is added to it.
	References      string
	SchemeReference bool
	Content         string // coverage_content_type (ISO 19115-1): modelResult, physicalMeasurement, ...
	Packable        bool   // bounded: stored as CF-packed int16 over the valid range with --pack
	// Collector and Evaporation: the output needs the collector drop (its evaporation).
	Collector, Evaporation bool
	// Input names the input role the output copies (in SI) instead of Get, e.g. "lwp".
	Input string
	// Get returns the SI value from a column's outputs (nil when Input is set).
	Get func(o *Outputs) float64

	// MapLo and MapHi are the fixed colour limits of the output's maps in MapUnits,
	// chosen from the quantity's physical range (not from the data) so that two maps
	// compare; MapLog selects a logarithmic colour scale, for quantities that span
	// decades. MapUnits and MapScale are the units of the pictures when they differ
	// from Units ("" and 0: Units and Scale). doc/maps.md#colour-scales lists them.
	MapLo, MapHi float64
	MapLog       bool
	MapUnits     string
	MapScale     float64
	// DependsOn names the parameters (ParamDecls names, in their order) whose value
	// changes this output with the default settings, screening thresholds and collector
	// numerics left out; picture titles name exactly these. TestOutputDependencies checks
	// it by perturbing each parameter.
	DependsOn []string
}

// MapDisplay returns the units of the output's pictures and the factor from SIUnits.
//
// Reference: none (metadata).
// Valid: always.
func (d *OutputDecl) MapDisplay() (units string, scale float64) {
	if d.MapUnits != "" {
		return d.MapUnits, d.MapScale
	}
	return d.Units, d.Scale
}

// ReferencesFor returns the references attribute of the output for the given scheme.
//
// Reference: none (metadata).
// Valid: always.
func (d *OutputDecl) ReferencesFor(s AutoconvScheme) string {
	if !d.SchemeReference {
		return d.References
	}
	c := s.Citation()
	if d.References == "" {
		return c
	}
	return c + "; " + d.References
}

// OutputDecls declares every output variable except the QC flags, in file order. Adding an
// output is one row here plus its field in Outputs and its physics in Model.Column.
var OutputDecls = []OutputDecl{
	{Name: "liquid_water_path", Input: "lwp", SIUnits: "kg m-2", Units: "g m-2", Scale: 1e3,
		StandardName: "atmosphere_mass_content_of_cloud_liquid_water",
		LongName:     "liquid water path used for the diagnostics (the input's, or derived from optical thickness and effective radius, or in-cloud from a grid-box mean)", Title: "Liquid water path",
		ValidMin: 0, ValidMax: 1e4,
		Comment: "the LWP the diagnostics used, in the units of this file (the QC bits say whether it was derived); kept so that summaries can bin by LWP", Content: "physicalMeasurement",
		MapLo: 0, MapHi: 400},
	{Name: "droplet_number", Get: func(o *Outputs) float64 { return o.Nd }, SIUnits: "m-3", Units: "cm-3", Scale: 1e-6,
		StandardName: "number_concentration_of_cloud_liquid_water_particles_in_air_at_liquid_water_cloud_top",
		LongName:     "cloud droplet number concentration of the adiabatic cloud model", Title: "Droplet number concentration N_d",
		ValidMin: 0, ValidMax: 1e4,
		Comment:    "N_d from cloud-top effective radius and optical thickness for an adiabatic cloud; constant with height in the model",
		References: "Brenguier et al. (2000); Grosvenor et al. (2018)", Content: "modelResult",
		MapLo: 10, MapHi: 1000, MapLog: true,
		DependsOn: []string{"k_ratio", "extinction_efficiency", "adiabatic_fraction", "condensation_rate", "default_ctt", "default_ctp"}},
	{Name: "cloud_thickness", Get: func(o *Outputs) float64 { return o.H }, SIUnits: "m", Units: "m", Scale: 1,
		StandardName: "thickness_of_liquid_water_cloud",
		LongName:     "geometric thickness of the adiabatic liquid cloud layer", Title: "Adiabatic cloud thickness",
		ValidMin: 0, ValidMax: 2e4,
		Comment:    "H = sqrt(2 LWP / (f_ad c_w))",
		References: "Brenguier et al. (2000)", Content: "modelResult", Packable: true,
		MapLo: 0, MapHi: 1000,
		DependsOn: []string{"adiabatic_fraction", "condensation_rate", "default_ctt", "default_ctp"}},
	{Name: "condensation_rate", Get: func(o *Outputs) float64 { return o.Cw }, SIUnits: "kg m-4", Units: "g m-3 km-1", Scale: 1e6,
		LongName: "adiabatic condensation rate (increase of liquid water content with height along the moist adiabat)", Title: "Adiabatic condensation rate",
		ValidMin: 0, ValidMax: 10,
		Comment:    "c_w at cloud-top temperature and pressure, before the adiabatic fraction is applied",
		References: "Brenguier et al. (2000); Bolton (1980)", Content: "modelResult", Packable: true,
		MapLo: 1, MapHi: 2.6,
		DependsOn: []string{"condensation_rate", "default_ctt", "default_ctp"}},
	{Name: "adiabatic_top_effective_radius", Get: func(o *Outputs) float64 { return o.ReTop }, SIUnits: "m", Units: "um", Scale: 1e6,
		LongName: "cloud-top effective radius of the adiabatic cloud model", Title: "Adiabatic cloud-top effective radius",
		ValidMin: 0, ValidMax: 100,
		Comment: "r_e at the top of the adiabatic column with the derived N_d and H", Content: "modelResult", Packable: true,
		MapLo: 4, MapHi: 30,
		DependsOn: []string{"extinction_efficiency"}},
	{Name: "column_autoconversion_rate", Get: func(o *Outputs) float64 { return o.Autoconv }, SIUnits: "kg m-2 s-1", Units: "kg m-2 s-1", Scale: 1,
		LongName: "column-integrated autoconversion rate of cloud water to drizzle over the adiabatic profile", Title: "Column autoconversion rate",
		ValidMin: 0, ValidMax: 1,
		Comment: "local autoconversion rate integrated over the adiabatic liquid-water profile", SchemeReference: true, Content: "modelResult",
		MapLo: 0.001, MapHi: 10, MapLog: true, MapUnits: "mm day-1", MapScale: 86400,
		DependsOn: []string{"autoconversion", "k_ratio", "extinction_efficiency", "adiabatic_fraction", "condensation_rate", "default_ctt", "default_ctp"}},
	{Name: "autoconversion_efficiency", Get: func(o *Outputs) float64 { return o.Efficiency }, SIUnits: "s-1", Units: "s-1", Scale: 1,
		LongName: "autoconversion efficiency: column autoconversion rate divided by liquid water path", Title: "Autoconversion efficiency",
		ValidMin: 0, ValidMax: 1,
		Comment: "fraction of the column's cloud water converted to drizzle per unit time by autoconversion alone; accretion of cloud water by drizzle, which dominates drizzle production in stratocumulus, is not included", SchemeReference: true, Content: "modelResult",
		MapLo: 1e-07, MapHi: 0.0001, MapLog: true,
		DependsOn: []string{"autoconversion", "k_ratio", "extinction_efficiency", "adiabatic_fraction", "condensation_rate", "default_ctt", "default_ctp"}},
	{Name: "cloud_base_drizzle_rate", Get: func(o *Outputs) float64 { return o.DrizzleRate }, SIUnits: "kg m-2 s-1", Units: "mm day-1", Scale: 86400,
		LongName: "cell-mean drizzle rate at cloud base (liquid water equivalent) from the sub-grid drizzle model", Title: "Cloud-base drizzle rate (cell mean)",
		ValidMin: 0, ValidMax: 1000,
		Comment: "R = a N_d^-c x integral of P_on(r_e(L)) L^b over the gamma-distributed sub-grid LWP L (local law a LWP^b N_d^-c with LWP in g m-2, N_d in cm-3, R in mm day-1); R = drizzle_probability x cloud_base_drizzle_intensity", References: "Comstock et al. (2004); Barker (1996)", Content: "modelResult",
		MapLo: 0.01, MapHi: 10, MapLog: true,
		DependsOn: []string{"k_ratio", "extinction_efficiency", "adiabatic_fraction", "condensation_rate", "onset_radius", "onset_width", "gamma_shape", "default_ctt", "default_ctp", "drizzle_law_a", "drizzle_law_b", "drizzle_law_c"}},
	{Name: "cloud_base_drizzle_intensity", Get: func(o *Outputs) float64 { return o.DrizzleIntensity }, SIUnits: "kg m-2 s-1", Units: "mm day-1", Scale: 86400,
		LongName: "mean drizzle rate at cloud base of the drizzling part of the cell (liquid water equivalent)", Title: "Cloud-base drizzle intensity (drizzling part)",
		ValidMin: 0, ValidMax: 1000,
		Comment: "I = cloud_base_drizzle_rate / drizzle_probability from the same sub-grid model; missing where the drizzle probability is 0", References: "Comstock et al. (2004); Barker (1996)", Content: "modelResult",
		MapLo: 0.1, MapHi: 30, MapLog: true,
		DependsOn: []string{"k_ratio", "extinction_efficiency", "adiabatic_fraction", "condensation_rate", "onset_radius", "onset_width", "gamma_shape", "default_ctt", "default_ctp", "drizzle_law_a", "drizzle_law_b", "drizzle_law_c"}},
	{Name: "drizzle_probability", Get: func(o *Outputs) float64 { return o.POP }, SIUnits: "1", Units: "1", Scale: 1,
		LongName: "probability that the column drizzles: the drizzling fraction of the cell in the sub-grid drizzle model", Title: "Drizzle probability (POP)",
		ValidMin: 0, ValidMax: 1,
		Comment: "POP = integral of P_on(r_e(L)) over the gamma-distributed sub-grid LWP L; P_on rises linearly over the onset range of cloud-top effective radius (a step at the onset radius for onset width 0, then POP = Q(nu, nu LWP*/LWP))", References: "Barker (1996)", Content: "modelResult", Packable: true,
		MapLo: 0, MapHi: 1,
		DependsOn: []string{"extinction_efficiency", "onset_radius", "onset_width", "gamma_shape"}},
	{Name: "critical_lwp", Get: func(o *Outputs) float64 { return o.LWPCrit }, SIUnits: "kg m-2", Units: "g m-2", Scale: 1e3,
		LongName: "liquid water path at which the adiabatic cloud-top effective radius reaches the drizzle-onset radius (centre of the onset range)", Title: "Critical LWP for drizzle onset",
		ValidMin: 0, ValidMax: 1e5, Content: "modelResult",
		MapLo: 10, MapHi: 10000, MapLog: true,
		DependsOn: []string{"extinction_efficiency", "onset_radius"}},
	{Name: "collector_exit_radius", Get: func(o *Outputs) float64 { return o.CollectorRadius }, SIUnits: "m", Units: "um", Scale: 1e6,
		LongName: "radius of the collector drop when it leaves the cloud", Title: "Collector drop radius at cloud exit",
		ValidMin: 0, ValidMax: 1e4, Collector: true,
		Comment: "continuous-collection growth with Beard (1976) fall speeds and the chosen collision and coalescence efficiencies", Content: "modelResult",
		MapLo: 25, MapHi: 100,
		DependsOn: []string{"collision", "coalescence", "k_ratio", "extinction_efficiency", "adiabatic_fraction", "condensation_rate", "collector_radius", "updraft", "default_ctt", "default_ctp", "no_collector"}},
	{Name: "collector_exit_time", Get: func(o *Outputs) float64 { return o.CollectorTime }, SIUnits: "s", Units: "s", Scale: 1,
		LongName: "time the collector drop spends in the cloud before it leaves", Title: "Collector drop time in cloud",
		ValidMin: 0, ValidMax: 1e7, Collector: true, Content: "modelResult",
		MapLo: 0, MapHi: 6000,
		DependsOn: []string{"collision", "coalescence", "k_ratio", "extinction_efficiency", "adiabatic_fraction", "condensation_rate", "collector_radius", "updraft", "default_ctt", "default_ctp", "no_collector"}},
	{Name: "surface_drizzle_radius", Get: func(o *Outputs) float64 { return o.SurfaceRadius }, SIUnits: "m", Units: "um", Scale: 1e6,
		LongName: "radius of the single collector drop on reaching the surface after sub-cloud evaporation (0 if it evaporated)", Title: "Collector drop radius at the surface (0 = evaporated)",
		ValidMin: 0, ValidMax: 1e4, Collector: true, Evaporation: true,
		Comment: "the explanatory path of one collector drop: diffusional evaporation with ventilation through the sub-cloud layer; the drizzle that reaches the surface is surface_drizzle_rate", Content: "modelResult",
		MapLo: 0, MapHi: 200,
		DependsOn: []string{"collision", "coalescence", "k_ratio", "extinction_efficiency", "adiabatic_fraction", "condensation_rate", "collector_radius", "updraft", "subcloud_humidity", "surface_pressure", "default_ctt", "default_ctp", "no_collector", "no_evaporation"}},
	{Name: "drizzle_evaporation_height", Get: func(o *Outputs) float64 { return o.EvapHeight }, SIUnits: "m", Units: "m", Scale: 1,
		LongName: "height above the surface at which the single collector drop evaporated completely (missing if it reached the surface)", Title: "Height where the collector drop evaporated",
		ValidMin: 0, ValidMax: 2e4, Collector: true, Evaporation: true, Content: "modelResult", Packable: true,
		MapLo: 0, MapHi: 2000,
		DependsOn: []string{"collision", "coalescence", "k_ratio", "extinction_efficiency", "adiabatic_fraction", "condensation_rate", "collector_radius", "updraft", "subcloud_humidity", "surface_pressure", "default_ctt", "default_ctp", "no_collector", "no_evaporation"}},
	{Name: "surface_drizzle_rate", Get: func(o *Outputs) float64 { return o.SurfaceDrizzleRate }, SIUnits: "kg m-2 s-1", Units: "mm day-1", Scale: 86400,
		LongName: "drizzle rate at the surface (liquid water equivalent): the part of the cloud-base drizzle rate that survives sub-cloud evaporation", Title: "Surface drizzle rate",
		ValidMin: 0, ValidMax: 1000, Collector: true, Evaporation: true,
		Comment:    "cloud_base_drizzle_rate times surface_drizzle_fraction",
		References: "Wood (2005a, b); vanZanten et al. (2005)", Content: "modelResult",
		MapLo: 0.001, MapHi: 10, MapLog: true,
		DependsOn: []string{"k_ratio", "extinction_efficiency", "adiabatic_fraction", "condensation_rate", "onset_radius", "onset_width", "gamma_shape", "subcloud_humidity", "drizzle_mean_radius", "drizzle_min_radius", "drizzle_shape", "surface_pressure", "default_ctt", "default_ctp", "drizzle_law_a", "drizzle_law_b", "drizzle_law_c", "no_collector", "no_evaporation"}},
	{Name: "surface_drizzle_fraction", Get: func(o *Outputs) float64 { return o.SurfaceDrizzleFraction }, SIUnits: "1", Units: "1", Scale: 1,
		LongName: "fraction of the cloud-base drizzle flux that reaches the surface", Title: "Surface/cloud-base drizzle ratio",
		ValidMin: 0, ValidMax: 1, Collector: true, Evaporation: true,
		Comment:    "a drizzle size distribution of fixed shape at cloud base (truncated gamma, mean radius a parameter), each size class carried down with ventilated evaporation through the sub-cloud layer (number flux conserved, no coalescence); independent of the drop number",
		References: "Wood (2005a, b); vanZanten et al. (2005); Beard (1976); Pruppacher and Klett (1997)", Content: "modelResult", Packable: true,
		MapLo: 0.001, MapHi: 1, MapLog: true,
		DependsOn: []string{"adiabatic_fraction", "condensation_rate", "subcloud_humidity", "drizzle_mean_radius", "drizzle_min_radius", "drizzle_shape", "surface_pressure", "default_ctt", "default_ctp", "no_collector", "no_evaporation"}},
	{Name: "cloud_base_height", Get: func(o *Outputs) float64 { return o.CloudBaseHeight }, SIUnits: "m", Units: "m", Scale: 1,
		LongName: "height of cloud base above the surface: the depth of the sub-cloud layer the drizzle falls through", Title: "Cloud-base height",
		ValidMin: 0, ValidMax: 2e4, Collector: true, Evaporation: true,
		Comment:    "cloud-top height minus the adiabatic thickness when the column gives a cloud-top height; otherwise the dry adiabat from cloud base down to the surface pressure",
		References: "Brenguier et al. (2000)", Content: "modelResult", Packable: true,
		MapLo: 0, MapHi: 2000,
		DependsOn: []string{"adiabatic_fraction", "condensation_rate", "surface_pressure", "default_ctt", "default_ctp", "no_collector", "no_evaporation"}},
}

// OutputByName returns the declaration of the output named name, or nil.
//
// Reference: none (metadata).
// Valid: always.
func OutputByName(name string) *OutputDecl {
	for i := range OutputDecls {
		if OutputDecls[i].Name == name {
			return &OutputDecls[i]
		}
	}
	return nil
}
