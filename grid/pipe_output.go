package grid

import (
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"time"
	"unsafe"
)

// OutType is the stored type of an output variable.
type OutType int

// Output types. Int16 (with Scale/Offset) is for CF-packed values; Int8, Int16
// and Int32 without scale are for signed codes. Uint32 is for bit-mask flag
// variables (CF §3.5, flag_masks): an unsigned type makes every bit a plain
// bit, so `qc & mask` works in any reader. The classic data model has no
// unsigned types, so an output with a Uint32 variable is a netCDF-4 (not
// classic-model) file; see doc/netcdf.md#flag-types.
const (
	Float32 OutType = iota + 1
	Int16
	Int8
	Int32
	Uint32
)

func (t OutType) nc() Type {
	switch t {
	case Int16:
		return Short
	case Int8:
		return Byte
	case Int32:
		return Int
	case Uint32:
		return Uint
	}
	return Float
}

// OutputVar describes one new variable on LWP's grid. Fill is in the stored
// domain (the packed value for packed Int16). ValidMin/ValidMax are in the
// unpacked units of the variable; valid_range is written (packed for packed
// variables) only when ValidMin < ValidMax. Scale = 0 means no packing. Empty text
// fields and nil FlagMasks are left out. Quantize > 0 (Float32 only) keeps that
// many significant decimal digits with libnetcdf's Granular BitRound and adds the
// CF 1.12 quantization metadata. NoFill leaves _FillValue out (a flag variable
// that holds a value in every column, which CF allows without one); its Fill is
// then never written and must not be needed (NaN encodes as 0).
type OutputVar struct {
	Name                string
	StandardName        string
	LongName            string
	Units               string
	Type                OutType
	Fill                float64
	ValidMin, ValidMax  float64
	Scale, Offset       float64
	FlagMasks           []int
	FlagMeanings        string
	AncillaryVariables  string
	CellMethods         string
	Comment             string
	References          string
	CoverageContentType string
	Quantize            int
	NoFill              bool
}

// Mode selects what the output holds besides the new variables.
type Mode int

// The output modes.
const (
	// NewFile: LWP's dimensions and the coordinate variables of Layout.Coords
	// (coordinates, bounds, grid_mapping) plus the new variables.
	NewFile Mode = iota
	// CopyInput: every dimension, variable and global attribute of the input,
	// plus the new variables.
	CopyInput
)

// Global is a global text attribute.
type Global struct{ Name, Value string }

// WriteOptions configure Create. Start from DefaultWriteOptions: the zero value
// has Shuffle off.
type WriteOptions struct {
	Mode    Mode
	Deflate int  // deflate level 1-9; 0 means the default (1); -1 switches compression off
	Shuffle bool // byte shuffle before deflate
	Force   bool // overwrite an existing output (never an input)
	// Globals are written last (they replace copied ones of the same name).
	Globals []Global
	// Writer is WriterDirect (the default, "") or WriterLibnetcdf: how the new
	// variables' chunks are filtered and stored (doc/netcdf.md#direct-chunks).
	// The direct writer falls back to libnetcdf where it does not apply.
	Writer string
	// HistoryLine is prepended to the input's history (newest first), e.g.
	// "2026-01-01T00:00:00Z: warmrain v0.1.0 process in.nc -o out.nc".
	HistoryLine string
}

// DefaultWriteOptions: new file, deflate 1, shuffle on.
func DefaultWriteOptions() WriteOptions { return WriteOptions{Deflate: 1, Shuffle: true} }

// Output is an output being written to a temporary file; Commit renames it into
// place, Abort removes it.
type Output struct {
	Path string // final name
	Tmp  string // temporary file in the same folder

	in      *Input
	vars    []OutputVar
	varIDs  []int
	types   []Type
	plan    *slabPlan
	ncid    int
	open    bool
	done    bool
	chunks  []int
	deflate int
	shuffle bool
	replace bool // Force: the final rename may replace a file

	direct     *directOut // the direct chunk writer, nil for libnetcdf's
	wantDirect bool
	writerNote string // why the libnetcdf writer was used when direct was asked for
}

// Writer says which writer stores the new variables (WriterDirect or
// WriterLibnetcdf) and, for libnetcdf when the direct one was asked for, why.
func (o *Output) Writer() (string, string) {
	if o.direct != nil {
		return WriterDirect, ""
	}
	return WriterLibnetcdf, o.writerNote
}

