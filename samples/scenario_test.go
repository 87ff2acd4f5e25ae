package samples

import (
	"math"
	"testing"
)

// impliedNd is the adiabatic droplet number concentration (cm-3) implied by
// τ and r_e (µm):
//
//	N_d = sqrt(5)/(2π k) · sqrt(f_ad c_w τ / (Q ρ_w r_e^5))
//
// Source: Grosvenor et al. 2018, Rev. Geophys. 56, eq. 11, with k = 0.8,
// Q = 2, f_ad = 1 (common practice) and c_w = 2e-6 kg m-4 for a cloud top
// near 285 K and 900 hPa (from memory).
func impliedNd(tau, reUm float64) float64 {
	const k, q, fad, cw = 0.8, 2.0, 1.0, 2e-6
	re := reUm * 1e-6
	return math.Sqrt(5) / (2 * math.Pi * k) * math.Sqrt(fad*cw*tau/(q*rhoW*math.Pow(re, 5))) * 1e-6
}

type regionStats struct {
	cells, cloudy     int
	lwp, lwp2, re, nd float64
	cf, minTau        float64
	minCTT, maxCTT    float64
	reMin, reMax      float64
	lwpMin, lwpMax    float64
}

func (s *regionStats) mean(x float64) float64 { return x / float64(s.cloudy) }
func (s *regionStats) lwpSD() float64 {
	m := s.mean(s.lwp)
	return math.Sqrt(s.mean(s.lwp2) - m*m)
}

// stats gathers per-region statistics over all days (only t >= 0 given).
func stats(f *Fields) map[RegionKind]*regionStats {
	m := map[RegionKind]*regionStats{}
	for k, r := range f.Region {
		s := m[r]
		if s == nil {
			s = &regionStats{minTau: math.Inf(1), minCTT: math.Inf(1), maxCTT: math.Inf(-1),
				reMin: math.Inf(1), reMax: math.Inf(-1), lwpMin: math.Inf(1), lwpMax: math.Inf(-1)}
			m[r] = s
		}
		s.cells++
		s.cf += f.CF[k]
		if !math.IsNaN(f.CTT[k]) {
			s.minCTT = math.Min(s.minCTT, f.CTT[k])
			s.maxCTT = math.Max(s.maxCTT, f.CTT[k])
		}
		if math.IsNaN(f.LWP[k]) {
			continue
		}
		s.cloudy++
		s.lwp += f.LWP[k]
		s.lwp2 += f.LWP[k] * f.LWP[k]
		s.re += f.Re[k]
		s.nd += impliedNd(f.Tau[k], f.Re[k])
		s.minTau = math.Min(s.minTau, f.Tau[k])
		s.reMin, s.reMax = math.Min(s.reMin, f.Re[k]), math.Max(s.reMax, f.Re[k])
		s.lwpMin, s.lwpMax = math.Min(s.lwpMin, f.LWP[k]), math.Max(s.lwpMax, f.LWP[k])
	}
	return m
}

// TestScenarioStructure checks that the invented scenario has the structure
// the demo and the end-to-end tests rely on. The target ranges are the
// design of the scenario (invented, chosen to resemble closed cells, pockets
// of open cells and ship tracks as commonly described, e.g. Wood 2012, Mon.
// Wea. Rev. 140, sections 4 and 6); the N_d values are derived from τ and r_e.
func TestScenarioStructure(t *testing.T) {
	t.Parallel()
	f, err := DefaultConfig().Fields()
	if err != nil {
		t.Fatal(err)
	}
	m := stats(f)
	for _, r := range []RegionKind{RegionClear, RegionThinCloud, RegionColdCloud, RegionOpenCells, RegionPollutedLine, RegionDeck} {
		if m[r] == nil || m[r].cells == 0 {
			t.Fatalf("region %v is empty", r)
		}
	}
	deck, pocket, line := m[RegionDeck], m[RegionOpenCells], m[RegionPollutedLine]
	for _, s := range []*regionStats{deck, pocket, line} {
		if s.cloudy == 0 {
			t.Fatal("no cloudy cells in a cloud region")
		}
	}
	for _, c := range []struct {
		what   string
		got    float64
		lo, hi float64
	}{
		{"deck LWP min", deck.lwpMin, 70, 150},
		{"deck LWP max", deck.lwpMax, 70, 150},
		{"deck r_e min", deck.reMin, 11.5, 14.2},
		{"deck r_e max", deck.reMax, 11.5, 14.2},
		{"deck mean N_d (derived)", deck.mean(deck.nd), 70, 130},
		{"pocket r_e min", pocket.reMin, 15, 22},
		{"pocket r_e max", pocket.reMax, 15, 22},
		{"pocket mean N_d (derived)", pocket.mean(pocket.nd), 20, 40},
		{"line r_e min", line.reMin, 6, 8},
		{"line r_e max", line.reMax, 6, 8},
		{"line mean N_d (derived)", line.mean(line.nd), 300, 500},
		{"line mean LWP / deck mean LWP", line.mean(line.lwp) / deck.mean(deck.lwp), 0.9, 1.15},
		{"thin cloud min tau", m[RegionThinCloud].minTau, 0.5, 3},
		{"cold cloud max CTT (K)", m[RegionColdCloud].maxCTT, 200, 260},
		{"deck min CTT (K)", deck.minCTT, 275, 295},
		{"clear mean cloud fraction", m[RegionClear].cf / float64(m[RegionClear].cells), 0, 0.05},
	} {
		if !(c.got >= c.lo && c.got <= c.hi) {
			t.Errorf("%s = %.4g, want in [%g, %g]", c.what, c.got, c.lo, c.hi)
		}
	}
	if !(pocket.mean(pocket.re) > deck.mean(deck.re) && deck.mean(deck.re) > line.mean(line.re)) {
		t.Errorf("mean r_e order: pocket %.2f, deck %.2f, line %.2f; want pocket > deck > line",
			pocket.mean(pocket.re), deck.mean(deck.re), line.mean(line.re))
	}
	if !(line.mean(line.nd) > deck.mean(deck.nd) && deck.mean(deck.nd) > pocket.mean(pocket.nd)) {
		t.Error("implied N_d order is not line > deck > pocket")
	}
	if pocket.lwpSD() < 2*deck.lwpSD() {
		t.Errorf("pocket LWP sd %.1f not well above deck sd %.1f (cellular)", pocket.lwpSD(), deck.lwpSD())
	}
	pcf, dcf := pocket.cf/float64(pocket.cells), deck.cf/float64(deck.cells)
	if pcf > 0.7*dcf {
		t.Errorf("pocket cloud fraction %.2f not well below deck %.2f", pcf, dcf)
	}
}

