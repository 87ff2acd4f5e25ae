package app

import (
	"bufio"
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"time"

	"github.com/spf13/pflag"
	"github.com/warmrain/warmrain/cmd/internal/batch"
	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/microphys"
)

// Ensemble mode (process --ensemble FILE): one output member per parameter set of FILE,
// along a leading dimension "member". The file format (README, doc/netcdf.md#ensemble):
//
//	# a comment; blank lines are ignored
//	NAME: --option VALUE --option VALUE ...
//
// one set a line, NAME of letters, digits, '_', '-' and '.', unique; the options are
// the physics options of the command line (microphys.ParamDecls), with the same names
// and units. Each set starts from the physics options given on the command line and
// overrides them.

// ensembleMember is one parameter set.
type ensembleMember struct {
	name, text string
	params     microphys.Params
	defs       []outputDef
}

var memberName = regexp.MustCompile(`^[A-Za-z0-9_.-]+$`)

// parseEnsemble reads the parameter sets of path; base holds the physics options given
// on the command line (each set starts from them).
func parseEnsemble(path string, base *pflag.FlagSet, outputs string) ([]ensembleMember, []byte, error) {
	content, err := os.ReadFile(path)
	if err != nil {
		return nil, nil, usagef("--ensemble: %v", err)
	}
	var ms []ensembleMember
	seen := map[string]int{}
	sc := bufio.NewScanner(bytes.NewReader(content))
	line := 0
	for sc.Scan() {
		line++
		l := strings.TrimSpace(sc.Text())
		if l == "" || strings.HasPrefix(l, "#") {
			continue
		}
		bad := func(format string, a ...any) error {
			return usagef("--ensemble %s line %d: %s", path, line, fmt.Sprintf(format, a...))
		}
		name, rest, ok := strings.Cut(l, ":")
		name = strings.TrimSpace(name)
		if !ok || !memberName.MatchString(name) {
			return nil, nil, bad("expected NAME: --option VALUE ... (NAME of letters, digits, _ - .), got %q", l)
		}
		if p, dup := seen[name]; dup {
			return nil, nil, bad("member %s was already defined on line %d", name, p)
		}
		seen[name] = line
		fs := pflag.NewFlagSet(name, pflag.ContinueOnError)
		fs.SetOutput(bytes.NewBuffer(nil))
		pf := addPhysicsFlags(fs)
		var serr error
		base.Visit(func(f *pflag.Flag) {
			if fs.Lookup(f.Name) != nil && serr == nil {
				serr = fs.Set(f.Name, f.Value.String())
			}
		})
		if serr != nil {
			return nil, nil, bad("%v", serr)
		}
		tokens := strings.Fields(rest)
		if err := fs.Parse(tokens); err != nil {
			return nil, nil, bad("%v (only physics options, as on the command line, are allowed)", err)
		}
		if fs.NArg() > 0 {
			return nil, nil, bad("unexpected %q: expected --option VALUE pairs", fs.Arg(0))
		}
		p, err := pf.toParams()
		if err != nil {
			return nil, nil, bad("%v", err)
		}
		defs, err := selectOutputs(outputs, p)
		if err != nil {
			return nil, nil, bad("%v", err)
		}
		ms = append(ms, ensembleMember{name: name, text: strings.Join(tokens, " "), params: p, defs: defs})
	}
	if err := sc.Err(); err != nil {
		return nil, nil, usagef("--ensemble %s: %v", path, err)
	}
	if len(ms) == 0 {
		return nil, nil, usagef("--ensemble %s has no parameter sets (lines NAME: --option VALUE ...)", path)
	}
	for _, m := range ms[1:] {
		if !slices.Equal(outputNames(m.defs), outputNames(ms[0].defs)) {
			return nil, nil, usagef("--ensemble %s: member %s writes the outputs %v and member %s %v; every member needs the same outputs (choose them with --outputs)",
				path, m.name, outputNames(m.defs), ms[0].name, outputNames(ms[0].defs))
		}
	}
	return ms, content, nil
}

