package app

import (
	"fmt"
	"io"
	"strings"

	"github.com/warmrain/warmrain/microphys"
)

const paramsUsage = `Usage: warmrain params [--write FILE [--force]] [--params FILE | --params-from OUTPUT.nc] [parameter options]

Prints every physics parameter of process and column: its option, unit,
default, valid range, the range published for it (with sources; "from memory"
marks values recalled without the paper at hand) and the source of the
default. With --params, --params-from or parameter options, the values shown
are those a run with the same options would use.

--write FILE writes the values as a commented parameter file (TOML) to start a
study from; an existing file is kept unless --force is given. Use it with
process --params FILE (options on the command line override it). To start
from a run a colleague made: warmrain params --params-from THEIR_OUTPUT.nc
--write study.toml.

Example:
  warmrain params
  warmrain params --write study.toml
  warmrain params --params-from /tmp/demo_warmrain.nc --write reproduced.toml
`

func runParams(e *env, args []string) error {
	fs := newFlagSet(e, "params", paramsUsage)
	write := fs.String("write", "", "write the parameters as a commented parameter file `FILE` (- for stdout)")
	force := fs.Bool("force", false, "replace an existing FILE of --write")
	pf := addPhysicsFlags(fs)
	if err := parseFlags(e, fs, paramsUsage, args); err != nil {
		return err
	}
	if fs.NArg() > 0 {
		return usagef("unexpected argument %q: params takes options only", fs.Arg(0))
	}
	p, err := pf.toParams()
	if err != nil {
		return err
	}
	for _, n := range pf.notes {
		fmt.Fprintf(e.stderr, "warmrain: note: %s\n", n)
	}
	from := "the defaults"
	switch {
	case pf.file != "":
		from = "from " + pf.file
	case pf.from != "":
		from = "from the provenance of " + pf.from
	}
	if anyParamChanged(pf) {
		from += " and the command-line options"
	}
	if *write == "" {
		if *force {
			return usagef("--force goes with --write FILE")
		}
		return writeParamList(e.stdout, p)
	}
	if *write == "-" {
		return writeParamText(e.stdout, p, from)
	}
	if err := writeNewFile(*write, *force, func(w io.Writer) error { return writeParamText(w, p, from) }); err != nil {
		return fmt.Errorf("--write: %w", err)
	}
	fmt.Fprintf(e.stderr, "warmrain: wrote %s (%d parameters, %s); use it with: warmrain process INPUT... -o OUT --params %s\n", *write, len(optionGroups()), from, *write)
	return nil
}

// anyParamChanged reports whether a physics option was given on the command line.
func anyParamChanged(pf *physicsFlags) bool {
	for _, o := range pf.opts {
		if _, fromFile := pf.origin[o.rows[0].Option]; pf.fs.Changed(o.rows[0].Option) && !fromFile {
			return true
		}
	}
	return false
}

// paramValueText is an option's value in p as users read it ("14 um", "4,30 um").
func paramValueText(rows []*microphys.ParamDecl, p *microphys.Params) string {
	s := make([]string, len(rows))
	for i, r := range rows {
		s[i] = r.Text(r.FromSI(r.Get(p)))
	}
	v := strings.Join(s, ",")
	if u := rows[0].Unit; u != "" && u != "1" {
		v += " " + u
	}
	return v
}

// writeParamList prints every parameter with its value, unit, default, valid range,
// published range and source.
func writeParamList(w io.Writer, p microphys.Params) error {
	d := microphys.DefaultParams()
	var b strings.Builder
	for i, rows := range optionGroups() {
		r := rows[0]
		if i > 0 {
			b.WriteString("\n")
		}
		val, def := paramValueText(rows, &p), paramValueText(rows, &d)
		fmt.Fprintf(&b, "--%s %s", r.Option, val)
		if val != def {
			fmt.Fprintf(&b, " (default %s)", def)
		}
		b.WriteString("\n")
		b.WriteString(commentWrap(paramHelp(rows), "    ", 96))
		unit := r.Unit
		switch {
		case r.Kind != microphys.ParamNumber:
			unit = "none"
		case unit == "1":
			unit = "1 (a pure number)"
		}
		valid := "; valid: " + validText(rows)
		if r.Kind == microphys.ParamChoice {
			valid = "" // the help lists the names
		}
		b.WriteString(commentWrap("unit: "+unit+"; default: "+def+valid, "    ", 96))
		lit := r.Literature
		if lit == "" {
			lit = "none (a choice, a switch, a numerical setting or a screening threshold)"
		}
		b.WriteString(commentWrap("published: "+lit, "    ", 96))
		b.WriteString(commentWrap("source: "+r.Source, "    ", 96))
		if r.Spread > 0 {
			b.WriteString(commentWrap(fmt.Sprintf("spread (one standard deviation, for --parameter-uncertainty): %s; %s", spreadText(r), r.SpreadSource), "    ", 96))
		}
	}
	_, err := io.WriteString(w, b.String())
	return err
}

// spreadText is a row's spread in its unit ("1 um", or "0.1" for a pure number).
func spreadText(r *microphys.ParamDecl) string {
	if r.Unit == "" || r.Unit == "1" {
		return fmtNum(r.Spread)
	}
	return fmtNum(r.Spread) + " " + r.Unit
}
