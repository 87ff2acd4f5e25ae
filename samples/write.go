package samples

import (
	"fmt"
	"math"
	"strings"

	"github.com/fhs/go-netcdf/netcdf"
	"github.com/warmrain/warmrain/grid"
)

// Fill values and packing of the stored variables.
const (
	fillFloat  = float32(-999)
	fillShort  = int16(-32767)
	lwpScale   = float32(0.1) // g m-2 per count
	lwpOffset  = float32(0)
	lwpMaxPack = int16(30000) // 3000 g m-2
)

// Generate computes the scenario of cfg and writes it to path as a netCDF-4
// classic-model file (shuffle + deflate, chunks of one day × half the rows ×
// all columns). The file is written to a temporary
// name in the same folder and renamed into place when complete; an existing
// file at path is replaced only then. For a given cfg, library build and
// architecture the bytes are identical from run to run.
//
// Every netCDF call runs on one goroutine locked to its OS thread.
func Generate(path string, cfg Config) error {
	f, err := cfg.Fields()
	if err != nil {
		return err
	}
	return grid.WriteAtomic(path, true, func(tmp string) error {
		if err := onNCThread(func() error { return write(tmp, f) }); err != nil {
			return fmt.Errorf("samples: writing %s: %w", path, err)
		}
		return nil
	})
}

// ncw wraps a dataset and keeps the first error, so the writing code reads
// as a list of definitions.
type ncw struct {
	ds  netcdf.Dataset
	err error
}

func (w *ncw) set(err error) {
	if w.err == nil && err != nil {
		w.err = err
	}
}

func (w *ncw) dim(name string, n uint64) netcdf.Dim {
	d, err := w.ds.AddDim(name, n)
	w.set(err)
	return d
}

func (w *ncw) v(name string, t netcdf.Type, dims ...netcdf.Dim) netcdf.Var {
	v, err := w.ds.AddVar(name, t, dims)
	w.set(err)
	return v
}

// text writes a text attribute; go-netcdf panics on empty values, so those are refused.
func (w *ncw) text(a netcdf.Attr, s string) {
	if s == "" {
		w.set(fmt.Errorf("empty attribute %s", a.Name()))
		return
	}
	w.set(a.WriteBytes([]byte(s)))
}

func (w *ncw) f32(a netcdf.Attr, x ...float32) { w.set(a.WriteFloat32s(x)) }
func (w *ncw) f64(a netcdf.Attr, x ...float64) { w.set(a.WriteFloat64s(x)) }
func (w *ncw) i16(a netcdf.Attr, x ...int16)   { w.set(a.WriteInt16s(x)) }

// attrs writes text attributes given as name, value pairs.
func (w *ncw) attrs(v netcdf.Var, kv ...string) {
	for i := 0; i+1 < len(kv); i += 2 {
		w.text(v.Attr(kv[i]), kv[i+1])
	}
}

// gattrs writes global text attributes given as name, value pairs.
func (w *ncw) gattrs(kv ...string) {
	for i := 0; i+1 < len(kv); i += 2 {
		w.text(w.ds.Attr(kv[i]), kv[i+1])
	}
}

// floatVar is one float32 data variable of the file.
type floatVar struct {
	name, stdName, longName, units, comment string
	cellMethods, coords                     string
	vmin, vmax                              float32
	data                                    []float64
	extra                                   []string // more name, value pairs
}

