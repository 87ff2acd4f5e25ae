package grid

import (
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"net/url"
	"os"
	"path/filepath"
	"sort"
	"strings"
)

// ErrZarr is wrapped by the refusal of a Zarr or NCZarr store that the linked
// libnetcdf cannot read correctly.
var ErrZarr = errors.New("grid: zarr store not readable by this libnetcdf")

// zarrMode reads the mode fragment of a URL (file:///abs/store#mode=nczarr,file).
// It reports whether the URL names a Zarr store, whether it is read in NCZarr
// mode (rather than pure Zarr), the storage (file, zip, s3), and the local path.
func zarrMode(u string) (isZarr, nczarr bool, storage, path string) {
	base, frag, _ := strings.Cut(u, "#")
	var words []string
	for _, kv := range strings.Split(frag, "&") {
		k, v, _ := strings.Cut(kv, "=")
		if strings.EqualFold(strings.TrimSpace(k), "mode") {
			for _, w := range strings.Split(v, ",") {
				words = append(words, strings.ToLower(strings.TrimSpace(w)))
			}
		}
	}
	for _, w := range words {
		switch w {
		case "nczarr":
			isZarr, nczarr = true, true
		case "zarr":
			isZarr = true
		case "file", "zip", "s3":
			storage = w
		}
	}
	if !isZarr {
		return
	}
	if pu, err := url.Parse(base); err == nil && pu.Scheme == "file" {
		path = pu.Path
	}
	return
}

// zarrArray is what the check reads of a .zarray.
type zarrArray struct {
	ZarrFormat         int              `json:"zarr_format"`
	Shape              []int            `json:"shape"`
	DType              json.RawMessage  `json:"dtype"`
	Compressor         json.RawMessage  `json:"compressor"`
	Filters            json.RawMessage  `json:"filters"`
	Order              string           `json:"order"`
	DimensionSeparator string           `json:"dimension_separator"`
	NCZarr             *json.RawMessage `json:"_NCZARR_ARRAY"`
}

func jsonNull(m json.RawMessage) bool {
	s := strings.TrimSpace(string(m))
	return s == "" || s == "null" || s == "[]"
}

// checkZarrStore reads the metadata of a local Zarr store (every .zarray,
// .nczarray and zarr.json below it) before libnetcdf sees it, and refuses what
// libnetcdf 4.9.0 crashes on or misreads (each found with its own tools):
//
//   - an NCZarr store holding a scalar variable, opened in NCZarr mode: the
//     library (and ncdump) die with a segmentation fault;
//   - compressed arrays (a "compressor" or "filters" in .zarray, such as the
//     Blosc default of the zarr and xarray writers): the chunks are read as if
//     they were raw, and the values are garbage;
//   - big-endian data types (">f4"): read with the bytes swapped;
//   - Fortran order, "/" chunk-key separators and Zarr version 3: not read as
//     written;
//   - stores that are not local directories (zip, s3): their metadata cannot be
//     checked here.
//
// Uncompressed little-endian Zarr version 2 stores (what libnetcdf writes with
// nccopy, or xarray with compressor None) pass.
func checkZarrStore(u string) error {
	isZarr, nczarr, storage, path := zarrMode(u)
	if !isZarr {
		return nil
	}
	refuse := func(v, format string, a ...any) error {
		return &VarError{File: u, Var: v, Problem: fmt.Sprintf(format, a...) + "; libnetcdf " + LibraryVersion() + " cannot read it correctly, so it is refused before opening. Convert the store to netCDF-4 (for example with xarray: xr.open_zarr(STORE).to_netcdf(FILE.nc)) or rewrite it uncompressed", Err: ErrZarr}
	}
	if storage != "file" || path == "" {
		return &VarError{File: u, Problem: fmt.Sprintf("is a Zarr store in %q storage; only local directory stores (file:///abs/store#mode=nczarr,file or #mode=zarr,file) can be checked before libnetcdf reads them, so it is refused; copy the store to a local directory", storage), Err: ErrZarr}
	}
	st, err := os.Stat(path)
	if err != nil {
		return &VarError{File: u, Problem: fmt.Sprintf("the store directory %s cannot be read: %v", path, err), Err: err}
	}
	if !st.IsDir() {
		return &VarError{File: u, Problem: fmt.Sprintf("%s is not a directory; expected a Zarr store directory", path), Err: ErrZarr}
	}
	var problems []string
	walkErr := filepath.WalkDir(path, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if d.IsDir() {
			return nil
		}
		rel, _ := filepath.Rel(path, filepath.Dir(p))
		name := "/" + filepath.ToSlash(rel)
		if rel == "." {
			name = "/"
		}
		switch d.Name() {
		case "zarr.json":
			problems = append(problems, fmt.Sprintf("%s is Zarr version 3 (zarr.json); expected version 2", name))
		case ".nczarray": // NCZarr 1.0 (libnetcdf 4.8) keeps its array metadata apart
			b, err := os.ReadFile(p)
			if err != nil {
				return err
			}
			var meta struct {
				Dimrefs []string `json:"dimrefs"`
				Storage string   `json:"storage"`
			}
			if json.Unmarshal(b, &meta) != nil {
				problems = append(problems, fmt.Sprintf("%s/.nczarray is not valid JSON", name))
			} else if nczarr && (meta.Storage == "scalar" || len(meta.Dimrefs) == 0) {
				problems = append(problems, fmt.Sprintf("variable %s is a scalar in an NCZarr store (opening it in NCZarr mode crashes the library)", name))
			}
		case ".zarray":
			b, err := os.ReadFile(p)
			if err != nil {
				return err
			}
			var a zarrArray
			if err := json.Unmarshal(b, &a); err != nil {
				problems = append(problems, fmt.Sprintf("%s/.zarray is not valid JSON (%v)", name, err))
				return nil
			}
			problems = append(problems, arrayProblems(name, a, nczarr)...)
		}
		return nil
	})
	if walkErr != nil {
		return &VarError{File: u, Problem: fmt.Sprintf("cannot read the store's metadata: %v", walkErr), Err: walkErr}
	}
	if len(problems) > 0 {
		sort.Strings(problems)
		more := ""
		if len(problems) > 5 {
			more = fmt.Sprintf(" (and %d more)", len(problems)-5)
			problems = problems[:5]
		}
		return refuse("", "%s%s", strings.Join(problems, "; "), more)
	}
	return nil
}

