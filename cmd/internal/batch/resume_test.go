package batch

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestDecide(t *testing.T) {
	id := Identity{Path: "/d/2019/jan.nc", Size: 10, ModTime: "t1"}
	ours := func(path, digest, build string, sum string) *Existing {
		s := Identity{Path: path, Size: 10, ModTime: "t1", SHA256: sum}
		return &Existing{Ours: true, Identity: s.String(), Digest: digest, Build: build, Version: "v0"}
	}
	withSum := id
	withSum.SHA256 = "abc"
	cases := []struct {
		name        string
		ex          *Existing
		id          Identity
		redo, force bool
		want        Action
		why         string
	}{
		{"absent", nil, id, false, false, Write, ""},
		{"complete", ours(id.Path, "p", "b", ""), id, false, false, Skip, ""},
		{"complete, redo", ours(id.Path, "p", "b", ""), id, true, false, Replace, "--redo"},
		{"foreign file", &Existing{}, id, true, false, Refuse, "--force"},
		{"foreign file, force", &Existing{}, id, false, true, Replace, "--force"},
		{"another input", ours("/d/2020/jan.nc", "p", "b", ""), id, false, false, Refuse, "{relpath}"},
		{"another input, redo", ours("/d/2020/jan.nc", "p", "b", ""), id, true, false, Refuse, "another input"},
		{"other parameters", ours(id.Path, "q", "b", ""), id, false, false, Refuse, "--redo"},
		{"other build", ours(id.Path, "p", "old", ""), id, false, false, Replace, "another build"},
		{"no build recorded", ours(id.Path, "p", "", ""), id, false, false, Replace, "another build"},
		{"input changed", ours(id.Path, "p", "b", ""), Identity{Path: id.Path, Size: 11, ModTime: "t1"}, false, false, Replace, "input changed"},
		{"checksum asked, none recorded", ours(id.Path, "p", "b", ""), withSum, false, false, Replace, "input changed"},
		{"checksum matches", ours(id.Path, "p", "b", "abc"), withSum, false, false, Skip, ""},
	}
	for _, c := range cases {
		d := Decide("/o/jan_warmrain.nc", c.ex, c.id, "p", "b", c.redo, c.force)
		if d.Action != c.want || !strings.Contains(d.Why, c.why) {
			t.Errorf("%s: got %v %q, want %v containing %q", c.name, d.Action, d.Why, c.want, c.why)
		}
	}
}

// TestRelPathAndLiteralArguments: {relpath} tells same-named inputs of
// different folders apart; an argument that names an existing file is taken
// literally, never globbed a second time.
func TestRelPathAndLiteralArguments(t *testing.T) {
	d := t.TempDir()
	t.Chdir(d)
	for _, n := range []string{"2019/jan.nc", "2020/jan.nc", "day1.nc", "day[1].nc", "only[2].nc"} {
		touch(t, filepath.Join(d, n), "x")
	}
	outs, err := PlanOutputs([]string{"2019/jan.nc", filepath.Join(d, "2020/jan.nc")}, "out", "{relpath}_wr.nc")
	if err != nil || outs[0] != "out/2019_jan_wr.nc" || outs[1] != "out/2020_jan_wr.nc" {
		t.Fatalf("{relpath}: %v %v", outs, err)
	}
	if _, err := PlanOutputs([]string{"2019/jan.nc", "2020/jan.nc"}, "out", DefaultPattern); err == nil || !strings.Contains(err.Error(), "{relpath}") {
		t.Fatalf("clash: %v", err)
	}
	got, err := ExpandInputs([]string{"day1.nc", "day[1].nc", "only[2].nc"})
	if err != nil || len(got) != 3 || got[1] != "day[1].nc" || got[2] != "only[2].nc" {
		t.Fatalf("literal names: %v %v", got, err)
	}
	// A quoted pattern that is no file is still expanded.
	got, err = ExpandInputs([]string{"20*/jan.nc"})
	if err != nil || len(got) != 2 {
		t.Fatalf("pattern: %v %v", got, err)
	}
	if _, err := os.Stat("out"); err == nil {
		t.Fatal("planning created a folder")
	}
}

// TestManifestWhole: a partial last line (an interrupted or short write) is
// ended with a warning and skipped by readers; an input or a file that is not
// a manifest is never appended to; a failed write is an error.
func TestManifestWhole(t *testing.T) {
	d := t.TempDir()
	p := filepath.Join(d, "m.jsonl")
	touch(t, p, `{"input":"a.nc","status":"done"}`+"\n"+`{"input":"b.nc","sta`)
	m, warn, err := OpenManifest(p, nil)
	if err != nil || !strings.Contains(warn, "partial record") {
		t.Fatalf("partial line: %v, warning %q", err, warn)
	}
	if err := m.Add(Record{Input: "c.nc", Status: "done"}); err != nil {
		t.Fatal(err)
	}
	m.Close()
	f, _ := os.Open(p)
	recs, skipped, err := ReadManifest(f)
	f.Close()
	if err != nil || len(recs) != 2 || recs[1].Input != "c.nc" || skipped != 1 {
		t.Fatalf("read back: %+v, %d skipped, %v", recs, skipped, err)
	}
	in := filepath.Join(d, "a.nc")
	touch(t, in, "CDF\x01 an input")
	link := filepath.Join(d, "link.nc")
	os.Symlink(in, link)
	for _, path := range []string{in, link} {
		if _, _, err := OpenManifest(path, []string{in}); err == nil || !strings.Contains(err.Error(), "is the input") {
			t.Errorf("manifest onto the input %s: %v", path, err)
		}
	}
	other := filepath.Join(d, "notes.txt")
	touch(t, other, "my notes\n")
	if _, _, err := OpenManifest(other, nil); err == nil || !strings.Contains(err.Error(), "not a warmrain manifest") {
		t.Errorf("manifest onto a text file: %v", err)
	}
	if b, _ := os.ReadFile(in); string(b) != "CDF\x01 an input" {
		t.Fatal("the input changed")
	}
	full, err := os.OpenFile("/dev/full", os.O_WRONLY, 0)
	if err != nil {
		t.Skip("no /dev/full")
	}
	defer full.Close()
	if err := ManifestOn(full, "full").Add(Record{Input: "x.nc", Status: "done"}); err == nil || !strings.Contains(err.Error(), "x.nc") {
		t.Errorf("write to a full device: %v", err)
	}
	if s := Truncated(strings.Repeat("é", 5000), MaxErrorText); len(s) > MaxErrorText || !strings.HasSuffix(s, "full text on stderr]") {
		t.Errorf("Truncated: %d bytes", len(s))
	}
}
