package grid

import (
	"fmt"
	"math"
	"slices"
	"strings"
	"unsafe"
)

// OpenOptions configure Open.
type OpenOptions struct {
	// Overrides bind roles to named variables (and optionally declare units).
	Overrides []Override
	// OverrideHint is how a user writes an override, quoted in error messages
	// (for example `--input ROLE=VARNAME[:UNITS]`). Default "override
	// ROLE=VARNAME[:UNITS]".
	OverrideHint string
	// SlabBytes is the memory budget of one slab: the float64 buffers of every
	// bound input and every output of one slab together. Default DefaultSlabBytes.
	SlabBytes int
}

// DefaultSlabBytes is the default slab budget (the pipeline keeps three slabs).
const DefaultSlabBytes = 32 << 20

// Binding says which variable plays a role, and why.
type Binding struct {
	Role         Role
	Var          string
	StandardName string
	UnitsGiven   string // the units attribute, or the units an override declared
	UnitsFrom    string // "attribute" or "override"
	Canonical    string // units in memory
	Conv         Converter
	Reason       string
	Type         Type
	Packing      string // what the decoder does, in words
	Chunks       []int  // nil when contiguous
	Deflate      int
	Decoder      *Decoder
	File         string // the file holding Var (one of Info.Files)

	varID int
	vi    *VarInfo // the variable, with its source
}

// Layout is the grid shared by every bound input (LWP's dimensions).
type Layout struct {
	Dims    []DimInfo // LWP's dimensions, slowest first
	Leading []DimInfo // all but the last two
	Y, X    DimInfo   // the spatial dimensions (the last two)
	// Lat and Lon name the latitude and longitude variables: 1-D coordinate
	// variables of Y and X, or 2-D (Y, X) auxiliary coordinates named by LWP's
	// coordinates attribute. Empty when none was found.
	Lat, Lon      string
	LatLon2D      bool
	LatDescending bool
	GridMapping   string // grid_mapping container variable, or ""
	// Coords lists every variable an output keeps: coordinate variables of the
	// dimensions, auxiliary coordinates, their bounds, the grid_mapping variable.
	Coords []string
	// Columns is the number of grid columns (product of all dimension lengths).
	Columns int64
}

// Input is an open input file with its roles bound. It holds a libnetcdf handle
// until Close.
type Input struct {
	Path   string
	Format Format
	Info   *FileInfo
	Layout Layout

	opt      OpenOptions
	bindings [NumRoles]*Binding
	ncid     int // root ncid of the first file when it is netCDF (see store.go for the others)
	files    []*storeFile
	open     bool
}

// Bindings returns the bound roles in role order.
func (in *Input) Bindings() []Binding {
	var out []Binding
	for _, b := range in.bindings {
		if b != nil {
			out = append(out, *b)
		}
	}
	return out
}

// Binding returns the binding of a role, or false if the role is absent.
func (in *Input) Binding(r Role) (Binding, bool) {
	if i := r.Index(); i >= 0 && in.bindings[i] != nil {
		return *in.bindings[i], true
	}
	return Binding{}, false
}

// Has reports whether a role is bound.
func (in *Input) Has(r Role) bool { _, ok := in.Binding(r); return ok }

// Close releases the file.
func (in *Input) Close() error {
	if !in.open {
		return nil
	}
	in.open = false
	var err error
	if e := onIO(func() {
		for _, f := range in.files {
			if cerr := f.closeIO(); cerr != nil && err == nil {
				err = cerr
			}
		}
		if in.Info != nil {
			in.Info.detach()
		}
	}); e != nil {
		return e
	}
	if err != nil {
		return fmt.Errorf("%s: close: %w", in.Path, err)
	}
	return nil
}