// Vars returns the output variables.
func (o *Output) Vars() []OutputVar { return o.vars }

// Chunks returns the chunk sizes of the new variables.
func (o *Output) Chunks() []int { return o.chunks }

// Create starts an output for input in. It refuses to write into an input
// (ErrInputOverwrite) and an existing path unless Force (ErrExists). The file is
// netCDF-4 classic model unless a variable needs netCDF-4 (Uint32, Quantize, exact
// copies of non-classic types); see the package documentation for what is kept.
func Create(path string, in *Input, vars []OutputVar, opt WriteOptions) (*Output, error) {
	if isURL(path) {
		return nil, &VarError{File: path, Problem: "outputs must be plain file paths (no URLs)", Err: ErrLayout}
	}
	if err := checkNotInput(path, in); err != nil {
		return nil, err
	}
	if st, err := os.Stat(path); err == nil {
		if st.IsDir() {
			return nil, &VarError{File: path, Problem: "is a directory; expected an output file name", Err: ErrExists}
		}
		if !opt.Force {
			return nil, &VarError{File: path, Problem: "already exists; refusing to overwrite it without force", Err: ErrExists}
		}
	}
	if err := checkVars(path, in, vars, opt); err != nil {
		return nil, err
	}
	dir := filepath.Dir(path)
	if st, err := os.Stat(dir); err != nil || !st.IsDir() {
		return nil, &VarError{File: path, Problem: fmt.Sprintf("output folder %q does not exist", dir), Err: os.ErrNotExist}
	}
	tmp, err := createTemp(path)
	if err != nil {
		return nil, err
	}
	o := &Output{Path: path, Tmp: tmp, in: in, vars: vars, replace: opt.Force}
	o.deflate = opt.Deflate
	if o.deflate == 0 {
		o.deflate = 1
	}
	o.shuffle = opt.Shuffle && o.deflate > 0
	for _, v := range vars {
		o.types = append(o.types, v.Type.nc())
	}
	o.plan = newPlan(in, o.types, in.opt.SlabBytes)
	switch opt.Writer {
	case "", WriterDirect:
		o.wantDirect = true
	case WriterLibnetcdf:
	default:
		return nil, &VarError{File: path, Problem: fmt.Sprintf("unknown writer %q; expected %s or %s", opt.Writer, WriterDirect, WriterLibnetcdf), Err: ErrLayout}
	}
	if e := onIO(func() { err = o.defineIO(opt) }); e != nil {
		err = e
	}
	if err != nil {
		var ve *VarError
		if errors.As(err, &ve) {
			err = noSpace(ve, dir) // also for copy errors, which name the input
		}
		o.Abort()
		return nil, err
	}
	return o, nil
}

func checkNotInput(path string, in *Input) error {
	files := []string{in.Path}
	if in.Info != nil && len(in.Info.Files) > 0 {
		files = in.Info.Files // every file of a scene joined with +
	}
	abs, _ := filepath.Abs(path)
	for _, f := range files {
		inAbs, _ := filepath.Abs(f)
		if !isURL(f) && abs == inAbs {
			return &VarError{File: path, Problem: "is the input file; refusing to write into an input", Err: ErrInputOverwrite}
		}
		if st, err := os.Stat(path); err == nil && !isURL(f) {
			if ist, err := os.Stat(f); err == nil && os.SameFile(st, ist) {
				return &VarError{File: path, Problem: fmt.Sprintf("is the same file as the input %s; refusing to write into an input", f), Err: ErrInputOverwrite}
			}
		}
	}
	return nil
}