func write(path string, f *Fields) (err error) {
	c := f.Cfg
	ds, err := netcdf.CreateFile(path, netcdf.CLOBBER|netcdf.NETCDF4|netcdf.CLASSIC_MODEL)
	if err != nil {
		return err
	}
	w := &ncw{ds: ds}
	defer func() {
		if cerr := ds.Close(); err == nil {
			err = cerr
		}
	}()

	dT := w.dim("time", uint64(c.NTime))
	dLat := w.dim("lat", uint64(c.NLat))
	dLon := w.dim("lon", uint64(c.NLon))
	dNv := w.dim("nv", 2)

	vTime := w.v("time", netcdf.DOUBLE, dT)
	w.attrs(vTime, "standard_name", "time", "long_name", "time (centre of the day)",
		"units", "seconds since 1970-01-01 00:00:00", "calendar", "standard", "axis", "T", "bounds", "time_bnds")
	vTimeB := w.v("time_bnds", netcdf.DOUBLE, dT, dNv)
	vLat := w.v("lat", netcdf.DOUBLE, dLat)
	w.attrs(vLat, "standard_name", "latitude", "long_name", "latitude of the cell centre",
		"units", "degrees_north", "axis", "Y", "bounds", "lat_bnds")
	vLatB := w.v("lat_bnds", netcdf.DOUBLE, dLat, dNv)
	vLon := w.v("lon", netcdf.DOUBLE, dLon)
	w.attrs(vLon, "standard_name", "longitude", "long_name", "longitude of the cell centre",
		"units", "degrees_east", "axis", "X", "bounds", "lon_bnds")
	vLonB := w.v("lon_bnds", netcdf.DOUBLE, dLon, dNv)
	vCRS := w.v("crs", netcdf.INT)
	w.attrs(vCRS, "grid_mapping_name", "latitude_longitude", "long_name", "WGS 84 latitude-longitude grid")
	w.f64(vCRS.Attr("semi_major_axis"), 6378137)
	w.f64(vCRS.Attr("inverse_flattening"), 298.257223563)
	w.f64(vCRS.Attr("longitude_of_prime_meridian"), 0)

	// Scalar coordinates: the wavelengths of the two retrieval channels.
	vWlTau := w.v("tau_wavelength", netcdf.FLOAT)
	w.attrs(vWlTau, "standard_name", "radiation_wavelength", "long_name", "wavelength of the non-absorbing channel used for the optical thickness", "units", "um")
	vWlRe := w.v("re_wavelength", netcdf.FLOAT)
	w.attrs(vWlRe, "standard_name", "radiation_wavelength", "long_name", "wavelength of the absorbing channel used for the effective radius", "units", "um")

	dims3 := []netcdf.Dim{dT, dLat, dLon}
	const dailyMean = "time: mean area: mean where cloud"

	// Packed liquid water path.
	vLWP := w.v("lwp", netcdf.SHORT, dims3...)
	// one chunk holds half a day's grid (rows split in two), so readers that
	// stream in chunk-aligned slabs meet several slabs per day
	chunks := []int{1, (c.NLat + 1) / 2, c.NLon}
	w.set(grid.DefStorage(ds, "lwp", chunks))
	w.set(vLWP.SetCompression(true, true, c.Deflate))
	w.i16(vLWP.Attr("_FillValue"), fillShort)
	w.attrs(vLWP, "standard_name", "atmosphere_mass_content_of_cloud_liquid_water",
		"long_name", "cloud liquid water path (synthetic)", "units", "g m-2")
	w.f32(vLWP.Attr("scale_factor"), lwpScale)
	w.f32(vLWP.Attr("add_offset"), lwpOffset)
	w.i16(vLWP.Attr("valid_range"), 0, lwpMaxPack)
	lwpAnc := "lwp_std lwp_standard_error"
	if c.NoUncertainty {
		lwpAnc = "lwp_std"
	}
	w.attrs(vLWP, "cell_methods", dailyMean, "ancillary_variables", lwpAnc, "grid_mapping", "crs",
		"coverage_content_type", "physicalMeasurement",
		"comment", "invented demo values; LWP = (5/9) rho_w tau r_e holds with cot and re")

	fvars := []floatVar{
		{name: "lwp_std", stdName: "atmosphere_mass_content_of_cloud_liquid_water",
			longName: "standard deviation of the liquid water path within the grid cell (synthetic)",
			units:    "g m-2", cellMethods: "time: mean area: standard_deviation where cloud",
			vmin: 0, vmax: 3000, data: f.LWPStd},
		{name: "re", stdName: "effective_radius_of_cloud_liquid_water_particles_at_liquid_water_cloud_top",
			longName: "cloud-top droplet effective radius (synthetic)", units: "um",
			cellMethods: dailyMean, coords: "re_wavelength", vmin: 1, vmax: 60, data: f.Re,
			extra: []string{"ancillary_variables", "re_uncertainty"}},
		{name: "cot", stdName: "atmosphere_optical_thickness_due_to_cloud",
			longName: "cloud optical thickness (synthetic)", units: "1",
			cellMethods: dailyMean, coords: "tau_wavelength", vmin: 0, vmax: 200, data: f.Tau,
			comment: "tau = 9 LWP / (5 rho_w r_e): vertically uniform relation LWP = (5/9) rho_w tau r_e, rho_w = 1000 kg m-3",
			extra:   []string{"ancillary_variables", "cot_uncertainty"}},
		{name: "lwp_standard_error", stdName: "atmosphere_mass_content_of_cloud_liquid_water standard_error",
			longName: "retrieval standard error of the liquid water path (synthetic)", units: "g m-2",
			cellMethods: dailyMean, vmin: 0, vmax: 1000, data: f.LWPErr,
			comment: "invented: 10 g m-2 plus 5 % of the LWP, independent of the r_e error"},
		{name: "re_uncertainty", longName: "relative retrieval uncertainty of the cloud-top effective radius (synthetic)",
			units: "percent", cellMethods: dailyMean, vmin: 0, vmax: 200, data: f.ReErr,
			comment: "invented: one standard error in percent of re, larger for optically thin and broken cloud"},
		{name: "cot_uncertainty", longName: "relative retrieval uncertainty of the cloud optical thickness (synthetic)",
			units: "percent", cellMethods: dailyMean, vmin: 0, vmax: 200, data: f.TauErr,
			comment: "invented: one standard error in percent of cot, larger for optically thin cloud"},
		{name: "ctt", stdName: "air_temperature_at_cloud_top", longName: "cloud-top temperature (synthetic)",
			units: "K", cellMethods: dailyMean, vmin: 180, vmax: 320, data: f.CTT,
			extra: []string{"units_metadata", "temperature: on_scale"}},
		{name: "ctp", stdName: "air_pressure_at_cloud_top", longName: "cloud-top pressure (synthetic)",
			units: "hPa", cellMethods: dailyMean, vmin: 50, vmax: 1100, data: f.CTP},
		{name: "cth", stdName: "height_at_cloud_top", longName: "cloud-top height above the surface (synthetic)",
			units: "m", cellMethods: dailyMean, vmin: 0, vmax: 20000, data: f.CTH},
		{name: "cloud_fraction", stdName: "cloud_area_fraction", longName: "cloud fraction of the grid cell (synthetic)",
			units: "1", cellMethods: "time: mean area: mean", vmin: 0, vmax: 1, data: f.CF},
	}
	if c.NoUncertainty {
		keep := fvars[:0]
		for _, fv := range fvars {
			if fv.name != "lwp_standard_error" && fv.name != "re_uncertainty" && fv.name != "cot_uncertainty" {
				if fv.name == "re" || fv.name == "cot" {
					fv.extra = nil // their only extra attribute names the uncertainty
				}
				keep = append(keep, fv)
			}
		}
		fvars = keep
	}
	vs := make([]netcdf.Var, len(fvars))
	for i, fv := range fvars {
		v := w.v(fv.name, netcdf.FLOAT, dims3...)
		vs[i] = v
		w.set(grid.DefStorage(ds, fv.name, chunks))
		w.set(v.SetCompression(true, true, c.Deflate))
		w.f32(v.Attr("_FillValue"), fillFloat)
		if fv.stdName != "" {
			w.attrs(v, "standard_name", fv.stdName)
		}
		w.attrs(v, "long_name", fv.longName, "units", fv.units)
		w.f32(v.Attr("valid_min"), fv.vmin)
		w.f32(v.Attr("valid_max"), fv.vmax)
		content := "physicalMeasurement"
		if strings.HasSuffix(fv.name, "_uncertainty") || strings.HasSuffix(fv.name, "_standard_error") {
			content = "qualityInformation"
		}
		w.attrs(v, "cell_methods", fv.cellMethods, "grid_mapping", "crs", "coverage_content_type", content)
		if fv.coords != "" {
			w.attrs(v, "coordinates", fv.coords)
		}
		if fv.comment != "" {
			w.attrs(v, "comment", fv.comment)
		}
		w.attrs(v, fv.extra...)
	}

	south := c.North - float64(c.NLat)*c.Res
	east := c.West + float64(c.NLon)*c.Res
	end := c.Start.AddDate(0, 0, c.NTime)
	created := c.Created.UTC().Format("2006-01-02T15:04:05Z")
	w.gattrs(
		"Conventions", "CF-1.13 ACDD-1.3",
		"title", "warmrain demo scenario "+c.Name+": synthetic subtropical marine stratocumulus (invented data)",
		"summary", "SYNTHETIC DEMO DATA, INVENTED for demonstrating and testing warmrain; not an observation, a model run or a retrieval. "+
			"Daily gridded cloud fields in the layout of a level-3 retrieval product over a box in the subtropical south-east Pacific: "+
			"a closed-cell stratocumulus deck, a drizzling pocket of open cells with low droplet number, "+
			"a narrow straight line of polluted cloud with high droplet number, a clear-sky corner with a thin-cloud fringe, "+
			"a cold high-cloud patch and scattered failed retrievals.",
		"keywords", "synthetic data, demo, stratocumulus, liquid water path, effective radius, cloud optical thickness",
		"source", "synthetic: warmrain samples generator (github.com/warmrain/warmrain/samples), deterministic hash noise",
		"history", fmt.Sprintf("%s: gensample (warmrain samples) scenario=%s seed=%d grid=%dx%dx%d res=%g deflate=%d",
			created, c.Name, c.Seed, c.NTime, c.NLat, c.NLon, c.Res, c.Deflate),
		"comment", "Invented data for the demo only. Do not use for science.",
		"institution", "warmrain project (synthetic data)",
		"project", "warmrain",
		"processing_level", "L3 (synthetic)",
		"cdm_data_type", "Grid",
		"standard_name_vocabulary", "CF Standard Name Table v83",
		"date_created", created,
		"time_coverage_start", c.Start.UTC().Format("2006-01-02T15:04:05Z"),
		"time_coverage_end", end.UTC().Format("2006-01-02T15:04:05Z"),
		"time_coverage_resolution", "P1D",
		"geospatial_lat_units", "degrees_north",
		"geospatial_lon_units", "degrees_east",
	)
	w.f64(ds.Attr("geospatial_lat_min"), south)
	w.f64(ds.Attr("geospatial_lat_max"), c.North)
	w.f64(ds.Attr("geospatial_lon_min"), c.West)
	w.f64(ds.Attr("geospatial_lon_max"), east)
	if w.err != nil {
		return w.err
	}
	if err := ds.EndDef(); err != nil {
		return err
	}

	tb := make([]float64, 0, 2*c.NTime)
	for _, t := range f.Time {
		tb = append(tb, t-43200, t+43200)
	}
	latB := make([]float64, 0, 2*c.NLat)
	for _, la := range f.Lat {
		latB = append(latB, la+c.Res/2, la-c.Res/2)
	}
	lonB := make([]float64, 0, 2*c.NLon)
	for _, lo := range f.Lon {
		lonB = append(lonB, lo-c.Res/2, lo+c.Res/2)
	}
	w.set(vTime.WriteFloat64s(f.Time))
	w.set(vTimeB.WriteFloat64s(tb))
	w.set(vLat.WriteFloat64s(f.Lat))
	w.set(vLatB.WriteFloat64s(latB))
	w.set(vLon.WriteFloat64s(f.Lon))
	w.set(vLonB.WriteFloat64s(lonB))
	w.set(vCRS.WriteInt32s([]int32{0}))
	w.set(vWlTau.WriteFloat32s([]float32{0.86}))
	w.set(vWlRe.WriteFloat32s([]float32{2.13}))
	w.set(vLWP.WriteInt16s(packLWP(f.LWP)))
	for i, fv := range fvars {
		w.set(vs[i].WriteFloat32s(toFloat32(fv.data)))
	}
	return w.err
}

// packLWP packs g m-2 into int16 counts: round((x - add_offset)/scale_factor).
func packLWP(x []float64) []int16 {
	out := make([]int16, len(x))
	for i, v := range x {
		if math.IsNaN(v) {
			out[i] = fillShort
			continue
		}
		p := math.Round((v - float64(lwpOffset)) / float64(lwpScale))
		out[i] = int16(clamp(p, 0, float64(lwpMaxPack)))
	}
	return out
}

func toFloat32(x []float64) []float32 {
	out := make([]float32, len(x))
	for i, v := range x {
		if math.IsNaN(v) {
			out[i] = fillFloat
		} else {
			out[i] = float32(v)
		}
	}
	return out
}
