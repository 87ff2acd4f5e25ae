package app

import (
	"encoding/json"
	"fmt"
	"io"
	"strings"

	"github.com/warmrain/warmrain/cmd/internal/batch"
	"github.com/warmrain/warmrain/grid"
)

// dryRunReport is what the dry run lists: the run's facts and, per file of the shard, the
// decision and how each role would be read. The text form and --json print this one value.
type dryRunReport struct {
	Digest      string         `json:"parameters_digest"`
	Shard       string         `json:"shard,omitempty"`        // "i/n"; absent: no sharding
	ShardSource string         `json:"shard_source,omitempty"` // "--shard" or "slurm"
	Inputs      int            `json:"inputs"`                 // in the whole input list
	Selected    int            `json:"selected"`               // of them, this shard's
	NewFolder   string         `json:"new_output_folder,omitempty"`
	Files       []dryRunFile   `json:"files"`
	Tally       map[string]int `json:"tally"`
}

// dryRunFile is the dry run of one input.
type dryRunFile struct {
	Input    string `json:"input"`
	Output   string `json:"output"`
	Decision string `json:"decision"` // process, skip, redo, refuse or fail
	Reason   string `json:"reason,omitempty"`
	Shard    string `json:"shard,omitempty"`
	// Roles are the bindings grid.Open makes; Unreadable says why there are none when the
	// input cannot be read but the decision (skip, refuse) does not need it.
	Roles      []dryRunRole `json:"roles"`
	Unreadable string       `json:"unreadable,omitempty"`
	Warnings   []string     `json:"warnings,omitempty"`
	Assumed    []string     `json:"assumed,omitempty"`
}

// dryRunRole is one bound role: the variable, the file of a scene that holds it, its
// units and where they come from, the units in memory and the conversion to them.
type dryRunRole struct {
	Role       string `json:"role"` // "mask" for a screening mask
	Variable   string `json:"variable"`
	InFile     string `json:"in_file,omitempty"`
	UnitsGiven string `json:"units_given,omitempty"`
	UnitsFrom  string `json:"units_from,omitempty"`
	Canonical  string `json:"canonical_units,omitempty"`
	Conversion string `json:"conversion,omitempty"`
	FlagCodes  bool   `json:"flag_codes,omitempty"` // read as flag codes, not converted
}

// dryRun lists, for the files of this shard, what process would do with each and how
// it would read it, and writes nothing: no output, no folder, no manifest, no table
// cache. The decision is the resume check of a real run (processJob.decide, that is
// batch.Decide on what the output path holds); the bindings are those grid.Open makes.
// Inputs are opened for reading only, as in a run. The list goes to stdout, as text or
// (--json) one JSON document. It fails (exit 1) when a file would be refused or would fail.
func (j *processJob) dryRun(inputs, outputs []string, mine []int, shard batch.Shard, mkFolder bool) error {
	rep := dryRunReport{Digest: j.digest, Inputs: len(inputs), Selected: len(mine), Files: []dryRunFile{}, Tally: map[string]int{}}
	if shard.Count > 1 {
		rep.Shard, rep.ShardSource = fmt.Sprintf("%d/%d", shard.Index, shard.Count), shard.Source
	}
	if mkFolder {
		rep.NewFolder = j.o.output
	}
	for _, i := range mine {
		f := j.planOne(inputs[i], outputs[i])
		f.Shard = rep.Shard
		rep.Tally[f.Decision]++
		rep.Files = append(rep.Files, f)
	}
	if j.o.json {
		enc := json.NewEncoder(j.e.stdout)
		enc.SetIndent("", "  ")
		enc.SetEscapeHTML(false)
		if err := enc.Encode(&rep); err != nil {
			return err
		}
	} else {
		rep.writeText(j.e.stdout)
	}
	if bad := rep.Tally["refuse"] + rep.Tally["fail"]; bad > 0 {
		return fmt.Errorf("dry run: %d of %d files would not be processed (see the list on stdout)", bad, len(mine))
	}
	return nil
}

