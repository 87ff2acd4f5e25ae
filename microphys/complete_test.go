package microphys

import (
	"math"
	"testing"
)

// TestStandardAtmosphere checks the layer values of the 1976 standard atmosphere.
func TestStandardAtmosphere(t *testing.T) {
	t.Parallel()
	cases := []struct {
		z, T, p, tolP float64
		src           string
	}{
		{0, 288.15, 101325, 1e-6, "[USSA1976] sea-level values (defining constants)"},
		{11000, 216.65, 22632.06, 0.05, "[USSA1976] Table 4 base of layer 1 (22632 Pa confirmed; .06 from memory)"},
		{20000, 216.65, 5474.889, 0.05, "[USSA1976] Table 4 base of layer 2 (from memory)"},
		{32000, 228.65, 868.0187, 0.05, "[USSA1976] Table 4 base of layer 3 (from memory)"},
		{5000, 255.65, 54019.9, 0.1, "derived: 101325 (255.65/288.15)^5.255876"},
	}
	for _, c := range cases {
		p, T := StandardAtmosphere(c.z)
		if math.Abs(T-c.T) > 1e-9 || math.Abs(p-c.p) > c.tolP {
			t.Errorf("z %g: T %.6g p %.7g, want %.6g %.7g (%s)", c.z, T, p, c.T, c.p, c.src)
		}
	}
	// StandardAtmosphereTemperature inverts the pressure of each layer (derived).
	for z := -1500.0; z <= 32000; z += 250 {
		p, T := StandardAtmosphere(z)
		if got := StandardAtmosphereTemperature(p); math.Abs(got-T) > 1e-9*T {
			t.Errorf("z %g: T(p=%g) = %.12g, want %.12g", z, p, got, T)
		}
	}
	for _, bad := range []float64{-5001, 32001, math.NaN(), math.Inf(1)} {
		if p, T := StandardAtmosphere(bad); !math.IsNaN(T) || !math.IsNaN(p) {
			t.Errorf("z %g: got %g %g, want NaN", bad, T, p)
		}
	}
	for _, bad := range []float64{800, 1.3e5, -1, math.NaN()} {
		if T := StandardAtmosphereTemperature(bad); !math.IsNaN(T) {
			t.Errorf("p %g: got %g, want NaN", bad, T)
		}
	}
}

func nanIn() Inputs {
	n := math.NaN()
	return Inputs{LWP: n, Re: n, Tau: n, CTT: n, CTP: n, CTH: n, LWPStd: n, SurfaceRH: n}
}