// Open opens an input (a netCDF-3 or netCDF-4 file, or an NCZarr URL such as
// file:///abs/store#mode=nczarr,file), binds the roles, builds the decoders and
// checks the layout. The file stays open until Close.
func Open(path string, opt OpenOptions) (*Input, error) {
	if opt.OverrideHint == "" {
		opt.OverrideHint = "override ROLE=VARNAME[:UNITS]"
	}
	if opt.SlabBytes <= 0 {
		opt.SlabBytes = DefaultSlabBytes
	}
	files := SceneFiles(path)
	if err := checkScene(files); err != nil {
		return nil, err
	}
	in := &Input{Path: path, opt: opt, ncid: -1}
	var err error
	if e := onIO(func() {
		in.Info, in.files, err = openSceneIO(files)
		if err != nil {
			return
		}
		in.open = true
		in.ncid = in.files[0].nc
		in.Format = in.Info.Format
		if err = in.bind(); err != nil {
			return
		}
		err = in.layoutIO()
	}); e != nil {
		err = e
	}
	if err != nil {
		in.Close()
		return nil, err
	}
	return in, nil
}

func splitStandardName(s string) (name string, modifiers []string) {
	f := strings.Fields(s)
	if len(f) == 0 {
		return "", nil
	}
	return f[0], f[1:]
}

func isSDMethod(cm string) bool {
	return strings.Contains(cm, "standard_deviation") || strings.Contains(cm, "variance")
}

// candidate variables: numeric, at least 2-D, not a coordinate variable.
func (in *Input) dataVars() []*VarInfo {
	var out []*VarInfo
	for i := range in.Info.Vars {
		v := &in.Info.Vars[i]
		if !v.Type.Numeric() || len(v.Dims) < 2 {
			continue
		}
		out = append(out, v)
	}
	return out
}

func names(vs []*VarInfo) string {
	s := make([]string, len(vs))
	for i, v := range vs {
		s[i] = v.Name
		if sn := v.Text("standard_name"); sn != "" {
			s[i] += " (standard_name " + sn + ")"
		}
	}
	return strings.Join(s, ", ")
}

type cand struct {
	v      *VarInfo
	reason string
}

// bind runs on the I/O thread (it reads nothing but metadata already in Info).
func (in *Input) bind() error {
	bound := map[string]Role{}
	over := map[Role]Override{}
	for _, o := range in.opt.Overrides {
		if _, dup := over[o.Role]; dup {
			return fmt.Errorf("%w: role %s given twice", ErrOverride, o.Role)
		}
		over[o.Role] = o
	}
	for i, rule := range RoleRules {
		var chosen cand
		units, unitsFrom := "", "attribute"
		if o, ok := over[rule.Role]; ok {
			v, many := in.Info.lookup(o.Var)
			if len(many) > 1 {
				return varErr(ErrAmbiguous, in.Path, o.Var, "named by override %s is in several groups (%s); expected one: give its group path, e.g. %s=%s",
					o, strings.Join(many, ", "), o.Role, many[0])
			}
			if v == nil {
				return varErr(ErrNoVariable, in.Path, o.Var, "named by override %s does not exist in the file; the file has %s", o, varNames(in.Info))
			}
			chosen = cand{v, "explicit override " + o.String()}
			if o.Units != "" {
				units, unitsFrom = o.Units, "override"
			}
		} else {
			cands := in.byStandardName(rule, bound)
			if len(cands) == 0 {
				cands = in.byCommonName(rule, bound)
			}
			if len(cands) > 1 {
				vs := make([]*VarInfo, len(cands))
				for k, c := range cands {
					vs[k] = c.v
				}
				return &VarError{File: in.Path, Problem: fmt.Sprintf("%d variables could be the %s (%s): %s; choose one with %s, e.g. %s=%s",
					len(cands), rule.Description, rule.Role, names(vs), in.opt.OverrideHint, rule.Role, cands[0].v.Name), Err: ErrAmbiguous}
			}
			if len(cands) == 0 {
				if rule.Required {
					return &VarError{File: in.Path, Problem: fmt.Sprintf("no variable for the %s (%s): searched standard_name %s and the names %s (case-insensitive); name it with %s",
						rule.Description, rule.Role, searchedSN(rule), strings.Join(rule.CommonNames, ", "), in.opt.OverrideHint), Err: ErrNoVariable}
				}
				continue
			}
			chosen = cands[0]
		}
		v := chosen.v
		if r, dup := bound[v.Name]; dup {
			return varErr(ErrAmbiguous, in.Path, v.Name, "is bound to both %s and %s; bind each role to its own variable with %s", r, rule.Role, in.opt.OverrideHint)
		}
		if unitsFrom == "attribute" {
			a, ok := v.Attr("units")
			if ok {
				s, isText := a.Text()
				if !isText {
					return varErr(ErrUnits, in.Path, v.Name, "units attribute has type %s; expected text convertible to %q", a.Type, rule.Units)
				}
				units = strings.TrimSpace(s)
			}
			if units == "" {
				return varErr(ErrUnits, in.Path, v.Name, "(%s) has no units attribute; expected units convertible to %q; declare them with %s, e.g. %s=%s:%s",
					rule.Role, rule.Units, in.opt.OverrideHint, rule.Role, v.Name, exampleUnits(rule.Role))
			}
		}
		conv, err := NewConverter(units, rule.Units)
		if err != nil {
			return varErr(ErrUnits, in.Path, v.Name, "(%s) has units %q (%s); expected units convertible to %q: %v; if the attribute is wrong, declare the units with %s=%s:UNITS",
				rule.Role, units, unitsFrom, rule.Units, err, rule.Role, v.Name)
		}
		dec, err := NewDecoder(in.Path, v, conv)
		if err != nil {
			return err
		}
		in.bindings[i] = &Binding{Role: rule.Role, Var: v.Name, StandardName: v.Text("standard_name"), UnitsGiven: units,
			UnitsFrom: unitsFrom, Canonical: rule.Units, Conv: conv, Reason: chosen.reason, Type: v.Type,
			Packing: dec.Describe(), Chunks: v.Chunks, Deflate: v.Deflate, Decoder: dec, varID: v.ID, vi: v, File: v.File}
		bound[v.Name] = rule.Role
	}
	return nil
}

