package app

import (
	"os"
	"path/filepath"
	"reflect"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/warmrain/warmrain/cmd/internal/summary"
	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/microphys"
)

// goFieldNames collects the CamelCase field names of the option and parameter structs a
// message could leak (microphys.Params and what it holds, grid's open and write options,
// the summary options): words a user never typed.
func goFieldNames() map[string]bool {
	names := map[string]bool{}
	camel := regexp.MustCompile(`^[A-Z][a-z0-9]*[A-Z]`)
	var walk func(t reflect.Type)
	walk = func(t reflect.Type) {
		for t.Kind() == reflect.Pointer || t.Kind() == reflect.Slice {
			t = t.Elem()
		}
		if t.Kind() != reflect.Struct {
			return
		}
		for i := 0; i < t.NumField(); i++ {
			f := t.Field(i)
			if camel.MatchString(f.Name) {
				names[f.Name] = true
			}
			walk(f.Type)
		}
	}
	for _, v := range []any{microphys.Params{}, grid.OpenOptions{}, grid.WriteOptions{}, summary.Options{}, summary.Region{}} {
		walk(reflect.TypeOf(v))
	}
	return names
}

// Errors speak the user's words: every bad parameter names its option and the unit it is
// typed in, and no message of a bad command line or a bad input file names a Go field
// (ReStar, MinCTT, LatMin, ...).
func TestMessagesInUsersWords(t *testing.T) {
	fields := goFieldNames()
	for _, f := range []string{"ReStar", "MinCTT", "DefaultCTT", "LatMin", "MinDrizzling"} {
		if !fields[f] {
			t.Fatalf("the field list lacks %s: %v", f, fields)
		}
	}
	word := regexp.MustCompile(`[A-Za-z][A-Za-z0-9]*`)
	check := func(args []string, want string) {
		t.Helper()
		code, _, errs := runCmd(args...)
		if code == ExitOK || errs == "" {
			t.Errorf("%v: exit %d, stderr %q: want an error", args, code, errs)
			return
		}
		for _, w := range word.FindAllString(errs, -1) {
			if fields[w] {
				t.Errorf("%v: the message names the Go field %s:\n%s", args, w, errs)
			}
		}
		if want != "" && !strings.Contains(errs, want) {
			t.Errorf("%v: stderr lacks %q:\n%s", args, want, errs)
		}
	}
	col := []string{"column", "--lwp", "120", "--re", "14"}
	// Every parameter out of its range, and the pairs that must be ordered.
	for _, rows := range optionGroups() {
		d := rows[0]
		var bad string
		switch {
		case d.Kind == microphys.ParamSwitch:
			continue
		case d.Kind == microphys.ParamChoice:
			bad = "nosuch"
		default:
			v := strconv.FormatFloat(d.Max*10+1, 'g', -1, 64)
			bad = strings.TrimSuffix(strings.Repeat(v+",", len(rows)), ",")
		}
		want := "--" + d.Option
		if d.Kind == microphys.ParamNumber && d.Unit != "" && d.Unit != "1" {
			want = "--" + d.Option + " must be " + d.RangeText() // the range in the unit users type
		}
		check(append(col, "--"+d.Option, bad), want)
	}
	check(append(col, "--re-range", "30,4"), "--re-range must be a maximum above the minimum 30 um (got 4 um)")
	check(append(col, "--nd-range", "500,20"), "--nd-range")
	check(append(col, "--drizzle-min-radius", "60"), "--drizzle-mean-radius must be above --drizzle-min-radius 60 um")
	check(append(col, "--onset-radius", "5", "--onset-width", "12"), "--onset-width")
	check(append(col, "--no-evaporation=false", "--no-collector", "--collector-radius", "0"), "--collector-radius")

	// Bad command lines of every command.
	dir := t.TempDir()
	out := filepath.Join(dir, "o.nc")
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"process", sampleFile, "-o", out, "--jobs", "0"}, "--jobs"},
		{[]string{"process", sampleFile, "-o", out, "--slab-mb", "0"}, "--slab-mb"},
		{[]string{"process", sampleFile, "-o", out, "--deflate", "12"}, "--deflate"},
		{[]string{"process", sampleFile, "-o", out, "--bind", "foo=lwp"}, "--bind"},
		{[]string{"process", sampleFile, "-o", out, "--bind", "lwp=nosuch"}, "--bind lwp=nosuch"},
		{[]string{"process", sampleFile, "-o", out, "--bind", "lwp=lwp", "--bind", "lwp=re"}, "--bind"},
		{[]string{"process", sampleFile, "-o", out, "--mask", "q<"}, "--mask"},
		{[]string{"process", sampleFile, "-o", out, "--lwp-kind", "x"}, "--lwp-kind"},
		{[]string{"process", sampleFile, "-o", out, "--outputs", "nosuch"}, "nosuch"},
		{[]string{"process", sampleFile, "-o", out, "--shard", "3/2"}, "--shard"},
		{[]string{"inspect", sampleFile, "--bind", "re=nosuch"}, "--bind re=nosuch"},
		{[]string{"summary", sampleFile, "--region", "10,0,0,1"}, "--region"},
		{[]string{"summary", sampleFile, "--region", "0,10,x,1"}, "--region"},
		{[]string{"summary", sampleFile, "--min-count", "-1"}, "--min-count"},
		{[]string{"summary", sampleFile}, sampleFile},
		{[]string{"column", "--from", sampleFile, "--index", "1,2"}, "--index"},
		{[]string{"column", "--from", sampleFile, "--index", "1,2,9"}, "time"},
		{[]string{"column", "--from", sampleFile, "--lat", "-18"}, "--lat and --lon"},
		{[]string{"column", "--from", sampleFile, "--lat", "-18", "--lon", "-80"}, "--time"},
		{[]string{"column", "--from", sampleFile, "--lat", "-18", "--lon", "-80", "--time", "yesterday"}, "--time"},
		{[]string{"column", "--from", sampleFile, "--index", "1,2,0", "--lwp", "100"}, "--lwp"},
		{[]string{"column", "--lwp", "120", "--re", "14", "--index", "1,2"}, "--from"},
	} {
		check(c.args, c.want)
	}
	// Bad input files: each error names the file.
	for _, name := range []string{"all_fill", "bad_values", "different_grids", "missing_lwp", "missing_re", "no_units",
		"nonmonotonic_lat", "numeric_units", "string_fill", "wrong_units", "zero_length"} {
		in := ncgenBad(t, name, "nc4", dir)
		o := filepath.Join(dir, name+"_out.nc")
		code, _, errs := runCmd("process", in, "-o", o, "-q")
		for _, w := range word.FindAllString(errs, -1) {
			if fields[w] {
				t.Errorf("%s: the message names the Go field %s:\n%s", name, w, errs)
			}
		}
		if code != ExitOK && !strings.Contains(errs, in) {
			t.Errorf("%s: the error does not name the file:\n%s", name, errs)
		}
		os.Remove(o)
		code, _, errs = runCmd("column", "--from", in, "--index", "0,0")
		for _, w := range word.FindAllString(errs, -1) {
			if fields[w] {
				t.Errorf("column --from %s: the message names the Go field %s:\n%s", name, w, errs)
			}
		}
		_ = code
	}
}
