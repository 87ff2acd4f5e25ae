package app

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"sort"
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

const summaryUsage = `Usage: warmrain summary PROCESSED.nc... [-o SUMMARY.nc] [--plots DIR] [options]

Reads files written by 'warmrain process', one time step at a time, and reports:
drizzle probability (POP) and mean cloud-base drizzle rate binned jointly by liquid
water path (LWP) and droplet number (N_d); the precipitation susceptibilities
S_POP = -d ln POP / d ln N_d, S_R (mean rate) and S_I (conditional rate) per LWP bin
with their standard errors, and with --bootstrap their confidence intervals; the
flux-weighted fraction of drizzle reaching the surface (sum of surface_drizzle_rate
over sum of cloud_base_drizzle_rate); and maps of every diagnostic.

PROCESSED may be a file, a quoted glob ('out/*.nc') or @LIST (a file naming one
input per line); --manifest adds the outputs a batch manifest of 'warmrain process'
records as complete.

The table goes to stdout. -o writes the same statistics and the maps as a CF NetCDF
file, in the units of the per-column files (LWP g m-2, N_d cm-3, rates mm day-1),
with time bounds spanning the inputs' time bounds; --plots writes PNG pictures into
DIR: one quick-look map per diagnostic (map_<variable>_mean.png, or _first.png with
--map-of first), a map of how many valid values each cell averaged
(map_valid_count.png), POP against LWP for several N_d bins (pop_vs_lwp.png) and the
susceptibilities against LWP (susceptibility_vs_lwp.png). Existing files are only
replaced with --force.

Maps. Without --grid, files on one common grid or swath give time-mean maps on it;
files on different grids give none (stderr says so). --grid DEG bins the columns of
every file (grids, swaths, meshes with coordinates, on any grids) into DEG-degree
cells of a regular latitude-longitude grid: per cell the count, mean and standard
deviation of every diagnostic, the fraction of columns screened by each QC reason and
the drizzle occurrence frequencies (POP above --drizzle-pop, and LWP above the
critical LWP*). The sums are exact, so the numbers do not depend on the order of the
files. Latitude and longitude are coordinates, never summarised; longitudes may be
given as -180..180 or 0..360.

Batch tasks. --partial -o PART.nc writes a partial summary (exact sums and counts)
instead of the statistics, one per task; --merge PART.nc... combines partial
summaries into the summary a single run over all the files would give.

Maps have coastlines (GSHHG, from the Debian package gmt-gshhg-low; without it
they are drawn without, and stderr says so once), fixed colour limits per
variable chosen from its physical range so that maps compare (logarithmic for
quantities that span decades; --range VAR=LO:HI[:log] replaces them, in the units
the map shows), a legend of the cells without a value (input missing, screened by
QC, outside --region, no value), and are cropped to --region. Their titles name
only the parameters the variable depends on. See doc/maps.md.

Any processed shape is summarised: grids, swaths, meshes and lists of sites (one
horizontal dimension), time series at one site, with any leading dimensions (time,
ensemble member). --region needs latitude and longitude (in degrees or radians) in
every file. A --region or --from/--to window that selects no column is an error
naming where and when the data are (and the box to try when it was typed
longitude-first); with --partial it writes an empty partial summary and a note.

Columns flagged by a screening bit of warm_rain_qc (input_missing, input_invalid,
thin_cloud, effective_radius_out_of_range, possible_ice, droplet_number_implausible,
thickness_implausible, and those of the input's quality: input_flag_code,
masked_by_flag_meaning, masked_by_threshold, phase_not_liquid, multi_layer_cloud,
clear_sky, cloud_fraction_below_minimum; read from the file's flag_masks and
flag_meanings) are left out. LWP is taken from the variable liquid_water_path,
or else from the one variable with standard_name
atmosphere_mass_content_of_cloud_liquid_water.

Neighbouring columns are correlated, so the sampling errors treat contiguous tiles of
each time step as independent: the bin means get a tile standard error and an
effective number of independent columns, and --bootstrap resamples tiles (--tile sets
their side in cells; by default round(N^(1/(d+2))) for N cells in d dimensions, 32 for
a 1000 x 1000 grid; --tile 1 treats columns as independent). When the processed
files link <name>_standard_error to the drizzle probability or rate, the table also
gives the mean retrieval error per bin.

Bins are given in display units: --lwp-bins in g m-2, --nd-bins in cm-3, either as
LO:HI:N (N logarithmic bins from LO to HI) or as a comma-separated list of ascending
edges. Times (--from, --to; the window is [FROM, TO)) are dates and times of the
files' calendar (standard, proleptic_gregorian, julian, noleap, 365_day, all_leap,
366_day, 360_day): 2026-07-01, 2026-07-01T06:00 or RFC 3339.

Results are research diagnostics, not for operational forecasting or flight-safety
decisions.

Examples:
  warmrain summary out/*.nc
  warmrain summary out/*.nc -o summary.nc --plots pictures --region -30,-10,-90,-70
  warmrain summary out/*.nc --plots pictures --range droplet_number=20:500:log
  warmrain summary day1.nc day2.nc --from 2026-07-01 --to 2026-07-02 --bootstrap 200 --tile 16
  warmrain summary 'granules/*_warmrain.nc' --grid 1 -o gridded.nc --plots maps
  warmrain summary @task07.txt --grid 1 --partial -o parts/task07.nc
  warmrain summary --merge 'parts/*.nc' -o gridded.nc --plots maps
`

// Names in processed files: rows of microphys.OutputDecls.
var (
	lwpVarName  = procfile.LWPName
	ndVarName   = procfile.NdName
	popVarName  = procfile.POPName
	rateVarName = procfile.RateName
	surfVarName = procfile.SurfName
	baseVarName = procfile.BaseName
	critVarName = mustOutput("critical_lwp").Name
	mustOutput  = procfile.MustOutput
	screenWords = procfile.ScreenWords
)

const (
	paramAttrStart = "warmrain_parameter_"
	mapSuffix      = "_time_mean" // of the map variables in the summary file
	summaryCaution = "Research diagnostics: not for operational forecasting or flight-safety decisions. Statistics of modelled per-column diagnostics; they inherit every assumption of the adiabatic cloud model and of the retrievals behind the inputs."
)

type summaryFlags struct {
	output, plotDir, mapOf string
	region                 *summary.Region
	window                 summary.Window
	from, to               *calLabel // --from and --to as written (dates of the files' calendar)
	opt                    summary.Options
	width, height          int
	force                  bool
	gridStep               float64 // --grid degrees, 0 = none
	popThreshold           float64 // --drizzle-pop
	partial, merge         bool
	ranges                 plots.Ranges // --range: the user's colour ranges
}

