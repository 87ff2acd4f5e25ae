package grid

import (
	"errors"
	"math"
	"strings"
	"testing"
)

func TestParseMask(t *testing.T) {
	t.Parallel()
	good := []struct {
		in   string
		want MaskSpec
	}{
		{"qa:no_confidence,marginal", MaskSpec{Var: "qa", Kind: MaskMeaning, Meanings: []string{"no_confidence", "marginal"}}},
		{" surface_type : sea_ice ", MaskSpec{Var: "surface_type", Kind: MaskMeaning, Meanings: []string{"sea_ice"}}},
		{"qa<2", MaskSpec{Var: "qa", Kind: MaskCompare, Op: "<", Value: 2}},
		{"sza >= 65.5", MaskSpec{Var: "sza", Kind: MaskCompare, Op: ">=", Value: 65.5}},
		{"x!=0", MaskSpec{Var: "x", Kind: MaskCompare, Op: "!=", Value: 0}},
		{"x==-1e3", MaskSpec{Var: "x", Kind: MaskCompare, Op: "==", Value: -1000}},
	}
	for _, c := range good {
		m, err := ParseMask(c.in)
		if err != nil || m.Var != c.want.Var || m.Kind != c.want.Kind || m.Op != c.want.Op || m.Value != c.want.Value ||
			strings.Join(m.Meanings, ",") != strings.Join(c.want.Meanings, ",") {
			t.Errorf("%q: %+v %v, want %+v", c.in, m, err, c.want)
		}
	}
	for _, bad := range []string{"qa", "qa:", ":x", "qa<", "qa<abc", "<3", "qa=>3", "qa<NaN"} {
		if _, err := ParseMask(bad); !errors.Is(err, ErrOverride) {
			t.Errorf("%q: err %v, want ErrOverride", bad, err)
		}
	}
}

// TestMaskFlagSemantics checks the three CF flag forms (CF 3.5: values, masks, both).
func TestMaskFlagSemantics(t *testing.T) {
	cdl := `netcdf f {
dimensions: y = 1 ; x = 4 ;
variables:
	byte vals(y, x) ; vals:flag_values = 0b, 1b, 2b ; vals:flag_meanings = "clear liquid ice" ;
	byte bits(y, x) ; bits:flag_masks = 1b, 2b, -128b ; bits:flag_meanings = "land sunglint bad" ;
	byte both(y, x) ; both:flag_masks = 3b, 3b, 3b ; both:flag_values = 0b, 1b, 2b ; both:flag_meanings = "no_cloud single_layer multi_layer" ;
data:
	vals = 0, 1, 2, 1 ; bits = 0, 1, 3, -128 ; both = 0, 5, 6, 7 ;
}`
	path := ncgenText(t, cdl, "nc4")
	fi, err := Describe(path)
	if err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		v        string
		meanings []string
		x        []float64
		want     []bool
	}{
		{"vals", []string{"ice", "clear"}, []float64{0, 1, 2, 1}, []bool{true, false, true, false}},
		{"bits", []string{"sunglint"}, []float64{0, 1, 3, -128}, []bool{false, false, true, false}},
		{"bits", []string{"bad"}, []float64{0, 1, 3, -128}, []bool{false, false, false, true}},
		{"both", []string{"multi_layer"}, []float64{0, 5, 6, 7}, []bool{false, false, true, false}},
	}
	for _, c := range cases {
		spec := MaskSpec{Text: c.v, Var: c.v, Kind: MaskMeaning, Meanings: c.meanings}
		m, err := newFlagMask(path, fi.Var(c.v), spec, nil)
		if err != nil {
			t.Fatal(err)
		}
		for i, x := range c.x {
			if got := m.Screens(x); got != c.want[i] {
				t.Errorf("%s %v: Screens(%g) = %v, want %v", c.v, c.meanings, x, got, c.want[i])
			}
		}
		if m.Screens(math.NaN()) {
			t.Errorf("%s: a missing value screens", c.v)
		}
	}
	// The phase role keeps liquid only; multilayer screens multi_layer only.
	ph, _ := newFlagMask(path, fi.Var("vals"), MaskSpec{Kind: MaskPhase}, func(w string) bool { return !liquidPhase(w) })
	if strings.Join(ph.Selected, " ") != "clear ice" {
		t.Errorf("phase screens %v", ph.Selected)
	}
	ml, _ := newFlagMask(path, fi.Var("both"), MaskSpec{Kind: MaskMultilayer}, multiLayer)
	if strings.Join(ml.Selected, " ") != "multi_layer" {
		t.Errorf("multilayer screens %v", ml.Selected)
	}
}

