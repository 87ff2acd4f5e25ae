package microphys

import (
	"bytes"
	"go/ast"
	"go/parser"
	"go/token"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"sort"
	"strings"
	"testing"
)

// TestImportRules enforces the rule of direction (DEVELOPERS.md, layout and the rule of direction): microphys
// imports no I/O, NetCDF or flags, and depends only on the standard library and gonum.
func TestImportRules(t *testing.T) {
	t.Parallel()
	if _, err := exec.LookPath("go"); err != nil {
		t.Skip("go command not found")
	}
	// Direct imports of the non-test package.
	out, err := exec.Command("go", "list", "-f", `{{join .Imports "\n"}}`, ".").CombinedOutput()
	if err != nil {
		t.Fatalf("go list: %v\n%s", err, out)
	}
	forbiddenDirect := map[string]bool{"os": true, "io": true, "log": true, "bufio": true,
		"net": true, "os/exec": true, "io/fs": true, "io/ioutil": true, "flag": true, "unsafe": true}
	for _, imp := range strings.Fields(string(out)) {
		if forbiddenDirect[imp] || strings.HasPrefix(imp, "log/") || strings.HasPrefix(imp, "net/") {
			t.Errorf("microphys imports %s (forbidden: no I/O, no logging, no flags)", imp)
		}
	}
	// All transitive dependencies: standard library or gonum only, and never grid, netcdf or
	// pflag.
	out, err = exec.Command("go", "list", "-deps", "-f", `{{.ImportPath}} {{.Standard}}`, ".").CombinedOutput()
	if err != nil {
		t.Fatalf("go list -deps: %v\n%s", err, out)
	}
	self := ""
	if o, err := exec.Command("go", "list", ".").Output(); err == nil {
		self = strings.TrimSpace(string(o))
	}
	for _, line := range strings.Split(strings.TrimSpace(string(out)), "\n") {
		f := strings.Fields(line)
		if len(f) != 2 {
			continue
		}
		path, std := f[0], f[1] == "true"
		low := strings.ToLower(path)
		switch {
		case path == self:
		case strings.Contains(low, "netcdf"), strings.Contains(low, "pflag"),
			strings.HasSuffix(path, "/grid") || strings.Contains(path, "/grid/"):
			t.Errorf("microphys depends on %s (forbidden)", path)
		case std:
		case path == "gonum.org/v1/gonum" || strings.HasPrefix(path, "gonum.org/v1/gonum/"):
		default:
			t.Errorf("microphys depends on %s: only the standard library and gonum.org/v1/gonum are allowed", path)
		}
	}
}

// packageFiles parses the non-test Go files of the package with comments.
func packageFiles(t *testing.T) (*token.FileSet, map[string]*ast.File) {
	t.Helper()
	fset := token.NewFileSet()
	names, err := filepath.Glob("*.go")
	if err != nil {
		t.Fatal(err)
	}
	files := map[string]*ast.File{}
	for _, n := range names {
		if strings.HasSuffix(n, "_test.go") {
			continue
		}
		f, err := parser.ParseFile(fset, n, nil, parser.ParseComments)
		if err != nil {
			t.Fatalf("parse %s: %v", n, err)
		}
		files[n] = f
	}
	return fset, files
}

// exportedFuncs lists the exported functions and the exported methods of exported types.
func exportedFuncs(f *ast.File) []*ast.FuncDecl {
	var fs []*ast.FuncDecl
	for _, d := range f.Decls {
		fd, ok := d.(*ast.FuncDecl)
		if !ok || !fd.Name.IsExported() {
			continue
		}
		if fd.Recv != nil && !ast.IsExported(recvType(fd)) {
			continue
		}
		fs = append(fs, fd)
	}
	return fs
}

func recvType(fd *ast.FuncDecl) string {
	if fd.Recv == nil || len(fd.Recv.List) == 0 {
		return ""
	}
	e := fd.Recv.List[0].Type
	if s, ok := e.(*ast.StarExpr); ok {
		e = s.X
	}
	if id, ok := e.(*ast.Ident); ok {
		return id.Name
	}
	return ""
}

// TestDocCommentLayout checks the doc-comment layout of DEVELOPERS.md (conventions): every exported function and method has
// "Reference:" and "Valid:" in its doc comment.
func TestDocCommentLayout(t *testing.T) {
	t.Parallel()
	fset, files := packageFiles(t)
	for _, f := range files {
		for _, fd := range exportedFuncs(f) {
			doc := fd.Doc.Text()
			for _, want := range []string{"Reference:", "Valid:"} {
				if !strings.Contains(doc, want) {
					t.Errorf("%s: %s has no %q line in its doc comment", fset.Position(fd.Pos()), fd.Name.Name, want)
				}
			}
		}
	}
}

var (
	citeKey = regexp.MustCompile(`\[([A-Z][A-Za-z]*[0-9]{4}[a-z]?)\]`)
	listKey = regexp.MustCompile(`(?m)^\[([A-Z][A-Za-z]*[0-9]{4}[a-z]?)\] \S`)
)

// TestBibliography checks the bibliography rule of DEVELOPERS.md (conventions): references.go holds only comments; every key cited
// in a comment of the package is listed there, and every listed key is cited.
func TestBibliography(t *testing.T) {
	t.Parallel()
	fset, files := packageFiles(t)
	ref, ok := files["references.go"]
	if !ok {
		t.Fatal("references.go missing")
	}
	if len(ref.Decls) != 0 {
		t.Errorf("references.go has %d declarations; it must hold only comments", len(ref.Decls))
	}
	listed := map[string]bool{}
	for _, cg := range ref.Comments {
		for _, m := range listKey.FindAllStringSubmatch(cg.Text(), -1) {
			if listed[m[1]] {
				t.Errorf("references.go lists [%s] twice", m[1])
			}
			listed[m[1]] = true
		}
	}
	if len(listed) == 0 {
		t.Fatal("no keys found in references.go")
	}
	cited := map[string]bool{}
	for name, f := range files {
		if name == "references.go" {
			continue
		}
		for _, cg := range f.Comments {
			for _, m := range citeKey.FindAllStringSubmatch(cg.Text(), -1) {
				cited[m[1]] = true
				if !listed[m[1]] {
					t.Errorf("%s: [%s] is cited but not listed in references.go", fset.Position(cg.Pos()), m[1])
				}
			}
		}
	}
	var unused []string
	for k := range listed {
		if !cited[k] {
			unused = append(unused, k)
		}
	}
	sort.Strings(unused)
	for _, k := range unused {
		t.Errorf("references.go lists [%s] but no comment of the package cites it", k)
	}
}

// dropPhysicsFiles are the files of the drop-physics part whose every exported function must
// have an Example (DEVELOPERS.md, conventions).
var dropPhysicsFiles = []string{"air.go", "terminal.go", "collision.go", "coalescence.go", "collector.go", "evaporation.go"}

func TestExamplesExist(t *testing.T) {
	t.Parallel()
	_, files := packageFiles(t)
	src, err := os.ReadFile("example_test.go")
	if err != nil {
		t.Fatal(err)
	}
	for _, n := range dropPhysicsFiles {
		f, ok := files[n]
		if !ok {
			t.Errorf("%s missing", n)
			continue
		}
		for _, fd := range exportedFuncs(f) {
			name := "Example" + fd.Name.Name
			if r := recvType(fd); r != "" {
				name = "Example" + r + "_" + fd.Name.Name
			}
			if !bytes.Contains(src, []byte("func "+name+"()")) {
				t.Errorf("%s: no %s in example_test.go", n, name)
			}
		}
	}
}