// runEnsemble processes input once per member into temporary files beside output, then
// writes output with every diagnostic along a leading dimension member.
func (j *processJob) runEnsemble(ctx context.Context, input, output, path string, base *pflag.FlagSet) error {
	ms, content, err := parseEnsemble(path, base, j.o.outputs)
	if err != nil {
		return err
	}
	sum := sha256.Sum256(content)
	fileDigest := hex.EncodeToString(sum[:])
	pairs := [][2]string{{"ensemble_sha256", fileDigest}}
	for _, m := range ms {
		mj := &processJob{e: j.e, o: j.o, params: m.params, defs: m.defs, overrides: j.overrides, masks: j.masks, args: j.args}
		pairs = append(pairs, [2]string{"member_" + m.name, mj.paramDigest()})
	}
	j.digest = batch.Digest(pairs)
	id, err := batch.InputIdentity(input, j.o.checksum)
	if err != nil {
		return fmt.Errorf("%s: %w", input, err)
	}
	d, err := j.decide(output, id)
	if err != nil {
		return err
	}
	force := false
	switch d.Action {
	case batch.Skip:
		if !j.o.quiet {
			fmt.Fprintf(j.e.stderr, "warmrain: %s: complete ensemble output %s exists, skipped (--redo to process again)\n", input, output)
		}
		return nil
	case batch.Refuse:
		return errors.New(d.Why)
	case batch.Replace:
		force = true
	}
	tmpDir, err := os.MkdirTemp(filepath.Dir(output), "."+filepath.Base(output)+".members-")
	if err != nil {
		return fmt.Errorf("ensemble: cannot make a folder for the members beside %s: %w", output, err)
	}
	defer os.RemoveAll(tmpDir)
	files := make([]string, len(ms))
	t0 := time.Now()
	for k, m := range ms {
		files[k] = filepath.Join(tmpDir, fmt.Sprintf("member%03d.nc", k))
		mj := &processJob{e: j.e, o: j.o, params: m.params, defs: m.defs, overrides: j.overrides, masks: j.masks, args: j.args, single: true}
		mj.digest = mj.paramDigest()
		r := mj.one(ctx, input, files[k], true)
		if r.Status != "done" {
			if ctx.Err() != nil {
				return fmt.Errorf("interrupted at member %s; no output written", m.name)
			}
			return fmt.Errorf("ensemble member %s: %s", m.name, r.Error)
		}
		if !j.o.quiet {
			fmt.Fprintf(j.e.stderr, "warmrain: member %d/%d %s: %d columns, %.1f %% screened\n", k+1, len(ms), m.name, r.Columns, 100*r.ScreenedFraction)
		}
	}
	if err := assembleEnsemble(ctx, output, files, ms, path, fileDigest, j.digest, force, j.args); err != nil {
		return err
	}
	if !j.o.quiet {
		fmt.Fprintf(j.e.stderr, "warmrain: %s -> %s: %d members, %.2f s\n", input, output, len(ms), time.Since(t0).Seconds())
	}
	return nil
}

// ensemblePiece is the most values one Put of the assembly holds (32 MiB of float64).
const ensemblePiece = 4 << 20

