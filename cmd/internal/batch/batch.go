// Package batch holds the archive machinery of warmrain process: expanding
// the input list, naming outputs, sharding files across batch tasks, the run
// manifest and the identity used to resume. It does no NetCDF I/O.
package batch

import (
	"bufio"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
)

// ExpandInputs turns command-line arguments into the list of inputs:
// a plain path or URL is taken as is, an argument with glob characters that
// is not itself an existing path is expanded (sorted; no match is an error;
// the shell has already expanded unquoted patterns, so a file named
// "day[1].nc" given by the shell is taken as that file, never globbed again), and "@FILE" reads one input per
// line from FILE (blank lines and lines starting with # are skipped; relative
// paths are relative to the list file's folder). Duplicates are removed, the
// first occurrence kept. The order is the order given. An input may be a
// scene of several files joined with "+" (see SceneParts), in arguments and
// in list lines alike.
func ExpandInputs(args []string) ([]string, error) {
	var out []string
	seen := map[string]bool{}
	add := func(p string) {
		key := p
		if !isURL(p) {
			if abs, err := filepath.Abs(p); err == nil {
				key = abs
			}
		}
		if !seen[key] {
			seen[key] = true
			out = append(out, p)
		}
	}
	for _, a := range args {
		switch {
		case strings.HasPrefix(a, "@"):
			list, err := readList(a[1:])
			if err != nil {
				return nil, err
			}
			for _, p := range list {
				add(p)
			}
		case !isURL(a) && strings.ContainsAny(a, "*?[") && !exists(a):
			m, err := filepath.Glob(a)
			if err != nil {
				return nil, fmt.Errorf("input pattern %q: %v", a, err)
			}
			if len(m) == 0 {
				return nil, fmt.Errorf("input pattern %q matches no file", a)
			}
			sort.Strings(m)
			for _, p := range m {
				add(p)
			}
		default:
			add(a)
		}
	}
	return out, nil
}

func readList(path string) ([]string, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("input list: %w", err)
	}
	defer f.Close()
	dir := filepath.Dir(path)
	var out []string
	sc := bufio.NewScanner(f)
	sc.Buffer(make([]byte, 64<<10), 1<<20)
	for sc.Scan() {
		line := strings.TrimSpace(sc.Text())
		if line == "" || strings.HasPrefix(line, "#") {
			continue
		}
		parts := []string{line}
		if strings.Contains(line, "+") && !exists(filepath.Join(dir, line)) && !exists(line) {
			parts = strings.Split(line, "+")
		}
		for i, p := range parts {
			if !isURL(p) && !filepath.IsAbs(p) {
				parts[i] = filepath.Join(dir, p)
			}
		}
		out = append(out, strings.Join(parts, "+"))
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("input list %s: %w", path, err)
	}
	return out, nil
}

func isURL(s string) bool { return strings.Contains(s, "://") }

func exists(p string) bool { _, err := os.Stat(p); return err == nil }

// SceneParts splits an input into the files of its scene: an input that
// exists (or a URL) is one file; otherwise, when every part of it split at
// "+" exists, those parts ("lwp.nc+re.nc": one scene, one variable per file,
// as CMIP/CFMIP model output and some level-2 products are written). The
// first part names the scene's output; every part counts in its identity.
func SceneParts(input string) []string {
	if isURL(input) || !strings.Contains(input, "+") || exists(input) {
		return []string{input}
	}
	parts := strings.Split(input, "+")
	for _, p := range parts {
		if p == "" || (!isURL(p) && !exists(p)) {
			return []string{input}
		}
	}
	return parts
}

// LocalPath returns the file-system path behind an input: the path itself, or
// the path of a file:// URL without its fragment (NCZarr stores).
func LocalPath(in string) string {
	if !isURL(in) {
		return in
	}
	s := in
	if i := strings.IndexByte(s, '#'); i >= 0 {
		s = s[:i]
	}
	if strings.HasPrefix(s, "file://") {
		return strings.TrimPrefix(s, "file://")
	}
	return ""
}

