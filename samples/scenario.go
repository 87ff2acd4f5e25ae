package samples

import (
	"errors"
	"fmt"
	"math"
	"time"
)

// RegionKind names the part of the scenario a grid point belongs to.
type RegionKind int

// The regions of the scenario, in the order Region tests them (the first that
// matches wins).
const (
	RegionOutside      RegionKind = iota // outside the grid box
	RegionClear                          // clear-sky corner: no cloud retrieved
	RegionThinCloud                      // thin-cloud fringe of the clear corner (low τ and LWP)
	RegionColdCloud                      // cold, high (ice-topped) cloud patch
	RegionOpenCells                      // drizzling pocket of open cells, low N_d
	RegionPollutedLine                   // narrow straight polluted line (ship-track-like), high N_d
	RegionDeck                           // closed-cell stratocumulus deck
)

var regionNames = [...]string{"outside", "clear", "thin_cloud", "cold_cloud", "open_cells", "polluted_line", "deck"}

func (k RegionKind) String() string {
	if k < 0 || int(k) >= len(regionNames) {
		return fmt.Sprintf("RegionKind(%d)", int(k))
	}
	return regionNames[k]
}

// Config sets the grid and the seed of the scenario. Geometry of the
// features is fixed by the package (see Region); the defaults give the
// committed sample.
type Config struct {
	Seed    uint64    // texture seed
	NLat    int       // rows, north to south
	NLon    int       // columns, west to east
	NTime   int       // daily time steps
	North   float64   // northern edge of the first row, degrees_north
	West    float64   // western edge of the first column, degrees_east
	Res     float64   // cell size, degrees
	Start   time.Time // UTC start of the first day
	Created time.Time // fixed creation time written to history and date_created (keeps the bytes reproducible)
	Deflate int       // deflate level 1-9
	Name    string    // short scenario name for the title
	// NoUncertainty leaves out the retrieval uncertainties (lwp_standard_error,
	// re_uncertainty, cot_uncertainty), as in a product without them.
	NoUncertainty bool
}

// DefaultConfig returns the configuration of the committed sample
// samples/data/stratocumulus_demo.nc: 100 × 100 cells of 0.1° over
// 15°S–25°S, 85°W–75°W, three days from 2026-09-21.
func DefaultConfig() Config {
	return Config{
		Seed:    20260921,
		NLat:    100,
		NLon:    100,
		NTime:   3,
		North:   -15,
		West:    -85,
		Res:     0.1,
		Start:   time.Date(2026, 9, 21, 0, 0, 0, 0, time.UTC),
		Created: time.Date(2026, 12, 1, 0, 0, 0, 0, time.UTC),
		Deflate: 4,
		Name:    "stratocumulus_demo",
	}
}

func (c Config) validate() error {
	switch {
	case c.NLat < 2 || c.NLon < 2 || c.NTime < 1:
		return fmt.Errorf("samples: grid %d×%d×%d too small", c.NTime, c.NLat, c.NLon)
	case !(c.Res > 0) || c.Res > 5:
		return fmt.Errorf("samples: resolution %g degrees out of range", c.Res)
	case c.North > 90 || c.North-float64(c.NLat)*c.Res < -90:
		return errors.New("samples: latitude out of range")
	case c.Deflate < 1 || c.Deflate > 9:
		return fmt.Errorf("samples: deflate level %d not in 1-9", c.Deflate)
	case c.Name == "":
		return errors.New("samples: empty scenario name")
	}
	return nil
}

// Lat returns the centre latitude of row i (descending with i).
func (c Config) Lat(i int) float64 { return c.North - (float64(i)+0.5)*c.Res }

// Lon returns the centre longitude of column j.
func (c Config) Lon(j int) float64 { return c.West + (float64(j)+0.5)*c.Res }

// drift is the motion of the pocket and the polluted line per day (degrees
// north, degrees east): the features move north-west with the trade winds.
const driftLat, driftLon = 0.3, -0.5

// pocket geometry at day t: centre and semi-axes (degrees).
func pocket(t int) (clat, clon, alat, alon float64) {
	ft := float64(t)
	return -21.5 + driftLat*ft, -79.5 + driftLon*ft, 1.5 + 0.15*ft, 1.9 + 0.2*ft
}

