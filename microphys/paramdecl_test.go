package microphys

import (
	"math"
	"os"
	"reflect"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// leafFields lists the float, int and bool fields of v (Collector expanded), by path.
func leafFields(v reflect.Value, prefix string, out map[string]reflect.Value) {
	for i := 0; i < v.NumField(); i++ {
		f, name := v.Field(i), prefix+v.Type().Field(i).Name
		if f.Kind() == reflect.Struct {
			leafFields(f, name+".", out)
			continue
		}
		if f.Kind() == reflect.Func || f.Kind() == reflect.Pointer || f.Kind() == reflect.Interface {
			continue
		}
		out[name] = f
	}
}

// TestParamDeclsCoverParams checks that every field of Params is set by exactly one row
// of ParamDecls (Collector.Collision and Collector.Coalescence follow Params.Collision
// and Params.Coalescence; EnableEvaporation also follows the no-collector switch), that
// names follow options, and that defaults survive the trip to user units and back
// exactly, so the options reproduce DefaultParams bit for bit.
func TestParamDeclsCoverParams(t *testing.T) {
	t.Parallel()
	follows := map[string]string{"collision": "Collector.Collision", "coalescence": "Collector.Coalescence", "no_collector": "EnableEvaporation"} // row -> field it also sets
	d := DefaultParams()
	base := map[string]reflect.Value{}
	leafFields(reflect.ValueOf(d), "", base)
	setBy := map[string]string{}
	for i := range ParamDecls {
		r := &ParamDecls[i]
		snake := strings.ReplaceAll(r.Option, "-", "_")
		if r.Name != snake && !strings.HasPrefix(r.Name, snake+"_") {
			t.Errorf("row %s: name does not follow option --%s", r.Name, r.Option)
		}
		first := i == 0 || ParamDecls[i-1].Option != r.Option
		if first && (r.Help == "" || r.Source == "") {
			t.Errorf("row %s: first row of an option needs Help and Source", r.Name)
		}
		if r.Kind == ParamNumber && (r.Unit == "" || r.Scale == 0 || !(r.Max > r.Min)) {
			t.Errorf("row %s: a number needs Unit, Scale and Min < Max", r.Name)
		}
		v := r.Get(&d)
		if got := r.ToSI(r.FromSI(v)); got != v && !(math.IsNaN(got) && math.IsNaN(v)) {
			t.Errorf("row %s: default %g becomes %g through user units", r.Name, v, got)
		}
		// Change the row's value and find the field that moved.
		p := DefaultParams()
		nv := v + 1
		switch r.Kind {
		case ParamChoice:
			nv = float64((int(v) + 1) % len(r.Choices))
		case ParamSwitch:
			nv = 1 - v
		}
		r.Set(&p, nv)
		if r.Get(&p) != nv {
			t.Errorf("row %s: Get after Set(%g) = %g", r.Name, nv, r.Get(&p))
		}
		now := map[string]reflect.Value{}
		leafFields(reflect.ValueOf(p), "", now)
		var moved []string
		for name, f := range now {
			old := base[name]
			same := reflect.DeepEqual(f.Interface(), old.Interface()) ||
				(f.Kind() == reflect.Float64 && math.IsNaN(f.Float()) && math.IsNaN(old.Float()))
			if !same && follows[r.Name] != name {
				moved = append(moved, name)
				setBy[name] += r.Name + " "
			}
		}
		if len(moved) != 1 {
			t.Errorf("row %s: Set moves fields %v of Params, want one", r.Name, moved)
		}
	}
	for name := range base {
		if name == "Collector.Collision" || name == "Collector.Coalescence" {
			continue // overridden by Params.Collision and Params.Coalescence
		}
		if strings.Count(setBy[name], " ") != 1 {
			t.Errorf("Params.%s is set by rows [%s], want exactly one (add a row to ParamDecls)", name, setBy[name])
		}
	}
}

// TestParamRangesMatchValidate checks that each row's bounds are the bounds Validate
// applies: just inside is accepted, just outside is rejected with the row's name.
func TestParamRangesMatchValidate(t *testing.T) {
	t.Parallel()
	for i := range ParamDecls {
		r := &ParamDecls[i]
		if r.Kind != ParamNumber {
			continue
		}
		p := DefaultParams()
		r.Set(&p, r.ToSI(r.Max*1.01+1e-9))
		err := p.Validate()
		pe, ok := err.(*ParamError)
		if !ok || pe.Field != r.Name || pe.Option != r.Option {
			t.Errorf("row %s above Max: Validate() = %v", r.Name, err)
		}
		if !r.MinOpen && !r.ZeroOff {
			p = DefaultParams()
			r.Set(&p, r.ToSI(r.Min))
			if err := p.Validate(); err != nil && err.(*ParamError).Field == r.Name {
				t.Errorf("row %s at Min %g rejected: %v", r.Name, r.Min, err)
			}
		}
	}
}

// TestParamLiterature checks the published ranges of ParamDecls: set on the first row of
// an option only, and every citation key in them is in the bibliography (references.go).
func TestParamLiterature(t *testing.T) {
	t.Parallel()
	ref, err := os.ReadFile("references.go")
	if err != nil {
		t.Fatal(err)
	}
	key := regexp.MustCompile(`\[([A-Z][A-Za-z]*[0-9]{4}[a-z]?)\]`)
	for i := range ParamDecls {
		r := &ParamDecls[i]
		first := i == 0 || ParamDecls[i-1].Option != r.Option
		if !first && r.Literature != "" {
			t.Errorf("row %s: Literature belongs on the first row of --%s", r.Name, r.Option)
		}
		for _, m := range key.FindAllStringSubmatch(r.Literature, -1) {
			if !strings.Contains(string(ref), "// ["+m[1]+"] ") {
				t.Errorf("row %s: Literature cites [%s], which references.go does not list", r.Name, m[1])
			}
		}
	}
}

// TestParamTextRoundTrip checks that the provenance text of a value typed by a user
// (Settings: Text of FromSI) reads back (ToSI) to the same SI value bit for bit, over
// each number's valid range, so that --params-from reproduces a run exactly.
func TestParamTextRoundTrip(t *testing.T) {
	t.Parallel()
	for i := range ParamDecls {
		r := &ParamDecls[i]
		if r.Kind != ParamNumber {
			continue
		}
		for k := 0; k <= 2000; k++ {
			// Values with up to four significant digits, as typed, across the range.
			u := r.Min + (r.Max-r.Min)*float64(k)/2000
			u, _ = strconv.ParseFloat(strconv.FormatFloat(u, 'g', 4, 64), 64)
			si := r.ToSI(u)
			back, err := strconv.ParseFloat(r.Text(r.FromSI(si)), 64)
			if err != nil || r.ToSI(back) != si {
				t.Errorf("row %s: %v typed gives provenance %q, read back as %v SI, not %v", r.Name, u, r.Text(r.FromSI(si)), r.ToSI(back), si)
				break
			}
		}
	}
}