// relPath is the {relpath} placeholder's value for local path p.
func relPath(p string) string {
	p = filepath.Clean(p)
	if abs, err := filepath.Abs(p); err == nil {
		p = abs
		if wd, err := os.Getwd(); err == nil {
			if r, err := filepath.Rel(wd, abs); err == nil && r != ".." && !strings.HasPrefix(r, ".."+string(filepath.Separator)) {
				p = r
			}
		}
	}
	p = strings.TrimSuffix(p, filepath.Ext(p))
	parts := strings.FieldsFunc(p, func(r rune) bool { return r == filepath.Separator })
	return strings.Join(parts, "_")
}

// DefaultPattern is the default output name pattern.
const DefaultPattern = "{stem}_warmrain.nc"

// OutputName applies a name pattern to an input. Placeholders: {stem} (file
// name without its last extension), {name} (file name), {parent} (name of the
// input's folder), {index} (position in the full input list, from 0),
// {relpath} (the input's path relative to the working directory, or its
// absolute path outside it, without the last extension, folders joined by
// '_': 2019/jan.nc gives 2019_jan, so that inputs of the same name in
// different folders never share an output).
func OutputName(pattern, input string, index int) (string, error) {
	input = SceneParts(input)[0] // a scene is named by its first file
	p := LocalPath(input)
	if p == "" {
		p = input
	}
	p = strings.TrimRight(p, "/")
	name := filepath.Base(p)
	stem := strings.TrimSuffix(name, filepath.Ext(name))
	parent := filepath.Base(filepath.Dir(p))
	r := strings.NewReplacer("{stem}", stem, "{name}", name, "{parent}", parent, "{index}", strconv.Itoa(index), "{relpath}", relPath(p))
	out := r.Replace(pattern)
	if strings.ContainsAny(out, "{}") {
		return "", fmt.Errorf("output name pattern %q: unknown placeholder (known: {stem} {name} {parent} {relpath} {index})", pattern)
	}
	if out == "" || strings.Contains(out, "/") || out == "." || out == ".." {
		return "", fmt.Errorf("output name pattern %q gives %q for %s: a name must be a plain file name", pattern, out, input)
	}
	return out, nil
}

// PlanOutputs maps every input to an output path in dir with the pattern and
// fails, before any work, if two inputs would share an output or an output
// would be one of the inputs.
func PlanOutputs(inputs []string, dir, pattern string) ([]string, error) {
	outs := make([]string, len(inputs))
	byOut := map[string]int{}
	ins := map[string]bool{}
	for _, scene := range inputs {
		for _, in := range SceneParts(scene) {
			if lp := LocalPath(in); lp != "" {
				if a, err := filepath.Abs(lp); err == nil {
					ins[a] = true
				}
			}
		}
	}
	for i, in := range inputs {
		n, err := OutputName(pattern, in, i)
		if err != nil {
			return nil, err
		}
		o := filepath.Join(dir, n)
		a, _ := filepath.Abs(o)
		if j, dup := byOut[a]; dup {
			return nil, fmt.Errorf("inputs %s and %s would both be written to %s; use a name pattern with {relpath}, {parent} or {index}", inputs[j], in, o)
		}
		if ins[a] {
			return nil, fmt.Errorf("output %s for input %s is itself an input; choose another folder or name pattern", o, in)
		}
		byOut[a] = i
		outs[i] = o
	}
	return outs, nil
}

// Shard is one slice of the work: files whose index i in the sorted input
// list has i % Count == Index.
type Shard struct {
	Index, Count int
	Source       string // "--shard", "slurm" or "" (no sharding)
}

// ParseShard parses "i/n" with 0 <= i < n.
func ParseShard(s string) (Shard, error) {
	a, b, ok := strings.Cut(s, "/")
	i, err1 := strconv.Atoi(strings.TrimSpace(a))
	n, err2 := strconv.Atoi(strings.TrimSpace(b))
	if !ok || err1 != nil || err2 != nil || n < 1 || i < 0 || i >= n {
		return Shard{}, fmt.Errorf("shard %q: want i/n with 0 <= i < n, e.g. 0/4", s)
	}
	return Shard{Index: i, Count: n, Source: "--shard"}, nil
}

