package grid

import (
	"fmt"
	"math"
	"strings"
	"unsafe"
)

// Decoder turns stored values of one variable into float64 values in canonical
// units, NaN for missing. The order follows CF §2.5.1 and §8.1 (NUG Appendix A):
//
//  1. reinterpret signed integers as unsigned when _Unsigned = "true";
//  2. test the stored value against _FillValue (or the library's default fill
//     for the type when the attribute is absent, except for byte types),
//     missing_value (scalar or vector) and valid_min/valid_max/valid_range, in
//     the packed domain; NaN stored values are missing too;
//  3. unpack: x*scale_factor + add_offset (either may be absent);
//  4. convert the units once: y = Factor*x + Offset.
//
// Steps 3 and 4 are folded into one multiply-add. A packed value that lands within
// 1e-4 of a packing step (plus 1e-6 of add_offset) of zero is the packed zero,
// made exactly 0: a stored value whose scale_factor and add_offset cancel leaves a
// rounding residue (about 1e-9 with float32 attributes), which is not a negative
// LWP.
//
// A data variable whose flag_values mark codes (CF §3.5; rain, sea ice, land, no
// retrieval), when the decoder screens flags (Binding decoders of quantities do),
// has those stored values decoded as the flag's NaN (FlagNaN), before any other
// test: they are never values, and FlagIndex tells which meaning the column had. Comparisons are made on the
// stored values converted to float64, exact for every integer up to 2^53.
// Infinite stored values are kept (physics screens them).
//
// valid_* attributes are normally in the packed domain; when a packed variable
// carries them in the unpacked type (the type of scale_factor, differing from the
// stored type), they are tested after unpacking, as netCDF-Java does.
type Decoder struct {
	Stored   Type    // type in the file
	Unsigned bool    // _Unsigned = "true" applied
	HasFill  bool    // a fill value is tested (attribute or default)
	Fill     float64 // in the packed domain
	FillAttr bool    // Fill comes from a _FillValue attribute
	Missing  []float64
	HasMin   bool
	HasMax   bool
	Min, Max float64
	// ValidUnpacked: Min/Max are in the unpacked (but not unit-converted) domain.
	ValidUnpacked bool
	Packed        bool
	Scale, Offset float64
	Conv          Converter
	// FlagCodes are the stored codes of the variable's flag_values screened as
	// FlagNaN(k), k their index; FlagMeanings the words of flag_meanings.
	FlagCodes    []float64
	FlagMeanings []string

	a, b    float64 // folded Scale/Offset and Conv
	zeroTol float64 // |unpacked| below it is the packed zero (0 when not packed with an offset)

	// HDF4Cal: the variable is an HDF4 SD data set whose scale_factor and
	// add_offset were written by SDsetcal, meaning value = scale_factor *
	// (stored - add_offset) (HDF4 User's Guide, SDsetcal), not CF's stored *
	// scale_factor + add_offset. CalOffset keeps the add_offset attribute; Offset
	// is then -scale_factor * add_offset, so that x*Scale + Offset still holds.
	HDF4Cal   bool
	CalOffset float64
}

// flagNaNBase is the bit pattern of the NaNs that carry a flag index in their low
// 16 bits (a quiet NaN with a marker no arithmetic produces).
const flagNaNBase = 0x7ff8_f1a6_0000_0000

// FlagNaN returns the NaN that marks flag code k (0 <= k < 65536) of a variable.
// It is a NaN like any missing value; copying keeps its bits.
func FlagNaN(k int) float64 { return math.Float64frombits(flagNaNBase | uint64(k&0xffff)) }

// FlagIndex reports whether x is a FlagNaN and which index it carries.
func FlagIndex(x float64) (k int, ok bool) {
	b := math.Float64bits(x)
	if b&^0xffff != flagNaNBase {
		return 0, false
	}
	return int(b & 0xffff), true
}

