package app

import (
	"fmt"
	"strings"

	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/microphys"
)

// outputDef is one output variable: how to take it from microphys.Outputs,
// how to scale it from SI to the file's units, and its CF metadata.
type outputDef struct {
	name         string
	get          func(o *microphys.Outputs) float64
	scale        float64 // file value = SI value * scale
	units        string
	standardName string // only names in the CF standard-name table v83 (checked by the CF lint test)
	longName     string
	validMin     float64
	validMax     float64
	comment      string
	references   string
	input        grid.Role // copied from this input role (in SI) instead of taken from get
	collector    bool      // needs the collector model
	evaporation  bool      // needs the evaporation model
	content      string
	packable     bool // bounded: stored as CF-packed int16 over [validMin, validMax] with --pack
}

// packedSteps is the number of int16 steps a packed output's valid range spans: stored
// values -32767..32767 (-32768 is the fill value), so the step is (validMax -
// validMin)/packedSteps and a value is kept within half a step.
const packedSteps = 65534

// packing returns the scale_factor and add_offset of a packed output.
func (d *outputDef) packing() (scale, offset float64) {
	return (d.validMax - d.validMin) / packedSteps, (d.validMax + d.validMin) / 2
}

const qcName = "warm_rain_qc"

// outputTable lists every diagnostic warmrain can write, in file order.
func outputTable() []outputDef {
	return []outputDef{
		{name: "liquid_water_path", input: grid.RoleLWP, scale: 1e3, units: "g m-2",
			standardName: "atmosphere_mass_content_of_cloud_liquid_water",
			longName:     "liquid water path used for the diagnostics (copied from the input)",
			validMin:     0, validMax: 1e4,
			comment: "the input LWP in the units of this file; kept so that summaries can bin by LWP", content: "physicalMeasurement"},
		{name: "droplet_number", get: func(o *microphys.Outputs) float64 { return o.Nd }, scale: 1e-6, units: "cm-3",
			standardName: "number_concentration_of_cloud_liquid_water_particles_in_air_at_liquid_water_cloud_top",
			longName:     "cloud droplet number concentration of the adiabatic cloud model",
			validMin:     0, validMax: 1e4,
			comment:    "N_d from cloud-top effective radius and optical thickness for an adiabatic cloud; constant with height in the model",
			references: "Brenguier et al. (2000); Grosvenor et al. (2018)", content: "modelResult"},
		{name: "cloud_thickness", get: func(o *microphys.Outputs) float64 { return o.H }, scale: 1, units: "m",
			standardName: "thickness_of_liquid_water_cloud",
			longName:     "geometric thickness of the adiabatic liquid cloud layer",
			validMin:     0, validMax: 2e4,
			comment:    "H = sqrt(2 LWP / (f_ad c_w))",
			references: "Brenguier et al. (2000)", content: "modelResult", packable: true},
		{name: "condensation_rate", get: func(o *microphys.Outputs) float64 { return o.Cw }, scale: 1e6, units: "g m-3 km-1",
			longName: "adiabatic condensation rate (increase of liquid water content with height along the moist adiabat)",
			validMin: 0, validMax: 10,
			comment:    "c_w at cloud-top temperature and pressure, before the adiabatic fraction is applied",
			references: "Brenguier et al. (2000); Bolton (1980)", content: "modelResult", packable: true},
		{name: "adiabatic_top_effective_radius", get: func(o *microphys.Outputs) float64 { return o.ReTop }, scale: 1e6, units: "um",
			longName: "cloud-top effective radius of the adiabatic cloud model",
			validMin: 0, validMax: 100,
			comment: "r_e at the top of the adiabatic column with the derived N_d and H", content: "modelResult", packable: true},
		{name: "column_autoconversion_rate", get: func(o *microphys.Outputs) float64 { return o.Autoconv }, scale: 1, units: "kg m-2 s-1",
			longName: "column-integrated autoconversion rate of cloud water to drizzle over the adiabatic profile",
			validMin: 0, validMax: 1,
			comment: "local autoconversion rate integrated over the adiabatic liquid-water profile", content: "modelResult"},
		{name: "autoconversion_efficiency", get: func(o *microphys.Outputs) float64 { return o.Efficiency }, scale: 1, units: "s-1",
			longName: "autoconversion efficiency: column autoconversion rate divided by liquid water path",
			validMin: 0, validMax: 1,
			comment: "fraction of the column's cloud water converted to drizzle per unit time by autoconversion alone; accretion of cloud water by drizzle, which dominates drizzle production in stratocumulus (Wood 2005), is not included", content: "modelResult"},
		{name: "cloud_base_drizzle_rate", get: func(o *microphys.Outputs) float64 { return o.DrizzleRate }, scale: 86400, units: "mm day-1",
			longName: "cell-mean drizzle rate at cloud base (liquid water equivalent) from the sub-grid drizzle model",
			validMin: 0, validMax: 1000,
			comment: "R = a N_d^-c integral of P_on(r_e(L)) L^b over the gamma-distributed sub-grid LWP (local law a LWP^b N_d^-c, LWP in g m-2, N_d in cm-3, R in mm day-1); R = drizzle_probability x cloud_base_drizzle_intensity", references: "Comstock et al. (2004); Barker (1996)", content: "modelResult"},
		{name: "cloud_base_drizzle_intensity", get: func(o *microphys.Outputs) float64 { return o.DrizzleIntensity }, scale: 86400, units: "mm day-1",
			longName: "mean drizzle rate at cloud base of the drizzling part of the cell (liquid water equivalent)",
			validMin: 0, validMax: 1000,
			comment: "I = cloud_base_drizzle_rate / drizzle_probability from the same sub-grid model; missing where the drizzle probability is 0", references: "Comstock et al. (2004); Barker (1996)", content: "modelResult"},
		{name: "drizzle_probability", get: func(o *microphys.Outputs) float64 { return o.POP }, scale: 1, units: "1",
			longName: "probability that the column drizzles: drizzling fraction of the cell in the sub-grid drizzle model",
			validMin: 0, validMax: 1,
			comment: "POP = integral of P_on(r_e(L)) over the gamma-distributed sub-grid LWP; P_on rises linearly over the onset range of cloud-top effective radius (a step at the onset radius with onset width 0); with the step POP = Q(nu, nu LWP*/LWP)", references: "Barker (1996)", content: "modelResult", packable: true},
		{name: "critical_lwp", get: func(o *microphys.Outputs) float64 { return o.LWPCrit }, scale: 1e3, units: "g m-2",
			longName: "liquid water path at which the adiabatic cloud-top effective radius reaches the drizzle-onset radius (centre of the onset range)",
			validMin: 0, validMax: 1e5, content: "modelResult"},
		{name: "collector_exit_radius", get: func(o *microphys.Outputs) float64 { return o.CollectorRadius }, scale: 1e6, units: "um",
			longName: "radius of the collector drop when it leaves the cloud",
			validMin: 0, validMax: 1e4, collector: true,
			comment: "continuous-collection growth with Beard (1976) fall speeds and the chosen collision and coalescence efficiencies", content: "modelResult"},
		{name: "collector_exit_time", get: func(o *microphys.Outputs) float64 { return o.CollectorTime }, scale: 1, units: "s",
			longName: "time the collector drop spends in the cloud before it leaves",
			validMin: 0, validMax: 1e7, collector: true, content: "modelResult"},
		{name: "surface_drizzle_radius", get: func(o *microphys.Outputs) float64 { return o.SurfaceRadius }, scale: 1e6, units: "um",
			longName: "radius of the collector drop on reaching the surface after sub-cloud evaporation (0 if it evaporated)",
			validMin: 0, validMax: 1e4, collector: true, evaporation: true,
			comment: "diffusional evaporation with ventilation through a well-mixed sub-cloud layer", content: "modelResult"},
		{name: "drizzle_evaporation_height", get: func(o *microphys.Outputs) float64 { return o.EvapHeight }, scale: 1, units: "m",
			longName: "height above the surface at which the collector drop evaporated completely (missing if it reached the surface)",
			validMin: 0, validMax: 2e4, collector: true, evaporation: true, content: "modelResult", packable: true},
	}
}

