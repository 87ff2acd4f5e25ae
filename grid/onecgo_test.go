package grid

import (
	"go/parser"
	"go/token"
	"io/fs"
	"path/filepath"
	"strings"
	"testing"
)

// TestOnlyGridUsesCgo: grid is the repository's one cgo binding of libnetcdf (and of
// libudunits2 and libmfhdf); other packages (the sample and benchmark generators too)
// take what go-netcdf lacks from grid (DefStorage) instead of carrying their own.
func TestOnlyGridUsesCgo(t *testing.T) {
	root := ".."
	fset := token.NewFileSet()
	var found []string
	err := filepath.WalkDir(root, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if d.IsDir() {
			if n := d.Name(); p != root && (strings.HasPrefix(n, ".") || n == "testdata") {
				return filepath.SkipDir
			}
			return nil
		}
		if !strings.HasSuffix(p, ".go") || filepath.Dir(p) == filepath.Join(root, "grid") {
			return nil
		}
		f, err := parser.ParseFile(fset, p, nil, parser.ImportsOnly)
		if err != nil {
			return err
		}
		for _, im := range f.Imports {
			if im.Path.Value == `"C"` {
				found = append(found, p)
			}
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range found {
		t.Errorf("%s uses cgo; put the binding in grid and call it from there", p)
	}
}
