package grid

import (
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// TestCalendarRoundTrip: CalendarDate inverts CalendarDays for every day of 1960..2060
// in every calendar; the known lengths of the years hold (CF conventions §4.4.1).
func TestCalendarRoundTrip(t *testing.T) {
	for _, k := range []string{CalStandard, CalJulian, CalNoLeap, CalAllLeap, Cal360} {
		for n := -3653; n < 33000; n++ {
			y, m, d := CalendarDate(k, n)
			back, err := CalendarDays(k, y, m, d)
			if err != nil || back != n {
				t.Fatalf("%s: day %d -> %04d-%02d-%02d -> %d (%v)", k, n, y, m, d, back, err)
			}
		}
	}
	for _, c := range []struct {
		kind string
		days int
	}{{CalNoLeap, 365}, {CalAllLeap, 366}, {Cal360, 360}, {CalJulian, 366}, {CalStandard, 366}} {
		a, _ := CalendarDays(c.kind, 2024, 1, 1)
		b, _ := CalendarDays(c.kind, 2025, 1, 1)
		if b-a != c.days {
			t.Errorf("%s: 2024 has %d days, want %d", c.kind, b-a, c.days)
		}
	}
	// The Julian date 1970-01-01 is the Gregorian 1970-01-14 (13 days apart in the
	// 20th and 21st centuries; common practice).
	if d, _ := CalendarDays(CalStandard, 1970, 1, 14); d != 13 {
		t.Errorf("Gregorian 1970-01-14 is day %d", d)
	}
	if _, err := CalendarDays(Cal360, 2026, 1, 31); err == nil {
		t.Error("360_day accepted January 31")
	}
	if _, err := CalendarKind("none"); err == nil {
		t.Error("calendar none accepted")
	}
}

// TestCalendarSecondsAgainstCDO writes time axes in the model calendars with ncgen and
// compares our dates with those CDO prints (cdo showtimestamp).
func TestCalendarSecondsAgainstCDO(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	if _, err := exec.LookPath("cdo"); err != nil {
		t.Skip("cdo not installed")
	}
	for _, cal := range []string{"noleap", "360_day", "all_leap", "julian"} {
		dir := t.TempDir()
		cdl := `netcdf t { dimensions: time = 4 ; x = 1 ;
variables: double time(time) ; time:units = "days since 1999-12-25 06:00:00" ; time:calendar = "` + cal + `" ; time:standard_name = "time" ;
float v(time, x) ;
data: time = 0, 10.5, 66, 800 ; v = 1, 2, 3, 4 ; }`
		src := filepath.Join(dir, "t.cdl")
		nc := filepath.Join(dir, "t.nc")
		os.WriteFile(src, []byte(cdl), 0o644)
		if b, err := exec.Command("ncgen", "-o", nc, src).CombinedOutput(); err != nil {
			t.Fatalf("ncgen: %v %s", err, b)
		}
		out, err := exec.Command("cdo", "-s", "showtimestamp", nc).Output()
		if err != nil {
			t.Skipf("cdo: %v", err)
		}
		want := strings.Fields(string(out))
		r, err := OpenReader(nc)
		if err != nil {
			t.Fatal(err)
		}
		fi := r.Info()
		ta, err := ParseTimeAxis(fi, fi.Var("time"))
		if err != nil {
			t.Fatal(err)
		}
		vals, _, _ := r.Read("time", nil, nil)
		r.Close()
		kind, _ := CalendarKind(cal)
		for i, v := range vals {
			s, err := ta.CalendarSeconds(v)
			if err != nil {
				t.Fatal(err)
			}
			got := strings.TrimSuffix(CalendarText(kind, s), "Z")
			if i >= len(want) || got != want[i] {
				t.Errorf("%s: value %g: %s, cdo %v", cal, v, got, want)
			}
		}
		// a label maps back to the same seconds
		s0, _ := ta.CalendarSeconds(vals[0])
		lab, _ := CalendarSecondsOf(kind, time.Date(1999, 12, 25, 6, 0, 0, 0, time.UTC))
		if s0 != lab {
			t.Errorf("%s: reference %v s, label %v s", cal, s0, lab)
		}
	}
}
