package procfile

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/warmrain/warmrain/cmd/internal/summary"
	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/microphys"
)

// Names in processed files: rows of microphys.OutputDecls (MustOutput fails at start
// when the declaration no longer has them).
var (
	LWPName  = MustOutput("liquid_water_path").Name
	lwpStd   = MustOutput("liquid_water_path").StandardName
	NdName   = MustOutput("droplet_number").Name
	POPName  = MustOutput("drizzle_probability").Name
	RateName = MustOutput("cloud_base_drizzle_rate").Name
	SurfName = MustOutput("surface_drizzle_rate").Name
	BaseName = MustOutput("cloud_base_height").Name
)

const qcName = microphys.QCOutputName

// MustOutput returns the declaration of a processed file's variable; it panics (a
// programming error) when microphys.OutputDecls has no such output.
func MustOutput(name string) *microphys.OutputDecl {
	d := microphys.OutputByName(name)
	if d == nil {
		panic("procfile: microphys.OutputDecls has no output " + name)
	}
	return d
}

// ScreenWords are the flag_meanings words of warm_rain_qc whose columns are left out:
// the screening bits of microphys.QCFlags and microphys.InputQCFlags.
var ScreenWords = func() []string {
	var w []string
	for _, f := range microphys.QCFlags {
		if f.Screen {
			w = append(w, f.Name)
		}
	}
	for _, f := range microphys.InputQCFlags {
		if f.Screen {
			w = append(w, f.Name)
		}
	}
	return w
}()

// siUnitsOf gives the SI units the statistics use for a known diagnostic
// (microphys.OutputDecls), or false.
func siUnitsOf(name string) (string, bool) {
	if d := microphys.OutputByName(name); d != nil {
		return d.SIUnits, true
	}
	return "", false
}

// Close closes the file.
func (p *File) Close() error { return p.R.Close() }

// File is one open processed file.
type File struct {
	Path     string
	R        *grid.Reader
	Info     *grid.FileInfo
	Dims     []string // of the diagnostics, any of them horizontal (see grid.HorizontalOf)
	Hz       grid.Horizontal
	Shape    []int // the lengths of Dims
	Steps    []int // indices of the dimensions that are not horizontal, file order
	Times    *grid.TimeAxis
	TimeVals []float64 // seconds since 1970-01-01 in Calendar along Dims[Hz.Time]
	TimeBnds []float64 // the time bounds (2 per step, like TimeVals), nil when the file has none
	Calendar string    // grid.CalendarKind of the time axis ("" without times)
	NoMaps   string    // why this file gives no maps ("" when it does)
	window   summary.Window
	Scene    summary.Scene
	LWP      string // the liquid water path variable
	Rate     string // cloud-base drizzle rate, "" when absent
	Surf     string // surface drizzle rate, "" when absent
	Base     string // cloud-base height, "" when absent
	QC       string // the QC flag variable, "" when absent
	QCScreen uint32 // the file's screening bits
	// QCMissing and QCShape are the bits input_missing and gamma_shape_assumed (for the
	// maps' no-data classes and the gamma-shape note of their titles; Step sets
	// QCMissingInput and QCShapeAssumed).
	QCMissing, QCShape uint32
	Vars               map[string]Var

	reasonBits []uint32 // per ScreenWords entry: the file's bits of that word
}

// Var is a diagnostic with its conversion to SI.
type Var struct {
	Name, Units, Long, Std string
	Conv                   grid.Converter
}

// Open opens a processed file and binds its variables. The window matters only
// for files in non-standard calendars (see scan).
func Open(path string, window summary.Window) (*File, error) {
	r, err := grid.OpenReader(path)
	if err != nil {
		return nil, err
	}
	p := &File{Path: path, R: r, Info: r.Info(), Vars: map[string]Var{}, window: window}
	if err := p.bind(); err != nil {
		r.Close()
		return nil, err
	}
	return p, nil
}