// TestOpticalThicknessRelation checks LWP = (5/9) ρ_w τ r_e (derived, for a
// vertically uniform cloud; Grosvenor et al. 2018 eq. 12 has the same
// factor) in every cloudy cell, within the rounding of the stored values.
func TestOpticalThicknessRelation(t *testing.T) {
	t.Parallel()
	f, err := DefaultConfig().Fields()
	if err != nil {
		t.Fatal(err)
	}
	n := 0
	for k := range f.LWP {
		if math.IsNaN(f.LWP[k]) {
			if !math.IsNaN(f.Tau[k]) || !math.IsNaN(f.Re[k]) {
				t.Fatalf("cell %d: LWP missing but tau or r_e present", k)
			}
			continue
		}
		n++
		lwp := 5.0 / 9 * rhoW * f.Tau[k] * f.Re[k] * 1e-6 * 1e3 // g m-2
		// τ is stored rounded to 0.01: allow half of that step
		tol := 5.0/9*rhoW*0.005*f.Re[k]*1e-6*1e3 + 1e-9
		if math.Abs(lwp-f.LWP[k]) > tol {
			t.Fatalf("cell %d: (5/9) rho_w tau r_e = %.3f g m-2, LWP %.3f", k, lwp, f.LWP[k])
		}
	}
	if n == 0 {
		t.Fatal("no cloudy cells")
	}
}

// TestRegionGeometry checks the exported geometry: the polluted line is
// narrow (at most 3 cells across in any column), the features drift, and
// points outside the box or the time range are RegionOutside.
func TestRegionGeometry(t *testing.T) {
	t.Parallel()
	c := DefaultConfig()
	if got := c.Region(0, 0, 0); got != RegionOutside {
		t.Errorf("Region(0,0,0) = %v", got)
	}
	if got := c.Region(-20, -80, c.NTime); got != RegionOutside {
		t.Errorf("Region at t=NTime = %v", got)
	}
	for tt := 0; tt < c.NTime; tt++ {
		lines := 0
		for j := 0; j < c.NLon; j++ {
			across := 0
			for i := 0; i < c.NLat; i++ {
				if c.Region(c.Lat(i), c.Lon(j), tt) == RegionPollutedLine {
					across++
				}
			}
			if across > 3 {
				t.Errorf("day %d column %d: polluted line %d cells across", tt, j, across)
			}
			if across > 0 {
				lines++
			}
		}
		if lines < c.NLon/2 {
			t.Errorf("day %d: polluted line crosses only %d columns", tt, lines)
		}
	}
	f, err := c.Fields()
	if err != nil {
		t.Fatal(err)
	}
	for k, r := range f.Region {
		tt, i, j := k/(c.NLat*c.NLon), k/c.NLon%c.NLat, k%c.NLon
		if got := c.RegionAt(tt, i, j); got != r {
			t.Fatalf("cell %d: RegionAt %v, Fields.Region %v", k, got, r)
		}
	}
	clat, clon, _, _ := pocket(0)
	if c.Region(clat, clon, 0) != RegionOpenCells {
		t.Error("pocket centre is not open cells on day 0")
	}
	if c.Region(clat, clon+1.8, 0) != RegionOpenCells || c.Region(clat, clon+1.8, 2) == RegionOpenCells {
		t.Error("pocket does not drift west")
	}
	for k, s := range []string{"outside", "clear", "thin_cloud", "cold_cloud", "open_cells", "polluted_line", "deck"} {
		if RegionKind(k).String() != s {
			t.Errorf("RegionKind(%d) = %q, want %q", k, RegionKind(k), s)
		}
	}
}

func TestConfigValidate(t *testing.T) {
	t.Parallel()
	bad := []func(*Config){
		func(c *Config) { c.NLat = 1 },
		func(c *Config) { c.NTime = 0 },
		func(c *Config) { c.Res = 0 },
		func(c *Config) { c.Res = math.NaN() },
		func(c *Config) { c.Deflate = 0 },
		func(c *Config) { c.North = 95 },
		func(c *Config) { c.Name = "" },
	}
	for i, mod := range bad {
		c := DefaultConfig()
		mod(&c)
		if _, err := c.Fields(); err == nil {
			t.Errorf("case %d: no error", i)
		}
		if err := Generate(t.TempDir()+"/x.nc", c); err == nil {
			t.Errorf("case %d: Generate gave no error", i)
		}
	}
}
