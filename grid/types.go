package grid

import (
	"fmt"
	"math"
	"strings"
	"unsafe"
)

// Type is a netCDF external type (the values of libnetcdf's nc_type).
type Type int

// The netCDF atomic types.
const (
	Byte   Type = 1
	Char   Type = 2
	Short  Type = 3
	Int    Type = 4
	Float  Type = 5
	Double Type = 6
	Ubyte  Type = 7
	Ushort Type = 8
	Uint   Type = 9
	Int64  Type = 10
	Uint64 Type = 11
	String Type = 12
)

var typeNames = map[Type]string{Byte: "byte", Char: "char", Short: "short", Int: "int", Float: "float",
	Double: "double", Ubyte: "ubyte", Ushort: "ushort", Uint: "uint", Int64: "int64", Uint64: "uint64", String: "string"}

// String gives the CDL name of the type.
func (t Type) String() string {
	if s, ok := typeNames[t]; ok {
		return s
	}
	return fmt.Sprintf("type%d", int(t))
}

// Size is the size in bytes of one value (0 for string and user types).
func (t Type) Size() int {
	switch t {
	case Byte, Char, Ubyte:
		return 1
	case Short, Ushort:
		return 2
	case Int, Uint, Float:
		return 4
	case Double, Int64, Uint64:
		return 8
	}
	return 0
}

// Numeric reports whether t is one of the ten numeric types.
func (t Type) Numeric() bool { return t != Char && t != String && t.Size() > 0 }

// Integer reports whether t is an integer type.
func (t Type) Integer() bool { return t.Numeric() && t != Float && t != Double }

// unsignedOf gives the unsigned type with the same size (for _Unsigned = "true").
func (t Type) unsignedOf() Type {
	switch t {
	case Byte:
		return Ubyte
	case Short:
		return Ushort
	case Int:
		return Uint
	case Int64:
		return Uint64
	}
	return t
}

// classicOK reports whether t may be used in a netCDF-4 classic model file.
func (t Type) classicOK() bool { return t >= Byte && t <= Double }

// Attr is one attribute as a Go value: string (NC_CHAR), []string (NC_STRING),
// or []int8, []uint8, []int16, []uint16, []int32, []uint32, []int64, []uint64,
// []float32, []float64.
type Attr struct {
	Name  string
	Type  Type
	Value any
}

// Text returns the attribute as text: an NC_CHAR value, or the NC_STRING values
// joined by newlines. ok is false for numbers.
func (a Attr) Text() (s string, ok bool) {
	switch v := a.Value.(type) {
	case string:
		return v, true
	case []string:
		return joinStrings(v), true
	}
	return "", false
}

// Float64s returns a numeric attribute's values as float64 (nil for text).
func (a Attr) Float64s() []float64 { return toFloat64s(a.Value) }

// String formats the value for people (CDL-like).
func (a Attr) String() string {
	if s, ok := a.Text(); ok {
		return fmt.Sprintf("%q", s)
	}
	f := a.Float64s()
	parts := make([]string, len(f))
	for i, x := range f {
		parts[i] = fmt.Sprintf("%g", x)
	}
	return strings.Join(parts, ", ")
}

func joinStrings(v []string) string { return strings.Join(v, "\n") }

func newTyped(t Type, n int) any {
	switch t {
	case Byte:
		return make([]int8, n)
	case Ubyte:
		return make([]uint8, n)
	case Short:
		return make([]int16, n)
	case Ushort:
		return make([]uint16, n)
	case Int:
		return make([]int32, n)
	case Uint:
		return make([]uint32, n)
	case Int64:
		return make([]int64, n)
	case Uint64:
		return make([]uint64, n)
	case Float:
		return make([]float32, n)
	case Double:
		return make([]float64, n)
	}
	panic("grid: newTyped of " + t.String())
}

