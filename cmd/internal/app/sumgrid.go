package app

// The archive side of 'warmrain summary': inputs from manifests, selection that
// cannot silently miss, calendars, time bounds, gridded summaries and the exact
// partial summaries of batch tasks (doc/netcdf.md#partial-summary-files).

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/warmrain/warmrain/cmd/internal/batch"
	"github.com/warmrain/warmrain/cmd/internal/plots"
	"github.com/warmrain/warmrain/cmd/internal/procfile"
	"github.com/warmrain/warmrain/cmd/internal/summary"
	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/microphys"
)

// manifestOutputs returns the outputs a batch manifest of 'warmrain process' records
// as complete (status done, or skipped because a complete output existed), in
// manifest order, each once. A relative output path is taken as written when it
// exists from here, else relative to the manifest's folder.
func manifestOutputs(path string) ([]string, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("--manifest: %w", err)
	}
	defer f.Close()
	recs, _, err := batch.ReadManifest(f)
	if err != nil {
		return nil, fmt.Errorf("--manifest %s: %w", path, err)
	}
	var out []string
	seen := map[string]bool{}
	for _, r := range recs {
		if (r.Status != "done" && r.Status != "skipped") || r.Output == "" {
			continue
		}
		p := r.Output
		if _, err := os.Stat(p); err != nil && !filepath.IsAbs(p) {
			if q := filepath.Join(filepath.Dir(path), p); pathExists(q) {
				p = q
			}
		}
		if !seen[p] {
			seen[p] = true
			out = append(out, p)
		}
	}
	if len(out) == 0 {
		return nil, fmt.Errorf("--manifest %s records no complete output (no record with status done or skipped)", path)
	}
	return out, nil
}

func pathExists(p string) bool { _, err := os.Stat(p); return err == nil }

// calendarWindow returns the window of the labels from and to (nil: open) as a
// window over the seconds since 1970-01-01 of calendar kind (a time.Time whose Unix
// seconds are those calendar seconds, so that summary.Window.Contains compares them).
func calendarWindow(kind string, from, to *calLabel) (summary.Window, error) {
	var out summary.Window
	for _, c := range []struct {
		in  *calLabel
		out *time.Time
	}{{from, &out.Start}, {to, &out.End}} {
		if c.in == nil {
			continue
		}
		s, err := c.in.seconds(kind)
		if err != nil {
			return out, err
		}
		sec := math.Floor(s)
		*c.out = time.Unix(int64(sec), int64((s-sec)*1e9)).UTC()
	}
	return out, nil
}

// anyTime selects every step with a time: the accumulators get it when the steps
// are selected by the caller (unselected steps have a NaN time).
var anyTime = summary.Window{Start: time.Unix(-1<<40, 0)}

// sameCalendarGroup: the standard and proleptic Gregorian calendars give the same
// seconds for the dates of satellite and model data (after 1582).
func sameCalendarGroup(a, b string) bool {
	g := func(k string) string {
		if k == grid.CalProleptic {
			return grid.CalStandard
		}
		return k
	}
	return g(a) == g(b)
}

// stepBounds gives the time bounds of each step of a file: its time_bnds when it has
// them; otherwise the midpoints between neighbouring steps, the first and last steps
// extended by half the spacing to their neighbour. A file with one step and no
// time_bnds gives a zero-length interval (an instant), and instant is true.
func stepBounds(times, bnds []float64) (lo, hi []float64, instant bool) {
	n := len(times)
	lo, hi = make([]float64, n), make([]float64, n)
	if len(bnds) == 2*n {
		for i := range times {
			lo[i], hi[i] = math.Min(bnds[2*i], bnds[2*i+1]), math.Max(bnds[2*i], bnds[2*i+1])
		}
		return lo, hi, false
	}
	for i, t := range times {
		lo[i], hi[i] = t, t
		if i > 0 {
			lo[i] = (times[i-1] + t) / 2
		} else if n > 1 {
			lo[i] = t - (times[1]-t)/2
		}
		if i < n-1 {
			hi[i] = (t + times[i+1]) / 2
		} else if n > 1 {
			hi[i] = t + (t-times[n-2])/2
		}
		if lo[i] > hi[i] { // times not increasing: the step alone
			lo[i], hi[i] = t, t
		}
	}
	return lo, hi, n == 1
}

