package app

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"slices"
	"strings"
	"text/tabwriter"

	"github.com/warmrain/warmrain/cmd/internal/batch"
	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/microphys"
)

const inspectUsage = `Usage:
  warmrain inspect FILE [--bind ROLE=VAR[:UNITS]]... [--json]
  warmrain inspect FILE... | 'GLOB' | @LIST [--bind ROLE=VAR[:UNITS]]... [--json]

Shows what warmrain finds in an input file (a netCDF file, an HDF4 file, an
NCZarr URL, or several files of one scene joined with +, as in lwp.nc+reff.nc):
its format and layout (dimensions, spatial and leading dimensions, latitude
and longitude, grid mapping, chunking and compression); for each input role
the variable taken and why, its units and the conversion to the units used in
memory, its packing and decoding, the range of its values and the fraction
missing; for roles not found, what was searched; and which diagnostics can be
computed, which of them use defaults for absent inputs, and what is missing
for the others. It reads every value of the bound variables once.

Roles: lwp, re (required unless the run can derive them: LWP from tau and
r_e, r_e from LWP and a droplet number), tau, ctt, ctp, cth, cloud_fraction,
lwp_sd, nd (droplet number), phase and multilayer (CF flag variables that
screen non-liquid and multi-layer columns), and lwp_se, re_se, tau_se (the
retrieval standard errors, absolute or in percent, that give every output its
<name>_standard_error).

With --mask, it counts the columns each mask removes; flag codes held inside a
data variable (sea ice, land) are counted by meaning. Variables in netCDF-4
groups are named by their path (/geophysical_data/NAME);
HDF4 names may contain blanks (quote them: --bind 're=Effective Radius').

With several files (names, a quoted glob, or @LIST as for process) inspect
checks that an archive is consistent: for each file, the variables bound to
each role, their units, the layout, the horizontal grid and its coordinates,
the other dimensions and the time step; each is compared with what most files
have, and time spans that overlap are reported. It reads the coordinates and
times only. Exit status: 0 when every file is like most, 1 when a file differs
or cannot be read, 2 for bad usage.

Example:
  warmrain inspect samples/data/stratocumulus_demo.nc
  warmrain inspect scene.nc --bind lwp=LWP_liquid:g/m2 --bind re=CER --json
  warmrain inspect 'archive/2019/*.nc'
`

// inspectReport is what inspect prints; the JSON form is this struct.
type inspectReport struct {
	File        string         `json:"file"`
	Files       []string       `json:"files,omitempty"` // the files of a scene joined with +
	Format      string         `json:"format"`
	Layout      *layoutReport  `json:"layout,omitempty"`
	Roles       []roleReport   `json:"roles"`
	Diagnostics []diagReport   `json:"diagnostics"`
	Problem     string         `json:"problem,omitempty"`
	Dimensions  []dimReport    `json:"file_dimensions,omitempty"`
	Variables   []string       `json:"file_variables,omitempty"`
	Summary     map[string]int `json:"summary"`
	Quality     *qualityReport `json:"quality,omitempty"`
	Warnings    []string       `json:"warnings,omitempty"`
}

// qualityReport says how the input's own quality information screens columns.
type qualityReport struct {
	LWPKind     string       `json:"lwp_kind"`
	Masks       []maskReport `json:"masks"`
	Screened    int64        `json:"columns_screened"`
	Assumptions []string     `json:"assumptions"`
}

type maskReport struct {
	Mask    string `json:"mask"`
	Screens string `json:"screens"`
	Columns int64  `json:"columns"`
}

type dimReport struct {
	Name      string `json:"name"`
	Length    int    `json:"length"`
	Unlimited bool   `json:"unlimited"`
}