func runSummary(e *env, args []string) error {
	fs := newFlagSet(e, "summary", summaryUsage)
	output := fs.StringP("output", "o", "", "write the summary as a CF NetCDF file `SUMMARY.nc`")
	plotDir := fs.String("plots", "", "write PNG pictures into `DIR` (created if missing)")
	region := fs.String("region", "", "keep columns in the box `LATMIN,LATMAX,LONMIN,LONMAX` (degrees; LONMIN > LONMAX crosses 180°)")
	from := fs.String("from", "", "keep time steps at or after `TIME` (UTC, a date of the files' calendar)")
	to := fs.String("to", "", "keep time steps before `TIME` (UTC, a date of the files' calendar)")
	lwpBins := fs.String("lwp-bins", "20:500:10", "LWP bins in g m-2: `LO:HI:N` logarithmic, or edges E1,E2,...")
	ndBins := fs.String("nd-bins", "10:1000:10", "N_d bins in cm-3: `LO:HI:N` logarithmic, or edges E1,E2,...")
	boot := fs.Int("bootstrap", 0, "number `N` of tile-bootstrap replicates for the susceptibility intervals (0 = off; 200 or more for 95% intervals)")
	seed := fs.Uint64("seed", 1, "seed `S` of the bootstrap random numbers")
	tile := fs.Int("tile", 0, "side `CELLS` of the tiles treated as independent by the standard errors and the bootstrap (0 = round(N^(1/(d+2))) of each scene's N cells in d dimensions; 1 = independent columns)")
	ciLevel := fs.Float64("ci-level", 0.95, "level `P` of the bootstrap confidence intervals, between 0 and 1")
	minCount := fs.Int("min-count", 50, "least columns `N` an (LWP, N_d) bin needs to enter a fit or a curve")
	minDrz := fs.Float64("min-drizzling", 10, "least drizzling columns `N` (the sum of the columns' POP) an (LWP, N_d) bin needs to enter a fit and show a conditional rate")
	size := fs.String("plot-size", "900x600", "picture size `WxH` in pixels")
	mapOf := fs.String("map-of", "mean", "what the maps show: `mean` (time mean) or first (first selected time step)")
	force := fs.Bool("force", false, "overwrite an existing summary file and existing pictures")
	gridDeg := fs.String("grid", "", "bin the columns of every file (grids, swaths, meshes with coordinates) onto a regular latitude-longitude grid of `DEG` degrees (180/DEG whole)")
	popThr := fs.Float64("drizzle-pop", 0.5, "with --grid: a column counts as drizzling in the occurrence frequency when its POP exceeds `P`")
	partial := fs.Bool("partial", false, "write -o as a partial summary (exact sums and counts, e.g. one per batch task) for --merge")
	merge := fs.Bool("merge", false, "the inputs are partial summaries (--partial): combine them exactly")
	manifest := fs.String("manifest", "", "also summarise the outputs that the batch manifest `FILE` of 'warmrain process' records as complete")
	ranges := fs.StringArray("range", nil, "colour range of VAR's maps in the units the map shows, instead of the declared one: `VAR=LO:HI[:log]` (repeatable)")
	if err := parseFlags(e, fs, summaryUsage, args); err != nil {
		return err
	}
	inputs, err := batch.ExpandInputs(fs.Args())
	if err != nil {
		return usagef("%v", err)
	}
	if *manifest != "" {
		m, err := manifestOutputs(*manifest)
		if err != nil {
			return usagef("%v", err)
		}
		for _, p := range m {
			if !slices.Contains(inputs, p) {
				inputs = append(inputs, p)
			}
		}
	}
	if len(inputs) == 0 {
		return usagef("no processed files given")
	}
	f := summaryFlags{output: *output, plotDir: *plotDir, mapOf: *mapOf, force: *force, partial: *partial, merge: *merge, popThreshold: *popThr}
	if f.ranges, err = plots.ParseRanges(*ranges); err != nil {
		return usagef("%v", err)
	}
	if f.mapOf != "mean" && f.mapOf != "first" {
		return usagef("--map-of %q: expected mean or first", f.mapOf)
	}
	if f.gridStep, err = parseGridStep(*gridDeg); err != nil {
		return usagef("--grid: %v", err)
	}
	if !(f.popThreshold >= 0 && f.popThreshold < 1) {
		return usagef("--drizzle-pop %g: expected a probability in [0, 1)", f.popThreshold)
	}
	if f.gridStep > 0 && f.mapOf == "first" {
		return usagef("--map-of first maps the first time step on its own grid; with --grid the maps are the cells' means")
	}
	if f.partial && f.output == "" {
		return usagef("--partial writes the partial summary to -o FILE; give -o")
	}
	if f.partial && f.plotDir != "" {
		return usagef("--partial writes sums, not statistics: draw the pictures with --merge")
	}
	if f.merge {
		for _, n := range []string{"bootstrap", "seed", "tile", "lwp-bins", "nd-bins"} {
			if fs.Changed(n) {
				return usagef("--merge takes --%s from the partial summaries; give it to the --partial runs", n)
			}
		}
	}
	if f.merge && (*region != "" || *from != "" || *to != "") {
		return usagef("--merge combines partial summaries as they were selected; give --region, --from and --to to the --partial runs")
	}
	if *region != "" {
		if f.region, err = parseRegion(*region); err != nil {
			return usagef("--region: %v", err)
		}
	}
	if *from != "" {
		if f.window.Start, f.from, err = parseUTC(*from); err != nil {
			return usagef("--from: %v", err)
		}
	}
	if *to != "" {
		if f.window.End, f.to, err = parseUTC(*to); err != nil {
			return usagef("--to: %v", err)
		}
	}
	if f.from != nil && f.to != nil && !f.from.before(*f.to) {
		return usagef("--to %s is not after --from %s", *to, *from)
	}
	if f.opt.LWPEdges, err = parseBins(*lwpBins, 1e-3); err != nil {
		return usagef("--lwp-bins: %v", err)
	}
	if f.opt.NdEdges, err = parseBins(*ndBins, 1e6); err != nil {
		return usagef("--nd-bins: %v", err)
	}
	if *boot < 0 {
		return usagef("--bootstrap %d: expected 0 or more replicates", *boot)
	}
	if *minCount < 1 {
		return usagef("--min-count %d: expected at least 1", *minCount)
	}
	if !(*minDrz > 0) || math.IsInf(*minDrz, 0) {
		return usagef("--min-drizzling %g: expected a number above 0", *minDrz)
	}
	f.opt.MinDrizzling = *minDrz
	if _, err := fmt.Sscanf(*size, "%dx%d", &f.width, &f.height); err != nil || f.width < 200 || f.height < 150 || f.width > 10000 || f.height > 10000 {
		return usagef("--plot-size %q: expected WxH with W in 200..10000 and H in 150..10000 pixels", *size)
	}
	f.opt.Region, f.opt.Window = f.region, f.window
	f.opt.Bootstrap, f.opt.Seed, f.opt.MinCount = *boot, *seed, *minCount
	if *tile < 0 {
		return usagef("--tile %d: expected 0 (automatic) or a side of 1 or more cells", *tile)
	}
	if !(*ciLevel > 0 && *ciLevel < 1) {
		return usagef("--ci-level %g: expected a level between 0 and 1, such as 0.95", *ciLevel)
	}
	f.opt.Tile, f.opt.CILevel = *tile, *ciLevel
	f.opt.QCMask = 1 // each file's screening bits are mapped to bit 0 (see readStep)

	// Refuse to overwrite before any work.
	if f.output != "" {
		for _, in := range inputs {
			if sameFile(in, f.output) {
				return usagef("-o %s is one of the input files; refusing to overwrite an input", f.output)
			}
		}
		if _, err := os.Stat(f.output); err == nil && !f.force {
			return fmt.Errorf("%s already exists; use --force to overwrite it", f.output)
		}
	}
	if f.plotDir != "" && !f.force {
		ents, _ := os.ReadDir(f.plotDir)
		for _, d := range ents {
			n := d.Name()
			if strings.HasSuffix(n, ".png") && (strings.HasPrefix(n, "map_") || n == "pop_vs_lwp.png" || n == "susceptibility_vs_lwp.png") {
				return fmt.Errorf("--plots %s already holds pictures (%s); use --force to overwrite them, or another folder", f.plotDir, n)
			}
		}
	}
	return summarise(e, f, inputs, args)
}

func sameFile(a, b string) bool {
	aa, _ := filepath.Abs(a)
	bb, _ := filepath.Abs(b)
	if aa == bb {
		return true
	}
	sa, err1 := os.Stat(a)
	sb, err2 := os.Stat(b)
	return err1 == nil && err2 == nil && os.SameFile(sa, sb)
}

func parseRegion(s string) (*summary.Region, error) {
	p := strings.Split(s, ",")
	if len(p) != 4 {
		return nil, fmt.Errorf("%q: expected four numbers LATMIN,LATMAX,LONMIN,LONMAX", s)
	}
	var v [4]float64
	for i, x := range p {
		f, err := strconv.ParseFloat(strings.TrimSpace(x), 64)
		if err != nil || math.IsNaN(f) || math.IsInf(f, 0) {
			return nil, fmt.Errorf("%q: %q is not a number", s, x)
		}
		v[i] = f
	}
	r := &summary.Region{LatMin: v[0], LatMax: v[1], LonMin: v[2], LonMax: v[3]}
	if r.LatMin < -90 || r.LatMax > 90 {
		if sw, ok := swapped(r); ok {
			return nil, fmt.Errorf("%q: latitudes must lie in -90..90; the box is LATMIN,LATMAX,LONMIN,LONMAX: typed longitude-first? try --region %s", s, regionArg(sw))
		}
		return nil, fmt.Errorf("%q: latitudes must lie in -90..90", s)
	}
	if err := r.Check(); err != nil {
		return nil, err
	}
	return r, nil
}

// calLabel is a date and clock of --from or --to as written, read in the files'
// calendar: 2001-02-30 is a day of the 360_day calendar, which a time.Time would
// carry over to 03-02.
type calLabel struct {
	y, m, d int
	clock   float64 // seconds since midnight
}

func (l calLabel) String() string {
	c := int(l.clock)
	return fmt.Sprintf("%04d-%02d-%02dT%02d:%02d:%02dZ", l.y, l.m, l.d, c/3600, c/60%60, c%60)
}

// before compares labels by date and clock, the same order in every calendar.
func (l calLabel) before(o calLabel) bool {
	a, b := [3]int{l.y, l.m, l.d}, [3]int{o.y, o.m, o.d}
	if a != b {
		return a[0] < b[0] || a[0] == b[0] && (a[1] < b[1] || a[1] == b[1] && a[2] < b[2])
	}
	return l.clock < o.clock
}

// seconds is the label in seconds since 1970-01-01 of the calendar kind.
func (l calLabel) seconds(kind string) (float64, error) {
	days, err := grid.CalendarDays(kind, l.y, l.m, l.d)
	if err != nil {
		return 0, err
	}
	return float64(days)*86400 + l.clock, nil
}

// tableWindow is the window of the table: --from and --to as written, in the
// files' calendar (the accumulators select every step with a time, anyTime).
func (st *summaryState) tableWindow(f summaryFlags) summary.Window {
	if f.window.IsZero() {
		return summary.Window{}
	}
	cal := st.calendar
	if cal == "" {
		cal = grid.CalStandard
	}
	w := f.window
	w.Text = windowText(f) + ", dates of the " + cal + " calendar"
	return w
}

