package grid

import (
	"fmt"
	"math"
	"slices"
	"sync"
	"unsafe"
)

// ReadColumn reads one column of every bound input, at index (one entry per dimension of
// Layout.Dims, in that order), through the same raw read and Decoder as Process: the
// returned Slab has N = 1 and In[i][0] in canonical units (NaN = missing, FlagNaN for a
// flag code), Start the index and Count all ones.
func (in *Input) ReadColumn(index []int) (*Slab, error) {
	L := in.Layout
	if len(index) != len(L.Dims) {
		return nil, fmt.Errorf("%s: a column needs %d indices (%s), got %d", in.Path, len(L.Dims), dimNames(L.Dims), len(index))
	}
	for i, d := range L.Dims {
		if index[i] < 0 || index[i] >= d.Len {
			return nil, fmt.Errorf("%s: index %d on dimension %s is outside 0..%d", in.Path, index[i], d.Name, d.Len-1)
		}
	}
	p := newPlan(in, nil, in.opt.SlabBytes)
	buf := newInBuf(in, p)
	defer buf.release()
	nd := len(L.Dims)
	var lead, y, x int
	if p.oneD {
		x = index[0]
	} else {
		for i := 0; i < nd-2; i++ {
			lead = lead*L.Dims[i].Len + index[i]
		}
		y, x = index[nd-2], index[nd-1]
	}
	buf.setPos(p, 0, lead, y, 1, x, 1)
	var rerr error
	if e := onIO(func() { rerr = in.readIO(buf) }); e != nil {
		return nil, e
	}
	if rerr != nil {
		return nil, rerr
	}
	in.decode(buf, 0, 1)
	s := &Slab{Start: append([]int(nil), index...), Count: make([]int, nd), N: 1}
	for i := range s.Count {
		s.Count[i] = 1
	}
	for i, v := range buf.slab.In {
		if v != nil {
			s.In[i] = []float64{v[0]}
		}
	}
	return s, nil
}

func dimNames(ds []DimInfo) string {
	s := ""
	for i, d := range ds {
		if i > 0 {
			s += ", "
		}
		s += d.Name
	}
	return s
}

// EarthRadiusKm is the mean Earth radius used for distances between columns, km (the IUGG
// mean radius R_1 = 6371.0088 km, common practice).
const EarthRadiusKm = 6371.0088

// GreatCircleKm is the distance (km) between two points given in degrees, by the haversine
// formula on a sphere of radius EarthRadiusKm.
func GreatCircleKm(lat1, lon1, lat2, lon2 float64) float64 {
	r := math.Pi / 180
	s1 := math.Sin((lat2 - lat1) * r / 2)
	s2 := math.Sin((lon2 - lon1) * r / 2)
	h := s1*s1 + math.Cos(lat1*r)*math.Cos(lat2*r)*s2*s2
	return 2 * EarthRadiusKm * math.Asin(math.Sqrt(math.Min(1, h)))
}

// Place is a horizontal position of the layout: its indices on Layout.Y and Layout.X (Y is
// -1 for cells and a series, X -1 for a series), its latitude and longitude in degrees,
// and its great-circle distance (km) from the point asked for.
type Place struct {
	Y, X       int
	Lat, Lon   float64
	DistanceKm float64
}

