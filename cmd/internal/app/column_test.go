package app

import (
	"encoding/json"
	"math"
	"strconv"
	"strings"
	"testing"

	"github.com/warmrain/warmrain/microphys"
)

// columnJSON is the decoded --json output (null numbers become nil).
type columnJSON struct {
	Parameters  map[string]any       `json:"parameters"`
	Inputs      map[string]*float64  `json:"inputs"`
	Diagnostics map[string]*float64  `json:"diagnostics"`
	Units       map[string]string    `json:"units"`
	QC          qcJSON               `json:"qc"`
	Profile     []map[string]float64 `json:"adiabatic_profile"`
	Collector   *struct {
		ExitRadius    float64              `json:"exit_radius_um"`
		ExitTime      float64              `json:"exit_time_s"`
		ExitThrough   string               `json:"exit_through"`
		HeightClosure float64              `json:"height_closure_m"`
		Points        []map[string]float64 `json:"points"`
	} `json:"collector_path"`
	Evaporation *struct {
		Reached       bool                 `json:"reached_surface"`
		SurfaceRadius *float64             `json:"surface_radius_um"`
		EvapHeight    *float64             `json:"evaporation_height_m"`
		Time          float64              `json:"time_s"`
		Points        []map[string]float64 `json:"points"`
	} `json:"evaporation_path"`
}

func runColumnJSON(t *testing.T, args ...string) columnJSON {
	t.Helper()
	code, out, errs := runCmd(append([]string{"column", "--json"}, args...)...)
	if code != ExitOK {
		t.Fatalf("column %v: exit %d: %s", args, code, errs)
	}
	var c columnJSON
	if err := json.Unmarshal([]byte(out), &c); err != nil {
		t.Fatalf("column --json is not JSON: %v\n%s", err, out)
	}
	return c
}

// relClose compares with a relative tolerance; NaN equals NaN (absent value).
func relClose(got, want, tol float64) bool {
	if math.IsNaN(want) {
		return math.IsNaN(got)
	}
	return math.Abs(got-want) <= tol*math.Max(math.Abs(want), 1e-300)
}

func val(p *float64) float64 {
	if p == nil {
		return math.NaN()
	}
	return *p
}

// directParams is what the command builds from its defaults plus the options of a test.
func directParams(t *testing.T, method microphys.CollectorMethod, updraft float64) (microphys.Params, *microphys.Model) {
	t.Helper()
	p := microphys.DefaultParams()
	p.CollectorMethod = method
	p.Collector.Updraft = updraft
	m, err := microphys.NewModel(p)
	if err != nil {
		t.Fatal(err)
	}
	return p, m
}

// jsonTol: the JSON prints 10 significant digits, and the command's flags give
// some parameters as µm*1e-6 (a last-bit difference from DefaultParams).
const jsonTol = 1e-8

// Every printed diagnostic equals microphys.Model.Column called directly with
// the same inputs and parameters, for columns that exercise the QC paths.
func TestColumnMatchesMicrophys(t *testing.T) {
	cases := []struct {
		name string
		args []string
		in   microphys.Inputs
		upd  float64
	}{
		{"defaults", []string{"--lwp", "120", "--re", "14"},
			microphys.Inputs{LWP: 0.120, Re: 14e-6, Tau: math.NaN(), CTT: math.NaN(), CTP: math.NaN(), CTH: math.NaN(), LWPStd: math.NaN(), SurfaceRH: math.NaN()}, 0},
		{"all inputs", []string{"--lwp", "250", "--re", "17", "--tau", "20", "--ctt", "287", "--ctp", "920", "--cth", "1400", "--lwp-sd", "60", "--rh-surface", "0.9"},
			microphys.Inputs{LWP: 0.250, Re: 17e-6, Tau: 20, CTT: 287, CTP: 92000, CTH: 1400, LWPStd: 0.060, SurfaceRH: 0.9}, 0},
		{"updraft", []string{"--lwp", "250", "--re", "17", "--ctt", "288", "--ctp", "950", "--cth", "900", "--updraft", "0.4"},
			microphys.Inputs{LWP: 0.250, Re: 17e-6, Tau: math.NaN(), CTT: 288, CTP: 95000, CTH: 900, LWPStd: math.NaN(), SurfaceRH: math.NaN()}, 0.4},
		{"ice screened", []string{"--lwp", "120", "--re", "14", "--ctt", "260"},
			microphys.Inputs{LWP: 0.120, Re: 14e-6, Tau: math.NaN(), CTT: 260, CTP: math.NaN(), CTH: math.NaN(), LWPStd: math.NaN(), SurfaceRH: math.NaN()}, 0},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			got := runColumnJSON(t, append(c.args, "--collector-method", "direct")...)
			_, m := directParams(t, microphys.CollectorDirect, c.upd)
			var want microphys.Outputs
			m.Column(&c.in, &want)
			for _, d := range outputTable() {
				if d.get == nil {
					continue
				}
				w := d.get(&want) * d.scale
				g := val(got.Diagnostics[d.name])
				if !relClose(g, w, jsonTol) {
					t.Errorf("%s: got %g %s, want %g (microphys.Model.Column)", d.name, g, got.Units[d.name], w)
				}
				if got.Units[d.name] != d.units {
					t.Errorf("%s units %q, want %q", d.name, got.Units[d.name], d.units)
				}
			}
			if got.QC.Value != uint32(want.QC) || strings.Join(got.QC.Flags, " ") != strings.Join(microphys.QCNames(want.QC), " ") {
				t.Errorf("qc %d %v, want %d %v", got.QC.Value, got.QC.Flags, want.QC, microphys.QCNames(want.QC))
			}
			if got.Parameters["collector_method"] != "direct" || got.Parameters["updraft"] != c.upd {
				t.Errorf("parameters %v", got.Parameters)
			}
			if want.QC&microphys.QCScreenMask != 0 {
				if got.Profile != nil || got.Collector != nil {
					t.Errorf("screened column has a profile or a path")
				}
				return
			}
			checkPaths(t, got, m.Params(), &c.in, &want)
		})
	}
}

