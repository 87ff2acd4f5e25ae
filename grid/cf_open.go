package grid

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"
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
	// Masks screen columns by quality variables (ParseMask).
	Masks []MaskSpec
	// DropletNumber says the run assumes a droplet number when the input has no
	// r_e (and no nd role): r_e is then not required. DropletNumberHint is how a
	// user gives one, quoted in the error when r_e is missing (default "a
	// droplet-number concentration (role nd)").
	DropletNumber     bool
	DropletNumberHint string
	// LWPKind declares what the LWP averages: "in-cloud", "grid-mean", or ""
	// (auto: from cell_methods, the variable name and the global attributes).
	LWPKind string
}

// LWP kinds of OpenOptions.LWPKind.
const (
	LWPInCloud  = "in-cloud"
	LWPGridMean = "grid-mean"
)

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
	// Note is set when the binding needs a word of caution (a lower-priority
	// standard name, flag codes left unscreened).
	Note string
	// Relative is set for a standard-error role (RoleRule.ErrorOf) given as a fraction of
	// its role's value: a percentage (%, percent) or, for LWP and r_e, units of 1. Its
	// values are then fractions (Canonical "1"): the standard error is value × the role's.
	Relative bool

	varID int
	vi    *VarInfo // the variable, with its source
}

// Layout is the set of columns shared by every bound input (LWP's dimensions).
// A column is one horizontal location at one index of every other dimension.
type Layout struct {
	Dims []DimInfo // LWP's dimensions, slowest first
	// Shape is grid (two horizontal dimensions), cells (one: a mesh or a list of
	// sites) or series (none: a time series at one site); see HorizontalOf.
	Shape Shape
	// Horizontal are the horizontal dimensions and Leading all the others (time,
	// ensemble member, ...), each in file order.
	Horizontal, Leading []DimInfo
	// Y and X are a grid's horizontal dimensions; cells have X only; both are
	// zero for a series.
	Y, X DimInfo
	// Lat and Lon name the latitude and longitude variables: 1-D coordinate
	// variables of Y and X, 2-D (Y, X) auxiliary coordinates of a swath, 1-D
	// auxiliary coordinates of cells, or a site's scalars. Empty when none was
	// found. LatLonRank is their rank, LatLonRadians whether they are in radians.
	Lat, Lon      string
	LatLon2D      bool
	LatLonRank    int
	LatLonRadians bool
	LatDescending bool
	// Time is the time axis of one of LWP's dimensions (nil when none); an
	// output keeps it in CF units (TimeAxis.CFUnits).
	Time        *TimeAxis
	GridMapping string // grid_mapping container variable, or ""
	// Coords lists every variable an output keeps: coordinate variables of the
	// dimensions, auxiliary coordinates, their bounds, the grid_mapping variable.
	Coords []string
	// Columns is the number of columns (product of all dimension lengths).
	Columns int64
}