// assembleEnsemble writes output from the member files: the diagnostics and the QC
// flags gain the leading dimension member; every other variable (coordinates, copied
// inputs) is the first member's. Memory: one piece of one variable at a time.
func assembleEnsemble(ctx context.Context, output string, files []string, ms []ensembleMember, path, fileDigest, digest string, force bool, args []string) error {
	readers := make([]*grid.Reader, len(files))
	defer func() {
		for _, r := range readers {
			if r != nil {
				r.Close()
			}
		}
	}()
	for k, f := range files {
		r, err := grid.OpenReader(f)
		if err != nil {
			return err
		}
		readers[k] = r
	}
	info := readers[0].Info()
	perMember := map[string]bool{qcName: true}
	for _, n := range outputNames(ms[0].defs) {
		perMember[n] = true
	}
	for _, v := range info.Vars { // the uncertainty outputs (uncertainty.go) depend on the member too
		if strings.HasSuffix(v.Name, seSuffix) || strings.HasSuffix(v.Name, spreadSuffix) || v.Name == uncFlagName {
			perMember[v.Name] = true
		}
	}
	const dimMember = "member"
	ds := &grid.Dataset{Dims: []grid.DimSpec{{Name: dimMember, Len: len(ms)}}}
	for _, d := range info.Dims {
		ds.Dims = append(ds.Dims, grid.DimSpec{Name: d.Name, Len: d.Len})
	}
	num := make([]int32, len(ms))
	var sets, texts []string
	for k, m := range ms {
		num[k] = int32(k + 1)
		sets = append(sets, m.name+": "+m.text)
		texts = append(texts, m.text)
	}
	names, nw := grid.CharRows(namesOf(ms))
	params, pw := grid.CharRows(texts)
	ds.Dims = append(ds.Dims, grid.DimSpec{Name: "member_name_length", Len: nw}, grid.DimSpec{Name: "member_parameters_length", Len: pw})
	ds.Vars = append(ds.Vars,
		grid.VarSpec{Name: dimMember, Dims: []string{dimMember}, Type: grid.Int, Data: num, Attrs: []grid.Attr{
			{Name: "long_name", Value: "ensemble member: one parameter set of the ensemble file"},
			{Name: "parameter_sets", Value: strings.Join(sets, "\n")},
			{Name: "comment", Value: "member k (1-based) was processed with the physics options of the command line overridden by its member_parameters; its full settings are in the global attributes warmrain_member_<k>_parameters"},
		}},
		grid.VarSpec{Name: "member_name", Dims: []string{dimMember, "member_name_length"}, Type: grid.Char, Data: names, Attrs: []grid.Attr{
			{Name: "long_name", Value: "name of the parameter set of the member"}}},
		grid.VarSpec{Name: "member_parameters", Dims: []string{dimMember, "member_parameters_length"}, Type: grid.Char, Data: params, Attrs: []grid.Attr{
			{Name: "long_name", Value: "physics options of the parameter set, as on the command line (over those of the command line)"}}},
	)
	var streamed []*grid.VarInfo
	for i := range info.Vars {
		v := &info.Vars[i]
		spec := grid.VarSpec{Name: v.Name, Dims: v.Dims, Type: v.Type, Attrs: v.Attrs}
		if perMember[v.Name] {
			spec.Dims = append([]string{dimMember}, v.Dims...)
			streamed = append(streamed, v)
			// the member's name labels the values (CF §6.1 labels as auxiliary coordinates)
			spec.Attrs = slices.Clone(v.Attrs)
			coords := "member_name"
			for i, a := range spec.Attrs {
				if a.Name == "coordinates" {
					t, _ := a.Text()
					spec.Attrs = slices.Delete(spec.Attrs, i, i+1)
					coords = strings.TrimSpace(t + " member_name")
					break
				}
			}
			spec.Attrs = append(spec.Attrs, grid.Attr{Name: "coordinates", Value: coords})
		} else {
			data, _, err := readers[0].Read(v.Name, nil, nil)
			if err != nil {
				return err
			}
			spec.Data = data
		}
		ds.Vars = append(ds.Vars, spec)
	}
	for _, a := range info.Globals {
		switch {
		case strings.HasPrefix(a.Name, paramAttrStart), a.Name == attrDigest, a.Name == "history":
			continue
		}
		ds.Globals = append(ds.Globals, a)
	}
	hist := ""
	if a, ok := info.Global("history"); ok {
		hist, _ = a.Text()
	}
	line := fmt.Sprintf("%s: warmrain %s process %s", time.Now().UTC().Format("2006-01-02T15:04:05Z"), Version(), joinArgs(args))
	if i := strings.Index(hist, "\n"); i >= 0 { // the member's own line is replaced, the input's history kept
		line += hist[i:]
	}
	ds.Globals = append(ds.Globals,
		grid.Attr{Name: "history", Value: line},
		grid.Attr{Name: attrDigest, Value: digest},
		grid.Attr{Name: "warmrain_ensemble_file", Value: filepath.Base(path)},
		grid.Attr{Name: "warmrain_ensemble_sha256", Value: fileDigest},
		grid.Attr{Name: "warmrain_ensemble_members", Value: fmt.Sprint(len(ms))})
	for k, m := range ms {
		var s []string
		for _, st := range m.params.Settings() {
			s = append(s, st.Name+"="+paramAttr(st))
		}
		ds.Globals = append(ds.Globals,
			grid.Attr{Name: fmt.Sprintf("warmrain_member_%d_name", k+1), Value: m.name},
			grid.Attr{Name: fmt.Sprintf("warmrain_member_%d_parameters", k+1), Value: strings.Join(s, "; ")})
	}
	w, err := grid.CreateDataset(output, ds, force)
	if err != nil {
		return err
	}
	for _, v := range streamed {
		row := 1
		for _, s := range v.Shape[min(1, len(v.Shape)):] {
			row *= s
		}
		step := 1
		if len(v.Shape) > 0 {
			step = max(1, ensemblePiece/max(1, row))
		}
		for k, r := range readers {
			if mv := r.Info().Var(v.Name); mv == nil || !slices.Equal(mv.Shape, v.Shape) {
				w.Abort()
				return fmt.Errorf("ensemble member %s: variable %s is missing or has another shape than in member %s", ms[k].name, v.Name, ms[0].name)
			}
			outer := 1
			if len(v.Shape) > 0 {
				outer = v.Shape[0]
			}
			for lo := 0; lo < outer; lo += step {
				if ctx.Err() != nil {
					w.Abort()
					return fmt.Errorf("interrupted while writing %s; no output written", output)
				}
				start := make([]int, len(v.Shape))
				count := slices.Clone(v.Shape)
				if len(v.Shape) > 0 {
					start[0], count[0] = lo, min(step, outer-lo)
				}
				data, _, err := r.Read(v.Name, start, count)
				if err != nil {
					w.Abort()
					return err
				}
				if err := w.Put(v.Name, append([]int{k}, start...), append([]int{1}, count...), data); err != nil {
					w.Abort()
					return err
				}
			}
		}
	}
	return w.Commit()
}

func namesOf(ms []ensembleMember) []string {
	n := make([]string, len(ms))
	for k, m := range ms {
		n[k] = m.name
	}
	return n
}
