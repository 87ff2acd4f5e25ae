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