func arrayProblems(name string, a zarrArray, nczarr bool) []string {
	var out []string
	if a.ZarrFormat != 2 {
		out = append(out, fmt.Sprintf("array %s has zarr_format %d; expected 2", name, a.ZarrFormat))
	}
	if !jsonNull(a.Compressor) {
		out = append(out, fmt.Sprintf("array %s is compressed (compressor %s)", name, compact(a.Compressor)))
	}
	if !jsonNull(a.Filters) {
		out = append(out, fmt.Sprintf("array %s has filters %s", name, compact(a.Filters)))
	}
	var dt string
	if json.Unmarshal(a.DType, &dt) != nil {
		out = append(out, fmt.Sprintf("array %s has a structured dtype %s", name, compact(a.DType)))
	} else if strings.HasPrefix(dt, ">") {
		out = append(out, fmt.Sprintf("array %s is big-endian (dtype %s)", name, dt))
	}
	if a.Order != "" && a.Order != "C" {
		out = append(out, fmt.Sprintf("array %s is in order %q; expected \"C\"", name, a.Order))
	}
	if a.DimensionSeparator != "" && a.DimensionSeparator != "." {
		out = append(out, fmt.Sprintf("array %s has dimension_separator %q; expected \".\"", name, a.DimensionSeparator))
	}
	if nczarr && a.NCZarr != nil {
		var meta struct {
			Storage string `json:"storage"`
		}
		if json.Unmarshal(*a.NCZarr, &meta) == nil && (meta.Storage == "scalar" || len(a.Shape) == 0) {
			out = append(out, fmt.Sprintf("variable %s is a scalar in an NCZarr store (opening it in NCZarr mode crashes the library)", name))
		}
	}
	return out
}

func compact(m json.RawMessage) string {
	var v any
	if json.Unmarshal(m, &v) != nil {
		return string(m)
	}
	b, _ := json.Marshal(v)
	return string(b)
}

// isZarrDir reports whether a plain directory holds a Zarr store.
func isZarrDir(dir string) bool {
	for _, n := range []string{".zgroup", ".zarray", "zarr.json", ".zmetadata"} {
		if _, err := os.Stat(filepath.Join(dir, n)); err == nil {
			return true
		}
	}
	return false
}

// zarrDirError tells how to name a Zarr store given as a plain directory.
func zarrDirError(dir string) error {
	abs, _ := filepath.Abs(dir)
	mode := "zarr"
	if b, err := os.ReadFile(filepath.Join(dir, ".zgroup")); err == nil && strings.Contains(string(b), "_NCZARR") {
		mode = "nczarr"
	}
	return &VarError{File: dir, Problem: fmt.Sprintf("is a Zarr store directory; name it as a URL so that libnetcdf opens it as one: file://%s#mode=%s,file", abs, mode), Err: ErrNotNetCDF}
}