func checkVars(path string, in *Input, vars []OutputVar, opt WriteOptions) error {
	seen := map[string]bool{}
	for _, c := range in.Layout.Coords {
		seen[baseName(c)] = true
	}
	if opt.Mode == CopyInput {
		for _, v := range in.Info.Vars {
			seen[v.Base()] = true
		}
	}
	for _, v := range vars {
		bad := func(f string, a ...any) error {
			return &VarError{File: path, Var: v.Name, Problem: fmt.Sprintf(f, a...), Err: ErrLayout}
		}
		switch {
		case v.Name == "":
			return &VarError{File: path, Problem: "an output variable has no name", Err: ErrLayout}
		case seen[v.Name]:
			return bad("is already a variable of the output (copied from the input or listed twice)")
		case v.Type < Float32 || v.Type > Uint32:
			return bad("has no type; expected Float32, Int16, Int8, Int32 or Uint32")
		case v.NoFill && (v.Type == Float32 || v.Scale != 0):
			return bad("has no _FillValue (NoFill); expected an unpacked integer flag variable")
		case v.Quantize < 0 || v.Quantize > 7 || (v.Quantize > 0 && v.Type != Float32):
			return bad("Quantize = %d; expected 0 (off) or 1-7 significant digits on a Float32 variable", v.Quantize)
		case len(v.FlagMasks) > 0 && len(strings.Fields(v.FlagMeanings)) != len(v.FlagMasks):
			return bad("has %d flag_masks but %d flag_meanings; expected one word per mask", len(v.FlagMasks), len(strings.Fields(v.FlagMeanings)))
		case v.Units != "":
			if _, err := ParseUnits(v.Units); err != nil {
				return &VarError{File: path, Var: v.Name, Problem: err.Error(), Err: err}
			}
		}
		seen[v.Name] = true
	}
	return nil
}