func exampleUnits(r Role) string {
	switch r {
	case RoleLWP, RoleLWPSD:
		return "g m-2"
	case RoleRe:
		return "um"
	case RoleCTP:
		return "hPa"
	}
	return CanonicalUnits(r)
}

func searchedSN(rule RoleRule) string {
	if rule.Role == RoleLWPSD {
		return strings.Join(lwpNames, " or ") + " with cell_methods standard_deviation, or named in the LWP's ancillary_variables with a standard_error modifier"
	}
	return strings.Join(rule.StandardNames, ", ")
}

func (in *Input) byStandardName(rule RoleRule, bound map[string]Role) []cand {
	var out []cand
	if rule.Role == RoleLWPSD {
		seen := map[string]bool{}
		for _, v := range in.dataVars() {
			name, mods := splitStandardName(v.Text("standard_name"))
			if slices.Contains(lwpNames, name) && len(mods) == 0 && isSDMethod(v.Text("cell_methods")) {
				out = append(out, cand{v, fmt.Sprintf("standard_name %s with cell_methods %q", name, v.Text("cell_methods"))})
				seen[v.Name] = true
			}
		}
		if lb := in.bindings[RoleLWP.Index()]; lb != nil {
			lv := in.Info.Var(lb.Var)
			for _, anc := range strings.Fields(lv.Text("ancillary_variables")) {
				v := in.Info.Resolve(lv, anc)
				if v == nil || seen[v.Name] || !v.Type.Numeric() {
					continue
				}
				name, mods := splitStandardName(v.Text("standard_name"))
				if slices.Contains(lwpNames, name) && (slices.Contains(mods, "standard_error") || slices.Contains(mods, "standard_deviation")) {
					out = append(out, cand{v, fmt.Sprintf("named in %s's ancillary_variables with standard_name %q", lb.Var, v.Text("standard_name"))})
				}
			}
		}
		return out
	}
	for _, v := range in.dataVars() {
		if _, b := bound[v.Name]; b {
			continue
		}
		name, mods := splitStandardName(v.Text("standard_name"))
		if !slices.Contains(rule.StandardNames, name) || len(mods) > 0 {
			continue
		}
		if rule.Role == RoleLWP && isSDMethod(v.Text("cell_methods")) {
			continue
		}
		out = append(out, cand{v, "standard_name " + name})
	}
	return out
}

