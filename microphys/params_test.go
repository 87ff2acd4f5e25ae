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
		{"K", p.K, 0.8}, {"Qext", p.Qext, 2}, {"Fad", p.Fad, 1}, {"ReStar", p.ReStar, 14e-6},
		{"SurfaceRH", p.SurfaceRH, 0.8}, {"SurfacePressure", p.SurfacePressure, 101325},
		{"MinCTT", p.MinCTT, 273.15}, {"DrizzleCoef", p.DrizzleCoef, 0.37}, {"DrizzleLWPExp", p.DrizzleLWPExp, 1.75},
		{"Collector.R0", p.Collector.R0, 25e-6}, {"OnsetWidth", p.OnsetWidth, 4e-6}, {"NdMin", p.NdMin, 10e6}, {"NdMax", p.NdMax, 1000e6}, {"HMax", p.HMax, 1500},
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
		{"K", func(p *Params) { p.K = 0 }},
		{"K", func(p *Params) { p.K = math.NaN() }},
		{"Fad", func(p *Params) { p.Fad = 1.2 }},
		{"Qext", func(p *Params) { p.Qext = -1 }},
		{"ReStar", func(p *Params) { p.ReStar = 1 }},
		{"GammaShape", func(p *Params) { p.GammaShape = 0 }},
		{"SurfaceRH", func(p *Params) { p.SurfaceRH = 1.5 }},
		{"ReMax", func(p *Params) { p.ReMax = p.ReMin / 2 }},
		{"NdMax", func(p *Params) { p.NdMax = p.NdMin }},
		{"FixedCw", func(p *Params) { p.FixedCw = 1 }},
		{"Autoconv", func(p *Params) { p.Autoconv = 99 }},
		{"Collector.R0", func(p *Params) { p.Collector.R0 = 0 }},
		{"Collector.Updraft", func(p *Params) { p.Collector.Updraft = math.Inf(1) }},
		{"EnableEvaporation", func(p *Params) { p.EnableCollector = false }},
		{"CollectorMethod", func(p *Params) { p.CollectorMethod = 7 }},
	}
	for _, c := range cases {
		p := DefaultParams()
		c.mod(&p)
		err := p.Validate()
		var pe *ParamError
		if !errors.As(err, &pe) || pe.Field != c.field || !strings.Contains(err.Error(), c.field) || pe.Want == "" {
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
	// RelTol (its Collision/Coalescence are overridden by Params.Collision/Coalescence).
	if want := reflect.TypeOf(Params{}).NumField() - 1 + 4; len(s) != want {
		t.Errorf("%d settings, want %d (a Params field is missing from Settings)", len(s), want)
	}
	for _, want := range []string{"autoconversion=kk2000", "collector_method=table", "k_ratio=0.8", "collision_efficiency=hall1980"} {
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
