package app

import (
	"strings"
	"testing"

	"github.com/warmrain/warmrain/grid/cflint"
)

// lintTable returns the CF standard name table or skips (fails in CI).
func lintTable(t *testing.T) string {
	t.Helper()
	p, err := cflint.FindTable()
	if err != nil {
		skipOrFailMissing(t, "the CF standard name table ("+err.Error()+")")
	}
	return p
}

// The printed findings are cflint.Check's, one a line, in the documented form.
func TestLintMatchesCflint(t *testing.T) {
	table := lintTable(t)
	bad := ncgenTestdata(t, "lint_bad")
	good := ncgenTestdata(t, "lint_good")
	tab, err := cflint.LoadTable(table)
	if err != nil {
		t.Fatal(err)
	}
	code, out, errs := runCmd("lint", "--table", table, bad, good)
	if code != ExitFailure {
		t.Fatalf("exit %d, want 1 (lint_bad has errors); stderr %q", code, errs)
	}
	var want []string
	for _, f := range []string{bad, good} {
		fs, err := cflint.Check(f, cflint.Options{Table: tab})
		if err != nil {
			t.Fatal(err)
		}
		for _, x := range fs {
			v := x.Var
			if v == "" {
				v = "global"
			}
			want = append(want, f+": "+v+": "+x.Rule+": "+x.Severity.String()+": "+x.Message)
		}
	}
	if got := strings.Split(strings.TrimSuffix(out, "\n"), "\n"); strings.Join(got, "\n") != strings.Join(want, "\n") {
		t.Errorf("lint output:\n%s\nwant:\n%s", out, strings.Join(want, "\n"))
	}
	// lint_bad.cdl: unknown standard name, unparsable units, no Conventions.
	for _, rule := range []string{cflint.RuleStandardName, cflint.RuleUnitsParse, cflint.RuleConventions} {
		if !strings.Contains(out, bad+": ") || !strings.Contains(out, ": "+rule+": error: ") {
			t.Errorf("no %s error in\n%s", rule, out)
		}
	}
	if strings.Contains(out, good+": lwp:") {
		t.Errorf("findings on the good file:\n%s", out)
	}
}

// A clean file passes, also with the project's own rules; --ours makes a
// missing ACDD-1.3 an error.
func TestLintOurs(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	table := lintTable(t)
	good := ncgenTestdata(t, "lint_good")
	for _, args := range [][]string{{"lint", "--table", table, good}, {"lint", "--ours", "--table", table, good}} {
		if code, out, errs := runCmd(args...); code != ExitOK {
			t.Errorf("%v: exit %d\n%s%s", args, code, out, errs)
		}
	}
	// The swath test file has no Conventions: an error with and without --ours.
	sw := ncgenTestdata(t, "inspect_swath")
	code, out, _ := runCmd("lint", "--ours", "--table", table, sw)
	if code != ExitFailure || !strings.Contains(out, ": global: conventions: error:") || !strings.Contains(out, ": global: history: error:") {
		t.Errorf("--ours on a file without Conventions/history: exit %d\n%s", code, out)
	}
	code, out, _ = runCmd("lint", "--table", table, sw)
	if strings.Contains(out, ": global: history:") || code != ExitFailure {
		t.Errorf("without --ours a missing history is no finding: exit %d\n%s", code, out)
	}
}

// Without a table, standard names are not checked and an info line says so.
func TestLintNoTable(t *testing.T) {
	good := ncgenTestdata(t, "lint_good")
	t.Setenv(cflint.EnvTable, t.TempDir()+"/absent.xml")
	code, out, errs := runCmd("lint", good)
	if code != ExitOK || !strings.Contains(out, ": global: "+cflint.RuleNoTable+": info: ") || !strings.Contains(errs, "standard names not checked") {
		t.Errorf("exit %d\nstdout %s\nstderr %s", code, out, errs)
	}
}

func TestLintUsage(t *testing.T) {
	code, out, errs := runCmd("lint", "--help")
	if code != ExitOK || errs != "" || !strings.HasPrefix(out, "Usage:\n  warmrain lint FILE...") || !strings.Contains(out, "Example:") || !strings.Contains(out, "--table") {
		t.Errorf("--help: exit %d stderr %q\n%s", code, errs, out)
	}
	for _, args := range [][]string{{}, {"--nosuch", "x.nc"}} {
		if code, out, errs := runCmd(append([]string{"lint"}, args...)...); code != ExitUsage || out != "" || errs == "" {
			t.Errorf("%v: exit %d stdout %q stderr %q", args, code, out, errs)
		}
	}
	dir := t.TempDir()
	if code, _, errs := runCmd("lint", "--table", dir+"/absent.xml", sampleFile); code != ExitFailure || !strings.Contains(errs, "absent.xml") {
		t.Errorf("absent --table: exit %d stderr %q", code, errs)
	}
	if code, _, errs := runCmd("lint", "--table", lintTable(t), dir+"/absent.nc"); code != ExitFailure || !strings.Contains(errs, "absent.nc") {
		t.Errorf("absent file: exit %d stderr %q", code, errs)
	}
}

// The committed sample passes the CF lint (it is the demo input of the README).
func TestLintSample(t *testing.T) {
	code, out, errs := runCmd("lint", "--table", lintTable(t), sampleFile)
	if code != ExitOK {
		t.Errorf("exit %d\n%s%s", code, out, errs)
	}
}