type layoutReport struct {
	Dimensions    []dimReport `json:"dimensions"`
	Shape         string      `json:"shape"`
	Time          string      `json:"time,omitempty"`
	TimeNote      string      `json:"time_note,omitempty"`
	LatLonRank    int         `json:"latlon_rank"`
	Radians       bool        `json:"latlon_radians"`
	Y             string      `json:"y"`
	X             string      `json:"x"`
	Leading       []string    `json:"leading"`
	Columns       int64       `json:"columns"`
	Lat           string      `json:"latitude"`
	Lon           string      `json:"longitude"`
	LatLon2D      bool        `json:"latlon_2d"`
	LatDescending bool        `json:"latitude_descending"`
	GridMapping   string      `json:"grid_mapping"`
	Coords        []string    `json:"kept_coordinates"`
}

type statsReport struct {
	Units        string  `json:"units"`
	Min          jnum    `json:"min"`
	Max          jnum    `json:"max"`
	Mean         jnum    `json:"mean"`
	Valid        int64   `json:"valid"`
	Missing      int64   `json:"missing"`
	FillFraction float64 `json:"fill_fraction"`
}

type roleReport struct {
	Role         string       `json:"role"`
	Description  string       `json:"description"`
	Required     bool         `json:"required"`
	Found        bool         `json:"found"`
	Variable     string       `json:"variable,omitempty"`
	InFile       string       `json:"in_file,omitempty"` // which file of a scene joined with + holds it
	StandardName string       `json:"standard_name,omitempty"`
	Reason       string       `json:"reason,omitempty"`
	UnitsGiven   string       `json:"units_given,omitempty"`
	UnitsFrom    string       `json:"units_from,omitempty"`
	Canonical    string       `json:"canonical_units"`
	Conversion   string       `json:"conversion,omitempty"`
	Type         string       `json:"type,omitempty"`
	Packing      string       `json:"packing,omitempty"`
	Chunks       []int        `json:"chunks,omitempty"`
	Deflate      int          `json:"deflate"`
	Stats        *statsReport `json:"values,omitempty"`
	Searched     *searched    `json:"searched,omitempty"`
	Use          string       `json:"use"`
	Note         string       `json:"note,omitempty"`
	FlagCodes    []string     `json:"flag_codes,omitempty"`
}

type searched struct {
	StandardNames []string `json:"standard_names"`
	Names         []string `json:"names"`
	Note          string   `json:"note,omitempty"`
}

type diagReport struct {
	Output     string   `json:"output"`
	Units      string   `json:"units"`
	Computable bool     `json:"computable"`
	Defaults   []string `json:"defaults"`
	Missing    []string `json:"missing"`
}

// displayUnits are the readable units of each role's values: name and the
// factor from the canonical (SI) units.
var displayUnits = map[grid.Role]struct {
	units string
	scale float64
}{
	grid.RoleLWP: {"g m-2", 1e3}, grid.RoleRe: {"um", 1e6}, grid.RoleTau: {"1", 1}, grid.RoleCTT: {"K", 1},
	grid.RoleCTP: {"hPa", 1e-2}, grid.RoleCTH: {"m", 1}, grid.RoleCloudFraction: {"1", 1}, grid.RoleLWPSD: {"g m-2", 1e3},
	grid.RoleNd: {"cm-3", 1e-6}, grid.RolePhase: {"(codes)", 1}, grid.RoleMultilayer: {"(codes)", 1},
	grid.RoleLWPSE: {"g m-2", 1e3}, grid.RoleReSE: {"um", 1e6}, grid.RoleTauSE: {"1", 1},
}

