package microphys

import (
	"math"
	"testing"
)

// The path a ColumnGeometry gives ends exactly where Model.Column (CollectorDirect) says:
// the same inputs to the last bit, so the same numbers, not numbers within a tolerance
// (derived: Geometry builds the inputs of Column's direct integrations).
func TestGeometryMatchesColumn(t *testing.T) {
	p := DefaultParams()
	p.CollectorMethod = CollectorDirect
	m, err := NewModel(p)
	if err != nil {
		t.Fatal(err)
	}
	nan := math.NaN()
	cases := []Inputs{
		{LWP: 0.120, Re: 14e-6, Tau: nan, CTT: nan, CTP: nan, CTH: nan, LWPStd: nan, SurfaceRH: nan},
		{LWP: 0.050, Re: 12e-6, Tau: 7.3, CTT: 287, CTP: 91000, CTH: 1100, LWPStd: 0.02, SurfaceRH: nan},
		{LWP: 0.200, Re: 16e-6, Tau: nan, CTT: 288, CTP: 95000, CTH: nan, LWPStd: nan, SurfaceRH: nan},
		{LWP: 0.250, Re: 17e-6, Tau: 20, CTT: 287, CTP: 92000, CTH: 1400, LWPStd: 0.06, SurfaceRH: 0.9},
	}
	for i, in := range cases {
		var out Outputs
		m.Column(&in, &out)
		g, ok := m.Geometry(&in)
		if !ok {
			t.Fatalf("case %d screened (QC %v)", i, QCNames(out.QC))
		}
		if g.Cloud.H != out.H && math.Abs(g.Cloud.H/out.H-1) > 1e-12 {
			t.Errorf("case %d: H %g, Column %g (within 1e-12, column.go)", i, g.Cloud.H, out.H)
		}
		tr := TrackCollector(g.Cloud, g.Setup, 12)
		if tr.Path.ExitRadius != out.CollectorRadius || tr.Path.ExitTime != out.CollectorTime {
			t.Errorf("case %d: track exit %.17g m at %.17g s, Column %.17g m at %.17g s", i,
				tr.Path.ExitRadius, tr.Path.ExitTime, out.CollectorRadius, out.CollectorTime)
		}
		if last := tr.Points[len(tr.Points)-1]; last.Radius != out.CollectorRadius {
			t.Errorf("case %d: last point %g m, Column %g m", i, last.Radius, out.CollectorRadius)
		}
		if math.Abs(tr.HeightClosure) > 1e-3*g.Cloud.H {
			t.Errorf("case %d: height closure %g m for H %g m", i, tr.HeightClosure, g.Cloud.H)
		}
		if !tr.Path.ExitBase || !g.HasLayer {
			continue
		}
		ev := TrackEvaporation(tr.Path.ExitRadius, g.Layer, 10)
		if ev.Path.Reached {
			if ev.Path.SurfaceRadius != out.SurfaceRadius {
				t.Errorf("case %d: surface radius %.17g, Column %.17g", i, ev.Path.SurfaceRadius, out.SurfaceRadius)
			}
		} else if ev.Path.EvapHeight != out.EvapHeight {
			t.Errorf("case %d: evaporation height %.17g, Column %.17g", i, ev.Path.EvapHeight, out.EvapHeight)
		}
		if math.Abs(g.Layer.BaseHeight-out.CloudBaseHeight) > 1e-9*out.CloudBaseHeight {
			t.Errorf("case %d: base height %g, Column %g", i, g.Layer.BaseHeight, out.CloudBaseHeight)
		}
	}
	// A screened column has no geometry.
	ice := cases[0]
	ice.CTT = 260
	if _, ok := m.Geometry(&ice); ok {
		t.Error("an ice-topped column (CTT 260 K < MinCTT) has a geometry")
	}
}

// The profile ends at the cloud-top effective radius of the adiabatic model: r_e(H) = r_e
// when tau comes from LWP and r_e (derived, [Brenguier2000]).
func TestAdiabaticProfileTop(t *testing.T) {
	p := DefaultParams()
	p.EnableCollector, p.EnableEvaporation = false, false
	m, err := NewModel(p)
	if err != nil {
		t.Fatal(err)
	}
	nan := math.NaN()
	in := Inputs{LWP: 0.120, Re: 14e-6, Tau: nan, CTT: nan, CTP: nan, CTH: nan, LWPStd: nan, SurfaceRH: nan}
	g, ok := m.Geometry(&in)
	if !ok {
		t.Fatal("screened")
	}
	lv := AdiabaticProfile(g.Cloud, g.K, 10)
	if len(lv) != 11 || lv[0].Height != 0 || lv[0].LWC != 0 {
		t.Fatalf("profile %+v", lv)
	}
	if top := lv[10]; math.Abs(top.EffectiveRadius/14e-6-1) > 1e-9 || top.Height != g.Cloud.H {
		t.Errorf("top r_e %g m at %g m, want 14e-6 m at H %g m", top.EffectiveRadius, top.Height, g.Cloud.H)
	}
	if AdiabaticProfile(g.Cloud, g.K, 0) != nil {
		t.Error("n = 0 gives a profile")
	}
}
