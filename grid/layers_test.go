package grid

import (
	"go/ast"
	"go/parser"
	"go/token"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"strconv"
	"strings"
	"testing"
)

// The package's layers (doc.go, "Layers") by file-name prefix; files without a prefix
// (doc.go, errors.go, types.go) are layer 0, the vocabulary every layer shares.
var layerPrefixes = []struct {
	prefix string
	layer  int
	name   string
}{
	{"c_", 1, "binding"},
	{"store_", 2, "generic access"},
	{"cf_", 3, "CF interpretation"},
	{"pipe_", 4, "pipeline"},
}

func fileLayer(name string) int {
	for _, p := range layerPrefixes {
		if strings.HasPrefix(name, p.prefix) {
			return p.layer
		}
	}
	return 0
}

type layerFile struct {
	name  string
	layer int
	ast   *ast.File
}

// parseLayers parses the package's non-test Go files.
func parseLayers(t *testing.T) []layerFile {
	t.Helper()
	names, err := filepath.Glob("*.go")
	if err != nil {
		t.Fatal(err)
	}
	var fs []layerFile
	fset := token.NewFileSet()
	for _, n := range names {
		if strings.HasSuffix(n, "_test.go") {
			continue
		}
		src, err := os.ReadFile(n)
		if err != nil {
			t.Fatal(err)
		}
		f, err := parser.ParseFile(fset, n, src, 0)
		if err != nil {
			t.Fatal(err)
		}
		fs = append(fs, layerFile{n, fileLayer(n), f})
	}
	if len(fs) < 20 {
		t.Fatalf("only %d files parsed: is the test run from grid/?", len(fs))
	}
	return fs
}

// calledFuncs lists the plain identifiers called in f (foo(...), not x.foo(...)): the
// package-level functions a file calls, plus builtins and local closures, which the
// caller filters against the package's declarations.
func calledFuncs(f *ast.File) map[string]bool {
	out := map[string]bool{}
	ast.Inspect(f, func(n ast.Node) bool {
		if c, ok := n.(*ast.CallExpr); ok {
			fn := c.Fun
			if ix, ok := fn.(*ast.IndexExpr); ok { // generic instantiation f[T](...)
				fn = ix.X
			}
			if id, ok := fn.(*ast.Ident); ok {
				out[id.Name] = true
			}
		}
		return true
	})
	return out
}

// TestLayerCgo: only binding-layer files (c_*.go) use cgo or github.com/fhs/go-netcdf,
// and every file that does is in the binding layer.
func TestLayerCgo(t *testing.T) {
	for _, f := range parseLayers(t) {
		for _, im := range f.ast.Imports {
			p, _ := strconv.Unquote(im.Path.Value)
			if (p == "C" || strings.HasPrefix(p, "github.com/fhs/go-netcdf")) && f.layer != 1 {
				t.Errorf("%s imports %q: only binding-layer files (c_*.go) may", f.name, p)
			}
		}
		ast.Inspect(f.ast, func(n ast.Node) bool {
			if s, ok := n.(*ast.SelectorExpr); ok {
				if id, ok := s.X.(*ast.Ident); ok && id.Name == "C" && f.layer != 1 {
					t.Errorf("%s uses C.%s: only binding-layer files (c_*.go) may", f.name, s.Sel.Name)
				}
			}
			return true
		})
	}
}

// upCalls are the known calls from a lower layer up to a higher one, each with its
// reason (doc.go, "Layers"). A new upward call fails TestLayerCalls; an entry no
// longer needed fails it too, so the list only shrinks.
var upCalls = map[string]string{
	"c_direct_write.go -> planChunks":        "the direct chunk writer checks the output chunk shape the slab plan chose",
	"store_generic.go -> storedUnitsDecoder": "the generic Reader returns values unpacked by the CF decoder",
	"store_scene.go -> isLat":                "scenes joined with + may differ in latitude only by rounding",
	"store_scene.go -> isLon":                "scenes joined with + may differ in longitude only by rounding",
}

// TestLayerCalls: a file calls no package-level function declared in a higher layer
// (methods are not checked: their names are shared across types), but for upCalls.
func TestLayerCalls(t *testing.T) {
	fs := parseLayers(t)
	declared := map[string]string{} // function name -> file
	for _, f := range fs {
		for _, d := range f.ast.Decls {
			if fd, ok := d.(*ast.FuncDecl); ok && fd.Recv == nil && fd.Name.Name != "init" {
				declared[fd.Name.Name] = f.name
			}
		}
	}
	if declared["onIO"] == "" || declared["Process"] == "" || declared["NewDecoder"] == "" {
		t.Fatalf("declarations not found: %v", declared)
	}
	used := map[string]bool{}
	for _, f := range fs {
		for name := range calledFuncs(f.ast) {
			in, ok := declared[name]
			if !ok {
				continue
			}
			if l := fileLayer(in); l > f.layer {
				if key := f.name + " -> " + name; upCalls[key] != "" {
					used[key] = true
					continue
				}
				t.Errorf("%s (layer %d) calls %s of %s (layer %d): higher layers call lower ones only",
					f.name, f.layer, name, in, l)
			}
		}
	}
	for key := range upCalls {
		if !used[key] {
			t.Errorf("upCalls lists %q, which no longer happens: remove it", key)
		}
	}
}