// windowText is the --from/--to window as written, for the table and messages.
func windowText(f summaryFlags) string {
	side := func(l *calLabel) string {
		if l == nil {
			return "open"
		}
		return l.String()
	}
	return side(f.from) + " to " + side(f.to) + " (end excluded)"
}

var reLabel = regexp.MustCompile(`^(\d{4})-(\d{2})-(\d{2})(?:[T ](\d{2}):(\d{2})(?::(\d{2}(?:\.\d*)?))?Z?)?$`)

// parseUTC reads a time of --from or --to: as a time.Time (an offset is turned to
// UTC) and as the label of the files' calendar; a day up to 31 is read as a label
// only (a day of a model calendar, such as 2001-02-30 of 360_day).
func parseUTC(s string) (time.Time, *calLabel, error) {
	bad := fmt.Errorf("%q: expected a UTC time such as 2026-07-01, 2026-07-01T06:00 or 2026-07-01T06:00:00Z (a date of the files' calendar)", s)
	for _, layout := range []string{time.RFC3339Nano, "2006-01-02T15:04Z07:00", "2006-01-02T15:04:05", "2006-01-02T15:04", "2006-01-02 15:04", "2006-01-02"} {
		if t, err := time.Parse(layout, s); err == nil {
			t = t.UTC()
			clock := float64(t.Hour()*3600+t.Minute()*60+t.Second()) + float64(t.Nanosecond())*1e-9
			return t, &calLabel{t.Year(), int(t.Month()), t.Day(), clock}, nil
		}
	}
	m := reLabel.FindStringSubmatch(s)
	if m == nil {
		return time.Time{}, nil, bad
	}
	num := func(x string) int { v, _ := strconv.Atoi(x); return v }
	sec, _ := strconv.ParseFloat("0"+m[6], 64)
	l := calLabel{num(m[1]), num(m[2]), num(m[3]), float64(num(m[4])*3600+num(m[5])*60) + sec}
	if l.m < 1 || l.m > 12 || l.d < 1 || l.d > 31 || num(m[4]) > 23 || num(m[5]) > 59 || sec >= 60 {
		return time.Time{}, nil, bad
	}
	return time.Date(l.y, time.Month(l.m), l.d, 0, 0, 0, 0, time.UTC).Add(time.Duration(l.clock * 1e9)), &l, nil
}

// parseBins reads LO:HI:N or E1,E2,... in display units and returns SI edges.
func parseBins(s string, scale float64) ([]float64, error) {
	num := func(x string) (float64, error) {
		f, err := strconv.ParseFloat(strings.TrimSpace(x), 64)
		if err != nil || !(f > 0) || math.IsInf(f, 0) {
			return 0, fmt.Errorf("%q: %q is not a positive number", s, x)
		}
		return f, nil
	}
	if p := strings.Split(s, ":"); len(p) == 3 {
		lo, err := num(p[0])
		if err != nil {
			return nil, err
		}
		hi, err := num(p[1])
		if err != nil {
			return nil, err
		}
		n, err := strconv.Atoi(strings.TrimSpace(p[2]))
		if err != nil || n < 1 || n > 200 {
			return nil, fmt.Errorf("%q: the number of bins must be 1..200", s)
		}
		if !(hi > lo) {
			return nil, fmt.Errorf("%q: HI must exceed LO", s)
		}
		return summary.LogEdges(lo*scale, hi*scale, n), nil
	}
	p := strings.Split(s, ",")
	if len(p) < 2 {
		return nil, fmt.Errorf("%q: expected LO:HI:N or at least two comma-separated edges", s)
	}
	edges := make([]float64, len(p))
	for i, x := range p {
		f, err := num(x)
		if err != nil {
			return nil, err
		}
		if i > 0 && !(f > edges[i-1]/scale) {
			return nil, fmt.Errorf("%q: edges must increase", s)
		}
		edges[i] = f * scale
	}
	return edges, nil
}

// summaryState gathers everything over the files.
type summaryState struct {
	acc       *summary.Accumulator
	maps      *summary.MapAccumulator
	grid      *summary.Gridded // --grid
	mapNames  []string
	mapInfo   map[string]procfile.Var
	mapsOK    bool
	first     map[string][]float64 // first selected step (--map-of first)
	firstTime float64
	firstGrid summary.Scene
	params    map[string]string // warmrain_parameter_* of the first file
	mixed     bool              // parameters differ between files
	history   string            // of the only input
	files     int
	// steps, tmin and tmax count the selected time steps (leading indices) and
	// their time range over every file, maps or not; bmin and bmax span their time
	// bounds (stepBounds), instant is set when a step had zero length.
	steps                  int
	tmin, tmax, bmin, bmax float64
	instant                bool
	calendar, calFile      string // grid.CalendarKind of the times, and the file it came from
	ext                    *extent
	// Per cell of the map grid over the selected steps: the steps screened and those
	// screened for a missing input (the maps' no-data classes), and the first selected
	// step's QC (--map-of first). valid and shapeAssumed count the valid columns and
	// those whose gamma shape was --gamma-shape's (for the map titles).
	cellScreened, cellMissing []int32
	firstQC                   []uint16
	lwpName                   string // the first file's LWP variable (styled as liquid_water_path)
	valid, shapeAssumed       int64
	gridClasses               []plots.NoData // --grid: the no-data classes of the cells
	gridRes                   *summary.GriddedResult
}

// stepSpan is ms with the step count and time range of every selected step, for
// the titles of the curves (which also cover files without maps).
func (st *summaryState) stepSpan(ms summary.MapSet) summary.MapSet {
	ms.Steps, ms.TimeMin, ms.TimeMax = st.steps, st.tmin, st.tmax
	if math.IsInf(st.tmin, 1) {
		ms.TimeMin, ms.TimeMax = math.NaN(), math.NaN()
	}
	return ms
}

func summarise(e *env, f summaryFlags, inputs, args []string) error {
	st := &summaryState{mapsOK: true, firstTime: math.NaN(), tmin: math.Inf(1), tmax: math.Inf(-1),
		bmin: math.Inf(1), bmax: math.Inf(-1), ext: newExtent()}
	accOpt := f.opt
	if !f.window.IsZero() { // the steps are selected here, in each file's calendar
		accOpt.Window = anyTime
	}
	if f.merge {
		for k, in := range inputs {
			if err := st.readPartial(e, &f, in, k == 0); err != nil {
				return err
			}
		}
		st.mapsOK = false
		if st.acc.Result().Counts.Selected == 0 {
			return fmt.Errorf("nothing selected: the partial summaries %s hold no selected column (their --region or --from/--to missed the data; their runs said where the data are)", strings.Join(inputs, ", "))
		}
	} else {
		var err error
		if st.acc, err = summary.New(accOpt); err != nil {
			return usagef("%v", err)
		}
		if st.maps, err = summary.NewMaps(f.region, accOpt.Window); err != nil {
			return usagef("%v", err)
		}
		st.mapsOK = f.gridStep == 0
		for k, in := range inputs {
			if err := st.addFile(e, f, accOpt.Window, in, k == 0); err != nil {
				return err
			}
		}
		if (f.region != nil || !f.window.IsZero()) && st.acc.Result().Counts.Selected == 0 {
			st.ext.calendar = st.calendar
			if st.ext.calendar == "" {
				st.ext.calendar = grid.CalStandard
			}
			err := selectionError(f, st.ext)
			if !f.partial {
				return err
			}
			// One task's share of an archive may lie outside the selection: its
			// partial summary is empty, and --merge checks the whole.
			fmt.Fprintf(e.stderr, "warmrain summary: note: the partial summary is empty: %v\n", err)
		}
	}
	if f.partial {
		pr := st.acc.Result()
		pr.Options.Window = st.tableWindow(f)
		if err := summary.WriteTable(e.stdout, pr); err != nil {
			return err
		}
		if err := grid.WriteDataset(f.output, partialDataset(st, f, inputs), f.force); err != nil {
			return err
		}
		fmt.Fprintf(e.stderr, "warmrain summary: wrote the partial summary %s (combine partial summaries with --merge)\n", f.output)
		return nil
	}
	res := st.acc.Result()
	if !st.mixed { // what sets S_R and S_I (summary.LawNote)
		if c, err := strconv.ParseFloat(strings.Fields(st.params["drizzle_law_c"] + " x")[0], 64); err == nil {
			res.Options.LawNdExponent = c
		}
	}
	res.Options.Window = st.tableWindow(f)
	if err := summary.WriteTable(e.stdout, res); err != nil {
		return err
	}
	var ms summary.MapSet
	var gr *summary.GriddedResult
	switch {
	case st.grid != nil:
		gr = st.grid.Result(st.grid.Extent())
		if gr.Extent.NY > 0 {
			ms = griddedMapSet(gr, st.mapInfo)
			st.gridClasses = griddedClasses(gr)
			st.gridRes = gr
		} else {
			fmt.Fprintf(e.stderr, "warmrain summary: --grid: no column with latitude and longitude was selected; no gridded maps\n")
			gr = nil
		}
	case st.maps != nil:
		ms = st.maps.Result()
	}
	if !st.mapsOK && gr == nil {
		ms.Maps = nil
	}
	if f.output != "" {
		ds := summaryDataset(f, st, res, ms, gr, inputs, args)
		if err := grid.WriteDataset(f.output, ds, f.force); err != nil {
			return err
		}
		fmt.Fprintf(e.stderr, "warmrain summary: wrote %s\n", f.output)
	}
	if f.plotDir != "" {
		if err := writePictures(e, f, st, res, ms); err != nil {
			return err
		}
	}
	return nil
}