// polluted line at day t: a segment from (lat0, lon0) to (lat1, lon1).
func line(t int) (lat0, lon0, lat1, lon1 float64) {
	ft := float64(t)
	return -16.0 + driftLat*ft, -84.0 + driftLon*ft, -18.5 + driftLat*ft, -76.5 + driftLon*ft
}

// LineHalfWidthKm is the half width of the polluted line.
const LineHalfWidthKm = 9.0

const kmPerDegree = 111.2 // mean length of one degree of latitude, km (common practice)

// lineDistanceKm returns the distance from (lat, lon) to the polluted line of
// day t in km (local flat-earth scaling), and whether the foot of the
// perpendicular falls within the segment.
func lineDistanceKm(lat, lon float64, t int) (float64, bool) {
	lat0, lon0, lat1, lon1 := line(t)
	cl := math.Cos(lat * math.Pi / 180)
	ax, ay := (lon1-lon0)*cl, lat1-lat0
	px, py := (lon-lon0)*cl, lat-lat0
	s := (px*ax + py*ay) / (ax*ax + ay*ay)
	dx, dy := px-s*ax, py-s*ay
	return math.Hypot(dx, dy) * kmPerDegree, s >= 0 && s <= 1
}

// clearEdge returns how far (degrees, positive inside) the point lies within
// the clear-sky corner in the north-east of the box.
func clearEdge(lat, lon float64) float64 {
	inLat := lat - (-16.6 + 0.15*math.Sin(4*lon))
	inLon := lon - (-78.5 + 0.2*math.Cos(5*lat))
	return math.Min(inLat, inLon)
}

// thinFringe is the width of the thin-cloud fringe around the clear corner, degrees.
const thinFringe = 0.25

// Region returns the part of the scenario that holds (lat, lon) on day t
// (0-based). It is the truth the end-to-end tests compare the diagnostics
// with: the pocket of open cells and the polluted line move north-west by
// 0.3° and 0.5° per day; the pocket also grows.
func (c Config) Region(lat, lon float64, t int) RegionKind {
	south := c.North - float64(c.NLat)*c.Res
	east := c.West + float64(c.NLon)*c.Res
	if lat > c.North || lat < south || lon < c.West || lon > east || t < 0 || t >= c.NTime {
		return RegionOutside
	}
	e := clearEdge(lat, lon)
	switch {
	case e > 0:
		return RegionClear
	case e > -thinFringe:
		return RegionThinCloud
	case lat < -24.0+0.1*math.Sin(3*lon) && lon > -76.6:
		return RegionColdCloud
	}
	clat, clon, alat, alon := pocket(t)
	dy, dx := (lat-clat)/alat, (lon-clon)/alon
	if math.Hypot(dx, dy) < 1+0.08*math.Sin(3*math.Atan2(dy, dx)+float64(t)) {
		return RegionOpenCells
	}
	if d, on := lineDistanceKm(lat, lon, t); on && d <= LineHalfWidthKm {
		return RegionPollutedLine
	}
	return RegionDeck
}

// RegionAt returns the region of grid cell (row i, column j) on day t: the
// same as Region(c.Lat(i), c.Lon(j), t).
func (c Config) RegionAt(t, i, j int) RegionKind { return c.Region(c.Lat(i), c.Lon(j), t) }

// Fields holds the scenario in memory, in the file's units, NaN for missing.
// Each field has NTime*NLat*NLon values, index (t*NLat+i)*NLon+j.
type Fields struct {
	Cfg      Config
	Lat, Lon []float64 // cell centres, degrees (Lat descending)
	Time     []float64 // centre of each day, seconds since 1970-01-01
	LWP      []float64 // liquid water path, g m-2
	LWPStd   []float64 // sub-grid standard deviation of LWP, g m-2
	Re       []float64 // cloud-top effective radius, um
	Tau      []float64 // cloud optical thickness, 1
	CTT      []float64 // cloud-top temperature, K
	CTP      []float64 // cloud-top pressure, hPa
	CTH      []float64 // cloud-top height above the surface, m
	CF       []float64 // cloud fraction, 1
	// Retrieval uncertainties (invented, of a realistic size; README "Uncertainty"):
	// LWPErr is the LWP's standard error (g m-2, absolute, independent of r_e as a
	// microwave LWP's would be), ReErr and TauErr the relative standard errors of r_e and
	// tau in percent (the MODIS products' convention).
	LWPErr, ReErr, TauErr []float64
	Region                []RegionKind
}

