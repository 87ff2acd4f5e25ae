package grid

import (
	"errors"
	"math"
	"strings"
	"testing"
	"unsafe"
)

// fuzzTypes are the stored types the decoder accepts, plus Char and String
// (which it must refuse with an error, never a panic).
var fuzzTypes = []Type{Byte, Ubyte, Short, Ushort, Int, Uint, Int64, Uint64, Float, Double, Char, String}

func fuzzType(b uint8) Type { return fuzzTypes[int(b)%len(fuzzTypes)] }

// fuzzAttr builds a one- or two-valued attribute of type t holding vals
// (converted, saturating, for integer types; text for Char and String).
func fuzzAttr(name string, t Type, vals ...float64) Attr {
	switch t {
	case Char:
		return Attr{Name: name, Type: Char, Value: "-999"}
	case String:
		return Attr{Name: name, Type: String, Value: []string{"-999"}}
	}
	return Attr{Name: name, Type: t, Value: convertTyped(vals, t)}
}

// FuzzDecoder builds a variable's missing-value and packing attributes from the
// fuzz input, then decodes raw bytes. NewDecoder must return a VarError naming the
// file and the variable (wrapping ErrDecode or ErrLayout) or a decoder; Decode
// must never panic, and every value it returns is checked against the CF rules
// (CF 2.5.1, 8.1; NUG Appendix A), restated here independently of decodeT:
// a stored NaN, the fill value or a missing_value gives NaN, a value outside the
// valid range gives NaN, anything else is stored*scale+offset, then converted.
func FuzzDecoder(f *testing.F) {
	// Seeds: the layouts of the package's CDL fixtures (packed.cdl, alltypes.cdl,
	// bad_badfill.cdl) and of the committed sample (short LWP, scale 0.1, fill
	// -32767, valid_range 0..30000).
	f.Add(uint8(2), uint8(0b0000_1111), -32767.0, uint8(2), 0.1, 0.0, 0.0, 30000.0, 0.0, false, []byte{0x01, 0x80, 0x00, 0x00, 0x30, 0x75, 0xff, 0x7f})
	f.Add(uint8(8), uint8(0b0000_0001), -999.0, uint8(8), 1.0, 0.0, 0.0, 0.0, 0.0, false, []byte{0, 0, 0x7a, 0xc4, 0, 0, 0xc0, 0x7f, 0, 0, 0x80, 0x7f})
	f.Add(uint8(8), uint8(0b0000_0001), -999.0, uint8(9), 1.0, 0.0, 0.0, 0.0, 0.0, false, []byte{0, 0, 0x7a, 0xc4})
	f.Add(uint8(0), uint8(0b0100_0011), -1.0, uint8(0), 0.5, 10.0, 0.0, 0.0, 7.0, true, []byte{0xff, 0x00, 0x07, 0x80})
	f.Add(uint8(4), uint8(0b0011_0110), 0.0, uint8(4), 2.0, -1.0, -5.0, 5.0, 0.0, false, []byte{1, 0, 0, 0, 0xff, 0xff, 0xff, 0xff})
	f.Add(uint8(2), uint8(0b1000_0001), 0.0, uint8(10), 1.0, 0.0, 0.0, 0.0, 0.0, false, []byte{1, 2})
	f.Add(uint8(9), uint8(0b0000_1010), 0.0, uint8(9), 1e-3, 0.0, 10.0, 0.0, 0.0, false, make([]byte, 16))
	f.Add(uint8(2), uint8(0b0000_1110), 0.0, uint8(9), 0.01, 5.0, 0.0, 300.0, 0.0, false, []byte{0x10, 0x27, 0xe8, 0x03})
	f.Fuzz(func(t *testing.T, typ, kinds uint8, fill float64, fillType uint8, scale, offset, vmin, vmax, missing float64, unsigned bool, data []byte) {
		vt := fuzzType(typ)
		v := &VarInfo{Name: "lwp", Type: vt, Dims: []string{"y", "x"}, Shape: []int{1, 1}}
		// The attribute types: same as the variable unless fillType says otherwise
		// (bit 7 of kinds picks a foreign _FillValue type; the unpacked type of
		// scale_factor is float or double).
		ft := vt
		if kinds&0x80 != 0 {
			ft = fuzzType(fillType)
		}
		unpacked := Double
		if fillType&1 == 1 {
			unpacked = Float
		}
		validT := vt
		if fillType&2 == 2 {
			validT = unpacked
		}
		if kinds&0x01 != 0 || kinds&0x80 != 0 {
			v.Attrs = append(v.Attrs, fuzzAttr("_FillValue", ft, fill))
		}
		if kinds&0x02 != 0 {
			v.Attrs = append(v.Attrs, fuzzAttr("scale_factor", unpacked, scale))
		}
		if kinds&0x04 != 0 {
			v.Attrs = append(v.Attrs, fuzzAttr("add_offset", unpacked, offset))
		}
		switch {
		case kinds&0x08 != 0:
			v.Attrs = append(v.Attrs, fuzzAttr("valid_range", validT, vmin, vmax))
		case kinds&0x30 != 0:
			if kinds&0x10 != 0 {
				v.Attrs = append(v.Attrs, fuzzAttr("valid_min", validT, vmin))
			}
			if kinds&0x20 != 0 {
				v.Attrs = append(v.Attrs, fuzzAttr("valid_max", validT, vmax))
			}
		}
		if kinds&0x40 != 0 {
			v.Attrs = append(v.Attrs, fuzzAttr("missing_value", vt, missing, fill))
		}
		if unsigned {
			v.Attrs = append(v.Attrs, Attr{Name: "_Unsigned", Type: Char, Value: "true"})
		}
		conv := Converter{From: "g m-2", To: "kg m-2", Factor: 1e-3}
		d, err := NewDecoder("fuzz.nc", v, conv)
		if err != nil {
			var ve *VarError
			if !errors.As(err, &ve) || ve.File != "fuzz.nc" || ve.Var != "lwp" {
				t.Fatalf("error %v is not a VarError naming fuzz.nc and lwp", err)
			}
			if !errors.Is(err, ErrDecode) && !errors.Is(err, ErrLayout) {
				t.Fatalf("error %v wraps neither ErrDecode nor ErrLayout", err)
			}
			if !strings.Contains(err.Error(), "expected") {
				t.Fatalf("error %q does not say what was expected", err)
			}
			return
		}
		if !vt.Numeric() {
			t.Fatalf("decoder built for a %s variable", vt)
		}
		if d.Describe() == "" {
			t.Fatal("empty Describe")
		}
		st := vt
		if d.Unsigned {
			st = vt.unsignedOf()
		}
		n := len(data) / st.Size()
		if n == 0 {
			d.Decode(nil, nil) // must not touch the pointer
			return
		}
		buf := make([]uint64, (n*st.Size()+7)/8)
		copy(unsafe.Slice((*byte)(unsafe.Pointer(&buf[0])), n*st.Size()), data)
		raw := newTyped(st, n)
		copyRawTo(raw, unsafe.Pointer(&buf[0]), n*st.Size())
		stored := toFloat64s(raw)
		dst := make([]float64, n)
		d.Decode(dst, unsafe.Pointer(&buf[0]))
		for i, x := range stored {
			missing := x != x || (d.HasFill && x == d.Fill)
			for _, m := range d.Missing {
				missing = missing || x == m
			}
			u := x*d.Scale + d.Offset
			test := x // the valid range applies to stored values, or unpacked ones
			if d.ValidUnpacked {
				test = u
			}
			if d.zeroTol > 0 && math.Abs(u) < d.zeroTol { // the packed zero (see Decoder)
				u = 0
			}
			if (d.HasMin && test < d.Min) || (d.HasMax && test > d.Max) {
				missing = true
			}
			got := dst[i]
			if missing {
				if !math.IsNaN(got) {
					t.Fatalf("value %d: stored %v is missing (%s) but decoded to %v", i, x, d.Describe(), got)
				}
				continue
			}
			want := conv.Convert(u)
			switch {
			case math.IsNaN(want):
				// Inf*0 and the like: only NaN is right.
				if !math.IsNaN(got) {
					t.Fatalf("value %d: stored %v decoded to %v, want NaN (%s)", i, x, got, d.Describe())
				}
			case math.IsInf(want, 0):
				if got != want && !(math.IsInf(got, 0) || math.Abs(got) > math.MaxFloat64/4) {
					t.Fatalf("value %d: stored %v decoded to %v, want %v (%s)", i, x, got, want, d.Describe())
				}
			default:
				tol := 1e-12 * (math.Abs(x*d.Scale*conv.Factor) + math.Abs(d.Offset*conv.Factor) + math.Abs(want))
				if !(math.Abs(got-want) <= tol) && !math.IsInf(got, 0) {
					t.Fatalf("value %d: stored %v decoded to %v, want %v (%s)", i, x, got, want, d.Describe())
				}
			}
		}
	})
}