// checkPaths checks the profile and the paths against microphys directly.
func checkPaths(t *testing.T, got columnJSON, p microphys.Params, in *microphys.Inputs, out *microphys.Outputs) {
	t.Helper()
	if len(got.Profile) != 11 {
		t.Fatalf("profile has %d levels", len(got.Profile))
	}
	for _, l := range got.Profile {
		z := l["height_above_base_m"]
		if w := microphys.AdiabaticLWC(z, p.Fad, out.Cw) * 1e3; !relClose(l["lwc_g_m3"], w, jsonTol) && w != 0 {
			t.Errorf("LWC at %g m: %g, want %g", z, l["lwc_g_m3"], w)
		}
		if w := microphys.EffectiveRadius(z, out.Nd, p.K, p.Fad, out.Cw) * 1e6; !relClose(l["effective_radius_um"], w, jsonTol) && w != 0 {
			t.Errorf("r_e at %g m: %g, want %g", z, l["effective_radius_um"], w)
		}
	}
	top := got.Profile[len(got.Profile)-1]
	// Derived: r_e(H) of the adiabatic model is the model's cloud-top r_e.
	if !relClose(top["effective_radius_um"], out.ReTop*1e6, 1e-8) || !relClose(top["height_above_base_m"], out.H, 1e-8) {
		t.Errorf("profile top %v, want H %g r_e %g", top, out.H, out.ReTop*1e6)
	}
	T, pr := in.CTT, in.CTP
	if math.IsNaN(T) {
		T = p.DefaultCTT
	}
	if math.IsNaN(pr) {
		pr = p.DefaultCTP
	}
	s := p.Collector
	s.Collision, s.Coalescence = p.Collision, p.Coalescence
	// The cloud of the exported functions of the adiabatic model [Brenguier2000], which
	// Column's direct integration gets (microphys.Model.Geometry).
	cw := microphys.CondensationRate(pr, T)
	tau := in.Tau
	if math.IsNaN(tau) {
		tau = microphys.TauAdiabatic(in.LWP, in.Re, p.Qext)
	}
	cloud := microphys.CloudColumn{H: microphys.Thickness(in.LWP, p.Fad, cw), Gamma: p.Fad * cw,
		Nd: microphys.DropletNumber(tau, in.Re, p.K, p.Qext, p.Fad, cw), Air: microphys.NewAir(pr, T)}
	path := microphys.CollectDirect(cloud, s)
	c := got.Collector
	if c == nil || !relClose(c.ExitRadius, path.ExitRadius*1e6, jsonTol) || !relClose(c.ExitTime, path.ExitTime, jsonTol) {
		t.Fatalf("collector %+v, want CollectDirect %+v", c, path)
	}
	// The direct path's end is the column model's (direct method) output: one integration
	// of the same inputs (derived), equal to the JSON's 10 digits.
	if !relClose(c.ExitRadius, out.CollectorRadius*1e6, jsonTol) {
		t.Errorf("path exit %g um, Column %g um", c.ExitRadius, out.CollectorRadius*1e6)
	}
	// Heights: integrated from the sampled (t, R) of the path; the integral
	// must land on the exit level (derived check of the quadrature).
	if math.Abs(c.HeightClosure) > 1e-3*out.H {
		t.Errorf("height closure %g m for H %g m", c.HeightClosure, out.H)
	}
	prevT, prevR := -1.0, 0.0
	for i, pt := range c.Points {
		tt, R := pt["time_s"], pt["radius_um"]
		if tt <= prevT || R < prevR {
			t.Errorf("point %d not increasing: %v", i, pt)
		}
		prevT, prevR = tt, R
		if i == 0 || i == len(c.Points)-1 {
			continue
		}
		// Each point lies on the one path: CollectDirect reaches radius R at time t.
		q := s
		q.DrizzleRadius = R * 1e-6
		if dt := microphys.CollectDirect(cloud, q).DrizzleTime; !relClose(tt, dt, 1e-6) {
			t.Errorf("point %d: t %g s at R %g um, CollectDirect says %g s", i, tt, R, dt)
		}
		if z := pt["height_above_base_m"]; !(z >= -1e-6 && z <= out.H*(1+1e-9)) {
			t.Errorf("point %d height %g m outside the cloud [0, %g]", i, z, out.H)
		}
	}
	if out.QC&microphys.QCCollectorExitTop != 0 {
		if c.ExitThrough != "top" || got.Evaporation != nil {
			t.Errorf("exit through top: %q, evaporation %v", c.ExitThrough, got.Evaporation)
		}
		return
	}
	ev := got.Evaporation
	if ev == nil {
		t.Fatal("no evaporation path")
	}
	if ev.Reached {
		if !relClose(val(ev.SurfaceRadius), out.SurfaceRadius*1e6, jsonTol) {
			t.Errorf("surface radius %v, Column %g", val(ev.SurfaceRadius), out.SurfaceRadius*1e6)
		}
	} else if !relClose(val(ev.EvapHeight), out.EvapHeight, jsonTol) {
		t.Errorf("evaporation height %v, Column %g", val(ev.EvapHeight), out.EvapHeight)
	}
	prevR = math.Inf(1)
	for i, pt := range ev.Points {
		if pt["radius_um"] > prevR {
			t.Errorf("evaporation point %d: radius grows %v", i, pt)
		}
		prevR = pt["radius_um"]
	}
}