// screenFlags makes d decode the codes of v's flag_values as FlagNaN (see
// Decoder). It needs flag_meanings with one word per code; otherwise it leaves d
// as it is and says why in note.
func (d *Decoder) screenFlags(file string, v *VarInfo) (note string, err error) {
	fv, ok := v.Attr("flag_values")
	if !ok {
		return "", nil
	}
	if !fv.Type.Numeric() {
		return "", varErr(ErrDecode, file, v.Name, "flag_values has type %s; expected numbers of the variable's type %s (CF 3.5)", fv.Type, v.Type)
	}
	codes := fv.Float64s()
	if d.Unsigned && fv.Type.Integer() && fv.Type.Size() == v.Type.Size() {
		codes = toFloat64s(reinterpretUnsigned(fv.Value))
	}
	words := strings.Fields(v.Text("flag_meanings"))
	if len(words) != len(codes) {
		return fmt.Sprintf("flag_values %v not screened: flag_meanings has %d words for %d codes", codes, len(words), len(codes)), nil
	}
	d.FlagCodes, d.FlagMeanings = codes, words
	return "", nil
}

// NewDecoder builds the decoder of variable v of file from its attributes, with
// conv taking unpacked values to canonical units.
func NewDecoder(file string, v *VarInfo, conv Converter) (*Decoder, error) {
	d := &Decoder{Stored: v.Type, Scale: 1, Conv: conv}
	bad := func(format string, args ...any) error {
		return varErr(ErrDecode, file, v.Name, format, args...)
	}
	if !v.Type.Numeric() {
		return nil, varErr(ErrLayout, file, v.Name, "has type %s; expected a numeric type (byte, ubyte, short, ushort, int, uint, int64, uint64, float or double)", v.Type)
	}
	eff := v.Type
	if a, ok := v.Attr("_Unsigned"); ok {
		s, _ := a.Text()
		if strings.EqualFold(strings.TrimSpace(s), "true") && v.Type.Integer() {
			eff = v.Type.unsignedOf()
			d.Unsigned = eff != v.Type
		}
	}
	// number reads a numeric attribute, reinterpreting signed as unsigned like the data.
	number := func(a Attr, want string) ([]float64, error) {
		if !a.Type.Numeric() {
			return nil, bad("attribute %s has type %s; expected %s", a.Name, a.Type, want)
		}
		if d.Unsigned && a.Type.Size() == v.Type.Size() && a.Type.Integer() {
			return toFloat64s(reinterpretUnsigned(a.Value)), nil
		}
		return a.Float64s(), nil
	}
	if a, ok := v.Attr("_FillValue"); ok {
		sameSize := a.Type.Integer() && v.Type.Integer() && a.Type.Size() == v.Type.Size() && d.Unsigned
		if a.Type != v.Type && !sameSize {
			return nil, bad("_FillValue has type %s; expected the variable's type %s (CF 2.5.1)", a.Type, v.Type)
		}
		f, err := number(a, v.Type.String())
		if err != nil {
			return nil, err
		}
		if len(f) != 1 {
			return nil, bad("_FillValue has %d values; expected one", len(f))
		}
		d.HasFill, d.Fill, d.FillAttr = true, f[0], true
	} else if fill, ok := defaultFill(eff); ok {
		d.HasFill, d.Fill = true, fill
	}
	if a, ok := v.Attr("missing_value"); ok {
		f, err := number(a, "numbers of the variable's type "+v.Type.String())
		if err != nil {
			return nil, err
		}
		d.Missing = f
	}
	if a, ok := v.Attr("scale_factor"); ok {
		f, err := number(a, "float or double")
		if err != nil {
			return nil, err
		}
		if len(f) != 1 || f[0] == 0 || math.IsNaN(f[0]) || math.IsInf(f[0], 0) {
			return nil, bad("scale_factor = %v; expected one finite non-zero number", f)
		}
		d.Packed, d.Scale = true, f[0]
	}
	if a, ok := v.Attr("add_offset"); ok {
		f, err := number(a, "float or double")
		if err != nil {
			return nil, err
		}
		if len(f) != 1 || math.IsNaN(f[0]) || math.IsInf(f[0], 0) {
			return nil, bad("add_offset = %v; expected one finite number", f)
		}
		d.Packed, d.Offset = true, f[0]
	}
	if v.HDF4 && d.Packed {
		d.HDF4Cal, d.CalOffset = true, d.Offset
		d.Offset = -d.Scale * d.CalOffset
	}
	unpackedType := Type(0)
	if a, ok := v.Attr("scale_factor"); ok {
		unpackedType = a.Type
	} else if a, ok := v.Attr("add_offset"); ok {
		unpackedType = a.Type
	}
	vr, hasRange := v.Attr("valid_range")
	vmin, hasMin := v.Attr("valid_min")
	vmax, hasMax := v.Attr("valid_max")
	validType := Type(0)
	if hasRange {
		f, err := number(vr, "two numbers of the variable's type "+v.Type.String())
		if err != nil {
			return nil, err
		}
		if len(f) != 2 || f[0] > f[1] {
			return nil, bad("valid_range = %v; expected two increasing numbers", f)
		}
		d.HasMin, d.Min, d.HasMax, d.Max = true, f[0], true, f[1]
		validType = vr.Type
	} else {
		if hasMin {
			f, err := number(vmin, "one number of the variable's type "+v.Type.String())
			if err != nil {
				return nil, err
			}
			if len(f) != 1 {
				return nil, bad("valid_min has %d values; expected one", len(f))
			}
			d.HasMin, d.Min = true, f[0]
			validType = vmin.Type
		}
		if hasMax {
			f, err := number(vmax, "one number of the variable's type "+v.Type.String())
			if err != nil {
				return nil, err
			}
			if len(f) != 1 {
				return nil, bad("valid_max has %d values; expected one", len(f))
			}
			d.HasMax, d.Max = true, f[0]
			validType = vmax.Type
		}
	}
	if d.Packed && validType != 0 && validType != v.Type && validType == unpackedType && !d.Unsigned {
		d.ValidUnpacked = true
	}
	d.a = d.Scale * conv.Factor
	d.b = d.Offset*conv.Factor + conv.Offset
	if d.Packed && d.Offset != 0 {
		// Well below a packing step, above the rounding of float32 attributes
		// (2^-24 relative to the offset) and of the float64 multiply-add.
		d.zeroTol = 1e-4*math.Abs(d.Scale) + 1e-6*math.Abs(d.Offset)
	}
	return d, nil
}