// selectOutputs picks the outputs named in list (comma separated; "all" or
// empty for every output the parameters allow). The QC variable is always written.
func selectOutputs(list string, p microphys.Params) ([]outputDef, error) {
	all := outputTable()
	var keep []outputDef
	for _, d := range all {
		if d.collector && !p.EnableCollector {
			continue
		}
		if d.evaporation && !p.EnableEvaporation {
			continue
		}
		keep = append(keep, d)
	}
	list = strings.TrimSpace(list)
	if list == "" || list == "all" {
		return keep, nil
	}
	var out []outputDef
	seen := map[string]bool{}
	for _, n := range strings.Split(list, ",") {
		n = strings.TrimSpace(n)
		if n == "" || seen[n] || n == qcName {
			continue
		}
		seen[n] = true
		found := false
		for _, d := range keep {
			if d.name == n {
				out = append(out, d)
				found = true
			}
		}
		if !found {
			for _, d := range all {
				if d.name == n {
					return nil, usagef("output %q needs the collector/evaporation model, which the options switch off", n)
				}
			}
			return nil, usagef("unknown output %q; known outputs: %s", n, strings.Join(outputNames(all), ", "))
		}
	}
	return out, nil
}

func outputNames(defs []outputDef) []string {
	n := make([]string, len(defs))
	for i, d := range defs {
		n[i] = d.name
	}
	return n
}

// gridVars turns the chosen outputs into grid output variables, QC last.
func gridVars(defs []outputDef, inputVars string, pack bool) []grid.OutputVar {
	anc := qcName
	vars := make([]grid.OutputVar, 0, len(defs)+1)
	for _, d := range defs {
		comment := d.comment
		v := grid.OutputVar{
			Name: d.name, StandardName: d.standardName, LongName: d.longName, Units: d.units,
			Type: grid.Float32, Fill: -999, ValidMin: d.validMin, ValidMax: d.validMax,
			AncillaryVariables: anc, CellMethods: "time: point", Comment: comment, References: d.references,
			CoverageContentType: d.content,
		}
		if pack && d.packable {
			v.Type, v.Fill = grid.Int16, -32768
			v.Scale, v.Offset = d.packing()
		}
		vars = append(vars, v)
	}
	masks := make([]int, len(microphys.QCFlags))
	words := make([]string, len(microphys.QCFlags))
	for i, f := range microphys.QCFlags {
		masks[i] = int(f.Bit)
		words[i] = f.Name
	}
	var maxMask int
	for _, m := range masks {
		maxMask |= m
	}
	vars = append(vars, grid.OutputVar{
		Name: qcName, StandardName: "quality_flag", LongName: "warm-rain diagnostic quality flags",
		Units: "", Type: grid.Int32, Fill: -1, ValidMin: 0, ValidMax: float64(maxMask),
		FlagMasks: masks, FlagMeanings: strings.Join(words, " "),
		Comment:             fmt.Sprintf("bit set = condition true; screened columns carry fill values in every diagnostic. Inputs: %s", inputVars),
		CoverageContentType: "qualityInformation",
	})
	return vars
}
