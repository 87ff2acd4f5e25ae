package app

import (
	"errors"
	"fmt"
	"os"

	"github.com/warmrain/warmrain/grid/cflint"
)

const lintUsage = `Usage:
  warmrain lint FILE... [--ours] [--table PATH]

Checks the CF metadata of netCDF files (standard names and canonical units,
units strings, attribute types, flags, referenced variables, bounds, time
units, Conventions and history) and prints one finding a line:

  FILE: VARIABLE: RULE: SEVERITY: MESSAGE

(VARIABLE is "global" for global attributes; SEVERITY is error, warning or
info). Standard names are checked against the CF standard name table (XML,
gzipped or not; download it from the CF conventions site, cfconventions.org):
--table, else $WARMRAIN_CF_TABLE; without a table they are not checked and an info line says so. --ours applies
the rules for warmrain's own outputs (Conventions must also name ACDD-1.3;
history lines must start with a UTC time).

Exit status: 0 when no finding is an error, 1 when some finding is an error or
a file cannot be read, 2 for bad usage.

Example:
  warmrain lint samples/data/stratocumulus_demo.nc
  warmrain lint --ours --table cf-standard-name-table.xml results/*.nc
`

// lintFailed reports error-severity findings (exit code 1).
type lintFailed struct{ errs, files int }

func (l lintFailed) Error() string {
	return fmt.Sprintf("%d error findings or unreadable files in %d files", l.errs, l.files)
}

func runLint(e *env, args []string) error {
	fs := newFlagSet(e, "lint", lintUsage)
	ours := fs.Bool("ours", false, "apply the rules for warmrain's own outputs (ACDD-1.3 in Conventions, UTC-stamped history)")
	table := fs.String("table", "", "CF standard name table XML (.xml or .xml.gz); default $"+cflint.EnvTable+" or the project's copy")
	if err := parseFlags(e, fs, lintUsage, args); err != nil {
		return err
	}
	if fs.NArg() == 0 {
		return usagef("no file given")
	}
	opt := cflint.Options{Ours: *ours}
	path := *table
	if path == "" {
		p, err := cflint.FindTable()
		if err != nil && !errors.Is(err, cflint.ErrNoTable) {
			return err
		}
		if err != nil {
			fmt.Fprintf(e.stderr, "warmrain lint: %v; standard names not checked\n", err)
		}
		path = p
	} else if _, err := os.Stat(path); err != nil {
		return fmt.Errorf("--table: %w", err)
	}
	if path != "" {
		t, err := cflint.LoadTable(path)
		if err != nil {
			return fmt.Errorf("--table %s: %w", path, err)
		}
		opt.Table = t
	}
	bad := 0
	for _, f := range fs.Args() {
		findings, err := cflint.Check(f, opt)
		if err != nil {
			fmt.Fprintf(e.stderr, "warmrain lint: %s: %v\n", f, err)
			bad++
			continue
		}
		for _, x := range findings {
			where := x.Var
			if where == "" {
				where = "global"
			}
			fmt.Fprintf(e.stdout, "%s: %s: %s: %s: %s\n", f, where, x.Rule, x.Severity, x.Message)
		}
		bad += len(cflint.Errors(findings))
	}
	if bad > 0 {
		return lintFailed{bad, fs.NArg()}
	}
	return nil
}
