package app

import (
	"errors"
	"fmt"
	"strconv"
	"strings"

	"github.com/spf13/pflag"
	"github.com/warmrain/warmrain/microphys"
)

// physicsFlags are the physics and screening options shared by process and column,
// generated from microphys.ParamDecls: one option per distinct ParamDecl.Option, in the
// units users type; toParams converts them to SI once through the same rows.
type physicsFlags struct {
	opts []paramOption
	fs   *pflag.FlagSet
	// file and from are --params FILE and --params-from OUTPUT.nc: values of the options
	// not given on the command line (paramfile.go).
	file, from string
	origin     map[string]string // option -> where its value came from, when not the command line
	notes      []string          // what the messages of the command should say about --params-from
}

// paramOption is one command-line option and the rows of microphys.ParamDecls it sets
// (several for a comma-separated option such as --re-range).
type paramOption struct {
	rows []*microphys.ParamDecl
	num  float64 // a single ParamNumber
	text string  // a choice, or several numbers as a,b,...
	on   bool    // a switch
}

// optionGroups groups consecutive rows of microphys.ParamDecls by option.
func optionGroups() [][]*microphys.ParamDecl {
	var g [][]*microphys.ParamDecl
	for i := range microphys.ParamDecls {
		d := &microphys.ParamDecls[i]
		if n := len(g); n > 0 && g[n-1][0].Option == d.Option {
			g[n-1] = append(g[n-1], d)
			continue
		}
		g = append(g, []*microphys.ParamDecl{d})
	}
	return g
}

// paramHelp is the help line of an option: the row's help, the choices or the unit.
func paramHelp(rows []*microphys.ParamDecl) string {
	d := rows[0]
	h := d.Help
	switch {
	case d.Kind == microphys.ParamChoice:
		h += ": " + strings.Join(d.Choices, ", ")
	case d.Unit == "um":
		h += ", µm"
	case d.Unit != "" && d.Unit != "1":
		h += ", " + d.Unit
	}
	return h
}

// paramDefault is the default of an option as the user types it.
func paramDefault(rows []*microphys.ParamDecl) string {
	d := microphys.DefaultParams()
	parts := make([]string, len(rows))
	for i, r := range rows {
		parts[i] = r.Text(r.FromSI(r.Get(&d)))
	}
	return strings.Join(parts, ",")
}

func addPhysicsFlags(fs *pflag.FlagSet) *physicsFlags {
	d := microphys.DefaultParams()
	f := &physicsFlags{fs: fs}
	fs.StringVar(&f.file, "params", "", "read the physics parameters from `FILE` (TOML; keys and units as the options; warmrain params --write FILE starts one); options given here override it")
	fs.StringVar(&f.from, "params-from", "", "take every physics parameter from `OUTPUT.nc`, an output warmrain wrote, to reproduce that run; options given here override it")
	for _, rows := range optionGroups() {
		f.opts = append(f.opts, paramOption{rows: rows})
	}
	for i := range f.opts {
		o := &f.opts[i]
		r := o.rows[0]
		switch {
		case r.Kind == microphys.ParamSwitch:
			fs.BoolVar(&o.on, r.Option, r.Get(&d) != 0, paramHelp(o.rows))
		case r.Kind == microphys.ParamChoice || len(o.rows) > 1:
			fs.StringVar(&o.text, r.Option, paramDefault(o.rows), paramHelp(o.rows))
		default:
			fs.Float64Var(&o.num, r.Option, r.FromSI(r.Get(&d)), paramHelp(o.rows))
		}
	}
	return f
}

// setDefault changes the default of one physics option for this command (column integrates
// the collector directly by default); the help shows the new default.
func (f *physicsFlags) setDefault(fs *pflag.FlagSet, option, value string) {
	fl := fs.Lookup(option)
	if fl == nil {
		panic("app: no option --" + option)
	}
	if err := fl.Value.Set(value); err != nil {
		panic("app: default of --" + option + ": " + err.Error())
	}
	fl.DefValue = value
}