// extent tracks where and when the data are, selected or not, for the errors of a
// selection that selects nothing: latitude range, 1° occupancy and time range.
type extent struct {
	latMin, latMax float64
	occ            []bool // 180 x 360 one-degree cells holding a column
	tmin, tmax     float64
	calendar       string
	files          int // files with coordinates
}

func newExtent() *extent {
	return &extent{latMin: math.Inf(1), latMax: math.Inf(-1), occ: make([]bool, 180*360), tmin: math.Inf(1), tmax: math.Inf(-1)}
}

var oneDegree, _ = summary.NewLatLonGrid(1)

func (x *extent) addScene(s summary.Scene) {
	if !s.HasCoords() {
		return
	}
	x.files++
	for y := 0; y < s.NY; y++ {
		for i := 0; i < s.NX; i++ {
			lat, lon := s.LatLon(y, i)
			if k := oneDegree.Index(lat, lon); k >= 0 {
				x.occ[k] = true
				x.latMin, x.latMax = math.Min(x.latMin, lat), math.Max(x.latMax, lat)
			}
		}
	}
}

func (x *extent) addTimes(t []float64) {
	for _, v := range t {
		if !math.IsNaN(v) {
			x.tmin, x.tmax = math.Min(x.tmin, v), math.Max(x.tmax, v)
		}
	}
}

// hits reports whether some one-degree cell with data overlaps the region.
func (x *extent) hits(r *summary.Region) bool {
	for k, ok := range x.occ {
		if !ok {
			continue
		}
		i, j := k/360, k%360
		latLo, lonLo := float64(i)-90, float64(j)-180
		if latLo+1 < r.LatMin || latLo > r.LatMax {
			continue
		}
		// any of the cell's corners or its centre in the box
		for _, lon := range []float64{lonLo, lonLo + 0.5, lonLo + 1} {
			if r.Contains(math.Max(r.LatMin, math.Min(r.LatMax, latLo+0.5)), lon) {
				return true
			}
		}
	}
	return false
}

// lonText gives the shortest longitude span holding the data, in degrees east.
func (x *extent) lonText() string {
	used := make([]bool, 360)
	any := false
	for k, ok := range x.occ {
		if ok {
			used[k%360] = true
			any = true
		}
	}
	if !any {
		return "none"
	}
	best, end, run := 0, -1, 0
	for i := 0; i < 720; i++ {
		if !used[i%360] {
			if run++; run > best && run <= 360 {
				best, end = run, i
			}
		} else {
			run = 0
		}
	}
	if best == 0 {
		return "-180 to 180"
	}
	start := (end + 1) % 360
	stop := (start + 360 - best) % 360 // one past the last used column
	w := func(j int) float64 { return float64(j) - 180 }
	return fmt.Sprintf("%g to %g (one-degree cells)", w(start), w(stop))
}

func (x *extent) where() string {
	if x.files == 0 {
		return "the files have no latitude and longitude"
	}
	return fmt.Sprintf("the data cover latitudes %.4g to %.4g and longitudes %s", x.latMin, x.latMax, x.lonText())
}

func (x *extent) when() string {
	if math.IsInf(x.tmin, 1) {
		return "the files have no times"
	}
	return fmt.Sprintf("the data cover %s to %s (%s calendar)", grid.CalendarText(x.calendar, x.tmin), grid.CalendarText(x.calendar, x.tmax), x.calendar)
}

// selectionError explains a region or time window that selected no column, naming
// the data's extent, and suggests the corners swapped when the box typed
// longitude-first would have matched.
func selectionError(f summaryFlags, x *extent) error {
	var why []string
	if f.region != nil && !x.hits(f.region) {
		msg := fmt.Sprintf("--region %s selects no column: %s", regionArg(f.region), x.where())
		if sw, ok := swapped(f.region); ok && x.hits(sw) {
			msg += fmt.Sprintf("; the box read longitude-first matches: --region takes LATMIN,LATMAX,LONMIN,LONMAX, so try --region %s", regionArg(sw))
		}
		why = append(why, msg)
	}
	if !f.window.IsZero() {
		why = append(why, fmt.Sprintf("the time window (--from/--to) %s selects no time step: %s", windowText(f), x.when()))
	}
	if len(why) == 0 {
		why = append(why, "the selection keeps no column: "+x.where()+"; "+x.when())
	}
	return fmt.Errorf("nothing selected: %s", strings.Join(why, "; "))
}