// IsCoordinate reports whether v is a latitude or longitude (by standard_name,
// units or name): a coordinate, never a diagnostic to summarise.
func IsCoordinate(v *grid.VarInfo) bool {
	switch strings.ToLower(v.Text("standard_name")) {
	case "latitude", "longitude", "grid_latitude", "grid_longitude":
		return true
	}
	switch strings.ToLower(v.Text("units")) {
	case "degrees_north", "degree_north", "degrees_n", "degrees_east", "degree_east", "degrees_e":
		return true
	}
	switch strings.ToLower(v.Name) {
	case "lat", "lon", "latitude", "longitude", "nav_lat", "nav_lon":
		return true
	}
	return false
}

// Errf returns a layout error naming the file and variable v.
func (p *File) Errf(v, format string, a ...any) error {
	return &grid.VarError{File: p.Path, Var: v, Problem: fmt.Sprintf(format, a...), Err: grid.ErrLayout}
}

func (p *File) bind() error {
	fi := p.Info
	nd := fi.Var(NdName)
	pop := fi.Var(POPName)
	if nd == nil || pop == nil {
		return &grid.VarError{File: p.Path, Problem: fmt.Sprintf("has no %s or no %s; expected a file written by 'warmrain process'", NdName, POPName), Err: grid.ErrNoVariable}
	}
	p.Dims = nd.Dims
	if len(p.Dims) < 1 {
		return p.Errf(NdName, "is a scalar; expected the dimensions of the processed input")
	}
	// LWP: liquid_water_path, else the one variable with the LWP standard name.
	if fi.Var(LWPName) != nil {
		p.LWP = LWPName
	} else {
		var c []string
		for _, v := range fi.Vars {
			sn := strings.Fields(v.Text("standard_name"))
			if len(sn) == 1 && sn[0] == lwpStd && !strings.Contains(v.Text("cell_methods"), "standard_deviation") {
				c = append(c, v.Name)
			}
		}
		switch len(c) {
		case 0:
			return &grid.VarError{File: p.Path, Problem: fmt.Sprintf("has no liquid water path: no variable %s and none with standard_name %s; reprocess the input with this warmrain, which writes it", LWPName, lwpStd), Err: grid.ErrNoVariable}
		case 1:
			p.LWP = c[0]
		default:
			return &grid.VarError{File: p.Path, Problem: fmt.Sprintf("has several variables with standard_name %s (%s); expected one", lwpStd, strings.Join(c, ", ")), Err: grid.ErrAmbiguous}
		}
	}
	if fi.Var(RateName) != nil {
		p.Rate = RateName
	}
	if fi.Var(SurfName) != nil {
		p.Surf = SurfName
	}
	if fi.Var(BaseName) != nil {
		p.Base = BaseName
	}
	// Every float diagnostic on the grid is mapped (not the 2-D coordinates of a swath,
	// whether or not the coordinates attribute names them).
	coords := strings.Fields(nd.Text("coordinates"))
	for _, v := range fi.Vars {
		if v.Name == qcName || (v.Type != grid.Float && v.Type != grid.Double) || !slices.Equal(v.Dims, p.Dims) || slices.Contains(coords, v.Name) || IsCoordinate(&v) {
			continue
		}
		vi, err := p.siVar(&v)
		if err != nil {
			return err
		}
		p.Vars[v.Name] = vi
	}
	for _, need := range []string{p.LWP, NdName, POPName} {
		if _, ok := p.Vars[need]; !ok {
			return p.Errf(need, "has dimensions %v (type %s); expected float values on the grid %v of %s", fi.Var(need).Dims, fi.Var(need).Type, p.Dims, NdName)
		}
	}
	if q := fi.Var(qcName); q != nil {
		if !slices.Equal(q.Dims, p.Dims) {
			return p.Errf(qcName, "has dimensions %v; expected %v", q.Dims, p.Dims)
		}
		masks, _ := q.Attr("flag_masks")
		words := strings.Fields(q.Text("flag_meanings"))
		m := masks.Float64s()
		if len(m) != len(words) || len(m) == 0 {
			return p.Errf(qcName, "has %d flag_masks and %d flag_meanings words; expected one word per mask (CF §3.5)", len(m), len(words))
		}
		p.reasonBits = make([]uint32, len(ScreenWords))
		for i, w := range words {
			switch w {
			case "input_missing":
				p.QCMissing |= uint32(int64(m[i]))
			case "gamma_shape_assumed":
				p.QCShape |= uint32(int64(m[i]))
			}
			for k, s := range ScreenWords {
				if w == s {
					p.QCScreen |= uint32(int64(m[i]))
					p.reasonBits[k] |= uint32(int64(m[i]))
				}
			}
		}
		p.QC = qcName
	}
	return p.scan()
}