// toParams converts the options to SI parameters and validates them; errors name the
// option and its range in the unit users type.
func (f *physicsFlags) toParams() (microphys.Params, error) {
	p := microphys.DefaultParams()
	if err := f.load(); err != nil {
		return p, err
	}
	for i := range f.opts {
		o := &f.opts[i]
		r := o.rows[0]
		opt := "--" + r.Option
		if w, ok := f.origin[r.Option]; ok {
			opt = w + ": " + r.Option
		}
		switch {
		case r.Kind == microphys.ParamSwitch:
			r.Set(&p, map[bool]float64{false: 0, true: 1}[o.on])
		case r.Kind == microphys.ParamChoice:
			k := -1
			for j, c := range r.Choices {
				if c == o.text {
					k = j
				}
			}
			if k < 0 {
				return p, usagef("%s %q: want one of %s", opt, o.text, strings.Join(r.Choices, ", "))
			}
			r.Set(&p, float64(k))
		case len(o.rows) > 1:
			parts := strings.Split(o.text, ",")
			if len(parts) != len(o.rows) {
				return p, usagef("%s %q: want %d comma-separated numbers", opt, o.text, len(o.rows))
			}
			for j, s := range parts {
				v, err := strconv.ParseFloat(strings.TrimSpace(s), 64)
				if err != nil {
					return p, usagef("%s %q: %q is not a number", opt, o.text, s)
				}
				o.rows[j].Set(&p, o.rows[j].ToSI(v))
			}
		default:
			r.Set(&p, r.ToSI(o.num))
		}
	}
	if err := p.Validate(); err != nil {
		var pe *microphys.ParamError
		if errors.As(err, &pe) {
			got := strconv.FormatFloat(pe.Value, 'g', -1, 64)
			for _, d := range microphys.ParamDecls {
				switch {
				case d.Name != pe.Field:
				case d.Kind == microphys.ParamSwitch:
					return p, usagef("%v", pe)
				case d.Unit != "" && d.Unit != "1":
					got += " " + d.Unit
				}
			}
			opt := "--" + pe.Option
			if w, ok := f.origin[pe.Option]; ok {
				opt = w + ": " + pe.Option
			}
			return p, usagef("%s must be %s (got %s)", opt, pe.Want, got)
		}
		return p, usagef("%v", err)
	}
	return p, nil
}

// paramAttr is the provenance attribute text of one setting: its value and unit.
func paramAttr(s microphys.Setting) string {
	if s.Unit == "" || s.Unit == "1" {
		return s.Value
	}
	return s.Value + " " + s.Unit
}

// physicsWarnings returns the messages that parameters p deserve on stderr: a steady
// updraft that carries the collector up through the cloud first is a cumulus picture, and in
// stratocumulus columns 0.5 m s-1 or more carries it out through cloud top.
func physicsWarnings(p microphys.Params) []string {
	var w []string
	if p.EnableCollector && p.Collector.Updraft > 0 {
		w = append(w, fmt.Sprintf("--updraft %g m s-1: a steady updraft is a cumulus picture; in stratocumulus columns an updraft of 0.5 m s-1 or more carries the collector out through cloud top (flag collector_exit_top). Use 0 (the default) for stratocumulus", p.Collector.Updraft))
	}
	return w
}

// load sets the options not given on the command line from --params or --params-from.
func (f *physicsFlags) load() error {
	if f.fs == nil || (f.file == "" && f.from == "") {
		return nil
	}
	if f.file != "" && f.from != "" {
		return usagef("--params and --params-from cannot be combined: take the parameters of one study (options given on the command line override either)")
	}
	var vals map[string]paramValue
	var err error
	if f.file != "" {
		vals, err = readParamFile(f.file, f.fs)
	} else {
		vals, f.notes, err = readParamsFrom(f.from, f.fs.Changed)
	}
	if err != nil {
		return err
	}
	f.origin = map[string]string{}
	for name, v := range vals {
		if f.fs.Changed(name) {
			continue // the command line wins
		}
		if err := f.fs.Set(name, v.text); err != nil {
			return usagef("%s: %s %q: %v", v.origin, name, v.text, err)
		}
		f.origin[name] = v.origin
	}
	return nil
}