func regionArg(r *summary.Region) string {
	return fmt.Sprintf("%g,%g,%g,%g", r.LatMin, r.LatMax, r.LonMin, r.LonMax)
}

// swapped is the box with its latitude and longitude pairs exchanged, when those
// make a box.
func swapped(r *summary.Region) (*summary.Region, bool) {
	s := &summary.Region{LatMin: r.LonMin, LatMax: r.LonMax, LonMin: r.LatMin, LonMax: r.LatMax}
	if s.LatMin < -90 || s.LatMax > 90 || s.Check() != nil {
		return nil, false
	}
	return s, true
}

// ---- units: the summary file in the units of the per-column files ----

// unitAliases name the declared output whose units a summary variable takes, for
// the variables whose names do not start with the output's name.
var unitAliases = map[string]string{
	"lwp_bin": lwpVarName, "nd_bin": ndVarName, "conditional_drizzle_rate": "cloud_base_drizzle_intensity",
}

// declFor returns the output declaration whose quantity the summary variable name
// holds (the longest declared name, or alias, it starts with), or nil.
func declFor(name string) *microphys.OutputDecl {
	var best *microphys.OutputDecl
	bl := 0
	for i := range microphys.OutputDecls {
		d := &microphys.OutputDecls[i]
		if strings.HasPrefix(name, d.Name) && len(d.Name) > bl {
			best, bl = d, len(d.Name)
		}
	}
	for a, n := range unitAliases {
		if strings.HasPrefix(name, a) && len(a) > bl {
			best, bl = microphys.OutputByName(n), len(a)
		}
	}
	return best
}

// inFileUnits converts a summary variable held in SI units to the units the
// per-column files use for the same quantity (microphys.OutputDecls: Units =
// SIUnits × Scale); counts, fractions and unknown quantities are unchanged.
func inFileUnits(v summary.Var) summary.Var {
	if v.Int {
		return v
	}
	d := declFor(v.Name)
	units := v.Units
	if d == nil {
		return v
	}
	if units == "" && strings.HasSuffix(v.Name, "_bounds") { // bounds inherit the coordinate's units
		units = d.SIUnits
	}
	if units != d.SIUnits || d.Scale == 1 || d.Scale == 0 {
		return v
	}
	data := make([]float64, len(v.Data))
	for i, x := range v.Data {
		data[i] = x * d.Scale
	}
	v.Data = data
	if v.Units != "" {
		v.Units = d.Units
	}
	return v
}

// ---- gridded summaries in the summary file ----

