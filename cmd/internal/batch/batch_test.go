package batch

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

func touch(t *testing.T, p string, data string) {
	t.Helper()
	if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(p, []byte(data), 0o644); err != nil {
		t.Fatal(err)
	}
}

func TestExpandInputs(t *testing.T) {
	d := t.TempDir()
	for _, n := range []string{"b.nc", "a.nc", "c.txt"} {
		touch(t, filepath.Join(d, n), "x")
	}
	list := filepath.Join(d, "list.txt")
	touch(t, list, "# archive\n\nb.nc\n"+filepath.Join(d, "c.txt")+"\n")
	got, err := ExpandInputs([]string{filepath.Join(d, "*.nc"), "@" + list, "file:///x/store.zarr#mode=nczarr,file"})
	if err != nil {
		t.Fatal(err)
	}
	want := []string{filepath.Join(d, "a.nc"), filepath.Join(d, "b.nc"), filepath.Join(d, "c.txt"), "file:///x/store.zarr#mode=nczarr,file"}
	if fmt.Sprint(got) != fmt.Sprint(want) {
		t.Fatalf("got %v\nwant %v", got, want)
	}
	if _, err := ExpandInputs([]string{filepath.Join(d, "*.zz")}); err == nil || !strings.Contains(err.Error(), "matches no file") {
		t.Fatalf("empty glob: err = %v", err)
	}
	if _, err := ExpandInputs([]string{"@" + filepath.Join(d, "missing")}); err == nil {
		t.Fatal("missing list file accepted")
	}
}

func TestOutputNames(t *testing.T) {
	n, err := OutputName("{parent}_{stem}.out.nc", "/data/2019/day1.nc", 3)
	if err != nil || n != "2019_day1.out.nc" {
		t.Fatalf("got %q, %v", n, err)
	}
	n, err = OutputName(DefaultPattern, "file:///data/s.zarr#mode=nczarr,file", 0)
	if err != nil || n != "s_warmrain.nc" {
		t.Fatalf("zarr: got %q, %v", n, err)
	}
	if _, err := OutputName("{bogus}.nc", "a.nc", 0); err == nil {
		t.Fatal("unknown placeholder accepted")
	}
	if _, err := OutputName("sub/{stem}.nc", "a.nc", 0); err == nil {
		t.Fatal("pattern with a folder accepted")
	}
	// Two inputs of the same name in different folders collide under {stem}.
	_, err = PlanOutputs([]string{"/a/x.nc", "/b/x.nc"}, "/out", DefaultPattern)
	if err == nil || !strings.Contains(err.Error(), "{parent}") {
		t.Fatalf("collision not reported: %v", err)
	}
	outs, err := PlanOutputs([]string{"/a/x.nc", "/b/x.nc"}, "/out", "{parent}_{stem}.nc")
	if err != nil || outs[0] != "/out/a_x.nc" || outs[1] != "/out/b_x.nc" {
		t.Fatalf("got %v, %v", outs, err)
	}
	// An output that is an input is refused.
	if _, err := PlanOutputs([]string{"/a/x.nc"}, "/a", "{name}"); err == nil {
		t.Fatal("output = input accepted")
	}
}

func TestShardsCoverEveryFileOnce(t *testing.T) {
	var inputs []string
	for i := 0; i < 23; i++ {
		inputs = append(inputs, fmt.Sprintf("/arch/f%03d.nc", (i*7)%23))
	}
	for _, n := range []int{1, 2, 3, 5, 23, 30} {
		seen := make([]int, len(inputs))
		for i := 0; i < n; i++ {
			for _, k := range (Shard{Index: i, Count: n}).Select(inputs) {
				seen[k]++
			}
		}
		for k, c := range seen {
			if c != 1 {
				t.Fatalf("n=%d: input %d assigned %d times", n, k, c)
			}
		}
	}
	// The assignment does not depend on the order of the list.
	rev := make([]string, len(inputs))
	for i := range inputs {
		rev[len(inputs)-1-i] = inputs[i]
	}
	pick := func(list []string) map[string]bool {
		m := map[string]bool{}
		for _, k := range (Shard{Index: 1, Count: 4}).Select(list) {
			m[list[k]] = true
		}
		return m
	}
	if fmt.Sprint(pick(inputs)) != fmt.Sprint(pick(rev)) {
		t.Fatal("shard depends on input order")
	}
}