// writeText prints the report as the text dry run: a head line, a line per file with its
// decision and the lines of its roles, and the tally.
func (r *dryRunReport) writeText(w io.Writer) {
	which := "no sharding"
	if r.Shard != "" {
		which = fmt.Sprintf("shard %s (%s)", r.Shard, r.ShardSource)
	}
	fmt.Fprintf(w, "# warmrain process --dry-run: %s: %d of %d inputs; parameters digest %s; nothing is written\n", which, r.Selected, r.Inputs, r.Digest)
	if r.NewFolder != "" {
		fmt.Fprintf(w, "# the output folder %s does not exist; a run would make it\n", r.NewFolder)
	}
	for _, f := range r.Files {
		verdict := f.Decision
		if f.Reason != "" {
			verdict += ": " + f.Reason
		}
		fmt.Fprintf(w, "%s -> %s: %s\n", f.Input, f.Output, verdict)
		for _, b := range f.Roles {
			where := ""
			if b.InFile != "" {
				where = " in " + b.InFile
			}
			switch {
			case b.Role == "mask":
				fmt.Fprintf(w, "    mask: %s%s\n", b.Variable, where)
			case b.FlagCodes:
				fmt.Fprintf(w, "    %s = %s%s: flag codes\n", b.Role, b.Variable, where)
			default:
				fmt.Fprintf(w, "    %s = %s%s: units %q (%s), conversion %s\n", b.Role, b.Variable, where, b.UnitsGiven, b.UnitsFrom, b.Conversion)
			}
		}
		if f.Unreadable != "" {
			fmt.Fprintf(w, "    (cannot be read: %s)\n", f.Unreadable)
		}
		for _, x := range f.Warnings {
			fmt.Fprintf(w, "    warning: %s\n", x)
		}
		for _, a := range f.Assumed {
			fmt.Fprintf(w, "    assumed: %s\n", a)
		}
	}
	var tally []string
	for _, k := range []string{"process", "skip", "redo", "refuse", "fail"} {
		if r.Tally[k] > 0 {
			tally = append(tally, fmt.Sprintf("%s %d", k, r.Tally[k]))
		}
	}
	fmt.Fprintf(w, "# %s\n", strings.Join(tally, ", "))
}

// planOne is the dry run of one file: the decision (process, skip, redo, refuse, fail),
// why, and its role bindings.
func (j *processJob) planOne(input, output string) dryRunFile {
	f := dryRunFile{Input: input, Output: output, Decision: "process", Roles: []dryRunRole{}}
	fail := func(err error) dryRunFile {
		f.Decision, f.Reason = "fail", err.Error()
		return f
	}
	id, err := batch.InputIdentity(input, j.o.checksum)
	if err != nil {
		return fail(err)
	}
	d, err := j.decide(output, id)
	if err != nil {
		return fail(err)
	}
	switch d.Action {
	case batch.Skip:
		f.Decision, f.Reason = "skip", "a complete output of this input, these parameters and this build is there (--redo to process again)"
	case batch.Replace:
		f.Decision, f.Reason = "redo", d.Why
	case batch.Refuse:
		f.Decision, f.Reason = "refuse", d.Why
	}
	opt := grid.OpenOptions{Overrides: j.overrides, OverrideHint: "--bind ROLE=VAR[:UNITS]", SlabBytes: j.o.slabMB << 20}
	j.inputs().openOptions(&opt, j.masks, j.params)
	in, err := grid.Open(input, opt)
	if err != nil {
		if d.Action == batch.Refuse || d.Action == batch.Skip {
			f.Unreadable = err.Error()
			return f
		}
		return fail(err)
	}
	defer in.Close()
	f.Roles = bindingRoles(in)
	if d.Action == batch.Write || d.Action == batch.Replace {
		if _, err := j.memoryPlan(in, gridVars(j.defs, "", j.o.pack)); err != nil {
			return fail(err)
		}
	}
	f.Warnings = in.Warnings
	f.Assumed = assumed(in, j.params)
	return f
}

// bindingRoles describes each bound role: the variable, the file of a scene that holds
// it, its units and where they come from, and the conversion to the units in memory.
func bindingRoles(in *grid.Input) []dryRunRole {
	out := []dryRunRole{}
	for _, b := range in.Bindings() {
		r := dryRunRole{Role: string(b.Role), Variable: b.Var}
		if len(in.Info.Files) > 1 {
			r.InFile = b.File
		}
		switch {
		case b.Role.Rule().Internal:
			r.Role = "mask"
		case b.Role.Rule().Codes():
			r.FlagCodes = true
		default:
			r.UnitsGiven, r.UnitsFrom, r.Canonical, r.Conversion = b.UnitsGiven, b.UnitsFrom, b.Canonical, b.Conv.String()
		}
		out = append(out, r)
	}
	return out
}
