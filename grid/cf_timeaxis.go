package grid

import (
	"fmt"
	"math"
	"regexp"
	"strconv"
	"strings"
	"time"
)

// TimeAxis is a time coordinate whose units were understood. CF units ("<unit>
// since <date>") are used as they are; two forms written by common tools are read
// too:
//
//   - CDO's and ICON's absolute time "day as %Y%m%d.%f": the value is the date
//     written as a number (20260701.25 is 2026-07-01 06:00), in the proleptic
//     Gregorian calendar (the CDO documentation of the absolute time axis). CDO
//     writes the fraction with 7 decimals (8.64 ms) of times it keeps in whole
//     seconds, so the time read is rounded to the nearest second.
//   - "<unit> since midnight" (also "decimal hours since midnight", "hours from
//     midnight UTC"), written by instruments that store one day per file: the
//     date is taken from the global attributes date, start_date, date_start,
//     measurement_date or time_coverage_start (YYYY-MM-DD, YYYYMMDD, YYYY/MM/DD,
//     or an ISO 8601 date and time of that day), or from the numeric global
//     attributes year, month and day.
//
// Anything else is an error that names the file, the variable and the expected
// units, so that a time axis which cannot be read stops process and inspect
// rather than a later summary.
type TimeAxis struct {
	Var   string
	Units string // as written in the file
	// CFUnits are CF units with the same meaning ("seconds since 1970-01-01
	// 00:00:00" for absolute time): equal to Units when those are CF already.
	CFUnits string
	// Absolute is true for "day as %Y%m%d.%f": the values themselves must be
	// converted (Seconds) to go with CFUnits.
	Absolute bool
	// Note says in words how non-CF units were read ("" for CF units).
	Note string
	// Calendar is the calendar attribute; Standard is false for calendars other
	// than standard, gregorian and proleptic_gregorian (noleap, 360_day, ...),
	// whose dates Seconds does not give (it converts as if Gregorian).
	Calendar string
	Standard bool
	conv     Converter // CFUnits -> seconds since 1970-01-01 00:00:00 UTC
}

// unixUnits are the units Seconds returns.
const unixUnits = "seconds since 1970-01-01 00:00:00"

// Seconds converts a stored value to seconds since 1970-01-01 00:00:00 UTC
// (NaN for a value that is not a date).
func (a *TimeAxis) Seconds(x float64) float64 {
	if a.Absolute {
		return absoluteDay(x)
	}
	return a.conv.Convert(x)
}

// CFValue converts a stored value to the value it has in CFUnits.
func (a *TimeAxis) CFValue(x float64) float64 {
	if a.Absolute {
		return absoluteDay(x)
	}
	return x
}

var (
	reAbsolute = regexp.MustCompile(`(?i)^\s*(\w+)\s+as\s+(%\S+)\s*$`)
	reMidnight = regexp.MustCompile(`(?i)^\s*(?:decimal\s+)?([a-z]+)\s+(?:since|from|after)\s+(?:00:00(?::00)?\s+)?midnight(?:\s+(?:utc|gmt|z))?\s*$`)
)

// LooksLikeTime reports whether units read as a time reference (CF "since", an
// absolute "as %Y..." form, or "since midnight").
func LooksLikeTime(units string) bool {
	u := strings.ToLower(units)
	return strings.Contains(u, " since ") || strings.Contains(u, " from midnight") || reAbsolute.MatchString(units)
}