// Input is an open input file with its roles bound. It holds a libnetcdf handle
// until Close.
type Input struct {
	Path   string
	Format Format
	Info   *FileInfo
	Layout Layout

	// Masks screen columns (the user's masks, then the phase and multi-layer
	// roles when bound); their data is Slab.In[Mask.Role.Index()].
	Masks []*Mask
	// GridMean is true when the LWP is a grid-box mean (GridMeanWhy says how this
	// was decided); the run then divides by the cloud fraction when there is one.
	GridMean    bool
	GridMeanWhy string
	// Warnings are problems that do not stop the run (ambiguous optional roles it
	// does not use, a grid-mean LWP without cloud fraction), each said once.
	Warnings []string

	opt      OpenOptions
	bindings [NumRoles]*Binding
	ncid     int // root ncid of the first file when it is netCDF (see store_scene.go for the others)
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

// candidate variables: numeric, at least 1-D (a time series or a list of cells
// has 1-D data), not a coordinate, auxiliary coordinate, bounds or climatology
// variable, and, when 1-D, not a latitude or longitude.
func (in *Input) dataVars() []*VarInfo {
	skip := map[string]bool{}
	for i := range in.Info.Vars {
		v := &in.Info.Vars[i]
		for _, a := range []string{"bounds", "climatology", "coordinates"} {
			for _, n := range strings.Fields(v.Text(a)) {
				skip[n] = true
			}
		}
	}
	var out []*VarInfo
	for i := range in.Info.Vars {
		v := &in.Info.Vars[i]
		if !v.Type.Numeric() || len(v.Dims) < 1 || skip[v.Name] {
			continue
		}
		if len(v.Dims) == 1 && (skip[v.Base()] || baseName(v.Dims[0]) == v.Base() || isLatName(v.Base()) || isLonName(v.Base()) ||
			v.Text("standard_name") == "latitude" || v.Text("standard_name") == "longitude") {
			continue
		}
		out = append(out, v)
	}
	return out
}

// isUncertainty reports whether v is a retrieval uncertainty: a standard_name
// with the standard_error modifier, or a name ending in _unc, _uncertainty or
// _error (any case).
func isUncertainty(v *VarInfo) bool {
	_, mods := splitStandardName(v.Text("standard_name"))
	if slices.Contains(mods, "standard_error") {
		return true
	}
	n := strings.ToLower(v.Name)
	return strings.HasSuffix(n, "_unc") || strings.HasSuffix(n, "_uncertainty") || strings.HasSuffix(n, "_error") || strings.HasSuffix(n, "_err")
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
	note   string
}

// ref is the binding whose grid is the input's: LWP, else r_e, else tau.
func (in *Input) ref() *Binding {
	for _, r := range []Role{RoleLWP, RoleRe, RoleTau} {
		if b := in.bindings[r.Index()]; b != nil {
			return b
		}
	}
	return nil
}

// roleUsed reports whether the diagnostics use an optional role, given what is
// bound so far (roles are bound in table order).
func (in *Input) roleUsed(r Role) bool {
	switch r {
	case RoleCloudFraction:
		return in.GridMean
	case RoleNd:
		return in.bindings[RoleRe.Index()] == nil
	}
	if of := r.Rule().ErrorOf; of != "" {
		return in.bindings[of.Index()] != nil
	}
	return true
}

// bind runs on the I/O thread (it reads nothing but metadata already in Info).
func (in *Input) bind() error {
	bound := map[string]Role{}
	over := map[Role]Override{}
	for _, o := range in.opt.Overrides {
		if _, dup := over[o.Role]; dup {
			return errOverride("role %s bound twice (%s)", o.Role, strings.Fields(in.opt.OverrideHint)[0])
		}
		over[o.Role] = o
	}
	var missing []RoleRule
	for i, rule := range RoleRules {
		if rule.Internal {
			continue
		}
		var chosen cand
		units, unitsFrom := "", "attribute"
		if o, ok := over[rule.Role]; ok {
			v, many := in.Info.lookup(o.Var)
			if len(many) > 1 {
				return varErr(ErrAmbiguous, in.Path, o.Var, "named by %s %s is in several groups (%s); expected one: give its group path, e.g. %s=%s",
					strings.Fields(in.opt.OverrideHint)[0], o, strings.Join(many, ", "), o.Role, many[0])
			}
			if v == nil {
				return varErr(ErrNoVariable, in.Path, o.Var, "named by %s %s does not exist in the file; the file has %s", strings.Fields(in.opt.OverrideHint)[0], o, varNames(in.Info))
			}
			if rule.Role == RoleLWPSD && isUncertainty(v) {
				return varErr(ErrOverride, in.Path, o.Var, "is a retrieval uncertainty (standard_error, *_unc, *_uncertainty), not the sub-grid standard deviation of LWP that lwp_sd means; leave lwp_sd unbound to use the gamma shape option")
			}
			chosen = cand{v: v, reason: "given by " + strings.Fields(in.opt.OverrideHint)[0] + " " + o.String()}
			if o.Units != "" {
				units, unitsFrom = o.Units, "override"
			}
		} else {
			if rule.ErrorOf != "" && !in.roleUsed(rule.Role) {
				continue // an uncertainty of an input the run does not read
			}
			cands := in.fitRank(rule.Role, highestRank(in.candidates(rule, bound)))
			if len(cands) > 1 {
				vs := make([]*VarInfo, len(cands))
				for k, c := range cands {
					vs[k] = c.v
				}
				if !rule.Required && (!in.roleUsed(rule.Role) || rule.ErrorOf != "") {
					why := "since the diagnostics do not use it here"
					if rule.ErrorOf != "" {
						why = "so the outputs carry no error from it"
					}
					in.Warnings = append(in.Warnings, fmt.Sprintf("%s: %d variables could be the %s (%s): %s; none is taken, %s (bind one with %s to have it read)",
						in.Path, len(cands), rule.Description, rule.Role, names(vs), why, in.opt.OverrideHint))
					continue
				}
				return &VarError{File: in.Path, Problem: fmt.Sprintf("%d variables could be the %s (%s): %s; choose one with %s, e.g. %s=%s",
					len(cands), rule.Description, rule.Role, names(vs), in.opt.OverrideHint, rule.Role, cands[0].v.Name), Err: ErrAmbiguous}
			}
			if len(cands) == 0 {
				if rule.Required {
					missing = append(missing, rule)
				}
				continue
			}
			chosen = cands[0]
		}
		v := chosen.v
		if r, dup := bound[v.Name]; dup {
			return varErr(ErrAmbiguous, in.Path, v.Name, "is bound to both %s and %s; bind each role to its own variable with %s", r, rule.Role, in.opt.OverrideHint)
		}
		b := &Binding{Role: rule.Role, Var: v.Name, StandardName: v.Text("standard_name"), Canonical: rule.Units,
			Reason: chosen.reason, Note: chosen.note, Type: v.Type, Chunks: v.Chunks, Deflate: v.Deflate, varID: v.ID, vi: v, File: v.File}
		if rule.Codes() {
			mask, err := in.roleMask(rule, v)
			if err != nil {
				return err
			}
			if mask == nil {
				if _, byOverride := over[rule.Role]; byOverride { // asked for: an error, not a warning
					w := in.Warnings[len(in.Warnings)-1]
					in.Warnings = in.Warnings[:len(in.Warnings)-1]
					return varErr(ErrLayout, in.Path, v.Name, "bound as %s by %s: %s", rule.Role, over[rule.Role], strings.TrimPrefix(w, in.Path+": "))
				}
				continue
			}
			dec, err := NewDecoder(in.Path, v, Converter{Factor: 1})
			if err != nil {
				return err
			}
			mask.Role = rule.Role
			in.Masks = append(in.Masks, mask)
			b.Decoder, b.Packing = dec, dec.Describe()
			in.bindings[i] = b
			bound[v.Name] = rule.Role
			continue
		}
		if rule.ErrorOf != "" {
			_, byOverride := over[rule.Role]
			ok, err := in.bindError(b, v, units, unitsFrom, byOverride)
			if err != nil {
				return err
			}
			if ok {
				in.bindings[i] = b
				bound[v.Name] = rule.Role
			}
			continue
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
		note, err := dec.screenFlags(in.Path, v)
		if err != nil {
			return err
		}
		if note != "" {
			b.Note = strings.TrimPrefix(b.Note+"; "+note, "; ")
			in.Warnings = append(in.Warnings, fmt.Sprintf("%s: variable %q: %s", in.Path, v.Name, note))
		}
		b.UnitsGiven, b.UnitsFrom, b.Conv, b.Decoder, b.Packing = units, unitsFrom, conv, dec, dec.Describe()
		in.bindings[i] = b
		bound[v.Name] = rule.Role
		if rule.Role == RoleLWP {
			in.GridMean, in.GridMeanWhy = in.lwpKind(v)
		}
	}
	if err := in.checkRequired(missing); err != nil {
		return err
	}
	if in.GridMean && in.bindings[RoleCloudFraction.Index()] == nil {
		in.Warnings = append(in.Warnings, fmt.Sprintf("%s: the LWP %s is a grid-box mean (%s) and the file has no cloud fraction: it is used as an in-cloud LWP, which underestimates the cloud's LWP (QC bit grid_mean_lwp_used); bind one with %s, e.g. cloud_fraction=VAR",
			in.Path, in.bindings[RoleLWP.Index()].Var, in.GridMeanWhy, in.opt.OverrideHint))
	}
	return in.bindMasks(bound)
}

// isPercent reports whether units name a percentage ("%", "percent", any case).
func isPercent(units string) bool {
	u := strings.ToLower(strings.TrimSpace(units))
	return u == "%" || u == "percent" || u == "percentage"
}

// bindError sets the units of a standard-error binding b of variable v: a percentage (or,
// for LWP and r_e, units of 1) makes it relative, other units convert to the role's. A
// problem is an error when the user bound the variable, else a warning that leaves the
// role unbound (false): a product's uncertainty never stops a run that can do without it.
func (in *Input) bindError(b *Binding, v *VarInfo, units, unitsFrom string, byOverride bool) (bool, error) {
	rule := b.Role.Rule()
	fail := func(err error) (bool, error) {
		if byOverride {
			return false, err
		}
		in.Warnings = append(in.Warnings, fmt.Sprintf("%v; the %s is not used", err, rule.Description))
		return false, nil
	}
	if unitsFrom == "attribute" {
		units = strings.TrimSpace(v.Text("units"))
		// A dimensionless uncertainty whose long_name says percent is a percentage: the
		// MODIS level-2 "Relative Uncertainty (Percent)" (its level-3 means are absolute).
		switch strings.ToLower(units) {
		case "", "1", "none", "unitless", "dimensionless":
			if strings.Contains(strings.ToLower(v.Text("long_name")), "percent") {
				units = "percent"
			}
		}
		if units == "" {
			return fail(varErr(ErrUnits, in.Path, v.Name, "(%s) has no units attribute; expected units convertible to %q or a percentage; declare them with %s, e.g. %s=%s:%%",
				rule.Role, rule.Units, in.opt.OverrideHint, rule.Role, v.Name))
		}
	}
	to := rule.Units
	if units == "fraction" {
		units = "1"
	}
	if isPercent(units) || (rule.Units != "1" && units == "1") {
		to, b.Relative = "1", true
		if isPercent(units) {
			units = "percent"
		}
	}
	conv, err := NewConverter(units, to)
	if err != nil {
		return fail(varErr(ErrUnits, in.Path, v.Name, "(%s) has units %q (%s); expected units convertible to %q or a percentage (%%, percent): %v",
			rule.Role, units, unitsFrom, rule.Units, err))
	}
	dec, err := NewDecoder(in.Path, v, conv)
	if err != nil {
		return fail(err)
	}
	b.Canonical = to
	b.UnitsGiven, b.UnitsFrom, b.Conv, b.Decoder, b.Packing = units, unitsFrom, conv, dec, dec.Describe()
	return true, nil
}

// checkRequired accepts missing LWP when tau and r_e can give it, and missing r_e
// when LWP and a droplet number (role nd or OpenOptions.DropletNumber) can give it.
func (in *Input) checkRequired(missing []RoleRule) error {
	has := func(r Role) bool { return in.bindings[r.Index()] != nil }
	for _, rule := range missing {
		extra := ""
		switch rule.Role {
		case RoleLWP:
			if has(RoleTau) && has(RoleRe) {
				continue
			}
			extra = "; or optical thickness (tau) and r_e, from which the run derives LWP"
		case RoleRe:
			if !has(RoleLWP) && !has(RoleTau) {
				continue // reported with LWP
			}
			if has(RoleLWP) && (has(RoleNd) || in.opt.DropletNumber) {
				continue
			}
			hint := in.opt.DropletNumberHint
			if hint == "" {
				hint = "a droplet-number concentration (role nd)"
			}
			extra = "; or, with an LWP, " + hint + ", from which the run derives r_e"
		}
		return &VarError{File: in.Path, Problem: fmt.Sprintf("no variable for the %s (%s): searched standard_name %s and the names %s (case-insensitive); name it with %s%s",
			rule.Description, rule.Role, searchedSN(rule), strings.Join(append(slices.Clone(rule.CommonNames), rule.GenericNames...), ", "), in.opt.OverrideHint, extra), Err: ErrNoVariable}
	}
	return nil
}

// roleMask builds the mask of the phase or multilayer role on v; nil (with a
// warning) when v has no usable flags.
func (in *Input) roleMask(rule RoleRule, v *VarInfo) (*Mask, error) {
	kind, pick := MaskPhase, liquidPhase
	if rule.Role == RoleMultilayer {
		kind, pick = MaskMultilayer, multiLayer
	}
	spec := MaskSpec{Text: string(rule.Role), Var: v.Name, Kind: kind}
	m, err := newFlagMask(in.Path, v, spec, func(w string) bool {
		if kind == MaskPhase {
			return !pick(w)
		}
		return pick(w)
	})
	if err != nil {
		prob := err.Error()
		var ve *VarError
		if errors.As(err, &ve) {
			prob = ve.Problem
		}
		in.Warnings = append(in.Warnings, fmt.Sprintf("%s: the %s %s is not used: it %s; screen with a mask by value instead (e.g. '%s>1')",
			in.Path, rule.Description, v.Name, prob, v.Name))
		return nil, nil
	}
	return m, nil
}

// bindMasks binds each user mask's variable to a quality slot (one per variable).
func (in *Input) bindMasks(bound map[string]Role) error {
	slot := map[string]Role{}
	next := 0
	for _, spec := range in.opt.Masks {
		v := in.Info.Var(spec.Var)
		if v == nil {
			return varErr(ErrNoVariable, in.Path, spec.Var, "named by mask %q does not exist in the file; the file has %s", spec.Text, varNames(in.Info))
		}
		if !v.Type.Numeric() {
			return varErr(ErrLayout, in.Path, spec.Var, "named by mask %q has type %s; expected numbers", spec.Text, v.Type)
		}
		var m *Mask
		if spec.Kind == MaskMeaning {
			var err error
			if m, err = newFlagMask(in.Path, v, spec, nil); err != nil {
				return err
			}
		} else {
			m = &Mask{MaskSpec: spec}
		}
		r, ok := slot[v.Name]
		if !ok {
			if role, isBound := bound[v.Name]; isBound {
				r = role
			} else {
				if next == NumQualitySlots {
					return varErr(ErrOverride, in.Path, spec.Var, "mask %q names a %d-th quality variable; at most %d distinct variables can be masked in one run", spec.Text, next+1, NumQualitySlots)
				}
				r = RoleQuality1
				r = Roles[r.Index()+next]
				next++
				dec, err := NewDecoder(in.Path, v, Converter{Factor: 1})
				if err != nil {
					return err
				}
				in.bindings[r.Index()] = &Binding{Role: r, Var: v.Name, StandardName: v.Text("standard_name"), Reason: "named by mask " + spec.Text,
					Type: v.Type, Chunks: v.Chunks, Deflate: v.Deflate, Decoder: dec, Packing: dec.Describe(), varID: v.ID, vi: v, File: v.File}
			}
			slot[v.Name] = r
		}
		if b := in.bindings[r.Index()]; spec.Kind == MaskCompare && !r.Rule().Codes() && !b.Conv.Identity() {
			return varErr(ErrOverride, in.Path, spec.Var, "mask %q compares a variable bound as %s, whose values are converted to %s; mask a quality variable instead", spec.Text, r, b.Canonical)
		}
		m.Role = r
		in.Masks = append(in.Masks, m)
	}
	return nil
}

// lwpKind decides whether the LWP v is a grid-box mean (see OpenOptions.LWPKind).
func (in *Input) lwpKind(v *VarInfo) (bool, string) {
	switch in.opt.LWPKind {
	case LWPInCloud:
		return false, "declared in-cloud"
	case LWPGridMean:
		return true, "declared a grid-box mean"
	}
	cm := v.Text("cell_methods")
	if strings.Contains(cm, "where cloud") || strings.Contains(cm, "where liquid") {
		return false, fmt.Sprintf("cell_methods %q: a mean over the cloudy part", cm)
	}
	if areaMean(cm) {
		return true, fmt.Sprintf("cell_methods %q: a grid-box mean", cm)
	}
	for _, n := range gridMeanNames {
		if strings.EqualFold(v.Name, n) {
			return true, fmt.Sprintf("variable name %s: a model or reanalysis grid-box mean", v.Name)
		}
	}
	for _, g := range []string{"source_id", "experiment_id", "mip_era", "model_id", "table_id"} {
		if a, ok := findAttr(in.Info.Globals, g); ok {
			return true, fmt.Sprintf("global attribute %s = %s: model output, a grid-box mean", g, a.String())
		}
	}
	return false, "retrieval (no cell_methods area mean, no model attributes): in-cloud"
}

// gridMeanNames are LWP variable names of models and reanalyses, which average
// over the grid box (ERA5 tclw, MERRA-2 TQL, CESM/E3SM TGCLDLWP, ICON tqc, CMIP
// clwvi, Cloud_cci lwp_allsky; from memory of their documentation).
var gridMeanNames = []string{"tclw", "TQL", "TGCLDLWP", "tqc", "clwvi", "lwp_allsky"}

// areaMean reports whether cell_methods says "area: mean" (possibly with other
// names before the colon, as in "lat: lon: mean") without a where clause.
func areaMean(cm string) bool {
	f := strings.Fields(cm)
	for i, w := range f {
		if w == "mean" && i > 0 && (f[i-1] == "area:" || (f[i-1] == "lon:" && i > 1 && f[i-2] == "lat:")) {
			return i+1 >= len(f) || f[i+1] != "where"
		}
	}
	return false
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
		return strings.Join(lwpNames, " or ") + " with cell_methods standard_deviation, or named in the LWP's ancillary_variables with a standard_deviation modifier (never a standard_error: an uncertainty is not a sub-grid spread)"
	}
	return strings.Join(append(slices.Clone(rule.StandardNames), rule.LowerNames...), ", ")
}

// candidates finds the variables that may play a role, tier by tier: standard
// names, the lower-priority standard names (on the reference grid), common names,
// generic names. Retrieval uncertainties are never candidates.
func (in *Input) candidates(rule RoleRule, bound map[string]Role) []cand {
	if c := in.byStandardName(rule, bound); len(c) > 0 {
		return c
	}
	if c := in.byLowerName(rule, bound); len(c) > 0 {
		return c
	}
	if c := in.byName(rule, rule.CommonNames, "a common name", bound); len(c) > 0 {
		return c
	}
	return in.byName(rule, rule.GenericNames, "a generic name (it may hold more than the role)", bound)
}

func (in *Input) byStandardName(rule RoleRule, bound map[string]Role) []cand {
	var out []cand
	if rule.Role == RoleLWPSD {
		seen := map[string]bool{}
		for _, v := range in.dataVars() {
			name, mods := splitStandardName(v.Text("standard_name"))
			if slices.Contains(lwpNames, name) && len(mods) == 0 && isSDMethod(v.Text("cell_methods")) && !isUncertainty(v) {
				out = append(out, cand{v: v, reason: fmt.Sprintf("standard_name %s with cell_methods %q", name, v.Text("cell_methods"))})
				seen[v.Name] = true
			}
		}
		if lb := in.bindings[RoleLWP.Index()]; lb != nil {
			lv := in.Info.Var(lb.Var)
			for _, anc := range strings.Fields(lv.Text("ancillary_variables")) {
				v := in.Info.Resolve(lv, anc)
				if v == nil || seen[v.Name] || !v.Type.Numeric() || isUncertainty(v) {
					continue
				}
				name, mods := splitStandardName(v.Text("standard_name"))
				if slices.Contains(lwpNames, name) && slices.Contains(mods, "standard_deviation") {
					out = append(out, cand{v: v, reason: fmt.Sprintf("named in %s's ancillary_variables with standard_name %q", lb.Var, v.Text("standard_name"))})
				}
			}
		}
		return out
	}
	if rule.ErrorOf != "" {
		return in.byErrorName(rule, bound)
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
		out = append(out, cand{v: v, reason: "standard_name " + name})
	}
	return out
}

// byErrorName finds a standard-error role's variable by its role's standard names with
// the standard_error modifier, then among the ancillary_variables of its role's variable
// (one with the standard_error modifier or an uncertainty's name: isUncertainty).
func (in *Input) byErrorName(rule RoleRule, bound map[string]Role) []cand {
	base := rule.ErrorOf.Rule()
	var out []cand
	for _, v := range in.dataVars() {
		if _, b := bound[v.Name]; b {
			continue
		}
		name, mods := splitStandardName(v.Text("standard_name"))
		if slices.Contains(base.StandardNames, name) && slices.Contains(mods, "standard_error") {
			out = append(out, cand{v: v, reason: fmt.Sprintf("standard_name %q", v.Text("standard_name"))})
		}
	}
	if len(out) > 0 {
		return out
	}
	lb := in.bindings[rule.ErrorOf.Index()]
	if lb == nil {
		return nil
	}
	lv := in.Info.Var(lb.Var)
	for _, anc := range strings.Fields(lv.Text("ancillary_variables")) {
		v := in.Info.Resolve(lv, anc)
		if v == nil || !v.Type.Numeric() || !isUncertainty(v) {
			continue
		}
		if _, b := bound[v.Name]; b {
			continue
		}
		out = append(out, cand{v: v, reason: fmt.Sprintf("named in %s's ancillary_variables as an uncertainty", lb.Var)})
	}
	return out
}

// byLowerName matches the rule's LowerNames, only on the reference grid when one
// is bound (a 3-D field of the same name is not a top field).
func (in *Input) byLowerName(rule RoleRule, bound map[string]Role) []cand {
	var out []cand
	ref := in.ref()
	for _, v := range in.dataVars() {
		if _, b := bound[v.Name]; b {
			continue
		}
		name, mods := splitStandardName(v.Text("standard_name"))
		if !slices.Contains(rule.LowerNames, name) || len(mods) > 0 || isSDMethod(v.Text("cell_methods")) {
			continue
		}
		if ref != nil && !slices.Equal(in.Info.Var(ref.Var).DimIDs, v.DimIDs) {
			continue
		}
		note := fmt.Sprintf("standard_name %s is an older or CMIP/CFMIP name taken at lower priority than %s", name, strings.Join(rule.StandardNames, ", "))
		if strings.Contains(name, "condensed") {
			note += "; condensed water counts ice too, so screen ice-topped columns (phase, cloud-top temperature)"
		}
		out = append(out, cand{v: v, reason: "standard_name " + name + " (lower priority)", note: note})
	}
	return out
}

// byName matches variable names (case-insensitive), the first name of the list
// that matches winning, so that a product's specific name beats a generic one.
func (in *Input) byName(rule RoleRule, list []string, what string, bound map[string]Role) []cand {
	vars := in.dataVars()
	for _, n := range list {
		var out []cand
		for _, v := range vars {
			if _, b := bound[v.Name]; b || (isUncertainty(v) && rule.ErrorOf == "") || !strings.EqualFold(v.Base(), n) {
				continue
			}
			r := fmt.Sprintf("variable name %q is %s of the %s", v.Name, what, rule.Description)
			if sn := v.Text("standard_name"); sn != "" {
				r += fmt.Sprintf(" (its standard_name %q is not one the table maps to %s)", sn, rule.Role)
			}
			out = append(out, cand{v: v, reason: r})
		}
		if len(out) > 0 {
			return out
		}
	}
	return nil
}

var roleLabel = map[Role]string{RoleLWP: "LWP", RoleRe: "r_e", RoleTau: "tau", RoleCTT: "CTT", RoleCTP: "CTP", RoleCTH: "CTH",
	RoleCloudFraction: "cloud fraction", RoleLWPSD: "LWP standard deviation", RoleNd: "the droplet number", RolePhase: "the phase flag",
	RoleMultilayer: "the multi-layer flag", RoleLWPSE: "the LWP's standard error", RoleReSE: "r_e's standard error",
	RoleTauSE: "tau's standard error", RoleQuality1: "a masked variable", RoleQuality2: "a masked variable",
	RoleQuality3: "a masked variable", RoleQuality4: "a masked variable", RoleQuality5: "a masked variable", RoleQuality6: "a masked variable"}

// layoutIO runs on the I/O thread.
func (in *Input) layoutIO() error {
	lb := in.ref()
	lv := in.Info.Var(lb.Var)
	if len(lv.Dims) < 1 {
		return varErr(ErrLayout, in.Path, lv.Name, "is a scalar; expected at least one dimension (time, cells, or y and x)")
	}
	for _, b := range in.bindings {
		if b == nil || b == lb {
			continue
		}
		v := in.Info.Var(b.Var)
		if !slices.Equal(v.DimIDs, lv.DimIDs) {
			if v.File != lv.File {
				return varErr(ErrLayout, v.File, v.Name, "is on another grid than the %s: %s %s in %s has dimensions %s but %s in %s has %s; files joined with + must share one grid (the same dimensions in the same order)",
					roleLabel[lb.Role], roleLabel[lb.Role], lv.Name, lv.File, dimsString(lv), v.Name, v.File, dimsString(v))
			}
			return varErr(ErrLayout, in.Path, v.Name, "%s and %s are on different grids: %s %s has dimensions %s but %s has %s; expected the same dimensions in the same order",
				roleLabel[lb.Role], roleLabel[b.Role], roleLabel[lb.Role], lv.Name, dimsString(lv), v.Name, dimsString(v))
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
	h := HorizontalOf(in.Info, lv)
	L.Shape = h.Shape
	for i, d := range L.Dims {
		if slices.Contains(h.Dims, i) {
			L.Horizontal = append(L.Horizontal, d)
		} else {
			L.Leading = append(L.Leading, d)
		}
	}
	switch len(L.Horizontal) {
	case 2:
		L.Y, L.X = L.Horizontal[0], L.Horizontal[1]
	case 1:
		L.X = L.Horizontal[0]
	}
	L.Lat, L.Lon, L.LatLonRank, L.LatLonRadians = h.Lat, h.Lon, h.LatLonRank, h.Radians
	L.LatLon2D = h.LatLonRank == 2
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
		if v.Type.Numeric() {
			desc, err := in.checkMonotonicIO(v)
			if err != nil {
				return err
			}
			if v.Name == L.Lat {
				L.LatDescending = desc
			}
		}
		add(v.Name)
		if h.Time >= 0 && d.Name == L.Dims[h.Time].Name {
			ta, err := ParseTimeAxis(in.Info, v)
			if err != nil {
				return err
			}
			if ta.Absolute {
				x, err := in.readAllIO(v)
				if err != nil {
					return err
				}
				if err := ta.CheckTimeValues(in.Path, x); err != nil {
					return err
				}
			}
			L.Time = ta
		}
	}
	// Auxiliary coordinates named by LWP's coordinates attribute, and the
	// latitude and longitude found without it.
	for _, ref := range strings.Fields(lv.Text("coordinates")) {
		v := in.Info.Resolve(lv, ref)
		if v == nil {
			return varErr(ErrLayout, in.Path, lv.Name, "coordinates attribute names %q, which does not exist in the file (searched from group %s as CF 2.7 says)", ref, lv.Group)
		}
		name := v.Name
		add(name)
	}
	add(L.Lat)
	add(L.Lon)
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
	return readStoredIO(v)
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
