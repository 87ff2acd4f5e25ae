package procfile

import (
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/warmrain/warmrain/cmd/internal/summary"
	"github.com/warmrain/warmrain/microphys"
)

// swathCDL is a small processed-like swath (2 times, 2 x 3 columns, 2-D latitude and
// longitude named by the coordinates attribute) in the layout 'warmrain process'
// writes. The screening bit (thin_cloud) and an informational bit
// (air_state_assumed) are set on two columns.
func swathCDL(thin, info int) string {
	return `netcdf swath {
dimensions: time = 2 ; y = 2 ; x = 3 ;
variables:
	double time(time) ; time:units = "hours since 2026-07-01 00:00:00" ; time:calendar = "noleap" ; time:standard_name = "time" ;
	double lat(y, x) ; lat:units = "degrees_north" ; lat:standard_name = "latitude" ;
	double lon(y, x) ; lon:units = "degrees_east" ; lon:standard_name = "longitude" ;
	float liquid_water_path(time, y, x) ; liquid_water_path:units = "g m-2" ; liquid_water_path:coordinates = "lat lon" ;
	float droplet_number(time, y, x) ; droplet_number:units = "cm-3" ; droplet_number:coordinates = "lat lon" ; droplet_number:_FillValue = -999.f ;
	float drizzle_probability(time, y, x) ; drizzle_probability:units = "1" ; drizzle_probability:coordinates = "lat lon" ;
	float cloud_base_drizzle_rate(time, y, x) ; cloud_base_drizzle_rate:units = "mm day-1" ; cloud_base_drizzle_rate:coordinates = "lat lon" ;
	short warm_rain_qc(time, y, x) ; warm_rain_qc:flag_masks = ` + strconv.Itoa(thin) + `s, ` + strconv.Itoa(info) + `s ; warm_rain_qc:flag_meanings = "thin_cloud air_state_assumed" ;
data:
	time = 6, 18 ;
	lat = -20, -20, -20, -21, -21, -21 ;
	lon = 270, 271, 272, 270, 271, 272 ;
	liquid_water_path = 50, 60, 70, 80, 90, 100, 110, 120, 130, 140, 150, 160 ;
	droplet_number = 100, 110, _, 130, 140, 150, 160, 170, 180, 190, 200, 210 ;
	drizzle_probability = 0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 0.5, 0.5, 0.5 ;
	cloud_base_drizzle_rate = 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12 ;
	warm_rain_qc = 0, ` + strconv.Itoa(thin) + `, 0, ` + strconv.Itoa(info) + `, 0, 0, 0, 0, 0, 0, 0, 0 ;
}
`
}

func ncgen(t *testing.T, cdl string) string {
	t.Helper()
	dir := t.TempDir()
	src := filepath.Join(dir, "in.cdl")
	out := filepath.Join(dir, "in.nc")
	if err := os.WriteFile(src, []byte(cdl), 0o644); err != nil {
		t.Fatal(err)
	}
	if b, err := exec.Command("ncgen", "-o", out, src).CombinedOutput(); err != nil {
		t.Skipf("ncgen: %v %s", err, b)
	}
	return out
}

