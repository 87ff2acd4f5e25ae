package app

import (
	"fmt"
	"strings"

	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/microphys"
)

// outputDef is one output variable as the writer uses it: a row of
// microphys.OutputDecls (the one declaration of names, units, scales and CF metadata)
// with its input role resolved and its references for the chosen scheme.
type outputDef struct {
	name         string
	get          func(o *microphys.Outputs) float64
	scale        float64 // file value = SI value * scale
	units        string
	standardName string
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
	decl         int  // index in microphys.OutputDecls
	title        string
}

// packedSteps is the number of int16 steps a packed output's valid range spans: stored
// values -32767..32767 (-32768 is the fill value), so the step is (validMax -
// validMin)/packedSteps and a value is kept within half a step.
const packedSteps = 65534

// packing returns the scale_factor and add_offset of a packed output.
func (d *outputDef) packing() (scale, offset float64) {
	return (d.validMax - d.validMin) / packedSteps, (d.validMax + d.validMin) / 2
}

const qcName = microphys.QCOutputName

// outputTable lists every diagnostic warmrain can write, in file order, from
// microphys.OutputDecls, with the references of the default autoconversion scheme.
func outputTable() []outputDef {
	return outputTableFor(microphys.DefaultParams().Autoconv)
}

// outputTableFor is outputTable with the references of the given autoconversion scheme.
func outputTableFor(s microphys.AutoconvScheme) []outputDef {
	defs := make([]outputDef, len(microphys.OutputDecls))
	for i := range microphys.OutputDecls {
		d := &microphys.OutputDecls[i]
		defs[i] = outputDef{name: d.Name, get: d.Get, scale: d.Scale, units: d.Units,
			standardName: d.StandardName, longName: d.LongName, validMin: d.ValidMin, validMax: d.ValidMax,
			comment: d.Comment, references: d.ReferencesFor(s), input: grid.Role(d.Input),
			collector: d.Collector, evaporation: d.Evaporation, content: d.Content, packable: d.Packable, decl: i, title: d.Title}
	}
	return defs
}

// selectOutputs picks the outputs named in list (comma separated; "all" or
// empty for every output the parameters allow). The QC variable is always written.
func selectOutputs(list string, p microphys.Params) ([]outputDef, error) {
	all := outputTableFor(p.Autoconv)
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
	for _, f := range microphys.InputQCFlags { // bits 16 and up: the inputs' quality and completion
		masks = append(masks, int(f.Bit))
		words = append(words, f.Name)
	}
	var maxMask int
	for _, m := range masks {
		maxMask |= m
	}
	vars = append(vars, grid.OutputVar{
		Name: qcName, StandardName: "quality_flag", LongName: "warm-rain diagnostic quality flags",
		Units: "", Type: grid.Uint32, NoFill: true, ValidMin: 0, ValidMax: float64(maxMask),
		FlagMasks: masks, FlagMeanings: strings.Join(words, " "),
		Comment:             fmt.Sprintf("bit set = condition true; screened columns carry fill values in every diagnostic. Inputs: %s", inputVars),
		CoverageContentType: "qualityInformation",
	})
	return vars
}