func reinterpretUnsigned(v any) any {
	switch x := v.(type) {
	case []int8:
		return unsafe.Slice((*uint8)(unsafe.Pointer(unsafe.SliceData(x))), len(x))
	case []int16:
		return unsafe.Slice((*uint16)(unsafe.Pointer(unsafe.SliceData(x))), len(x))
	case []int32:
		return unsafe.Slice((*uint32)(unsafe.Pointer(unsafe.SliceData(x))), len(x))
	case []int64:
		return unsafe.Slice((*uint64)(unsafe.Pointer(unsafe.SliceData(x))), len(x))
	}
	return v
}

// defaultFill is libnetcdf's default fill for types where NUG says readers should
// treat it as missing (not byte, ubyte or char).
func defaultFill(t Type) (float64, bool) {
	switch t {
	case Short:
		return -32767, true
	case Ushort:
		return 65535, true
	case Int:
		return -2147483647, true
	case Uint:
		return 4294967295, true
	case Int64:
		return -9223372036854775806, true
	case Uint64:
		return 18446744073709551614, true
	case Float:
		return float64(float32(9.9692099683868690e+36)), true
	case Double:
		return 9.9692099683868690e+36, true
	}
	return 0, false
}

// Describe says in words what the decoder does (for inspect).
func (d *Decoder) Describe() string {
	var parts []string
	t := d.Stored.String()
	if d.Unsigned {
		t += " read as " + d.Stored.unsignedOf().String() + " (_Unsigned)"
	}
	parts = append(parts, "stored as "+t)
	if d.HasFill {
		if d.FillAttr {
			parts = append(parts, fmt.Sprintf("_FillValue %g", d.Fill))
		} else {
			parts = append(parts, fmt.Sprintf("default fill %g", d.Fill))
		}
	}
	if len(d.Missing) > 0 {
		parts = append(parts, fmt.Sprintf("missing_value %v", d.Missing))
	}
	if d.HasMin || d.HasMax {
		lo, hi := "-inf", "+inf"
		if d.HasMin {
			lo = fmt.Sprintf("%g", d.Min)
		}
		if d.HasMax {
			hi = fmt.Sprintf("%g", d.Max)
		}
		dom := "packed"
		if d.ValidUnpacked || !d.Packed {
			dom = "stored"
			if d.ValidUnpacked {
				dom = "unpacked"
			}
		}
		parts = append(parts, fmt.Sprintf("valid [%s, %s] (%s values)", lo, hi, dom))
	}
	switch {
	case d.HDF4Cal && d.CalOffset == 0:
		parts = append(parts, fmt.Sprintf("unpacked the HDF4 way (SDsetcal): scale_factor*(x - add_offset) = %g*x, not CF's x*scale_factor + add_offset (the same here, add_offset being 0)", d.Scale))
	case d.HDF4Cal:
		parts = append(parts, fmt.Sprintf("unpacked the HDF4 way (SDsetcal): scale_factor*(x - add_offset) = %g*(x%+g), not CF's x*scale_factor + add_offset", d.Scale, -d.CalOffset))
	case d.Packed:
		parts = append(parts, fmt.Sprintf("unpacked as x*%g%+g", d.Scale, d.Offset))
	}
	if d.zeroTol > 0 {
		parts = append(parts, "the packed zero decodes to exactly 0")
	}
	if len(d.FlagCodes) > 0 {
		f := make([]string, len(d.FlagCodes))
		for i, c := range d.FlagCodes {
			f[i] = fmt.Sprintf("%g=%s", c, d.FlagMeanings[i])
		}
		parts = append(parts, "flag codes screened (not values): "+strings.Join(f, ", "))
	}
	return strings.Join(parts, "; ")
}

