package grid

import (
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"os"
)

// classicExpectedSize parses the header of a netCDF classic file (CDF-1,
// CDF-2 or CDF-5; see the netCDF "classic format specification" in the NUG)
// and returns the file size the header implies: the end of the last fixed
// variable, or of the last record. ok is false when the file is not a
// classic file, is streamed, or has a variable too large for its vsize
// field (then no size can be checked). libnetcdf reads past the end of a
// truncated classic file as zeros, so this is the only way to notice one.
func classicExpectedSize(r io.ReaderAt, size int64) (expected int64, ok bool, err error) {
	p := &cdfParser{r: r, size: size}
	magic := p.bytes(4)
	if p.err != nil || string(magic[:3]) != "CDF" {
		return 0, false, nil
	}
	switch magic[3] {
	case 1:
		p.offBytes, p.cntBytes = 4, 4
	case 2:
		p.offBytes, p.cntBytes = 8, 4
	case 5:
		p.offBytes, p.cntBytes = 8, 8
	default:
		return 0, false, nil
	}
	numrecs := p.count()
	streaming := p.cntBytes == 4 && numrecs == 0xFFFFFFFF
	// dimensions
	var dimLens []int64
	if tag, n := p.list(); tag == tagDimension {
		for i := int64(0); i < n && p.err == nil; i++ {
			p.name()
			dimLens = append(dimLens, p.count())
		}
	}
	p.attrs()
	var fixedEnd, recBegin, recSize int64 = 0, -1, 0
	big := false
	if tag, n := p.list(); tag == tagVariable {
		for i := int64(0); i < n && p.err == nil; i++ {
			p.name()
			nd := p.count()
			record := false
			for d := int64(0); d < nd && p.err == nil; d++ {
				id := p.count()
				if d == 0 && id >= 0 && id < int64(len(dimLens)) && dimLens[id] == 0 {
					record = true
				}
			}
			p.attrs()
			p.uint(4) // nc_type
			vsize := p.uint(p.cntBytes)
			begin := p.uint(p.offBytes)
			if p.cntBytes == 4 && vsize == 0xFFFFFFFF {
				big = true
			}
			if record {
				if recBegin < 0 || begin < recBegin {
					recBegin = begin
				}
				recSize += vsize
			} else if end := begin + vsize; end > fixedEnd {
				fixedEnd = end
			}
		}
	}
	if p.err != nil {
		return 0, false, fmt.Errorf("classic header: %w", p.err)
	}
	if big || streaming {
		return 0, false, nil
	}
	expected = fixedEnd
	if recBegin >= 0 && numrecs > 0 {
		if end := recBegin + numrecs*recSize; end > expected {
			expected = end
		}
	}
	return expected, true, nil
}

const (
	tagDimension = 0x0A
	tagVariable  = 0x0B
	tagAttribute = 0x0C
)

type cdfParser struct {
	r                  io.ReaderAt
	size, off          int64
	offBytes, cntBytes int
	err                error
}

func (p *cdfParser) bytes(n int64) []byte {
	if p.err != nil {
		return make([]byte, n)
	}
	if n < 0 || p.off+n > p.size || n > 1<<26 {
		p.err = errors.New("header runs past the end of the file")
		return make([]byte, max(n, 0))
	}
	b := make([]byte, n)
	if _, err := p.r.ReadAt(b, p.off); err != nil {
		p.err = err
	}
	p.off += n
	return b
}

func (p *cdfParser) uint(n int) int64 {
	b := p.bytes(int64(n))
	if n == 4 {
		return int64(binary.BigEndian.Uint32(b))
	}
	v := binary.BigEndian.Uint64(b)
	if v > 1<<62 {
		p.err = errors.New("implausible size in header")
	}
	return int64(v)
}

func (p *cdfParser) count() int64 { return p.uint(p.cntBytes) }

func (p *cdfParser) list() (tag, n int64) {
	tag = p.uint(4)
	n = p.count()
	if tag == 0 && n == 0 {
		return 0, 0
	}
	return tag, n
}

func (p *cdfParser) name() {
	n := p.count()
	p.bytes((n + 3) &^ 3)
}

func (p *cdfParser) attrs() {
	tag, n := p.list()
	if tag != tagAttribute {
		return
	}
	for i := int64(0); i < n && p.err == nil; i++ {
		p.name()
		t := Type(p.uint(4))
		cnt := p.count()
		sz := int64(t.Size())
		if sz == 0 {
			p.err = fmt.Errorf("attribute of unknown type %d", t)
			return
		}
		p.bytes((cnt*sz + 3) &^ 3)
	}
}

// checkClassicSize returns an error naming the file when a classic file is
// shorter than its header says.
func checkClassicSize(path string, size int64) error {
	f, err := os.Open(path)
	if err != nil {
		return nil // libnetcdf will report it
	}
	defer f.Close()
	want, ok, err := classicExpectedSize(f, size)
	if err != nil {
		return &VarError{File: path, Problem: "is a netCDF classic file whose header is damaged or cut short (" + err.Error() + ")", Err: ErrNotNetCDF}
	}
	// The last record of a lone byte or short record variable is not padded.
	if ok && size+3 < want {
		return &VarError{File: path, Problem: fmt.Sprintf("is truncated: %d bytes, but its netCDF classic header describes %d; expected a complete file (copy it again)", size, want), Err: ErrNotNetCDF}
	}
	return nil
}