func TestParseShard(t *testing.T) {
	if s, err := ParseShard("2/5"); err != nil || s.Index != 2 || s.Count != 5 {
		t.Fatalf("got %+v %v", s, err)
	}
	for _, bad := range []string{"5/5", "-1/3", "1", "a/b", "0/0"} {
		if _, err := ParseShard(bad); err == nil {
			t.Errorf("%q accepted", bad)
		}
	}
}

func env(kv map[string]string) func(string) string { return func(k string) string { return kv[k] } }

func TestSlurmShard(t *testing.T) {
	// Array 0-3: plain range. The variables are those Slurm 22.05 sets (see .ci/slurm).
	s, ok, err := SlurmShard(env(map[string]string{"SLURM_ARRAY_TASK_ID": "2", "SLURM_ARRAY_TASK_COUNT": "4",
		"SLURM_ARRAY_TASK_MIN": "0", "SLURM_ARRAY_TASK_MAX": "3", "SLURM_ARRAY_TASK_STEP": "1"}), 0)
	if !ok || err != nil || s.Index != 2 || s.Count != 4 {
		t.Fatalf("0-3: %+v %v %v", s, ok, err)
	}
	// Array 10-16:3 -> ids 10, 13, 16.
	s, _, err = SlurmShard(env(map[string]string{"SLURM_ARRAY_TASK_ID": "16", "SLURM_ARRAY_TASK_COUNT": "3",
		"SLURM_ARRAY_TASK_MIN": "10", "SLURM_ARRAY_TASK_MAX": "16", "SLURM_ARRAY_TASK_STEP": "3"}), 0)
	if err != nil || s.Index != 2 || s.Count != 3 {
		t.Fatalf("10-16:3: %+v %v", s, err)
	}
	// Array 1,5,9: Slurm reports STEP=1, COUNT=3; not a range -> needs a count.
	list := map[string]string{"SLURM_ARRAY_TASK_ID": "5", "SLURM_ARRAY_TASK_COUNT": "3",
		"SLURM_ARRAY_TASK_MIN": "1", "SLURM_ARRAY_TASK_MAX": "9", "SLURM_ARRAY_TASK_STEP": "1"}
	if _, _, err := SlurmShard(env(list), 0); err == nil || !strings.Contains(err.Error(), "--shard-count") {
		t.Fatalf("list array accepted without a count: %v", err)
	}
	if s, _, err := SlurmShard(env(list), 4); err != nil || s.Index != 1 || s.Count != 4 {
		t.Fatalf("list with count: %+v %v", s, err)
	}
	if _, ok, _ := SlurmShard(env(nil), 0); ok {
		t.Fatal("no array but ok")
	}
}

func TestManifestRoundTrip(t *testing.T) {
	p := filepath.Join(t.TempDir(), "m.jsonl")
	m, _, err := OpenManifest(p, nil)
	if err != nil {
		t.Fatal(err)
	}
	recs := []Record{{Input: "a.nc", Output: "o/a.nc", Status: "done", Columns: 10, ScreenedFraction: 0.5, Seconds: 1.5},
		{Input: "b.nc", Status: "failed", Error: "b.nc: variable lwp: no units"}}
	for _, r := range recs {
		if err := m.Add(r); err != nil {
			t.Fatal(err)
		}
	}
	m.Close()
	b, _ := os.ReadFile(p)
	got, _, err := ReadManifest(bytes.NewReader(b))
	if err != nil || len(got) != 2 || got[1].Error != recs[1].Error || got[0].Columns != 10 {
		t.Fatalf("got %+v %v", got, err)
	}
	if strings.Count(string(b), "\n") != 2 {
		t.Fatal("not one line per record")
	}
}

