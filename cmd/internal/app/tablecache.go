package app

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"io"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"sync"
	"sync/atomic"
	"syscall"

	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/microphys"
)

// The table cache. microphys.NewModel integrates its collector and evaporation tables
// (about a second of CPU); every warmrain process that needs them would pay that again.
// newModel keeps the tables' bytes (microphys.Model.Tables) in a cache folder and builds
// from them when they are there (microphys.NewModelTables: ~10 ms, and it re-integrates a
// few nodes to check them).
//
// Safety: the file name is a hash of the executable's own bytes and of the parameters'
// TableKey, so another build of warmrain, or other parameters, never read the tables of
// this one; NewModelTables checks the key, the sizes, a hash of the contents and sampled
// nodes again, and anything refused is rebuilt and replaced. Files are written under a
// temporary name and renamed, so concurrent processes (a --jobs batch, a Slurm array on a
// shared home) see whole files or none. A cache that cannot be read or written is not an
// error: the tables are then built as without a cache.
//
// Where: $WARMRAIN_TABLE_CACHE if set ("off" disables the cache), else the user cache
// folder (os.UserCacheDir: $XDG_CACHE_HOME or ~/.cache) + /warmrain. At most
// tableCacheKeep files are kept (the oldest go first).

const (
	tableCacheEnv  = "WARMRAIN_TABLE_CACHE"
	tableCacheKeep = 16
	tableCacheMax  = 16 << 20 // bytes: a larger file is not ours
)

// tableBuilds counts the tables newModel integrated because the cache had none (for tests).
var tableBuilds atomic.Int64

var exeHash = sync.OnceValue(func() string {
	exe, err := os.Executable()
	if err != nil {
		return ""
	}
	f, err := os.Open(exe)
	if err != nil {
		return ""
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return ""
	}
	return hex.EncodeToString(h.Sum(nil))
})

// tableCacheDir is the cache folder, or "" when the cache is off or has no place.
func tableCacheDir() string {
	if v, ok := os.LookupEnv(tableCacheEnv); ok {
		if v == "off" || v == "" {
			return ""
		}
		return v
	}
	d, err := os.UserCacheDir()
	if err != nil {
		return ""
	}
	return filepath.Join(d, "warmrain")
}

// tableCachePath is the cache file of parameters p in dir, or "" when there is none.
func tableCachePath(dir string, p microphys.Params) string {
	key := p.TableKey()
	eh := exeHash()
	if dir == "" || key == "" || eh == "" {
		return ""
	}
	h := sha256.Sum256([]byte(eh + "\n" + key))
	return filepath.Join(dir, "tables-"+hex.EncodeToString(h[:16])+".bin")
}

// newModel is microphys.NewModel through the table cache.
func newModel(p microphys.Params) (*microphys.Model, error) {
	path := tableCachePath(tableCacheDir(), p)
	if path == "" {
		return microphys.NewModel(p)
	}
	if data, err := readSmall(path, tableCacheMax); err == nil {
		if m, err := microphys.NewModelTables(p, data); err == nil {
			return m, nil
		}
	}
	m, err := microphys.NewModel(p)
	if err != nil {
		return nil, err
	}
	tableBuilds.Add(1)
	saveTables(path, m.Tables())
	return m, nil
}

// readSmall reads a regular file of at most max bytes. Anything else at the
// path (a FIFO, a device) is refused without blocking: the open does not wait
// for a writer.
func readSmall(path string, max int64) ([]byte, error) {
	f, err := os.OpenFile(path, os.O_RDONLY|syscall.O_NONBLOCK, 0)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	if st, err := f.Stat(); err != nil || !st.Mode().IsRegular() {
		return nil, errors.New("not a regular file")
	}
	data, err := io.ReadAll(io.LimitReader(f, max+1))
	if err != nil {
		return nil, err
	}
	if int64(len(data)) > max {
		return nil, errors.New("too large")
	}
	return data, nil
}

// saveTables writes data to path through a temporary file and a rename; failures are
// ignored (the cache is an optimisation). It then keeps the tableCacheKeep newest files.
func saveTables(path string, data []byte) {
	if len(data) == 0 {
		return
	}
	dir := filepath.Dir(path)
	if os.MkdirAll(dir, 0o755) != nil {
		return
	}
	// replace: another process may have saved the same tables meanwhile
	if grid.WriteFileAtomic(path, data, true) != nil {
		return
	}
	pruneTableCache(dir)
}

// pruneTableCache removes the oldest tables-*.bin files beyond tableCacheKeep.
func pruneTableCache(dir string) {
	ents, err := os.ReadDir(dir)
	if err != nil {
		return
	}
	type file struct {
		name string
		mod  int64
	}
	var files []file
	for _, e := range ents {
		if !e.Type().IsRegular() || !strings.HasPrefix(e.Name(), "tables-") || !strings.HasSuffix(e.Name(), ".bin") {
			continue
		}
		if info, err := e.Info(); err == nil {
			files = append(files, file{e.Name(), info.ModTime().UnixNano()})
		}
	}
	if len(files) <= tableCacheKeep {
		return
	}
	sort.Slice(files, func(a, b int) bool { return files[a].mod > files[b].mod })
	for _, f := range files[tableCacheKeep:] {
		os.Remove(filepath.Join(dir, f.name))
	}
}