// The table method (process's default): the table shows Model.Column's outputs with the
// collector table, the same numbers process writes; column's default is the direct
// integration, whose path ends at the exit radius of its table.
func TestColumnTableMethod(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	def := runColumnJSON(t, "--lwp", "120", "--re", "14")
	if def.Parameters["collector_method"] != "direct" || def.Collector == nil || def.Collector.ExitRadius != val(def.Diagnostics["collector_exit_radius"]) {
		t.Errorf("default: method %v, path exit %+v, diagnostics %v", def.Parameters["collector_method"], def.Collector, val(def.Diagnostics["collector_exit_radius"]))
	}
	got := runColumnJSON(t, "--lwp", "120", "--re", "14", "--collector-method", "table")
	_, m := directParams(t, microphys.CollectorTable, 0)
	in := microphys.Inputs{LWP: 0.120, Re: 14e-6, Tau: math.NaN(), CTT: math.NaN(), CTP: math.NaN(), CTH: math.NaN(), LWPStd: math.NaN(), SurfaceRH: math.NaN()}
	var want microphys.Outputs
	m.Column(&in, &want)
	for _, d := range outputTable() {
		if d.get == nil {
			continue
		}
		if w, g := d.get(&want)*d.scale, val(got.Diagnostics[d.name]); !relClose(g, w, jsonTol) {
			t.Errorf("%s: got %g, want %g", d.name, g, w)
		}
	}
	// The table is tested to 0.5 % against the direct integration (microphys/table.go).
	if c := got.Collector; c == nil || !relClose(c.ExitRadius, want.CollectorRadius*1e6, 5e-3) {
		t.Errorf("direct path exit %+v vs table %g um", c, want.CollectorRadius*1e6)
	}
}

