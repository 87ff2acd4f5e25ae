package grid

import (
	"crypto/rand"
	"encoding/hex"
	"errors"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
)

// WriteAtomic makes the file path appear whole or not at all: write fills a
// temporary file in path's folder (createTemp: an empty file named
// ".NAME.tmp-HOST-PID-RANDOM", which write may truncate or re-create), which is
// then synced and moved to path (placeFile), and the folder synced. With replace
// false an existing path is never replaced, not even one that appears while
// write runs (the error wraps ErrExists); with replace true it is. On any error
// the temporary file is removed and path is as it was. Every whole-file writer
// of the repository (WriteDataset, Output.Commit's steps, the summary's
// pictures, the table cache, the sample and benchmark generators) goes through
// here or through createTemp and placeFile.
func WriteAtomic(path string, replace bool, write func(tmp string) error) error {
	tmp, err := createTemp(path)
	if err != nil {
		return err
	}
	if err := write(tmp); err != nil {
		os.Remove(tmp)
		return err
	}
	return commitTemp(tmp, path, replace)
}

// commitTemp is the second half of WriteAtomic, for writers that fill their
// temporary file over several calls (DatasetWriter): it syncs the complete
// temporary file tmp, moves it to path (placeFile: no replace unless asked) and
// syncs the folder. On error tmp is removed.
func commitTemp(tmp, path string, replace bool) error {
	if f, err := os.Open(tmp); err == nil {
		serr := f.Sync()
		f.Close()
		if serr != nil {
			os.Remove(tmp)
			return &VarError{File: path, Problem: "sync failed: " + serr.Error(), Err: serr}
		}
	}
	if err := placeFile(tmp, path, replace); err != nil {
		os.Remove(tmp)
		var ve *VarError
		if errors.As(err, &ve) {
			return err
		}
		return &VarError{File: path, Problem: "cannot move the temporary file into place: " + err.Error(), Err: err}
	}
	if d, err := os.Open(filepath.Dir(path)); err == nil {
		d.Sync()
		d.Close()
	}
	return nil
}

// WriteFileAtomic is WriteAtomic for bytes already in memory (mode 0644).
func WriteFileAtomic(path string, data []byte, replace bool) error {
	return WriteAtomic(path, replace, func(tmp string) error { return os.WriteFile(tmp, data, 0o644) })
}

// createTemp makes the empty temporary file an output is written to before
// it is renamed into place: ".NAME.tmp-HOST-PID-RANDOM" in the output's
// folder. Temporary files of the same output left by a process of this host
// that no longer runs (a kill -9, a lost node's restarted task) are removed
// first; those of live processes, or of other hosts sharing the folder, are
// left alone.
func createTemp(path string) (string, error) {
	dir, base := filepath.Dir(path), filepath.Base(path)
	host := tempHost()
	prefix := "." + base + ".tmp-"
	removeStaleTemps(dir, prefix, host)
	var rb [6]byte
	rand.Read(rb[:])
	tmp := filepath.Join(dir, prefix+host+"-"+strconv.Itoa(os.Getpid())+"-"+hex.EncodeToString(rb[:]))
	f, err := os.OpenFile(tmp, os.O_CREATE|os.O_EXCL|os.O_WRONLY, 0o644)
	if err != nil {
		return "", &VarError{File: path, Problem: "cannot create a temporary file in the output folder: " + err.Error(), Err: err}
	}
	f.Close()
	return tmp, nil
}

// tempHost is the host name made safe for a file name ('-' is the separator).
func tempHost() string {
	h, err := os.Hostname()
	if err != nil || h == "" {
		h = "host"
	}
	return strings.Map(func(r rune) rune {
		if r == '-' || r == '/' || r == '.' {
			return '_'
		}
		return r
	}, h)
}

func removeStaleTemps(dir, prefix, host string) {
	matches, _ := filepath.Glob(filepath.Join(dir, globEscape(prefix)+"*"))
	for _, m := range matches {
		rest := strings.TrimPrefix(filepath.Base(m), prefix)
		parts := strings.Split(rest, "-")
		if len(parts) != 3 || parts[0] != host {
			continue
		}
		pid, err := strconv.Atoi(parts[1])
		if err != nil || pid <= 0 || pid == os.Getpid() {
			continue
		}
		if err := syscall.Kill(pid, 0); errors.Is(err, syscall.ESRCH) {
			os.Remove(m)
		}
	}
}

func globEscape(s string) string {
	var b strings.Builder
	for _, r := range s {
		if strings.ContainsRune(`*?[\`, r) {
			b.WriteRune('\\')
		}
		b.WriteRune(r)
	}
	return b.String()
}

// placeFile moves the complete temporary file tmp to its final name path.
// Unless replace is set it never replaces a file that is there, even one that
// appeared after every earlier check (another run writing the same output):
// the move is a hard link, which fails when the name exists, then the
// temporary name is removed. On a file system without hard links it falls
// back to a check and a rename. Errors wrap ErrExists when path was there.
func placeFile(tmp, path string, replace bool) error {
	if replace {
		return os.Rename(tmp, path)
	}
	err := os.Link(tmp, path)
	if err == nil {
		return os.Remove(tmp)
	}
	if errors.Is(err, os.ErrExist) {
		return errAppeared(path)
	}
	if errors.Is(err, syscall.EPERM) || errors.Is(err, syscall.ENOTSUP) || errors.Is(err, syscall.EOPNOTSUPP) || errors.Is(err, syscall.EMLINK) {
		if _, err := os.Lstat(path); err == nil {
			return errAppeared(path)
		}
		return os.Rename(tmp, path)
	}
	return err
}

func errAppeared(path string) error {
	return &VarError{File: path, Problem: "appeared while this output was written (another run writing the same output?); the file there is kept and this run's output discarded. Check which run wrote it, then rerun with --redo or --force to replace it", Err: ErrExists}
}
