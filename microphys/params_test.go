package microphys

import (
	"errors"
	"math"
	"reflect"
	"strings"
	"testing"
)

// TestDefaultParams checks the documented defaults (sources on each Params field:
// [Brenguier2000] k, Q_ext, f_ad; [RosenfeldGutman1994] r_e* 14 µm, from memory; common
// practice for the screening thresholds).
func TestDefaultParams(t *testing.T) {
	t.Parallel()
	p := DefaultParams()
	if err := p.Validate(); err != nil {
		t.Fatalf("defaults invalid: %v", err)
	}
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"K", p.K, 0.8}, {"extinction_efficiency", p.Qext, 2}, {"adiabatic_fraction", p.Fad, 1}, {"onset_radius", p.ReStar, 14e-6},
		{"surface_rh", p.SurfaceRH, 0.8}, {"SurfacePressure", p.SurfacePressure, 101325},
		{"MinCTT", p.MinCTT, 273.15}, {"DrizzleCoef", p.DrizzleCoef, 0.37}, {"DrizzleLWPExp", p.DrizzleLWPExp, 1.75},
		{"collector_radius", p.Collector.R0, 25e-6}, {"onset_width", p.OnsetWidth, 4e-6}, {"NdMin", p.NdMin, 10e6}, {"nd_range_max", p.NdMax, 1000e6}, {"HMax", p.HMax, 1500},
	} {
		if c.got != c.want {
			t.Errorf("default %s = %g, want %g", c.name, c.got, c.want)
		}
	}
	if p.Autoconv != AutoconvKK2000 || p.CollectorMethod != CollectorTable || !p.EnableCollector || !p.EnableEvaporation {
		t.Error("default choices wrong")
	}
}

// TestValidateNamesField checks that Validate names the bad field and its range.
func TestValidateNamesField(t *testing.T) {
	t.Parallel()
	cases := []struct {
		field string
		mod   func(p *Params)
	}{
		{"k_ratio", func(p *Params) { p.K = 0 }},
		{"k_ratio", func(p *Params) { p.K = math.NaN() }},
		{"adiabatic_fraction", func(p *Params) { p.Fad = 1.2 }},
		{"extinction_efficiency", func(p *Params) { p.Qext = -1 }},
		{"onset_radius", func(p *Params) { p.ReStar = 1 }},
		{"gamma_shape", func(p *Params) { p.GammaShape = 0 }},
		{"surface_rh", func(p *Params) { p.SurfaceRH = 1.5 }},
		{"re_range_max", func(p *Params) { p.ReMax = p.ReMin / 2 }},
		{"nd_range_max", func(p *Params) { p.NdMax = p.NdMin }},
		{"condensation_rate", func(p *Params) { p.FixedCw = 1 }},
		{"autoconversion", func(p *Params) { p.Autoconv = 99 }},
		{"collector_radius", func(p *Params) { p.Collector.R0 = 0 }},
		{"updraft", func(p *Params) { p.Collector.Updraft = math.Inf(1) }},
		{"no_evaporation", func(p *Params) { p.EnableCollector = false }},
		{"collector_method", func(p *Params) { p.CollectorMethod = 7 }},
	}
	for _, c := range cases {
		p := DefaultParams()
		c.mod(&p)
		err := p.Validate()
		var pe *ParamError
		if !errors.As(err, &pe) || pe.Field != c.field || !strings.Contains(err.Error(), "--"+pe.Option) || pe.Want == "" {
			t.Errorf("%s: Validate() = %v", c.field, err)
		}
		if _, err := NewModel(p); err == nil {
			t.Errorf("%s: NewModel accepted a bad parameter", c.field)
		}
	}
}

// TestSettings checks that every parameter is listed once for provenance.
func TestSettings(t *testing.T) {
	t.Parallel()
	s := DefaultParams().Settings()
	seen := map[string]bool{}
	for _, kv := range s {
		if kv.Name == "" || kv.Value == "" || seen[kv.Name] {
			t.Errorf("bad or duplicate setting %+v", kv)
		}
		seen[kv.Name] = true
	}
	// One setting per Params field, the Collector expanded to R0, Updraft, DrizzleRadius and
	// RelTol (its Collision/Coalescence are overridden by Params.Collision/Coalescence) and
	// the Drizzle distribution to its three fields.
	if want := reflect.TypeOf(Params{}).NumField() - 2 + 4 + 3; len(s) != want {
		t.Errorf("%d settings, want %d (a Params field is missing from Settings)", len(s), want)
	}
	for _, want := range []string{"autoconversion=kk2000", "collector_method=table", "k_ratio=0.8", "collision=hall1980"} {
		found := false
		for _, kv := range s {
			if kv.Name+"="+kv.Value == want {
				found = true
			}
		}
		if !found {
			t.Errorf("setting %s missing", want)
		}
	}
	for _, n := range []string{"table", "direct"} {
		if m, err := ParseCollectorMethod(n); err != nil || m.String() != n {
			t.Errorf("ParseCollectorMethod(%q) = %v, %v", n, m, err)
		}
	}
	if _, err := ParseCollectorMethod("fast"); err == nil {
		t.Error("unknown method accepted")
	}
}
