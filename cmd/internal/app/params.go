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
	f := &physicsFlags{}
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
	for i := range f.opts {
		o := &f.opts[i]
		r := o.rows[0]
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
				return p, usagef("--%s %q: want one of %s", r.Option, o.text, strings.Join(r.Choices, ", "))
			}
			r.Set(&p, float64(k))
		case len(o.rows) > 1:
			parts := strings.Split(o.text, ",")
			if len(parts) != len(o.rows) {
				return p, usagef("--%s %q: want %d comma-separated numbers", r.Option, o.text, len(o.rows))
			}
			for j, s := range parts {
				v, err := strconv.ParseFloat(strings.TrimSpace(s), 64)
				if err != nil {
					return p, usagef("--%s %q: %q is not a number", r.Option, o.text, s)
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
			return p, usagef("--%s must be %s (got %s)", pe.Option, pe.Want, got)
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