// SlurmShard derives the shard from the Slurm job-array variables in getenv.
// SLURM_ARRAY_TASK_ID is the array index, not always 0..n-1: for an array
// that is an arithmetic range (MIN..MAX with a step such that COUNT tasks
// fill it) the shard is (ID-MIN)/STEP of COUNT. For any other array (a list
// such as 1,5,9) the shard count must be given (count > 0) and the shard is
// ID % count; the caller must then use consecutive IDs 0..count-1 or accept
// that coverage is theirs to ensure. ok is false when no array is running.
func SlurmShard(getenv func(string) string, count int) (sh Shard, ok bool, err error) {
	idS := getenv("SLURM_ARRAY_TASK_ID")
	if idS == "" {
		return Shard{}, false, nil
	}
	num := func(k string) (int, error) {
		v := getenv(k)
		n, err := strconv.Atoi(v)
		if err != nil {
			return 0, fmt.Errorf("Slurm variable %s=%q is not an integer", k, v)
		}
		return n, nil
	}
	id, err := num("SLURM_ARRAY_TASK_ID")
	if err != nil {
		return Shard{}, true, err
	}
	if count > 0 {
		if id < 0 {
			return Shard{}, true, fmt.Errorf("SLURM_ARRAY_TASK_ID=%d is negative", id)
		}
		return Shard{Index: id % count, Count: count, Source: "slurm"}, true, nil
	}
	n, err := num("SLURM_ARRAY_TASK_COUNT")
	if err != nil {
		return Shard{}, true, err
	}
	lo, err := num("SLURM_ARRAY_TASK_MIN")
	if err != nil {
		return Shard{}, true, err
	}
	hi, err := num("SLURM_ARRAY_TASK_MAX")
	if err != nil {
		return Shard{}, true, err
	}
	step := 1
	if getenv("SLURM_ARRAY_TASK_STEP") != "" {
		if step, err = num("SLURM_ARRAY_TASK_STEP"); err != nil {
			return Shard{}, true, err
		}
	}
	if step < 1 || n < 1 || (hi-lo)%step != 0 || (hi-lo)/step+1 != n || (id-lo)%step != 0 {
		return Shard{}, true, fmt.Errorf("the Slurm array (ids %d..%d, %d tasks) is not a plain range; give the shard count with --shard-count N and use array ids 0..N-1", lo, hi, n)
	}
	return Shard{Index: (id - lo) / step, Count: n, Source: "slurm"}, true, nil
}

// Select returns the indices of the sorted list of inputs that belong to the
// shard. The assignment depends only on the set of inputs, not on their
// order on the command line, so every task of an array agrees on it.
func (s Shard) Select(inputs []string) []int {
	order := make([]int, len(inputs))
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(a, b int) bool { return inputs[order[a]] < inputs[order[b]] })
	if s.Count <= 1 {
		sort.Ints(order)
		return order
	}
	var out []int
	for rank, i := range order {
		if rank%s.Count == s.Index {
			out = append(out, i)
		}
	}
	sort.Ints(out)
	return out
}

// Record is one line of the run manifest (JSON lines).
type Record struct {
	Time             string  `json:"time"`
	Input            string  `json:"input"`
	Output           string  `json:"output"`
	Status           string  `json:"status"` // done, skipped, failed, interrupted
	Columns          int64   `json:"columns"`
	ScreenedFraction float64 `json:"screened_fraction"`
	Screened         int64   `json:"screened,omitempty"` // columns screened (ScreenedFraction is rounded)
	Seconds          float64 `json:"seconds"`
	Shard            string  `json:"shard,omitempty"`
	Task             string  `json:"task,omitempty"` // batch task: Slurm job and array task id
	Digest           string  `json:"parameters_digest,omitempty"`
	Build            string  `json:"build,omitempty"`
	Note             string  `json:"note,omitempty"` // why an existing output was replaced
	Signal           string  `json:"signal,omitempty"`
	Error            string  `json:"error,omitempty"`

	// Inputs lists every file of a scene joined with + (Input is then the
	// first of them); absent for a single file.
	Inputs []string `json:"inputs,omitempty"`
	// ScreenedBy counts the columns each of the product's quality masks and flag
	// codes removed, in words ("sea_ice (flag code of r_e cer): 40").
	ScreenedBy []string `json:"screened_by,omitempty"`
	// ScreenedQC counts the screened columns by the QC bits that screened them, named by
	// their flag_meanings words ("thin_cloud: 1200"); a column may count under several.
	ScreenedQC []string `json:"screened_qc,omitempty"`
}