// The text tables print the same numbers (5 significant digits).
func TestColumnText(t *testing.T) {
	code, out, errs := runCmd("column", "--lwp", "120", "--re", "14", "--collector-method", "direct")
	if code != ExitOK || errs != "" {
		t.Fatalf("exit %d stderr %q", code, errs)
	}
	_, m := directParams(t, microphys.CollectorDirect, 0)
	in := microphys.Inputs{LWP: 0.120, Re: 14e-6, Tau: math.NaN(), CTT: math.NaN(), CTP: math.NaN(), CTH: math.NaN(), LWPStd: math.NaN(), SurfaceRH: math.NaN()}
	var want microphys.Outputs
	m.Column(&in, &want)
	lines := strings.Split(out, "\n")
	for _, d := range outputTable() {
		if d.get == nil {
			continue
		}
		found := false
		for _, l := range lines {
			f := strings.Fields(l)
			if len(f) < 3 || f[0] != d.name {
				continue
			}
			found = true
			if strings.Join(f[2:], " ") != d.units {
				t.Errorf("%s units %q, want %q", d.name, strings.Join(f[2:], " "), d.units)
			}
			w := d.get(&want) * d.scale
			if math.IsNaN(w) {
				if f[1] != "-" {
					t.Errorf("%s: %q for a missing value", d.name, f[1])
				}
				continue
			}
			g, err := strconv.ParseFloat(f[1], 64)
			if err != nil || !relClose(g, w, 1e-4) {
				t.Errorf("%s: printed %q, want %.5g", d.name, f[1], w)
			}
		}
		if !found {
			t.Errorf("no line for %s", d.name)
		}
	}
	for _, want := range []string{"adiabatic profile:", "collector drop (integrated directly)", "sub-cloud fall of the single collector drop (integrated directly)",
		"surface drizzle (the cloud-base drop-size distribution carried down)",
		"parameters (as options):", "air_state_assumed", "QC bit air_state_assumed", "height above base (m)"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q", want)
		}
	}
}

func TestColumnUsage(t *testing.T) {
	code, out, errs := runCmd("column", "--help")
	if code != ExitOK || errs != "" || !strings.HasPrefix(out, "Usage:\n  warmrain column --lwp") || !strings.Contains(out, "Example:") ||
		!strings.Contains(out, "--autoconversion") || !strings.Contains(out, "--rh-surface") {
		t.Errorf("--help: exit %d stderr %q stdout:\n%s", code, errs, out)
	}
	for _, c := range []struct {
		args []string
		msg  string
	}{
		{[]string{"--re", "14"}, "--lwp is required"},
		{[]string{"--lwp", "120"}, "--re is required"},
		{[]string{"--lwp", "abc", "--re", "14"}, "invalid argument"},
		{[]string{"--lwp", "NaN", "--re", "14"}, "finite"},
		{[]string{"--lwp", "120", "--re", "14", "--ctt", "Inf"}, "finite"},
		{[]string{"--lwp", "120", "--re", "14", "--nosuch"}, "unknown flag"},
		{[]string{"--lwp", "120", "--re", "14", "extra"}, "unexpected argument"},
		{[]string{"--lwp", "120", "--re", "14", "--autoconversion", "nosuch"}, "--autoconversion"},
		{[]string{"--lwp", "120", "--re", "14", "--adiabatic-fraction", "2"}, "--adiabatic-fraction must be above 0 and at most 1"},
	} {
		code, out, errs := runCmd(append([]string{"column"}, c.args...)...)
		if code != ExitUsage || out != "" || !strings.Contains(strings.ToLower(errs), strings.ToLower(c.msg)) {
			t.Errorf("%v: exit %d, stdout %q, stderr %q (want %q)", c.args, code, out, errs, c.msg)
		}
	}
}

// Derived (adiabatic model of Brenguier et al. 2000): with tau from the
// adiabatic relation the model's cloud-top r_e is the input r_e, so when the
// input r_e equals the onset radius r_e* the critical LWP is the input LWP.
func TestColumnCriticalLWPAtOnset(t *testing.T) {
	for _, lwp := range []string{"60", "120", "300"} {
		got := runColumnJSON(t, "--lwp", lwp, "--re", "14", "--onset-radius", "14", "--no-collector")
		want, _ := strconv.ParseFloat(lwp, 64)
		if g := val(got.Diagnostics["critical_lwp"]); !relClose(g, want, 1e-6) {
			t.Errorf("LWP %s g m-2, r_e = r_e* = 14 um: critical LWP %g, want %g (derived)", lwp, g, want)
		}
		if g := val(got.Diagnostics["adiabatic_top_effective_radius"]); !relClose(g, 14, 1e-6) {
			t.Errorf("LWP %s g m-2: model top r_e %g um, want 14 (derived)", lwp, g)
		}
	}
}