func (st *summaryState) addFile(e *env, f summaryFlags, accWindow summary.Window, path string, first bool) error {
	p, err := procfile.Open(path, f.window)
	if err != nil {
		return err
	}
	defer p.Close()
	st.files++
	params := map[string]string{}
	for _, a := range p.Info.Globals {
		if strings.HasPrefix(a.Name, paramAttrStart) {
			params[strings.TrimPrefix(a.Name, paramAttrStart)], _ = a.Text()
		}
	}
	if first {
		st.params = params
		st.mapInfo = p.Vars
		st.lwpName = p.LWP
		for _, v := range p.Info.Vars { // file order; latitude and longitude are no diagnostics
			if vi, ok := p.Vars[v.Name]; ok && mappedUncertainty(v.Name) && !plots.IsCoordinate(v.Name, vi.Std, v.Text("units")) {
				st.mapNames = append(st.mapNames, v.Name)
			}
		}
		if a, ok := p.Info.Global("history"); ok {
			st.history, _ = a.Text()
		}
		if f.gridStep > 0 {
			g, err := summary.NewLatLonGrid(f.gridStep)
			if err != nil {
				return usagef("--grid: %v", err)
			}
			reasons := make([]string, len(screenWords))
			copy(reasons, screenWords)
			st.grid, err = summary.NewGridded(summary.GriddedOptions{Grid: g, Region: f.region, Window: accWindow, Names: st.mapNames, Reasons: reasons,
				POP: popVarName, LWP: p.LWP, CritLWP: critVarName, POPThreshold: f.popThreshold})
			if err != nil {
				return err
			}
			// About 145 bytes per diagnostic and cell with columns (measured; the exact
			// sums): say so when a full grid would take more than 1 GiB.
			cells := float64(g.NLat * g.NLon)
			if r := f.region; r != nil {
				w := math.Mod(r.LonMax-r.LonMin+720, 360)
				if r.LonMax-r.LonMin >= 360 {
					w = 360
				}
				cells *= (r.LatMax - r.LatMin + f.gridStep) / 180 * (w + f.gridStep) / 360
			}
			if need := cells * float64(len(st.mapNames)) * 145; need > 1<<30 {
				fmt.Fprintf(e.stderr, "warmrain summary: --grid %g: memory grows with the cells that receive columns; if columns covered the whole %s, the sums of %d diagnostics would take about %.1f GB (a coarser --grid or a --region needs less)\n",
					f.gridStep, map[bool]string{true: "region", false: "globe"}[f.region != nil], len(st.mapNames), need/1e9)
			}
		}
	} else if !st.mixed {
		for k, v := range st.params {
			if params[k] != v {
				st.mixed = true
				fmt.Fprintf(e.stderr, "warmrain summary: %s was processed with %s = %s, the first file with %s; the summary mixes parameter settings\n", path, k, params[k], v)
				break
			}
		}
	}
	if a, ok := p.Info.Global("warmrain_ensemble_members"); ok && !st.mixed {
		// An ensemble of parameter sets (process --ensemble): its members are pooled
		// like time steps, which mixes the parameter settings.
		n, _ := a.Text()
		st.mixed = true
		fmt.Fprintf(e.stderr, "warmrain summary: %s holds %s ensemble members processed with different parameters; the summary pools them (summarise the single runs of one parameter set to compare members)\n", path, n)
	}
	popErr, rateErr := standardError(p, popVarName), standardError(p, p.Rate)
	needs := append([]string{p.LWP, ndVarName, popVarName, p.Rate, p.Surf, p.Base, popErr, rateErr}, st.mapNames...)
	fileKey := sceneKey(path)
	s := p.Scene
	st.ext.addScene(s)
	if f.region != nil && s.Lat == nil {
		return &grid.VarError{File: path, Problem: "--region selects by latitude and longitude, and this file has none; leave --region out for files without coordinates", Err: grid.ErrLayout}
	}
	if st.grid != nil && s.Lat == nil {
		return &grid.VarError{File: path, Problem: "--grid bins columns by latitude and longitude, and this file has none; leave --grid out for files without coordinates", Err: grid.ErrLayout}
	}
	if p.NoMaps != "" && st.mapsOK && st.grid == nil {
		st.mapsOK = false
		fmt.Fprintf(e.stderr, "warmrain summary: no maps: %s: %s; the binned statistics use every column\n", path, p.NoMaps)
	}
	if p.TimeVals == nil && !f.window.IsZero() {
		fmt.Fprintf(e.stderr, "warmrain summary: %s has no time axis; the time window cannot select it, skipped\n", path)
		return nil
	}
	// The window in the file's calendar; one calendar for all files with times.
	win := f.window
	if p.TimeVals != nil {
		if st.calendar == "" {
			st.calendar, st.calFile = p.Calendar, path
		} else if !sameCalendarGroup(st.calendar, p.Calendar) {
			return &grid.VarError{File: path, Problem: fmt.Sprintf("has times in the %s calendar and %s in the %s calendar; summarise files of one calendar together", p.Calendar, st.calFile, st.calendar), Err: grid.ErrLayout}
		}
		if win, err = calendarWindow(p.Calendar, f.from, f.to); err != nil {
			return usagef("--from/--to in the %s calendar of %s: %v", p.Calendar, path, err)
		}
		st.ext.addTimes(p.TimeVals)
	}
	var blo, bhi []float64
	if p.TimeVals != nil && p.Hz.Time >= 0 {
		var inst bool
		blo, bhi, inst = stepBounds(p.TimeVals, p.TimeBnds)
		st.instant = st.instant || inst
	}
	cells := s.Cells()
	return p.Blocks(func(b procfile.Block) error {
		times := p.BlockTimes(b)
		sel := times == nil
		for _, t := range times {
			sel = sel || win.Contains(t)
		}
		if !sel {
			return nil
		}
		d, qc, reasons, err := p.StepAll(b, needs)
		if err != nil {
			return err
		}
		for k := 0; k < b.N; k++ {
			if times == nil {
				st.steps++
			} else if win.Contains(times[k]) {
				st.steps++
				st.tmin, st.tmax = math.Min(st.tmin, times[k]), math.Max(st.tmax, times[k])
				ti := b.Index[p.Hz.Time]
				if b.Inner == p.Hz.Time {
					ti = b.Lo + k
				}
				st.bmin, st.bmax = math.Min(st.bmin, blo[ti]), math.Max(st.bmax, bhi[ti])
			} else {
				times[k] = math.NaN() // not selected (accWindow selects the finite times)
			}
		}
		sc := summary.Scene{Lat: s.Lat, Lon: s.Lon, NY: s.NY, NX: s.NX, NT: b.N, Time: times, Key: fileKey ^ uint64(b.Number)<<40}
		cols := summary.Columns{
			LWP: summary.Field{Name: p.LWP, Units: mustOutput(lwpVarName).SIUnits, Data: d[p.LWP]},
			Nd:  summary.Field{Name: ndVarName, Units: mustOutput(ndVarName).SIUnits, Data: d[ndVarName]},
			POP: summary.Field{Name: popVarName, Units: mustOutput(popVarName).SIUnits, Data: d[popVarName]},
			QC:  qc,
		}
		if p.Rate != "" {
			cols.Rate = summary.Field{Name: rateVarName, Units: mustOutput(rateVarName).SIUnits, Data: d[p.Rate]}
		}
		if p.Surf != "" {
			cols.SurfaceRate = summary.Field{Name: surfVarName, Units: mustOutput(surfVarName).SIUnits, Data: d[p.Surf]}
		}
		if popErr != "" {
			cols.POPError = summary.Field{Name: popErr, Units: mustOutput(popVarName).SIUnits, Data: d[popErr]}
		}
		if rateErr != "" {
			cols.RateError = summary.Field{Name: rateErr, Units: mustOutput(rateVarName).SIUnits, Data: d[rateErr]}
		}
		if p.Base != "" {
			cols.BaseHeight = summary.Field{Name: baseVarName, Units: mustOutput(baseVarName).SIUnits, Data: d[p.Base]}
		}
		if err := st.acc.Add(sc, &cols); err != nil {
			return fmt.Errorf("%s: block %d of time steps: %w", path, b.Number, err)
		}
		fields := make([]summary.Field, 0, len(st.mapNames))
		for _, n := range st.mapNames {
			vi := st.mapInfo[n]
			fields = append(fields, summary.Field{Name: n, Units: vi.Units, LongName: vi.Long, Data: d[n]})
		}
		if st.grid != nil {
			if err := st.grid.Add(sc, reasons, fields...); err != nil {
				return fmt.Errorf("%s: block %d of time steps: %w", path, b.Number, err)
			}
			st.countValid(qc, times, b.N, sc, f.region, accWindow)
			return nil
		}
		if !st.mapsOK {
			return nil
		}
		if err := st.maps.Accumulate(sc, fields...); err != nil {
			if !errors.Is(err, summary.ErrGrid) {
				return fmt.Errorf("%s: block %d of time steps: %w", path, b.Number, err)
			}
			st.mapsOK = false
			fmt.Fprintf(e.stderr, "warmrain summary: %s is on another grid than the first file; no time-mean maps are made (%v); --grid DEG bins files on any grids onto one\n", path, err)
			return nil
		}
		st.countCells(qc, times, b.N, sc, f.region, accWindow)
		if st.first == nil {
			for k := 0; k < b.N; k++ {
				if times != nil && math.IsNaN(times[k]) {
					continue
				}
				st.first = map[string][]float64{}
				one := summary.Scene{Lat: s.Lat, Lon: s.Lon, NY: s.NY, NX: s.NX, NT: 1}
				for _, fl := range fields {
					dd := append([]float64(nil), fl.Data[k*cells:(k+1)*cells]...)
					for c := range dd {
						if la, lo := one.LatLon(c/one.NX, c%one.NX); !f.region.Contains(la, lo) {
							dd[c] = math.NaN()
						}
					}
					st.first[fl.Name] = dd
				}
				st.firstGrid = one
				st.firstQC = append([]uint16(nil), qc[k*cells:(k+1)*cells]...)
				if times != nil {
					st.firstTime = times[k]
				}
				break
			}
		}
		return nil
	})
}