// Identity describes an input for the resume check.
type Identity struct {
	Path    string `json:"path"`
	Size    int64  `json:"size"`
	ModTime string `json:"mtime"`
	SHA256  string `json:"sha256,omitempty"`
	// Files holds the identity of every file of a scene joined with + (the
	// fields above are then the first file's).
	Files []Identity `json:"files,omitempty"`
}

// InputIdentity returns the identity of an input: its absolute path, size and
// modification time (for a directory store: the sum of its files' sizes and
// their latest time), plus the SHA-256 of its bytes when checksum is set. A
// scene joined with + has the identity of its first file and records the
// identity of every file in Files.
func InputIdentity(input string, checksum bool) (Identity, error) {
	parts := SceneParts(input)
	if len(parts) == 1 {
		return fileIdentity(input, checksum)
	}
	var id Identity
	for _, p := range parts {
		f, err := fileIdentity(p, checksum)
		if err != nil {
			return Identity{}, err
		}
		id.Files = append(id.Files, f)
	}
	id.Path, id.Size, id.ModTime, id.SHA256 = id.Files[0].Path, id.Files[0].Size, id.Files[0].ModTime, id.Files[0].SHA256
	return id, nil
}

func fileIdentity(input string, checksum bool) (Identity, error) {
	p := LocalPath(input)
	if p == "" {
		return Identity{Path: input}, nil
	}
	abs, err := filepath.Abs(p)
	if err != nil {
		return Identity{}, err
	}
	st, err := os.Stat(abs)
	if err != nil {
		return Identity{}, err
	}
	id := Identity{Path: abs}
	h := sha256.New()
	if !st.IsDir() {
		id.Size = st.Size()
		id.ModTime = st.ModTime().UTC().Format("2006-01-02T15:04:05.000000000Z")
		if checksum {
			if err := hashFile(h, abs); err != nil {
				return Identity{}, err
			}
			id.SHA256 = hex.EncodeToString(h.Sum(nil))
		}
		return id, nil
	}
	latest := st.ModTime()
	err = filepath.Walk(abs, func(path string, fi os.FileInfo, err error) error {
		if err != nil {
			return err
		}
		if fi.ModTime().After(latest) {
			latest = fi.ModTime()
		}
		if fi.Mode().IsRegular() {
			id.Size += fi.Size()
			if checksum {
				io.WriteString(h, path)
				return hashFile(h, path)
			}
		}
		return nil
	})
	if err != nil {
		return Identity{}, err
	}
	id.ModTime = latest.UTC().Format("2006-01-02T15:04:05.000000000Z")
	if checksum {
		id.SHA256 = hex.EncodeToString(h.Sum(nil))
	}
	return id, nil
}

func hashFile(h io.Writer, path string) error {
	f, err := os.Open(path)
	if err != nil {
		return err
	}
	defer f.Close()
	_, err = io.Copy(h, f)
	return err
}

// String gives the identity as the compact JSON stored in the output's
// provenance attribute.
func (id Identity) String() string {
	b, _ := json.Marshal(id)
	return string(b)
}

// Matches reports whether a stored identity (from an output's provenance)
// describes the same input as id. When id carries a checksum only the
// checksum counts (a stored identity without one does not match); otherwise
// path, size and modification time must agree.
func (id Identity) Matches(stored string) bool {
	var s Identity
	if json.Unmarshal([]byte(stored), &s) != nil {
		return false
	}
	return id.matches(s)
}

func (id Identity) matches(s Identity) bool {
	if len(id.Files) != len(s.Files) {
		return false
	}
	for i := range id.Files {
		if !id.Files[i].matches(s.Files[i]) {
			return false
		}
	}
	if id.SHA256 != "" {
		// Checksums asked for: an output recorded without one is not known to
		// be of these bytes.
		return id.SHA256 == s.SHA256
	}
	return s.Path == id.Path && s.Size == id.Size && s.ModTime == id.ModTime
}

// Digest returns a short stable digest of the key=value parameter pairs.
func Digest(pairs [][2]string) string {
	h := sha256.New()
	for _, kv := range pairs {
		fmt.Fprintf(h, "%s=%s\n", kv[0], kv[1])
	}
	return hex.EncodeToString(h.Sum(nil))[:16]
}