// defineIO runs on the I/O thread.
func (o *Output) defineIO(opt WriteOptions) error {
	in := o.in
	werr := func(v string, err error, what string) error {
		return &VarError{File: o.Path, Var: v, Problem: what + ": " + err.Error(), Err: err}
	}
	mode := modeNetCDF4Classic
	for _, v := range o.vars {
		if v.Type == Uint32 {
			mode = modeNetCDF4 // the classic model has no unsigned types
		}
		if v.Quantize > 0 {
			// libnetcdf 4.9.0: nc_def_var_quantize in a classic-model file makes
			// nc_enddef fail ("Operation not allowed in data mode"); a netCDF-4 file
			// (holding only classic types) works.
			mode = modeNetCDF4
		}
	}
	// Which variables to copy.
	var copyVars []*VarInfo
	if opt.Mode == CopyInput {
		for i := range in.Info.Vars {
			copyVars = append(copyVars, &in.Info.Vars[i])
		}
	} else {
		for _, c := range in.Layout.Coords {
			copyVars = append(copyVars, in.Info.Var(c))
		}
	}
	// Copies are exact: a variable of a type the classic model lacks (an int64
	// time coordinate, unsigned ids) makes the output a netCDF-4 file that
	// keeps the type, instead of a conversion to double.
	exact := false
	for _, v := range copyVars {
		if t, ok := classicType(v.Type); ok && t != v.Type {
			exact, mode = true, modeNetCDF4
		}
	}
	ncid, err := ncCreate(o.Tmp, mode)
	if err != nil {
		return werr("", err, "cannot create")
	}
	o.ncid, o.open = ncid, true
	// Dimensions, in the input's order.
	need := map[int]bool{}
	for _, d := range in.Layout.Dims {
		need[d.ID] = true
	}
	for _, v := range copyVars {
		for _, id := range v.DimIDs {
			need[id] = true
		}
	}
	outDim := map[int]int{}
	unlimUsed := false
	for _, d := range in.Info.Dims {
		if !need[d.ID] && opt.Mode != CopyInput {
			continue
		}
		n := d.Len
		if d.Unlimited && !unlimUsed {
			n, unlimUsed = 0, true
		}
		id, err := ncDefDim(ncid, baseName(d.Name), n)
		if err != nil {
			return werr("", err, "cannot define dimension "+d.Name)
		}
		outDim[d.ID] = id
	}
	nd := len(in.Layout.Dims)
	o.chunks = outputChunks(o.plan, nd, o.types)
	// Copied variables.
	type copyJob struct {
		v     *VarInfo
		outID int
		t     Type
	}
	var jobs []copyJob
	ta := in.Layout.Time
	for _, v := range copyVars {
		t, ok := classicType(v.Type)
		if exact && ok {
			t = v.Type
		}
		retime := ta != nil && v.Name == ta.Var && ta.CFUnits != ta.Units
		if retime && ta.Absolute {
			t = Double
		}
		if !ok {
			return &VarError{File: in.Path, Var: v.Name, Problem: "has type string, which a netCDF-4 classic model output cannot hold; use the new-file mode", Err: ErrLayout}
		}
		dims := make([]int, len(v.DimIDs))
		for i, id := range v.DimIDs {
			dims[i] = outDim[id]
		}
		id, err := ncDefVar(ncid, baseName(v.Name), t, dims)
		if err != nil {
			return werr(v.Name, err, "cannot define")
		}
		if len(dims) > 0 {
			onGrid := o.plan.trailing(v, in.Layout)
			var chunks []int
			switch {
			case onGrid:
				chunks = make([]int, len(dims))
				for i := range chunks {
					chunks[i] = 1
				}
				k := min(2, nd)
				copy(chunks[len(dims)-k:], o.chunks[nd-k:])
				for i := range chunks {
					chunks[i] = min(chunks[i], max(1, v.Shape[i]))
				}
			case v.Chunks != nil:
				chunks = slices.Clone(v.Chunks)
			}
			if chunks != nil {
				if err := ncDefChunking(ncid, id, chunks); err != nil {
					return werr(v.Name, err, "cannot set chunking")
				}
				if o.deflate > 0 {
					if err := ncDefDeflate(ncid, id, o.shuffle, o.deflate); err != nil {
						return werr(v.Name, err, "cannot set compression")
					}
				}
			}
		}
		attrs := v.Attrs
		if retime {
			attrs = retimeAttrs(v.Attrs, ta)
		}
		for _, a := range attrs {
			if strings.HasPrefix(a.Name, "_Quantize") || (a.Name == "_Unsigned" && t != v.Type) {
				continue
			}
			if err := putAttrConverted(ncid, id, flattenRefs(hdf4ToCF(v, a)), t); err != nil {
				return werr(v.Name, err, "cannot copy attribute "+a.Name)
			}
		}
		jobs = append(jobs, copyJob{v, id, t})
	}
	// New variables.
	lv := in.Info.Var(in.ref().Var)
	gridDims := make([]int, nd)
	for i, d := range in.Layout.Dims {
		gridDims[i] = outDim[d.ID]
	}
	quantContainer := false
	for k, v := range o.vars {
		t := o.types[k]
		id, err := ncDefVar(ncid, v.Name, t, gridDims)
		if err != nil {
			return werr(v.Name, err, "cannot define")
		}
		o.varIDs = append(o.varIDs, id)
		if err := ncDefChunking(ncid, id, o.chunks); err != nil {
			return werr(v.Name, err, "cannot set chunking")
		}
		if o.deflate > 0 {
			if err := ncDefDeflate(ncid, id, o.shuffle, o.deflate); err != nil {
				return werr(v.Name, err, "cannot set compression")
			}
		}
		if !v.NoFill {
			if err := ncDefFill(ncid, id, convertTyped([]float64{v.Fill}, t)); err != nil {
				return werr(v.Name, err, "cannot set _FillValue")
			}
		}
		if v.Quantize > 0 {
			if err := ncDefQuantize(ncid, id, v.Quantize); err != nil {
				return werr(v.Name, err, "cannot set quantization")
			}
			ncRedef(ncid) // 4.9.0 leaves define mode here; NC_EINDEFINE otherwise is fine
			quantContainer = true
		}
		if err := o.putVarAttrs(id, v, t, lv); err != nil {
			return werr(v.Name, err, "cannot write attributes")
		}
	}
	if quantContainer {
		id, err := ncDefVar(ncid, "quantization_info", Int, nil)
		if err != nil {
			return werr("quantization_info", err, "cannot define")
		}
		for _, a := range [][2]string{{"algorithm", "granular_bitround"}, {"implementation", "libnetcdf version " + LibraryVersion()}} {
			if err := ncPutAtt(ncid, id, a[0], Char, a[1]); err != nil {
				return werr("quantization_info", err, "cannot write attributes")
			}
		}
	}
	// Global attributes.
	if opt.Mode == CopyInput {
		for _, a := range in.Info.Globals {
			if err := putAttrConverted(ncid, globalID, a, 0); err != nil {
				return werr("", err, "cannot copy global attribute "+a.Name)
			}
		}
	}
	hist := opt.HistoryLine
	if a, ok := in.Info.Global("history"); ok {
		if old, _ := a.Text(); old != "" {
			if hist != "" {
				hist += "\n" + old
			} else {
				hist = old
			}
		}
	}
	globals := []Global{{"Conventions", "CF-1.13 ACDD-1.3"}, {"date_created", time.Now().UTC().Format(time.RFC3339)}}
	if hist != "" {
		globals = append(globals, Global{"history", hist})
	}
	globals = append(globals, opt.Globals...)
	for _, g := range globals {
		if err := ncPutAtt(ncid, globalID, g.Name, Char, g.Value); err != nil {
			return werr("", err, "cannot write global attribute "+g.Name)
		}
	}
	if err := ncEndDef(ncid); err != nil {
		return werr("", err, "cannot end define mode")
	}
	for _, j := range jobs {
		if ta != nil && j.v.Name == ta.Var && ta.Absolute {
			if err := copyTimeIO(in, j.v, ta, ncid, j.outID); err != nil {
				return err
			}
			continue
		}
		if err := copyDataIO(in, j.v, ncid, j.outID, j.t); err != nil {
			return err
		}
	}
	if o.wantDirect {
		if why := o.directApplies(); why != "" {
			o.writerNote = why
		} else if err := o.openDirectIO(); err != nil {
			if errors.Is(err, errDefinedClose) {
				return err
			}
			// The datasets are not what the workers would write: libnetcdf writes.
			o.writerNote = err.Error()
			if o.direct != nil {
				o.direct.closeIO()
				o.direct = nil
			}
			if o.ncid, err = ncOpenWrite(o.Tmp); err != nil {
				return werr("", err, "cannot reopen the defined output")
			}
			o.open = true
		} else {
			return nil
		}
	}
	for k, id := range o.varIDs {
		bytes, slots := outputCache(o.plan, o.chunks, o.types[k].Size())
		if err := ncSetVarChunkCache(ncid, id, bytes, slots, 1); err != nil {
			return werr("", err, "cannot set chunk cache")
		}
	}
	return nil
}

