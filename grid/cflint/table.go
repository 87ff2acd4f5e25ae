package cflint

import (
	"compress/gzip"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"os"
	"strings"
)

// Table is a CF standard name table: each name with its canonical units,
// and the aliases that stand for renamed names.
type Table struct {
	Version   string
	Canonical map[string]string // standard name -> canonical units
	Alias     map[string]string // alias -> standard name it stands for
}

// TableFile is the file name of the table version the project targets.
const TableFile = "cf-standard-name-table-v83.xml.gz"

// EnvTable names the environment variable that gives the path of the
// standard name table file (XML, gzipped or not).
const EnvTable = "WARMRAIN_CF_TABLE"

// Lookup returns the canonical units of name (resolving an alias) and
// whether the name is in the table.
func (t *Table) Lookup(name string) (units string, ok bool) {
	if u, ok := t.Canonical[name]; ok {
		return u, true
	}
	if to, ok := t.Alias[name]; ok {
		u, ok := t.Canonical[to]
		return u, ok
	}
	return "", false
}

type xmlTable struct {
	Version string `xml:"version_number"`
	Entries []struct {
		ID    string `xml:"id,attr"`
		Units string `xml:"canonical_units"`
	} `xml:"entry"`
	Aliases []struct {
		ID      string `xml:"id,attr"`
		EntryID string `xml:"entry_id"`
	} `xml:"alias"`
}

// LoadTable reads a standard name table in the XML layout of the CF
// standard name table (gzipped when the name ends in .gz).
func LoadTable(path string) (*Table, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("cflint: standard name table: %w", err)
	}
	defer f.Close()
	var r io.Reader = f
	if strings.HasSuffix(path, ".gz") {
		gz, err := gzip.NewReader(f)
		if err != nil {
			return nil, fmt.Errorf("cflint: standard name table %s: %w", path, err)
		}
		defer gz.Close()
		r = gz
	}
	var x xmlTable
	if err := xml.NewDecoder(r).Decode(&x); err != nil {
		return nil, fmt.Errorf("cflint: standard name table %s: %w", path, err)
	}
	if len(x.Entries) == 0 {
		return nil, fmt.Errorf("cflint: standard name table %s: no entries", path)
	}
	t := &Table{Version: strings.TrimSpace(x.Version), Canonical: make(map[string]string, len(x.Entries)),
		Alias: make(map[string]string, len(x.Aliases))}
	for _, e := range x.Entries {
		t.Canonical[strings.TrimSpace(e.ID)] = strings.TrimSpace(e.Units)
	}
	for _, a := range x.Aliases {
		t.Alias[strings.TrimSpace(a.ID)] = strings.TrimSpace(a.EntryID)
	}
	return t, nil
}

// ErrNoTable is returned by FindTable when no table file is found.
var ErrNoTable = errors.New("cflint: no CF standard name table found")

// FindTable returns the path of the standard name table: the file named by
// $WARMRAIN_CF_TABLE. The project never ships the table itself; users download it
// from the CF conventions site and point the variable (or lint's --table) at it.
func FindTable() (string, error) {
	p := os.Getenv(EnvTable)
	if p == "" {
		return "", fmt.Errorf("%w: set $%s to the table's path (XML, gzipped or not)", ErrNoTable, EnvTable)
	}
	if _, err := os.Stat(p); err != nil {
		return "", fmt.Errorf("%w: $%s: %v", ErrNoTable, EnvTable, err)
	}
	return p, nil
}