// TestComplete checks each completion against the exported functions it composes.
func TestComplete(t *testing.T) {
	base := DefaultParams()
	base.EnableCollector, base.EnableEvaporation = false, false
	model := func(f func(p *Params)) *Model {
		p := base
		f(&p)
		m, err := NewModel(p)
		if err != nil {
			t.Fatal(err)
		}
		return m
	}
	m := model(func(*Params) {})
	p := m.Params()
	nan := math.NaN()
	var out Outputs

	// N_d assumed: Column derives the same N_d back (derived: r_e(H) of EffectiveRadius and
	// DropletNumber of TauAdiabatic invert each other, [Brenguier2000]).
	for _, nd := range []float64{30e6, 100e6, 400e6} {
		m := model(func(p *Params) { p.DropletNumber = nd })
		for _, lwp := range []float64{0.02, 0.1, 0.4} {
			in := nanIn()
			in.LWP, in.CTP = lwp, 90000
			qc := m.Complete(&in, nan, nan, false)
			if qc != QCDropletNumberAssumed|QCStandardAtmosphere {
				t.Fatalf("qc %v", InputQCNames(qc))
			}
			if want := StandardAtmosphereTemperature(90000); in.CTT != want {
				t.Errorf("CTT %g, want %g", in.CTT, want)
			}
			m.Column(&in, &out)
			if math.Abs(out.Nd/nd-1) > 1e-9 {
				t.Errorf("N_d %g LWP %g: Column gives N_d %g", nd, lwp, out.Nd)
			}
		}
	}
	// An input N_d wins over the assumption.
	in := nanIn()
	in.LWP = 0.1
	if qc := model(func(p *Params) { p.DropletNumber = 100e6 }).Complete(&in, 50e6, nan, false); qc != QCDropletNumberInput {
		t.Errorf("qc %v", InputQCNames(qc))
	}
	cw := CondensationRate(p.DefaultCTP, p.DefaultCTT)
	if want := EffectiveRadius(Thickness(0.1, p.Fad, cw), 50e6, p.K, p.Fad, cw); in.Re != want {
		t.Errorf("r_e %g, want %g", in.Re, want)
	}
	// LWP from tau and r_e: (5/9) rho_w tau r_e [Brenguier2000], (2/3) with Uniform [Stephens1978].
	for _, uniform := range []bool{false, true} {
		in = nanIn()
		in.Tau, in.Re = 12, 10e-6
		qc := model(func(p *Params) { p.UniformLWP = uniform }).Complete(&in, nan, nan, false)
		want := 5.0 / 9 * 1000 * 12 * 10e-6
		if uniform {
			want = 2.0 / 3 * 1000 * 12 * 10e-6
		}
		if qc != QCLWPFromOptics || math.Abs(in.LWP/want-1) > 1e-12 {
			t.Errorf("uniform %v: LWP %g qc %v, want %g", uniform, in.LWP, InputQCNames(qc), want)
		}
	}
	// Grid-box mean: LWP/f (common practice), screened below the minimum, flagged without f.
	m = model(func(p *Params) { p.MinCloudFraction = 0.1 })
	in = nanIn()
	in.LWP, in.Re = 0.03, 10e-6
	if qc := m.Complete(&in, nan, 0.5, true); qc != QCInCloudLWP || in.LWP != 0.06 {
		t.Errorf("in-cloud: LWP %g qc %v", in.LWP, InputQCNames(qc))
	}
	in.LWP = 0.03
	if qc := m.Complete(&in, nan, 0.05, true); qc != QCCloudFractionLow {
		t.Errorf("low fraction: qc %v", InputQCNames(qc))
	}
	in.LWP = 0.03
	if qc := m.Complete(&in, nan, nan, true); qc != QCGridMeanLWPUsed || in.LWP != 0.03 {
		t.Errorf("no fraction: LWP %g qc %v", in.LWP, InputQCNames(qc))
	}
	if qc := m.Complete(&in, nan, 1.5, true); qc != uint32(QCInputInvalid) {
		t.Errorf("fraction 1.5: qc %v", qc)
	}
	// LWP <= 0 is clear sky, not invalid (common practice: microwave retrievals scatter
	// around zero in clear sky).
	for _, lwp := range []float64{0, -1e-9, -0.02} {
		in = nanIn()
		in.LWP, in.Re = lwp, 10e-6
		if qc := m.Complete(&in, nan, nan, false); qc != QCClearSky {
			t.Errorf("LWP %g: qc %v", lwp, InputQCNames(qc))
		}
	}
	// CTH only: temperature and pressure from the standard atmosphere at that altitude.
	in = nanIn()
	in.LWP, in.Re, in.CTH = 0.1, 10e-6, 1500
	m.Complete(&in, nan, nan, false)
	if pr, T := StandardAtmosphere(1500); in.CTT != T || in.CTP != pr {
		t.Errorf("CTH only: %g %g", in.CTT, in.CTP)
	}
	// A real CTT is kept.
	in = nanIn()
	in.LWP, in.Re, in.CTT, in.CTP = 0.1, 10e-6, 280, 30000
	if qc := m.Complete(&in, nan, nan, false); qc != 0 || in.CTT != 280 {
		t.Errorf("CTT given: %g qc %v", in.CTT, qc)
	}
	// A high (300 hPa) top gets a cold temperature, so Column screens possible ice.
	in = nanIn()
	in.LWP, in.Re, in.CTP = 0.1, 10e-6, 30000
	m.Complete(&in, nan, nan, false)
	m.Column(&in, &out)
	if out.QC&QCPossibleIce == 0 {
		t.Errorf("300 hPa top not screened as possible ice: CTT %g QC %v", in.CTT, QCNames(out.QC))
	}
	// Bad completing inputs.
	in = nanIn()
	in.LWP = 0.1
	if qc := m.Complete(&in, -5, nan, false); qc != uint32(QCInputInvalid) {
		t.Errorf("negative N_d: qc %v", qc)
	}
	if QCInputScreenMask&0xffff != 0 {
		t.Errorf("input QC bits overlap Outputs.QC")
	}
}

// benchComplete runs Complete then Column on copies of in (Complete changes its input), as
// the process kernel does, with the bulk diagnostics only (no collector), so that the cost
// of the completion shows against the column's.
func benchComplete(b *testing.B, in []Inputs, nd float64, complete bool) {
	p := DefaultParams()
	p.EnableCollector, p.EnableEvaporation = false, false
	p.DropletNumber = nd
	m, err := NewModel(p)
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	b.ResetTimer()
	var out Outputs
	nan := math.NaN()
	for i := 0; i < b.N; i++ {
		c := in[i&4095]
		if complete {
			m.Complete(&c, nan, nan, false)
		}
		m.Column(&c, &out)
	}
	benchSink = out
}

// BenchmarkBulkColumn and BenchmarkBulkCompleteColumn measure side by side what Complete
// adds to a column that needs no completion (typical inputs, all present).
func BenchmarkBulkColumn(b *testing.B) {
	benchComplete(b, typicalScSample(4096, 11), 0, false)
}

func BenchmarkBulkCompleteColumn(b *testing.B) {
	benchComplete(b, typicalScSample(4096, 11), 0, true)
}

// BenchmarkBulkCompleteLWPOnly completes r_e from an assumed N_d and the air state from the
// standard atmosphere at CTP on every column (the microwave-product path).
func BenchmarkBulkCompleteLWPOnly(b *testing.B) {
	in := typicalScSample(4096, 11)
	for i := range in {
		in[i].Re, in[i].CTT = math.NaN(), math.NaN()
	}
	benchComplete(b, in, 100e6, true)
}