// griddedVars are the variables of a gridded summary on (lat, lon): per diagnostic
// the mean, standard deviation and count, the columns per cell, the screened
// fractions by reason and the drizzle occurrence frequencies.
func griddedVars(gr *summary.GriddedResult, info map[string]procfile.Var, coords string) []grid.VarSpec {
	dims := []string{"lat", "lon"}
	var out []grid.VarSpec
	cnt := func(d []int64) []float64 {
		f := make([]float64, len(d))
		for i, v := range d {
			f[i] = float64(v)
		}
		return f
	}
	cm := fmt.Sprintf("area: time: %%s (columns of every selected time step binned into %g-degree cells)", gr.Grid.Step)
	for k, n := range gr.Names {
		vi := info[n]
		units := vi.Units
		mean, sd := gr.Mean[k], gr.SD[k]
		if d := microphys.OutputByName(n); d != nil && d.SIUnits == units && d.Scale != 0 && d.Scale != 1 {
			mean, sd = scaledBy(mean, d.Scale), scaledBy(sd, d.Scale)
			units = d.Units
		}
		long := vi.Long
		if long == "" {
			long = n
		}
		mv := summaryVarSpec(summary.Var{Name: n + "_cell_mean", Dims: dims, Units: units, LongName: "mean over the columns in the cell of: " + long,
			Ancillary: n + "_cell_standard_deviation " + n + "_cell_count", Data: mean}, true)
		mv.Attrs = append(mv.Attrs, attr("cell_methods", fmt.Sprintf(cm, "mean")), attr("coverage_content_type", "modelResult"), attr("coordinates", coords))
		if sn := strings.Fields(vi.Std); len(sn) == 1 {
			mv.Attrs = append(mv.Attrs, attr("standard_name", sn[0]))
		}
		sv := summaryVarSpec(summary.Var{Name: n + "_cell_standard_deviation", Dims: dims, Units: units, LongName: "sample standard deviation over the columns in the cell of: " + long, Data: sd}, true)
		sv.Attrs = append(sv.Attrs, attr("cell_methods", fmt.Sprintf(cm, "standard_deviation")), attr("coverage_content_type", "auxiliaryInformation"), attr("coordinates", coords))
		cv := summaryVarSpec(summary.Var{Name: n + "_cell_count", Dims: dims, Units: "1", Int: true, LongName: "number of valid values of " + n + " in the cell", Data: cnt(gr.Count[k])}, false)
		cv.Attrs = append(cv.Attrs, attr("coverage_content_type", "auxiliaryInformation"), attr("coordinates", coords))
		out = append(out, mv, sv, cv)
	}
	cc := summaryVarSpec(summary.Var{Name: "cell_column_count", Dims: dims, Units: "1", Int: true, LongName: "number of selected columns in the cell, screened or not", Data: cnt(gr.Columns)}, false)
	cc.Attrs = append(cc.Attrs, attr("coverage_content_type", "auxiliaryInformation"), attr("coordinates", coords))
	out = append(out, cc)
	for k, r := range gr.Reasons {
		v := summaryVarSpec(summary.Var{Name: "screened_fraction_" + r, Dims: dims, Units: "1",
			LongName: "fraction of the cell's columns screened with the QC bit " + r + " of warm_rain_qc", Ancillary: "cell_column_count", Data: gr.ScreenedFraction[k]}, true)
		v.Attrs = append(v.Attrs, attr("coverage_content_type", "qualityInformation"), attr("coordinates", coords))
		out = append(out, v)
	}
	sa := summaryVarSpec(summary.Var{Name: "screened_fraction", Dims: dims, Units: "1",
		LongName: "fraction of the cell's columns screened for any reason (any QC bit of warm_rain_qc)", Ancillary: "cell_column_count", Data: gr.ScreenedAnyFraction}, true)
	sa.Attrs = append(sa.Attrs, attr("coverage_content_type", "qualityInformation"), attr("coordinates", coords))
	out = append(out, sa)
	if gr.POPFrequency != nil {
		v := summaryVarSpec(summary.Var{Name: "drizzle_frequency_pop", Dims: dims, Units: "1",
			LongName: fmt.Sprintf("drizzle occurrence frequency: fraction of valid columns with drizzle_probability above %g", gr.POPThreshold), Data: gr.POPFrequency}, true)
		v.Attrs = append(v.Attrs, attr("coverage_content_type", "modelResult"), attr("coordinates", coords))
		out = append(out, v)
	}
	if gr.LWPFrequency != nil {
		v := summaryVarSpec(summary.Var{Name: "drizzle_frequency_lwp", Dims: dims, Units: "1",
			LongName: "drizzle occurrence frequency: fraction of valid columns whose liquid_water_path exceeds critical_lwp (LWP*)", Data: gr.LWPFrequency}, true)
		v.Attrs = append(v.Attrs, attr("coverage_content_type", "modelResult"), attr("coordinates", coords))
		out = append(out, v)
	}
	return out
}

func scaledBy(d []float64, s float64) []float64 {
	o := make([]float64, len(d))
	for i, x := range d {
		o[i] = x * s
	}
	return o
}

// griddedMapSet presents a gridded result as a MapSet (mean and count per
// diagnostic on the regular grid) for the pictures.
func griddedMapSet(gr *summary.GriddedResult, info map[string]procfile.Var) summary.MapSet {
	ms := summary.MapSet{Grid: summary.Scene{Lat: gr.Lat, Lon: gr.Lon, NY: len(gr.Lat), NX: len(gr.Lon), NT: 1},
		Steps: gr.Steps, TimeMin: gr.TimeMin, TimeMax: gr.TimeMax}
	for k, n := range gr.Names {
		c := make([]int32, len(gr.Count[k]))
		for i, v := range gr.Count[k] {
			c[i] = int32(min(v, math.MaxInt32))
		}
		vi := info[n]
		ms.Maps = append(ms.Maps, summary.Map{Mean: summary.Field{Name: n, Units: vi.Units, LongName: vi.Long, Data: gr.Mean[k]}, Count: c})
	}
	return ms
}