// TestLayerCFNoNetCDF: CF interpretation works on the metadata the generic layer
// describes (FileInfo, VarInfo) and reads data through it; it calls no function of
// the netCDF, HDF4 or HDF5 bindings. From the binding layer it uses the I/O thread
// (c_thread.go, to run generic-layer reads) and UDUNITS-2 (c_udunits.go) only.
func TestLayerCFNoNetCDF(t *testing.T) {
	fs := parseLayers(t)
	declared := map[string]string{}
	for _, f := range fs {
		for _, d := range f.ast.Decls {
			if fd, ok := d.(*ast.FuncDecl); ok && fd.Recv == nil && fd.Name.Name != "init" {
				declared[fd.Name.Name] = f.name
			}
		}
	}
	allowed := []string{"c_thread.go", "c_udunits.go"}
	for _, f := range fs {
		if f.layer != 3 {
			continue
		}
		for name := range calledFuncs(f.ast) {
			if in := declared[name]; fileLayer(in) == 1 && !slices.Contains(allowed, in) {
				t.Errorf("%s calls %s of %s: CF interpretation reaches files through the generic layer (store_*.go)", f.name, name, in)
			}
		}
	}
}

// cfDecoded are the attributes whose meaning the CF layer decodes (packing, missing
// values, units, flags, names, cell methods, time).
var cfDecoded = []string{"units", "standard_name", "_FillValue", "missing_value", "valid_min", "valid_max",
	"valid_range", "scale_factor", "add_offset", "_Unsigned", "flag_values", "flag_masks", "flag_meanings",
	"cell_methods", "calendar", "ancillary_variables", "bounds", "climatology", "long_name"}

// TestLayerPipelineNoCF: pipeline files read none of the attributes the CF layer
// interprets (v.Text("units"), v.Attr("_FillValue"), ...); they get decoders, units and
// roles from it. Copying attributes through to an output (coordinates, grid_mapping,
// history) is allowed.
func TestLayerPipelineNoCF(t *testing.T) {
	var found []string
	for _, f := range parseLayers(t) {
		if f.layer != 4 {
			continue
		}
		ast.Inspect(f.ast, func(n ast.Node) bool {
			c, ok := n.(*ast.CallExpr)
			if !ok || len(c.Args) == 0 {
				return true
			}
			s, ok := c.Fun.(*ast.SelectorExpr)
			if !ok || (s.Sel.Name != "Text" && s.Sel.Name != "Attr" && s.Sel.Name != "Global") {
				return true
			}
			if lit, ok := c.Args[0].(*ast.BasicLit); ok && lit.Kind == token.STRING {
				a, _ := strconv.Unquote(lit.Value)
				if slices.Contains(cfDecoded, a) {
					found = append(found, f.name+": "+s.Sel.Name+"("+lit.Value+")")
				}
			}
			return true
		})
	}
	sort.Strings(found)
	for _, x := range found {
		t.Errorf("%s: pipeline files leave CF attributes to the CF layer (cf_*.go)", x)
	}
}

// TestLayerFileNames: every file has a layer prefix or is one of the shared files
// listed here, and doc.go's "Layers" section names every non-test file, so a new
// file is placed in a layer and documented there.
func TestLayerFileNames(t *testing.T) {
	shared := []string{"doc.go", "errors.go", "types.go", "names.go",
		"helpers_test.go", "layers_test.go", "onecgo_test.go", "race_on_test.go", "race_off_test.go"}
	doc, err := os.ReadFile("doc.go")
	if err != nil {
		t.Fatal(err)
	}
	names, err := filepath.Glob("*.go")
	if err != nil {
		t.Fatal(err)
	}
	for _, n := range names {
		if fileLayer(n) == 0 && !slices.Contains(shared, n) {
			t.Errorf("%s has no layer prefix (c_, store_, cf_, pipe_): see doc.go, \"Layers\"", n)
		}
		if !strings.HasSuffix(n, "_test.go") && !strings.Contains(string(doc), n) {
			t.Errorf("doc.go's \"Layers\" section does not name %s", n)
		}
	}
}
