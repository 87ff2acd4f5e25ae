package samples

import (
	"fmt"
	"math"
	"time"

	"github.com/fhs/go-netcdf/netcdf"
	"github.com/warmrain/warmrain/grid"
)

// SwathConfig places one level-2-like granule over the demo scenario: NY scan lines
// of NX pixels, centred on (Lat0, Lon0), the scan lines tilted by Heading degrees
// from north and the pixels PixelKm apart. Day is the scenario day sampled (0-based)
// and Minute the granule's start within that day (UTC). INVENTED DATA for the demo.
type SwathConfig struct {
	NY, NX     int
	Lat0, Lon0 float64
	Heading    float64 // degrees clockwise from north of the flight direction
	PixelKm    float64
	Day        int
	Minute     int
	Name       string
}

// DemoSwaths are the two granules of the demo's gridded summary: an ascending and a
// descending overpass of the scenario on its second day, on different pixel grids
// that overlap over the drizzling pocket.
func DemoSwaths() []SwathConfig {
	return []SwathConfig{
		{NY: 90, NX: 60, Lat0: -20, Lon0: -80.5, Heading: 12, PixelKm: 5, Day: 1, Minute: 14*60 + 5, Name: "swath_a"},
		{NY: 70, NX: 80, Lat0: -19.5, Lon0: -79.5, Heading: 168, PixelKm: 4, Day: 1, Minute: 15*60 + 42, Name: "swath_b"},
	}
}