// Nearest returns the horizontal position whose latitude and longitude (Layout.Lat and
// Layout.Lon: 1-D coordinates of a regular grid, 2-D ones of a curvilinear grid or swath,
// 1-D ones of cells) lie nearest to (lat, lon) degrees on the sphere; positions with a
// missing latitude or longitude are skipped. On a grid with 1-D coordinates the nearest
// longitude is the same on every row, so one pass over each axis finds it.
func (in *Input) Nearest(lat, lon float64) (Place, error) {
	L := in.Layout
	if L.Lat == "" || L.Lon == "" {
		return Place{}, fmt.Errorf("%s: no latitude and longitude found for the data's dimensions; give the column by its indices (--index)", in.Path)
	}
	read := func(name string) ([]float64, error) {
		v := in.Info.Var(name)
		dec, err := storedUnitsDecoder(in.Path, v)
		if err != nil {
			return nil, err
		}
		var raw []uint64
		var rerr error
		if e := onIO(func() { raw, rerr = readStoredRawIO(v) }); e != nil {
			return nil, e
		}
		if rerr != nil {
			return nil, rerr
		}
		out := make([]float64, v.Len())
		dec.Decode(out, unsafe.Pointer(&raw[0]))
		if L.LatLonRadians {
			for i := range out {
				out[i] *= 180 / math.Pi
			}
		}
		return out, nil
	}
	la, err := read(L.Lat)
	if err != nil {
		return Place{}, err
	}
	lo, err := read(L.Lon)
	if err != nil {
		return Place{}, err
	}
	best := Place{Y: -1, X: -1, DistanceKm: math.Inf(1)}
	try := func(y, x int, a, b float64) {
		if math.IsNaN(a) || math.IsNaN(b) {
			return
		}
		if d := GreatCircleKm(lat, lon, a, b); d < best.DistanceKm {
			best = Place{Y: y, X: x, Lat: a, Lon: b, DistanceKm: d}
		}
	}
	switch {
	case L.Shape == ShapeGrid && !L.LatLon2D && len(la) == L.Y.Len && len(lo) == L.X.Len:
		bx := -1
		for x, b := range lo {
			if math.IsNaN(b) {
				continue
			}
			if bx < 0 || lonGap(b, lon) < lonGap(lo[bx], lon) {
				bx = x
			}
		}
		if bx >= 0 {
			for y, a := range la {
				try(y, bx, a, lo[bx])
			}
		}
	case L.Shape == ShapeGrid && len(la) == L.Y.Len*L.X.Len && len(lo) == len(la):
		for i := range la {
			try(i/L.X.Len, i%L.X.Len, la[i], lo[i])
		}
	case L.Shape == ShapeCells && len(la) == L.X.Len && len(lo) == L.X.Len:
		for i := range la {
			try(-1, i, la[i], lo[i])
		}
	case len(la) == 1 && len(lo) == 1:
		try(-1, -1, la[0], lo[0])
	default:
		return Place{}, fmt.Errorf("%s: latitude %s and longitude %s do not match the data's horizontal dimensions; give the column by its indices (--index)", in.Path, L.Lat, L.Lon)
	}
	if math.IsInf(best.DistanceKm, 1) {
		return Place{}, fmt.Errorf("%s: every latitude or longitude is missing", in.Path)
	}
	return best, nil
}

// lonGap is the angular distance between two longitudes, degrees in [0, 180].
func lonGap(a, b float64) float64 {
	d := math.Mod(math.Abs(a-b), 360)
	return math.Min(d, 360-d)
}

// Stored returns what a CF reader gets back from an output file for the value x written
// as v: the value encoded to v's stored type as Process writes it (float32, or a packed
// integer) and decoded with the attributes Create writes (_FillValue, scale_factor and
// add_offset stored as float, valid_range); NaN where the file holds a fill value or a
// value outside valid_range. Quantization (Quantize) is not applied: the C library does it
// on write.
func (v *OutputVar) Stored(x float64) float64 {
	t := v.Type.nc()
	info := &VarInfo{Name: v.Name, Type: t}
	info.Attrs = append(info.Attrs, Attr{Name: "_FillValue", Type: t, Value: convertTyped([]float64{v.Fill}, t)})
	if v.Scale != 0 {
		info.Attrs = append(info.Attrs, Attr{Name: "scale_factor", Type: Float, Value: []float32{float32(v.Scale)}},
			Attr{Name: "add_offset", Type: Float, Value: []float32{float32(v.Offset)}})
	}
	if v.ValidMin < v.ValidMax {
		lo, hi := v.ValidMin, v.ValidMax
		if v.Scale != 0 {
			lo, hi = (lo-v.Offset)/v.Scale, (hi-v.Offset)/v.Scale
			if lo > hi {
				lo, hi = hi, lo
			}
			lo, hi = math.Ceil(lo-1e-9), math.Floor(hi+1e-9)
		}
		info.Attrs = append(info.Attrs, Attr{Name: "valid_range", Type: t, Value: convertTyped([]float64{lo, hi}, t)})
	}
	dec, err := NewDecoder("", info, Converter{Factor: 1})
	if err != nil {
		return math.NaN()
	}
	raw := make([]uint64, 2)
	encode(v, t, unsafe.Pointer(&raw[0]), []float64{x}, 0, 1)
	out := []float64{0}
	dec.Decode(out, unsafe.Pointer(&raw[0]))
	return out[0]
}

// sampleSlabBytes is the slab budget of Sample: small slabs, so that a sample costs little
// memory and reads little more than it keeps.
const sampleSlabBytes = 1 << 20

// sampleMaxColumns bounds the columns Sample reads, in multiples of n: a role missing in
// most columns does not make it read the whole input.
const sampleMaxColumns = 20

// RoleSample is what a sample of an input's values says about one bound role: the median
// of the valid values (canonical units), how many were read, and the fraction outside the
// role's Plausible range.
type RoleSample struct {
	Role    Role
	Median  float64
	Valid   int
	Outside float64
}