// Decode converts n = len(dst) stored values in raw (the variable's own type,
// native byte order) into dst.
func (d *Decoder) Decode(dst []float64, raw unsafe.Pointer) {
	n := len(dst)
	if n == 0 {
		return
	}
	t := d.Stored
	if d.Unsigned {
		t = t.unsignedOf()
	}
	switch t {
	case Byte:
		decodeT(d, dst, unsafe.Slice((*int8)(raw), n))
	case Ubyte:
		decodeT(d, dst, unsafe.Slice((*uint8)(raw), n))
	case Short:
		decodeT(d, dst, unsafe.Slice((*int16)(raw), n))
	case Ushort:
		decodeT(d, dst, unsafe.Slice((*uint16)(raw), n))
	case Int:
		decodeT(d, dst, unsafe.Slice((*int32)(raw), n))
	case Uint:
		decodeT(d, dst, unsafe.Slice((*uint32)(raw), n))
	case Int64:
		decodeT(d, dst, unsafe.Slice((*int64)(raw), n))
	case Uint64:
		decodeT(d, dst, unsafe.Slice((*uint64)(raw), n))
	case Float:
		decodeT(d, dst, unsafe.Slice((*float32)(raw), n))
	case Double:
		decodeT(d, dst, unsafe.Slice((*float64)(raw), n))
	default:
		panic("grid: Decode of " + t.String())
	}
}

