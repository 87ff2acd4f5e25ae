package app

import (
	"bufio"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"os/exec"
	"os/signal"
	"path/filepath"
	"runtime"
	"runtime/debug"
	"runtime/pprof"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"syscall"
	"time"

	"github.com/warmrain/warmrain/cmd/internal/batch"
	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/microphys"
)

const processUsage = `Usage: warmrain process INPUT... -o OUTPUT [options]

Computes the warm-rain diagnostics of every grid column of each INPUT (a
netCDF-3 or netCDF-4 file, or an NCZarr store URL such as
file:///data/day1.zarr#mode=nczarr,file) and writes them as CF variables.

INPUT may be a file, a glob pattern ('data/*.nc', quoted) or @LIST, a file
holding one input per line. Several files of one scene joined with +
(lwp.nc+reff.nc, one variable per file) are one input: roles are searched
across them, their grids must match, and the output is named by the first.
HDF4 files (SD interface) and netCDF-4 files with groups are read too; bind a
variable in a group by its path (--bind lwp=/geophysical_data/NAME). With one input, OUTPUT is the output file; with
several (or when OUTPUT is an existing folder) OUTPUT is a folder and each
output is named by --name. Outputs appear whole or not at all: each is written
to a temporary file in the target folder and renamed when complete.

A rerun skips inputs whose output is complete (same input identity, parameters
and version recorded in its provenance) and redoes the others. Batch runs
write a JSON-lines manifest. SIGINT/SIGTERM stop cleanly: the file in progress
is removed, what completed is recorded, the exit code is 1.

Example:
  warmrain process samples/data/stratocumulus_demo.nc -o /tmp/demo_warmrain.nc
  warmrain process 'archive/2019/*.nc' -o out/ --name '{parent}_{stem}_wr.nc' --jobs 2
`

type processOptions struct {
	output, pattern, outputs   string
	binds                      []string
	augment, force, redo       bool
	jobs, threads, deflate     int
	shard                      string
	shardCount                 int
	ignoreSlurm                bool
	manifest                   string
	checksum, quiet, noProgess bool
	slabMB                     int
	ioOnly                     bool
	cpuProfile                 string
	stats                      bool
	pack                       bool
	quantize                   int
	slot                       string // internal: "k/n" for a child process of --jobs
	phys                       *physicsFlags
	inp                        *inputFlags
}

