// Package synth writes the synthetic inputs of the benchmark suite (bench/run.sh,
// bench/mkinput and the pipeline benchmarks of cmd/internal/app): N×N columns of
// cloud-top retrievals of a marine stratocumulus deck on a regular latitude-longitude
// grid, as a netCDF-4 classic-model file.
//
// Variables (all on (lat, lon), CF standard names and UDUNITS units):
//
//	lwp       liquid water path, g m-2       (ancillary_variables lwp_std)
//	lwp_std   its sub-grid standard deviation, g m-2 (cell_methods area: standard_deviation)
//	re        cloud-top effective radius, um
//	ctt       cloud-top temperature, K
//	ctp       cloud-top pressure, hPa
//
// Variants: "deflate" (float32, shuffle + deflate, chunks Chunk × Chunk), "packed"
// (int16 with scale_factor/add_offset/_FillValue, same compression and chunks) and
// "plain" (float32, contiguous, no compression).
//
// The values are invented (benchmark data, not an observation): smooth large-scale
// patterns, value noise at about 50 columns and white noise in the low digits, so that
// they compress like real retrievals. About 11 % of the columns are clear or failed
// retrievals (fill in every cloud variable). Every value is a pure function of the
// global indices (y+Y0, x+X0), so files are reproducible byte for byte and Y0/X0
// give different but statistically alike tiles.
//
// The file is streamed one chunk row at a time, so memory stays at about 5 × Chunk ×
// N × 4 bytes whatever N is. Every libnetcdf call of a Write runs on one goroutine
// locked to its OS thread; do not call Write while another package is using
// libnetcdf. The file is written under a temporary name and renamed when complete.
package synth

import (
	"fmt"
	"math"

	"github.com/fhs/go-netcdf/netcdf"
	"github.com/warmrain/warmrain/grid"
)

const (
	fillF32 = float32(-999)
	fillI16 = int16(-32767)
	resDeg  = 0.004 // grid spacing, degrees
	lat0    = -35.0 // southern edge, degrees_north
	lon0    = -120.0
)

// field is one stored variable.
type field struct {
	name, stdName, longName, units string
	cellMethods, ancillary         string
	vmin, vmax                     float64 // valid range, unpacked units
	scale, offset                  float64 // int16 packing of the "packed" variant
}

var fields = []field{
	{name: "lwp", stdName: "atmosphere_mass_content_of_cloud_liquid_water", longName: "cloud liquid water path (synthetic)",
		units: "g m-2", cellMethods: "area: mean where cloud", ancillary: "lwp_std", vmin: 0, vmax: 3000, scale: 0.1},
	{name: "lwp_std", stdName: "atmosphere_mass_content_of_cloud_liquid_water",
		longName: "sub-grid standard deviation of the liquid water path (synthetic)", units: "g m-2",
		cellMethods: "area: standard_deviation where cloud", vmin: 0, vmax: 3000, scale: 0.1},
	{name: "re", stdName: "effective_radius_of_cloud_liquid_water_particles_at_liquid_water_cloud_top",
		longName: "cloud-top droplet effective radius (synthetic)", units: "um", cellMethods: "area: mean where cloud",
		vmin: 1, vmax: 60, scale: 0.01},
	{name: "ctt", stdName: "air_temperature_at_cloud_top", longName: "cloud-top temperature (synthetic)", units: "K",
		cellMethods: "area: mean where cloud", vmin: 180, vmax: 320, scale: 0.01, offset: 250},
	{name: "ctp", stdName: "air_pressure_at_cloud_top", longName: "cloud-top pressure (synthetic)", units: "hPa",
		cellMethods: "area: mean where cloud", vmin: 50, vmax: 1100, scale: 0.1},
}

// Config says what Write writes.
type Config struct {
	N       int    // columns along each side (N×N columns)
	Chunk   int    // chunk side of the compressed variants (capped at N); 0 means 1000
	Variant string // "deflate", "packed" or "plain"
	Deflate int    // deflate level 1-9 of the compressed variants; 0 means 1
	Y0, X0  int    // offset of the tile in the global pattern
}

