package microphys

import (
	"bufio"
	"io/fs"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// Pointers in comments, tests, scripts and Markdown must lead somewhere a newcomer can follow:
// a page of doc/ (with an anchor that exists), a file of the repository, or a paper by its key
// in references.go (DEVELOPERS.md, conventions). These patterns name places outside the
// repository: the team's former working sheets, a ticket tracker, a style file that is not in
// the repository, and the machine's shared folders.
var outsidePointers = []*regexp.Regexp{
	regexp.MustCompile(`(?i)physics[ ]notes`),
	regexp.MustCompile(`(?i)\bphysics\.md\b`),
	regexp.MustCompile(`(?i)\bcf\.md\b`),
	regexp.MustCompile(`(?i)\bS[T]YLE[.]md\b`),
	regexp.MustCompile(`(?i)\b(iss[u]e|ticket|tracker|bug)s?\s*#?\s*\d+`),
	regexp.MustCompile(`(?i)\b(iss[u]e|ticket)s?\s+item\b`),
	regexp.MustCompile(`/work/`),
	regexp.MustCompile(`shared/reference`),
}

// docPointer matches doc/page.md#anchor and doc/page.md §anchor.
var docPointer = regexp.MustCompile(`\bdoc/([A-Za-z0-9_-]+\.md)(?:#|\s§)([A-Za-z0-9_.-]+[A-Za-z0-9_-])`)

// docPage matches any mention of a page of doc/.
var docPage = regexp.MustCompile(`\bdoc/([A-Za-z0-9_-]+\.md)\b`)

// anchorID matches the stable anchors of the doc pages.
var anchorID = regexp.MustCompile(`<a id="([A-Za-z0-9_-]+)"></a>`)

// repoFiles returns the files of the repository whose comments and text the pointer test
// reads: Go sources and tests, Markdown, shell scripts, the Makefile and the CI scripts
// (testdata, generated and hidden trees other than .ci are skipped).
func repoFiles(t *testing.T, root string) []string {
	t.Helper()
	var files []string
	err := filepath.WalkDir(root, func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		name := d.Name()
		if d.IsDir() {
			if path != root && (name == "testdata" || name == "bin" || name == "demo-output" ||
				(strings.HasPrefix(name, ".") && name != ".ci")) {
				return filepath.SkipDir
			}
			return nil
		}
		rel, _ := filepath.Rel(root, path)
		switch {
		case strings.HasSuffix(name, ".go"), strings.HasSuffix(name, ".md"),
			strings.HasSuffix(name, ".sh"), name == "Makefile",
			strings.HasPrefix(filepath.ToSlash(rel), ".ci/"):
			files = append(files, path)
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return files
}

// TestPointersInsideRepository checks, over every Go file, Markdown page, shell script, the
// Makefile and the CI scripts of the repository, that no line points outside the repository
// (outsidePointers; in scripts only comment lines count, in Go and Markdown every line, since
// test messages name their sources too), that every doc/page.md mentioned exists, and that every
// doc/page.md#anchor (or doc/page.md §anchor) names an anchor of that page.
func TestPointersInsideRepository(t *testing.T) {
	t.Parallel()
	root := ".."
	if _, err := os.Stat(filepath.Join(root, "go.mod")); err != nil {
		t.Fatalf("module root not found beside microphys: %v", err)
	}
	anchors := map[string]map[string]bool{} // page -> anchors; nil map: page missing
	pageAnchors := func(page string) map[string]bool {
		if a, ok := anchors[page]; ok {
			return a
		}
		b, err := os.ReadFile(filepath.Join(root, "doc", page))
		if err != nil {
			anchors[page] = nil
			return nil
		}
		a := map[string]bool{}
		for _, m := range anchorID.FindAllStringSubmatch(string(b), -1) {
			a[m[1]] = true
		}
		anchors[page] = a
		return a
	}
	self, _ := filepath.Abs("pointers_test.go")
	files := repoFiles(t, root)
	if len(files) < 50 {
		t.Fatalf("only %d files found under %s; the walk is broken", len(files), root)
	}
	nPointers := 0
	for _, f := range files {
		if abs, _ := filepath.Abs(f); abs == self {
			continue // this file names the forbidden patterns
		}
		fh, err := os.Open(f)
		if err != nil {
			t.Fatal(err)
		}
		script := !strings.HasSuffix(f, ".go") && !strings.HasSuffix(f, ".md")
		sc := bufio.NewScanner(fh)
		sc.Buffer(make([]byte, 1<<20), 1<<20)
		for ln := 1; sc.Scan(); ln++ {
			line := sc.Text()
			if script && !strings.HasPrefix(strings.TrimSpace(line), "#") {
				// Script code may name where CI finds its data (the CF table); only its
				// comments are pointers.
				continue
			}
			for _, re := range outsidePointers {
				if m := re.FindString(line); m != "" {
					t.Errorf("%s:%d: %q points outside the repository (point to doc/ or a paper instead)", f, ln, m)
				}
			}
			for _, m := range docPage.FindAllStringSubmatch(line, -1) {
				if pageAnchors(m[1]) == nil {
					t.Errorf("%s:%d: doc/%s does not exist", f, ln, m[1])
				}
			}
			for _, m := range docPointer.FindAllStringSubmatch(line, -1) {
				nPointers++
				if a := pageAnchors(m[1]); a != nil && !a[m[2]] {
					t.Errorf("%s:%d: doc/%s has no anchor %q", f, ln, m[1], m[2])
				}
			}
		}
		fh.Close()
		if err := sc.Err(); err != nil {
			t.Fatalf("%s: %v", f, err)
		}
	}
	if nPointers == 0 {
		t.Error("no doc/page.md#anchor pointer found: the pattern is broken")
	}
}

// TestDocAnchorsUnique checks that each anchor of a doc page is defined once, so a pointer
// has one target.
func TestDocAnchorsUnique(t *testing.T) {
	t.Parallel()
	pages, err := filepath.Glob(filepath.Join("..", "doc", "*.md"))
	if err != nil || len(pages) == 0 {
		t.Fatalf("no doc pages found (%v)", err)
	}
	for _, p := range pages {
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		seen := map[string]bool{}
		for _, m := range anchorID.FindAllStringSubmatch(string(b), -1) {
			if seen[m[1]] {
				t.Errorf("%s: anchor %q defined twice", p, m[1])
			}
			seen[m[1]] = true
		}
	}
}