// outputChunks gives the chunks of the new variables: for tiles (slabs narrower
// than the grid) one slab, (1, ..., ry, rx), so that every chunk is written whole
// by one slab; a slab larger than 4 MiB is cut into an exact number of chunks
// along rows, or else columns. For blocks of whole rows (1, ..., ry, cx): the slab
// height and the widest column count keeping a chunk at most 4 MiB.
func outputChunks(p *slabPlan, nd int, types []Type) []int {
	if nd == 1 {
		return outputChunks(p, 2, types)[1:]
	}
	const limit = 4 << 20
	size := 4
	for _, t := range types {
		size = max(size, t.Size())
	}
	c := make([]int, nd)
	for i := range c {
		c[i] = 1
	}
	c[nd-2] = p.ry
	if p.rx < p.X {
		oy, ox := p.ry, p.rx
		for k := 1; oy*ox*size > limit && k <= p.ry; k++ {
			if p.ry%k == 0 {
				oy = p.ry / k
			}
		}
		for k := 1; oy*ox*size > limit && k <= p.rx; k++ {
			if p.rx%k == 0 {
				ox = p.rx / k
			}
		}
		c[nd-2], c[nd-1] = oy, ox
		return c
	}
	cx := p.X
	if k := (p.ry*p.X*size + (limit - 1)) / limit; k > 1 {
		cx = (p.X + k - 1) / k
	}
	c[nd-1] = cx
	return c
}

// outputCache sizes an output variable's chunk cache to hold the chunks of one
// slab: HDF5 compresses a chunk when it leaves the cache (or at close), so each
// chunk, written whole by one slab, is compressed once, when the next slab's
// chunks push it out.
func outputCache(p *slabPlan, chunks []int, size int) (bytes, slots int) {
	chunks = planChunks(chunks)
	nd := len(chunks)
	chunkBytes := size
	for _, c := range chunks {
		chunkBytes *= c
	}
	n := ((p.ry + chunks[nd-2] - 1) / chunks[nd-2]) * ((p.rx + chunks[nd-1] - 1) / chunks[nd-1])
	return n*chunkBytes + chunkBytes/8 + (64 << 10), max(521, 20*n+1)
}

