package grid

import (
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

const tol = 1e-9

func near(a, b float64) bool {
	if math.IsNaN(a) || math.IsNaN(b) {
		return math.IsNaN(a) && math.IsNaN(b)
	}
	return math.Abs(a-b) <= tol*math.Max(1, math.Abs(b))
}

// readAll decodes every bound role of in, in slab order, into full arrays.
func readAll(t *testing.T, in *Input) map[Role][]float64 {
	t.Helper()
	p := newPlan(in, nil, in.opt.SlabBytes)
	buf := newInBuf(in, p)
	out := map[Role][]float64{}
	err := in.eachDecoded(p, buf, func(lead, y0, ny, x0, nx int) error {
		for i, r := range Roles {
			if buf.slab.In[i] == nil {
				continue
			}
			all := out[r]
			if all == nil {
				all = make([]float64, in.Layout.Columns)
				out[r] = all
			}
			for r := 0; r < ny; r++ {
				off := (lead*p.Y+y0+r)*p.X + x0
				copy(all[off:off+nx], buf.slab.In[i][r*nx:(r+1)*nx])
			}
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

func TestOpenGrid3D(t *testing.T) {
	for _, kind := range []string{"classic", "nc4", "nc7"} { // nc7 = netCDF-4 classic model
		t.Run(kind, func(t *testing.T) {
			path := ncgen(t, "grid3d.cdl", kind)
			in, err := Open(path, OpenOptions{})
			if err != nil {
				t.Fatal(err)
			}
			defer in.Close()
			// LWP_unc, a standard_error, is never the sub-grid standard deviation; it is the
			// LWP's retrieval error (lwp_se)
			want := map[Role]string{RoleLWP: "LWP", RoleRe: "cer", RoleCTT: "ctt", RoleCTP: "ctp", RoleTau: "cot", RoleLWPSE: "LWP_unc"}
			got := map[Role]string{}
			for _, b := range in.Bindings() {
				got[b.Role] = b.Var
				if b.Reason == "" {
					t.Errorf("%s: no reason", b.Role)
				}
			}
			for r, v := range want {
				if got[r] != v {
					t.Errorf("role %s bound to %q, want %q (all: %v)", r, got[r], v, got)
				}
			}
			if len(got) != len(want) {
				t.Errorf("bindings %v, want %v", got, want)
			}
			b, _ := in.Binding(RoleLWP)
			if !strings.Contains(b.Reason, "standard_name") {
				t.Errorf("LWP reason %q", b.Reason)
			}
			b, _ = in.Binding(RoleCTT)
			if !strings.Contains(b.Reason, "common name") {
				t.Errorf("ctt reason %q", b.Reason)
			}
			if in.Has(RoleLWPSD) {
				t.Errorf("the retrieval uncertainty LWP_unc was bound as lwp_sd")
			}
			L := in.Layout
			if L.Y.Name != "lat" || L.X.Name != "lon" || len(L.Leading) != 1 || !L.Leading[0].Unlimited || L.Leading[0].Len != 2 {
				t.Errorf("layout %+v", L)
			}
			if L.Lat != "lat" || L.Lon != "lon" || !L.LatDescending || L.LatLon2D || L.GridMapping != "crs" {
				t.Errorf("coords %+v", L)
			}
			for _, c := range []string{"time", "lat", "lon", "lat_bnds", "crs"} {
				if !strings.Contains(" "+strings.Join(L.Coords, " ")+" ", " "+c+" ") {
					t.Errorf("Coords %v lacks %s", L.Coords, c)
				}
			}
			v := readAll(t, in)
			// LWP g m-2 -> kg m-2 is x*0.001 (derived: UDUNITS prefix g = 1e-3 kg).
			checks := []struct {
				r    Role
				i    int
				want float64
			}{
				{RoleLWP, 0, 0.1}, {RoleLWP, 2, math.NaN()}, {RoleLWP, 23, math.NaN()}, {RoleLWP, 12, 0.101},
				{RoleRe, 0, 10e-6}, {RoleRe, 23, math.NaN()},
				{RoleCTT, 0, 283.15}, {RoleCTT, 23, 253.15}, // degC -> K adds 273.15 (UDUNITS definition)
				{RoleCTP, 0, 90000}, {RoleCTP, 2, math.NaN()}, {RoleCTP, 5, math.NaN()}, // missing_value vector
				{RoleTau, 0, 10}, {RoleTau, 11, math.NaN()}, {RoleTau, 23, math.NaN()}, // valid_range
			}
			for _, c := range checks {
				if got := v[c.r][c.i]; !near(got, c.want) {
					t.Errorf("%s[%d] = %g, want %g", c.r, c.i, got, c.want)
				}
			}
			st, err := in.Stats()
			if err != nil {
				t.Fatal(err)
			}
			if st[0].Role != RoleLWP || st[0].Missing != 2 || !near(st[0].Max, 0.131) || !near(st[0].Min, 0.01) {
				t.Errorf("stats %v", st[0])
			}
		})
	}
}

func TestOpenPackedUnsigned(t *testing.T) {
	for _, kind := range []string{"classic", "nc4"} {
		path := ncgen(t, "packed.cdl", kind)
		in, err := Open(path, OpenOptions{})
		if err != nil {
			t.Fatal(err)
		}
		v := readAll(t, in)
		in.Close()
		// lwp = -32768 fill, -32767 missing_value, -501 below valid_min, -500 ok, 0 ok, 1001 above valid_max;
		// unpacked = x*0.001f + 0.5 (CF 8.1); compare against float32 scale.
		// -500 is the packed zero: -500*0.001f + 0.5 leaves -2.37e-8 in float64, decoded as
		// exactly 0 (see Decoder).
		wl := []float64{math.NaN(), math.NaN(), math.NaN(), 0, 0.5, math.NaN()}
		// re: bytes -1 (fill, as 255), 0, 1, 127, -128 -> 128, -2 -> 254; x*0.25 um.
		wr := []float64{math.NaN(), 0, 0.25e-6, 31.75e-6, 32e-6, 63.5e-6}
		for i := range wl {
			if !near(v[RoleLWP][i], wl[i]) {
				t.Errorf("%s lwp[%d] = %g want %g", kind, i, v[RoleLWP][i], wl[i])
			}
			if !near(v[RoleRe][i], wr[i]) {
				t.Errorf("%s re[%d] = %g want %g", kind, i, v[RoleRe][i], wr[i])
			}
		}
	}
}

func TestOpenAllTypes(t *testing.T) {
	path := ncgen(t, "alltypes.cdl", "nc4")
	for _, name := range []string{"v_byte", "v_ubyte", "v_short", "v_ushort", "v_int", "v_uint", "v_int64", "v_uint64", "v_float", "v_double"} {
		in, err := Open(path, OpenOptions{Overrides: []Override{{Role: RoleLWP, Var: name, Units: "g m-2"}}})
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		v := readAll(t, in)[RoleLWP]
		in.Close()
		if !near(v[0], 0.001) || !math.IsNaN(v[1]) || !near(v[2], 0.003) {
			t.Errorf("%s decoded to %v, want [0.001 NaN 0.003]", name, v)
		}
	}
}

func TestOpenSwath(t *testing.T) {
	path := ncgen(t, "swath.cdl", "nc4")
	in, err := Open(path, OpenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer in.Close()
	L := in.Layout
	if !L.LatLon2D || L.Lat != "latitude" || L.Lon != "longitude" || len(L.Leading) != 0 {
		t.Errorf("layout %+v", L)
	}
	b, _ := in.Binding(RoleRe)
	if b.Var != "reff" || !b.Conv.Identity() {
		t.Errorf("re binding %+v", b)
	}
}

func TestOpenErrors(t *testing.T) {
	base := `netcdf t { dimensions: y = 2 ; x = 2 ; %DIMS%
variables:
%VARS%
}`
	mk := func(dims, vars string) string {
		return strings.ReplaceAll(strings.ReplaceAll(base, "%DIMS%", dims), "%VARS%", vars)
	}
	cases := []struct {
		name, cdl string
		over      []Override
		sentinel  error
		words     []string
	}{
		{"missing lwp", mk("", `float re(y,x) ; re:units = "m" ;`), nil, ErrNoVariable,
			[]string{"lwp", "atmosphere_mass_content_of_cloud_liquid_water", "clwp", "override"}},
		{"ambiguous", mk("", `float a(y,x) ; a:units = "kg m-2" ; a:standard_name = "atmosphere_mass_content_of_cloud_liquid_water" ;
float b(y,x) ; b:units = "kg m-2" ; b:standard_name = "atmosphere_cloud_liquid_water_content" ; float re(y,x) ; re:units = "m" ;`), nil, ErrAmbiguous,
			[]string{"a (standard_name", "b (standard_name", "lwp=a"}},
		{"no units", mk("", `float lwp(y,x) ; float re(y,x) ; re:units = "m" ;`), nil, ErrUnits,
			[]string{`"lwp"`, "no units", "kg m-2", "lwp=lwp:g m-2"}},
		{"bad units", mk("", `float lwp(y,x) ; lwp:units = "K" ; float re(y,x) ; re:units = "m" ;`), nil, ErrUnits,
			[]string{`"lwp"`, `"K"`, "kg m-2"}},
		{"millibarn", mk("", `float lwp(y,x) ; lwp:units = "kg m-2" ; float re(y,x) ; re:units = "m" ; float ctp(y,x) ; ctp:units = "mb" ;`), nil, ErrUnits,
			[]string{`"ctp"`, "millibarn", "hPa", "mbar"}},
		{"different grids", mk("z = 3 ;", `float lwp(y,x) ; lwp:units = "kg m-2" ; float re(y,z) ; re:units = "m" ;`), nil, ErrLayout,
			[]string{"LWP and r_e are on different grids", "(y=2, z=3)"}},
		{"zero length", mk("t = UNLIMITED ;", `float lwp(t,y,x) ; lwp:units = "kg m-2" ; float re(t,y,x) ; re:units = "m" ;`), nil, ErrLayout,
			[]string{`"lwp"`, `"t"`, "length 0"}},
		{"non-monotonic", strings.Replace(mk("", `float y(y) ; float lwp(y,x) ; lwp:units = "kg m-2" ; float re(y,x) ; re:units = "m" ;`), "}", "data: y = 1, 1 ; }", 1), nil, ErrLayout,
			[]string{`"y"`, "not strictly monotonic"}},
		{"override missing var", mk("", `float lwp(y,x) ; lwp:units = "kg m-2" ; float re(y,x) ; re:units = "m" ;`),
			[]Override{{Role: RoleTau, Var: "nothere"}}, ErrNoVariable, []string{`"nothere"`, "tau=nothere"}},
		{"string missing_value", mk("", `float lwp(y,x) ; lwp:units = "kg m-2" ; lwp:missing_value = "none" ; float re(y,x) ; re:units = "m" ;`), nil, ErrDecode,
			[]string{`"lwp"`, "missing_value", "char"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			path := ncgenText(t, c.cdl, "nc4")
			in, err := Open(path, OpenOptions{Overrides: c.over})
			if err == nil {
				in.Close()
				t.Fatal("no error")
			}
			if !errors.Is(err, c.sentinel) {
				t.Errorf("error %v does not wrap %v", err, c.sentinel)
			}
			msg := err.Error()
			if !strings.Contains(msg, path) {
				t.Errorf("error %q does not name the file", msg)
			}
			for _, w := range c.words {
				if !strings.Contains(msg, w) {
					t.Errorf("error %q lacks %q", msg, w)
				}
			}
		})
	}
}

func TestOverrideUnitsFixesMissingUnits(t *testing.T) {
	path := ncgenText(t, `netcdf t { dimensions: y = 1 ; x = 2 ; variables: float w(y,x) ; float re(y,x) ; re:units = "m" ;
data: w = 50, 60 ; re = 1e-5, 1e-5 ; }`, "classic")
	o, err := ParseOverride("lwp=w:g m-2")
	if err != nil {
		t.Fatal(err)
	}
	in, err := Open(path, OpenOptions{Overrides: []Override{o}})
	if err != nil {
		t.Fatal(err)
	}
	defer in.Close()
	b, _ := in.Binding(RoleLWP)
	if b.UnitsFrom != "override" || !strings.Contains(b.Reason, "override") {
		t.Errorf("binding %+v", b)
	}
	if v := readAll(t, in)[RoleLWP]; !near(v[0], 0.05) || !near(v[1], 0.06) {
		t.Errorf("values %v", v)
	}
}

// TestSlabOrderChunkedLeading: LWP chunked over two time steps and two rows;
// with slabs of one column the plan visits both time steps of a chunk before
// moving on, and every value still lands in its place.
func TestSlabOrderChunkedLeading(t *testing.T) {
	cdl, err := os.ReadFile(filepath.Join("testdata", "grid3d.cdl"))
	if err != nil {
		t.Fatal(err)
	}
	chunked := strings.Replace(string(cdl), `LWP:units = "g m-2" ;`, `LWP:units = "g m-2" ; LWP:_ChunkSizes = 2, 2, 4 ;`, 1)
	a, err := Open(ncgen(t, "grid3d.cdl", "nc4"), OpenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer a.Close()
	b, err := Open(ncgenText(t, chunked, "nc4"), OpenOptions{SlabBytes: 1})
	if err != nil {
		t.Fatal(err)
	}
	defer b.Close()
	if bb, _ := b.Binding(RoleLWP); len(bb.Chunks) != 3 || bb.Chunks[0] != 2 {
		t.Fatalf("chunks %v", bb.Chunks)
	}
	p := newPlan(b, nil, 1)
	var order []string
	p.each(func(lead, y0, ny, x0, nx int) error {
		order = append(order, fmt.Sprintf("%d/%d+%d/%d+%d", lead, y0, ny, x0, nx))
		return nil
	})
	want := "0/0+1/0+1 1/0+1/0+1 0/0+1/1+1 1/0+1/1+1 0/0+1/2+1 1/0+1/2+1 0/0+1/3+1 1/0+1/3+1 " +
		"0/1+1/0+1 1/1+1/0+1 0/1+1/1+1 1/1+1/1+1 0/1+1/2+1 1/1+1/2+1 0/1+1/3+1 1/1+1/3+1 " +
		"0/2+1/0+1 1/2+1/0+1 0/2+1/1+1 1/2+1/1+1 0/2+1/2+1 1/2+1/2+1 0/2+1/3+1 1/2+1/3+1"
	if got := strings.Join(order, " "); got != want {
		t.Errorf("slab order %s, want %s", got, want)
	}
	va, vb := readAll(t, a), readAll(t, b)
	for r, x := range va {
		for i := range x {
			if !near(vb[r][i], x[i]) {
				t.Errorf("%s[%d] = %g, want %g", r, i, vb[r][i], x[i])
			}
		}
	}
}