// roleUse says what the physics does with each role.
var roleUse = map[grid.Role]string{
	grid.RoleLWP:           "required by every diagnostic (absent: from tau and r_e, --lwp-profile, QC bit lwp_from_optical_thickness)",
	grid.RoleRe:            "required by every diagnostic (absent: from LWP and nd or --droplet-number, QC bit droplet_number_assumed)",
	grid.RoleTau:           "droplet number (absent: tau from LWP and r_e by the adiabatic relation)",
	grid.RoleCTT:           "condensation rate, air state, ice screening (absent: standard atmosphere at CTP or CTH, QC bit air_state_standard_atmosphere; else --default-ctt, QC bit air_state_assumed)",
	grid.RoleCTP:           "condensation rate, air state (absent: --default-ctp, QC bit air_state_assumed)",
	grid.RoleCTH:           "cloud-base height for the sub-cloud evaporation (absent: dry adiabat to --surface-pressure, QC bit cloud_base_height_assumed)",
	grid.RoleCloudFraction: "in-cloud LWP = LWP / cloud fraction when the LWP is a grid-box mean (otherwise not used)",
	grid.RoleLWPSD:         "gamma shape of the drizzle probability (absent: --gamma-shape, QC bit gamma_shape_assumed; never a retrieval uncertainty)",
	grid.RoleNd:            "r_e from LWP when the input has no r_e (QC bit droplet_number_from_input; otherwise not used)",
	grid.RolePhase:         "screens columns whose phase is not liquid (QC bit phase_not_liquid)",
	grid.RoleMultilayer:    "screens columns flagged multi-layer (QC bit multi_layer_cloud)",
	grid.RoleLWPSE:         "retrieval error of the LWP: every output's <name>_standard_error (absent: no error from the LWP)",
	grid.RoleReSE:          "retrieval error of r_e: every output's <name>_standard_error (absent: no error from r_e)",
	grid.RoleTauSE:         "retrieval error of tau: every output's <name>_standard_error (absent: no error from tau)",
}

func runInspect(e *env, args []string) error {
	fs := newFlagSet(e, "inspect", inspectUsage)
	binds := fs.StringArray("bind", nil, "take input ROLE from variable VAR, optionally declaring its units: ROLE=VAR[:UNITS] (repeatable)")
	asJSON := fs.Bool("json", false, "print one JSON object instead of the text report")
	inp := addInputFlags(fs)
	nd := fs.Float64("droplet-number", 0, "as for process: the droplet number concentration, cm-3, assumed where the input has LWP but no effective radius (0: none)")
	if err := parseFlags(e, fs, inspectUsage, args); err != nil {
		return err
	}
	p := microphys.DefaultParams()
	p.DropletNumber = *nd * 1e6
	if err := p.Validate(); err != nil {
		return usagef("--droplet-number: %v", err)
	}
	masks, err := inp.check()
	if err != nil {
		return err
	}
	if fs.NArg() == 0 {
		return usagef("no input file given")
	}
	var ovs []grid.Override
	for _, b := range *binds {
		o, err := grid.ParseOverride(b)
		if err != nil {
			return usagef("--bind %q: %v", b, err)
		}
		ovs = append(ovs, o)
	}
	paths, err := batch.ExpandInputs(fs.Args())
	if err != nil {
		return usagef("%v", err)
	}
	if len(paths) > 1 {
		return runInspectArchive(e, paths, ovs, inp, masks, p, *asJSON)
	}
	rep, err := inspectFile(paths[0], ovs, inp, masks, p)
	if rep == nil {
		return err
	}
	if *asJSON {
		enc := json.NewEncoder(e.stdout)
		enc.SetIndent("", "  ")
		enc.SetEscapeHTML(false)
		if jerr := enc.Encode(rep); jerr != nil {
			return jerr
		}
	} else if werr := rep.writeText(e.stdout); werr != nil {
		return werr
	}
	return err
}