// griddedClasses are the no-data classes of the gridded cells for the maps: a cell
// that no column reached is "no columns"; one whose columns were all screened is
// "screened", or "input missing" when every one of them lacked an input
// (input_missing); a cell with some unscreened column whose map has no value there
// (for example no finite POP) is "no value" (the plots' class for a NaN without
// one).
func griddedClasses(gr *summary.GriddedResult) []plots.NoData {
	out := make([]plots.NoData, len(gr.Columns))
	miss := slices.Index(gr.Reasons, "input_missing")
	for c, n := range gr.Columns {
		switch {
		case n == 0:
			out[c] = plots.NoColumns
		case gr.ScreenedAny[c] < n: // some column was valid: NoDataNone draws a NaN as "no value"
		case miss >= 0 && gr.ScreenedFraction[miss][c] == 1:
			out[c] = plots.MissingInput
		default:
			out[c] = plots.Screened
		}
	}
	return out
}

// ---- partial summaries ----

const partialMark = "warmrain_partial_summary"

// partialDataset writes the exact state of a summary: the joint accumulator's
// state, the gridded cells' counts and exact sums (as float64 parts whose sum is
// exact) and the time span, for --merge (doc/netcdf.md#partial-summary-files).
func partialDataset(st *summaryState, f summaryFlags, inputs []string) *grid.Dataset {
	ds := &grid.Dataset{}
	a := st.acc.State()
	dbl := func(name, dim string, d []float64, long string) {
		if len(d) == 0 { // a dimension needs a length: absent means empty
			return
		}
		ds.Dims = append(ds.Dims, grid.DimSpec{Name: dim, Len: len(d)})
		ds.Vars = append(ds.Vars, grid.VarSpec{Name: name, Dims: []string{dim}, Type: grid.Double, Data: d, Attrs: []grid.Attr{attr("long_name", long)}})
	}
	dbl("joint_bins", "joint_bin_value", a.Bins, "the joint bins' state (summary.State.Bins), SI units")
	dbl("joint_bootstrap", "joint_bootstrap_value", a.Boot, "the bootstrap replicate sums (summary.State.Boot)")
	dbl("joint_flux", "joint_flux_value", a.Flux, "the surface-fraction flux sums (summary.State.Flux), kg m-2 s-1")
	head := a
	head.Bins, head.Boot, head.Flux = nil, nil, nil
	js, err := json.Marshal(head)
	if err != nil { // only a NaN or Inf option could fail, and the options are checked
		js = []byte("{}")
	}
	g := []grid.Attr{
		attr(partialMark, "1"),
		attr("title", "partial warm-rain summary (exact sums and counts; combine with warmrain summary --merge)"),
		attr("comment", summaryCaution+" Not a summary to read: its statistics are sums; 'warmrain summary --merge' combines partial summaries exactly."),
		attr("warmrain_summary_inputs", strings.Join(inputs, "\n")),
		attr("joint_state", string(js)),
		attr("steps", []float64{float64(st.steps), st.tmin, st.tmax, st.bmin, st.bmax, b2f(st.instant), float64(st.files)}),
		attr("calendar", st.calendar),
		attr("min_count", []float64{float64(f.opt.MinCount)}), attr("min_drizzling", []float64{f.opt.MinDrizzling}),
		attr("map_names", strings.Join(st.mapNames, " ")),
	}
	for _, n := range st.mapNames {
		vi := st.mapInfo[n]
		g = append(g, attr("var_"+n, vi.Units+"\n"+vi.Long+"\n"+vi.Std))
	}
	for _, k := range slices.Sorted(mapsKeys(st.params)) {
		g = append(g, attr(paramAttrStart+k, st.params[k]))
	}
	if st.mixed {
		g = append(g, attr("warmrain_parameters_mixed", "1"))
	}
	if st.grid != nil {
		gridPartial(ds, st.grid)
		o := st.grid.Options()
		g = append(g, attr("grid_step", []float64{o.Grid.Step}), attr("drizzle_pop", []float64{o.POPThreshold}), attr("reasons", strings.Join(o.Reasons, " ")))
	}
	ds.Globals = g
	return ds
}