func typedType(v any) Type {
	switch v.(type) {
	case []int8:
		return Byte
	case []uint8:
		return Ubyte
	case []int16:
		return Short
	case []uint16:
		return Ushort
	case []int32:
		return Int
	case []uint32:
		return Uint
	case []int64:
		return Int64
	case []uint64:
		return Uint64
	case []float32:
		return Float
	case []float64:
		return Double
	case string:
		return Char
	case []string:
		return String
	}
	return 0
}

func typedLen(v any) int {
	switch x := v.(type) {
	case []int8:
		return len(x)
	case []uint8:
		return len(x)
	case []int16:
		return len(x)
	case []uint16:
		return len(x)
	case []int32:
		return len(x)
	case []uint32:
		return len(x)
	case []int64:
		return len(x)
	case []uint64:
		return len(x)
	case []float32:
		return len(x)
	case []float64:
		return len(x)
	}
	return 0
}

func typedPtr(v any) unsafe.Pointer {
	if typedLen(v) == 0 {
		return nil
	}
	switch x := v.(type) {
	case []int8:
		return unsafe.Pointer(&x[0])
	case []uint8:
		return unsafe.Pointer(&x[0])
	case []int16:
		return unsafe.Pointer(&x[0])
	case []uint16:
		return unsafe.Pointer(&x[0])
	case []int32:
		return unsafe.Pointer(&x[0])
	case []uint32:
		return unsafe.Pointer(&x[0])
	case []int64:
		return unsafe.Pointer(&x[0])
	case []uint64:
		return unsafe.Pointer(&x[0])
	case []float32:
		return unsafe.Pointer(&x[0])
	case []float64:
		return unsafe.Pointer(&x[0])
	}
	return nil
}

func toFloat64s(v any) []float64 {
	var out []float64
	switch x := v.(type) {
	case []int8:
		for _, e := range x {
			out = append(out, float64(e))
		}
	case []uint8:
		for _, e := range x {
			out = append(out, float64(e))
		}
	case []int16:
		for _, e := range x {
			out = append(out, float64(e))
		}
	case []uint16:
		for _, e := range x {
			out = append(out, float64(e))
		}
	case []int32:
		for _, e := range x {
			out = append(out, float64(e))
		}
	case []uint32:
		for _, e := range x {
			out = append(out, float64(e))
		}
	case []int64:
		for _, e := range x {
			out = append(out, float64(e))
		}
	case []uint64:
		for _, e := range x {
			out = append(out, float64(e))
		}
	case []float32:
		for _, e := range x {
			out = append(out, float64(e))
		}
	case []float64:
		out = append(out, x...)
	}
	return out
}

// convertTyped converts numbers to type t, rounding to nearest for integers and
// saturating at the type's limits.
func convertTyped(v any, t Type) any {
	f := toFloat64s(v)
	out := newTyped(t, len(f))
	for i, x := range f {
		setTyped(out, i, x)
	}
	return out
}

func setTyped(dst any, i int, x float64) {
	r := math.RoundToEven(x)
	switch d := dst.(type) {
	case []int8:
		d[i] = int8(clamp(r, math.MinInt8, math.MaxInt8))
	case []uint8:
		d[i] = uint8(clamp(r, 0, math.MaxUint8))
	case []int16:
		d[i] = int16(clamp(r, math.MinInt16, math.MaxInt16))
	case []uint16:
		d[i] = uint16(clamp(r, 0, math.MaxUint16))
	case []int32:
		d[i] = int32(clamp(r, math.MinInt32, math.MaxInt32))
	case []uint32:
		d[i] = uint32(clamp(r, 0, math.MaxUint32))
	case []int64:
		d[i] = int64(clamp(r, math.MinInt64, math.MaxInt64))
	case []uint64:
		d[i] = uint64(clamp(r, 0, math.MaxUint64))
	case []float32:
		d[i] = float32(x)
	case []float64:
		d[i] = x
	}
}

func clamp(x, lo, hi float64) float64 {
	if x < lo {
		return lo
	}
	if x > hi {
		return hi
	}
	return x
}