func (o *Output) putVarAttrs(id int, v OutputVar, t Type, lwp *VarInfo) error {
	text := [][2]string{{"standard_name", v.StandardName}, {"long_name", v.LongName}, {"units", v.Units}}
	for _, a := range text {
		if a[1] != "" {
			if err := ncPutAtt(o.ncid, id, a[0], Char, a[1]); err != nil {
				return err
			}
		}
	}
	packed := v.Scale != 0
	if packed {
		if err := ncPutAtt(o.ncid, id, "scale_factor", Float, []float32{float32(v.Scale)}); err != nil {
			return err
		}
		if err := ncPutAtt(o.ncid, id, "add_offset", Float, []float32{float32(v.Offset)}); err != nil {
			return err
		}
	}
	if v.ValidMin < v.ValidMax {
		lo, hi := v.ValidMin, v.ValidMax
		if packed {
			lo, hi = (lo-v.Offset)/v.Scale, (hi-v.Offset)/v.Scale
			if lo > hi {
				lo, hi = hi, lo
			}
			lo, hi = math.Ceil(lo-1e-9), math.Floor(hi+1e-9)
		}
		if err := ncPutAtt(o.ncid, id, "valid_range", t, []float64{lo, hi}); err != nil {
			return err
		}
	}
	if len(v.FlagMasks) > 0 {
		m := make([]float64, len(v.FlagMasks))
		for i, x := range v.FlagMasks {
			m[i] = float64(x)
		}
		if err := ncPutAtt(o.ncid, id, "flag_masks", t, m); err != nil {
			return err
		}
	}
	coords := flattenPaths(lwp.Text("coordinates"))
	if L := o.in.Layout; coords == "" && L.LatLon2D && L.Lat != "" && L.Lon != "" {
		coords = baseName(L.Lon) + " " + baseName(L.Lat) // found without a coordinates attribute (findLatLon2D)
	}
	more := [][2]string{{"flag_meanings", v.FlagMeanings}, {"coordinates", coords}, {"grid_mapping", flattenPaths(lwp.Text("grid_mapping"))},
		{"ancillary_variables", v.AncillaryVariables}, {"cell_methods", v.CellMethods}, {"comment", v.Comment},
		{"references", v.References}, {"coverage_content_type", v.CoverageContentType}}
	if v.Quantize > 0 {
		more = append(more, [2]string{"quantization", "quantization_info"})
	}
	for _, a := range more {
		if a[1] != "" {
			if err := ncPutAtt(o.ncid, id, a[0], Char, a[1]); err != nil {
				return err
			}
		}
	}
	if v.Quantize > 0 {
		if err := ncPutAtt(o.ncid, id, "quantization_nsd", Int, []int32{int32(v.Quantize)}); err != nil {
			return err
		}
	}
	return nil
}

// copyDataIO copies a variable's data in blocks of at most 16 MiB (I/O thread).
func copyDataIO(in *Input, v *VarInfo, outNC, outID int, t Type) error {
	if !v.Type.Numeric() && v.Type != Char {
		return nil
	}
	n := v.Len()
	if n == 0 {
		return nil
	}
	nd := len(v.Shape)
	start := make([]uint64, nd)
	count := make([]uint64, nd)
	size := v.Type.Size()
	const limit = 16 << 20
	// Split along the first dimension whose trailing block fits.
	k, inner := nd, 1
	for k > 0 && inner*v.Shape[k-1]*size <= limit {
		k--
		inner *= v.Shape[k]
	}
	// Dimensions before k are iterated one by one (k-1 gets blocks).
	buf := make([]uint64, (limit+7)/8+1)
	var rec func(d int) error
	rec = func(d int) error {
		if d >= k-1 || k == 0 {
			step, dimLen := 1, 1
			if k > 0 {
				dimLen = v.Shape[k-1]
				step = max(1, limit/(inner*size))
			}
			for i := 0; i < dimLen; i += step {
				if k > 0 {
					start[k-1], count[k-1] = uint64(i), uint64(min(step, dimLen-i))
				}
				for j := k; j < nd; j++ {
					start[j], count[j] = 0, uint64(v.Shape[j])
				}
				m := 1
				for _, c := range count {
					m *= int(c)
				}
				p := unsafe.Pointer(&buf[0])
				if err := v.readIO(start, count, p); err != nil {
					return varErr(err, v.File, v.Name, "read failed while copying: %v", err)
				}
				if t != v.Type {
					raw := newTyped(v.Type, m)
					copyRawTo(raw, p, m*size)
					conv := convertTyped(raw, t)
					p = typedPtr(conv)
					if err := ncPutVara(outNC, outID, start, count, p); err != nil {
						return varErr(err, in.Path, v.Name, "write failed while copying: %v", err)
					}
					continue
				}
				if err := ncPutVara(outNC, outID, start, count, p); err != nil {
					return varErr(err, in.Path, v.Name, "write failed while copying: %v", err)
				}
			}
			return nil
		}
		for i := 0; i < v.Shape[d]; i++ {
			start[d], count[d] = uint64(i), 1
			if err := rec(d + 1); err != nil {
				return err
			}
		}
		return nil
	}
	return rec(0)
}