// ParseTimeAxis reads the units of time coordinate v of file fi (see TimeAxis).
func ParseTimeAxis(fi *FileInfo, v *VarInfo) (*TimeAxis, error) {
	units := strings.TrimSpace(v.Text("units"))
	a := &TimeAxis{Var: v.Name, Units: units, CFUnits: units, Calendar: v.Text("calendar"), Standard: true}
	bad := func(format string, args ...any) error {
		return varErr(ErrUnits, fi.Path, v.Name, "time units %q: "+format, append([]any{units}, args...)...)
	}
	switch cal := strings.ToLower(v.Text("calendar")); cal {
	case "", "standard", "gregorian", "proleptic_gregorian":
	default:
		a.Standard = false
		if m := reAbsolute.FindStringSubmatch(units); m != nil {
			return nil, bad("absolute time in the %s calendar cannot be read; expected the standard or proleptic_gregorian calendar", cal)
		}
	}
	if m := reAbsolute.FindStringSubmatch(units); m != nil {
		unit, format := strings.ToLower(m[1]), m[2]
		if (unit != "day" && unit != "days") || (format != "%Y%m%d.%f" && format != "%Y%m%d") {
			return nil, bad("absolute time %q of %s is not read (only \"day as %%Y%%m%%d.%%f\"); expected CF units \"<unit> since <date>\": write a relative time axis with cdo -r copy IN OUT", format, unit)
		}
		a.Absolute, a.CFUnits = true, unixUnits
		a.Note = "the date written as a number (the absolute time axis of CDO and ICON), read as " + unixUnits
		return a, nil
	}
	if m := reMidnight.FindStringSubmatch(units); m != nil {
		date, from := midnightDate(fi)
		if date == "" {
			return nil, bad("the day is not stated: expected one of the global attributes date, start_date, date_start, measurement_date or time_coverage_start holding the date (YYYY-MM-DD), or year, month and day; or CF units such as \"%s since 2026-07-01 00:00:00\"", strings.ToLower(m[1]))
		}
		a.CFUnits = strings.ToLower(m[1]) + " since " + date + " 00:00:00"
		a.Note = fmt.Sprintf("%q read as %q (the day from the global attribute %s)", units, a.CFUnits, from)
	}
	c, err := NewConverter(a.CFUnits, unixUnits+" UTC")
	if err != nil {
		if units == "" {
			return nil, varErr(ErrUnits, fi.Path, v.Name, "is a time coordinate without units; expected CF units \"<unit> since <date>\"")
		}
		return nil, bad("expected CF units \"<unit> since <date>\", \"day as %%Y%%m%%d.%%f\" or \"<unit> since midnight\" with the date in a global attribute (%v)", err)
	}
	a.conv = c
	return a, nil
}

// midnightDate finds the day of a "since midnight" time axis in the global
// attributes; it returns the date as YYYY-MM-DD and the attribute it came from.
func midnightDate(fi *FileInfo) (date, from string) {
	for _, name := range []string{"date", "start_date", "date_start", "measurement_date", "time_coverage_start"} {
		for _, g := range fi.Globals {
			if !strings.EqualFold(g.Name, name) {
				continue
			}
			s, ok := g.Text()
			if !ok {
				if f := g.Float64s(); len(f) == 1 && f[0] >= 1e7 && f[0] < 1e8 {
					s = strconv.Itoa(int(f[0]))
				}
			}
			if d := parseDay(strings.TrimSpace(s)); d != "" {
				return d, g.Name
			}
		}
	}
	var ymd [3]int
	for i, name := range []string{"year", "month", "day"} {
		g, ok := fi.Global(name)
		if !ok {
			return "", ""
		}
		f := g.Float64s()
		if len(f) != 1 {
			s, _ := g.Text()
			x, err := strconv.Atoi(strings.TrimSpace(s))
			if err != nil {
				return "", ""
			}
			f = []float64{float64(x)}
		}
		ymd[i] = int(f[0])
	}
	d := fmt.Sprintf("%04d-%02d-%02d", ymd[0], ymd[1], ymd[2])
	if parseDay(d) == "" {
		return "", ""
	}
	return d, "year, month and day"
}

// parseDay reads a calendar day in the common written forms; "" when s is none.
func parseDay(s string) string {
	for _, layout := range []string{"2006-01-02", "20060102", "2006/01/02", "2006-01-02T15:04:05Z07:00", "2006-01-02T15:04:05Z", "2006-01-02T15:04:05", "2006-01-02 15:04:05"} {
		if t, err := time.Parse(layout, s); err == nil {
			return t.Format("2006-01-02")
		}
	}
	return ""
}

// absoluteDay converts a "day as %Y%m%d.%f" value to seconds since 1970 (NaN when
// the integer part is not a valid date).
func absoluteDay(x float64) float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) || x < 0 || x >= 1e9 {
		return math.NaN()
	}
	day := math.Floor(x)
	frac := x - day
	n := int(day)
	y, m, d := n/10000, (n/100)%100, n%100
	if m < 1 || m > 12 || d < 1 || d > 31 {
		return math.NaN()
	}
	t := time.Date(y, time.Month(m), d, 0, 0, 0, 0, time.UTC)
	if t.Day() != d { // 20260231 is not a date
		return math.NaN()
	}
	return float64(t.Unix()) + math.Round(frac*86400)
}

// CheckTimeValues returns an error naming the first stored value that is not a
// date of an absolute time axis (nil for relative axes).
func (a *TimeAxis) CheckTimeValues(file string, x []float64) error {
	if !a.Absolute {
		return nil
	}
	for i, e := range x {
		if math.IsNaN(absoluteDay(e)) {
			return varErr(ErrUnits, file, a.Var, "value %d (%v) is not a date in %q; expected YYYYMMDD.fraction-of-day", i, e, a.Units)
		}
	}
	return nil
}