// inspectFile builds the report of one file. When the file opens but a
// required role is missing (or a binding is ambiguous), it returns a partial
// report and the error.
func inspectFile(path string, ovs []grid.Override, inp *inputFlags, masks []grid.MaskSpec, p microphys.Params) (*inspectReport, error) {
	opt := grid.OpenOptions{Overrides: ovs, OverrideHint: "--bind ROLE=VAR[:UNITS]"}
	inp.openOptions(&opt, masks, p)
	in, err := grid.Open(path, opt)
	if err != nil {
		if !errors.Is(err, grid.ErrNoVariable) && !errors.Is(err, grid.ErrAmbiguous) && !errors.Is(err, grid.ErrUnits) && !errors.Is(err, grid.ErrLayout) {
			return nil, err
		}
		fi, derr := grid.Describe(path)
		if derr != nil {
			return nil, err
		}
		return partialReport(path, fi, err), err
	}
	defer in.Close()
	rep := &inspectReport{File: path, Format: string(in.Format)}
	if len(in.Info.Files) > 1 {
		rep.Files = in.Info.Files
	}
	L := in.Layout
	lr := &layoutReport{Y: L.Y.Name, X: L.X.Name, Leading: []string{}, Columns: L.Columns, Lat: L.Lat, Lon: L.Lon,
		LatLon2D: L.LatLon2D, LatDescending: L.LatDescending, GridMapping: L.GridMapping, Coords: L.Coords,
		Shape: string(L.Shape), LatLonRank: L.LatLonRank, Radians: L.LatLonRadians}
	if L.Time != nil {
		lr.Time, lr.TimeNote = L.Time.Var, L.Time.Note
	}
	for _, d := range L.Dims {
		lr.Dimensions = append(lr.Dimensions, dimReport{d.Name, d.Len, d.Unlimited})
	}
	for _, d := range L.Leading {
		lr.Leading = append(lr.Leading, d.Name)
	}
	if lr.Coords == nil {
		lr.Coords = []string{}
	}
	rep.Layout = lr
	// One read gives the statistics, the screening counts and the unit sample.
	stats, qc, sample, err := in.Survey(unitSampleSize)
	if err != nil {
		return nil, err
	}
	byRole := map[grid.Role]grid.VarStats{}
	for _, s := range stats {
		byRole[s.Role] = s
	}
	for _, rule := range grid.RoleRules {
		if rule.Internal {
			continue
		}
		rr := roleReport{Role: string(rule.Role), Description: rule.Description, Required: rule.Required, Canonical: rule.Units, Use: roleUse[rule.Role]}
		b, ok := in.Binding(rule.Role)
		if !ok {
			rr.Searched = searchedFor(rule)
			rep.Roles = append(rep.Roles, rr)
			continue
		}
		rr.Found = true
		rr.Canonical = b.Canonical
		rr.Variable, rr.StandardName, rr.Reason = b.Var, b.StandardName, b.Reason
		if len(rep.Files) > 1 {
			rr.InFile = b.File
		}
		rr.UnitsGiven, rr.UnitsFrom, rr.Conversion = b.UnitsGiven, b.UnitsFrom, b.Conv.String()
		rr.Type, rr.Packing, rr.Chunks, rr.Deflate = b.Type.String(), b.Packing, b.Chunks, b.Deflate
		rr.Note = b.Note
		if c := qc.Codes[rule.Role.Index()]; c != nil {
			for k, n := range c {
				rr.FlagCodes = append(rr.FlagCodes, fmt.Sprintf("%s: %d", b.Decoder.FlagMeanings[k], n))
			}
		}
		if s, ok := byRole[rule.Role]; ok {
			du := displayUnits[rule.Role]
			if b.Relative {
				du.units, du.scale = "%", 100
			}
			rr.Stats = &statsReport{Units: du.units, Min: jnum(s.Min * du.scale), Max: jnum(s.Max * du.scale), Mean: jnum(s.Mean * du.scale),
				Valid: s.Valid, Missing: s.Missing, FillFraction: s.FillFraction}
		}
		rep.Roles = append(rep.Roles, rr)
	}
	rep.Diagnostics = diagnosticsFor(func(r grid.Role) bool { return in.Has(r) }, p.DropletNumber > 0)
	rep.summarise()
	kind := "in-cloud: " + in.GridMeanWhy
	if in.GridMean {
		kind = "grid-box mean: " + in.GridMeanWhy
	}
	q := &qualityReport{LWPKind: kind, Masks: []maskReport{}, Screened: qc.Screened, Assumptions: assumed(in, p)}
	if q.Assumptions == nil {
		q.Assumptions = []string{}
	}
	for k, m := range in.Masks {
		q.Masks = append(q.Masks, maskReport{Mask: m.Name(), Screens: m.Describe(), Columns: qc.Masks[k]})
	}
	rep.Quality = q
	rep.Warnings = append(append([]string(nil), in.Warnings...), unitWarningsOf(in, sample)...)
	return rep, nil
}

