package grid

import (
	"fmt"
	"math"
	"regexp"
	"strconv"
	"strings"
	"time"
)

// CF calendars (CF conventions §4.4.1). CalendarKind returns one of these for a
// calendar attribute: the standard (mixed Gregorian/Julian, read as Gregorian for
// modern dates) and proleptic_gregorian calendars, julian, and the model
// calendars noleap (365_day), all_leap (366_day) and 360_day.
const (
	CalStandard  = "standard"
	CalProleptic = "proleptic_gregorian"
	CalJulian    = "julian"
	CalNoLeap    = "noleap"
	CalAllLeap   = "all_leap"
	Cal360       = "360_day"
)

// CalendarKind returns the canonical name of a CF calendar attribute ("" is the
// standard calendar), or an error for a calendar without dates (none) or an
// unknown name.
func CalendarKind(cal string) (string, error) {
	switch strings.ToLower(strings.TrimSpace(cal)) {
	case "", "standard", "gregorian":
		return CalStandard, nil
	case "proleptic_gregorian":
		return CalProleptic, nil
	case "julian":
		return CalJulian, nil
	case "noleap", "365_day":
		return CalNoLeap, nil
	case "all_leap", "366_day":
		return CalAllLeap, nil
	case "360_day":
		return Cal360, nil
	}
	return "", fmt.Errorf("calendar %q: expected one of standard, gregorian, proleptic_gregorian, julian, noleap, 365_day, all_leap, 366_day, 360_day", cal)
}

var (
	cumNoLeap  = [13]int{0, 31, 59, 90, 120, 151, 181, 212, 243, 273, 304, 334, 365}
	cumAllLeap = [13]int{0, 31, 60, 91, 121, 152, 182, 213, 244, 274, 305, 335, 366}
)

func jdnJulian(y, m, d int) int {
	a := (14 - m) / 12
	y2 := y + 4800 - a
	m2 := m + 12*a - 3
	return d + (153*m2+2)/5 + 365*y2 + floorDiv(y2, 4) - 32083
}

func floorDiv(a, b int) int {
	q := a / b
	if (a%b != 0) && ((a < 0) != (b < 0)) {
		q--
	}
	return q
}

// CalendarDays returns the days from 1970-01-01 to the date y-m-d in the calendar
// kind (CalendarKind), or an error for a date the calendar does not have.
func CalendarDays(kind string, y, m, d int) (int, error) {
	if m < 1 || m > 12 || d < 1 {
		return 0, fmt.Errorf("date %04d-%02d-%02d: no such date", y, m, d)
	}
	switch kind {
	case Cal360:
		if d > 30 {
			return 0, fmt.Errorf("date %04d-%02d-%02d: the 360_day calendar has 30 days a month", y, m, d)
		}
		return (y-1970)*360 + (m-1)*30 + d - 1, nil
	case CalNoLeap, CalAllLeap:
		cum := cumNoLeap
		if kind == CalAllLeap {
			cum = cumAllLeap
		}
		if d > cum[m]-cum[m-1] {
			return 0, fmt.Errorf("date %04d-%02d-%02d: no such day in the %s calendar", y, m, d, kind)
		}
		return (y-1970)*cum[12] + cum[m-1] + d - 1, nil
	case CalJulian:
		return jdnJulian(y, m, d) - jdnJulian(1970, 1, 1), nil
	default:
		t := time.Date(y, time.Month(m), d, 0, 0, 0, 0, time.UTC)
		if t.Day() != d {
			return 0, fmt.Errorf("date %04d-%02d-%02d: no such date", y, m, d)
		}
		return int(math.Floor(float64(t.Unix()) / 86400)), nil
	}
}

// CalendarDate returns the date of the day n days after 1970-01-01 in the calendar
// kind (the inverse of CalendarDays).
func CalendarDate(kind string, n int) (y, m, d int) {
	switch kind {
	case Cal360:
		y = 1970 + floorDiv(n, 360)
		r := n - (y-1970)*360
		return y, r/30 + 1, r%30 + 1
	case CalNoLeap, CalAllLeap:
		cum := cumNoLeap
		if kind == CalAllLeap {
			cum = cumAllLeap
		}
		y = 1970 + floorDiv(n, cum[12])
		r := n - (y-1970)*cum[12]
		m = 1
		for r >= cum[m] {
			m++
		}
		return y, m, r - cum[m-1] + 1
	case CalJulian:
		c := n + jdnJulian(1970, 1, 1) + 32082
		d4 := floorDiv(4*c+3, 1461)
		e := c - floorDiv(1461*d4, 4)
		m5 := (5*e + 2) / 153
		return d4 - 4800 + m5/10, m5 + 3 - 12*(m5/10), e - (153*m5+2)/5 + 1
	default:
		t := time.Unix(int64(n)*86400, 0).UTC()
		return t.Year(), int(t.Month()), t.Day()
	}
}

// CalendarSecondsOf returns the time of the date and clock of t (read as a label,
// in UTC) in seconds since 1970-01-01 00:00:00 of the calendar kind.
func CalendarSecondsOf(kind string, t time.Time) (float64, error) {
	t = t.UTC()
	days, err := CalendarDays(kind, t.Year(), int(t.Month()), t.Day())
	if err != nil {
		return 0, err
	}
	clock := float64(t.Hour()*3600+t.Minute()*60+t.Second()) + float64(t.Nanosecond())*1e-9
	return float64(days)*86400 + clock, nil
}

// CalendarText writes seconds since 1970-01-01 00:00:00 of the calendar kind as
// YYYY-MM-DDThh:mm:ssZ (to the second).
func CalendarText(kind string, s float64) string {
	sec := int(math.Floor(s + 0.5))
	days := floorDiv(sec, 86400)
	r := sec - days*86400
	y, m, d := CalendarDate(kind, days)
	return fmt.Sprintf("%04d-%02d-%02dT%02d:%02d:%02dZ", y, m, d, r/3600, r/60%60, r%60)
}

var reSince = regexp.MustCompile(`(?i)\bsince\s+(-?\d{1,4})-(\d{1,2})-(\d{1,2})(?:[T\s]+(\d{1,2}):(\d{1,2})(?::(\d{1,2}(?:\.\d*)?))?)?`)

// CalendarSeconds converts a stored value to seconds since 1970-01-01 00:00:00 in
// the axis' own calendar (equal to Seconds for the standard and
// proleptic_gregorian calendars). For the others (julian, noleap, all_leap,
// 360_day) the offset from the reference date is calendar-free (CF: the units
// measure elapsed time), and the reference date is counted in the calendar.
func (a *TimeAxis) CalendarSeconds(x float64) (float64, error) {
	kind, err := CalendarKind(a.Calendar)
	if err != nil {
		return math.NaN(), err
	}
	if kind == CalStandard || kind == CalProleptic {
		return a.Seconds(x), nil
	}
	m := reSince.FindStringSubmatch(a.CFUnits)
	if m == nil {
		return math.NaN(), fmt.Errorf("time units %q: expected \"<unit> since YYYY-MM-DD[ hh:mm:ss]\" for the %s calendar", a.Units, kind)
	}
	num := func(s string) int { v, _ := strconv.Atoi(s); return v }
	days, err := CalendarDays(kind, num(m[1]), num(m[2]), num(m[3]))
	if err != nil {
		return math.NaN(), fmt.Errorf("time units %q: %v", a.Units, err)
	}
	sec, _ := strconv.ParseFloat("0"+m[6], 64)
	ref := float64(days)*86400 + float64(num(m[4])*3600+num(m[5])*60) + sec
	return a.Seconds(x) - a.Seconds(0) + ref, nil
}