// siVar finds the conversion of a diagnostic to the units the statistics use.
func (p *File) siVar(v *grid.VarInfo) (Var, error) {
	units := v.Text("units")
	vi := Var{Name: v.Name, Units: units, Long: v.Text("long_name"), Std: v.Text("standard_name"), Conv: grid.Converter{From: units, To: units, Factor: 1}}
	want, known := siUnitsOf(v.Name)
	if v.Name == p.LWP {
		want, known = siUnitsOf(LWPName)
	}
	if !known {
		return vi, nil
	}
	c, err := grid.NewConverter(units, want)
	if err != nil && want == "kg m-2 s-1" { // the cloud-base and surface drizzle rates
		// A depth rate of liquid water: 1 mm of water is 1 kg m-2 (rho_w = 1000 kg m-3, derived).
		if c2, err2 := grid.NewConverter(units, "mm s-1"); err2 == nil {
			c, err = c2, nil
			c.To = want
		}
	}
	if err != nil {
		return vi, &grid.VarError{File: p.Path, Var: v.Name, Problem: fmt.Sprintf("units %q: expected units convertible to %s (%v)", units, want, err), Err: grid.ErrUnits}
	}
	vi.Units, vi.Conv = want, c
	return vi, nil
}

// scan finds the horizontal dimensions, reads the coordinates (if any) and the
// time axis (if any). A grid with latitude and longitude gives maps; cells (a mesh
// or a list of sites), a series, and a grid without coordinates give the binned
// statistics only, and p.NoMaps says why.
func (p *File) scan() error {
	fi := p.Info
	v := fi.Var(NdName)
	p.Hz = grid.HorizontalOf(fi, v)
	h := p.Hz
	p.Shape = append([]int(nil), v.Shape...)
	s := summary.Scene{NY: 1, NX: 1, NT: 1}
	switch len(h.Dims) {
	case 2:
		s.NY, s.NX = p.Shape[h.Dims[0]], p.Shape[h.Dims[1]]
	case 1:
		s.NX = p.Shape[h.Dims[0]]
	}
	for i := range p.Dims {
		if !containsInt(h.Dims, i) {
			p.Steps = append(p.Steps, i)
		}
	}
	read := func(name string) ([]float64, error) {
		d, _, err := p.R.Read(name, nil, nil)
		return d, err
	}
	if h.Lat != "" {
		lat, err := read(h.Lat)
		if err != nil {
			return err
		}
		lon, err := read(h.Lon)
		if err != nil {
			return err
		}
		if h.Radians {
			for i := range lat {
				lat[i] *= 180 / math.Pi
			}
			for i := range lon {
				lon[i] *= 180 / math.Pi
			}
		}
		lv, lo := fi.Var(h.Lat), fi.Var(h.Lon)
		switch {
		case h.LatLonRank == 1 && h.Shape == grid.ShapeGrid && lv.Dims[0] == p.Dims[h.Dims[0]]:
			s.Lat, s.Lon = lat, lon
		case h.LatLonRank == 1 && h.Shape == grid.ShapeGrid: // (lon, lat) order: per-cell coordinates
			s.Lat, s.Lon = make([]float64, s.NY*s.NX), make([]float64, s.NY*s.NX)
			for y := 0; y < s.NY; y++ {
				for x := 0; x < s.NX; x++ {
					s.Lat[y*s.NX+x], s.Lon[y*s.NX+x] = lat[x], lon[y]
				}
			}
		case h.LatLonRank == 2 && !slices.Equal(lv.Dims, []string{p.Dims[h.Dims[0]], p.Dims[h.Dims[1]]}) || !slices.Equal(lv.Dims, lo.Dims):
			p.NoMaps = fmt.Sprintf("its latitude %s has dimensions %v, not those of the diagnostics' horizontal grid", h.Lat, lv.Dims)
		default: // 2-D swath, 1-D per cell, scalars of a site
			s.Lat, s.Lon = lat, lon
		}
	}
	switch {
	case p.NoMaps != "":
	case h.Shape == grid.ShapeCells:
		p.NoMaps = fmt.Sprintf("its columns lie along the single horizontal dimension %s (an unstructured mesh or a list of sites), which has no (y, x) grid to map", p.Dims[h.Dims[0]])
	case h.Shape == grid.ShapeSeries:
		p.NoMaps = "it is a time series at one site (no horizontal dimension)"
	case s.Lat == nil:
		p.NoMaps = "it has no latitude and longitude (no coordinate variables of its horizontal dimensions, none named by the coordinates attribute)"
	}
	if h.Time >= 0 {
		td := p.Dims[h.Time]
		tv := fi.Var(td)
		ta, err := grid.ParseTimeAxis(fi, tv)
		if err != nil {
			return err
		}
		kind, cerr := grid.CalendarKind(ta.Calendar)
		if cerr != nil { // a calendar without dates: the statistics use every step
			if !p.window.IsZero() {
				return p.Errf(td, "%v; --from and --to need a calendar with dates", cerr)
			}
			p.Scene = s
			return s.Check()
		}
		t, err := read(td)
		if err != nil {
			return err
		}
		for i := range t {
			if t[i], err = ta.CalendarSeconds(t[i]); err != nil {
				return p.Errf(td, "%v", err)
			}
		}
		p.Calendar = kind
		if bn := tv.Text("bounds"); bn != "" {
			if bv := fi.Var(bn); bv != nil && len(bv.Shape) == 2 && bv.Shape[0] == len(t) && bv.Shape[1] == 2 {
				b, err := read(bn)
				if err != nil {
					return err
				}
				for i := range b {
					if b[i], err = ta.CalendarSeconds(b[i]); err != nil {
						return p.Errf(bn, "%v", err)
					}
				}
				p.TimeBnds = b
			} else {
				return p.Errf(td, "names the bounds %q, which is not a (%d, 2) variable of the file", bn, len(t))
			}
		}
		p.Times, p.TimeVals = ta, t
	}
	if err := s.Check(); err != nil {
		return p.Errf(NdName, "%v", err)
	}
	p.Scene = s
	return nil
}