// Write writes the input described by c to path (atomically: temporary file + rename).
func Write(path string, c Config) error {
	if c.Chunk == 0 {
		c.Chunk = 1000
	}
	if c.Deflate == 0 {
		c.Deflate = 1
	}
	if c.N < 1 || c.Chunk < 1 || c.Deflate < 1 || c.Deflate > 9 ||
		(c.Variant != "deflate" && c.Variant != "packed" && c.Variant != "plain") {
		return fmt.Errorf("synth: bad config %+v (want N >= 1, Chunk >= 1, Deflate 1-9, Variant deflate, packed or plain)", c)
	}
	cfg := config{n: c.N, chunk: min(c.Chunk, c.N), variant: c.Variant, level: c.Deflate, y0: c.Y0, x0: c.X0}
	if err := writeAtomic(path, cfg); err != nil {
		return fmt.Errorf("synth: %s: %w", path, err)
	}
	return nil
}

type config struct {
	n, chunk int
	variant  string
	level    int
	y0, x0   int
}

func writeAtomic(path string, cfg config) error {
	return grid.WriteAtomic(path, true, func(tmp string) error {
		var werr error
		if e := grid.OnIOThread(func() { werr = write(tmp, cfg) }); e != nil { // every libnetcdf call runs there
			werr = e
		}
		return werr
	})
}

// w keeps the first error so the definitions read as a list.
type w struct{ err error }

func (e *w) set(err error) {
	if e.err == nil && err != nil {
		e.err = err
	}
}

func (e *w) text(a netcdf.Attr, s string) { e.set(a.WriteBytes([]byte(s))) }

