package main

import (
	"fmt"
	"os"
	"regexp"
	"strings"
	"testing"

	"github.com/warmrain/warmrain/microphys"
)

// citeKey matches a citation key of microphys/references.go, e.g. [RosenfeldGutman1994].
var citeKey = regexp.MustCompile(`\[([A-Z][A-Za-z]*?)(\d{4})\]`)

// institutions are the citation keys of microphys/references.go whose "authors" are a
// document's name, not people's.
var institutions = map[string]string{
	"CFStdNames": "CF standard-name table",
	"USStdAtm":   "U.S. Standard Atmosphere",
}

// readable turns citation keys into author-year text: [RosenfeldGutman1994] ->
// Rosenfeld & Gutman (1994).
func readable(s string) string {
	return citeKey.ReplaceAllStringFunc(s, func(k string) string {
		m := citeKey.FindStringSubmatch(k)
		if name, ok := institutions[m[1]]; ok {
			return name + " (" + m[2] + ")"
		}
		names := regexp.MustCompile(`[A-Z][a-z]+`).FindAllString(m[1], -1)
		return strings.Join(names, " & ") + " (" + m[2] + ")"
	})
}

// mdText keeps a placeholder such as <name> visible in Markdown, where it would
// be read as an HTML tag.
func mdText(s string) string {
	return strings.NewReplacer("<", "&lt;", ">", "&gt;").Replace(s)
}

// paramTable is README's parameter table, one row per option of microphys.ParamDecls.
func paramTable() string {
	var b strings.Builder
	b.WriteString("| option | default | unit | valid | meaning | source | published range |\n|---|---|---|---|---|---|---|\n")
	d := microphys.DefaultParams()
	for i := 0; i < len(microphys.ParamDecls); {
		r := &microphys.ParamDecls[i]
		var defs, valid []string
		for ; i < len(microphys.ParamDecls) && microphys.ParamDecls[i].Option == r.Option; i++ {
			x := &microphys.ParamDecls[i]
			defs = append(defs, x.Text(x.FromSI(x.Get(&d))))
			switch x.Kind {
			case microphys.ParamNumber:
				v := x.RangeText()
				if x.Unit != "1" {
					v = strings.TrimSuffix(v, " "+x.Unit)
				}
				valid = append(valid, v)
			case microphys.ParamChoice:
				valid = append(valid, "`"+strings.Join(x.Choices, "`, `")+"`")
			}
		}
		def := strings.Join(defs, ",")
		if r.Kind == microphys.ParamChoice {
			def = "`" + def + "`"
		}
		unit := r.Unit
		if unit == "um" {
			unit = "µm"
		}
		fmt.Fprintf(&b, "| `--%s` | %s | %s | %s | %s | %s | %s |\n", r.Option, def, unit, strings.Join(valid, "; "), mdText(r.Help), readable(r.Source), readable(r.Literature))
	}
	return b.String()
}

// spreadTable is README's table of the parameter spreads (ParamDecl.Spread) that
// --parameter-uncertainty perturbs.
func spreadTable() string {
	var b strings.Builder
	b.WriteString("| parameter | default | spread (1 sigma) | source of the spread |\n|---|---|---|---|\n")
	d := microphys.DefaultParams()
	for i := range microphys.ParamDecls {
		r := &microphys.ParamDecls[i]
		if r.Spread <= 0 {
			continue
		}
		unit := r.Unit
		switch unit {
		case "1":
			unit = ""
		case "um":
			unit = " µm"
		default:
			unit = " " + unit
		}
		fmt.Fprintf(&b, "| `%s` | %s%s | %s%s | %s |\n", r.Name, r.Text(r.FromSI(r.Get(&d))), unit, r.Text(r.Spread), unit, readable(r.SpreadSource))
	}
	return b.String()
}

// outputTable is README's output table, one row per microphys.OutputDecls plus the QC flags.
func outputTable() string {
	var b strings.Builder
	b.WriteString("| variable | units | meaning | needs |\n|---|---|---|---|\n")
	for _, o := range microphys.OutputDecls {
		needs := ""
		switch {
		case o.Evaporation:
			needs = "collector and evaporation"
		case o.Collector:
			needs = "collector"
		}
		unit := o.Units
		if unit == "um" {
			unit = "µm"
		}
		fmt.Fprintf(&b, "| `%s` | %s | %s | %s |\n", o.Name, unit, o.LongName, needs)
	}
	fmt.Fprintf(&b, "| `%s` | flags | bit mask with `flag_masks`/`flag_meanings`, see below | |\n", microphys.QCOutputName)
	return b.String()
}

// qcTable is README's table of QC bits from microphys.QCFlags and microphys.InputQCFlags.
func qcTable() string {
	var b strings.Builder
	b.WriteString("| bit | word in `flag_meanings` | screens the column | meaning |\n|---|---|---|---|\n")
	for _, f := range microphys.QCFlags {
		s := "no"
		if f.Screen {
			s = "yes"
		}
		fmt.Fprintf(&b, "| %d | `%s` | %s | %s |\n", f.Bit, f.Name, s, f.Meaning)
	}
	for _, f := range microphys.InputQCFlags { // bits 16 and up: the input's quality and completion
		s := "no"
		if f.Screen {
			s = "yes"
		}
		fmt.Fprintf(&b, "| %d | `%s` | %s | %s |\n", f.Bit, f.Name, s, f.Meaning)
	}
	return b.String()
}

// TestReadmeTables checks that README's parameter, output and QC tables are the ones
// generated from the declarations; -update rewrites them between their markers.
func TestReadmeTables(t *testing.T) {
	const path = "../../README.md"
	raw, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	text := string(raw)
	for _, blk := range []struct{ name, table string }{{"parameters", paramTable()}, {"outputs", outputTable()}, {"qc", qcTable()}, {"spreads", spreadTable()}} {
		begin := "<!-- generated: " + blk.name + " (go test ./cmd/warmrain -run TestReadmeTables -update) -->\n"
		end := "<!-- end: " + blk.name + " -->"
		i, j := strings.Index(text, begin), strings.Index(text, end)
		if i < 0 || j < i {
			t.Fatalf("README.md has no %q ... %q block", begin, end)
		}
		if got := text[i+len(begin) : j]; got != blk.table {
			if !*update {
				t.Errorf("README.md's %s table is out of date with the declaration; run: go test ./cmd/warmrain -run TestReadmeTables -update\nwant:\n%s", blk.name, blk.table)
				continue
			}
			text = text[:i+len(begin)] + blk.table + text[j:]
		}
	}
	if *update && text != string(raw) {
		if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}
