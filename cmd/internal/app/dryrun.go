package app

import (
	"fmt"
	"strings"

	"github.com/warmrain/warmrain/cmd/internal/batch"
	"github.com/warmrain/warmrain/grid"
)

// dryRun lists, for the files of this shard, what process would do with each and how
// it would read it, and writes nothing: no output, no folder, no manifest, no table
// cache. The decision is the resume check of a real run (processJob.decide, that is
// batch.Decide on what the output path holds); the bindings are those grid.Open makes.
// Inputs are opened for reading only, as in a run. The list goes to stdout. It fails
// (exit 1) when a file would be refused or would fail.
func (j *processJob) dryRun(inputs, outputs []string, mine []int, shard batch.Shard, mkFolder bool) error {
	w := j.e.stdout
	which := "no sharding"
	if shard.Count > 1 {
		which = fmt.Sprintf("shard %d/%d (%s)", shard.Index, shard.Count, shard.Source)
	}
	fmt.Fprintf(w, "# warmrain process --dry-run: %s: %d of %d inputs; parameters digest %s; nothing is written\n", which, len(mine), len(inputs), j.digest)
	if mkFolder {
		fmt.Fprintf(w, "# the output folder %s does not exist; a run would make it\n", j.o.output)
	}
	counts := map[string]int{}
	for _, i := range mine {
		verdict, bindings := j.planOne(inputs[i], outputs[i])
		word, _, _ := strings.Cut(verdict, ":")
		counts[word]++
		fmt.Fprintf(w, "%s -> %s: %s\n", inputs[i], outputs[i], verdict)
		for _, b := range bindings {
			fmt.Fprintf(w, "    %s\n", b)
		}
	}
	var tally []string
	for _, k := range []string{"process", "skip", "redo", "refuse", "fail"} {
		if counts[k] > 0 {
			tally = append(tally, fmt.Sprintf("%s %d", k, counts[k]))
		}
	}
	fmt.Fprintf(w, "# %s\n", strings.Join(tally, ", "))
	if bad := counts["refuse"] + counts["fail"]; bad > 0 {
		return fmt.Errorf("dry run: %d of %d files would not be processed (see the list on stdout)", bad, len(mine))
	}
	return nil
}

// planOne is the dry run of one file: the decision in words ("process", "skip: ...",
// "redo: why", "refuse: why", "fail: why") and the lines of its role bindings.
func (j *processJob) planOne(input, output string) (string, []string) {
	id, err := batch.InputIdentity(input, j.o.checksum)
	if err != nil {
		return "fail: " + err.Error(), nil
	}
	d, err := j.decide(output, id)
	if err != nil {
		return "fail: " + err.Error(), nil
	}
	verdict := "process"
	switch d.Action {
	case batch.Skip:
		verdict = "skip: a complete output of this input, these parameters and this build is there (--redo to process again)"
	case batch.Replace:
		verdict = "redo: " + d.Why
	case batch.Refuse:
		verdict = "refuse: " + d.Why
	}
	opt := grid.OpenOptions{Overrides: j.overrides, OverrideHint: "--bind ROLE=VAR[:UNITS]", SlabBytes: j.o.slabMB << 20}
	j.inputs().openOptions(&opt, j.masks, j.params)
	in, err := grid.Open(input, opt)
	if err != nil {
		if d.Action == batch.Refuse || d.Action == batch.Skip {
			return verdict, []string{"(cannot be read: " + err.Error() + ")"}
		}
		return "fail: " + err.Error(), nil
	}
	defer in.Close()
	lines := bindingLines(in)
	if d.Action == batch.Write || d.Action == batch.Replace {
		if _, err := j.memoryPlan(in, gridVars(j.defs, "", j.o.pack)); err != nil {
			return "fail: " + err.Error(), lines
		}
	}
	for _, x := range in.Warnings {
		lines = append(lines, "warning: "+x)
	}
	for _, a := range assumed(in, j.params) {
		lines = append(lines, "assumed: "+a)
	}
	return verdict, lines
}

// bindingLines describes each bound role: the variable, the file of a scene that holds
// it, its units and where they come from, and the conversion to the units in memory.
func bindingLines(in *grid.Input) []string {
	var out []string
	for _, b := range in.Bindings() {
		where := ""
		if len(in.Info.Files) > 1 {
			where = " in " + b.File
		}
		if b.Role.Rule().Internal {
			out = append(out, fmt.Sprintf("mask: %s%s", b.Var, where))
			continue
		}
		if b.Role.Rule().Codes() {
			out = append(out, fmt.Sprintf("%s = %s%s: flag codes", b.Role, b.Var, where))
			continue
		}
		out = append(out, fmt.Sprintf("%s = %s%s: units %q (%s), conversion %s", b.Role, b.Var, where, b.UnitsGiven, b.UnitsFrom, b.Conv))
	}
	return out
}