func write(path string, cfg config) (err error) {
	ds, err := netcdf.CreateFile(path, netcdf.CLOBBER|netcdf.NETCDF4|netcdf.CLASSIC_MODEL)
	if err != nil {
		return err
	}
	defer func() {
		if cerr := ds.Close(); err == nil {
			err = cerr
		}
	}()
	e := &w{}
	n := cfg.n
	dLat, err := ds.AddDim("lat", uint64(n))
	e.set(err)
	dLon, err := ds.AddDim("lon", uint64(n))
	e.set(err)
	vLat, err := ds.AddVar("lat", netcdf.DOUBLE, []netcdf.Dim{dLat})
	e.set(err)
	e.text(vLat.Attr("standard_name"), "latitude")
	e.text(vLat.Attr("long_name"), "latitude of the cell centre")
	e.text(vLat.Attr("units"), "degrees_north")
	e.text(vLat.Attr("axis"), "Y")
	vLon, err := ds.AddVar("lon", netcdf.DOUBLE, []netcdf.Dim{dLon})
	e.set(err)
	e.text(vLon.Attr("standard_name"), "longitude")
	e.text(vLon.Attr("long_name"), "longitude of the cell centre")
	e.text(vLon.Attr("units"), "degrees_east")
	e.text(vLon.Attr("axis"), "X")

	packed := cfg.variant == "packed"
	vars := make([]netcdf.Var, len(fields))
	for k, f := range fields {
		t := netcdf.FLOAT
		if packed {
			t = netcdf.SHORT
		}
		v, err := ds.AddVar(f.name, t, []netcdf.Dim{dLat, dLon})
		e.set(err)
		vars[k] = v
		if cfg.variant == "plain" {
			e.set(grid.DefStorage(ds, f.name, nil))
		} else {
			e.set(grid.DefStorage(ds, f.name, []int{cfg.chunk, cfg.chunk}))
			e.set(v.SetCompression(true, true, cfg.level))
		}
		if packed {
			e.set(v.Attr("_FillValue").WriteInt16s([]int16{fillI16}))
		} else {
			e.set(v.Attr("_FillValue").WriteFloat32s([]float32{fillF32}))
		}
		e.text(v.Attr("standard_name"), f.stdName)
		e.text(v.Attr("long_name"), f.longName)
		e.text(v.Attr("units"), f.units)
		if packed {
			e.set(v.Attr("scale_factor").WriteFloat32s([]float32{float32(f.scale)}))
			e.set(v.Attr("add_offset").WriteFloat32s([]float32{float32(f.offset)}))
			e.set(v.Attr("valid_range").WriteInt16s([]int16{pack(f, f.vmin), pack(f, f.vmax)}))
		} else {
			e.set(v.Attr("valid_min").WriteFloat32s([]float32{float32(f.vmin)}))
			e.set(v.Attr("valid_max").WriteFloat32s([]float32{float32(f.vmax)}))
		}
		e.text(v.Attr("cell_methods"), f.cellMethods)
		if f.ancillary != "" {
			e.text(v.Attr("ancillary_variables"), f.ancillary)
		}
	}
	e.text(ds.Attr("Conventions"), "CF-1.13")
	e.text(ds.Attr("title"), "warmrain benchmark input: synthetic marine stratocumulus retrievals (invented data)")
	e.text(ds.Attr("source"), "synthetic: warmrain bench/mkinput (deterministic hash noise); not an observation")
	e.text(ds.Attr("comment"), fmt.Sprintf("Invented data for benchmarks only. n=%d variant=%s chunk=%d deflate=%d y0=%d x0=%d",
		n, cfg.variant, cfg.chunk, cfg.level, cfg.y0, cfg.x0))
	if e.err != nil {
		return e.err
	}
	if err := ds.EndDef(); err != nil {
		return err
	}
	lat := make([]float64, n)
	lon := make([]float64, n)
	for i := range lat {
		lat[i] = lat0 + (float64(cfg.y0+i)+0.5)*resDeg
		lon[i] = lon0 + (float64(cfg.x0+i)+0.5)*resDeg
	}
	if err := vLat.WriteFloat64s(lat); err != nil {
		return err
	}
	if err := vLon.WriteFloat64s(lon); err != nil {
		return err
	}

	// One chunk row at a time (contiguous: blocks of the same height).
	rows := cfg.chunk
	g := newGen(cfg.x0, n)
	bufs := make([][]float32, len(fields))
	for k := range bufs {
		bufs[k] = make([]float32, rows*n)
	}
	var i16 []int16
	if packed {
		i16 = make([]int16, rows*n)
	}
	var vals [5]float64
	for yb := 0; yb < n; yb += rows {
		ny := min(rows, n-yb)
		for i := 0; i < ny; i++ {
			g.row(cfg.y0 + yb + i)
			for j := 0; j < n; j++ {
				clear := g.column(cfg.y0+yb+i, j, &vals)
				for k := range fields {
					if clear {
						bufs[k][i*n+j] = fillF32
					} else {
						bufs[k][i*n+j] = float32(vals[k])
					}
				}
			}
		}
		start, count := []uint64{uint64(yb), 0}, []uint64{uint64(ny), uint64(n)}
		for k, f := range fields {
			b := bufs[k][:ny*n]
			if packed {
				for i, x := range b {
					if x == fillF32 {
						i16[i] = fillI16
					} else {
						i16[i] = pack(f, float64(x))
					}
				}
				if err := vars[k].WriteInt16Slice(i16[:ny*n], start, count); err != nil {
					return fmt.Errorf("writing %s rows %d-%d: %w", f.name, yb, yb+ny-1, err)
				}
				continue
			}
			if err := vars[k].WriteFloat32Slice(b, start, count); err != nil {
				return fmt.Errorf("writing %s rows %d-%d: %w", f.name, yb, yb+ny-1, err)
			}
		}
	}
	return nil
}

// pack gives round((x - add_offset)/scale_factor), clamped to the int16 range
// short of the fill value.
func pack(f field, x float64) int16 {
	p := math.Round((x - f.offset) / f.scale)
	return int16(math.Max(-32766, math.Min(32767, p)))
}