func containsInt(a []int, x int) bool {
	for _, e := range a {
		if e == x {
			return true
		}
	}
	return false
}

// Block is a run of steps: one index on every non-horizontal dimension but the
// innermost, where it covers [Lo, Lo+N).
type Block struct {
	Index  []int // per dimension (horizontal ones unused)
	Lo, N  int
	Inner  int // the dimension of the run (-1: no step dimensions)
	Number int
}

// Blocks calls fn for runs of steps of at most 64 Ki values each (or one step),
// so that a long series is read in a few blocks with bounded memory.
func (p *File) Blocks(fn func(b Block) error) error {
	cells := p.Scene.Cells()
	if len(p.Steps) == 0 {
		return fn(Block{Index: make([]int, len(p.Dims)), N: 1, Inner: -1})
	}
	inner := p.Steps[len(p.Steps)-1]
	run := max(1, (1<<16)/cells)
	outer := p.Steps[:len(p.Steps)-1]
	idx := make([]int, len(p.Dims))
	k := 0
	var rec func(j int) error
	rec = func(j int) error {
		if j == len(outer) {
			for lo := 0; lo < p.Shape[inner]; lo += run {
				b := Block{Index: append([]int(nil), idx...), Lo: lo, N: min(run, p.Shape[inner]-lo), Inner: inner, Number: k}
				k++
				if err := fn(b); err != nil {
					return err
				}
			}
			return nil
		}
		for i := 0; i < p.Shape[outer[j]]; i++ {
			idx[outer[j]] = i
			if err := rec(j + 1); err != nil {
				return err
			}
		}
		return nil
	}
	return rec(0)
}

// BlockTimes gives the time of each step of b (nil without a time axis).
func (p *File) BlockTimes(b Block) []float64 {
	if p.TimeVals == nil {
		return nil
	}
	t := make([]float64, b.N)
	for i := range t {
		if b.Inner == p.Hz.Time {
			t[i] = p.TimeVals[b.Lo+i]
		} else {
			t[i] = p.TimeVals[b.Index[p.Hz.Time]]
		}
	}
	return t
}

