package summary

import (
	"errors"
	"fmt"
	"math"
	"time"
)

// ErrShape is wrapped by every error about inconsistent lengths of coordinates and fields.
var ErrShape = errors.New("summary: shape mismatch")

// ErrGrid is wrapped when a time-mean map is fed scenes on different grids.
var ErrGrid = errors.New("summary: grid changed between scenes")

// Field is one variable of a scene in SI units; NaN is missing.
// Data are row-major over (time, y, x): index (t*NY+y)*NX+x, length NT*NY*NX.
type Field struct {
	Name, Units, LongName string
	Data                  []float64
}

// Scene is the grid and time axis shared by the fields of one processed file (or slab).
//
// Lat and Lon are in degrees (north, east). They are either 1-D (len(Lat) == NY,
// len(Lon) == NX, a rectilinear grid) or 2-D (len(Lat) == len(Lon) == NY*NX, row-major,
// for swaths). Time is in seconds since 1970-01-01T00:00:00Z with len(Time) == NT; it may
// be nil (steps without times: a scene without a time axis, or one in a calendar whose
// dates are not Gregorian, which no time window can select).
// Lat and Lon may both be nil: columns without coordinates (a mesh or a site list
// without latitude and longitude, or a time series), which the statistics use and no
// Region can select; such scenes have no maps.
//
// A list of cells (a mesh or sites) is a scene with NY = 1 and NX cells, whose per-cell
// coordinates are 2-D in this sense (len(Lat) == NX); a time series at one site has
// NY = NX = 1 and NT steps.
//
// Key identifies the scene for the bootstrap's tile weights (doc/science.md#summary-uncertainty):
// a tile's weights follow from (Options.Seed, Key, time step, tile position), so scenes
// given distinct keys may arrive in any order, and in separate accumulators that are
// merged later, with the same result. 0 = the number of the Add call.
type Scene struct {
	Lat, Lon   []float64
	Time       []float64
	NY, NX, NT int
	Key        uint64
}

// Cells returns NY*NX, the number of columns in one time step.
func (s Scene) Cells() int { return s.NY * s.NX }

// HasCoords reports whether the scene has latitude and longitude.
func (s Scene) HasCoords() bool { return s.Lat != nil || s.Lon != nil }

// TwoD reports whether the coordinates are 2-D (swath) coordinates.
func (s Scene) TwoD() bool {
	n := s.NY * s.NX
	oneD := len(s.Lat) == s.NY && len(s.Lon) == s.NX
	return !oneD && len(s.Lat) == n && len(s.Lon) == n
}

// LatLon returns the coordinates of cell (y, x).
func (s Scene) LatLon(y, x int) (lat, lon float64) {
	if s.TwoD() {
		k := y*s.NX + x
		return s.Lat[k], s.Lon[k]
	}
	return s.Lat[y], s.Lon[x]
}

// Check returns an error wrapping ErrShape if the coordinate lengths do not match NY,
// NX and NT.
func (s Scene) Check() error {
	if s.NY < 1 || s.NX < 1 || s.NT < 1 {
		return fmt.Errorf("%w: scene has NY=%d NX=%d NT=%d, want all >= 1", ErrShape, s.NY, s.NX, s.NT)
	}
	n := s.NY * s.NX
	oneD := len(s.Lat) == s.NY && len(s.Lon) == s.NX
	twoD := len(s.Lat) == n && len(s.Lon) == n
	if !oneD && !twoD && s.HasCoords() {
		return fmt.Errorf("%w: lat has %d and lon %d values, want (NY=%d, NX=%d) for 1-D or %d each for 2-D coordinates",
			ErrShape, len(s.Lat), len(s.Lon), s.NY, s.NX, n)
	}
	if s.Time != nil && len(s.Time) != s.NT {
		return fmt.Errorf("%w: time has %d values, want NT=%d", ErrShape, len(s.Time), s.NT)
	}
	return nil
}

// checkField returns an error naming the field if its length does not fit the scene.
// An empty field is allowed only when optional is true.
func (s Scene) checkField(f Field, role string, optional bool) error {
	if len(f.Data) == 0 && optional {
		return nil
	}
	if want := s.NT * s.NY * s.NX; len(f.Data) != want {
		name := f.Name
		if name == "" {
			name = "(unnamed)"
		}
		return fmt.Errorf("%w: %s field %s has %d values, want NT*NY*NX = %d*%d*%d = %d",
			ErrShape, role, name, len(f.Data), s.NT, s.NY, s.NX, want)
	}
	return nil
}

// Region is a latitude/longitude box in degrees, edges included. See the package
// documentation for the longitude conventions. A nil *Region selects everything.
type Region struct {
	LatMin, LatMax, LonMin, LonMax float64
}

