package batch

import (
	"bufio"
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"syscall"
)

// MaxErrorText is the longest error text a manifest record keeps; a longer
// one is cut (the full text goes to stderr), so that every record stays one
// short line.
const MaxErrorText = 2000

// Truncated returns s cut to at most n bytes (at a rune boundary), marked.
func Truncated(s string, n int) string {
	if len(s) <= n {
		return s
	}
	const mark = " [... cut; full text on stderr]"
	cut := max(0, n-len(mark))
	for cut > 0 && cut < len(s) && s[cut]&0xC0 == 0x80 {
		cut--
	}
	return s[:cut] + mark
}

// Manifest appends records to a JSON-lines file: each record is one write of
// one whole line followed by an fsync, so that concurrent tasks appending to
// the same file never interleave lines and a record that was reported
// written is on disk.
type Manifest struct {
	f    *os.File
	path string
}

// OpenManifest opens (creating if needed) a manifest for appending. It
// refuses a path that is one of the inputs (inputs are never opened for
// writing), a path that is not a regular file, and an existing file that is
// not a manifest (JSON lines). A partial last line left by an interrupted or
// short write is ended with a newline, so that the next record starts on a
// line of its own; warn says so (ReadManifest skips such a line).
func OpenManifest(path string, inputs []string) (m *Manifest, warn string, err error) {
	if in, ok := sameAsInput(path, inputs); ok {
		return nil, "", fmt.Errorf("manifest %s is the input %s; inputs are never written to: choose another manifest path", path, in)
	}
	if st, err := os.Lstat(path); err == nil {
		if !st.Mode().IsRegular() {
			return nil, "", fmt.Errorf("manifest %s exists and is not a regular file; choose another manifest path", path)
		}
		if st.Size() > 0 {
			first, last, err := ends(path)
			if err != nil {
				return nil, "", fmt.Errorf("manifest: %w", err)
			}
			if first != '{' {
				return nil, "", fmt.Errorf("manifest %s exists and is not a warmrain manifest (JSON lines); it is kept: choose another manifest path", path)
			}
			if last != '\n' {
				warn = fmt.Sprintf("manifest %s ended with a partial record (an interrupted or short write); it is left as an unreadable line, which readers skip", path)
			}
		}
	}
	f, err := os.OpenFile(path, os.O_WRONLY|os.O_APPEND|os.O_CREATE|syscall.O_NONBLOCK, 0o644)
	if err != nil {
		return nil, "", fmt.Errorf("manifest: %w", err)
	}
	if st, err := f.Stat(); err != nil || !st.Mode().IsRegular() {
		f.Close()
		return nil, "", fmt.Errorf("manifest %s is not a regular file; choose another manifest path", path)
	}
	m = &Manifest{f: f, path: path}
	if warn != "" {
		if _, err := f.Write([]byte("\n")); err != nil {
			f.Close()
			return nil, "", fmt.Errorf("manifest %s: ending its partial last line: %w", path, err)
		}
	}
	return m, warn, nil
}

// ends returns the first and last byte of a non-empty file.
func ends(path string) (first, last byte, err error) {
	f, err := os.OpenFile(path, os.O_RDONLY|syscall.O_NONBLOCK, 0)
	if err != nil {
		return 0, 0, err
	}
	defer f.Close()
	var b [1]byte
	if _, err := f.ReadAt(b[:], 0); err != nil {
		return 0, 0, err
	}
	first = b[0]
	st, err := f.Stat()
	if err != nil {
		return 0, 0, err
	}
	if _, err := f.ReadAt(b[:], st.Size()-1); err != nil {
		return 0, 0, err
	}
	return first, b[0], nil
}

// sameAsInput reports whether path names one of the inputs (by path or as
// the same file, through links).
func sameAsInput(path string, inputs []string) (string, bool) {
	abs, _ := filepath.Abs(path)
	st, statErr := os.Stat(path)
	var files []string
	for _, in := range inputs {
		files = append(files, SceneParts(in)...)
	}
	for _, in := range files {
		lp := LocalPath(in)
		if lp == "" {
			continue
		}
		if a, _ := filepath.Abs(lp); a == abs {
			return in, true
		}
		if statErr == nil {
			if ist, err := os.Stat(lp); err == nil && os.SameFile(st, ist) {
				return in, true
			}
		}
	}
	return "", false
}

// Add writes one record as one whole line and syncs it to disk. An error
// means the record may be missing (the caller's exit code must say so).
func (m *Manifest) Add(r Record) error {
	if m == nil {
		return nil
	}
	b, err := json.Marshal(r)
	if err != nil {
		return err
	}
	b = append(b, '\n')
	n, err := m.f.Write(b)
	if err == nil && n < len(b) {
		err = io.ErrShortWrite
	}
	if err == nil {
		err = m.f.Sync()
	}
	if err != nil {
		return fmt.Errorf("manifest %s: the record of %s was not written: %w", m.path, r.Input, err)
	}
	return nil
}

// Close closes the manifest file.
func (m *Manifest) Close() error {
	if m == nil {
		return nil
	}
	return m.f.Close()
}

// ReadManifest reads every record of a manifest. Lines that are not a whole
// record (a partial line of an interrupted write) are skipped and counted.
func ReadManifest(r io.Reader) (recs []Record, skipped int, err error) {
	br := bufio.NewReader(r)
	for {
		line, err := br.ReadBytes('\n')
		if t := bytes.TrimSpace(line); len(t) > 0 {
			var rec Record
			if json.Unmarshal(t, &rec) != nil || rec.Status == "" {
				skipped++
			} else {
				recs = append(recs, rec)
			}
		}
		if errors.Is(err, io.EOF) {
			return recs, skipped, nil
		}
		if err != nil {
			return recs, skipped, err
		}
	}
}

// File returns the manifest's open file (to pass to a worker process).
func (m *Manifest) File() *os.File { return m.f }

// ManifestOn appends records to an already open manifest file (a worker
// process's inherited descriptor); name is used in error messages.
func ManifestOn(f *os.File, name string) *Manifest { return &Manifest{f: f, path: name} }
