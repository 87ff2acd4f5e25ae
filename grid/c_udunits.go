package grid

// #cgo pkg-config: udunits
// #include <stdlib.h>
// #include <udunits2.h>
// static ut_system *warmrain_ut_load(void) {
//   ut_set_error_message_handler(ut_ignore);
//   return ut_read_xml(NULL);
// }
// static int warmrain_ut_format(ut_unit *u, char *buf, size_t n) {
//   return ut_format(u, buf, n, UT_ASCII | UT_DEFINITION);
// }
import "C"

import (
	"fmt"
	"math"
	"strings"
	"sync"
	"unsafe"
)

// UDUNITS-2 is not documented as thread-safe; unitsMu serialises every call.
var (
	unitsMu   sync.Mutex
	unitsOnce sync.Once
	unitsSys  *C.ut_system
	unitsErr  error
)

func unitSystem() (*C.ut_system, error) {
	unitsOnce.Do(func() {
		unitsSys = C.warmrain_ut_load()
		if unitsSys == nil {
			unitsErr = errUnits("cannot load the UDUNITS-2 unit database (install libudunits2-data or set UDUNITS2_XML_PATH)")
		}
	})
	return unitsSys, unitsErr
}

// parseUnit must be called with unitsMu held. The caller frees the result. The
// words HDF4 and HDF-EOS products write for a dimensionless quantity ("none",
// "unitless", "dimensionless"; common practice in level-2 imager products) mean
// "1".
func parseUnit(sys *C.ut_system, s string) *C.ut_unit {
	s = strings.TrimSpace(s)
	switch strings.ToLower(s) {
	case "none", "unitless", "dimensionless":
		s = "1"
	}
	cs := C.CString(s)
	defer C.free(unsafe.Pointer(cs))
	return C.ut_parse(sys, cs, C.UT_ASCII)
}

// Converter converts values from one unit to another: y = Factor*x + Offset.
type Converter struct {
	From, To       string
	Factor, Offset float64
}

// Convert applies the conversion.
func (c Converter) Convert(x float64) float64 { return c.Factor*x + c.Offset }

// Identity reports whether the conversion changes nothing.
func (c Converter) Identity() bool { return c.Factor == 1 && c.Offset == 0 }

// String describes the conversion, e.g. "x*0.001 (g m-2 -> kg m-2)".
func (c Converter) String() string {
	if c.Identity() {
		return fmt.Sprintf("none (%s)", c.To)
	}
	if c.Offset == 0 {
		return fmt.Sprintf("x*%g (%s -> %s)", c.Factor, c.From, c.To)
	}
	return fmt.Sprintf("x*%g%+g (%s -> %s)", c.Factor, c.Offset, c.From, c.To)
}

// NewConverter returns the conversion from units from to units to, as understood
// by UDUNITS-2. The conversion must be linear (every UDUNITS conversion between
// non-time units is). A factor within 1e-12 of a power of ten is made exact
// (UDUNITS gives 999999.9999999999 for cm-3 -> m-3). Errors wrap ErrUnits. The
// unit "mb" is refused when a pressure is expected: UDUNITS reads it as millibarn.
func NewConverter(from, to string) (Converter, error) {
	c := Converter{From: from, To: to}
	if strings.TrimSpace(from) == "" {
		return c, errUnits("empty units string; expected units convertible to %q", to)
	}
	sys, err := unitSystem()
	if err != nil {
		return c, err
	}
	unitsMu.Lock()
	defer unitsMu.Unlock()
	uf := parseUnit(sys, from)
	if uf == nil {
		return c, errUnits("cannot parse units %q (UDUNITS-2 syntax expected)%s", from, mbHint(from, to, sys))
	}
	defer C.ut_free(uf)
	ut := parseUnit(sys, to)
	if ut == nil {
		return c, errUnits("cannot parse target units %q", to)
	}
	defer C.ut_free(ut)
	if C.ut_are_convertible(uf, ut) == 0 {
		return c, errUnits("units %q are not convertible to %q%s", from, to, mbHint(from, to, sys))
	}
	cv := C.ut_get_converter(uf, ut)
	if cv == nil {
		return c, errUnits("no converter from %q to %q", from, to)
	}
	defer C.cv_free(cv)
	b := float64(C.cv_convert_double(cv, 0))
	a := float64(C.cv_convert_double(cv, 1)) - b
	probe := float64(C.cv_convert_double(cv, 1000))
	if d := math.Abs(probe - (1000*a + b)); d > 1e-9*math.Max(1, math.Abs(probe)) {
		return c, errUnits("conversion from %q to %q is not linear", from, to)
	}
	c.Factor = exactPow10(a)
	c.Offset = b
	if math.Abs(c.Offset) < 1e-12*math.Abs(c.Factor) {
		c.Offset = 0
	}
	return c, nil
}