func searchedFor(rule grid.RoleRule) *searched {
	s := &searched{StandardNames: append(slices.Clone(rule.StandardNames), rule.LowerNames...), Names: append(slices.Clone(rule.CommonNames), rule.GenericNames...)}
	if s.StandardNames == nil {
		s.StandardNames = []string{}
	}
	if rule.Role == grid.RoleLWPSD {
		s.Note = "an LWP standard_name with cell_methods standard_deviation, or a variable named in the LWP's ancillary_variables with a standard_deviation modifier (never a retrieval uncertainty: standard_error, *_unc, *_uncertainty)"
	}
	return s
}

// partialReport describes a file whose roles could not all be bound.
func partialReport(path string, fi *grid.FileInfo, err error) *inspectReport {
	rep := &inspectReport{File: path, Format: string(fi.Format), Problem: err.Error()}
	for _, d := range fi.Dims {
		rep.Dimensions = append(rep.Dimensions, dimReport{d.Name, d.Len, d.Unlimited})
	}
	for _, v := range fi.Vars {
		rep.Variables = append(rep.Variables, v.Name+"("+strings.Join(v.Dims, ", ")+")")
	}
	for _, rule := range grid.RoleRules {
		if rule.Internal {
			continue
		}
		rep.Roles = append(rep.Roles, roleReport{Role: string(rule.Role), Description: rule.Description, Required: rule.Required,
			Canonical: rule.Units, Use: roleUse[rule.Role], Searched: searchedFor(rule)})
	}
	rep.Diagnostics = diagnosticsFor(func(r grid.Role) bool { return looksPresent(fi, r.Rule()) }, false)
	for i := range rep.Diagnostics {
		rep.Diagnostics[i].Computable = false
	}
	rep.summarise()
	return rep
}

// looksPresent reports whether some variable of fi has a standard name or a
// name of the rule (used only to word the report of a file that failed to bind).
func looksPresent(fi *grid.FileInfo, rule grid.RoleRule) bool {
	for _, v := range fi.Vars {
		sn := strings.Fields(v.Text("standard_name"))
		if len(sn) == 1 && slices.Contains(rule.StandardNames, sn[0]) {
			return true
		}
		for _, n := range rule.CommonNames {
			if strings.EqualFold(n, v.Name) {
				return true
			}
		}
	}
	return false
}