func runProcess(e *env, args []string) error {
	fs := newFlagSet(e, "process", processUsage)
	var o processOptions
	fs.StringVarP(&o.output, "output", "o", "", "output file (one input) or folder (several inputs)")
	fs.StringVar(&o.pattern, "name", batch.DefaultPattern, "output name pattern in a folder: {stem} {name} {parent} {index}")
	fs.BoolVar(&o.augment, "augment", false, "write a copy of the input with the new variables added (default: a new file with the coordinates and the new variables)")
	fs.StringVar(&o.outputs, "outputs", "all", "comma-separated outputs to write (see README); the QC flags are always written")
	fs.StringArrayVar(&o.binds, "bind", nil, "take input ROLE from variable VAR, optionally declaring its units: ROLE=VAR[:UNITS] (repeatable; roles: lwp re tau ctt ctp cth cloud_fraction lwp_sd)")
	fs.IntVarP(&o.jobs, "jobs", "j", 1, "files processed at the same time, each in its own process (libnetcdf is single-threaded)")
	fs.IntVar(&o.threads, "threads", 0, "compute goroutines per process (0: the CPUs divided by --jobs, less one for the I/O thread)")
	fs.IntVar(&o.deflate, "deflate", 1, "deflate level of the outputs, 1-9 (0: no compression)")
	fs.BoolVar(&o.pack, "pack", false, "store the bounded outputs as CF-packed 16-bit integers (smaller, faster; precision in README)")
	fs.IntVar(&o.quantize, "significant-digits", 0, "lossy: keep this many significant decimal digits in float outputs (CF quantization metadata; 0: off)")
	fs.BoolVarP(&o.force, "force", "f", false, "overwrite existing outputs (inputs are never overwritten)")
	fs.BoolVar(&o.redo, "redo", false, "process again even when a complete output exists (replaces outputs written by warmrain)")
	fs.StringVar(&o.shard, "shard", "", "process only shard I of N (I/N, 0 <= I < N) of the sorted input list")
	fs.IntVar(&o.shardCount, "shard-count", 0, "shard count for a Slurm array whose ids are not a plain range")
	fs.BoolVar(&o.ignoreSlurm, "ignore-slurm", false, "do not shard by the Slurm array variables")
	fs.StringVar(&o.manifest, "manifest", "", "JSON-lines manifest to append to (default: warmrain-manifest.jsonl in the output folder for folder outputs)")
	fs.BoolVar(&o.checksum, "checksum", false, "identify inputs by SHA-256 for resume (default: path, size and modification time)")
	fs.BoolVarP(&o.quiet, "quiet", "q", false, "no summary line per file")
	fs.BoolVar(&o.noProgess, "no-progress", false, "no progress line (it is shown only when stderr is a terminal)")
	fs.IntVar(&o.slabMB, "slab-mb", grid.DefaultSlabBytes>>20, "memory budget of one slab, MiB (three are in flight)")
	fs.BoolVar(&o.ioOnly, "io-only", false, "benchmark: read inputs and write outputs without the physics")
	fs.StringVar(&o.cpuProfile, "cpu-profile", "", "developers: write a Go CPU profile of the run to this file (see DEVELOPERS.md)")
	_ = fs.MarkHidden("cpu-profile")
	fs.BoolVar(&o.stats, "pipeline-stats", false, "developers: print the busy time of each pipeline stage per file on stderr")
	_ = fs.MarkHidden("pipeline-stats")
	fs.StringVar(&o.slot, "child-slot", "", "internal")
	_ = fs.MarkHidden("child-slot")
	_ = fs.MarkHidden("io-only")
	o.phys = addPhysicsFlags(fs)
	o.inp = addInputFlags(fs)
	if err := parseFlags(e, fs, processUsage, args); err != nil {
		return err
	}
	masks, err := o.inp.check()
	if err != nil {
		return err
	}
	if fs.NArg() == 0 {
		return usagef("no input given")
	}
	if o.output == "" {
		return usagef("no output given: use -o FILE or -o FOLDER")
	}
	if o.jobs < 1 || o.threads < 0 || o.deflate < 0 || o.deflate > 9 || o.slabMB < 1 || o.quantize < 0 || o.quantize > 7 {
		return usagef("--jobs >= 1, --threads >= 0, --deflate 0-9, --slab-mb >= 1 and --significant-digits 0-7 are required")
	}
	if o.shard != "" && o.shardCount > 0 {
		return usagef("--shard and --shard-count cannot be combined (--shard-count is for Slurm arrays)")
	}
	if o.force && o.redo {
		// --force already implies replacing; keep the two meanings apart.
		return usagef("--force and --redo cannot be combined: --redo replaces warmrain's own outputs, --force any file")
	}
	var overrides []grid.Override
	for _, b := range o.binds {
		ov, err := grid.ParseOverride(b)
		if err != nil {
			return usagef("--bind %q: %v", b, err)
		}
		overrides = append(overrides, ov)
	}
	params, err := o.phys.toParams()
	if err != nil {
		return err
	}
	for _, w := range physicsWarnings(params) {
		if o.slot == "" { // the parent of --jobs children warns once
			fmt.Fprintf(e.stderr, "warmrain: warning: %s\n", w)
		}
	}
	defs, err := selectOutputs(o.outputs, params)
	if err != nil {
		return err
	}
	inputs, err := batch.ExpandInputs(fs.Args())
	if err != nil {
		return usagef("%v", err)
	}

	// Where the outputs go.
	folder := false
	if st, err := os.Stat(o.output); err == nil && st.IsDir() {
		folder = true
	} else if strings.HasSuffix(o.output, "/") || len(inputs) > 1 {
		if err != nil {
			return fmt.Errorf("output folder %s does not exist; create it first (several inputs, or an output ending in /, need a folder)", o.output)
		}
		return fmt.Errorf("output %s is not a folder (several inputs need an output folder)", o.output)
	}
	var outputs []string
	if folder {
		if outputs, err = batch.PlanOutputs(inputs, o.output, o.pattern); err != nil {
			return usagef("%v", err)
		}
	} else {
		dir := filepath.Dir(o.output)
		if st, err := os.Stat(dir); err != nil {
			return fmt.Errorf("output folder %s of %s does not exist", dir, o.output)
		} else if !st.IsDir() {
			return fmt.Errorf("output folder %s of %s is not a folder (a file has that name)", dir, o.output)
		}
		outputs = []string{o.output}
	}

	// Which files are ours.
	shard := batch.Shard{Count: 1}
	if o.shard != "" {
		if shard, err = batch.ParseShard(o.shard); err != nil {
			return usagef("--shard: %v", err)
		}
	} else if !o.ignoreSlurm {
		sh, ok, err := batch.SlurmShard(os.Getenv, o.shardCount)
		if err != nil {
			return usagef("%v", err)
		}
		if ok {
			shard = sh
		} else if o.shardCount > 0 {
			return usagef("--shard-count is for Slurm job arrays, and SLURM_ARRAY_TASK_ID is not set")
		}
	}
	mine := shard.Select(inputs)
	shardName := ""
	if shard.Count > 1 {
		shardName = fmt.Sprintf("%d/%d", shard.Index, shard.Count)
	}

	if o.cpuProfile != "" {
		f, err := os.Create(o.cpuProfile)
		if err != nil {
			return fmt.Errorf("--cpu-profile: %v", err)
		}
		if err := pprof.StartCPUProfile(f); err != nil {
			f.Close()
			return fmt.Errorf("--cpu-profile %s: %v", o.cpuProfile, err)
		}
		defer func() {
			pprof.StopCPUProfile()
			f.Close()
		}()
	}

	job := &processJob{e: e, o: o, params: params, defs: defs, overrides: overrides, masks: masks, args: args, shardName: shardName}
	job.digest = job.paramDigest()

	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()

	if o.slot != "" {
		return job.runChild(ctx, inputs, outputs, mine)
	}

	var man *batch.Manifest
	manPath := o.manifest
	if manPath == "" && folder {
		manPath = filepath.Join(o.output, "warmrain-manifest.jsonl")
	}
	if manPath != "" {
		if man, err = batch.OpenManifest(manPath); err != nil {
			return err
		}
		defer man.Close()
	}
	job.single = len(mine) == 1
	if len(mine) == 0 {
		fmt.Fprintf(e.stderr, "warmrain: shard %s has no files (%d inputs)\n", shardName, len(inputs))
		return nil
	}
	var recs []batch.Record
	if o.jobs > 1 && len(mine) > 1 {
		recs, err = job.runChildren(ctx, inputs, outputs, mine, man)
	} else {
		for _, i := range mine {
			if ctx.Err() != nil {
				break
			}
			r := job.one(ctx, inputs[i], outputs[i], true)
			debug.FreeOSMemory() // the next file starts from the same footprint
			recs = append(recs, r)
			job.report(r)
			if err := man.Add(r); err != nil {
				fmt.Fprintf(e.stderr, "warmrain: manifest: %v\n", err)
			}
		}
	}
	failed := 0
	for _, r := range recs {
		if r.Status == "failed" || r.Status == "interrupted" {
			failed++
		}
	}
	if ctx.Err() != nil {
		done := 0
		for _, r := range recs {
			if r.Status == "done" || r.Status == "skipped" {
				done++
			}
		}
		return fmt.Errorf("interrupted: %d of %d files complete; run the same command again to finish the rest", done, len(mine))
	}
	if err != nil {
		return err
	}
	if failed > 0 {
		if len(mine) == 1 {
			return errors.New(recs[0].Error)
		}
		return failedFiles{failed: failed, total: len(mine)}
	}
	return nil
}