// ReadBlock reads variable name over Block b, in (step, cell) order.
func (p *File) ReadBlock(name string, b Block) ([]float64, error) {
	nd := len(p.Dims)
	start := make([]int, nd)
	count := make([]int, nd)
	for i := range p.Dims {
		switch {
		case containsInt(p.Hz.Dims, i):
			count[i] = p.Shape[i]
		case i == b.Inner:
			start[i], count[i] = b.Lo, b.N
		default:
			start[i], count[i] = b.Index[i], 1
		}
	}
	d, _, err := p.R.Read(name, start, count)
	if err != nil {
		return nil, err
	}
	// Already in (step, cell) order when the horizontal dimensions come after the
	// run's dimension; otherwise reorder.
	ordered := true
	for _, hd := range p.Hz.Dims {
		if b.Inner > hd {
			ordered = false
		}
	}
	if ordered {
		return d, nil
	}
	out := make([]float64, len(d))
	cells := p.Scene.Cells()
	m := make([]int, nd) // multi-index within the hyperslab, file order
	for k := range d {
		step, cell := 0, 0
		if b.Inner >= 0 {
			step = m[b.Inner]
		}
		for _, hd := range p.Hz.Dims {
			cell = cell*p.Shape[hd] + m[hd]
		}
		out[step*cells+cell] = d[k]
		for i := nd - 1; i >= 0; i-- {
			if m[i]++; m[i] < count[i] {
				break
			}
			m[i] = 0
		}
	}
	return out, nil
}

// Bits of the per-column QC of Step besides bit 0 (screened), which the statistics
// ignore (summary.Options.QCMask = 1).
const (
	QCMissingInput = 2 // screened for a missing input
	QCShapeAssumed = 4 // valid, with the gamma shape of --gamma-shape (no LWP standard deviation)
)

// Step reads Block b of the named diagnostics, in SI, with screened columns set
// to NaN. It returns the fields and the per-column QC (bit 0: screened; see
// QCMissingInput and QCShapeAssumed).
func (p *File) Step(b Block, names []string) (map[string][]float64, []uint16, error) {
	d, qc, _, err := p.StepAll(b, names)
	return d, qc, err
}

// StepReasons is Step returning, per column, why it was screened: bit k set when
// the column has the QC bit of ScreenWords[k] (0 = kept). The file's own
// flag_masks and flag_meanings give the bits, so files with different QC layouts
// give the same reasons.
func (p *File) StepReasons(b Block, names []string) (map[string][]float64, []uint32, error) {
	d, _, reasons, err := p.StepAll(b, names)
	return d, reasons, err
}

// StepAll is Step returning both the per-column QC of Step and the screening reasons
// of StepReasons.
func (p *File) StepAll(b Block, names []string) (map[string][]float64, []uint16, []uint32, error) {
	n := b.N * p.Scene.Cells()
	qc := make([]uint16, n)
	reasons := make([]uint32, n)
	if p.QC != "" {
		q, err := p.ReadBlock(p.QC, b)
		if err != nil {
			return nil, nil, nil, err
		}
		for i, v := range q {
			// A missing flag (fill) carries no screening information.
			if math.IsNaN(v) {
				continue
			}
			bits := uint32(int64(v))
			if bits&p.QCScreen == 0 {
				if bits&p.QCShape != 0 {
					qc[i] |= QCShapeAssumed
				}
				continue
			}
			qc[i] = 1
			if bits&p.QCMissing != 0 {
				qc[i] |= QCMissingInput
			}
			for k, m := range p.reasonBits {
				if bits&m != 0 {
					reasons[i] |= 1 << k
				}
			}
		}
	}
	out := map[string][]float64{}
	for _, nm := range names {
		if _, done := out[nm]; done || nm == "" {
			continue
		}
		vi, ok := p.Vars[nm]
		if !ok {
			return nil, nil, nil, p.Errf(nm, "is missing; the first file has it (all files need the same diagnostics)")
		}
		d, err := p.ReadBlock(nm, b)
		if err != nil {
			return nil, nil, nil, err
		}
		for i := range d {
			if qc[i]&1 != 0 {
				d[i] = math.NaN()
			} else {
				d[i] = vi.Conv.Convert(d[i])
			}
		}
		out[nm] = d
	}
	return out, qc, reasons, nil
}
