package microphys

import (
	"bufio"
	"flag"
	"fmt"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"
)

// updateGolden rewrites testdata/golden_outputs.txt (as gofmt's golden tests do):
//
//	go test ./microphys -run TestGoldenOutputs -update
var updateGolden = flag.Bool("update", false, "rewrite testdata/golden_outputs.txt from the current code")

const goldenPath = "testdata/golden_outputs.txt"

// goldenTol is the relative tolerance of the comparison: far below any physics change,
// above the last-bit differences fused multiply-add can make on other machines.
const goldenTol = 1e-10

// goldenColumns is a fixed set of columns spanning the input domain: a grid of LWP and
// r_e with the defaults for everything else, then columns that give each optional input,
// the screening edges and bad values. Invented values (common practice for a regression
// golden); the file freezes what the code computes, it is not a physics check.
func goldenColumns() []Inputs {
	nan := math.NaN()
	var cols []Inputs
	for _, lwp := range []float64{15, 40, 80, 150, 300, 600} { // g m-2
		for _, re := range []float64{6, 10, 14, 18, 24} { // um
			cols = append(cols, Inputs{LWP: lwp * 1e-3, Re: re * 1e-6, Tau: nan, CTT: nan, CTP: nan, CTH: nan, LWPStd: nan, SurfaceRH: nan})
		}
	}
	c := func(lwp, re, tau, ctt, ctp, cth, sd, rh float64) Inputs {
		return Inputs{LWP: lwp * 1e-3, Re: re * 1e-6, Tau: tau, CTT: ctt, CTP: ctp * 100, CTH: cth, LWPStd: sd * 1e-3, SurfaceRH: rh}
	}
	cols = append(cols,
		c(120, 14, 12, 283, 880, 900, 60, 0.75),   // every input given
		c(200, 16, nan, 288, 940, nan, nan, nan),  // air state given
		c(200, 16, nan, 278, 820, nan, nan, nan),  // colder, higher top
		c(90, 12, 8, nan, nan, 600, nan, nan),     // optical thickness and height
		c(250, 20, nan, nan, nan, 1500, 150, 0.6), // drizzling, dry sub-cloud layer
		c(250, 20, nan, nan, nan, 400, 40, 0.95),  // shallow, moist sub-cloud layer
		c(500, 28, nan, 292, 960, 1200, 300, 0.8), // near the top of the r_e range
		c(60, 9, nan, 275, 700, nan, 10, nan),     // high cold top, narrow sub-grid LWP
		c(4, 14, nan, nan, nan, nan, nan, nan),    // thin cloud (LWP < 5 g m-2)
		c(100, 3, nan, nan, nan, nan, nan, nan),   // r_e below the range
		c(100, 31, nan, nan, nan, nan, nan, nan),  // r_e above the range
		c(100, 12, nan, 265, nan, nan, nan, nan),  // possible ice
		c(100, 12, 2, nan, nan, nan, nan, nan),    // thin in optical thickness
		c(nan, 12, nan, nan, nan, nan, nan, nan),  // LWP missing
		c(100, nan, nan, nan, nan, nan, nan, nan), // r_e missing
		c(-50, 12, nan, nan, nan, nan, nan, nan),  // negative LWP
		c(math.Inf(1), 12, nan, nan, nan, nan, nan, nan),
		c(3000, 5, nan, nan, nan, nan, nan, nan), // implausible droplet number and thickness
		c(150, 14, nan, nan, nan, nan, nan, 1.5), // surface humidity out of range
		c(800, 25, 60, 290, 950, 2500, 400, 0.7), // deep, heavily drizzling
	)
	return cols
}

// goldenText runs the fixed columns through the default model and, for the
// autoconversion-dependent outputs, through every other scheme, and prints every output
// of OutputDecls in its file units with the QC word list.
func goldenText(t *testing.T) string {
	var b strings.Builder
	b.WriteString("# Every output of OutputDecls (file units) for fixed columns; rewrite with go test ./microphys -run TestGoldenOutputs -update\n")
	cols := goldenColumns()
	for _, scheme := range []AutoconvScheme{AutoconvKK2000, AutoconvKessler1969, AutoconvLiuDaum2004, AutoconvSeifertBeheng2001} {
		p := DefaultParams()
		p.Autoconv = scheme
		m, err := NewModel(p)
		if err != nil {
			t.Fatal(err)
		}
		fmt.Fprintf(&b, "== --autoconversion %s\n", scheme)
		for i := range cols {
			if scheme != AutoconvKK2000 && i%5 != 2 { // the other schemes: every fifth column
				continue
			}
			in := cols[i]
			var o Outputs
			m.Column(&in, &o)
			fmt.Fprintf(&b, "column %d lwp=%g re=%g tau=%g ctt=%g ctp=%g cth=%g lwp_sd=%g rh=%g\n", i,
				in.LWP, in.Re, in.Tau, in.CTT, in.CTP, in.CTH, in.LWPStd, in.SurfaceRH)
			for _, d := range OutputDecls {
				v := in.LWP
				if d.Get != nil {
					v = d.Get(&o)
				}
				fmt.Fprintf(&b, "  %s %s %s\n", d.Name, strconv.FormatFloat(v*d.Scale, 'g', 14, 64), d.Units)
			}
			fmt.Fprintf(&b, "  %s %d %s\n", QCOutputName, o.QC, strings.Join(QCNames(o.QC), ","))
		}
	}
	return b.String()
}

// TestGoldenOutputs compares every output for the fixed columns with the frozen file:
// any change of a number beyond goldenTol, of a QC bit, or of the list of outputs fails.
func TestGoldenOutputs(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	got := goldenText(t)
	if *updateGolden {
		if err := os.WriteFile(goldenPath, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(goldenPath)
	if err != nil {
		t.Fatalf("%v (create it with -update)", err)
	}
	gs, ws := bufio.NewScanner(strings.NewReader(got)), bufio.NewScanner(strings.NewReader(string(want)))
	line, bad := 0, 0
	for {
		g, w := gs.Scan(), ws.Scan()
		line++
		if !g || !w {
			if g != w {
				t.Fatalf("%s:%d: the number of lines differs (outputs or columns added or removed?); rewrite with -update if intended", goldenPath, line)
			}
			break
		}
		if !sameGoldenLine(gs.Text(), ws.Text()) {
			t.Errorf("%s:%d:\n got  %s\n want %s", goldenPath, line, gs.Text(), ws.Text())
			if bad++; bad > 20 {
				t.Fatal("too many differences")
			}
		}
	}
}

// sameGoldenLine compares two lines field by field, numbers within goldenTol.
func sameGoldenLine(a, b string) bool {
	fa, fb := strings.Fields(a), strings.Fields(b)
	if len(fa) != len(fb) {
		return false
	}
	for i := range fa {
		if fa[i] == fb[i] {
			continue
		}
		x, err1 := strconv.ParseFloat(fa[i], 64)
		y, err2 := strconv.ParseFloat(fb[i], 64)
		if err1 != nil || err2 != nil || math.Abs(x-y) > goldenTol*math.Max(math.Abs(x), math.Abs(y)) {
			return false
		}
	}
	return true
}