// diagnosticsFor says, for every output, whether it can be computed with the
// roles present and which defaults it then uses.
func diagnosticsFor(has func(grid.Role) bool, dropletNumber bool) []diagReport {
	d := microphys.DefaultParams()
	var req, completed []string
	lwpOK := has(grid.RoleLWP) || (has(grid.RoleTau) && has(grid.RoleRe))
	if !lwpOK {
		req = append(req, fmt.Sprintf("%s (%s, or tau and r_e)", grid.RoleLWP, grid.RoleLWP.Rule().Description))
	} else if !has(grid.RoleLWP) {
		completed = append(completed, "LWP from tau and r_e (--lwp-profile; QC bit lwp_from_optical_thickness)")
	}
	switch {
	case has(grid.RoleRe) || !lwpOK:
		if !has(grid.RoleRe) && !has(grid.RoleTau) {
			req = append(req, fmt.Sprintf("%s (%s, or with LWP a droplet number: nd or --droplet-number)", grid.RoleRe, grid.RoleRe.Rule().Description))
		}
	case has(grid.RoleNd):
		completed = append(completed, "r_e from LWP and the input droplet number (QC bit droplet_number_from_input)")
	case dropletNumber:
		completed = append(completed, "r_e from LWP and the --droplet-number assumption (QC bit droplet_number_assumed)")
	default:
		req = append(req, fmt.Sprintf("%s (%s, or with LWP a droplet number: nd or --droplet-number)", grid.RoleRe, grid.RoleRe.Rule().Description))
	}
	air := ""
	switch {
	case !has(grid.RoleCTT) && (has(grid.RoleCTP) || has(grid.RoleCTH)):
		air = "air state: cloud-top temperature from the U.S. Standard Atmosphere 1976 at the cloud-top pressure or height (QC bit air_state_standard_atmosphere)"
	case !has(grid.RoleCTT) && !has(grid.RoleCTP):
		air = fmt.Sprintf("air state: default CTT %g K and CTP %g hPa used (QC bit air_state_assumed)", d.DefaultCTT, d.DefaultCTP/100)
	case !has(grid.RoleCTT):
		air = fmt.Sprintf("air state: default CTT %g K used (QC bit air_state_assumed)", d.DefaultCTT)
	case !has(grid.RoleCTP):
		air = fmt.Sprintf("air state: default CTP %g hPa used (QC bit air_state_assumed)", d.DefaultCTP/100)
	}
	tau := ""
	if !has(grid.RoleTau) {
		tau = "tau from LWP and r_e (adiabatic relation)"
	}
	var out []diagReport
	for _, o := range outputTable() {
		if o.get == nil { // a copy of an input, not a diagnostic
			continue
		}
		dr := diagReport{Output: o.name, Units: o.units, Computable: len(req) == 0, Defaults: []string{}, Missing: req}
		if dr.Missing == nil {
			dr.Missing = []string{}
		}
		dr.Defaults = append(dr.Defaults, completed...)
		if air != "" {
			dr.Defaults = append(dr.Defaults, air)
		}
		if tau != "" && o.name != "cloud_thickness" && o.name != "condensation_rate" {
			dr.Defaults = append(dr.Defaults, tau)
		}
		if o.name == "drizzle_probability" && !has(grid.RoleLWPSD) {
			dr.Defaults = append(dr.Defaults, fmt.Sprintf("gamma shape %g used (QC bit gamma_shape_assumed)", d.GammaShape))
		}
		if o.evaporation {
			if !has(grid.RoleCTH) {
				dr.Defaults = append(dr.Defaults, fmt.Sprintf("cloud base from the dry adiabat to %g hPa (QC bit cloud_base_height_assumed)", d.SurfacePressure/100))
			}
			if d.SubCloudHumidity == microphys.HumiditySurfaceRH {
				dr.Defaults = append(dr.Defaults, fmt.Sprintf("surface relative humidity %g, --surface-rh (QC bit surface_humidity_assumed; inputs have no such role)", d.SurfaceRH))
			}
		}
		out = append(out, dr)
	}
	return out
}

func (r *inspectReport) summarise() {
	s := map[string]int{"outputs": len(r.Diagnostics)}
	for _, d := range r.Diagnostics {
		switch {
		case !d.Computable:
			s["not_computable"]++
		case len(d.Defaults) > 0:
			s["computable_with_defaults"]++
		default:
			s["computable"]++
		}
	}
	for _, rr := range r.Roles {
		if rr.Found {
			s["roles_found"]++
		}
	}
	r.Summary = s
}

func dimsText(ds []dimReport) string {
	parts := make([]string, len(ds))
	for i, d := range ds {
		parts[i] = fmt.Sprintf("%s = %d", d.Name, d.Length)
		if d.Unlimited {
			parts[i] += " (unlimited)"
		}
	}
	return strings.Join(parts, ", ")
}

func orNone(s string) string {
	if s == "" {
		return "none"
	}
	return s
}