// TestOpenSwath reads a swath written by ncgen: the binding, the horizontal layout,
// the (non-standard) calendar, the blocks and the SI conversion with screening.
func TestOpenSwath(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	thin, info := int(microphys.QCThinCloud), int(microphys.QCAirStateAssumed)
	path := ncgen(t, swathCDL(thin, info))
	p, err := Open(path, summary.Window{})
	if err != nil {
		t.Fatal(err)
	}
	defer p.Close()
	if p.LWP != "liquid_water_path" || p.Rate != "cloud_base_drizzle_rate" || p.Surf != "" || p.QC != "warm_rain_qc" {
		t.Errorf("binding: lwp %q rate %q surf %q qc %q", p.LWP, p.Rate, p.Surf, p.QC)
	}
	if p.QCScreen != uint32(thin) {
		t.Errorf("screening bits %#x, want only thin_cloud %#x", p.QCScreen, thin)
	}
	if _, ok := p.Vars["lat"]; ok {
		t.Error("latitude bound as a diagnostic")
	}
	// Without a coordinates attribute, latitude and longitude are still coordinates.
	bare, err := Open(ncgen(t, strings.ReplaceAll(swathCDL(thin, info), `droplet_number:coordinates = "lat lon" ;`, "")), summary.Window{})
	if err != nil {
		t.Fatal(err)
	}
	defer bare.Close()
	if _, ok := bare.Vars["lon"]; ok {
		t.Error("longitude bound as a diagnostic when droplet_number has no coordinates attribute")
	}
	if p.Scene.NY != 2 || p.Scene.NX != 3 || !p.Scene.TwoD() || p.NoMaps != "" {
		t.Errorf("scene %+v, no maps %q", p.Scene, p.NoMaps)
	}
	var blocks []Block
	if err := p.Blocks(func(b Block) error { blocks = append(blocks, b); return nil }); err != nil {
		t.Fatal(err)
	}
	if len(blocks) != 1 || blocks[0].N != 2 {
		t.Fatalf("blocks %+v, want one block of 2 steps", blocks)
	}
	d, qc, err := p.Step(blocks[0], []string{"liquid_water_path", "droplet_number", "cloud_base_drizzle_rate"})
	if err != nil {
		t.Fatal(err)
	}
	if qc[1] != 1 || qc[3] != 0 {
		t.Errorf("qc %v: want column 1 screened, column 3 (informational bit) kept", qc)
	}
	// The noleap calendar: 2026-07-01 06:00 is (2026-1970)*365 + 181 days after
	// 1970-01-01 in that calendar (no leap days; 181 days before July 1).
	if p.Calendar != "noleap" || p.TimeVals[0] != float64((56*365+181)*86400+6*3600) {
		t.Errorf("calendar %q, first time %v", p.Calendar, p.TimeVals[0])
	}
	_, reasons, err := p.StepReasons(blocks[0], nil)
	if err != nil {
		t.Fatal(err)
	}
	if k := slices.Index(ScreenWords, "thin_cloud"); reasons[1] != 1<<k || reasons[3] != 0 {
		t.Errorf("reasons %v: want column 1 screened by thin_cloud (bit %d)", reasons, k)
	}
	// g m-2 -> kg m-2, cm-3 -> m-3, mm day-1 -> kg m-2 s-1 (1 mm of water = 1 kg m-2).
	if got := d["liquid_water_path"][0]; math.Abs(got-0.05) > 1e-9 {
		t.Errorf("LWP %g kg m-2, want 0.05", got)
	}
	if got := d["droplet_number"][4]; math.Abs(got-140e6) > 1e-3 {
		t.Errorf("N_d %g m-3, want 1.4e8", got)
	}
	if got := d["cloud_base_drizzle_rate"][5]; math.Abs(got-6/86400.0) > 1e-12 {
		t.Errorf("rate %g, want %g", got, 6/86400.0)
	}
	if !math.IsNaN(d["liquid_water_path"][1]) || !math.IsNaN(d["droplet_number"][2]) {
		t.Error("screened column or fill value not NaN")
	}
	// The same values through an outside reader (xarray), when present.
	py := `import xarray as xr, sys
ds = xr.open_dataset(sys.argv[1], decode_times=False)
print(float(ds.liquid_water_path.values[1, 1, 2]), float(ds.droplet_number.values[1, 0, 0]))`
	out, err := exec.Command("/usr/bin/python3", "-c", py, path).Output()
	if err != nil {
		t.Skipf("xarray: %v", err)
	}
	f := strings.Fields(string(out))
	want0, _ := strconv.ParseFloat(f[0], 64)
	want1, _ := strconv.ParseFloat(f[1], 64)
	if got := d["liquid_water_path"][11] * 1e3; math.Abs(got-want0) > 1e-9 {
		t.Errorf("LWP[1,1,2] %g g m-2, xarray %g", got, want0)
	}
	if got := d["droplet_number"][6] * 1e-6; math.Abs(got-want1) > 1e-6 {
		t.Errorf("N_d[1,0,0] %g cm-3, xarray %g", got, want1)
	}
}

// TestOpenRefusesNonProcessed names the file and what is missing.
func TestOpenRefusesNonProcessed(t *testing.T) {
	path := ncgen(t, "netcdf x {\ndimensions: x = 2 ;\nvariables:\n\tfloat lwp(x) ;\ndata:\n\tlwp = 1, 2 ;\n}\n")
	_, err := Open(path, summary.Window{})
	if err == nil || !strings.Contains(err.Error(), path) || !strings.Contains(err.Error(), "droplet_number") {
		t.Fatalf("err %v: want one naming %s and droplet_number", err, path)
	}
}