// Physical constants of the generator.
const (
	rhoW       = 1000.0 // density of liquid water, kg m-3 (common practice)
	scaleH     = 8400.0 // pressure scale height for the cloud-top pressure, m (from memory)
	pSurf      = 1015.0 // surface pressure, hPa (invented)
	lapseCloud = 0.0075 // temperature lapse from surface air to cloud top, K m-1 (invented, between moist and dry adiabatic)
)

// noise layers (arbitrary distinct numbers)
const (
	layDeckCells uint64 = iota + 1
	layDeckLWP
	layDeckRe
	layCF
	layStd
	layFail
	layOpenCells
	layOpenLWP
	layOpenRe
	layOpenCF
	layLine
	layThin
	layCold
	layCTH
	layUnc
)

// round rounds x to a multiple of q.
func round(x, q float64) float64 { return math.Round(x/q) * q }

func clamp(x, lo, hi float64) float64 { return math.Max(lo, math.Min(hi, x)) }

// Fields computes the scenario.
func (c Config) Fields() (*Fields, error) {
	if err := c.validate(); err != nil {
		return nil, err
	}
	n := c.NTime * c.NLat * c.NLon
	f := &Fields{Cfg: c, Lat: make([]float64, c.NLat), Lon: make([]float64, c.NLon), Time: make([]float64, c.NTime)}
	for _, p := range []*[]float64{&f.LWP, &f.LWPStd, &f.Re, &f.Tau, &f.CTT, &f.CTP, &f.CTH, &f.CF, &f.LWPErr, &f.ReErr, &f.TauErr} {
		*p = make([]float64, n)
	}
	f.Region = make([]RegionKind, n)
	for i := range f.Lat {
		f.Lat[i] = c.Lat(i)
	}
	for j := range f.Lon {
		f.Lon[j] = c.Lon(j)
	}
	for t := range f.Time {
		f.Time[t] = float64(c.Start.Unix() + int64(t)*86400 + 43200)
	}
	for t := 0; t < c.NTime; t++ {
		for i := 0; i < c.NLat; i++ {
			for j := 0; j < c.NLon; j++ {
				c.cell(f, t, i, j)
			}
		}
	}
	return f, nil
}