func b2f(b bool) float64 {
	if b {
		return 1
	}
	return 0
}

func mapsKeys[V any](m map[string]V) func(func(string) bool) {
	return func(yield func(string) bool) {
		for k := range m {
			if !yield(k) {
				return
			}
		}
	}
}

// gridPartial adds the gridded cells: cell index, columns, screened counts,
// drizzle counts, and per diagnostic the count and the exact sums as parts.
func gridPartial(ds *grid.Dataset, g *summary.Gridded) {
	cells := g.Cells()
	o := g.Options()
	n := max(1, len(cells)) // a dimension needs a length; an empty grid writes one unused cell
	idx := make([]float64, n)
	for i := range idx {
		idx[i] = -1
	}
	parts := 1
	for _, k := range cells {
		c := g.Sums(k)
		for v := range c.Moments {
			parts = max(parts, len(c.Moments[v].Sum.Parts()), len(c.Moments[v].SumSq.Parts()))
		}
	}
	ds.Dims = append(ds.Dims, grid.DimSpec{Name: "cell", Len: n}, grid.DimSpec{Name: "part", Len: parts})
	cnt := func() []float64 { return make([]float64, n) }
	cols, popN, popA, lwpN, lwpA, scrAny := cnt(), cnt(), cnt(), cnt(), cnt(), cnt()
	scr := make([][]float64, len(o.Reasons))
	for r := range scr {
		scr[r] = cnt()
	}
	vn := make([][]float64, len(o.Names))
	vs := make([][]float64, len(o.Names))
	vq := make([][]float64, len(o.Names))
	for v := range o.Names {
		vn[v], vs[v], vq[v] = cnt(), make([]float64, n*parts), make([]float64, n*parts)
	}
	for i, k := range cells {
		c := g.Sums(k)
		idx[i] = float64(k)
		cols[i], popN[i], popA[i], lwpN[i], lwpA[i] = float64(c.Columns), float64(c.POPN), float64(c.POPAbove), float64(c.LWPN), float64(c.LWPAbove)
		scrAny[i] = float64(c.ScreenedAny)
		for r, s := range c.Screened {
			scr[r][i] = float64(s)
		}
		for v := range c.Moments {
			m := &c.Moments[v]
			vn[v][i] = float64(m.N)
			copy(vs[v][i*parts:], m.Sum.Parts())
			copy(vq[v][i*parts:], m.SumSq.Parts())
		}
	}
	add := func(name string, dims []string, d []float64, long string) {
		ds.Vars = append(ds.Vars, grid.VarSpec{Name: name, Dims: dims, Type: grid.Double, Data: d, Attrs: []grid.Attr{attr("long_name", long)}})
	}
	one := []string{"cell"}
	add("cell_index", one, idx, "grid cell: row * columns + column of the global grid (row 0 at the South Pole, column 0 at 180 W); -1 unused")
	add("cell_columns", one, cols, "selected columns")
	add("cell_pop_n", one, popN, "valid columns with a POP")
	add("cell_pop_above", one, popA, "of those, POP above the threshold")
	add("cell_lwp_n", one, lwpN, "valid columns with LWP and LWP*")
	add("cell_lwp_above", one, lwpA, "of those, LWP above LWP*")
	add("cell_screened_any", one, scrAny, "columns screened for any reason")
	for r, name := range o.Reasons {
		add("cell_screened_"+name, one, scr[r], "columns screened with this reason")
	}
	for v, name := range o.Names {
		add("cell_n_"+name, one, vn[v], "valid values")
		add("cell_sum_"+name, []string{"cell", "part"}, vs[v], "exact sum of the values (SI units) as float64 parts whose exact sum it is")
		add("cell_sumsq_"+name, []string{"cell", "part"}, vq[v], "exact sum of the squared values (SI units squared) as float64 parts")
	}
}