type processJob struct {
	e         *env
	o         processOptions
	params    microphys.Params
	defs      []outputDef
	overrides []grid.Override
	masks     []grid.MaskSpec
	args      []string
	shardName string
	digest    string
	single    bool             // one file to process: its error is the command's error
	model     *microphys.Model // built on first use (the collector table takes a moment)
	modelErr  error
	modelOnce sync.Once
}

func (j *processJob) inputs() *inputFlags {
	if j.o.inp == nil {
		j.o.inp = defaultInputFlags()
	}
	return j.o.inp
}

func (j *processJob) getModel() (*microphys.Model, error) {
	j.modelOnce.Do(func() { j.model, j.modelErr = newModel(j.params) })
	return j.model, j.modelErr
}

// paramDigest covers everything that changes an output's contents.
func (j *processJob) paramDigest() string {
	var pairs [][2]string
	for _, s := range j.params.Settings() {
		pairs = append(pairs, [2]string{s.Name, s.Value})
	}
	pairs = append(pairs,
		[2]string{"outputs", strings.Join(outputNames(j.defs), ",")},
		[2]string{"augment", strconv.FormatBool(j.o.augment)},
		[2]string{"deflate", strconv.Itoa(j.o.deflate)},
		[2]string{"significant_digits", strconv.Itoa(j.o.quantize)},
		[2]string{"pack", strconv.FormatBool(j.o.pack)},
		[2]string{"io_only", strconv.FormatBool(j.o.ioOnly)},
		[2]string{"binds", strings.Join(j.o.binds, ";")},
		[2]string{"version", Version()})
	pairs = append(pairs, j.inputs().settings()...)
	return batch.Digest(pairs)
}

