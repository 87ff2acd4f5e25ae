package microphys

import (
	"math"
	"slices"
	"strings"
	"testing"
)

// depsExempt are parameters left out of OutputDecl.DependsOn and of this check: the
// screening thresholds choose which columns get values rather than changing the values,
// and the collector's numerics (method, tolerance) change results only within their
// tested error bounds (doc/science.md#tables).
var depsExempt = map[string]string{
	"min_lwp": "screening", "min_tau": "screening", "re_range_min": "screening", "re_range_max": "screening",
	"min_ctt": "screening", "nd_range_min": "screening", "nd_range_max": "screening", "max_thickness": "screening",
	"min_cloud_fraction": "screening", "collector_method": "numerics", "collector_tolerance": "numerics",
}

// perturbations returns the other values tried for parameter d: every other choice, the
// flipped switch, or the value ×1.2 (or the middle of its range when that is 0 or out
// of range).
func perturbations(d *ParamDecl, p Params) []float64 {
	v := d.Get(&p)
	switch d.Kind {
	case ParamChoice:
		var out []float64
		for i := range d.Choices {
			if float64(i) != v {
				out = append(out, float64(i))
			}
		}
		return out
	case ParamSwitch:
		return []float64{1 - v}
	}
	u := d.FromSI(v)
	nu := u * 1.2
	if u == 0 || !d.inRange(nu) {
		nu = (d.Min + d.Max) / 2
		if d.Min == 0 && d.Max > 100 {
			nu = d.Max / 10
		}
	}
	return []float64{d.ToSI(nu)}
}

// TestOutputDependencies checks each output's DependsOn against the physics: every
// parameter (not exempt) is perturbed from the defaults and the columns of
// goldenColumns that vary the optional inputs (every input given, air state or cloud
// height missing, drizzling and not) are recomputed; an output depends on the
// parameter exactly when one of its values changes (relative 1e-9, or NaN-ness).
// The picture titles name exactly these parameters (cmd/internal/plots). Parameters
// of modes other than the default (kessler_*, seifert_beheng_shape of other
// autoconversion schemes, surface_rh of the surface-rh humidity profile) change
// nothing with the defaults and so are not declared.
func TestOutputDependencies(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	cols := goldenColumns()[30:] // the columns that vary the optional inputs
	// and two deep, heavily drizzling columns over shallow moist sub-cloud layers, where
	// the collector drop reaches the surface (invented values, common practice)
	cols = append(cols,
		Inputs{LWP: 0.8, Re: 26e-6, Tau: 50, CTT: 291, CTP: 96000, CTH: 900, LWPStd: 0.3, SurfaceRH: 0.9},
		Inputs{LWP: 1.2, Re: 29e-6, Tau: math.NaN(), CTT: math.NaN(), CTP: math.NaN(), CTH: 1100, LWPStd: math.NaN(), SurfaceRH: math.NaN()})
	base := DefaultParams()
	base.CollectorMethod = CollectorDirect // direct integration: no tables to build per perturbation
	m0, err := NewModel(base)
	if err != nil {
		t.Fatal(err)
	}
	ref := make([]Outputs, len(cols))
	for i := range cols {
		m0.Column(&cols[i], &ref[i])
	}
	found := map[string][]string{}
	for pi := range ParamDecls {
		pd := &ParamDecls[pi]
		if depsExempt[pd.Name] != "" {
			continue
		}
		changed := map[string]bool{}
		for _, nv := range perturbations(pd, base) {
			p := base
			pd.Set(&p, nv)
			m, err := NewModel(p)
			if err != nil {
				t.Fatalf("%s = %v: %v", pd.Name, nv, err)
			}
			for i := range cols {
				var o Outputs
				m.Column(&cols[i], &o)
				for _, d := range OutputDecls {
					if d.Get == nil {
						continue
					}
					a, b := d.Get(&ref[i]), d.Get(&o)
					if math.IsNaN(a) != math.IsNaN(b) || (!math.IsNaN(a) && math.Abs(a-b) > 1e-9*math.Abs(a)) {
						changed[d.Name] = true
					}
				}
			}
		}
		for _, d := range OutputDecls {
			if changed[d.Name] {
				found[d.Name] = append(found[d.Name], pd.Name)
			}
		}
	}
	for _, d := range OutputDecls {
		for _, n := range d.DependsOn {
			if paramDeclNamed(n) == nil {
				t.Errorf("%s: DependsOn names %q, which is not in ParamDecls", d.Name, n)
			}
			if depsExempt[n] != "" {
				t.Errorf("%s: DependsOn names %q, a %s parameter left out of titles", d.Name, n, depsExempt[n])
			}
		}
		want := found[d.Name]
		if !slices.Equal(d.DependsOn, want) {
			t.Errorf("%s: DependsOn = [%s]; perturbing the parameters changes it for [%s] (declare them in ParamDecls order)",
				d.Name, strings.Join(d.DependsOn, " "), strings.Join(want, " "))
		}
	}
}

func paramDeclNamed(name string) *ParamDecl {
	for i := range ParamDecls {
		if ParamDecls[i].Name == name {
			return &ParamDecls[i]
		}
	}
	return nil
}