// GenerateSwath writes the granule s of the scenario cfg to path: dimensions
// (time = 1, y, x), 2-D latitude and longitude, and the retrieval fields sampled
// from the nearest scenario cell (fill outside the scenario box), with time bounds
// covering the granule's five minutes. Written to a temporary file and renamed into
// place.
func GenerateSwath(path string, cfg Config, s SwathConfig) error {
	f, err := cfg.Fields()
	if err != nil {
		return err
	}
	if s.NY < 2 || s.NX < 2 || !(s.PixelKm > 0) || s.Day < 0 || s.Day >= cfg.NTime {
		return fmt.Errorf("samples: swath %+v: want NY, NX >= 2, PixelKm > 0 and a day of the scenario", s)
	}
	n := s.NY * s.NX
	lat, lon := make([]float64, n), make([]float64, n)
	pick := func(src []float64) []float64 {
		out := make([]float64, n)
		for k := range out {
			out[k] = math.NaN()
			i := int(math.Floor((cfg.North - lat[k]) / cfg.Res))
			j := int(math.Floor((lon[k] - cfg.West) / cfg.Res))
			if i >= 0 && i < cfg.NLat && j >= 0 && j < cfg.NLon {
				out[k] = src[(s.Day*cfg.NLat+i)*cfg.NLon+j]
			}
		}
		return out
	}
	h := s.Heading * math.Pi / 180
	const kmPerDeg = 111.2 // km per degree of latitude (common practice)
	for y := 0; y < s.NY; y++ {
		for x := 0; x < s.NX; x++ {
			along := (float64(y) - float64(s.NY-1)/2) * s.PixelKm
			across := (float64(x) - float64(s.NX-1)/2) * s.PixelKm
			// pixels widen towards the swath edges, as a cross-track scanner's do
			across *= 1 + 0.3*math.Pow(math.Abs(across)/(float64(s.NX)*s.PixelKm/2), 2)
			north := along*math.Cos(h) - across*math.Sin(h)
			east := along*math.Sin(h) + across*math.Cos(h)
			la := s.Lat0 + north/kmPerDeg
			k := y*s.NX + x
			lat[k] = math.Round(la*1e5) / 1e5
			lon[k] = math.Round((s.Lon0+east/(kmPerDeg*math.Cos(la*math.Pi/180)))*1e5) / 1e5
		}
	}
	lwp, re, ctt := pick(f.LWP), pick(f.Re), pick(f.CTT)
	start := cfg.Start.AddDate(0, 0, s.Day).Add(time.Duration(s.Minute) * time.Minute)
	t0 := float64(start.Unix())
	err = grid.WriteAtomic(path, true, func(tmpName string) error {
		return onNCThread(func() error {
			ds, err := netcdf.CreateFile(tmpName, netcdf.CLOBBER|netcdf.NETCDF4|netcdf.CLASSIC_MODEL)
			if err != nil {
				return err
			}
			w := &ncw{ds: ds}
			dT, dY, dX, dNv := w.dim("time", 1), w.dim("y", uint64(s.NY)), w.dim("x", uint64(s.NX)), w.dim("nv", 2)
			vT := w.v("time", netcdf.DOUBLE, dT)
			w.attrs(vT, "standard_name", "time", "long_name", "granule start time", "units", "seconds since 1970-01-01 00:00:00", "calendar", "standard", "axis", "T", "bounds", "time_bnds")
			vTB := w.v("time_bnds", netcdf.DOUBLE, dT, dNv)
			vLat := w.v("lat", netcdf.DOUBLE, dY, dX)
			w.attrs(vLat, "standard_name", "latitude", "long_name", "latitude of the pixel centre", "units", "degrees_north")
			vLon := w.v("lon", netcdf.DOUBLE, dY, dX)
			w.attrs(vLon, "standard_name", "longitude", "long_name", "longitude of the pixel centre", "units", "degrees_east")
			fv := []floatVar{
				{name: "lwp", stdName: "atmosphere_mass_content_of_cloud_liquid_water", longName: "cloud liquid water path (synthetic)", units: "g m-2", vmin: 0, vmax: 3000, data: lwp},
				{name: "re", stdName: "effective_radius_of_cloud_liquid_water_particles_at_liquid_water_cloud_top", longName: "cloud-top droplet effective radius (synthetic)", units: "um", vmin: 1, vmax: 60, data: re},
				{name: "ctt", stdName: "air_temperature_at_cloud_top", longName: "cloud-top temperature (synthetic)", units: "K", vmin: 180, vmax: 320, data: ctt, extra: []string{"units_metadata", "temperature: on_scale"}},
			}
			vs := make([]netcdf.Var, len(fv))
			for i, v := range fv {
				vs[i] = w.v(v.name, netcdf.FLOAT, dT, dY, dX)
				w.set(vs[i].SetCompression(true, true, cfg.Deflate))
				w.f32(vs[i].Attr("_FillValue"), fillFloat)
				w.attrs(vs[i], "standard_name", v.stdName, "long_name", v.longName, "units", v.units, "coordinates", "lat lon", "coverage_content_type", "physicalMeasurement")
				w.f32(vs[i].Attr("valid_min"), v.vmin)
				w.f32(vs[i].Attr("valid_max"), v.vmax)
				w.attrs(vs[i], v.extra...)
			}
			w.gattrs("Conventions", "CF-1.13 ACDD-1.3",
				"title", "warmrain demo granule "+s.Name+": synthetic level-2 swath over the stratocumulus scenario (invented data)",
				"summary", "SYNTHETIC DEMO DATA, INVENTED for demonstrating warmrain; not an observation. Pixels of a tilted swath sampled from the nearest cell of the demo scenario.",
				"source", "synthetic: warmrain samples generator (github.com/warmrain/warmrain/samples)",
				"comment", "Invented data for the demo only. Do not use for science.",
				"processing_level", "L2 (synthetic)", "cdm_data_type", "Swath",
				"history", cfg.Created.UTC().Format("2006-01-02T15:04:05Z")+": gensample (warmrain samples) swath "+s.Name)
			if w.err != nil {
				ds.Close()
				return w.err
			}
			if err := ds.EndDef(); err != nil {
				ds.Close()
				return err
			}
			w.set(vT.WriteFloat64s([]float64{t0}))
			w.set(vTB.WriteFloat64s([]float64{t0, t0 + 300}))
			w.set(vLat.WriteFloat64s(lat))
			w.set(vLon.WriteFloat64s(lon))
			for i, v := range fv {
				w.set(vs[i].WriteFloat32s(toFloat32(v.data)))
			}
			if cerr := ds.Close(); w.err == nil {
				w.err = cerr
			}
			return w.err
		})
	})
	if err != nil {
		return fmt.Errorf("samples: writing %s: %w", path, err)
	}
	return nil
}