// countCells adds the QC of n steps of one block (times nil: no time axis) on the
// grid of s to the per-cell counts of the maps' no-data classes and (in region r)
// the gamma-shape count.
func (st *summaryState) countCells(qc []uint16, times []float64, n int, s summary.Scene, r *summary.Region, w summary.Window) {
	cells := s.Cells()
	var in []bool // cells in the region
	if r != nil {
		in = make([]bool, cells)
		for c := range in {
			in[c] = r.Contains(s.LatLon(c/s.NX, c%s.NX))
		}
	}
	if st.cellScreened == nil {
		st.cellScreened, st.cellMissing = make([]int32, cells), make([]int32, cells)
	}
	if len(st.cellScreened) != cells || len(qc) < n*cells { // another grid: no maps are made
		return
	}
	for k := 0; k < n; k++ {
		if times != nil && !w.Contains(times[k]) {
			continue
		}
		for c, q := range qc[k*cells : (k+1)*cells] {
			switch {
			case q&1 != 0:
				st.cellScreened[c]++
				if q&procfile.QCMissingInput != 0 {
					st.cellMissing[c]++
				}
			case in == nil || in[c]:
				st.valid++
				if q&procfile.QCShapeAssumed != 0 {
					st.shapeAssumed++
				}
			}
		}
	}
}

// countValid counts the valid columns of n steps in the region and those with the
// assumed gamma shape (for the map titles), without the per-cell counts of countCells
// (--grid: the files' grids differ).
func (st *summaryState) countValid(qc []uint16, times []float64, n int, s summary.Scene, r *summary.Region, w summary.Window) {
	cells := s.Cells()
	for k := 0; k < n; k++ {
		if times != nil && !w.Contains(times[k]) {
			continue
		}
		for c, q := range qc[k*cells : (k+1)*cells] {
			if q&1 != 0 || (r != nil && !r.Contains(s.LatLon(c/s.NX, c%s.NX))) {
				continue
			}
			st.valid++
			if q&procfile.QCShapeAssumed != 0 {
				st.shapeAssumed++
			}
		}
	}
}

// sceneKey identifies a processed file for the bootstrap's tile weights by its base
// name (FNV-1a, 64 bit), so the weights of its tiles do not depend on the order of the
// files or on the folder, and partial summaries of disjoint files merge into the one of
// all files (summary.Scene.Key).
func sceneKey(path string) uint64 {
	h := uint64(14695981039346656037)
	for _, c := range []byte(filepath.Base(path)) {
		h ^= uint64(c)
		h *= 1099511628211
	}
	return h
}

// standardError returns the variable holding the retrieval standard error of name, the
// <name>_standard_error named by its ancillary_variables, or "" when the file has none.
func standardError(p *procfile.File, name string) string {
	if name == "" {
		return ""
	}
	v := p.Info.Var(name)
	want := name + "_standard_error"
	if v == nil || !slices.Contains(strings.Fields(v.Text("ancillary_variables")), want) {
		return ""
	}
	vi, ok := p.Vars[want]
	if !ok {
		return ""
	}
	// In the SI units of the diagnostic it belongs to (a known output), like the
	// diagnostic itself.
	si := p.Vars[name].Units
	if vi.Units != si {
		c, err := grid.NewConverter(vi.Conv.From, si)
		if err != nil && si == "kg m-2 s-1" {
			if c2, err2 := grid.NewConverter(vi.Conv.From, "mm s-1"); err2 == nil {
				c, err = c2, nil
				c.To = si
			}
		}
		if err != nil {
			return "" // not a usable error; the statistics go on without it
		}
		vi.Units, vi.Conv = si, c
		p.Vars[want] = vi
	}
	return want
}

// ---- the NetCDF summary file ----

func attr(name string, v any) grid.Attr { return grid.Attr{Name: name, Value: v} }

func summaryVarSpec(v summary.Var, float bool) grid.VarSpec {
	vs := grid.VarSpec{Name: v.Name, Dims: v.Dims, Type: grid.Double}
	isCoord := len(v.Dims) == 1 && v.Dims[0] == v.Name
	isBounds := strings.HasSuffix(v.Name, "_bounds")
	switch {
	case v.Int:
		vs.Type = grid.Int
		d := make([]int32, len(v.Data))
		for i, x := range v.Data {
			d[i] = int32(x)
		}
		vs.Data = d
	case float:
		vs.Type = grid.Float
		vs.Data = v.Data
	default:
		vs.Data = v.Data
	}
	if !v.Int && !isCoord && !isBounds {
		vs.Attrs = append(vs.Attrs, attr("_FillValue", []float64{-999}))
	}
	if v.ConfidenceLevel > 0 {
		vs.Attrs = append(vs.Attrs, attr("confidence_level", []float64{v.ConfidenceLevel}))
	}
	for _, a := range [][2]string{{"standard_name", v.StandardName}, {"long_name", v.LongName}, {"units", v.Units},
		{"bounds", v.Bounds}, {"ancillary_variables", v.Ancillary}, {"comment", v.Comment}} {
		if a[1] != "" {
			vs.Attrs = append(vs.Attrs, attr(a[0], a[1]))
		}
	}
	return vs
}