// readPartial adds a partial summary file into the state (creating the
// accumulators from the first one).
func (st *summaryState) readPartial(e *env, f *summaryFlags, path string, first bool) error {
	r, err := grid.OpenReader(path)
	if err != nil {
		return err
	}
	defer r.Close()
	fi := r.Info()
	text := func(n string) string { a, _ := fi.Global(n); s, _ := a.Text(); return s }
	nums := func(n string) []float64 { a, _ := fi.Global(n); return a.Float64s() }
	if text(partialMark) != "1" {
		return &grid.VarError{File: path, Problem: "is not a partial summary (no global attribute " + partialMark + "); write those with 'warmrain summary --partial -o FILE'", Err: grid.ErrLayout}
	}
	read := func(n string) ([]float64, error) {
		d, _, err := r.Read(n, nil, nil)
		return d, err
	}
	var js summary.State
	if err := json.Unmarshal([]byte(text("joint_state")), &js); err != nil {
		return &grid.VarError{File: path, Problem: "global attribute joint_state: " + err.Error(), Err: grid.ErrLayout}
	}
	optional := func(n string) ([]float64, error) {
		if fi.Var(n) == nil {
			return nil, nil
		}
		return read(n)
	}
	if js.Bins, err = optional("joint_bins"); err != nil {
		return err
	}
	if js.Boot, err = optional("joint_bootstrap"); err != nil {
		return err
	}
	if js.Flux, err = optional("joint_flux"); err != nil {
		return err
	}
	// The statistics' thresholds are this run's options; bins, bootstrap and tiles are
	// the partial summaries'.
	js.Options.MinCount, js.Options.MinDrizzling, js.Options.MinBins = f.opt.MinCount, f.opt.MinDrizzling, f.opt.MinBins
	if f.opt.CILevel != 0 {
		js.Options.CILevel = f.opt.CILevel
	}
	part, err := summary.FromState(js)
	if err != nil {
		return fmt.Errorf("%s: %w", path, err)
	}
	bad := func(format string, a ...any) error {
		return &grid.VarError{File: path, Problem: fmt.Sprintf(format, a...), Err: grid.ErrLayout}
	}
	step := 0.0
	if s := nums("grid_step"); len(s) == 1 {
		step = s[0]
	}
	names := strings.Fields(text("map_names"))
	if first {
		st.acc = part
		st.mapNames = names
		st.mapInfo = map[string]procfile.Var{}
		for _, n := range names {
			p := strings.SplitN(text("var_"+n)+"\n\n", "\n", 3)
			st.mapInfo[n] = procfile.Var{Name: n, Units: p[0], Long: p[1], Std: strings.TrimSpace(p[2])}
		}
		st.params = map[string]string{}
		for _, a := range fi.Globals {
			if strings.HasPrefix(a.Name, paramAttrStart) {
				st.params[strings.TrimPrefix(a.Name, paramAttrStart)], _ = a.Text()
			}
		}
		st.mixed = text("warmrain_parameters_mixed") == "1"
		st.calendar = text("calendar")
		if f.gridStep == 0 {
			f.gridStep = step
		}
		if step != f.gridStep {
			return bad("has a %g-degree grid; --grid %g was asked (partial summaries merge on their own grid)", step, f.gridStep)
		}
		if step > 0 {
			g, err := summary.NewLatLonGrid(step)
			if err != nil {
				return err
			}
			pt := nums("drizzle_pop")
			st.grid, err = summary.NewGridded(summary.GriddedOptions{Grid: g, Names: names, Reasons: strings.Fields(text("reasons")),
				POP: popVarName, LWP: lwpVarName, CritLWP: critVarName, POPThreshold: pt[0]})
			if err != nil {
				return err
			}
		}
	} else {
		if !slices.Equal(names, st.mapNames) {
			return bad("summarises the diagnostics %v; the first partial summary has %v", names, st.mapNames)
		}
		if step != f.gridStep {
			return bad("has grid step %g, the first partial summary %g", step, f.gridStep)
		}
		if cal := text("calendar"); cal != "" && st.calendar != "" && !sameCalendarGroup(cal, st.calendar) {
			return bad("has times in the %s calendar, the first partial summary in %s", cal, st.calendar)
		} else if st.calendar == "" {
			st.calendar = cal
		}
		if !st.mixed && text("warmrain_parameters_mixed") != "1" {
			for k, v := range st.params {
				if a, ok := fi.Global(paramAttrStart + k); ok {
					if s, _ := a.Text(); s != v {
						st.mixed = true
						fmt.Fprintf(e.stderr, "warmrain summary: %s was processed with %s = %s, the first partial summary with %s; the summary mixes parameter settings\n", path, k, s, v)
						break
					}
				}
			}
		} else {
			st.mixed = true
		}
	}
	sp := nums("steps")
	if len(sp) != 7 {
		return bad("has an incomplete global attribute steps")
	}
	if !first {
		if err := st.acc.Merge(part); err != nil {
			return fmt.Errorf("%s: %w", path, err)
		}
	}
	st.steps += int(sp[0])
	st.tmin, st.tmax = math.Min(st.tmin, sp[1]), math.Max(st.tmax, sp[2])
	st.bmin, st.bmax = math.Min(st.bmin, sp[3]), math.Max(st.bmax, sp[4])
	st.instant = st.instant || sp[5] == 1
	st.files += int(sp[6])
	if st.grid != nil {
		if err := mergeGridPartial(r, st.grid, read); err != nil {
			return fmt.Errorf("%s: %w", path, err)
		}
		st.grid.AddSteps(int(sp[0]), sp[1], sp[2])
	}
	return nil
}

