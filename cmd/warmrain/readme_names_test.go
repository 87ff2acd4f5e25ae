package main

import (
	"go/ast"
	"go/parser"
	"go/token"
	"io/fs"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/grid/cflint"
	"github.com/warmrain/warmrain/microphys"
)

// readmeFormerNames are names the README mentions as no longer used; each must not be a
// current declaration.
var readmeFormerNames = map[string]string{
	"warm_rain_efficiency": "the former name of autoconversion_efficiency",
}

// readmeOutsideNames are names from outside warmrain's files and code that the README
// mentions (library functions of the test tools).
var readmeOutsideNames = map[string]string{
	"solve_ivp":    "scipy.integrate function used by the cross-check tests",
	"station_name": "a variable of the station file in the README's example of sites",
}

// snakeSpan is a code span that reads as a variable, attribute or flag name.
var snakeSpan = regexp.MustCompile("`([a-z][a-z0-9]*_[a-z0-9_]+)`")

// TestReadmeNamesDeclared: every variable, QC-flag and attribute name the README writes in a
// code span (outside code blocks) exists: as a QC word (microphys/qc.go, complete.go), an
// output (microphys.OutputDecls), a parameter attribute (ParamDecls), a name of an input role
// (grid.Roles), a CF standard name (table v83), or a name the code writes or reads (a string
// of a non-test Go file). A README that names a QC bit or output the files do not have fails.
func TestReadmeNamesDeclared(t *testing.T) {
	readme, err := os.ReadFile(filepath.Join("..", "..", "README.md"))
	if err != nil {
		t.Fatal(err)
	}
	text := regexp.MustCompile("(?s)```.*?```").ReplaceAllString(string(readme), "")
	known := map[string]string{}
	for _, f := range microphys.QCFlags {
		known[f.Name] = "QC flag"
	}
	for _, f := range microphys.InputQCFlags {
		known[f.Name] = "input QC flag"
	}
	known[microphys.QCOutputName] = "QC variable"
	for _, d := range microphys.OutputDecls {
		known[d.Name] = "output"
	}
	for name, why := range readmeFormerNames {
		if k, ok := known[name]; ok {
			t.Errorf("%s is listed as former (%s) but is a current %s", name, why, k)
		}
	}
	for _, d := range microphys.ParamDecls {
		known[d.Name] = "parameter (attribute warmrain_parameter_" + d.Name + ")"
	}
	for _, r := range grid.RoleRules {
		for _, l := range [][]string{r.StandardNames, r.CommonNames, r.LowerNames, r.GenericNames} {
			for _, n := range l {
				known[strings.ToLower(n)] = "input role name"
			}
		}
	}
	code, suffixes := codeWords(t, filepath.Join("..", ".."))
	var table *cflint.Table
	if p, err := cflint.FindTable(); err == nil {
		table, _ = cflint.LoadTable(p)
	}
	if table == nil && os.Getenv("CI") == "true" {
		t.Fatal("CF standard-name table needed in CI ($WARMRAIN_CF_TABLE)")
	}
	seen := map[string]bool{}
	checked := 0
	for _, m := range snakeSpan.FindAllStringSubmatch(text, -1) {
		n := m[1]
		if seen[n] {
			continue
		}
		seen[n] = true
		checked++
		if _, ok := known[n]; ok {
			continue
		}
		if _, ok := readmeFormerNames[n]; ok {
			continue
		}
		if _, ok := readmeOutsideNames[n]; ok {
			continue
		}
		if table != nil {
			if _, ok := table.Lookup(n); ok {
				continue
			}
		}
		if code[n] || composed(n, code, known, suffixes) {
			continue
		}
		t.Errorf("README names `%s`, which is no QC flag, output, parameter attribute, input name, CF standard name or name in the code", n)
	}
	if checked < 40 {
		t.Fatalf("only %d names found in README code spans; the extraction is broken", checked)
	}
	// Every declared QC word and output is in the README (its generated tables).
	for n, k := range known {
		if (strings.Contains(k, "QC") || k == "output") && !seen[n] {
			t.Errorf("%s %s is not in the README", k, n)
		}
	}
}

// composed reports whether n is a name the code builds from a name and a suffix literal
// ("_lower_limit" after a statistic's name).
func composed(n string, code map[string]bool, known map[string]string, suffixes map[string]bool) bool {
	for s := range suffixes {
		if p, ok := strings.CutSuffix(n, s); ok && p != "" {
			if _, k := known[p]; k || code[p] {
				return true
			}
		}
	}
	return false
}

// codeWords returns the identifier-like words of the string literals (and struct tags) of
// the repository's non-test Go files: the names the code writes or reads; and the
// suffixes the code appends to names (literals that start with "_", such as "_count").
func codeWords(t *testing.T, root string) (map[string]bool, map[string]bool) {
	t.Helper()
	words := map[string]bool{}
	suffixes := map[string]bool{}
	suffix := regexp.MustCompile(`^_[a-z0-9_]*[a-z0-9]`)
	word := regexp.MustCompile(`[A-Za-z][A-Za-z0-9_]*`)
	fset := token.NewFileSet()
	err := filepath.WalkDir(root, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if d.IsDir() {
			if n := d.Name(); n != "." && n != ".." && (strings.HasPrefix(n, ".") || n == "testdata") {
				return filepath.SkipDir
			}
			return nil
		}
		if !strings.HasSuffix(p, ".go") || strings.HasSuffix(p, "_test.go") {
			return nil
		}
		f, err := parser.ParseFile(fset, p, nil, 0)
		if err != nil {
			return err
		}
		ast.Inspect(f, func(n ast.Node) bool {
			if l, ok := n.(*ast.BasicLit); ok && l.Kind == token.STRING {
				s, err := strconv.Unquote(l.Value)
				if err != nil {
					s = l.Value
				}
				for _, w := range word.FindAllString(s, -1) {
					words[strings.ToLower(w)] = true
				}
				if m := suffix.FindString(s); m != "" {
					suffixes[m] = true
				}
			}
			return true
		})
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return words, suffixes
}
