package microphys

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// TestKK2000Local checks the [KhairoutdinovKogan2000] eq. 29 local rate against
// doc/science.md#autoconversion (derived from the formula), tolerance 1e-4.
func TestKK2000Local(t *testing.T) {
	t.Parallel()
	for _, c := range []struct{ qc, n, want float64 }{
		{5e-4, 100e6, 2.4934e-9}, {1e-3, 50e6, 4.7772e-8}, {3e-4, 200e6, 2.0416e-10},
	} {
		if v := AutoconvKK2000Rate(c.qc, c.n); !scalar.EqualWithinRel(v, c.want, 1e-4) {
			t.Errorf("KK2000(%g, %g) = %.5g, want %.5g", c.qc, c.n, v, c.want)
		}
	}
	if v := AutoconvKK2000Rate(-1e-4, 1e8); !math.IsNaN(v) {
		t.Errorf("negative q_c gives %g", v)
	}
}

// TestKK2000Column checks the closed-form column integral against doc/science.md#autoconversion
// (derived, rho_a = 1.2, c_w = 1.9e-6, f_ad = 1) and against the quadrature.
func TestKK2000Column(t *testing.T) {
	t.Parallel()
	const cw, rho = 1.9e-6, 1.2
	for _, c := range []struct{ lwp, n, want float64 }{
		{0.1, 100e6, 2.9907e-7}, {0.05, 50e6, 3.1070e-7}, {0.2, 200e6, 2.8789e-7},
	} {
		h := Thickness(c.lwp, 1, cw)
		v := ColumnAutoconvKK2000(h, cw, c.n, rho)
		if !scalar.EqualWithinRel(v, c.want, 1e-4) {
			t.Errorf("P_col(LWP=%g, N=%g) = %.5g, want %.5g", c.lwp, c.n, v, c.want)
		}
		q := ColumnAutoconversionQuad(AutoconvConfig{Scheme: AutoconvKK2000}, h, cw, c.n, rho)
		if !scalar.EqualWithinRel(q, v, 1e-6) {
			t.Errorf("quadrature %.8g vs closed form %.8g (derived)", q, v)
		}
	}
	// 0.0258 mm/day for LWP = 0.1, N = 100 cm-3 (doc/science.md#autoconversion).
	if v := ColumnAutoconvKK2000(Thickness(0.1, 1, cw), cw, 100e6, rho) * 86400; !scalar.EqualWithinRel(v, 0.0258, 2e-3) {
		t.Errorf("P_col = %.4g mm/day, want 0.0258", v)
	}
	if v := ColumnAutoconvKK2000(0, cw, 1e8, rho); v != 0 {
		t.Errorf("H = 0 gives %g, want 0", v)
	}
}

