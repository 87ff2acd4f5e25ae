// Package app holds the logic of the warmrain command. Run is re-entrant: it
// keeps no package-level state, builds its own flag sets, writes data to
// stdout and messages to stderr, and returns the exit code.
package app

import (
	"errors"
	"fmt"
	"io"
	"os"
	"runtime/debug"
	"strings"

	"github.com/spf13/pflag"
)

// Exit codes.
const (
	ExitOK      = 0 // success
	ExitFailure = 1 // a runtime failure (bad input file, I/O error, a failed file in a batch)
	ExitUsage   = 2 // bad usage: unknown subcommand or option, conflicting options
)

// usageError marks an error as a usage problem (exit code 2).
type usageError struct{ err error }

func (u usageError) Error() string { return u.err.Error() }
func (u usageError) Unwrap() error { return u.err }

func usagef(format string, a ...any) error { return usageError{fmt.Errorf(format, a...)} }

type subcommand struct {
	name    string
	summary string
	run     func(env *env, args []string) error
}

// env is what every subcommand gets: its streams and its own name.
type env struct {
	stdout, stderr io.Writer
	prog           string
}

func subcommands() []subcommand {
	return []subcommand{
		{"process", "compute the warm-rain diagnostics of input files into output files", runProcess},
		{"inspect", "show what warmrain finds in an input file and what it can compute", runInspect},
		{"column", "run the physics of one column, given on the command line or taken from an input file", runColumn},
		{"demo", "build the sample scenario, process it, and print where the results are", runDemo},
		{"summary", "bin, map and plot processed files (drizzle probability, susceptibility)", runSummary},
		{"params", "list the physics parameters, or write them as a parameter file to start a study", runParams},
		{"lint", "check a NetCDF file against the CF rules warmrain follows", runLint},
		{"version", "print the version of warmrain and of the libraries it uses", runVersion},
	}
}

// Run executes the warmrain command line args (without the program name).
func Run(args []string, stdout, stderr io.Writer) int {
	e := &env{stdout: stdout, stderr: stderr, prog: "warmrain"}
	if len(args) == 0 {
		mainUsage(stderr)
		return ExitUsage
	}
	name := args[0]
	switch name {
	case "-h", "--help", "help":
		if len(args) > 1 && name == "help" {
			return Run([]string{args[1], "--help"}, stdout, stderr)
		}
		mainUsage(stdout)
		return ExitOK
	case "--version", "-V":
		name = "version"
	}
	for _, sc := range subcommands() {
		if sc.name != name {
			continue
		}
		err := sc.run(e, args[1:])
		return exitCode(e, sc.name, err)
	}
	fmt.Fprintf(stderr, "warmrain: unknown command %q\n", name)
	mainUsage(stderr)
	return ExitUsage
}

func exitCode(e *env, sub string, err error) int {
	if err == nil || errors.Is(err, pflag.ErrHelp) {
		return ExitOK
	}
	var ue usageError
	if errors.As(err, &ue) {
		fmt.Fprintf(e.stderr, "warmrain %s: %v\n", sub, err)
		fmt.Fprintf(e.stderr, "Run 'warmrain %s --help' for usage.\n", sub)
		return ExitUsage
	}
	if errors.As(err, new(silentFailure)) {
		return ExitFailure
	}
	var fe failedFiles
	if errors.As(err, &fe) {
		fmt.Fprintf(e.stderr, "warmrain %s: %v\n", sub, err)
		return ExitFailure
	}
	fmt.Fprintf(e.stderr, "warmrain %s: %v\n", sub, err)
	return ExitFailure
}

// silentFailure is a failure already reported (exit 1, nothing printed).
type silentFailure struct{}

func (silentFailure) Error() string { return "failed" }

// failedFiles reports that some files of a batch failed (the others were done).
type failedFiles struct{ failed, total int }

func (f failedFiles) Error() string {
	return fmt.Sprintf("%d of %d files failed (see the messages above and the manifest)", f.failed, f.total)
}

func mainUsage(w io.Writer) {
	fmt.Fprintf(w, `warmrain maps how efficiently warm rain forms, column by column, in gridded
cloud retrievals (liquid water path and cloud-top effective radius).

Usage:
  warmrain <command> [options] [arguments]

Commands:
`)
	for _, sc := range subcommands() {
		fmt.Fprintf(w, "  %-9s %s\n", sc.name, sc.summary)
	}
	fmt.Fprintf(w, `
Run 'warmrain <command> --help' for the options of a command.
Exit codes: 0 success, 1 failure, 2 bad usage.
Results are research diagnostics, not for operational forecasting or flight-safety decisions.
`)
}

// newFlagSet returns a flag set for a subcommand with our conventions:
// errors returned, not printed by pflag; declaration order kept in help.
func newFlagSet(e *env, name, usage string) *pflag.FlagSet {
	fs := pflag.NewFlagSet("warmrain "+name, pflag.ContinueOnError)
	fs.SortFlags = false
	fs.SetOutput(io.Discard)
	fs.Usage = func() {}
	fs.SetInterspersed(true)
	_ = usage
	return fs
}

// parseFlags parses args; --help prints the usage to stdout and returns ErrHelp.
func parseFlags(e *env, fs *pflag.FlagSet, usage string, args []string) error {
	err := fs.Parse(args)
	if errors.Is(err, pflag.ErrHelp) {
		fmt.Fprint(e.stdout, usage)
		if opts := fs.FlagUsagesWrapped(100); opts != "" {
			fmt.Fprintln(e.stdout, "\nOptions:")
			fmt.Fprint(e.stdout, opts)
		}
		return pflag.ErrHelp
	}
	if err != nil {
		return usageError{err}
	}
	return nil
}

// Version returns the module version of warmrain from the build information.
func Version() string {
	bi, ok := debug.ReadBuildInfo()
	if !ok {
		return "(unknown)"
	}
	v := bi.Main.Version
	if v == "" || v == "(devel)" {
		v = "devel"
		var rev, dirty string
		for _, s := range bi.Settings {
			switch s.Key {
			case "vcs.revision":
				rev = s.Value
			case "vcs.modified":
				if s.Value == "true" {
					dirty = "-dirty"
				}
			}
		}
		if len(rev) > 12 {
			rev = rev[:12]
		}
		if rev != "" {
			v += "+" + rev + dirty
		}
	}
	return v
}

// isTerminal reports whether w is a character device (a terminal).
func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	if !ok {
		return false
	}
	st, err := f.Stat()
	if err != nil {
		return false
	}
	return st.Mode()&os.ModeCharDevice != 0
}

// joinArgs quotes args for the history attribute.
func joinArgs(args []string) string {
	q := make([]string, len(args))
	for i, a := range args {
		if a == "" || strings.ContainsAny(a, " \t\n'\"\\$*?") {
			q[i] = "'" + strings.ReplaceAll(a, "'", `'\''`) + "'"
		} else {
			q[i] = a
		}
	}
	return strings.Join(q, " ")
}