// retimeAttrs gives a time coordinate's attributes with CF units in place of the
// ones it was read from, saying so in its comment; the calendar of an absolute
// axis becomes proleptic_gregorian (the calendar its dates are in).
func retimeAttrs(attrs []Attr, ta *TimeAxis) []Attr {
	out := make([]Attr, 0, len(attrs)+1)
	note := fmt.Sprintf("units converted by warmrain from %q: %s", ta.Units, ta.Note)
	hasComment, hasCal := false, false
	for _, a := range attrs {
		switch a.Name {
		case "units":
			a = Attr{Name: "units", Type: Char, Value: ta.CFUnits}
		case "comment":
			if s, ok := a.Text(); ok {
				a = Attr{Name: "comment", Type: Char, Value: s + "\n" + note}
				hasComment = true
			}
		case "calendar":
			hasCal = true
			if ta.Absolute {
				a = Attr{Name: "calendar", Type: Char, Value: "proleptic_gregorian"}
			}
		case "_FillValue", "missing_value", "valid_min", "valid_max", "valid_range":
			if ta.Absolute {
				continue // in the old units
			}
		}
		out = append(out, a)
	}
	if ta.Absolute && !hasCal {
		out = append(out, Attr{Name: "calendar", Type: Char, Value: "proleptic_gregorian"})
	}
	if !hasComment {
		out = append(out, Attr{Name: "comment", Type: Char, Value: note})
	}
	return out
}

// copyTimeIO writes an absolute time axis converted to its CF units (I/O thread).
func copyTimeIO(in *Input, v *VarInfo, ta *TimeAxis, outNC, outID int) error {
	x, err := in.readAllIO(v)
	if err != nil {
		return err
	}
	for i := range x {
		x[i] = ta.CFValue(x[i])
	}
	if len(x) == 0 {
		return nil
	}
	start := make([]uint64, len(v.Shape))
	count := make([]uint64, len(v.Shape))
	for i, n := range v.Shape {
		count[i] = uint64(n)
	}
	if err := ncPutVara(outNC, outID, start, count, unsafe.Pointer(&x[0])); err != nil {
		return varErr(err, in.Path, v.Name, "write failed while copying the time axis: %v", err)
	}
	return nil
}

// encode converts columns [lo, hi) of an output slab to the stored type.
func encode(v *OutputVar, t Type, dst unsafe.Pointer, src []float64, lo, hi int) {
	switch t {
	case Float:
		d := unsafe.Slice((*uint32)(dst), hi)[lo:hi]
		fill := math.Float32bits(float32(v.Fill))
		for i, x := range src[lo:hi] {
			u := math.Float32bits(float32(x))
			if !(math.Abs(x) <= math.MaxFloat64) { // NaN or ±Inf (a select, not a branch)
				u = fill
			}
			d[i] = u
		}
	case Short:
		encodeInt(v, unsafe.Slice((*int16)(dst), hi), src, lo, hi, math.MinInt16, math.MaxInt16)
	case Byte:
		encodeInt(v, unsafe.Slice((*int8)(dst), hi), src, lo, hi, math.MinInt8, math.MaxInt8)
	case Int:
		encodeInt(v, unsafe.Slice((*int32)(dst), hi), src, lo, hi, math.MinInt32, math.MaxInt32)
	case Uint:
		encodeInt(v, unsafe.Slice((*uint32)(dst), hi), src, lo, hi, 0, math.MaxUint32)
	}
}