func (r *inspectReport) writeText(w io.Writer) error {
	tw := tabwriter.NewWriter(w, 0, 0, 1, ' ', 0)
	fmt.Fprintf(tw, "file:\t%s\n", r.File)
	if len(r.Files) > 1 {
		fmt.Fprintf(tw, "files:\t%s (one scene)\n", strings.Join(r.Files, ", "))
	}
	fmt.Fprintf(tw, "format:\t%s\n", r.Format)
	if r.Problem != "" {
		fmt.Fprintf(tw, "problem:\t%s\n", r.Problem)
		fmt.Fprintf(tw, "dimensions:\t%s\n", dimsText(r.Dimensions))
		fmt.Fprintf(tw, "variables:\t%s\n", strings.Join(r.Variables, ", "))
	}
	tw.Flush()
	if L := r.Layout; L != nil {
		fmt.Fprintln(w, "\nlayout:")
		tw = tabwriter.NewWriter(w, 0, 0, 1, ' ', 0)
		fmt.Fprintf(tw, "  dimensions:\t%s\n", dimsText(L.Dimensions))
		switch L.Shape {
		case string(grid.ShapeCells):
			fmt.Fprintf(tw, "  spatial:\tcells along %s (one horizontal dimension: a mesh or a list of sites)\n", L.X)
		case string(grid.ShapeSeries):
			fmt.Fprintf(tw, "  spatial:\tnone (a time series at one site)\n")
		default:
			fmt.Fprintf(tw, "  spatial:\ty = %s, x = %s\n", L.Y, L.X)
		}
		lead := strings.Join(L.Leading, ", ")
		fmt.Fprintf(tw, "  leading:\t%s\n", orNone(lead))
		fmt.Fprintf(tw, "  columns:\t%d\n", L.Columns)
		kind := "1-D"
		switch {
		case L.LatLon2D:
			kind = "2-D"
		case L.LatLonRank == 0:
			kind = "scalar"
		case L.Shape == string(grid.ShapeCells):
			kind = "1-D, one per cell"
		}
		if L.Radians {
			kind += ", radians"
		}
		if L.Lat != "" {
			desc := ""
			if !L.LatLon2D && L.Shape == string(grid.ShapeGrid) {
				desc = ", ascending"
				if L.LatDescending {
					desc = ", descending"
				}
			}
			fmt.Fprintf(tw, "  latitude:\t%s (%s%s)\n", L.Lat, kind, desc)
		} else {
			fmt.Fprintf(tw, "  latitude:\tnone found\n")
		}
		if L.Lon != "" {
			fmt.Fprintf(tw, "  longitude:\t%s (%s)\n", L.Lon, kind)
		} else {
			fmt.Fprintf(tw, "  longitude:\tnone found\n")
		}
		if L.TimeNote != "" {
			fmt.Fprintf(tw, "  time:\t%s: %s\n", L.Time, L.TimeNote)
		}
		fmt.Fprintf(tw, "  grid_mapping:\t%s\n", orNone(L.GridMapping))
		fmt.Fprintf(tw, "  kept in outputs:\t%s\n", orNone(strings.Join(L.Coords, ", ")))
		tw.Flush()
	}
	fmt.Fprintln(w, "\ninputs:")
	for _, rr := range r.Roles {
		req := "optional"
		if rr.Required {
			req = "required"
		}
		fmt.Fprintf(w, "  %s: %s (%s)\n", rr.Role, rr.Description, req)
		tw = tabwriter.NewWriter(w, 0, 0, 1, ' ', 0)
		if !rr.Found {
			if r.Problem == "" {
				fmt.Fprintf(tw, "    not found;\tsearched standard_name: %s\n", orNone(strings.Join(rr.Searched.StandardNames, ", ")))
			} else {
				fmt.Fprintf(tw, "    searched\tstandard_name: %s\n", orNone(strings.Join(rr.Searched.StandardNames, ", ")))
			}
			if rr.Searched.Note != "" {
				fmt.Fprintf(tw, "    \t%s\n", rr.Searched.Note)
			}
			fmt.Fprintf(tw, "    \tnames (case-insensitive): %s\n", strings.Join(rr.Searched.Names, ", "))
			fmt.Fprintf(tw, "    use:\t%s\n", rr.Use)
			tw.Flush()
			continue
		}
		fmt.Fprintf(tw, "    variable:\t%s\n", rr.Variable)
		if rr.InFile != "" {
			fmt.Fprintf(tw, "    in file:\t%s\n", rr.InFile)
		}
		fmt.Fprintf(tw, "    why:\t%s\n", rr.Reason)
		if rr.Canonical == "" {
			fmt.Fprintf(tw, "    units:\tnone (flag codes, read as they are)\n")
		} else {
			fmt.Fprintf(tw, "    units:\t%q (%s) -> %s, conversion %s\n", rr.UnitsGiven, rr.UnitsFrom, rr.Canonical, rr.Conversion)
		}
		fmt.Fprintf(tw, "    decoding:\t%s\n", rr.Packing)
		storage := "contiguous"
		if rr.Chunks != nil {
			c := make([]string, len(rr.Chunks))
			for i, n := range rr.Chunks {
				c[i] = fmt.Sprint(n)
			}
			storage = "chunks " + strings.Join(c, " x ")
		}
		if rr.Deflate > 0 {
			storage += fmt.Sprintf(", deflate level %d", rr.Deflate)
		} else {
			storage += ", no deflate"
		}
		fmt.Fprintf(tw, "    storage:\t%s\n", storage)
		if s := rr.Stats; s != nil {
			fmt.Fprintf(tw, "    values:\tmin %s, max %s, mean %s %s\n", num(s.Min), num(s.Max), num(s.Mean), s.Units)
			fmt.Fprintf(tw, "    missing:\t%.2f %% (%d of %d)\n", 100*s.FillFraction, s.Missing, s.Valid+s.Missing)
		}
		if len(rr.FlagCodes) > 0 {
			fmt.Fprintf(tw, "    flag codes:\t%s (columns screened with QC bit input_flag_code, not values)\n", strings.Join(rr.FlagCodes, ", "))
		}
		if rr.Note != "" {
			fmt.Fprintf(tw, "    note:\t%s\n", rr.Note)
		}
		fmt.Fprintf(tw, "    use:\t%s\n", rr.Use)
		tw.Flush()
	}
	if q := r.Quality; q != nil {
		fmt.Fprintln(w, "\nquality:")
		fmt.Fprintf(w, "  LWP kind: %s\n", q.LWPKind)
		for _, m := range q.Masks {
			fmt.Fprintf(w, "  mask %s: screens %s; columns: %d\n", m.Mask, m.Screens, m.Columns)
		}
		fmt.Fprintf(w, "  columns screened by masks and flag codes: %d\n", q.Screened)
		for _, a := range q.Assumptions {
			fmt.Fprintf(w, "  assumed: %s\n", a)
		}
	}
	for _, x := range r.Warnings {
		fmt.Fprintf(w, "warning: %s\n", x)
	}
	fmt.Fprintln(w, "\ndiagnostics:")
	var can, cannot []string
	var missing []string
	var defaults []string
	uses := map[string][]string{}
	for _, d := range r.Diagnostics {
		name := fmt.Sprintf("%s (%s)", d.Output, d.Units)
		if !d.Computable {
			cannot = append(cannot, name)
			missing = d.Missing
			continue
		}
		can = append(can, name)
		for _, x := range d.Defaults {
			if _, ok := uses[x]; !ok {
				defaults = append(defaults, x)
			}
			uses[x] = append(uses[x], d.Output)
		}
	}
	if len(can) > 0 {
		fmt.Fprintf(w, "  computable (%d):\n    %s\n", len(can), wrapList(can, 90, "    "))
	}
	if len(defaults) > 0 {
		fmt.Fprintln(w, "  defaults used for absent inputs:")
		for _, x := range defaults {
			who := "every output"
			if len(uses[x]) < len(can) {
				who = wrapList(uses[x], 84, "          ")
			}
			fmt.Fprintf(w, "    - %s\n      for %s\n", x, who)
		}
	}
	if len(cannot) > 0 {
		fmt.Fprintf(w, "  not computable (%d), missing %s:\n    %s\n", len(cannot), strings.Join(missing, " and "), wrapList(cannot, 90, "    "))
	}
	_, err := fmt.Fprintf(w, "  (the collector outputs need the collector model, on unless --no-collector; the QC variable %s is always written)\n", qcName)
	return err
}

// wrapList joins items with ", " and wraps lines at width.
func wrapList(items []string, width int, indent string) string {
	var b strings.Builder
	n := 0
	for i, it := range items {
		s := it
		if i < len(items)-1 {
			s += ","
		}
		if n > 0 && n+1+len(s) > width {
			b.WriteString("\n" + indent)
			n = 0
		} else if n > 0 {
			b.WriteByte(' ')
			n++
		}
		b.WriteString(s)
		n += len(s)
	}
	return b.String()
}