// TestDecodeFlagCodesAndPackedZero: flag codes inside a data variable's range decode to
// FlagNaN with their index, before the fill and range tests; the packed zero is 0.
func TestDecodeFlagCodesAndPackedZero(t *testing.T) {
	cdl := `netcdf d {
dimensions: y = 1 ; x = 6 ;
variables:
	short lwp(y, x) ; lwp:units = "kg m-2" ; lwp:scale_factor = 0.001f ; lwp:add_offset = -0.05f ; lwp:_FillValue = -1s ;
		lwp:valid_range = 0s, 32000s ; lwp:flag_values = 32001s, 32002s ; lwp:flag_meanings = "sea_ice land" ;
	float re(y, x) ; re:units = "um" ; re:flag_values = -1.f ; re:flag_meanings = "no_retrieval" ; re:_FillValue = -999.f ;
data:
	lwp = 50, 150, 32001, 32002, -1, 30 ;
	re = 10, -1, 12, 13, 14, 15 ;
}`
	path := ncgenText(t, cdl, "nc4")
	in, err := Open(path, OpenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer in.Close()
	v := readAll(t, in)
	lwp, re := v[RoleLWP], v[RoleRe]
	if lwp[0] != 0 {
		t.Errorf("packed zero decodes to %g, want 0 (derived: 50*0.001 - 0.05)", lwp[0])
	}
	// 150*0.001f - 0.05f in float64 (derived; the float32 attributes are read as they are).
	if want := 150*float64(float32(0.001)) + float64(float32(-0.05)); lwp[1] != want {
		t.Errorf("lwp[1] %g, want %g", lwp[1], want)
	}
	for i, k := range map[int]int{2: 0, 3: 1} {
		if got, ok := FlagIndex(lwp[i]); !ok || got != k || !math.IsNaN(lwp[i]) {
			t.Errorf("lwp[%d] = %v: FlagIndex %d %v, want code %d", i, lwp[i], got, ok, k)
		}
	}
	if _, ok := FlagIndex(lwp[4]); ok || !math.IsNaN(lwp[4]) {
		t.Errorf("fill: %v", lwp[4])
	}
	if lwp[5] >= 0 || math.IsNaN(lwp[5]) {
		t.Errorf("30 packed is %g; it lies inside valid_range, so it is a (negative) value", lwp[5])
	}
	if k, ok := FlagIndex(re[1]); !ok || k != 0 {
		t.Errorf("re flag: %v", re[1])
	}
	b, _ := in.Binding(RoleLWP)
	if !strings.Contains(b.Packing, "32001=sea_ice") || !strings.Contains(b.Packing, "packed zero") {
		t.Errorf("packing %q", b.Packing)
	}
	var c QualityCounts
	p := newPlan(in, nil, in.opt.SlabBytes)
	buf := newInBuf(in, p)
	defer buf.release()
	in.eachDecoded(p, buf, func(int, int, int, int, int) error { in.Count(&buf.slab, 0, buf.slab.N, &c); return nil })
	if c.Codes[RoleLWP.Index()][0] != 1 || c.Codes[RoleLWP.Index()][1] != 1 || c.Codes[RoleRe.Index()][0] != 1 || c.Screened != 3 {
		t.Errorf("counts %+v", c)
	}
	// A plain float decode (Reader.Read) keeps codes as values.
	d, _, err := ReadVariable(path, "re")
	if err != nil || d[1] != -1 {
		t.Errorf("Reader.Read re[1] = %v, %v", d[1], err)
	}
}

// TestBindDiscoveryRules: bounds variables are never candidates, lower-priority names
// bind only without a current one, grid-box means are recognised, and the partial inputs
// are accepted when they can be completed.
func TestBindDiscoveryRules(t *testing.T) {
	base := `netcdf b {
dimensions: y = 2 ; x = 2 ; nv = 2 ;
variables:
%VARS%
}`
	mk := func(vars string) string { return strings.ReplaceAll(base, "%VARS%", vars) }
	open := func(cdl string, opt OpenOptions) (*Input, error) {
		return Open(ncgenText(t, mk(cdl), "nc4"), opt)
	}
	// A bounds variable named like a role is never offered.
	in, err := open(`float y(y) ; y:bounds = "re" ; float re(y, nv) ; re:units = "um" ;
	float lwp(y,x) ; lwp:units = "g m-2" ; float reff(y,x) ; reff:units = "um" ;
data: y = 0, 1 ;`, OpenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if b, _ := in.Binding(RoleRe); b.Var != "reff" {
		t.Errorf("re bound to %q", b.Var)
	}
	in.Close()
	// Lower-priority standard names: a note; the current name wins when both exist.
	in, err = open(`float cwp(y,x) ; cwp:standard_name = "atmosphere_mass_content_of_cloud_condensed_water" ; cwp:units = "kg m-2" ;
	float re(y,x) ; re:units = "um" ;`, OpenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if b, _ := in.Binding(RoleLWP); b.Var != "cwp" || !strings.Contains(b.Note, "lower priority") {
		t.Errorf("lwp %+v", b)
	}
	in.Close()
	in, err = open(`float cwp(y,x) ; cwp:standard_name = "atmosphere_mass_content_of_cloud_condensed_water" ; cwp:units = "kg m-2" ;
	float l(y,x) ; l:standard_name = "atmosphere_mass_content_of_cloud_liquid_water" ; l:units = "kg m-2" ; float re(y,x) ; re:units = "um" ;`, OpenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if b, _ := in.Binding(RoleLWP); b.Var != "l" {
		t.Errorf("lwp %q, want the current standard name", b.Var)
	}
	in.Close()
	// LWP kind.
	kinds := []struct {
		attrs string
		opt   string
		want  bool
	}{
		{`lwp:cell_methods = "area: mean" ;`, "", true},
		{`lwp:cell_methods = "time: mean area: mean where cloud" ;`, "", false},
		{`lwp:cell_methods = "lat: lon: mean" ;`, "", true},
		{``, "", false},
		{``, LWPGridMean, true},
		{`lwp:cell_methods = "area: mean" ;`, LWPInCloud, false},
	}
	for _, k := range kinds {
		in, err := open(`float lwp(y,x) ; lwp:units = "g m-2" ; `+k.attrs+` float re(y,x) ; re:units = "um" ;`, OpenOptions{LWPKind: k.opt})
		if err != nil {
			t.Fatal(err)
		}
		if in.GridMean != k.want {
			t.Errorf("%q %q: grid mean %v (%s)", k.attrs, k.opt, in.GridMean, in.GridMeanWhy)
		}
		if in.GridMean && len(in.Warnings) != 1 {
			t.Errorf("grid mean without cloud fraction: warnings %q", in.Warnings)
		}
		in.Close()
	}
	// Partial inputs: tau and r_e without LWP; LWP with nd; LWP alone needs a droplet number.
	in, err = open(`float cot(y,x) ; cot:units = "1" ; float cer(y,x) ; cer:units = "um" ;`, OpenOptions{})
	if err != nil || in.Has(RoleLWP) || in.Layout.Columns != 4 {
		t.Errorf("tau and r_e only: %v", err)
	} else {
		in.Close()
	}
	in, err = open(`float lwp(y,x) ; lwp:units = "g m-2" ; float cdnc(y,x) ; cdnc:units = "cm-3" ;`, OpenOptions{})
	if err != nil || !in.Has(RoleNd) {
		t.Errorf("LWP and N_d: %v", err)
	} else {
		in.Close()
	}
	_, err = open(`float lwp(y,x) ; lwp:units = "g m-2" ;`, OpenOptions{DropletNumberHint: "--droplet-number N"})
	if !errors.Is(err, ErrNoVariable) || !strings.Contains(err.Error(), "--droplet-number N") {
		t.Errorf("LWP only: %v", err)
	}
	if in, err = open(`float lwp(y,x) ; lwp:units = "g m-2" ;`, OpenOptions{DropletNumber: true}); err != nil {
		t.Errorf("LWP only with an assumed N_d: %v", err)
	} else {
		in.Close()
	}
	// A mask on a variable of another grid is a layout error naming it.
	_, err = open(`float lwp(y,x) ; lwp:units = "g m-2" ; float re(y,x) ; re:units = "um" ; byte qa(y) ;`,
		OpenOptions{Masks: []MaskSpec{{Text: "qa>1", Var: "qa", Kind: MaskCompare, Op: ">", Value: 1}}})
	if !errors.Is(err, ErrLayout) || !strings.Contains(err.Error(), `"qa"`) {
		t.Errorf("mask on another grid: %v", err)
	}
}

// TestPhaseRoleWithoutMeanings: a phase variable without flag_meanings found by name is
// left out with a warning; bound by an override it is an error naming it.
func TestPhaseRoleWithoutMeanings(t *testing.T) {
	cdl := `netcdf p {
dimensions: y = 1 ; x = 2 ;
variables:
	float lwp(y,x) ; lwp:units = "g m-2" ; float re(y,x) ; re:units = "um" ; byte cph(y,x) ;
}`
	path := ncgenText(t, cdl, "nc4")
	in, err := Open(path, OpenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if in.Has(RolePhase) || len(in.Masks) != 0 || len(in.Warnings) != 1 || !strings.Contains(in.Warnings[0], "cph") {
		t.Errorf("phase bound %v, masks %d, warnings %q", in.Has(RolePhase), len(in.Masks), in.Warnings)
	}
	in.Close()
	_, err = Open(path, OpenOptions{Overrides: []Override{{Role: RolePhase, Var: "cph"}}})
	if !errors.Is(err, ErrLayout) || !strings.Contains(err.Error(), `"cph"`) || !strings.Contains(err.Error(), "flag_meanings") {
		t.Errorf("override: %v", err)
	}
}