// TestOtherSchemes checks the local rates of the other schemes against doc/science.md#autoconversion and
// their quadrature column integrals against closed forms (derived).
func TestOtherSchemes(t *testing.T) {
	t.Parallel()
	// Kessler: q_c = 1 g/kg, q_c0 = 0.5 g/kg, k1 = 1e-3 -> 5e-7 s-1 (doc/science.md#autoconversion, derived).
	if v := AutoconvKesslerRate(1e-3, 1e-3, 5e-4); !scalar.EqualWithinRel(v, 5e-7, 1e-12) {
		t.Errorf("Kessler = %g, want 5e-7", v)
	}
	if v := AutoconvKesslerRate(4e-4, 1e-3, 5e-4); v != 0 {
		t.Errorf("Kessler below threshold = %g, want 0", v)
	}
	// SB2001: L_c = 0.5e-3, N_c = 1e8, nu = 1 -> 4.25e-11 kg m-3 s-1 (doc/science.md#autoconversion, derived).
	if v := AutoconvSeifertBehengRate(0.5e-3, 1e8, 1); !scalar.EqualWithinRel(v, 4.25e-11, 2e-3) {
		t.Errorf("SB2001 = %.5g, want 4.25e-11", v)
	}
	// Liu-Daum: kappa2 = 1.9e11 (3/(4 pi))^2 = 1.083e10 (doc/science.md#autoconversion, derived), so at
	// L = 1e-3 kg m-3, N = 5e7 (above threshold) P = kappa2 beta6^6 L^3/N with
	// beta6 = ((r_v+3)/r_v)^(1/3) [Wood2005].
	L, N := 1e-3, 5e7
	rv := math.Cbrt(3*L/(4*math.Pi*WaterDensity*N)) * 1e6
	b6 := math.Cbrt((rv + 3) / rv)
	want := 1.08e10 * math.Pow(b6, 6) * L * L * L / N
	if v := AutoconvLiuDaumRate(L, N); !scalar.EqualWithinRel(v, want, 1e-12) {
		t.Errorf("Liu-Daum = %.5g, want %.5g", v, want)
	}
	if k := 1.9e11 * math.Pow(3/(4*math.Pi), 2); !scalar.EqualWithinRel(k, liuDaumAuto[0], 3e-3) {
		t.Errorf("kappa2 from kappa1 = %.5g, table %.5g", k, liuDaumAuto[0])
	}
	if v := AutoconvLiuDaumRate(1e-5, 1e9); v != 0 { // tiny droplets: below threshold
		t.Errorf("Liu-Daum below threshold = %g, want 0", v)
	}

	const gamma, rho, n = 2e-6, 1.1, 60e6
	h := 400.0
	cfg := DefaultParams().AutoconvConfig()
	// Kessler column in closed form: k1 [gamma (H^2 - z0^2)/2 - rho q_c0 (H - z0)] (derived).
	cfg.Scheme = AutoconvKessler1969
	z0 := cfg.KesslerThreshold * rho / gamma
	kc := cfg.KesslerRate * (gamma*(h*h-z0*z0)/2 - rho*cfg.KesslerThreshold*(h-z0))
	if v := ColumnAutoconversion(cfg, h, gamma, n, rho); !scalar.EqualWithinRel(v, kc, 1e-9) {
		t.Errorf("Kessler column %.8g, closed form %.8g", v, kc)
	}
	// SB column in closed form: factor gamma^4 H^5/(5 N^2) (derived).
	cfg.Scheme = AutoconvSeifertBeheng2001
	sc := sbFactor(cfg.SBShape) * math.Pow(gamma, 4) * math.Pow(h, 5) / (5 * n * n)
	if v := ColumnAutoconversion(cfg, h, gamma, n, rho); !scalar.EqualWithinRel(v, sc, 1e-9) {
		t.Errorf("SB column %.8g, closed form %.8g", v, sc)
	}
	// Liu-Daum column against a fine midpoint sum (derived).
	cfg.Scheme = AutoconvLiuDaum2004
	sum, m := 0.0, 200000
	for i := 0; i < m; i++ {
		z := (float64(i) + 0.5) * h / float64(m)
		sum += AutoconvLiuDaumRate(gamma*z, n) * h / float64(m)
	}
	if v := ColumnAutoconversion(cfg, h, gamma, n, rho); !scalar.EqualWithinRel(v, sum, 1e-5) {
		t.Errorf("Liu-Daum column %.8g, midpoint sum %.8g", v, sum)
	}
	if v := ColumnAutoconversion(cfg, -1, gamma, n, rho); !math.IsNaN(v) {
		t.Errorf("H < 0 gives %g", v)
	}
}

// TestAutoconvNames checks the name table round trip.
func TestAutoconvNames(t *testing.T) {
	t.Parallel()
	for _, want := range []string{"kk2000", "kessler1969", "liu-daum2004", "seifert-beheng2001"} {
		s, err := ParseAutoconvScheme(want)
		if err != nil || s.String() != want {
			t.Errorf("ParseAutoconvScheme(%q) = %v, %v", want, s, err)
		}
	}
	if _, err := ParseAutoconvScheme("KK"); err == nil {
		t.Error("unknown name accepted")
	}
	var zero AutoconvScheme
	if zero != AutoconvKK2000 {
		t.Error("zero value is not KK2000")
	}
}
