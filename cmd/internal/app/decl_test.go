package app

import (
	"math"
	"strings"
	"testing"

	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/microphys"
)

// udunitsFactor returns the factor from one unit to another computed by libudunits2 (an
// outside library), so the declared scales are checked against something else than
// themselves. A depth of liquid water is its mass per area: 1 kg m-2 = 1 mm (rho_w =
// 1000 kg m-3, derived), the convention of CF's lwe_ (liquid water equivalent) names.
func udunitsFactor(t *testing.T, from, to string) float64 {
	t.Helper()
	c, err := grid.NewConverter(from, to)
	if err != nil && strings.HasPrefix(from, "kg m-2") {
		c, err = grid.NewConverter(strings.Replace(from, "kg m-2", "mm", 1), to)
	}
	if err != nil {
		t.Fatalf("udunits %q -> %q: %v", from, to, err)
	}
	if c.Offset != 0 {
		t.Fatalf("udunits %q -> %q has an offset %g", from, to, c.Offset)
	}
	return c.Factor
}

// TestOutputScalesFromUdunits checks every output's declared Scale against the factor
// libudunits2 computes from its declared SI units to its file units.
func TestOutputScalesFromUdunits(t *testing.T) {
	for _, d := range microphys.OutputDecls {
		want := udunitsFactor(t, d.SIUnits, d.Units)
		if math.Abs(d.Scale-want) > 1e-12*want {
			t.Errorf("%s: Scale %g from %s to %s, udunits says %g", d.Name, d.Scale, d.SIUnits, d.Units, want)
		}
	}
}

// paramSIUnits are the SI units of the parameters' user units (common practice: the SI
// base units of each quantity); the factor between them comes from udunits.
var paramSIUnits = map[string]string{
	"um": "m", "hPa": "Pa", "g m-2": "kg m-2", "cm-3": "m-3", "g kg-1": "1",
	"g m-3 km-1": "kg m-4", "K": "K", "m": "m", "m s-1": "m s-1", "s-1": "s-1", "1": "1",
}

// TestParamScalesFromUdunits checks every numeric parameter's declared Scale against
// libudunits2, and that the options convert users' values to SI through it.
func TestParamScalesFromUdunits(t *testing.T) {
	for i := range microphys.ParamDecls {
		d := &microphys.ParamDecls[i]
		if d.Kind != microphys.ParamNumber {
			continue
		}
		si, ok := paramSIUnits[d.Unit]
		if !ok {
			t.Errorf("%s: unit %q: add its SI units to paramSIUnits", d.Name, d.Unit)
			continue
		}
		want := udunitsFactor(t, si, d.Unit)
		if math.Abs(d.Scale-want) > 1e-12*want {
			t.Errorf("%s: Scale %g from %s to %s, udunits says %g", d.Name, d.Scale, si, d.Unit, want)
		}
		if got := d.ToSI(7); math.Abs(got-7/want) > 1e-12*math.Abs(got) {
			t.Errorf("%s: 7 %s is %g %s, want %g", d.Name, d.Unit, got, si, 7/want)
		}
	}
}