func (j *processJob) report(r batch.Record) {
	if j.o.quiet {
		return
	}
	if len(r.Inputs) > 1 {
		r.Input = strings.Join(r.Inputs, "+")
	}
	switch r.Status {
	case "done":
		fmt.Fprintf(j.e.stderr, "warmrain: %s -> %s: %d columns, %.1f %% screened, %.2f s\n",
			r.Input, r.Output, r.Columns, 100*r.ScreenedFraction, r.Seconds)
		if len(r.ScreenedBy) > 0 {
			fmt.Fprintf(j.e.stderr, "warmrain: %s: screened by the product's quality information: %s\n", r.Input, strings.Join(r.ScreenedBy, "; "))
		}
	case "skipped":
		fmt.Fprintf(j.e.stderr, "warmrain: %s: complete output %s exists, skipped (--redo to process again)\n", r.Input, r.Output)
	case "interrupted":
		fmt.Fprintf(j.e.stderr, "warmrain: %s: interrupted, no output written\n", r.Input)
	default:
		if !j.single { // a single file's error is the command's error, printed once
			fmt.Fprintf(j.e.stderr, "warmrain: %s: failed: %s\n", r.Input, r.Error)
		}
	}
}

// Provenance attributes of every output (resume reads them back).
const (
	attrVersion  = "warmrain_version"
	attrIdentity = "warmrain_input_identity"
	attrDigest   = "warmrain_parameters_digest"
)

// complete reports whether out is a complete output of this input and these
// parameters, and whether the file (if any) was written by warmrain.
func (j *processJob) complete(out string, id batch.Identity) (complete, ours bool) {
	if _, err := os.Stat(out); err != nil {
		return false, false
	}
	info, err := grid.Describe(out)
	if err != nil {
		return false, false
	}
	text := func(name string) string {
		a, ok := info.Global(name)
		if !ok {
			return ""
		}
		s, _ := a.Text()
		return s
	}
	if text(attrVersion) == "" {
		return false, false
	}
	return id.Matches(text(attrIdentity)) && text(attrDigest) == j.digest && text(attrVersion) == Version(), true
}

