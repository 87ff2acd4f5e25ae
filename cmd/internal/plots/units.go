package plots

// displayUnit maps an SI units string (as in the processed files) to the unit shown.
type displayUnit struct {
	scale float64
	label string
}

var displayUnits = map[string]displayUnit{
	"kg m-2":     {1e3, "g m-2"},
	"kg m-2 s-1": {86400, "mm day-1"}, // 1 kg m-2 of water = 1 mm; × 86400 s day-1
	"m-3":        {1e-6, "cm-3"},
	"kg m-4":     {1e6, "g m-3 km-1"},
	"1":          {1, "dimensionless"},
	"":           {1, ""},
	"K":          {1, "K"},
	"Pa":         {1e-2, "hPa"},
}

// DisplayUnits returns the factor from SI units to the display unit and the display
// unit's label: 1 → dimensionless, kg m-2 → g m-2 (1e3), kg m-2 s-1 → mm day-1 (86400), m-3 → cm-3 (1e-6),
// kg m-4 → g m-3 km-1 (1e6), Pa → hPa (1e-2). Other units, including m (heights and
// radii alike), are shown unchanged (factor 1); set MapOptions.Scale and Units for
// those (for example 1e6 and "µm" for a drop radius).
func DisplayUnits(units string) (scale float64, label string) {
	if d, ok := displayUnits[units]; ok {
		return d.scale, d.label
	}
	return 1, units
}