func summaryDataset(f summaryFlags, st *summaryState, res *summary.Result, ms summary.MapSet, gr *summary.GriddedResult, inputs, args []string) *grid.Dataset {
	ds := &grid.Dataset{}
	dims := res.Dims()
	for _, n := range []string{summary.DimLWP, summary.DimNd, summary.DimBounds} {
		ds.Dims = append(ds.Dims, grid.DimSpec{Name: n, Len: dims[n]})
	}
	for _, v := range res.Variables() {
		ds.Vars = append(ds.Vars, summaryVarSpec(inFileUnits(v), false))
	}
	cal := st.calendar
	if cal == "" {
		cal = grid.CalStandard
	}
	timeVars := func() []grid.VarSpec {
		long := "middle of the summarised period; time_bnds spans the time bounds of the inputs' selected steps"
		if st.instant {
			long += " (an input without time_bnds and with one time step counts as an instant, so the period can have zero length)"
		}
		return []grid.VarSpec{
			{Name: "time", Type: grid.Double, Data: []float64{(st.bmin + st.bmax) / 2}, Attrs: []grid.Attr{
				attr("standard_name", "time"), attr("long_name", long),
				attr("units", "seconds since 1970-01-01 00:00:00"), attr("calendar", cal), attr("axis", "T"), attr("bounds", "time_bnds")}},
			{Name: "time_bnds", Dims: []string{summary.DimBounds}, Type: grid.Double, Data: []float64{st.bmin, st.bmax}}}
	}
	haveTime := !math.IsInf(st.bmin, 1)
	if gr != nil {
		ds.Dims = append(ds.Dims, grid.DimSpec{Name: "lat", Len: len(gr.Lat)}, grid.DimSpec{Name: "lon", Len: len(gr.Lon)})
		ds.Vars = append(ds.Vars,
			grid.VarSpec{Name: "lat", Dims: []string{"lat"}, Type: grid.Double, Data: gr.Lat, Attrs: []grid.Attr{
				attr("standard_name", "latitude"), attr("long_name", "latitude of the cell centre"), attr("units", "degrees_north"), attr("axis", "Y")}},
			grid.VarSpec{Name: "lon", Dims: []string{"lon"}, Type: grid.Double, Data: gr.Lon, Attrs: []grid.Attr{
				attr("standard_name", "longitude"), attr("long_name", "longitude of the cell centre (increasing; past 180 when the cells cross the antimeridian)"), attr("units", "degrees_east"), attr("axis", "X")}})
		coords := "lat lon"
		if haveTime {
			ds.Vars = append(ds.Vars, timeVars()...)
			coords = "time lat lon"
		}
		ds.Vars = append(ds.Vars, griddedVars(gr, st.mapInfo, coords)...)
	} else if len(ms.Maps) > 0 {
		g := ms.Grid
		twoD := g.TwoD()
		yd, xd := "lat", "lon"
		if twoD {
			yd, xd = "y", "x"
		}
		ds.Dims = append(ds.Dims, grid.DimSpec{Name: yd, Len: g.NY}, grid.DimSpec{Name: xd, Len: g.NX})
		coords := ""
		if twoD {
			ds.Vars = append(ds.Vars,
				grid.VarSpec{Name: "lat", Dims: []string{"y", "x"}, Type: grid.Double, Data: g.Lat, Attrs: []grid.Attr{
					attr("standard_name", "latitude"), attr("long_name", "latitude of the cell centre"), attr("units", "degrees_north")}},
				grid.VarSpec{Name: "lon", Dims: []string{"y", "x"}, Type: grid.Double, Data: g.Lon, Attrs: []grid.Attr{
					attr("standard_name", "longitude"), attr("long_name", "longitude of the cell centre"), attr("units", "degrees_east")}})
			coords = "lat lon"
		} else {
			ds.Vars = append(ds.Vars,
				grid.VarSpec{Name: "lat", Dims: []string{"lat"}, Type: grid.Double, Data: g.Lat, Attrs: []grid.Attr{
					attr("standard_name", "latitude"), attr("long_name", "latitude of the cell centre"), attr("units", "degrees_north"), attr("axis", "Y")}},
				grid.VarSpec{Name: "lon", Dims: []string{"lon"}, Type: grid.Double, Data: g.Lon, Attrs: []grid.Attr{
					attr("standard_name", "longitude"), attr("long_name", "longitude of the cell centre"), attr("units", "degrees_east"), attr("axis", "X")}})
		}
		if haveTime {
			ds.Vars = append(ds.Vars, timeVars()...)
			coords = strings.TrimSpace("time " + coords)
		}
		for _, v := range ms.Variables() {
			v = inFileUnits(v)
			// <name>_mean of the maps would clash with the bin means of the statistics
			// (drizzle_probability_mean): the maps are <name>_time_mean and
			// <name>_time_mean_count.
			base := strings.TrimSuffix(strings.TrimSuffix(v.Name, "_mean"), "_count")
			if v.Int {
				v.Name = base + mapSuffix + "_count"
			} else {
				v.Name, v.Ancillary = base+mapSuffix, base+mapSuffix+"_count"
			}
			vs := summaryVarSpec(v, !v.Int)
			if !v.Int {
				vs.Attrs = append(vs.Attrs, attr("cell_methods", "time: mean"), attr("coverage_content_type", "modelResult"))
				if sn := st.mapInfo[base].Std; sn != "" && len(strings.Fields(sn)) == 1 {
					vs.Attrs = append(vs.Attrs, attr("standard_name", sn))
				}
			} else {
				vs.Attrs = append(vs.Attrs, attr("coverage_content_type", "auxiliaryInformation"))
			}
			if coords != "" {
				vs.Attrs = append(vs.Attrs, attr("coordinates", coords))
			}
			ds.Vars = append(ds.Vars, vs)
		}
	} else if haveTime { // no maps: the period of the statistics still has its bounds
		ds.Vars = append(ds.Vars, timeVars()...)
	}
	line := time.Now().UTC().Format("2006-01-02T15:04:05Z") + ": warmrain " + Version() + " summary " + joinArgs(args)
	hist := line
	if st.history != "" && len(inputs) == 1 {
		hist += "\n" + st.history
	}
	g := []grid.Attr{
		attr("Conventions", "CF-1.13 ACDD-1.3"),
		attr("title", "warm-rain summary statistics (warmrain)"),
		attr("summary", "Drizzle probability and cloud-base drizzle rate binned by liquid water path and droplet number, precipitation susceptibilities per liquid-water-path bin, the fraction of drizzle reaching the surface, and time-mean maps, over processed warmrain files."),
		attr("comment", summaryCaution+" Values are in the units of the per-column files of 'warmrain process' (LWP g m-2, N_d cm-3, drizzle rates mm day-1; see each variable's units)."),
		attr("history", hist),
		attr("source", "warmrain "+Version()+" (libnetcdf "+grid.LibraryVersion()+")"),
		attr("references", "Feingold and Siebert (2009) (precipitation susceptibility); Terai et al. (2012) (S_R = S_POP + S_I); Hanley and MacGibbon (2006) (Poisson bootstrap weights); Carlstein (1986), Künsch (1989), Lahiri (2003) (block bootstrap over tiles); Cochran (1977) (tile standard errors of ratio means)"),
		attr("standard_name_vocabulary", "CF Standard Name Table v83"),
		attr("date_created", time.Now().UTC().Format(time.RFC3339)),
		attr("warmrain_summary_inputs", strings.Join(inputs, "\n")),
	}
	ra := res.Attributes()
	ra["qc_mask"] = "columns excluded when warm_rain_qc has any of the bits " + strings.Join(screenWords, " ")
	keys := make([]string, 0, len(ra))
	for k := range ra {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		g = append(g, attr(k, ra[k]))
	}
	if haveTime {
		g = append(g, attr("time_coverage_start", grid.CalendarText(cal, st.bmin)), attr("time_coverage_end", grid.CalendarText(cal, st.bmax)))
	}
	if gr != nil {
		g = append(g, attr("warmrain_grid", fmt.Sprintf("%g-degree regular latitude-longitude cells; per cell the statistics of every column located in it over every selected time step; exact sums, so independent of the order of the inputs", gr.Grid.Step)))
	}
	if !st.mixed {
		pk := make([]string, 0, len(st.params))
		for k := range st.params {
			pk = append(pk, k)
		}
		sort.Strings(pk)
		for _, k := range pk {
			g = append(g, attr(paramAttrStart+k, st.params[k]))
		}
	} else {
		g = append(g, attr("warmrain_parameters", "the input files were processed with different parameters; see their warmrain_parameter_* attributes"))
	}
	ds.Globals = g
	return ds
}

// ---- pictures ----

func shortName(name, long string) string {
	if d := microphys.OutputByName(name); d != nil && d.Title != "" {
		return d.Title // the long_name of a file is a sentence, too long for a title
	}
	if long != "" {
		return upperFirst(long)
	}
	return name
}

// paramText is the key-parameter line of the curve pictures (drizzle probability
// and susceptibilities): the onset model and the gamma shape. The autoconversion
// scheme is left out: neither curve depends on it.
func (st *summaryState) paramText() string {
	if st.mixed {
		return "inputs processed with different parameters"
	}
	var parts []string
	if v, unit, _ := strings.Cut(st.params["onset_radius"], " "); unit == "um" { // as --onset-radius
		if r, err := strconv.ParseFloat(v, 64); err == nil {
			wv, _, _ := strings.Cut(st.params["onset_width"], " ")
			if w, err := strconv.ParseFloat(wv, 64); err == nil && w > 0 {
				parts = append(parts, fmt.Sprintf("onset r_e %.3g-%.3g µm", r-w/2, r+w/2))
			} else {
				parts = append(parts, fmt.Sprintf("onset r_e %.3g µm", r))
			}
		}
	} else if r, err := strconv.ParseFloat(st.params["onset_effective_radius"], 64); err == nil { // files of earlier versions, in m
		parts = append(parts, fmt.Sprintf("onset r_e %.3g µm", r*1e6))
	}
	if g := st.params["gamma_shape"]; g != "" {
		parts = append(parts, "gamma shape "+g)
	}
	return strings.Join(parts, ", ")
}

// calendarClock writes t (seconds since 1970-01-01 in the calendar kind; "" is
// the standard calendar) as "YYYY-MM-DD hh:mm" in that calendar, and its year.
func calendarClock(kind string, t float64) (text string, year int) {
	if kind == "" {
		kind = grid.CalStandard
	}
	sec := int64(math.Floor(t + 0.5))
	days := sec / 86400
	if sec%86400 < 0 {
		days--
	}
	r := sec - days*86400
	y, m, d := grid.CalendarDate(kind, int(days))
	return fmt.Sprintf("%04d-%02d-%02d %02d:%02d", y, m, d, r/3600, r/60%60), y
}