// one processes one input into one output and returns its manifest record.
func (j *processJob) one(ctx context.Context, input, output string, progress bool) batch.Record {
	t0 := time.Now()
	rec := batch.Record{Input: input, Output: output, Shard: j.shardName}
	if parts := batch.SceneParts(input); len(parts) > 1 { // a scene joined with +: its first file, and all
		rec.Input, rec.Inputs = parts[0], parts
	}
	finish := func(status string, err error) batch.Record {
		rec.Status = status
		rec.Time = time.Now().UTC().Format(time.RFC3339)
		rec.Seconds = math.Round(time.Since(t0).Seconds()*1000) / 1000
		if err != nil {
			rec.Error = err.Error()
		}
		return rec
	}
	id, err := batch.InputIdentity(input, j.o.checksum)
	if err != nil {
		return finish("failed", fmt.Errorf("%s: %w", input, err))
	}
	force := j.o.force
	if done, ours := j.complete(output, id); done && !j.o.redo && !force {
		return finish("skipped", nil)
	} else if ours && !done {
		force = true // a stale or foreign-parameter output of ours: redo it
	} else if ours && j.o.redo {
		force = true
	}
	opt := grid.OpenOptions{Overrides: j.overrides, OverrideHint: "--bind ROLE=VAR[:UNITS]", SlabBytes: j.o.slabMB << 20}
	j.inputs().openOptions(&opt, j.masks, j.params)
	in, err := grid.Open(input, opt)
	if err != nil {
		return finish("failed", err)
	}
	defer in.Close()
	for _, w := range in.Warnings {
		fmt.Fprintf(j.e.stderr, "warmrain: warning: %s\n", w)
	}
	assumed := assumed(in, j.params)
	var used []string
	for _, b := range in.Bindings() {
		if b.Role.Rule().Internal {
			used = append(used, "masked="+b.Var)
			continue
		}
		used = append(used, fmt.Sprintf("%s=%s", b.Role, b.Var))
	}
	wopt := grid.DefaultWriteOptions()
	wopt.Force = force
	if j.o.augment {
		wopt.Mode = grid.CopyInput
	}
	if j.o.deflate == 0 {
		wopt.Deflate = -1
	} else {
		wopt.Deflate = j.o.deflate
	}
	wopt.HistoryLine = fmt.Sprintf("%s: warmrain %s process %s", time.Now().UTC().Format("2006-01-02T15:04:05Z"), Version(), joinArgs(j.args))
	wopt.Globals = j.globals(id)
	if len(assumed) > 0 {
		wopt.Globals = append(wopt.Globals, grid.Global{Name: "warmrain_assumptions", Value: strings.Join(assumed, " ")})
	}
	if len(j.inputs().masks) > 0 {
		wopt.Globals = append(wopt.Globals, grid.Global{Name: "warmrain_masks", Value: strings.Join(j.inputs().masks, "; ")})
	}
	vars := gridVars(j.defs, strings.Join(used, " "), j.o.pack)
	if len(assumed) > 0 { // a constant assumption is stated in every output's comment
		for k := range vars {
			vars[k].Comment = appendSentences(vars[k].Comment, assumed)
		}
	}
	if j.o.quantize > 0 {
		for k := range vars {
			if vars[k].Type == grid.Float32 {
				vars[k].Quantize = j.o.quantize
			}
		}
	}
	out, err := grid.Create(output, in, vars, wopt)
	if err != nil {
		return finish("failed", err)
	}
	if !j.o.ioOnly {
		if _, err := j.getModel(); err != nil {
			out.Abort()
			return finish("failed", err)
		}
	}
	var screened atomic.Int64
	var counts tally
	popt := grid.ProcessOptions{Workers: j.workers(), SkipCompute: j.o.ioOnly, Cancel: ctx.Done()}
	if progress && isTerminal(j.e.stderr) && !j.o.noProgess {
		popt.Progress = progressLine(j.e.stderr, input, t0)
	}
	var stats grid.ProcessStats
	if j.o.stats {
		popt.Stats = &stats
	}
	err = grid.Process(in, out, popt, j.compute(&screened, in, &counts))
	if j.o.stats {
		busy := stats.Read + stats.Write
		fmt.Fprintf(j.e.stderr, "warmrain: pipeline %s: %d slabs, wall %.2f s; I/O thread %.2f s (read %.2f, write %.2f; busy %.0f %%); compute %.2f s on %d workers; waited for input %.2f s\n",
			input, stats.Slabs, stats.Wall.Seconds(), busy.Seconds(), stats.Read.Seconds(), stats.Write.Seconds(),
			100*busy.Seconds()/stats.Wall.Seconds(), stats.Compute.Seconds(), popt.Workers, stats.WaitRead.Seconds())
	}
	if popt.Progress != nil {
		fmt.Fprint(j.e.stderr, "\r\033[K")
	}
	if err != nil {
		out.Abort()
		if ctx.Err() != nil {
			return finish("interrupted", err)
		}
		return finish("failed", err)
	}
	if err := out.Commit(); err != nil {
		return finish("failed", err)
	}
	rec.Columns = in.Layout.Columns
	rec.ScreenedBy = in.Lines(&counts.c)
	if rec.Columns > 0 {
		rec.ScreenedFraction = math.Round(float64(screened.Load())/float64(rec.Columns)*1e4) / 1e4
	}
	return finish("done", nil)
}