func TestIdentity(t *testing.T) {
	p := filepath.Join(t.TempDir(), "in.nc")
	touch(t, p, "abc")
	id, err := InputIdentity(p, false)
	if err != nil {
		t.Fatal(err)
	}
	if !id.Matches(id.String()) {
		t.Fatal("identity does not match itself")
	}
	later := time.Now().Add(time.Hour)
	os.Chtimes(p, later, later)
	id2, _ := InputIdentity(p, false)
	if id2.Matches(id.String()) {
		t.Fatal("modified input still matches")
	}
	c1, _ := InputIdentity(p, true)
	touch(t, p, "abd")
	os.Chtimes(p, later, later)
	c2, _ := InputIdentity(p, true)
	if c2.Matches(c1.String()) || !c1.Matches(c1.String()) {
		t.Fatal("checksum identity wrong")
	}
	if Digest([][2]string{{"a", "1"}}) == Digest([][2]string{{"a", "2"}}) {
		t.Fatal("digest ignores values")
	}
}

// TestScenes: an input of several files joined with + (one variable per file)
// is one input in arguments and list files, is named by its first file, may
// not be written over by any of its files, and is identified by all of them.
func TestScenes(t *testing.T) {
	d := t.TempDir()
	for _, n := range []string{"lwp_201901.nc", "reff_201901.nc", "odd+name.nc"} {
		touch(t, filepath.Join(d, n), "x")
	}
	lwp, re := filepath.Join(d, "lwp_201901.nc"), filepath.Join(d, "reff_201901.nc")
	if got := SceneParts(lwp + "+" + re); fmt.Sprint(got) != fmt.Sprint([]string{lwp, re}) {
		t.Fatalf("SceneParts = %q", got)
	}
	odd := filepath.Join(d, "odd+name.nc") // an existing file with + in its name is one file
	if got := SceneParts(odd); len(got) != 1 {
		t.Fatalf("SceneParts(%s) = %q", odd, got)
	}
	if got := SceneParts(lwp + "+" + filepath.Join(d, "nope.nc")); len(got) != 1 {
		t.Fatalf("a scene with a missing part split: %q", got)
	}
	list := filepath.Join(d, "scenes.txt")
	touch(t, list, "lwp_201901.nc+reff_201901.nc\nodd+name.nc\n")
	got, err := ExpandInputs([]string{"@" + list, lwp + "+" + re})
	if err != nil {
		t.Fatal(err)
	}
	if want := []string{lwp + "+" + re, odd}; fmt.Sprint(got) != fmt.Sprint(want) {
		t.Fatalf("got %q\nwant %q", got, want)
	}
	if n, err := OutputName(DefaultPattern, lwp+"+"+re, 0); err != nil || n != "lwp_201901_warmrain.nc" {
		t.Fatalf("scene output name %q, %v", n, err)
	}
	if _, err := PlanOutputs([]string{lwp + "+" + re}, d, "reff_201901.nc"); err == nil || !strings.Contains(err.Error(), "itself an input") {
		t.Fatalf("output over the second file of a scene: %v", err)
	}
	id, err := InputIdentity(lwp+"+"+re, false)
	if err != nil || len(id.Files) != 2 || id.Path != lwp || !id.Matches(id.String()) {
		t.Fatalf("identity %+v, %v", id, err)
	}
	later := time.Now().Add(time.Hour)
	os.Chtimes(re, later, later)
	if id2, _ := InputIdentity(lwp+"+"+re, false); id2.Matches(id.String()) {
		t.Fatal("a changed second file still matches")
	}
	if one, _ := InputIdentity(lwp, false); one.Matches(id.String()) || id.Matches(one.String()) {
		t.Fatal("the first file alone matches the scene")
	}
}