func (in *Input) byCommonName(rule RoleRule, bound map[string]Role) []cand {
	var out []cand
	for _, v := range in.dataVars() {
		if _, b := bound[v.Name]; b {
			continue
		}
		for _, n := range rule.CommonNames {
			if strings.EqualFold(v.Base(), n) {
				r := fmt.Sprintf("variable name %q is a common name of the %s", v.Name, rule.Description)
				if sn := v.Text("standard_name"); sn != "" {
					r += fmt.Sprintf(" (its standard_name %q is not one the table maps to %s)", sn, rule.Role)
				}
				out = append(out, cand{v, r})
				break
			}
		}
	}
	return out
}

func dimsString(v *VarInfo) string {
	parts := make([]string, len(v.Dims))
	for i := range v.Dims {
		parts[i] = fmt.Sprintf("%s=%d", v.Dims[i], v.Shape[i])
	}
	return "(" + strings.Join(parts, ", ") + ")"
}

var roleLabel = map[Role]string{RoleLWP: "LWP", RoleRe: "r_e", RoleTau: "tau", RoleCTT: "CTT", RoleCTP: "CTP", RoleCTH: "CTH",
	RoleCloudFraction: "cloud fraction", RoleLWPSD: "LWP standard deviation"}

// layoutIO runs on the I/O thread.
func (in *Input) layoutIO() error {
	lb := in.bindings[RoleLWP.Index()]
	lv := in.Info.Var(lb.Var)
	if len(lv.Dims) < 2 {
		return varErr(ErrLayout, in.Path, lv.Name, "has dimensions %s; expected at least two (..., y, x)", dimsString(lv))
	}
	for _, b := range in.bindings {
		if b == nil || b.Role == RoleLWP {
			continue
		}
		v := in.Info.Var(b.Var)
		if !slices.Equal(v.DimIDs, lv.DimIDs) {
			if v.File != lv.File {
				return varErr(ErrLayout, v.File, v.Name, "is on another grid than the LWP: LWP %s in %s has dimensions %s but %s in %s has %s; files joined with + must share one grid (the same dimensions in the same order)",
					lv.Name, lv.File, dimsString(lv), v.Name, v.File, dimsString(v))
			}
			return varErr(ErrLayout, in.Path, v.Name, "LWP and %s are on different grids: LWP %s has dimensions %s but %s has %s; expected the same dimensions in the same order",
				roleLabel[b.Role], lv.Name, dimsString(lv), v.Name, dimsString(v))
		}
	}
	L := &in.Layout
	L.Columns = 1
	for _, id := range lv.DimIDs {
		var d DimInfo
		for _, x := range in.Info.Dims {
			if x.ID == id {
				d = x
			}
		}
		if d.Len == 0 {
			return varErr(ErrLayout, in.Path, lv.Name, "dimension %q has length 0; expected at least one value (an unlimited dimension with no records?)", d.Name)
		}
		L.Dims = append(L.Dims, d)
		L.Columns *= int64(d.Len)
	}
	n := len(L.Dims)
	L.Leading, L.Y, L.X = L.Dims[:n-2], L.Dims[n-2], L.Dims[n-1]
	add := func(name string) {
		if name != "" && in.Info.Var(name) != nil && !slices.Contains(L.Coords, name) {
			L.Coords = append(L.Coords, name)
		}
	}
	// 1-D coordinate variables of LWP's dimensions.
	for _, d := range L.Dims {
		v := in.Info.Var(d.Name)
		if v == nil || len(v.Dims) != 1 || v.Dims[0] != d.Name {
			continue
		}
		desc, err := in.checkMonotonicIO(v)
		if err != nil {
			return err
		}
		add(v.Name)
		if d.Name == L.Y.Name && isLat(v) {
			L.Lat, L.LatDescending = v.Name, desc
		}
		if d.Name == L.X.Name && isLon(v) {
			L.Lon = v.Name
		}
	}
	// Auxiliary coordinates named by LWP's coordinates attribute.
	for _, ref := range strings.Fields(lv.Text("coordinates")) {
		v := in.Info.Resolve(lv, ref)
		if v == nil {
			return varErr(ErrLayout, in.Path, lv.Name, "coordinates attribute names %q, which does not exist in the file (searched from group %s as CF 2.7 says)", ref, lv.Group)
		}
		name := v.Name
		add(name)
		if len(v.Dims) == 2 && v.Dims[0] == L.Y.Name && v.Dims[1] == L.X.Name {
			if isLat(v) && L.Lat == "" {
				L.Lat, L.LatLon2D = name, true
			} else if isLon(v) && L.Lon == "" {
				L.Lon, L.LatLon2D = name, true
			}
		}
	}
	findLatLon2D(in.Info, L)
	// Bounds of every coordinate kept, and the grid mapping.
	for _, c := range slices.Clone(L.Coords) {
		cv := in.Info.Var(c)
		if b := cv.Text("bounds"); b != "" {
			if bv := in.Info.Resolve(cv, b); bv != nil {
				add(bv.Name)
			}
		}
	}
	if gm := strings.TrimSpace(lv.Text("grid_mapping")); gm != "" {
		name, _, _ := strings.Cut(strings.Fields(gm)[0], ":")
		gv := in.Info.Resolve(lv, name)
		if gv == nil {
			return varErr(ErrLayout, in.Path, lv.Name, "grid_mapping names %q, which does not exist in the file", name)
		}
		L.GridMapping = gv.Name
		add(gv.Name)
	}
	return nil
}

