package app

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"github.com/warmrain/warmrain/samples"
)

const demoUsage = `Usage: warmrain demo [--dir DIR]

Builds the sample scenario (a synthetic subtropical marine stratocumulus
region over three days: a closed-cell deck, a drizzling pocket of open cells
and a narrow line of polluted cloud; invented data, for the demo only),
processes it with the default parameters, summarises it (with 200 tile-bootstrap
replicates, so the susceptibilities get 95% intervals), draws quick-look maps and
curves; then samples two level-2-like swaths (granules on different pixel grids)
from the scenario, processes them and writes a gridded summary of both on a
0.25-degree grid with its maps; and prints where the results are.

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
	// Two swaths on different pixel grids: one gridded summary.
	var swaths []string
	for _, sc := range samples.DemoSwaths() {
		in := filepath.Join(*dir, sc.Name+".nc")
		out := filepath.Join(*dir, sc.Name+"_warmrain.nc")
		if err := samples.GenerateSwath(in, samples.DefaultConfig(), sc); err != nil {
			return err
		}
		if err := runProcess(e, []string{in, "-o", out, "--force"}); err != nil {
			return err
		}
		swaths = append(swaths, out)
	}
	gridSum := filepath.Join(*dir, "swaths_gridded_summary.nc")
	gridPlots := filepath.Join(*dir, "plots_gridded")
	gridTable := filepath.Join(*dir, "swaths_summary.txt")
	g, err := os.Create(gridTable)
	if err != nil {
		return err
	}
	ge := &env{stdout: g, stderr: e.stderr, prog: e.prog}
	err = runSummary(ge, append(swaths, "--grid", "0.25", "-o", gridSum, "--plots", gridPlots, "--force", "--min-count", "20"))
	if cerr := g.Close(); err == nil {
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
	fmt.Fprintf(e.stdout, "swaths (synthetic):         %s\n", strings.Join(swaths, ", "))
	fmt.Fprintf(e.stdout, "gridded summary of both:    %s (table %s, pictures %s)\n", gridSum, gridTable, gridPlots)
	return nil
}