func (j *processJob) workers() int {
	if j.o.threads > 0 {
		return j.o.threads
	}
	// One core of each process's share goes to its libnetcdf thread, which reads,
	// decompresses, compresses and writes (measured on 2 cores at 4000²: one compute
	// goroutine 17.0 s, two 19.0 s, I/O alone 12.8-14.3 s).
	return max(1, runtime.NumCPU()/max(1, j.o.jobs)-1)
}

// compute returns the per-slab kernel: inputs from the slab's canonical
// slices, the product's masks and flag codes, the input completion
// (microphys.Model.Complete) and one microphys.Model.Column call per column,
// outputs scaled to the file units. It allocates nothing per column.
func (j *processJob) compute(screened *atomic.Int64, gin *grid.Input, counts *tally) grid.ComputeFunc {
	m := j.model
	defs := j.defs
	iLWP, iRe, iTau := grid.RoleLWP.Index(), grid.RoleRe.Index(), grid.RoleTau.Index()
	iCTT, iCTP, iCTH, iSD := grid.RoleCTT.Index(), grid.RoleCTP.Index(), grid.RoleCTH.Index(), grid.RoleLWPSD.Index()
	iNd, iCF := grid.RoleNd.Index(), grid.RoleCloudFraction.Index()
	gridMean := gin.GridMean
	masks := gin.Masks
	bits := make([]uint32, len(masks))
	for k, mk := range masks {
		bits[k] = maskBit(mk)
	}
	var codeRoles []int // roles whose decoder screens flag codes
	for i, r := range grid.Roles {
		if b, ok := gin.Binding(r); ok && len(b.Decoder.FlagCodes) > 0 {
			codeRoles = append(codeRoles, i)
		}
	}
	screen := microphys.QCInputScreenMask | uint32(microphys.QCScreenMask)
	nan := math.NaN()
	return func(s *grid.Slab, outs [][]float64, lo, hi int) {
		at := func(k, i int) float64 {
			if s.In[k] == nil {
				return nan
			}
			return s.In[k][i]
		}
		var in microphys.Inputs
		var o microphys.Outputs
		var n int64
		var local grid.QualityCounts
		if len(masks) > 0 || len(codeRoles) > 0 {
			local.Masks = make([]int64, len(masks))
			for _, r := range codeRoles {
				b, _ := gin.Binding(grid.Roles[r])
				local.Codes[r] = make([]int64, len(b.Decoder.FlagCodes))
			}
		}
		qc := outs[len(defs)]
		for k, d := range defs {
			if d.input != "" && d.input != grid.RoleLWP && s.In[d.input.Index()] != nil {
				src := s.In[d.input.Index()]
				for i := lo; i < hi; i++ {
					outs[k][i] = src[i] * d.scale
				}
			}
		}
		for i := lo; i < hi; i++ {
			var qin uint32
			for k, mk := range masks {
				if mk.Screens(s.In[mk.Role.Index()][i]) {
					qin |= bits[k]
					local.Masks[k]++
				}
			}
			for _, r := range codeRoles {
				if c, ok := grid.FlagIndex(s.In[r][i]); ok {
					qin |= microphys.QCFlagCode
					local.Codes[r][c]++
				}
			}
			if qin != 0 {
				local.Screened++
			}
			in = microphys.Inputs{LWP: at(iLWP, i), Re: at(iRe, i), Tau: at(iTau, i), CTT: at(iCTT, i),
				CTP: at(iCTP, i), CTH: at(iCTH, i), LWPStd: at(iSD, i), SurfaceRH: nan}
			if qin == 0 {
				qin = m.Complete(&in, at(iNd, i), at(iCF, i), gridMean)
			}
			if qin&screen != 0 {
				for k := range defs {
					outs[k][i] = nan
					if defs[k].input == grid.RoleLWP && in.LWP >= 0 {
						outs[k][i] = in.LWP * defs[k].scale
					}
				}
				qc[i] = float64(qin)
				n++
				continue
			}
			m.Column(&in, &o)
			for k := range defs {
				switch {
				case defs[k].get != nil:
					outs[k][i] = defs[k].get(&o) * defs[k].scale
				case defs[k].input == grid.RoleLWP:
					outs[k][i] = nan
					if in.LWP >= 0 {
						outs[k][i] = in.LWP * defs[k].scale // the LWP used: derived or in-cloud
					}
				}
			}
			qc[i] = float64(uint32(o.QC) | qin)
			if o.QC&microphys.QCScreenMask != 0 {
				n++
			}
		}
		screened.Add(n)
		if local.Masks != nil {
			counts.add(&local)
		}
	}
}