// timeZone ends a date of the titles: "UTC" in the standard calendars, the name
// of a model calendar (noleap, 360_day, ...) otherwise.
func timeZone(kind string) string {
	switch kind {
	case "", grid.CalStandard, grid.CalProleptic:
		return "UTC"
	}
	return "(" + kind + " calendar)"
}

// spanText is the compact time line of the titles, in the files' calendar:
// "2026-09-21 12:00 to 09-23 12:00 UTC (3 steps)", or "2001-02-30 00:00 (360_day
// calendar) (1 time step)".
func (st *summaryState) spanText(ms summary.MapSet) string {
	n := fmt.Sprintf("%d time step", ms.Steps)
	if ms.Steps != 1 {
		n += "s"
	}
	if st.files > 1 {
		n += fmt.Sprintf(", %d files", st.files)
	}
	if math.IsNaN(ms.TimeMin) {
		return n
	}
	a, ya := calendarClock(st.calendar, ms.TimeMin)
	b, yb := calendarClock(st.calendar, ms.TimeMax)
	zone := timeZone(st.calendar)
	if a == b {
		return a + " " + zone + " (" + n + ")"
	}
	if ya == yb {
		b = b[strings.Index(b, "-")+1:]
	}
	return a + " to " + b + " " + zone + " (" + n + ")"
}

func regionText(r *summary.Region) string {
	if r == nil {
		return ""
	}
	lat := func(v float64) string {
		if v < 0 {
			return fmt.Sprintf("%g°S", -v)
		}
		return fmt.Sprintf("%g°N", v)
	}
	lon := func(v float64) string {
		v = math.Mod(v+540, 360) - 180
		if v < 0 {
			return fmt.Sprintf("%g°W", -v)
		}
		return fmt.Sprintf("%g°E", v)
	}
	return "region " + lat(r.LatMin) + " to " + lat(r.LatMax) + ", " + lon(r.LonMin) + " to " + lon(r.LonMax)
}

// wrapLines joins the non-empty lines with newlines, breaking any longer than max
// characters after a comma if it can, else at blanks (the plots centre the title over
// the map and do not wrap).
func wrapLines(max int, lines ...string) string {
	var out []string
	for _, l := range lines {
		if l == "" {
			continue
		}
		cur := ""
		for _, part := range strings.SplitAfter(l, ", ") {
			part = strings.TrimSpace(part)
			switch {
			case cur == "":
				cur = part
			case len([]rune(cur))+1+len([]rune(part)) <= max:
				cur += " " + part
			default:
				out = append(out, cur)
				cur = part
			}
			for len([]rune(cur)) > max { // a part longer than a line: at blanks
				words := strings.Fields(cur)
				line := words[0]
				k := 1
				for ; k < len(words) && len([]rune(line))+1+len([]rune(words[k])) <= max; k++ {
					line += " " + words[k]
				}
				if k == len(words) {
					break
				}
				out = append(out, line)
				cur = strings.Join(words[k:], " ")
			}
		}
		if cur != "" {
			out = append(out, cur)
		}
	}
	return strings.Join(out, "\n")
}

// titleChars estimates how many title characters fit over the map: the plots centre
// the title in the picture minus the colour-bar column (150 px), whatever the map's
// own width, so it may use all of it; 13 pt text is about 7.5 px a character
// (estimates from the plots layout, common practice).
func titleChars(_ summary.Scene, w, _ int) int {
	return max(24, int(float64(w-8-150-16)/7.5))
}

// mappedUncertainty reports whether a variable is mapped as far as its uncertainty goes:
// of the uncertainty outputs (uncertainty.go) only the retrieval errors of N_d and of the
// cloud-base drizzle rate get maps; every other variable is decided by its type and grid.
func mappedUncertainty(name string) bool {
	if strings.HasSuffix(name, spreadSuffix) {
		return false
	}
	if base, ok := strings.CutSuffix(name, seSuffix); ok {
		return base == ndVarName || base == rateVarName
	}
	return true
}

// mapStyle sets the colour scale, limits and units of a diagnostic's picture: the
// declared ones (microphys.OutputDecls) or the user's --range (plots.Style).
func mapStyle(name, siUnit string, ranges plots.Ranges, o *plots.MapOptions) (fixed bool) {
	if base, ok := strings.CutSuffix(name, seSuffix); ok {
		name = base // a standard error is drawn on its diagnostic's scale
	}
	return plots.Style(name, siUnit, ranges, o)
}

// shapeNote says where the gamma shape of the sub-grid LWP came from, for the titles
// of the maps that depend on it: the input's LWP standard deviation or --gamma-shape.
func (st *summaryState) shapeNote() string {
	g := st.params["gamma_shape"]
	if st.mixed || g == "" || st.valid == 0 {
		return ""
	}
	switch a := float64(st.shapeAssumed) / float64(st.valid); {
	case st.shapeAssumed == st.valid:
		return "gamma shape " + g
	case st.shapeAssumed == 0:
		return "gamma shape from the LWP std. dev."
	default:
		return fmt.Sprintf("gamma shape from the LWP std. dev. (%.0f %% of columns), else %s", 100*(1-a), g)
	}
}

// noDataClasses gives each cell's reason for having no value: screened for a
// missing input in every selected step, else screened in some step; nil without QC
// counts. Cells outside --region are marked by the plots (MapOptions.Region).
func noDataClasses(screened, missing []int32, steps []uint16) []plots.NoData {
	switch {
	case steps != nil:
		out := make([]plots.NoData, len(steps))
		for c, q := range steps {
			switch {
			case q&procfile.QCMissingInput != 0:
				out[c] = plots.MissingInput
			case q&1 != 0:
				out[c] = plots.Screened
			}
		}
		return out
	case screened != nil:
		out := make([]plots.NoData, len(screened))
		for c := range screened {
			switch {
			case screened[c] > 0 && missing[c] == screened[c]:
				out[c] = plots.MissingInput
			case screened[c] > 0:
				out[c] = plots.Screened
			}
		}
		return out
	}
	return nil
}

func writePNG(path string, force bool, draw func(w io.Writer) error) error {
	if _, err := os.Stat(path); err == nil && !force {
		return fmt.Errorf("%s already exists; use --force to overwrite it", path)
	}
	var buf bytes.Buffer
	if err := draw(&buf); err != nil {
		return err
	}
	return grid.WriteFileAtomic(path, buf.Bytes(), force)
}

// mapJob is one map of writePictures.
type mapJob struct {
	field       summary.Field
	grid        summary.Scene
	title, when string
	keepUnits   bool
	file        string
	noData      []plots.NoData
	// fraction: a share of columns on a fixed linear 0..1 scale, with params as
	// its footnote (the frequencies and screened fractions of --grid)
	fraction bool
	params   string
}

