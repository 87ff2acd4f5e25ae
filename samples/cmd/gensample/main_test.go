package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestRunExitCodes(t *testing.T) {
	out := filepath.Join(t.TempDir(), "s.nc")
	for _, c := range []struct {
		args []string
		code int
	}{
		{nil, 2},
		{[]string{"-bogus"}, 2},
		{[]string{"-o", out, "extra"}, 2},
		{[]string{"-h"}, 0},
		{[]string{"-o", filepath.Join(t.TempDir(), "no", "such", "dir.nc")}, 1},
		{[]string{"-o", out}, 0},
	} {
		var so, se bytes.Buffer
		if got := run(c.args, &so, &se); got != c.code {
			t.Errorf("run(%q) = %d, want %d; stderr %q", c.args, got, c.code, se.String())
		}
	}
	if fi, err := os.Stat(out); err != nil || fi.Size() == 0 {
		t.Errorf("no output written: %v", err)
	}
	var so, se bytes.Buffer
	run([]string{"-o", out}, &so, &se)
	if strings.TrimSpace(so.String()) != out || se.Len() != 0 {
		t.Errorf("stdout %q stderr %q", so.String(), se.String())
	}
}