type number interface {
	~int8 | ~uint8 | ~int16 | ~uint16 | ~int32 | ~uint32 | ~int64 | ~uint64 | ~float32 | ~float64
}

func decodeT[T number](d *Decoder, dst []float64, src []T) {
	nan := math.NaN()
	a, b := d.a, d.b
	hasFill, fill := d.HasFill, d.Fill
	lo, hi := math.Inf(-1), math.Inf(1)
	packedRange := !d.ValidUnpacked
	if d.HasMin {
		lo = d.Min
	}
	if d.HasMax {
		hi = d.Max
	}
	if len(d.FlagCodes) > 0 {
		decodeSlow(d, dst, src, lo, hi)
		return
	}
	if d.zeroTol > 0 {
		defer d.packedZero(dst)
	}
	if !packedRange {
		// Test after unpacking (before the unit conversion).
		for i, x := range src {
			v := float64(x)
			if v != v || (hasFill && v == fill) || isMissing(v, d.Missing) {
				dst[i] = nan
				continue
			}
			u := v*d.Scale + d.Offset
			if u < lo || u > hi {
				dst[i] = nan
				continue
			}
			dst[i] = v*a + b
		}
		return
	}
	if len(d.Missing) == 0 {
		// The same tests as a select, not branches: NaN fails v >= lo, and a NaN
		// fill (or bound) equals (or bounds) nothing.
		f := nan
		if hasFill {
			f = fill
		}
		if lo != lo {
			lo = math.Inf(-1)
		}
		if hi != hi {
			hi = math.Inf(1)
		}
		dst = dst[:len(src)]
		for i, x := range src {
			v := float64(x)
			r := v*a + b
			if !(v >= lo && v <= hi) || v == f {
				r = nan
			}
			dst[i] = r
		}
		return
	}
	for i, x := range src {
		v := float64(x)
		if v != v || (hasFill && v == fill) || v < lo || v > hi || isMissing(v, d.Missing) {
			dst[i] = nan
			continue
		}
		dst[i] = v*a + b
	}
}

// packedZero makes the decoded packed zero exactly the conversion of 0: a value
// within zeroTol of zero before the conversion is within zeroTol*|Factor| of
// Conv.Offset after it.
func (d *Decoder) packedZero(dst []float64) {
	z, tol := d.Conv.Offset, d.zeroTol*math.Abs(d.Conv.Factor)
	for i, x := range dst {
		if math.Abs(x-z) < tol {
			dst[i] = z
		}
	}
}

// decodeSlow is decodeT with flag codes (and the packed zero): every test in one
// loop (the common variables without codes take the loops above).
func decodeSlow[T number](d *Decoder, dst []float64, src []T, lo, hi float64) {
	nan := math.NaN()
	a, b := d.a, d.b
next:
	for i, x := range src {
		v := float64(x)
		for k, c := range d.FlagCodes {
			if v == c {
				dst[i] = FlagNaN(k)
				continue next
			}
		}
		if v != v || (d.HasFill && v == d.Fill) || isMissing(v, d.Missing) {
			dst[i] = nan
			continue
		}
		u := v*d.Scale + d.Offset
		t := v
		if d.ValidUnpacked {
			t = u
		}
		if t < lo || t > hi {
			dst[i] = nan
			continue
		}
		if d.zeroTol > 0 && math.Abs(u) < d.zeroTol {
			dst[i] = d.Conv.Offset // the unit conversion of 0
			continue
		}
		dst[i] = v*a + b
	}
}

func isMissing(v float64, m []float64) bool {
	for _, x := range m {
		if v == x {
			return true
		}
	}
	return false
}

// storedUnitsDecoder decodes a variable's packing, fill and missing values but keeps
// its own units (no conversion), for reads of coordinates and generic values.
func storedUnitsDecoder(file string, v *VarInfo) (*Decoder, error) {
	return NewDecoder(file, v, Converter{From: v.Text("units"), To: v.Text("units"), Factor: 1})
}