func encodeInt[T int8 | int16 | int32 | uint32](v *OutputVar, d []T, src []float64, lo, hi int, tmin, tmax float64) {
	fill := T(v.Fill)
	scale, off := v.Scale, v.Offset
	if scale == 0 {
		scale, off = 1, 0
	}
	inv := 1 / scale
	for i := lo; i < hi; i++ {
		x := src[i]
		if x != x {
			d[i] = fill
			continue
		}
		p := math.Round((x - off) * inv)
		if p < tmin || p > tmax {
			d[i] = fill
			continue
		}
		d[i] = T(p)
	}
}

// writeIO writes one slab of every output variable (I/O thread).
func (o *Output) writeIO(start, count []uint64, raw [][]uint64, index int) error {
	for k := range o.vars {
		if err := ncPutVara(o.ncid, o.varIDs[k], start, count, unsafe.Pointer(&raw[k][0])); err != nil {
			return noSpace(&VarError{File: o.Path, Var: o.vars[k].Name, Problem: fmt.Sprintf("write of slab %d failed: %v", index, err), Err: err}, filepath.Dir(o.Path))
		}
	}
	return nil
}

// Commit closes the temporary file, syncs it to disk and renames it into place.
func (o *Output) Commit() error {
	if o.done {
		return fmt.Errorf("%s: output already committed or aborted", o.Path)
	}
	var err error
	if o.open {
		if e := onIO(func() { err = ncClose(o.ncid) }); e != nil {
			err = e
		}
		o.open = false
	}
	if o.direct != nil {
		if e := onIO(func() { err = o.direct.closeIO() }); e != nil {
			err = e
		}
	}
	if err != nil {
		e := noSpace(&VarError{File: o.Path, Problem: "closing the output failed (disk full?): " + err.Error(), Err: err}, filepath.Dir(o.Path))
		o.Abort()
		return e
	}
	if f, e := os.Open(o.Tmp); e == nil {
		err = f.Sync()
		f.Close()
		if err != nil {
			o.Abort()
			return &VarError{File: o.Path, Problem: "sync failed: " + err.Error(), Err: err}
		}
	}
	if err := checkNotInput(o.Path, o.in); err != nil {
		o.Abort()
		return err
	}
	if err := placeFile(o.Tmp, o.Path, o.replace); err != nil {
		o.Abort()
		var ve *VarError
		if errors.As(err, &ve) {
			return err
		}
		return &VarError{File: o.Path, Problem: "cannot rename the temporary file into place: " + err.Error(), Err: err}
	}
	o.done = true
	if d, e := os.Open(filepath.Dir(o.Path)); e == nil {
		d.Sync()
		d.Close()
	}
	return nil
}

// Abort discards the output: the temporary file is closed and removed. It is safe
// to call more than once and after Commit (then it does nothing).
func (o *Output) Abort() error {
	if o.done {
		return nil
	}
	o.done = true
	if o.open {
		onIO(func() {
			if ncAbort(o.ncid) != nil {
				ncClose(o.ncid)
			}
		})
		o.open = false
	}
	if o.direct != nil {
		onIO(func() { o.direct.closeIO() })
	}
	// When a write failed (a full disk), libnetcdf/HDF5 cannot close the file and
	// keep its descriptor open: removing the name alone would not give the space
	// back until the process exits, and the next outputs of a batch would fail too.
	// Emptying our own temporary file first frees it.
	_ = os.Truncate(o.Tmp, 0)
	if err := os.Remove(o.Tmp); err != nil && !errors.Is(err, os.ErrNotExist) {
		return err
	}
	return nil
}

// flattenPaths drops the group paths of the names in a CF attribute listing
// variables: outputs are flat netCDF-4 classic files holding the variables of
// an input's groups by their plain names.
func flattenPaths(s string) string {
	if !strings.Contains(s, "/") {
		return s
	}
	f := strings.Fields(s)
	for i, x := range f {
		f[i] = baseName(x)
	}
	return strings.Join(f, " ")
}

// flattenRefs applies flattenPaths to the attributes that name variables.
func flattenRefs(a Attr) Attr {
	switch a.Name {
	case "coordinates", "bounds", "ancillary_variables", "grid_mapping", "cell_measures", "climatology":
		if s, ok := a.Text(); ok && strings.Contains(s, "/") {
			a.Value, a.Type = flattenPaths(s), Char
		}
	}
	return a
}