// Check returns an error when the box is not usable (NaN edges, LatMin > LatMax).
func (r *Region) Check() error {
	if r == nil {
		return nil
	}
	for _, v := range []float64{r.LatMin, r.LatMax, r.LonMin, r.LonMax} {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("region %g,%g,%g,%g: every edge must be a finite number of degrees", r.LatMin, r.LatMax, r.LonMin, r.LonMax)
		}
	}
	if r.LatMin > r.LatMax {
		return fmt.Errorf("region latitudes %g..%g: the first (southern) latitude must not exceed the second (northern)", r.LatMin, r.LatMax)
	}
	return nil
}

// wrap360 reduces a longitude to [0, 360).
func wrap360(lon float64) float64 {
	l := math.Mod(lon, 360)
	if l < 0 {
		l += 360
	}
	if l >= 360 { // -1e-17 + 360 rounds to 360
		l = 0
	}
	return l
}

// Contains reports whether (lat, lon) lies in the box. A nil region contains every
// point with finite coordinates.
func (r *Region) Contains(lat, lon float64) bool {
	if math.IsNaN(lat) || math.IsNaN(lon) {
		return false
	}
	if r == nil {
		return true
	}
	if lat < r.LatMin || lat > r.LatMax {
		return false
	}
	if r.LonMax-r.LonMin >= 360 {
		return true
	}
	lo, hi, l := wrap360(r.LonMin), wrap360(r.LonMax), wrap360(lon)
	if lo <= hi {
		return l >= lo && l <= hi
	}
	return l >= lo || l <= hi // crosses the 0/360 line of the reduced longitudes
}

// Window is the half-open time interval [Start, End); a zero Start or End is unbounded.
type Window struct {
	Start, End time.Time
	// Text, when set, is what String returns (the window as the user wrote it, for
	// example in a model calendar's dates).
	Text string
}

// String returns the window as "START to END (end excluded)" in RFC 3339 UTC, with
// "open" for an unbounded side.
func (w Window) String() string {
	if w.Text != "" {
		return w.Text
	}
	f := func(t time.Time) string {
		if t.IsZero() {
			return "open"
		}
		return t.UTC().Format("2006-01-02T15:04:05Z")
	}
	return f(w.Start) + " to " + f(w.End) + " (end excluded)"
}

// IsZero reports whether the window selects every time.
func (w Window) IsZero() bool { return w.Start.IsZero() && w.End.IsZero() }

// Contains reports whether t (seconds since 1970-01-01T00:00:00Z) lies in the window.
func (w Window) Contains(t float64) bool {
	if w.IsZero() {
		return true
	}
	if math.IsNaN(t) {
		return false
	}
	if !w.Start.IsZero() && t < unixSeconds(w.Start) {
		return false
	}
	if !w.End.IsZero() && t >= unixSeconds(w.End) {
		return false
	}
	return true
}

func unixSeconds(t time.Time) float64 {
	return float64(t.Unix()) + float64(t.Nanosecond())*1e-9
}

// timeSelected reports whether time step k of s is in w; a scene without a time axis is
// selected only by the unbounded window.
func timeSelected(s Scene, w Window, k int) bool {
	if w.IsZero() {
		return true
	}
	if s.Time == nil {
		return false
	}
	return w.Contains(s.Time[k])
}

// Columns are the per-column inputs of the statistics, all on the same Scene.
// LWP, Nd and POP are required; Rate and SurfaceRate may be left empty (no Data), in
// which case the statistics that need them are NaN. QC, when not nil, has NT*NY*NX
// entries; a column with QC & Options.QCMask != 0 is excluded.
type Columns struct {
	LWP         Field // liquid water path, kg m-2
	Nd          Field // droplet number concentration, m-3
	POP         Field // drizzle probability, 1
	Rate        Field // cloud-base drizzle rate, kg m-2 s-1
	SurfaceRate Field // surface drizzle rate, kg m-2 s-1 (same units as Rate; 0 = all evaporated)
	BaseHeight  Field // cloud-base height above the surface, m (optional: the fraction by base height)
	// POPError and RateError are the per-column retrieval standard errors of POP (1) and
	// of the rate (kg m-2 s-1), the processed files' <name>_standard_error (optional);
	// the bins report their means.
	POPError, RateError Field
	QC                  []uint16
}

func (c *Columns) check(s Scene) error {
	if err := s.Check(); err != nil {
		return err
	}
	for _, r := range []struct {
		f        Field
		role     string
		optional bool
	}{
		{c.LWP, "LWP", false}, {c.Nd, "N_d", false}, {c.POP, "POP", false},
		{c.Rate, "drizzle rate", true}, {c.SurfaceRate, "surface drizzle rate", true}, {c.BaseHeight, "cloud-base height", true},
		{c.POPError, "POP standard error", true}, {c.RateError, "drizzle rate standard error", true},
	} {
		if err := s.checkField(r.f, r.role, r.optional); err != nil {
			return err
		}
	}
	if c.QC != nil && len(c.QC) != s.NT*s.NY*s.NX {
		return fmt.Errorf("%w: QC has %d values, want NT*NY*NX = %d", ErrShape, len(c.QC), s.NT*s.NY*s.NX)
	}
	return nil
}
