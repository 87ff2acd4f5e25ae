package grid

import (
	"strings"
	"testing"
)

// TestErrorRoleDiscovery: the standard-error roles are found by the standard_error modifier
// (CF Appendix C), in ancillary_variables, and by the MODIS product names
// (Cloud_Effective_Radius_Uncertainty, percent: the product's long_name says "Relative
// Uncertainty (Percent)"); a percentage is relative, other units convert; an unusable
// discovered uncertainty is a warning, never an error; an uncertainty is never the role
// itself; an uncertainty whose input is absent is not bound.
func TestErrorRoleDiscovery(t *testing.T) {
	cdl := `netcdf e {
dimensions:
	y = 2 ; x = 3 ;
variables:
	float lwp(y, x) ;
		lwp:standard_name = "atmosphere_mass_content_of_cloud_liquid_water" ;
		lwp:units = "g m-2" ;
	float lwp_err(y, x) ;
		lwp_err:standard_name = "atmosphere_mass_content_of_cloud_liquid_water standard_error" ;
		lwp_err:units = "g m-2" ;
	float Cloud_Effective_Radius(y, x) ;
		Cloud_Effective_Radius:units = "um" ;
	float Cloud_Effective_Radius_Uncertainty(y, x) ;
		Cloud_Effective_Radius_Uncertainty:units = "percent" ;
	float cot(y, x) ;
		cot:standard_name = "atmosphere_optical_thickness_due_to_cloud" ;
		cot:units = "1" ;
		cot:ancillary_variables = "cot_unc" ;
	float cot_unc(y, x) ;
	float ctt(y, x) ;
		ctt:units = "K" ;
data:
	lwp = 1, 2, 3, 4, 5, 6 ;
	lwp_err = 1, 1, 1, 1, 1, 1 ;
	Cloud_Effective_Radius = 10, 10, 10, 10, 10, 10 ;
	Cloud_Effective_Radius_Uncertainty = 10, 10, 10, 10, 10, 10 ;
	cot = 5, 5, 5, 5, 5, 5 ;
	cot_unc = 1, 1, 1, 1, 1, 1 ;
	ctt = 280, 280, 280, 280, 280, 280 ;
}
`
	path := ncgenText(t, cdl, "nc4")
	in, err := Open(path, OpenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer in.Close()
	want := map[Role]struct {
		v   string
		rel bool
	}{RoleLWPSE: {"lwp_err", false}, RoleReSE: {"Cloud_Effective_Radius_Uncertainty", true}}
	for r, w := range want {
		b, ok := in.Binding(r)
		if !ok || b.Var != w.v || b.Relative != w.rel {
			t.Errorf("%s: bound %v to %q relative %v; want %q relative %v", r, ok, b.Var, b.Relative, w.v, w.rel)
		}
	}
	if b, _ := in.Binding(RoleLWPSE); b.Conv.Factor != 1e-3 {
		t.Errorf("lwp_se conversion %v, want g m-2 -> kg m-2", b.Conv)
	}
	if b, _ := in.Binding(RoleReSE); b.Conv.Factor != 0.01 {
		t.Errorf("re_se conversion %v, want percent -> 1", b.Conv)
	}
	if b, _ := in.Binding(RoleRe); b.Var != "Cloud_Effective_Radius" {
		t.Errorf("re bound to %q", b.Var)
	}
	if _, ok := in.Binding(RoleTauSE); ok {
		t.Errorf("tau_se bound although cot_unc has no units")
	}
	if !strings.Contains(strings.Join(in.Warnings, "\n"), "cot_unc") {
		t.Errorf("no warning about cot_unc: %q", in.Warnings)
	}
	// a dimensionless uncertainty whose long_name says percent (MODIS level 2) is a percentage
	cdl3 := strings.Replace(cdl, `Cloud_Effective_Radius_Uncertainty:units = "percent" ;`,
		`Cloud_Effective_Radius_Uncertainty:units = "none" ; Cloud_Effective_Radius_Uncertainty:long_name = "Cloud Effective Particle Radius Relative Uncertainty (Percent)" ;`, 1)
	in3, err := Open(ncgenText(t, cdl3, "nc4"), OpenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer in3.Close()
	if b, ok := in3.Binding(RoleReSE); !ok || !b.Relative || b.Conv.Factor != 0.01 {
		t.Errorf("re_se with units none and a percent long_name: %v %+v", ok, b.Conv)
	}
	// without the input, its uncertainty is not read
	cdl2 := strings.NewReplacer("float cot(y, x)", "float cotx(y, x)", "cot:", "cotx:", "cot =", "cotx =").Replace(cdl)
	in2, err := Open(ncgenText(t, cdl2, "nc4"), OpenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer in2.Close()
	if _, ok := in2.Binding(RoleTauSE); ok {
		t.Errorf("tau_se bound without tau")
	}
}
