package app

import (
	"fmt"
	"os"
	"path/filepath"

	"github.com/warmrain/warmrain/samples"
)

const demoUsage = `Usage: warmrain demo [--dir DIR]

Builds the sample scenario (a synthetic subtropical marine stratocumulus
region over three days: a closed-cell deck, a drizzling pocket of open cells
and a narrow line of polluted cloud; invented data, for the demo only),
processes it with the default parameters, summarises it (with 200 tile-bootstrap
replicates, so the susceptibilities get 95% intervals), draws quick-look maps and
curves, and prints where the results are.

Example:
  warmrain demo --dir demo-output
`

func runDemo(e *env, args []string) error {
	fs := newFlagSet(e, "demo", demoUsage)
	dir := fs.String("dir", "demo-output", "folder for the demo's files (created; files in it are replaced)")
	if err := parseFlags(e, fs, demoUsage, args); err != nil {
		return err
	}
	if fs.NArg() > 0 {
		return usagef("demo takes no arguments")
	}
	if err := os.MkdirAll(filepath.Join(*dir, "plots"), 0o755); err != nil {
		return fmt.Errorf("demo folder: %w", err)
	}
	input := filepath.Join(*dir, "stratocumulus_demo.nc")
	output := filepath.Join(*dir, "stratocumulus_demo_warmrain.nc")
	sum := filepath.Join(*dir, "stratocumulus_demo_summary.nc")
	plots := filepath.Join(*dir, "plots")
	fmt.Fprintf(e.stderr, "warmrain demo: generating the sample scenario into %s\n", input)
	if err := samples.Generate(input, samples.DefaultConfig()); err != nil {
		return err
	}
	if err := runProcess(e, []string{input, "-o", output, "--force"}); err != nil {
		return err
	}
	table := filepath.Join(*dir, "summary.txt")
	f, err := os.Create(table)
	if err != nil {
		return err
	}
	se := &env{stdout: f, stderr: e.stderr, prog: e.prog}
	err = runSummary(se, []string{output, "-o", sum, "--plots", plots, "--force", "--bootstrap", "200"})
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		return err
	}
	fmt.Fprintf(e.stdout, "input (synthetic scenario): %s\n", input)
	fmt.Fprintf(e.stdout, "diagnostics:                %s\n", output)
	fmt.Fprintf(e.stdout, "summary file:               %s\n", sum)
	fmt.Fprintf(e.stdout, "summary table:              %s\n", table)
	fmt.Fprintf(e.stdout, "pictures:                   %s\n", plots)
	return nil
}