// gen evaluates the invented fields. Large-scale patterns are separable products
// of sines (precomputed per column and per row); the mesoscale is value noise on a
// lattice of cell columns; the low digits are white noise.
type gen struct {
	x0   int
	colS [6][]float64 // per column: cos(2 pi x / Lx_k + psi_k)
	rowS [6]float64   // per row (current): sin(2 pi y / Ly_k + phi_k)
}

// Wavelengths (columns) and phases of the large-scale patterns.
var (
	waveY = [6]float64{2300, 1700, 2900, 1300, 3100, 900}
	waveX = [6]float64{2700, 1900, 2100, 3300, 1500, 1100}
	phase = [6]float64{0.3, 1.1, 2.0, 0.7, 2.6, 1.9}
)

const cell = 48.0 // value-noise lattice spacing, columns

func newGen(x0, n int) *gen {
	g := &gen{x0: x0}
	for k := range g.colS {
		g.colS[k] = make([]float64, n)
		for j := range g.colS[k] {
			g.colS[k][j] = math.Cos(2*math.Pi*float64(x0+j)/waveX[k] + phase[k])
		}
	}
	return g
}

func (g *gen) row(y int) {
	for k := range g.rowS {
		g.rowS[k] = math.Sin(2*math.Pi*float64(y)/waveY[k] + 0.5*phase[k])
	}
}

// column fills v with lwp, lwp_std (g m-2), re (um), ctt (K), ctp (hPa) of column
// (y, local j) and reports whether the column is clear (no retrieval).
func (g *gen) column(y, j int, v *[5]float64) bool {
	x := g.x0 + j
	s := func(k int) float64 { return g.rowS[k] * g.colS[k][j] }
	m := valueNoise(float64(x)/cell, float64(y)/cell) // mesoscale, [0, 1)
	white := func(layer uint64) float64 { return unit(hash3(layer, int64(y), int64(x))) }
	// Clear sky: open patches of the deck plus 1.5 % scattered failed retrievals.
	if 0.55*m+0.45*(0.5+0.5*s(5)) < 0.27 || white(9) < 0.015 {
		return true
	}
	lwp := 95 * math.Exp(0.45*s(0)+0.9*(m-0.5)+0.12*(white(1)-0.5))
	v[0] = math.Round(lwp*100) / 100
	v[1] = math.Round(lwp*(0.38+0.12*s(4)+0.08*(white(2)-0.5))*100) / 100
	v[2] = math.Round((11.5+2.2*s(1)+2.5*(m-0.5)+0.4*(white(3)-0.5))*100) / 100
	v[3] = math.Round((287+2*s(2)-1.2*(m-0.5)+0.2*(white(4)-0.5))*100) / 100
	v[4] = math.Round((905+18*s(2)+12*s(3)+0.6*(white(5)-0.5))*10) / 10
	return false
}

func mix64(z uint64) uint64 { // SplitMix64 finaliser (Steele, Lea & Flood 2014)
	z += 0x9e3779b97f4a7c15
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9
	z = (z ^ (z >> 27)) * 0x94d049bb133111eb
	return z ^ (z >> 31)
}

func hash3(layer uint64, i, j int64) uint64 {
	return mix64(mix64(mix64(layer^0x5bd1e995)^uint64(i)) ^ uint64(j)*0x632be59bd9b4e019)
}

func unit(h uint64) float64 { return float64(h>>11) / (1 << 53) }

func valueNoise(x, y float64) float64 {
	x0, y0 := math.Floor(x), math.Floor(y)
	i, j := int64(x0), int64(y0)
	fx, fy := x-x0, y-y0
	fx, fy = fx*fx*(3-2*fx), fy*fy*(3-2*fy)
	v00 := unit(hash3(7, i, j))
	v10 := unit(hash3(7, i+1, j))
	v01 := unit(hash3(7, i, j+1))
	v11 := unit(hash3(7, i+1, j+1))
	return (v00*(1-fx)+v10*fx)*(1-fy) + (v01*(1-fx)+v11*fx)*fy
}
