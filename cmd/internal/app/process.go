package app

import (
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
	"reflect"
	"runtime"
	"runtime/debug"
	"runtime/pprof"
	"slices"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"syscall"
	"time"
	"unsafe"

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
variable in a group by its path (--bind lwp=/geophysical_data/NAME).

When the input carries retrieval uncertainties of LWP, r_e or tau (a
standard_error variable, *_uncertainty in percent, or --bind re_se=VAR), every
output gets <name>_standard_error beside it; --parameter-uncertainty adds
<name>_parameter_spread (README "Uncertainty").

With one input, OUTPUT is the output file; with several (or when OUTPUT is an
existing folder) OUTPUT is a folder and each output is named by --name.
Outputs appear whole or not at all: each is written to a temporary file in the
target folder and renamed when complete.

A rerun skips inputs whose output is complete (same input identity, parameters
and build recorded in its provenance) and redoes warmrain's own outputs of the
same input that are not. An existing file is never replaced otherwise: other
parameters need --redo, another input's output or any other file --force; the
refusal comes before any work. With several inputs each file runs in a worker
process, so a crash in the C libraries fails that file alone. Batch runs write
a JSON-lines manifest. SIGINT/SIGTERM/SIGHUP stop cleanly: the file in
progress is removed, what completed is recorded, the exit code is 1.

--dry-run lists, for the files of this shard, each output and what a run would
do (process, skip, redo, refuse or fail, and why) and how each role is read,
and writes nothing; it exits 1 when a file would be refused or fail. With
--json the list is one JSON document on stdout (its fields: README, "Archives
on a batch cluster").

A batch prints a start line, a line per file with k of N, the rate and the
time left, and a closing tally; --log FILE appends the same lines to FILE. The
physics parameters can come from a file (--params, see warmrain params) or
from an earlier output (--params-from); options given here override them.

--ensemble SETS processes one input once per parameter set of the text file SETS
(one set a line: NAME: --option VALUE ..., physics options as on the command line,
over those given on it; # starts a comment) and writes every diagnostic with a
leading dimension member, each member equal to the single run with its options.

Example:
  warmrain process samples/data/stratocumulus_demo.nc -o /tmp/demo_warmrain.nc
  warmrain process 'archive/2019/*.nc' -o out/ --name '{parent}_{stem}_wr.nc' --jobs 2
  warmrain process 'archive/2019/*.nc' -o out/ --params study.toml --dry-run
  warmrain process 'archive/2019/*.nc' -o out/ --dry-run --json > plan.json
  warmrain process samples/data/stratocumulus_demo.nc -o /tmp/demo_ensemble.nc --ensemble samples/data/onset_ensemble.txt
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
	memoryMB                   int
	ioOnly                     bool
	writer                     string
	cpuProfile                 string
	stats                      bool
	pack                       bool
	quantize                   int
	slot                       string // internal: "k/n" for a child process of --jobs
	dryRun                     bool
	json                       bool // --json: the dry run as one JSON document
	logPath                    string
	ensemble                   string // --ensemble FILE of parameter sets
	phys                       *physicsFlags
	inp                        *inputFlags
}

func runProcess(e *env, args []string) error {
	fs := newFlagSet(e, "process", processUsage)
	var o processOptions
	fs.StringVarP(&o.output, "output", "o", "", "output file (one input) or folder (several inputs)")
	fs.StringVar(&o.pattern, "name", batch.DefaultPattern, "output name pattern in a folder: {stem} (input name without extension), {name} (input name), {parent} (its folder's name), {relpath} (its path without extension, / as _), {index} (its place in the sorted list)")
	fs.StringVar(&o.ensemble, "ensemble", "", "write one member per parameter set of `FILE` (lines NAME: --option VALUE ...) along a dimension member; one input, one output file")
	fs.BoolVar(&o.augment, "augment", false, "write a copy of the input with the new variables added (default: a new file with the coordinates and the new variables)")
	fs.StringVar(&o.outputs, "outputs", "all", "comma-separated outputs to write (see README); the QC flags are always written")
	fs.StringArrayVar(&o.binds, "bind", nil, "take input ROLE from variable VAR, optionally declaring its units: ROLE=VAR[:UNITS] (repeatable; roles: lwp re tau ctt ctp cth cloud_fraction lwp_sd nd phase multilayer lwp_se re_se tau_se)")
	fs.IntVarP(&o.jobs, "jobs", "j", 1, "files processed at the same time, each in its own process (libnetcdf is single-threaded)")
	fs.IntVar(&o.threads, "threads", 0, "compute threads per process (0: the CPUs divided by --jobs; with --writer libnetcdf less one for the I/O thread)")
	fs.IntVar(&o.deflate, "deflate", 1, "deflate level of the outputs, 1-9 (0: no compression)")
	fs.BoolVar(&o.pack, "pack", false, "store the bounded outputs as CF-packed 16-bit integers (smaller, faster; precision in README)")
	fs.IntVar(&o.quantize, "significant-digits", 0, "lossy: keep this many significant decimal digits in float outputs (CF quantization metadata; 0: off)")
	fs.BoolVarP(&o.force, "force", "f", false, "replace any existing file at an output path (inputs are never overwritten)")
	fs.BoolVar(&o.redo, "redo", false, "process again and replace warmrain's outputs of the same input (also those of other parameters)")
	fs.StringVar(&o.shard, "shard", "", "process only shard I of N (I/N, 0 <= I < N) of the sorted input list")
	fs.IntVar(&o.shardCount, "shard-count", 0, "shard count for a Slurm array whose ids are not a plain range")
	fs.BoolVar(&o.ignoreSlurm, "ignore-slurm", false, "do not shard by the Slurm array variables")
	fs.StringVar(&o.manifest, "manifest", "", "JSON-lines manifest to append to (default: warmrain-manifest.jsonl in the output folder for folder outputs)")
	fs.BoolVar(&o.checksum, "checksum", false, "identify inputs by SHA-256 for resume (default: path, size and modification time)")
	fs.BoolVar(&o.dryRun, "dry-run", false, "list what would be done with each input of this shard (process, skip, redo, refuse, fail, and why) and how its variables would be read, then stop; writes nothing")
	fs.BoolVar(&o.json, "json", false, "with --dry-run: print the list as one JSON document (the same facts as the text)")
	fs.BoolVarP(&o.quiet, "quiet", "q", false, "no line per file on stderr (the start and closing lines stay, and --log gets every line)")
	fs.StringVar(&o.logPath, "log", "", "also append the start line, the line per file and the closing tally to `FILE`")
	fs.BoolVar(&o.noProgess, "no-progress", false, "no column progress within a file (it is shown only when stderr is a terminal)")
	fs.StringVar(&o.writer, "writer", grid.WriterDirect, "how chunks are compressed: direct (outputs by the compute threads and deflated netCDF-4 inputs by the reader, through HDF5's direct chunk I/O) or libnetcdf (everything by libnetcdf on its one I/O thread); the files are the same netCDF-4, the values identical")
	fs.IntVar(&o.slabMB, "slab-mb", grid.DefaultSlabBytes>>20, "memory budget of one slab, MiB (three are in flight)")
	fs.IntVar(&o.memoryMB, "memory-mb", defaultMemoryMB, "memory bound of one process, MiB: inputs whose chunking needs more are read in smaller slabs, or refused with the estimate")
	fs.BoolVar(&o.ioOnly, "io-only", false, "benchmark: read inputs and write outputs without the physics")
	fs.StringVar(&o.cpuProfile, "cpu-profile", "", "developers: write a Go CPU profile of the run to this file (see DEVELOPERS.md)")
	_ = fs.MarkHidden("cpu-profile")
	fs.BoolVar(&o.stats, "pipeline-stats", false, "developers: print the busy time of each pipeline stage per file on stderr")
	_ = fs.MarkHidden("pipeline-stats")
	fs.StringVar(&o.slot, "child-slot", "", "internal: run as a worker process of a batch")
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
	for _, c := range []struct {
		bad  bool
		opt  string
		v    int
		want string
	}{
		{o.jobs < 1, "jobs", o.jobs, "at least 1 (files at the same time)"},
		{o.threads < 0, "threads", o.threads, "0 (automatic) or more"},
		{o.deflate < 0 || o.deflate > 9, "deflate", o.deflate, "between 0 (no compression) and 9"},
		{o.slabMB < 1, "slab-mb", o.slabMB, "at least 1 MiB"},
		{o.memoryMB < 64, "memory-mb", o.memoryMB, "at least 64 MiB"},
		{o.quantize < 0 || o.quantize > 7, "significant-digits", o.quantize, "between 0 (off) and 7"},
	} {
		if c.bad {
			return usagef("--%s must be %s (got %d)", c.opt, c.want, c.v)
		}
	}
	if o.writer != grid.WriterDirect && o.writer != grid.WriterLibnetcdf {
		return usagef("--writer %q: expected direct or libnetcdf", o.writer)
	}
	if o.shard != "" && o.shardCount > 0 {
		return usagef("--shard and --shard-count cannot be combined (--shard-count is for Slurm arrays)")
	}
	if o.force && o.redo {
		// --force already implies replacing; keep the two meanings apart.
		return usagef("--force and --redo cannot be combined: --redo replaces warmrain's own outputs, --force any file")
	}
	if o.json && !o.dryRun {
		return usagef("--json is for --dry-run only (a run writes its record to the manifest, --manifest)")
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
	for _, n := range o.phys.notes {
		if o.slot == "" {
			fmt.Fprintf(e.stderr, "warmrain: note: %s\n", n)
		}
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
	if o.slot != "" {
		// A worker process of a batch: its tasks come on stdin (runChild).
		job := &processJob{e: e, o: o, params: params, defs: defs, overrides: overrides, masks: masks, args: args}
		job.digest = job.paramDigest()
		ctx, stop := signalContext(job)
		defer stop()
		return job.runChild(ctx)
	}
	if os.Getenv(childEnv) != "" {
		return errors.New("a worker process of warmrain process was started without its --child-slot; not starting more processes")
	}
	inputs, err := batch.ExpandInputs(fs.Args())
	if err != nil {
		return usagef("%v", err)
	}

	// Where the outputs go.
	folder, mkFolder := false, false
	if st, err := os.Stat(o.output); err == nil && st.IsDir() {
		folder = true
	} else if strings.HasSuffix(o.output, "/") || len(inputs) > 1 {
		if err == nil {
			return fmt.Errorf("output %s is not a folder (several inputs need an output folder)", o.output)
		}
		if !strings.HasSuffix(o.output, "/") {
			return fmt.Errorf("output folder %s does not exist; several inputs need a folder: end the output with / to have it made", o.output)
		}
		// A missing output folder (named with a final /) is made, once its
		// parent exists (a typing error in a parent folder should not grow a
		// tree of folders).
		parent := filepath.Dir(filepath.Clean(o.output))
		if st, err := os.Stat(parent); err != nil || !st.IsDir() {
			return fmt.Errorf("output folder %s does not exist, nor does its parent folder %s; create them first (several inputs, or an output ending in /, need a folder)", o.output, parent)
		}
		folder, mkFolder = true, true
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

	if o.dryRun {
		if o.ensemble != "" {
			return usagef("--dry-run and --ensemble cannot be combined (the dry run lists the runs of single parameter sets)")
		}
		job := &processJob{e: e, o: o, params: params, defs: defs, overrides: overrides, masks: masks, args: args, shardName: shardName}
		job.digest = job.paramDigest()
		return job.dryRun(inputs, outputs, mine, shard, mkFolder)
	}

	if o.cpuProfile != "" && o.slot == "" { // the parent's run only
		// A new file only: an existing one (an input, anything) is never replaced.
		f, err := os.OpenFile(o.cpuProfile, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
		if err != nil {
			return fmt.Errorf("--cpu-profile: %v (the profile is written to a new file only)", err)
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

	if mkFolder {
		// Many tasks of an array may make it at the same time.
		if err := os.Mkdir(o.output, 0o755); err != nil && !errors.Is(err, os.ErrExist) {
			return fmt.Errorf("output folder %s: %w", o.output, err)
		}
	}

	job := &processJob{e: e, o: o, params: params, defs: defs, overrides: overrides, masks: masks, args: args, shardName: shardName}
	job.digest = job.paramDigest()
	ctx, stop := signalContext(job)
	defer stop()
	if o.ensemble != "" {
		if len(inputs) != 1 || folder {
			return usagef("--ensemble processes one input into one output file (got %d inputs%s)", len(inputs), map[bool]string{true: ", an output folder"}[folder])
		}
		if o.augment || o.pack || o.quantize > 0 || o.jobs > 1 {
			return usagef("--ensemble writes plain float outputs of one file: --augment, --pack, --significant-digits and --jobs are not available with it")
		}
		job.single = true
		return job.runEnsemble(ctx, inputs[0], outputs[0], o.ensemble, fs)
	}

	if why := job.refusals(inputs, outputs, mine); len(why) == 1 && len(mine) == 1 {
		return errors.New(why[0])
	} else if len(why) > 0 {
		for _, w := range why {
			fmt.Fprintf(job.e.stderr, "warmrain: %s\n", w)
		}
		return fmt.Errorf("%d of %d outputs are in the way (see above); nothing was done", len(why), len(mine))
	}

	var man *batch.Manifest
	manPath := o.manifest
	if manPath == "" && folder {
		manPath = filepath.Join(o.output, "warmrain-manifest.jsonl")
	}
	if manPath != "" {
		var warn string
		if man, warn, err = batch.OpenManifest(manPath, inputs); err != nil {
			return err
		}
		if warn != "" {
			fmt.Fprintf(job.e.stderr, "warmrain: warning: %s\n", warn)
		}
		defer man.Close()
	}
	job.single = len(mine) == 1
	job.rep = &batchReport{stderr: job.e.stderr, quiet: o.quiet, total: len(mine), shard: shardName, t0: time.Now()}
	if o.logPath != "" {
		lf, err := openLog(o.logPath)
		if err != nil {
			return err
		}
		defer lf.Close()
		job.rep.log = lf
	}
	if len(mine) == 0 {
		job.rep.line(false, "shard %s has no files (%d inputs)", shardName, len(inputs))
		return nil
	}
	if len(mine) > 1 || o.logPath != "" {
		job.rep.start(len(inputs), job.digest, min(o.jobs, len(mine)))
		defer func() { job.rep.finish(job.recs) }()
	}
	var recs []batch.Record
	unrecorded := 0
	if len(mine) > 1 {
		// Several files: each in a supervised worker process (also with --jobs 1),
		// so that a crash in the C libraries fails that file alone.
		recs, unrecorded, err = job.runPool(ctx, inputs, outputs, mine, man)
		job.recs = recs
	} else {
		r := job.one(ctx, inputs[mine[0]], outputs[mine[0]], true)
		recs = append(recs, r)
		mr := r
		mr.Error = batch.Truncated(r.Error, batch.MaxErrorText) // the whole text is the command's error
		if err := man.Add(mr); err != nil {
			fmt.Fprintf(job.e.stderr, "warmrain: %v\n", err)
			unrecorded++
		}
		job.report(r)
		job.recs = recs
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
	if unrecorded > 0 {
		return fmt.Errorf("%d of %d files have no manifest record (see above); the outputs themselves are complete or absent", unrecorded, len(mine))
	}
	if failed > 0 {
		if len(mine) == 1 {
			return errors.New(recs[0].Error)
		}
		return failedFiles{failed: failed, total: len(mine)}
	}
	return nil
}

// childEnv marks a worker process of a batch (set by the parent).
const childEnv = "WARMRAIN_CHILD"

// signalContext returns a context cancelled by SIGINT, SIGTERM and SIGHUP,
// and by a closed stderr: SIGPIPE is caught (it does not kill the process)
// and the write that met the closed pipe cancels the run through job's
// stderr, so that the file in progress is removed and what completed is
// recorded.
func signalContext(j *processJob) (context.Context, func()) {
	ctx, cancel := context.WithCancel(context.Background())
	sigs := make(chan os.Signal, 4)
	signal.Notify(sigs, os.Interrupt, syscall.SIGTERM, syscall.SIGHUP, syscall.SIGPIPE)
	go func() {
		for {
			select {
			case s := <-sigs:
				if s != syscall.SIGPIPE {
					cancel()
				}
			case <-ctx.Done():
				return
			}
		}
	}()
	e := *j.e
	e.stderr = brokenPipeWriter{w: j.e.stderr, cancel: cancel}
	j.e = &e
	return ctx, func() {
		signal.Stop(sigs)
		// The last message (the command's error) may still meet a closed stderr:
		// the write fails instead of killing the process.
		signal.Ignore(syscall.SIGPIPE)
		cancel()
	}
}

// brokenPipeWriter cancels the run when a write meets a closed pipe.
type brokenPipeWriter struct {
	w      io.Writer
	cancel func()
}

func (b brokenPipeWriter) Write(p []byte) (int, error) {
	n, err := b.w.Write(p)
	if errors.Is(err, syscall.EPIPE) {
		b.cancel()
	}
	return n, err
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
	rep       *batchReport     // the messages of the run (nil in a worker process)
	recs      []batch.Record   // the records of the run, for the closing tally
	model     *microphys.Model // built on first use (the collector table takes a moment)
	modelErr  error
	modelOnce sync.Once
	// spread holds the perturbed models of --parameter-uncertainty, built on first use.
	spread     *microphys.SpreadModels
	spreadErr  error
	spreadOnce sync.Once
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

// paramDigest covers every parameter that changes an output's contents; the
// build is recorded and compared apart (attrBuild), so that a rebuild redoes
// outputs while a change of parameters is refused without --redo.
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
		[2]string{"binds", strings.Join(j.o.binds, ";")})
	pairs = append(pairs, j.inputs().settings()...)
	return batch.Digest(pairs)
}

func (j *processJob) report(r batch.Record) {
	if j.rep == nil {
		return
	}
	j.rep.file(r, j.single)
}

// Provenance attributes of every output (resume reads them back).
const (
	attrVersion  = "warmrain_version"
	attrIdentity = "warmrain_input_identity"
	attrDigest   = "warmrain_parameters_digest"
	attrBuild    = "warmrain_build"
)

// buildID identifies the build: the SHA-256 of the executable's bytes (as the
// table cache does), so that any change of the physics, stamped or not, makes
// earlier outputs incomplete.
func buildID() string {
	if h := exeHash(); h != "" {
		return "sha256:" + h
	}
	return ""
}

// existing reads what output path out already holds (nil: nothing). A file
// that is not a regular file, or has no warmrain provenance, is not ours.
func existing(out string) (*batch.Existing, error) {
	st, err := os.Lstat(out)
	if errors.Is(err, os.ErrNotExist) {
		return nil, nil
	} else if err != nil {
		return nil, err
	}
	ex := &batch.Existing{}
	if !st.Mode().IsRegular() {
		return ex, nil // never opened: a FIFO would block, a folder is no output
	}
	info, err := grid.Describe(out)
	if err != nil {
		return ex, nil
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
		return ex, nil
	}
	ex.Ours = true
	ex.Identity, ex.Digest, ex.Build, ex.Version = text(attrIdentity), text(attrDigest), text(attrBuild), text(attrVersion)
	if h := text("history"); len(h) >= 20 {
		ex.Time = h[:20]
	}
	return ex, nil
}

// decide is the resume check of one output (batch.Decide on what is there).
func (j *processJob) decide(output string, id batch.Identity) (batch.Decision, error) {
	ex, err := existing(output)
	if err != nil {
		return batch.Decision{}, fmt.Errorf("%s: %w", output, err)
	}
	return batch.Decide(output, ex, id, j.digest, buildID(), j.o.redo, j.o.force), nil
}

// refusals checks, before any work, every planned output that exists, and
// returns the reasons of those that would be refused.
func (j *processJob) refusals(inputs, outputs []string, mine []int) []string {
	var out []string
	for _, i := range mine {
		id, err := batch.InputIdentity(inputs[i], false)
		if err != nil {
			continue // the file's own run reports it
		}
		if d, err := j.decide(outputs[i], id); err == nil && d.Action == batch.Refuse {
			out = append(out, d.Why)
		}
	}
	return out
}

// one processes one input into one output and returns its manifest record.
func (j *processJob) one(ctx context.Context, input, output string, progress bool) batch.Record {
	t0 := time.Now()
	rec := batch.Record{Input: input, Output: output, Shard: j.shardName, Task: taskID(), Digest: j.digest, Build: buildID()}
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
	d, err := j.decide(output, id)
	if err != nil {
		return finish("failed", err)
	}
	force := false
	switch d.Action {
	case batch.Skip:
		return finish("skipped", nil)
	case batch.Refuse:
		return finish("failed", errors.New(d.Why))
	case batch.Replace:
		force = true
		rec.Note = d.Why
	}
	opt := grid.OpenOptions{Overrides: j.overrides, OverrideHint: "--bind ROLE=VAR[:UNITS]", SlabBytes: j.o.slabMB << 20}
	j.inputs().openOptions(&opt, j.masks, j.params)
	in, err := grid.Open(input, opt)
	if err != nil {
		return finish("failed", err)
	}
	plan, err := j.uncertaintyPlan(in)
	if err != nil {
		in.Close()
		return finish("failed", err)
	}
	vars := plan.vars(j.defs, gridVars(j.defs, "", j.o.pack))
	if sb, err := j.memoryPlan(in, vars); err != nil {
		in.Close()
		return finish("failed", err)
	} else if sb != opt.SlabBytes {
		// A chunking that needs smaller slabs to stay in the bound: read it again
		// with them (the plan is made when the input is opened).
		in.Close()
		opt.SlabBytes = sb
		if in, err = grid.Open(input, opt); err != nil {
			return finish("failed", err)
		}
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
	wopt.Writer = j.o.writer
	wopt.HistoryLine = fmt.Sprintf("%s: warmrain %s process %s", time.Now().UTC().Format("2006-01-02T15:04:05Z"), Version(), joinArgs(j.args))
	wopt.Globals = j.globals(id)
	if j.o.augment {
		wopt.Globals = keepInputGlobals(wopt.Globals, in.Info)
	}
	if len(assumed) > 0 {
		wopt.Globals = append(wopt.Globals, grid.Global{Name: "warmrain_assumptions", Value: strings.Join(assumed, " ")})
	}
	if len(j.inputs().masks) > 0 {
		wopt.Globals = append(wopt.Globals, grid.Global{Name: "warmrain_masks", Value: strings.Join(j.inputs().masks, "; ")})
	}
	vars = plan.vars(j.defs, gridVars(j.defs, strings.Join(used, " "), j.o.pack))
	methods := outputCellMethods(in) // README #cell-methods
	for _, w := range methods.Warnings {
		fmt.Fprintf(j.e.stderr, "warmrain: warning: %s: %s\n", input, w)
	}
	for k := range vars {
		if vars[k].Name == qcName {
			continue
		}
		vars[k].CellMethods = methods.CellMethods
		if methods.Comment != "" {
			vars[k].Comment = appendSentences(vars[k].Comment, []string{methods.Comment})
		}
	}
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
	writer, why := out.Writer()
	popt := grid.ProcessOptions{Workers: j.workers(writer), SkipCompute: j.o.ioOnly, Cancel: ctx.Done(),
		LibnetcdfRead: j.o.writer == grid.WriterLibnetcdf, BlockOutputs: true}
	if progress && isTerminal(j.e.stderr) && !j.o.noProgess {
		popt.Progress = progressLine(j.e.stderr, input, t0)
	}
	var stats grid.ProcessStats
	if j.o.stats {
		popt.Stats = &stats
	}
	// The unit sample comes from the first slabs the run decodes (its warnings follow the run).
	var sample *grid.SampleCollector
	if !j.o.ioOnly {
		sample = in.NewSampleCollector(unitSampleSize)
	}
	err = grid.Process(in, out, popt, j.compute(&screened, in, &counts, plan, sample, popt.BlockOutputs))
	if sample != nil && err == nil {
		for _, w := range unitWarningsOf(in, sample.Result()) {
			fmt.Fprintf(j.e.stderr, "warmrain: warning: %s\n", w)
		}
	}
	if j.o.stats {
		busy := stats.Read + stats.Write
		note := ""
		if why != "" && j.o.writer == grid.WriterDirect {
			note = " (direct writer not applicable: " + why + ")"
		}
		direct := "none"
		if len(stats.DirectRead) > 0 {
			direct = strings.Join(stats.DirectRead, " ")
		}
		fmt.Fprintf(j.e.stderr, "warmrain: pipeline %s: %d slabs, wall %.2f s; I/O thread %.2f s (read %.2f, write %.2f; busy %.0f %%); compute %.2f s, chunk filters %.2f s on %d workers; waited for input %.2f s; direct reads: %s; writer %s%s\n",
			input, stats.Slabs, stats.Wall.Seconds(), busy.Seconds(), stats.Read.Seconds(), stats.Write.Seconds(),
			100*busy.Seconds()/stats.Wall.Seconds(), stats.Compute.Seconds(), stats.Filter.Seconds(), popt.Workers, stats.WaitRead.Seconds(), direct, writer, note)
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
	rec.ScreenedQC = screenLines(&counts.why)
	rec.Screened = screened.Load()
	if rec.Columns > 0 {
		rec.ScreenedFraction = math.Round(float64(screened.Load())/float64(rec.Columns)*1e4) / 1e4
	}
	return finish("done", nil)
}

// defaultMemoryMB is the default memory bound of one process (README: Speed and memory).
const defaultMemoryMB = 256

// memoryPlan estimates the memory of processing in (grid.EstimateMemory, from
// its chunking) and returns the slab budget to read it with: the chosen one
// when it fits in --memory-mb, a smaller one when that brings it under the
// bound (inputs of many small chunks), or an error with the estimate and the
// fix when no slab size can (a chunk too large to hold).
func (j *processJob) memoryPlan(in *grid.Input, vars []grid.OutputVar) (int, error) {
	bound := int64(j.o.memoryMB) << 20
	sb := j.o.slabMB << 20
	est := in.EstimateMemory(vars, sb)
	if est.Total() <= bound {
		return sb, nil
	}
	for s := sb / 2; s >= 1<<20; s /= 2 {
		if e := in.EstimateMemory(vars, s); e.Total() <= bound {
			return s, nil
		}
	}
	var dims []string
	for _, d := range in.Layout.Dims {
		n := min(d.Len, 512)
		if len(dims) < len(in.Layout.Dims)-2 {
			n = 1
		}
		dims = append(dims, fmt.Sprintf("%s/%d", d.Name, n))
	}
	why := "its chunks are too small (each cached chunk costs bookkeeping)"
	if est.MaxChunk > bound/4 {
		why = fmt.Sprintf("one chunk of %s holds %d MB decompressed", est.MaxChunkVar, est.MaxChunk>>20)
	}
	return 0, fmt.Errorf("%s: reading it needs about %s, more than --memory-mb %d: %s. Rechunk it first, e.g. nccopy -c '%s' %s rechunked.nc, or raise --memory-mb",
		in.Path, est, j.o.memoryMB, why, strings.Join(dims, ","), in.Path)
}

// taskID names the batch task a record comes from: the Slurm job (and array
// task) id, or "" outside Slurm.
func taskID() string {
	job := os.Getenv("SLURM_ARRAY_JOB_ID")
	if job != "" {
		return job + "_" + os.Getenv("SLURM_ARRAY_TASK_ID")
	}
	return os.Getenv("SLURM_JOB_ID")
}

// workers is the number of compute goroutines for an output stored by writer
// (grid.WriterDirect or grid.WriterLibnetcdf).
func (j *processJob) workers(writer string) int {
	if j.o.threads > 0 {
		return j.o.threads
	}
	// With the direct writer the compute goroutines also compress the output
	// chunks and the I/O thread only reads and stores bytes: every core of the
	// process's share computes (doc/netcdf.md#direct-chunks). With libnetcdf's
	// writer one core goes to its thread, which reads, decompresses, compresses
	// and writes (measured on 2 cores at 4000²: one compute goroutine 17.0 s,
	// two 19.0 s, I/O alone 12.8-14.3 s).
	n := runtime.NumCPU() / max(1, j.o.jobs)
	if writer == grid.WriterLibnetcdf {
		n--
	}
	return max(1, n)
}

// compute returns the per-slab kernel: columnKernel.column for each column (masks, flag
// codes, completion and one microphys.Model.Column call), outputs scaled to the file units
// (the values outputValue gives), and the uncertainty outputs of plan when there are any.
// The diagnostics are copied out of each block of outBlock columns' microphys.Outputs one
// output at a time (outputCopies), a tight loop per output instead of a call per output
// and column. It allocates nothing per column. With block, outs hold the block's columns
// only (grid.ProcessOptions.BlockOutputs): outs[k][i-lo] is output k at column i.
func (j *processJob) compute(screened *atomic.Int64, gin *grid.Input, counts *tally, plan *uncPlan, sample *grid.SampleCollector, block bool) grid.ComputeFunc {
	m := j.model
	defs := j.defs
	k := newColumnKernel(m, gin)
	oc := newOutputCopies(defs)
	// Each call (grid.Process calls it for blocks of a few thousand columns) takes its
	// block of outputs and uncertainty scratch from a pool.
	scratch := sync.Pool{New: func() any { return &computeScratch{uw: plan.slab()} }}
	return func(s *grid.Slab, outs [][]float64, lo, hi int) {
		if sample != nil {
			sample.Add(s, lo, hi)
		}
		var in microphys.Inputs
		sc := scratch.Get().(*computeScratch)
		defer scratch.Put(sc)
		ob := &sc.ob              // the block's model outputs
		var skipped [outBlock]int // the block's columns screened before Column
		var n int64
		var local grid.QualityCounts
		var why [32]int64 // screened columns by QC bit
		if len(k.masks) > 0 || len(k.codeRoles) > 0 {
			local.Masks = make([]int64, len(k.masks))
			for _, r := range k.codeRoles {
				b, _ := gin.Binding(grid.Roles[r])
				local.Codes[r] = make([]int64, len(b.Decoder.FlagCodes))
			}
		}
		off := 0 // outs[k][i-off] is output k at column i
		if block {
			off = lo
		}
		qc := outs[len(defs)]
		uw := sc.uw
		var raw microphys.RawColumn
		var errIn [3]float64
		for c, d := range defs {
			if d.input != "" && d.input != grid.RoleLWP && s.In[d.input.Index()] != nil {
				src := s.In[d.input.Index()]
				for i := lo; i < hi; i++ {
					outs[c][i-off] = src[i] * d.scale
				}
			}
		}
		nan := math.NaN()
		for b := lo; b < hi; b += outBlock {
			e := min(b+outBlock, hi)
			ns := 0
			for i := b; i < e; i++ {
				o := &ob[i-b]
				q, qin, ran := k.column(s, i, &in, o, &local)
				if oc.lwp >= 0 {
					outs[oc.lwp][i-off] = outputValue(&defs[oc.lwp], &in, o, ran)
				}
				if !ran {
					skipped[ns] = i
					ns++
				}
				qc[i-off] = float64(q)
				if q&k.screen != 0 {
					n++
					countScreen(&why, q&k.screen)
				}
				if uw != nil {
					raw = microphys.RawColumn{In: k.inputs(s, i), Nd: slabAt(s, k.iNd, i), CF: slabAt(s, k.iCF, i), GridMean: k.gridMean}
					for e, r := range errorRoles {
						errIn[e] = slabAt(s, r.Index(), i)
					}
					uw.column(m, defs, outs, len(defs)+1, i-off, &raw, &in, qin, o, errIn, !ran || o.QC&microphys.QCScreenMask != 0)
				}
			}
			oc.copyBlock(outs, ob[:e-b], b-off)
			for _, c := range oc.missing {
				for _, i := range skipped[:ns] {
					outs[c][i-off] = nan
				}
			}
		}
		screened.Add(n)
		if local.Masks != nil || n > 0 {
			counts.add(&local, &why)
		}
	}
}

// computeScratch is one compute call's room: the model outputs of a block of columns and
// the uncertainty outputs' scratch (nil without uncertainty outputs).
type computeScratch struct {
	ob [outBlock]microphys.Outputs
	uw *uncSlab
}

// outBlock is the number of columns whose microphys.Outputs compute holds before copying
// them into the output slabs (36 kB of outputs).
const outBlock = 256

// outputCopies says how compute fills each output of defs: lwp is the output of the LWP
// used (-1: none), gets the diagnostics, taken from microphys.Outputs; missing the outputs
// that are NaN in a column screened before Column (the diagnostics and the copies of other
// inputs). The same values as outputValue.
type outputCopies struct {
	lwp     int
	gets    []outputGet
	missing []int
}

// outputGet is output c's diagnostic, SI value × scale: get's value, read straight from
// the float64 field at byte offset field of microphys.Outputs when get only returns that
// field (outputField; noField: get is called).
type outputGet struct {
	c     int
	get   func(o *microphys.Outputs) float64
	field uintptr
	scale float64
}

// noField: an output's get is called (outputGet).
const noField = ^uintptr(0)

// outputField returns the byte offset in microphys.Outputs of the float64 field get
// returns, or noField when get is not a plain read of one field: get must give that field's
// value, bit for bit, on three fillings of every field (QC included) with distinct
// values of both signs and magnitudes from 1e-9 to 1e31.
func outputField(get func(o *microphys.Outputs) float64) uintptr {
	t := reflect.TypeFor[microphys.Outputs]()
	found := -1
	for probe := range 3 {
		var o microphys.Outputs
		v := reflect.ValueOf(&o).Elem()
		for f := range t.NumField() {
			x := float64(f + 1)
			switch v.Field(f).Kind() {
			case reflect.Float64:
				v.Field(f).SetFloat([]float64{x + 0.25, -x * 3e-9, x * 1e30}[probe])
			case reflect.Uint16:
				v.Field(f).SetUint([]uint64{0, 0xffff, 1}[probe])
			}
		}
		got := math.Float64bits(get(&o))
		match := -1
		for f := range t.NumField() {
			if v.Field(f).Kind() == reflect.Float64 && math.Float64bits(v.Field(f).Float()) == got {
				match = f
			}
		}
		if match < 0 || (found >= 0 && match != found) {
			return noField
		}
		found = match
	}
	return t.Field(found).Offset
}

// copyBlock copies the diagnostics of the block of model outputs ob, columns
// [b, b+len(ob)), into outs, one output at a time.
func (oc *outputCopies) copyBlock(outs [][]float64, ob []microphys.Outputs, b int) {
	for _, g := range oc.gets {
		d := outs[g.c][b : b+len(ob)]
		if g.field == noField {
			for x := range d {
				d[x] = g.get(&ob[x]) * g.scale
			}
			continue
		}
		for x := range d {
			d[x] = *(*float64)(unsafe.Add(unsafe.Pointer(&ob[x]), g.field)) * g.scale
		}
	}
}

func newOutputCopies(defs []outputDef) outputCopies {
	oc := outputCopies{lwp: -1}
	for c, d := range defs {
		switch {
		case d.input == grid.RoleLWP:
			oc.lwp = c
			continue
		case d.get != nil:
			oc.gets = append(oc.gets, outputGet{c: c, get: d.get, field: outputField(d.get), scale: d.scale})
		}
		oc.missing = append(oc.missing, c)
	}
	return oc
}

// columnKernel is the work process does for one column, shared with 'column --from' so
// that both give the same numbers: the product's masks and flag codes, the input completion
// (microphys.Model.Complete), the screening and one microphys.Model.Column call.
type columnKernel struct {
	m                                                *microphys.Model
	masks                                            []*grid.Mask
	bits                                             []uint32
	codeRoles                                        []int // roles whose decoder screens flag codes
	gridMean                                         bool
	iLWP, iRe, iTau, iCTT, iCTP, iCTH, iSD, iNd, iCF int
	screen                                           uint32
}

func newColumnKernel(m *microphys.Model, gin *grid.Input) *columnKernel {
	k := &columnKernel{m: m, masks: gin.Masks, gridMean: gin.GridMean,
		iLWP: grid.RoleLWP.Index(), iRe: grid.RoleRe.Index(), iTau: grid.RoleTau.Index(),
		iCTT: grid.RoleCTT.Index(), iCTP: grid.RoleCTP.Index(), iCTH: grid.RoleCTH.Index(), iSD: grid.RoleLWPSD.Index(),
		iNd: grid.RoleNd.Index(), iCF: grid.RoleCloudFraction.Index(),
		screen: microphys.QCInputScreenMask | uint32(microphys.QCScreenMask)}
	k.bits = make([]uint32, len(k.masks))
	for i, mk := range k.masks {
		k.bits[i] = maskBit(mk)
	}
	for i, r := range grid.Roles {
		if b, ok := gin.Binding(r); ok && len(b.Decoder.FlagCodes) > 0 {
			k.codeRoles = append(k.codeRoles, i)
		}
	}
	return k
}

// inputs are column i's inputs as the slab holds them (before completion).
func (k *columnKernel) inputs(s *grid.Slab, i int) microphys.Inputs {
	return microphys.Inputs{LWP: slabAt(s, k.iLWP, i), Re: slabAt(s, k.iRe, i), Tau: slabAt(s, k.iTau, i), CTT: slabAt(s, k.iCTT, i),
		CTP: slabAt(s, k.iCTP, i), CTH: slabAt(s, k.iCTH, i), LWPStd: slabAt(s, k.iSD, i), SurfaceRH: math.NaN()}
}

// column fills in (the completed inputs) and o for column i of slab s and returns the QC
// word written to the file (input bits | Column's bits) and the input bits alone (masks,
// flag codes, completion); ran is false when the column was screened before Column (o is
// then not computed). local counts mask and flag-code hits (its Masks nil: not counted).
func (k *columnKernel) column(s *grid.Slab, i int, in *microphys.Inputs, o *microphys.Outputs, local *grid.QualityCounts) (qc, qin uint32, ran bool) {
	for c, mk := range k.masks {
		if mk.Screens(s.In[mk.Role.Index()][i]) {
			qin |= k.bits[c]
			if local.Masks != nil {
				local.Masks[c]++
			}
		}
	}
	for _, r := range k.codeRoles {
		if c, ok := grid.FlagIndex(s.In[r][i]); ok {
			qin |= microphys.QCFlagCode
			if local.Codes[r] != nil {
				local.Codes[r][c]++
			}
		}
	}
	if qin != 0 {
		local.Screened++
	}
	*in = k.inputs(s, i)
	if qin == 0 {
		qin = k.m.Complete(in, slabAt(s, k.iNd, i), slabAt(s, k.iCF, i), k.gridMean)
	}
	if qin&k.screen != 0 {
		return qin, qin, false
	}
	k.m.Column(in, o)
	return uint32(o.QC) | qin, qin, true
}

// slabAt is role r's value at column i of s, NaN when the role is absent.
func slabAt(s *grid.Slab, r, i int) float64 {
	if s.In[r] == nil {
		return math.NaN()
	}
	return s.In[r][i]
}

// outputValue is the value of output d (file units) for a column: its diagnostic, the LWP
// used (derived or in-cloud) for the LWP copy, NaN for a screened column's diagnostics.
// Copies of other inputs (d.get nil, d.input not LWP) are not handled here.
func outputValue(d *outputDef, in *microphys.Inputs, o *microphys.Outputs, ran bool) float64 {
	switch {
	case d.input == grid.RoleLWP:
		if in.LWP >= 0 {
			return in.LWP * d.scale
		}
		return math.NaN()
	case !ran || d.get == nil:
		return math.NaN()
	}
	return d.get(o) * d.scale
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
		{Name: attrBuild, Value: buildID()},
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

// keepInputGlobals: in a copy of the input (--augment) the input's own
// descriptive attributes are kept and warmrain's are added after them, not
// substituted (a "not for science" comment of the data provider must stay).
func keepInputGlobals(ours []grid.Global, info *grid.FileInfo) []grid.Global {
	out := slices.Clone(ours)
	for k, g := range out {
		switch g.Name {
		case "title", "summary", "comment", "source", "references":
		default:
			continue
		}
		a, ok := info.Global(g.Name)
		if !ok {
			continue
		}
		if old, _ := a.Text(); strings.TrimSpace(old) != "" {
			out[k].Value = old + "\nwarmrain: " + g.Value
		}
	}
	return out
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
		refs = append(refs, "Beard and Pruppacher (1971) J. Atmos. Sci. 28, 1455-1464; Pruppacher and Klett (1997) (ventilation, evaporation)",
			"Wood (2005) J. Atmos. Sci. 62, 3011-3033 and 3034-3050; vanZanten et al. (2005) J. Atmos. Sci. 62, 88-106 (drizzle size distribution, surface drizzle)")
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

// task is what a worker process is given for one file.
type task struct {
	Input  string `json:"input"`
	Output string `json:"output"`
	Shard  string `json:"shard,omitempty"`
}

// runPool processes the files in supervised worker processes (batch.Pool),
// --jobs at a time: each is this command again with --child-slot, given one
// file at a time on its stdin and answering with the file's record. A worker
// writes the record to the manifest itself (the manifest's descriptor is
// passed on), so that the record survives the parent; the parent records the
// files whose worker died. unrecorded counts records that could not be
// written.
func (j *processJob) runPool(ctx context.Context, inputs, outputs []string, mine []int, man *batch.Manifest) (recs []batch.Record, unrecorded int, err error) {
	exe, err := os.Executable()
	if err != nil {
		return nil, 0, fmt.Errorf("a batch needs the warmrain executable to start its worker processes: %w", err)
	}
	n := min(j.o.jobs, len(mine))
	if !j.o.ioOnly && tableCachePath(tableCacheDir(), j.params) != "" {
		// Fill the table cache once here, so that the workers load the tables
		// instead of each integrating them.
		if _, err := j.getModel(); err != nil {
			return nil, 0, err
		}
	}
	tasks := make([]string, len(mine))
	for k, i := range mine {
		b, _ := json.Marshal(task{Input: inputs[i], Output: outputs[i], Shard: j.shardName})
		tasks[k] = string(b)
	}
	pool := batch.Pool{
		Jobs:      n,
		Stderr:    j.e.stderr,
		MaxAnswer: 64 << 10,
		Grace:     20 * time.Second,
		Command: func() *exec.Cmd {
			// The worker's own options come first: after a "--" in the user's
			// arguments they would be taken as inputs.
			args := append([]string{"process", "--child-slot", "1/1", "--threads", strconv.Itoa(j.workers(j.o.writer))}, j.args...)
			cmd := exec.Command(exe, args...)
			cmd.Env = append(os.Environ(), childEnv+"=1")
			if man != nil {
				cmd.ExtraFiles = []*os.File{man.File()}
				cmd.Env = append(cmd.Env, childManifestEnv+"=3")
			}
			return cmd
		},
	}
	err = pool.Run(ctx, tasks, func(k int, a batch.Answer) {
		i := mine[k]
		var r batch.Record
		written := false
		switch {
		case a.Death != nil:
			r = batch.Record{Input: inputs[i], Output: outputs[i], Status: "failed", Shard: j.shardName, Task: taskID(),
				Digest: j.digest, Build: buildID(), Signal: a.Death.Signal, Error: a.Death.Message,
				Time: time.Now().UTC().Format(time.RFC3339)}
			if ctx.Err() != nil && (a.Death.Signal == "SIGTERM" || a.Death.Signal == "SIGKILL" || a.Death.Signal == "SIGINT") {
				r.Status, r.Error = "interrupted", "stopped by a signal"
			}
		case a.TooLong > 0:
			r = batch.Record{Input: inputs[i], Output: outputs[i], Status: "failed", Shard: j.shardName, Task: taskID(),
				Digest: j.digest, Build: buildID(), Error: fmt.Sprintf("the worker's record of this file was %d bytes long and was dropped", a.TooLong),
				Time: time.Now().UTC().Format(time.RFC3339)}
		default:
			var ans childAnswer
			if json.Unmarshal(a.Line, &ans) != nil {
				r = batch.Record{Input: inputs[i], Output: outputs[i], Status: "failed", Error: "the worker's record of this file was unreadable"}
			} else {
				r, written = ans.Record, ans.Recorded
				if ans.ManifestError != "" {
					fmt.Fprintf(j.e.stderr, "warmrain: %s\n", ans.ManifestError)
					unrecorded++
					written = true // tried; a second try would fail the same way
				}
			}
		}
		if !written {
			if err := man.Add(r); err != nil {
				fmt.Fprintf(j.e.stderr, "warmrain: %v\n", err)
				unrecorded++
			}
		}
		recs = append(recs, r)
		j.report(r)
	})
	return recs, unrecorded, err
}

// childManifestEnv names the descriptor of the manifest in a worker process.
const childManifestEnv = "WARMRAIN_CHILD_MANIFEST"

// childAnswer is a worker's answer for one file: its record, and whether the
// worker wrote it to the manifest.
type childAnswer struct {
	Record        batch.Record `json:"record"`
	Recorded      bool         `json:"recorded"`
	ManifestError string       `json:"manifest_error,omitempty"`
}

// runChild is the body of a worker process: one task per line on stdin, one
// answer per line on stdout, until stdin ends or the run is cancelled.
func (j *processJob) runChild(ctx context.Context) error {
	var man *batch.Manifest
	if os.Getenv(childManifestEnv) == "3" {
		man = batch.ManifestOn(os.NewFile(3, "manifest"), "the manifest")
	}
	j.o.quiet = true
	enc := json.NewEncoder(j.e.stdout)
	sc := batch.ChildTasks(os.Stdin)
	failed := 0
	for ctx.Err() == nil && sc.Scan() {
		var t task
		if err := json.Unmarshal(sc.Bytes(), &t); err != nil {
			return fmt.Errorf("worker process: bad task %q", sc.Text())
		}
		if crash := os.Getenv(testCrashEnv); crash != "" && strings.Contains(t.Input, crash) {
			testCrash()
		}
		j.shardName = t.Shard
		r := j.one(ctx, t.Input, t.Output, false)
		debug.FreeOSMemory() // the next file starts from the same footprint
		if r.Status == "failed" || r.Status == "interrupted" {
			failed++
		}
		if len(r.Error) > batch.MaxErrorText {
			fmt.Fprintf(j.e.stderr, "warmrain: %s: failed: %s\n", r.Input, r.Error)
			r.Error = batch.Truncated(r.Error, batch.MaxErrorText)
		}
		ans := childAnswer{Record: r}
		if man != nil {
			if err := man.Add(r); err != nil {
				ans.ManifestError = err.Error()
			}
			ans.Recorded = true
		}
		if err := enc.Encode(ans); err != nil {
			return silentFailure{} // the parent is gone; the record is in the manifest
		}
	}
	if failed > 0 || ctx.Err() != nil {
		return silentFailure{} // the parent reports
	}
	return nil
}

// testCrashEnv: in a worker process, a file whose input path contains this
// variable's value makes the worker crash with a segmentation fault, as a
// crash inside libnetcdf/HDF5 would (tests of the crash isolation only).
const testCrashEnv = "WARMRAIN_TEST_CRASH"

func testCrash() {
	var p *int
	*p = 1 // a nil dereference: SIGSEGV
}