func isLat(v *VarInfo) bool {
	return v.Text("standard_name") == "latitude" || strings.HasPrefix(v.Text("units"), "degree_n") ||
		strings.HasPrefix(v.Text("units"), "degrees_n") || strings.EqualFold(v.Base(), "lat") || strings.EqualFold(v.Base(), "latitude")
}

func isLon(v *VarInfo) bool {
	return v.Text("standard_name") == "longitude" || strings.HasPrefix(v.Text("units"), "degree_e") ||
		strings.HasPrefix(v.Text("units"), "degrees_e") || strings.EqualFold(v.Base(), "lon") || strings.EqualFold(v.Base(), "longitude")
}

// readAllIO reads a small variable whole as float64 (stored values, no decoding).
func (in *Input) readAllIO(v *VarInfo) ([]float64, error) {
	if !v.Type.Numeric() {
		return nil, varErr(ErrLayout, in.Path, v.Name, "has type %s; expected numbers", v.Type)
	}
	n := v.Len()
	buf := make([]uint64, (n*v.Type.Size()+7)/8+1)
	start := make([]uint64, len(v.Shape))
	count := make([]uint64, len(v.Shape))
	for i, s := range v.Shape {
		count[i] = uint64(s)
	}
	if err := v.readIO(start, count, unsafe.Pointer(&buf[0])); err != nil {
		return nil, varErr(err, v.File, v.Name, "read failed: %v", err)
	}
	raw := newTyped(v.Type, n)
	copyRawTo(raw, unsafe.Pointer(&buf[0]), n*v.Type.Size())
	return toFloat64s(raw), nil
}

func copyRawTo(dst any, src unsafe.Pointer, nbytes int) {
	if nbytes == 0 {
		return
	}
	copy(unsafe.Slice((*byte)(typedPtr(dst)), nbytes), unsafe.Slice((*byte)(src), nbytes))
}

// checkMonotonicIO requires a 1-D coordinate variable to be strictly monotonic with
// no missing values; it reports whether it decreases.
func (in *Input) checkMonotonicIO(v *VarInfo) (descending bool, err error) {
	x, err := in.readAllIO(v)
	if err != nil {
		return false, err
	}
	fill := math.NaN()
	if a, ok := v.Attr("_FillValue"); ok && len(a.Float64s()) == 1 {
		fill = a.Float64s()[0]
	}
	for i, e := range x {
		if math.IsNaN(e) || e == fill {
			return false, varErr(ErrLayout, in.Path, v.Name, "coordinate value %d is missing; expected a coordinate variable without missing values (CF 5)", i)
		}
	}
	if len(x) < 2 {
		return false, nil
	}
	descending = x[1] < x[0]
	for i := 1; i < len(x); i++ {
		if (descending && !(x[i] < x[i-1])) || (!descending && !(x[i] > x[i-1])) {
			return false, varErr(ErrLayout, in.Path, v.Name, "coordinate is not strictly monotonic (values %d and %d: %g, %g); expected strictly increasing or strictly decreasing values (CF 5)",
				i-1, i, x[i-1], x[i])
		}
	}
	return descending, nil
}
