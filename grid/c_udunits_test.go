package grid

import (
	"errors"
	"os/exec"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// udunitsCLI converts 1 and 0 with the udunits2 command (Debian udunits-bin) and
// returns factor and offset.
func udunitsCLI(t *testing.T, from, to string) (a, b float64) {
	t.Helper()
	_, err := exec.LookPath("udunits2")
	need(t, "udunits2 (Debian udunits-bin)", err == nil)
	conv := func(x string) float64 {
		out, err := exec.Command("udunits2", "-H", x+" "+from, "-W", to).CombinedOutput()
		if err != nil {
			t.Fatalf("udunits2 %s -> %s: %v %s", from, to, err, out)
		}
		// first line: "    1 g m-2 = 0.001 (kg m-2)" or "... = 1e+06 m-3"
		line := strings.SplitN(string(out), "\n", 2)[0]
		m := regexp.MustCompile(`= (\S+)`).FindStringSubmatch(line)
		if m == nil {
			t.Fatalf("cannot read udunits2 output %q", out)
		}
		v, err := strconv.ParseFloat(strings.Trim(m[1], "()"), 64)
		if err != nil {
			t.Fatalf("udunits2 output %q: %v", out, err)
		}
		return v
	}
	b = conv("0")
	return conv("1") - b, b
}

func TestConverterAgainstUDUNITSCLI(t *testing.T) {
	cases := []struct{ from, to string }{
		{"g m-2", "kg m-2"}, {"kg m-2", "kg m-2"}, {"um", "m"}, {"micron", "m"}, {"cm-3", "m-3"},
		{"hPa", "Pa"}, {"mbar", "Pa"}, {"km", "m"}, {"degC", "K"}, {"percent", "1"}, {"g/m2", "kg m-2"},
		{"mm h-1", "m s-1"},
	}
	for _, c := range cases {
		got, err := NewConverter(c.from, c.to)
		if err != nil {
			t.Errorf("%s -> %s: %v", c.from, c.to, err)
			continue
		}
		a, b := udunitsCLI(t, c.from, c.to)
		if !near(got.Factor, a) || !near(got.Offset, b) {
			t.Errorf("%s -> %s: factor %g offset %g, udunits2 CLI says %g, %g", c.from, c.to, got.Factor, got.Offset, a, b)
		}
	}
}

func TestConverterExactFactors(t *testing.T) {
	// Exact by definition of the SI prefixes (common practice); UDUNITS gives
	// 999999.9999999999 for cm-3 (see doc/netcdf.md#udunits).
	cases := []struct {
		from, to string
		factor   float64
		offset   float64
	}{
		{"cm-3", "m-3", 1e6, 0}, {"g m-2", "kg m-2", 1e-3, 0}, {"um", "m", 1e-6, 0}, {"hPa", "Pa", 100, 0},
		{"degC", "K", 1, 273.15}, {"percent", "1", 0.01, 0},
	}
	for _, c := range cases {
		got, err := NewConverter(c.from, c.to)
		if err != nil {
			t.Fatal(err)
		}
		if got.Factor != c.factor || got.Offset != c.offset {
			t.Errorf("%s -> %s = x*%v%+v, want x*%v%+v exactly", c.from, c.to, got.Factor, got.Offset, c.factor, c.offset)
		}
	}
	if c, _ := NewConverter("cm-3", "m-3"); c.Convert(250) != 2.5e8 {
		t.Errorf("250 cm-3 = %v m-3", c.Convert(250))
	}
}

func TestConverterErrors(t *testing.T) {
	cases := []struct {
		from, to string
		words    []string
	}{
		{"mb", "Pa", []string{`"mb"`, "millibarn", "hPa", "mbar"}},
		{"K", "kg m-2", []string{`"K"`, `"kg m-2"`, "not convertible"}},
		{"kg m-2 s-1", "mm h-1", []string{"not convertible"}}, // physics, not units (doc/netcdf.md#units)
		{"bogon s-1", "m s-1", []string{"cannot parse"}},      // ("furlongs per fortnight" does parse)
		{"", "m", []string{"empty"}},
	}
	for _, c := range cases {
		_, err := NewConverter(c.from, c.to)
		if !errors.Is(err, ErrUnits) {
			t.Errorf("%q -> %q: %v, want ErrUnits", c.from, c.to, err)
			continue
		}
		for _, w := range c.words {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("%q -> %q: %q lacks %q", c.from, c.to, err, w)
			}
		}
	}
	if Convertible("mb", "hPa") || !Convertible("seconds since 1970-01-01", "hours since 2000-01-01") || !Convertible("mbar", "hPa") {
		t.Error("Convertible")
	}
	if _, err := ParseUnits("kg m-2"); err != nil {
		t.Error(err)
	}
	if _, err := ParseUnits("/cm3"); !errors.Is(err, ErrUnits) {
		t.Errorf("ParseUnits(/cm3) = %v", err)
	}
}

func TestParseOverride(t *testing.T) {
	ok := []struct {
		in   string
		want Override
	}{
		{"lwp=LWP", Override{RoleLWP, "LWP", ""}},
		{"re=cer:um", Override{RoleRe, "cer", "um"}},
		{"LWP_SD = lwp_std : g m-2", Override{RoleLWPSD, "lwp_std", "g m-2"}},
		{"ctp=p:hPa", Override{RoleCTP, "p", "hPa"}},
		{"re=Effective Radius:um", Override{RoleRe, "Effective Radius", "um"}}, // HDF4 names may have blanks
		{"lwp=/geophysical_data/cwp", Override{RoleLWP, "/geophysical_data/cwp", ""}},
	}
	for _, c := range ok {
		got, err := ParseOverride(c.in)
		if err != nil || got != c.want {
			t.Errorf("ParseOverride(%q) = %+v, %v; want %+v", c.in, got, err, c.want)
		}
		if again, err := ParseOverride(got.String()); err != nil || again != got {
			t.Errorf("round trip of %q: %+v %v", got.String(), again, err)
		}
	}
	bad := []struct {
		in       string
		sentinel error
	}{
		{"lwp", ErrOverride}, {"foo=x", ErrOverride}, {"lwp=", ErrOverride}, {"lwp=a\tb", ErrOverride},
		{"lwp=x:", ErrOverride}, {"ctp=p:mb", ErrUnits}, {"lwp=x:K", ErrUnits},
	}
	for _, c := range bad {
		if _, err := ParseOverride(c.in); !errors.Is(err, c.sentinel) {
			t.Errorf("ParseOverride(%q) = %v, want %v", c.in, err, c.sentinel)
		}
	}
}

func FuzzParseOverride(f *testing.F) {
	for _, s := range []string{"lwp=LWP", "re=cer:um", "ctp=p:mb", "=", ":", "lwp=x:", "tau=cot:1"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		o, err := ParseOverride(s)
		if err != nil {
			return
		}
		if o.Role.Index() < 0 || o.Var == "" {
			t.Fatalf("accepted %q as %+v", s, o)
		}
	})
}

func FuzzConverter(f *testing.F) {
	for _, s := range []string{"g m-2", "mb", "degC", "10-6 m", "/cm3", "1e-6 m", "kg m-2 s-1", "", "m^-2"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		c, err := NewConverter(s, "kg m-2")
		if err != nil {
			if !errors.Is(err, ErrUnits) {
				t.Fatalf("%q: error %v does not wrap ErrUnits", s, err)
			}
			return
		}
		if c.Factor == 0 {
			t.Fatalf("%q: zero factor", s)
		}
	})
}