// globals are the provenance and parameter attributes of an output.
func (j *processJob) globals(id batch.Identity) []grid.Global {
	g := []grid.Global{
		{Name: "title", Value: "warm-rain diagnostics (warmrain)"},
		{Name: "summary", Value: "Per-column warm-rain diagnostics from liquid water path and cloud-top effective radius: adiabatic droplet number and thickness, autoconversion, warm-rain efficiency, cloud-base drizzle rate, drizzle probability and collector-drop growth."},
		{Name: "comment", Value: "Research diagnostics: not for operational forecasting or flight-safety decisions; defer to local codes and licensed practice."},
		{Name: "source", Value: "warmrain " + Version() + " (libnetcdf " + grid.LibraryVersion() + ")"},
		{Name: "references", Value: referencesText(j.params)},
		{Name: "standard_name_vocabulary", Value: "CF Standard Name Table v83"},
		{Name: attrVersion, Value: Version()},
		{Name: attrIdentity, Value: id.String()},
		{Name: attrDigest, Value: j.digest},
	}
	for _, s := range j.params.Settings() {
		g = append(g, grid.Global{Name: "warmrain_parameter_" + s.Name, Value: paramAttr(s)})
	}
	if len(j.o.binds) > 0 {
		g = append(g, grid.Global{Name: "warmrain_bindings", Value: strings.Join(j.o.binds, "; ")})
	}
	return g
}

// autoconvRole says in the references which scheme was used ("default" for the default,
// as earlier versions wrote).
func autoconvRole(p microphys.Params) string {
	if p.Autoconv == microphys.DefaultParams().Autoconv {
		return " (autoconversion, default)"
	}
	return " (autoconversion, --autoconversion " + p.Autoconv.String() + ")"
}

func referencesText(p microphys.Params) string {
	refs := []string{
		"Brenguier et al. (2000) J. Atmos. Sci. 57, 803-821 (adiabatic droplet number and thickness)",
		"Bolton (1980) Mon. Wea. Rev. 108, 1046-1053 (saturation vapour pressure, latent heat)",
		p.Autoconv.Citation() + autoconvRole(p),
		"Comstock et al. (2004) Q. J. R. Meteorol. Soc. 130, 2891-2918 (cloud-base drizzle rate)",
		"Barker (1996) J. Atmos. Sci. 53, 2289-2303 (gamma-distributed sub-grid variability)",
	}
	if p.EnableCollector {
		refs = append(refs,
			"Beard (1976) J. Atmos. Sci. 33, 851-864 (terminal fall speed)",
			"Hall (1980) J. Atmos. Sci. 37, 2486-2507 (collision efficiency table)",
			"Beard and Ochs (1995) J. Atmos. Sci. 52, 3977-3996; Low and List (1982) J. Atmos. Sci. 39, 1591-1606; Seifert et al. (2005) J. Atmos. Sci. 62, 1917-1931 (coalescence efficiency)")
	}
	if p.EnableEvaporation {
		refs = append(refs, "Beard and Pruppacher (1971) J. Atmos. Sci. 28, 1455-1464; Pruppacher and Klett (1997) (ventilation, evaporation)")
	}
	return strings.Join(refs, "; ")
}

// progressLine returns a Progress callback drawing one self-overwriting line.
func progressLine(w io.Writer, name string, t0 time.Time) func(done, total int64) {
	var last time.Time
	return func(done, total int64) {
		now := time.Now()
		if now.Sub(last) < 200*time.Millisecond && done < total {
			return
		}
		last = now
		pct := 100 * float64(done) / float64(max(total, 1))
		el := now.Sub(t0).Seconds()
		eta := ""
		if done > 0 && done < total {
			eta = fmt.Sprintf(", %.0f s left", el*float64(total-done)/float64(done))
		}
		fmt.Fprintf(w, "\r\033[K%s: %5.1f %% (%d of %d columns%s)", name, pct, done, total, eta)
	}
}