func writePictures(e *env, f summaryFlags, st *summaryState, res *summary.Result, ms summary.MapSet) error {
	if err := os.MkdirAll(f.plotDir, 0o755); err != nil {
		return fmt.Errorf("--plots %s: %w", f.plotDir, err)
	}
	params := st.paramText()
	region := regionText(f.region)
	if err := plots.CoastlinesAvailable(); err != nil {
		fmt.Fprintf(e.stderr, "warmrain summary: maps without coastlines: %v\n", err)
	}
	var wrote []string
	put := func(file, what string, draw func(io.Writer) error) error {
		path := filepath.Join(f.plotDir, file)
		err := writePNG(path, f.force, draw)
		switch {
		case err == nil:
			wrote = append(wrote, path)
		case errors.Is(err, plots.ErrNoData):
			fmt.Fprintf(e.stderr, "warmrain summary: no picture of %s: %v\n", what, err)
		default:
			return err
		}
		return nil
	}
	// Maps.
	var jobs []mapJob
	if f.mapOf == "first" && st.first != nil {
		when := "first time step"
		if !math.IsNaN(st.firstTime) {
			d, _ := calendarClock(st.calendar, st.firstTime)
			when = d + " " + timeZone(st.calendar) + " (first time step)"
		}
		for _, n := range st.mapNames {
			vi := st.mapInfo[n]
			if plots.IsCoordinate(n, vi.Std, vi.Units) {
				continue
			}
			jobs = append(jobs, mapJob{field: summary.Field{Name: n, Units: vi.Units, LongName: vi.Long, Data: st.first[n]}, grid: st.firstGrid,
				title: shortName(n, vi.Long), when: when, file: "map_" + n + "_first.png", noData: noDataClasses(nil, nil, st.firstQC)})
		}
	} else if f.mapOf == "mean" && len(ms.Maps) > 0 {
		when := "time mean, " + st.spanText(ms)
		classes := noDataClasses(st.cellScreened, st.cellMissing, nil)
		if st.grid != nil {
			when = fmt.Sprintf("mean of the columns in %g° cells, ", st.grid.Options().Grid.Step) + st.spanText(ms)
			classes = st.gridClasses
		}
		for _, m := range ms.Maps {
			n := m.Mean.Name
			if vi := st.mapInfo[n]; plots.IsCoordinate(n, vi.Std, vi.Units) {
				continue
			}
			jobs = append(jobs, mapJob{field: m.Mean, grid: ms.Grid, title: shortName(n, st.mapInfo[n].Long), when: when, file: "map_" + n + "_mean.png", noData: classes})
		}
		for _, m := range ms.Maps {
			if m.Mean.Name == popVarName {
				c := m.CountField()
				c.Units = "1"
				title := "Number of time steps with a valid drizzle probability"
				if st.grid != nil {
					title = "Number of columns with a valid drizzle probability"
				}
				jobs = append(jobs, mapJob{field: c, grid: ms.Grid, title: title,
					when: "over " + st.spanText(ms), keepUnits: true, file: "map_valid_count.png"})
			}
		}
	}
	if gr := st.gridRes; gr != nil && f.mapOf == "mean" && len(ms.Maps) > 0 {
		jobs = append(jobs, st.gridFractionJobs(gr, f, ms)...)
	}
	var mapped []string
	for _, j := range jobs {
		mapped = append(mapped, j.field.Name)
	}
	for _, n := range f.ranges.Unknown(mapped) {
		fmt.Fprintf(e.stderr, "warmrain summary: --range %s: no map shows %s (mapped: %s)\n", n, n, strings.Join(mapped, ", "))
	}
	for _, j := range jobs {
		o := plots.MapOptions{Width: f.width, Height: f.height, KeepUnits: j.keepUnits, Region: f.region, NoData: j.noData}
		styleName := j.field.Name
		if styleName == st.lwpName { // the LWP found by its standard name
			styleName = lwpVarName
		}
		fixed := mapStyle(styleName, j.field.Units, f.ranges, &o)
		if r, ok := f.ranges[j.field.Name]; ok { // --range by the file's own name
			o.Min, o.Max, o.Log, fixed = r.Lo, r.Hi, r.Log, true
		}
		if j.keepUnits {
			o.Scale, o.Units, o.IntegerTicks = 1, "count", true
		}
		if j.fraction {
			o.Min, o.Max, o.Log, o.Scale, o.Units, fixed = 0, 1, false, 1, "fraction of columns", true
		}
		if len(j.noData) != j.grid.Cells() {
			o.NoData = nil
		}
		title := j.title
		if v, ok := constantValue(j.field.Data); ok {
			// Say so in the title; without fixed limits a constant field would get a
			// colour bar of ±1e-12: give it a readable range.
			scale, units := o.Scale, o.Units
			if scale == 0 {
				scale, units = plots.DisplayUnits(j.field.Units)
			}
			d := v * scale
			if !fixed {
				o.Log, o.Min, o.Max = false, d-math.Max(math.Abs(d)*0.5, 1), d+math.Max(math.Abs(d)*0.5, 1)
				if d == 0 && !strings.Contains(j.field.Name, "temperature") {
					o.Min, o.Max = 0, 1
				}
			}
			title += fmt.Sprintf(": %.4g %s everywhere", d, units)
		}
		// The parameters the variable depends on: none named for a variable that is
		// not a declared output (its dependencies are unknown) or for the counts.
		mp := ""
		switch d := microphys.OutputByName(styleName); {
		case j.fraction:
			mp = j.params
		case j.keepUnits || d == nil:
		case st.mixed:
			mp = params // "inputs processed with different parameters"
		default:
			mp = plots.ParamLine(styleName, st.params, st.shapeNote())
		}
		o.Title = wrapLines(titleChars(j.grid, f.width, f.height), title, j.when, region)
		o.Params = mp
		if err := put(j.file, j.field.Name, func(w io.Writer) error { return plots.Map(w, j.grid, j.field, o) }); err != nil {
			return err
		}
	}
	// Curves: the plots add their own last title line (error bars) to the subtitle.
	chars := max(30, int(float64(f.width-8-200)/7.5))
	span := st.spanText(st.stepSpan(ms))
	pt := wrapLines(chars, "Drizzle probability against liquid water path, by droplet number", span, region, params)
	if err := put("pop_vs_lwp.png", "POP against LWP", func(w io.Writer) error {
		return plots.POPCurves(w, res, plots.CurveOptions{Width: f.width, Height: f.height, Title: pt})
	}); err != nil {
		return err
	}
	stt := wrapLines(chars, "Precipitation susceptibility S = -d ln X / d ln N_d", span, region, params)
	if err := put("susceptibility_vs_lwp.png", "susceptibility against LWP", func(w io.Writer) error {
		return plots.SusceptibilityCurves(w, res, plots.CurveOptions{Width: f.width, Height: f.height, Title: stt})
	}); err != nil {
		return err
	}
	for _, w := range wrote {
		fmt.Fprintf(e.stderr, "warmrain summary: wrote %s\n", w)
	}
	return nil
}

// gridFractionJobs are the maps of the shares of columns of a gridded summary: the
// drizzle occurrence frequencies (POP above --drizzle-pop; LWP above LWP*), the share
// screened for any reason and the share screened for the most frequent reason.
func (st *summaryState) gridFractionJobs(gr *summary.GriddedResult, f summaryFlags, ms summary.MapSet) []mapJob {
	classes := st.gridClasses
	when := fmt.Sprintf("in %g° cells, ", gr.Grid.Step) + st.spanText(ms)
	g := ms.Grid
	param := func(output string) string {
		if st.mixed {
			return st.paramText()
		}
		return plots.ParamLine(output, st.params, st.shapeNote())
	}
	var jobs []mapJob
	field := func(name, long string, d []float64) summary.Field {
		return summary.Field{Name: name, Units: "1", LongName: long, Data: d}
	}
	if gr.POPFrequency != nil {
		jobs = append(jobs, mapJob{field: field("drizzle_frequency_pop", "", gr.POPFrequency), grid: g, fraction: true, noData: classes,
			title: fmt.Sprintf("Drizzle frequency: share of valid columns with POP > %g (--drizzle-pop)", gr.POPThreshold),
			when:  when, file: "map_drizzle_frequency_pop.png", params: param(popVarName)})
	}
	if gr.LWPFrequency != nil {
		jobs = append(jobs, mapJob{field: field("drizzle_frequency_lwp", "", gr.LWPFrequency), grid: g, fraction: true, noData: classes,
			title: "Drizzle frequency: share of valid columns with LWP > LWP* (critical LWP of each column)",
			when:  when, file: "map_drizzle_frequency_lwp.png", params: param(critVarName)})
	}
	screen := st.screeningText()
	jobs = append(jobs, mapJob{field: field("screened_fraction", "", gr.ScreenedAnyFraction), grid: g, fraction: true, noData: classes,
		title: "Share of columns screened (any QC reason)", when: when, file: "map_screened_fraction.png", params: screen})
	// The reason that screened the most columns, when more than one reason did.
	best, bestN, reasons := -1, 0.0, 0
	for k := range gr.Reasons {
		n := 0.0
		for c, fr := range gr.ScreenedFraction[k] {
			if !math.IsNaN(fr) {
				n += fr * float64(gr.Columns[c])
			}
		}
		if n > 0 {
			reasons++
		}
		if n > bestN {
			best, bestN = k, n
		}
	}
	if best >= 0 && reasons > 1 {
		r := gr.Reasons[best]
		jobs = append(jobs, mapJob{field: field("screened_fraction_"+r, "", gr.ScreenedFraction[best]), grid: g, fraction: true, noData: classes,
			title: fmt.Sprintf("Share of columns screened for %s (the most frequent of %d QC reasons)", r, reasons),
			when:  when, file: "map_screened_fraction_" + r + ".png", params: screen})
	}
	return jobs
}

// screeningParams are the parameters (microphys.ParamDecls) that screen columns.
var screeningParams = []string{"min_lwp", "min_tau", "re_range_min", "re_range_max", "min_ctt", "nd_range_min", "nd_range_max", "max_thickness", "min_cloud_fraction"}

// screeningText lists the screening thresholds of the processed files by option
// (the parameters the screened fractions depend on).
func (st *summaryState) screeningText() string {
	if st.mixed {
		return st.paramText()
	}
	var parts []string
	var opts []string
	vals := map[string][]string{}
	for _, d := range microphys.ParamDecls {
		v := st.params[d.Name]
		if !slices.Contains(screeningParams, d.Name) || v == "" {
			continue
		}
		if vals[d.Option] == nil {
			opts = append(opts, d.Option)
		}
		vals[d.Option] = append(vals[d.Option], strings.ReplaceAll(v, " um", " µm"))
	}
	for _, o := range opts {
		parts = append(parts, "--"+o+" "+strings.Join(vals[o], " to "))
	}
	if len(parts) == 0 {
		return ""
	}
	return "screening thresholds " + strings.Join(parts, ", ")
}

// constantValue reports whether every finite value of d is the same (and there is one).
func constantValue(d []float64) (float64, bool) {
	v, seen := math.NaN(), false
	for _, x := range d {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			continue
		}
		if !seen {
			v, seen = x, true
		} else if x != v {
			return 0, false
		}
	}
	return v, seen
}

func upperFirst(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}