// cell fills one grid cell.
func (c Config) cell(f *Fields, t, i, j int) {
	k := (t*c.NLat+i)*c.NLon + j
	lat, lon := f.Lat[i], f.Lon[j]
	reg := c.Region(lat, lon, t)
	f.Region[k] = reg
	s := c.Seed + uint64(t)*1_000_003 // each day gets its own texture
	w := func(layer uint64) float64 { return white(s, layer, i, j) }
	sm := func(layer uint64, scale float64) float64 { return fbm(s, layer, lon/scale, lat/scale) }

	nan := math.NaN()
	var lwp, re, cf, stdRel, cth float64
	// Boundary layer deepens to the west (common practice for subtropical
	// eastern ocean basins); the numbers are invented.
	cth = 1000 + 50*(-75-lon) + 200*(sm(layCTH, 0.7)-0.5)
	switch reg {
	case RegionClear:
		lwp, re, cf = nan, nan, 0.03*w(layCF)
	case RegionThinCloud:
		lwp = 5 + 10*w(layThin)
		re = 8 + 2*w(layDeckRe)
		cf = 0.25 + 0.3*w(layCF)
		stdRel = 0.5
		cth -= 150
	case RegionColdCloud:
		// A high, ice-topped cloud with liquid-looking retrieved values:
		// only the cold cloud top tells the screening that it is not warm.
		lwp = 100 + 100*sm(layCold, 0.5)
		re = 20 + 8*w(layCold)
		cf = 0.95 + 0.05*w(layCF)
		stdRel = 0.4
		cth = 6500 + 2500*sm(layCTH, 0.5)
	case RegionOpenCells:
		// Open cells ~50 km across: cloudy walls between clear centres.
		f1, f2 := worley(s, layOpenCells, lon/0.5, lat/0.5)
		wall := f2 - f1
		if wall < 0.28 {
			g := 1 - wall/0.28 // 1 on the wall crest
			lwp = 60 + 180*g*(0.6+0.4*sm(layOpenLWP, 0.3))
			// larger drops with more water keep the implied N_d low (20-40 cm-3)
			re = 16 + 5*(lwp-60)/180 + 0.7*(2*w(layOpenRe)-1)
			re = clamp(re, 15, 22)
			cf = 0.45 + 0.35*g + 0.1*w(layOpenCF)
			stdRel = 0.55 + 0.25*w(layStd)
			cth += 80
		} else {
			lwp, re, cf = nan, nan, 0.05+0.15*w(layOpenCF)
		}
	default: // deck and polluted line
		// Closed cells ~25 km across: thicker centres, thinner rims.
		f1, _ := worley(s, layDeckCells, lon/0.22, lat/0.22)
		// A remote deck on the edge of drizzling: r_e close to the onset
		// radius of 12-15 µm and a broad sub-grid LWP spread.
		lwp = 78 + 60*clamp(1-f1/0.8, 0, 1) + 16*(sm(layDeckLWP, 0.4)-0.5)
		lwp = clamp(lwp, 72, 146)
		re = 12.8 + 1.0*(2*sm(layDeckRe, 0.5)-1) + 0.4*(2*w(layDeckRe)-1)
		re = clamp(re, 11.5, 14.2)
		cf = 0.92 + 0.08*w(layCF)
		stdRel = 0.28 + 0.1*w(layStd)
		if reg == RegionPollutedLine {
			lwp = clamp(lwp+4, 72, 150)
			re = 7.4 + 0.5*(2*w(layLine)-1)
			cf = 0.97 + 0.03*w(layCF)
		}
		// scattered failed retrievals (about 0.4 % of the cells)
		if w(layFail) < 0.004 {
			lwp, re = nan, nan
		}
	}

	cloudy := !math.IsNaN(lwp)
	f.CF[k] = round(clamp(cf, 0, 1), 0.001)
	if !cloudy {
		f.LWP[k], f.LWPStd[k], f.Re[k], f.Tau[k] = nan, nan, nan, nan
		f.LWPErr[k], f.ReErr[k], f.TauErr[k] = nan, nan, nan
		if cf < 0.25 {
			f.CTT[k], f.CTP[k], f.CTH[k] = nan, nan, nan
			return
		}
	} else {
		f.LWP[k] = round(lwp, 0.1)
		f.Re[k] = round(re, 0.01)
		f.LWPStd[k] = round(stdRel*f.LWP[k], 0.1)
		// Optical thickness from LWP and r_e for a vertically uniform cloud:
		//   LWP = (5/9) ρ_w τ r_e   =>   τ = 9 LWP / (5 ρ_w r_e)
		// (the adiabatic-profile relation; with LWP in kg m-2 and r_e in m).
		// Computed from the rounded stored values so the file keeps it.
		f.Tau[k] = round(9*f.LWP[k]*1e-3/(5*rhoW*f.Re[k]*1e-6), 0.01)
		// Uncertainties (invented, of the size quoted for passive retrievals, from memory):
		// r_e 7 % plus more for optically thin and broken cloud, tau 4 % plus more when thin,
		// LWP 10 g m-2 plus 5 %; a little pixel noise.
		u := 0.9 + 0.2*w(layUnc)
		f.ReErr[k] = round(u*(7+25/f.Tau[k]+8*(1-cf)), 0.1)
		f.TauErr[k] = round(u*(4+20/f.Tau[k]), 0.1)
		f.LWPErr[k] = round(u*(10+0.05*f.LWP[k]), 0.1)
	}
	// surface air temperature: warmer to the north and west (invented)
	tSurf := 291 + 0.35*(lat+20) + 0.1*(-75-lon)
	f.CTH[k] = round(cth, 1)
	f.CTT[k] = round(tSurf-lapseCloud*f.CTH[k], 0.01)
	f.CTP[k] = round(pSurf*math.Exp(-f.CTH[k]/scaleH), 0.1)
}