// Sample reads slabs from the start of the input (in processing order) until every bound
// role with a Plausible range has n valid values, sampleMaxColumns*n columns were read or
// the input ends, and summarises them
// (RoleSample, in role order). Flag codes and missing values are not counted.
func (in *Input) Sample(n int) ([]RoleSample, error) {
	p := newPlan(in, nil, min(in.opt.SlabBytes, sampleSlabBytes))
	buf := newInBuf(in, p)
	defer buf.release()
	var vals [NumRoles][]float64
	want := func() bool {
		for i, b := range in.bindings {
			if b != nil && b.Role.Rule().Plausible != [2]float64{} && len(vals[i]) < n {
				return true
			}
		}
		return false
	}
	errEnough := fmt.Errorf("enough")
	read := 0
	err := in.eachDecoded(p, buf, func(int, int, int, int, int) error {
		read += buf.slab.N
		in.appendSample(&vals, &buf.slab, 0, buf.slab.N, n)
		if !want() || read >= sampleMaxColumns*n {
			return errEnough
		}
		return nil
	})
	if err != nil && err != errEnough {
		return nil, err
	}
	return in.summarise(&vals), nil
}

// appendSample appends the valid values of columns [lo, hi) of slab s to vals, for each
// bound role with a Plausible range, up to n values per role.
func (in *Input) appendSample(vals *[NumRoles][]float64, s *Slab, lo, hi, n int) {
	for i, b := range in.bindings {
		if b == nil || b.Role.Rule().Plausible == [2]float64{} || s.In[i] == nil {
			continue
		}
		for _, x := range s.In[i][lo:hi] {
			if len(vals[i]) >= n {
				break
			}
			if !math.IsNaN(x) && !math.IsInf(x, 0) {
				vals[i] = append(vals[i], x)
			}
		}
	}
}

// summarise gives the RoleSample of each role with sampled values, in role order.
func (in *Input) summarise(vals *[NumRoles][]float64) []RoleSample {
	var out []RoleSample
	for i, b := range in.bindings {
		if b == nil || len(vals[i]) == 0 {
			continue
		}
		v := vals[i]
		slices.Sort(v)
		pr := b.Role.Rule().Plausible
		outside := 0
		for _, x := range v {
			if x < pr[0] || x > pr[1] {
				outside++
			}
		}
		med := v[len(v)/2]
		if len(v)%2 == 0 {
			med = (v[len(v)/2-1] + v[len(v)/2]) / 2
		}
		out = append(out, RoleSample{Role: b.Role, Median: med, Valid: len(v), Outside: float64(outside) / float64(len(v))})
	}
	return out
}

// SampleCollector takes the sample of Sample from the slabs a run decodes anyway, so that
// a run does not read the start of its input twice: its ComputeFunc passes each block to
// Add (from any goroutine), and Result summarises, after the run, the first n valid values
// of each role in processing order (slab, then column) within the first
// sampleMaxColumns*n columns, whatever order the blocks were computed in.
type SampleCollector struct {
	in     *Input
	n      int
	mu     sync.Mutex
	blocks []sampleBlock
}

// sampleBlock is what one block gave: its place in processing order and its values.
type sampleBlock struct {
	slab, lo, cols int
	vals           [NumRoles][]float64
}

// NewSampleCollector returns a collector of n values per role for a run over in.
func (in *Input) NewSampleCollector(n int) *SampleCollector {
	return &SampleCollector{in: in, n: n}
}

// Add keeps the sample values of columns [lo, hi) of slab s, when they lie within the first
// sampleMaxColumns*n columns of the run (slabs before s counted at s's size).
func (c *SampleCollector) Add(s *Slab, lo, hi int) {
	if int64(s.Index)*int64(s.N)+int64(lo) >= int64(sampleMaxColumns*c.n) {
		return
	}
	b := sampleBlock{slab: s.Index, lo: lo, cols: hi - lo}
	c.in.appendSample(&b.vals, s, lo, hi, c.n)
	c.mu.Lock()
	c.blocks = append(c.blocks, b)
	c.mu.Unlock()
}

// Result summarises the values kept (RoleSample, in role order).
func (c *SampleCollector) Result() []RoleSample {
	c.mu.Lock()
	defer c.mu.Unlock()
	slices.SortFunc(c.blocks, func(a, b sampleBlock) int {
		if a.slab != b.slab {
			return a.slab - b.slab
		}
		return a.lo - b.lo
	})
	var vals [NumRoles][]float64
	read := 0
	for _, b := range c.blocks {
		if read >= sampleMaxColumns*c.n {
			break
		}
		read += b.cols
		for i, v := range b.vals {
			vals[i] = append(vals[i], v[:min(len(v), c.n-len(vals[i]))]...)
		}
	}
	return c.in.summarise(&vals)
}