func mergeGridPartial(r *grid.Reader, g *summary.Gridded, read func(string) ([]float64, error)) error {
	o := g.Options()
	fi := r.Info()
	parts := 0
	for _, d := range fi.Dims {
		if d.Name == "part" {
			parts = d.Len
		}
	}
	if parts == 0 {
		return fmt.Errorf("the partial summary has no gridded cells (written without --grid)")
	}
	get := map[string][]float64{}
	names := []string{"cell_index", "cell_columns", "cell_pop_n", "cell_pop_above", "cell_lwp_n", "cell_lwp_above"}
	for _, rn := range o.Reasons {
		names = append(names, "cell_screened_"+rn)
	}
	for _, n := range o.Names {
		names = append(names, "cell_n_"+n, "cell_sum_"+n, "cell_sumsq_"+n)
	}
	for _, n := range names {
		d, err := read(n)
		if err != nil {
			return err
		}
		get[n] = d
	}
	anyScr, _ := read("cell_screened_any")
	for i, k := range get["cell_index"] {
		if k < 0 {
			continue
		}
		c := &summary.CellSums{Columns: int64(get["cell_columns"][i]), POPN: int64(get["cell_pop_n"][i]), POPAbove: int64(get["cell_pop_above"][i]),
			LWPN: int64(get["cell_lwp_n"][i]), LWPAbove: int64(get["cell_lwp_above"][i]),
			Screened: make([]int64, len(o.Reasons)), Moments: make([]summary.Moments, len(o.Names))}
		for r, rn := range o.Reasons {
			c.Screened[r] = int64(get["cell_screened_"+rn][i])
		}
		if anyScr != nil {
			c.ScreenedAny = int64(anyScr[i])
		} else { // written before the count of any reason: the largest reason's, a lower bound
			c.ScreenedAny = slices.Max(append([]int64{0}, c.Screened...))
		}
		for v, n := range o.Names {
			m := &c.Moments[v]
			m.N = int64(get["cell_n_"+n][i])
			for _, x := range get["cell_sum_"+n][i*parts : (i+1)*parts] {
				m.Sum.Add(x)
			}
			for _, x := range get["cell_sumsq_"+n][i*parts : (i+1)*parts] {
				m.SumSq.Add(x)
			}
		}
		if err := g.MergeCell(int(k), c); err != nil {
			return err
		}
	}
	return nil
}

// parseGridStep reads --grid.
func parseGridStep(s string) (float64, error) {
	if s == "" {
		return 0, nil
	}
	v, err := strconv.ParseFloat(strings.TrimSpace(s), 64)
	if err != nil {
		return 0, fmt.Errorf("%q is not a number of degrees", s)
	}
	if _, err := summary.NewLatLonGrid(v); err != nil {
		return 0, err
	}
	return v, nil
}