// runChildren processes the files in --jobs child processes, each a copy of
// this command with --child-slot k/n; records come back as JSON lines on the
// child's stdout. Signals reach the children through the process group and
// are also forwarded.
func (j *processJob) runChildren(ctx context.Context, inputs, outputs []string, mine []int, man *batch.Manifest) ([]batch.Record, error) {
	exe, err := os.Executable()
	if err != nil {
		return nil, fmt.Errorf("--jobs needs the warmrain executable: %w", err)
	}
	n := min(j.o.jobs, len(mine))
	if !j.o.ioOnly && tableCachePath(tableCacheDir(), j.params) != "" {
		// Fill the table cache once here, so that the children load the tables
		// instead of each integrating them at the same time.
		if _, err := j.getModel(); err != nil {
			return nil, err
		}
	}
	var mu sync.Mutex
	var recs []batch.Record
	var wg sync.WaitGroup
	errs := make([]error, n)
	for k := 0; k < n; k++ {
		args := append([]string{"process"}, j.args...)
		args = append(args, "--child-slot", fmt.Sprintf("%d/%d", k, n), "--threads", strconv.Itoa(j.workers()))
		cmd := exec.Command(exe, args...)
		cmd.Stderr = j.e.stderr
		cmd.Env = append(os.Environ(), "WARMRAIN_CHILD=1")
		stdout, err := cmd.StdoutPipe()
		if err != nil {
			return nil, err
		}
		if err := cmd.Start(); err != nil {
			return nil, fmt.Errorf("starting a --jobs process: %w", err)
		}
		wg.Add(1)
		go func(k int) {
			defer wg.Done()
			sc := bufio.NewScanner(stdout)
			sc.Buffer(make([]byte, 64<<10), 4<<20)
			for sc.Scan() {
				var r batch.Record
				if json.Unmarshal(sc.Bytes(), &r) != nil {
					continue
				}
				mu.Lock()
				recs = append(recs, r)
				j.report(r)
				if err := man.Add(r); err != nil {
					fmt.Fprintf(j.e.stderr, "warmrain: manifest: %v\n", err)
				}
				mu.Unlock()
			}
			if err := cmd.Wait(); err != nil {
				var ee *exec.ExitError
				if !errors.As(err, &ee) || ee.ExitCode() != ExitFailure {
					errs[k] = fmt.Errorf("--jobs process %d: %v", k, err)
				}
			}
		}(k)
		go func() {
			<-ctx.Done()
			if cmd.Process != nil {
				_ = cmd.Process.Signal(syscall.SIGTERM)
			}
		}()
	}
	wg.Wait()
	if ctx.Err() != nil {
		return recs, nil
	}
	return recs, errors.Join(errs...)
}

// runChild is the body of a --jobs child process: files whose position in
// this shard's list is k mod n; one JSON record per line on stdout.
func (j *processJob) runChild(ctx context.Context, inputs, outputs []string, mine []int) error {
	k, n, err := parseSlot(j.o.slot)
	if err != nil {
		return usagef("--child-slot: %v", err)
	}
	enc := json.NewEncoder(j.e.stdout)
	j.o.quiet = true
	var failed int
	for pos, i := range mine {
		if pos%n != k {
			continue
		}
		if ctx.Err() != nil {
			break
		}
		r := j.one(ctx, inputs[i], outputs[i], false)
		debug.FreeOSMemory()
		if r.Status == "failed" || r.Status == "interrupted" {
			failed++
		}
		if err := enc.Encode(r); err != nil {
			return err
		}
	}
	if failed > 0 || ctx.Err() != nil {
		return silentFailure{} // the parent reports
	}
	return nil
}

func parseSlot(s string) (k, n int, err error) {
	a, b, ok := strings.Cut(s, "/")
	k, e1 := strconv.Atoi(a)
	n, e2 := strconv.Atoi(b)
	if !ok || e1 != nil || e2 != nil || n < 1 || k < 0 || k >= n {
		return 0, 0, fmt.Errorf("want k/n, got %q", s)
	}
	return k, n, nil
}