// mbHint explains the millibarn trap when a pressure was expected.
func mbHint(from, to string, sys *C.ut_system) string {
	for _, tok := range strings.FieldsFunc(from, func(r rune) bool { return r == ' ' || r == '.' || r == '*' || r == '/' }) {
		if strings.TrimRight(tok, "-0123456789^") == "mb" {
			if isPressure(to, sys) {
				return `: UDUNITS reads "mb" as millibarn (an area), not millibar; use "hPa" or "mbar"`
			}
		}
	}
	return ""
}

func isPressure(to string, sys *C.ut_system) bool {
	u := parseUnit(sys, to)
	if u == nil {
		return false
	}
	defer C.ut_free(u)
	pa := parseUnit(sys, "Pa")
	defer C.ut_free(pa)
	return C.ut_are_convertible(u, pa) != 0
}

func exactPow10(a float64) float64 {
	if a == 0 || math.IsNaN(a) || math.IsInf(a, 0) {
		return a
	}
	p := math.Round(math.Log10(math.Abs(a)))
	e := math.Pow(10, p)
	if p < 0 {
		e = 1 / math.Pow(10, -p)
	}
	if math.Abs(math.Abs(a)-e) <= 1e-12*e {
		return math.Copysign(e, a)
	}
	return a
}

// ConvertFunc returns NewConverter(from, to).Convert.
func ConvertFunc(from, to string) (func(float64) float64, error) {
	c, err := NewConverter(from, to)
	if err != nil {
		return nil, err
	}
	return c.Convert, nil
}

// Convertible reports whether UDUNITS-2 can convert from into to (time units
// such as "seconds since 1970-01-01" included).
func Convertible(from, to string) bool {
	sys, err := unitSystem()
	if err != nil {
		return false
	}
	unitsMu.Lock()
	defer unitsMu.Unlock()
	uf := parseUnit(sys, from)
	if uf == nil {
		return false
	}
	defer C.ut_free(uf)
	ut := parseUnit(sys, to)
	if ut == nil {
		return false
	}
	defer C.ut_free(ut)
	return C.ut_are_convertible(uf, ut) != 0
}

// ParseUnits checks that s is a valid UDUNITS-2 string and returns its
// definition in base units (e.g. "kg m-2" -> "kg·m⁻²" in ASCII: "kg.m-2").
// Errors wrap ErrUnits.
func ParseUnits(s string) (string, error) {
	sys, err := unitSystem()
	if err != nil {
		return "", err
	}
	unitsMu.Lock()
	defer unitsMu.Unlock()
	u := parseUnit(sys, s)
	if u == nil {
		return "", errUnits("cannot parse units %q (UDUNITS-2 syntax expected)", s)
	}
	defer C.ut_free(u)
	var buf [256]C.char
	n := C.warmrain_ut_format(u, &buf[0], C.size_t(len(buf)))
	if n < 0 {
		return "", errUnits("cannot format units %q", s)
	}
	return C.GoString(&buf[0]), nil
}