// TestOptionsFromDeclaration checks that every row of microphys.ParamDecls has its
// option, that the defaults give DefaultParams bit for bit, that a value given on the
// command line reaches its field in SI, and that range errors name the option and its
// user unit.
func TestOptionsFromDeclaration(t *testing.T) {
	e := &env{}
	fs := newFlagSet(e, "test", "")
	pf := addPhysicsFlags(fs)
	if err := fs.Parse(nil); err != nil {
		t.Fatal(err)
	}
	p, err := pf.toParams()
	if err != nil {
		t.Fatal(err)
	}
	d := microphys.DefaultParams()
	p.Collector.Collision, p.Collector.Coalescence = d.Collector.Collision, d.Collector.Coalescence
	for i := range microphys.ParamDecls {
		r := &microphys.ParamDecls[i]
		if fs.Lookup(r.Option) == nil {
			t.Errorf("row %s: no option --%s", r.Name, r.Option)
		}
		if a, b := r.Get(&p), r.Get(&d); a != b && !(math.IsNaN(a) && math.IsNaN(b)) {
			t.Errorf("--%s default gives %g, DefaultParams has %g", r.Option, a, b)
		}
	}
	fs = newFlagSet(e, "test", "")
	pf = addPhysicsFlags(fs)
	if err := fs.Parse([]string{"--onset-radius", "12.5", "--surface-pressure", "1000", "--nd-range", "20,800", "--seifert-beheng-shape", "2", "--collector-tolerance", "1e-5"}); err != nil {
		t.Fatal(err)
	}
	if p, err = pf.toParams(); err != nil {
		t.Fatal(err)
	}
	if p.ReStar != 12.5e-6 || p.SurfacePressure != 1e5 || p.NdMin != 20e6 || p.NdMax != 800e6 || p.SBShape != 2 || p.Collector.RelTol != 1e-5 {
		t.Errorf("options not converted to SI: %+v", p)
	}
	fs = newFlagSet(e, "test", "")
	pf = addPhysicsFlags(fs)
	if err := fs.Parse([]string{"--onset-radius", "0.5"}); err != nil {
		t.Fatal(err)
	}
	if _, err = pf.toParams(); err == nil || err.Error() != "--onset-radius must be between 1 and 100 um (got 0.5 um)" {
		t.Errorf("range error %v, want it to name --onset-radius and um", err)
	}
}

// TestProvenanceNamedAsOptions checks the warmrain_parameter_* values: named as the
// options, in the units users type, with the unit stated.
func TestProvenanceNamedAsOptions(t *testing.T) {
	got := map[string]string{}
	for _, s := range microphys.DefaultParams().Settings() {
		got[s.Name] = paramAttr(s)
	}
	for name, want := range map[string]string{"onset_radius": "14 um", "surface_pressure": "1013.25 hPa",
		"nd_range_min": "10 cm-3", "min_lwp": "5 g m-2", "k_ratio": "0.8", "autoconversion": "kk2000", "no_collector": "false"} {
		if got[name] != want {
			t.Errorf("warmrain_parameter_%s = %q, want %q", name, got[name], want)
		}
	}
}

// TestReferencesFollowScheme checks that the chosen autoconversion scheme is cited in the
// global references and in the outputs that depend on it.
func TestReferencesFollowScheme(t *testing.T) {
	p := microphys.DefaultParams()
	p.Autoconv = microphys.AutoconvKessler1969
	if g := referencesText(p); !strings.Contains(g, "Kessler (1969)") || strings.Contains(g, "Khairoutdinov") {
		t.Errorf("references with kessler1969: %s", g)
	}
	defs, err := selectOutputs("column_autoconversion_rate,autoconversion_efficiency", p)
	if err != nil {
		t.Fatal(err)
	}
	for _, d := range defs {
		if !strings.Contains(d.references, "Kessler (1969)") {
			t.Errorf("%s references %q, want Kessler (1969)", d.name, d.references)
		}
	}
}

// TestPictureParamLine checks that the pictures' parameter line reads the onset radius
// as --onset-radius writes it, and as earlier versions wrote it (SI, other name).
func TestPictureParamLine(t *testing.T) {
	for _, params := range []map[string]string{
		{"autoconversion": "kk2000", "onset_radius": paramAttr(microphys.DefaultParams().Settings()[7])},
		{"autoconversion": "kk2000", "onset_effective_radius": "1.4e-05"},
	} {
		st := &summaryState{params: params}
		if got := st.paramText(); got != "onset r_e 14 µm" {
			t.Errorf("%v: %q", params, got)
		}
	}
	if s := microphys.DefaultParams().Settings()[7]; s.Name != "onset_radius" {
		t.Fatalf("setting 7 is %s; update this test", s.Name)
	}
}
