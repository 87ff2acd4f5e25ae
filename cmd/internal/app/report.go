package app

import (
	"fmt"
	"io"
	"math/bits"
	"os"
	"sort"
	"strconv"
	"strings"
	"sync"
	"time"

	"github.com/warmrain/warmrain/cmd/internal/batch"
	"github.com/warmrain/warmrain/microphys"
)

// batchReport writes the messages of a batch: a start line (shard, number of files,
// parameters digest), one line per file with k of N, the rate and the time left, and a
// closing tally. Every line is a whole line (no carriage return), so that a batch log or
// a Slurm output file reads as well as a terminal. With --log the same lines are appended
// to that file.
type batchReport struct {
	stderr io.Writer
	log    io.Writer // nil without --log
	quiet  bool      // no line per file on stderr (the log still gets them)
	total  int
	done   int
	t0     time.Time
	shard  string
	mu     sync.Mutex
}

// openLog opens --log FILE for appending (created when missing).
func openLog(path string) (*os.File, error) {
	f, err := os.OpenFile(path, os.O_WRONLY|os.O_APPEND|os.O_CREATE, 0o644)
	if err != nil {
		return nil, fmt.Errorf("--log: %w", err)
	}
	return f, nil
}

// line writes one message line to stderr (unless perFile and quiet) and to the log.
func (b *batchReport) line(perFile bool, format string, a ...any) {
	s := "warmrain: " + fmt.Sprintf(format, a...) + "\n"
	if !(perFile && b.quiet) {
		io.WriteString(b.stderr, s)
	}
	if b.log != nil {
		io.WriteString(b.log, s)
	}
}

// start writes the start line.
func (b *batchReport) start(inputs int, digest string, jobs int) {
	b.t0 = time.Now()
	which := files(b.total)
	if b.shard != "" {
		which = fmt.Sprintf("shard %s: %d of %s", b.shard, b.total, files(inputs))
	}
	b.line(false, "start %s: %s, parameters digest %s, --jobs %d, warmrain %s", b.t0.UTC().Format(time.RFC3339), which, digest, jobs, Version())
}

// progress is the "k of N" prefix and the rate and time left after a file.
func (b *batchReport) progress() (prefix, rate string) {
	b.done++
	el := time.Since(b.t0)
	prefix = fmt.Sprintf("[%d/%d] ", b.done, b.total)
	perMin := float64(b.done) / el.Minutes()
	left := time.Duration(float64(el) / float64(b.done) * float64(b.total-b.done)).Round(time.Second)
	r := strconv.FormatFloat(perMin, 'g', 3, 64)
	if perMin >= 100 {
		r = strconv.FormatFloat(perMin, 'f', 0, 64)
	}
	rate = fmt.Sprintf("; %s files/min, %s left", r, left)
	if b.done == b.total {
		rate = fmt.Sprintf("; %s files/min", r)
	}
	return prefix, rate
}

// file writes the line of one file's record (report's words, with k of N, rate and time
// left when the batch has several files).
func (b *batchReport) file(r batch.Record, single bool) {
	b.mu.Lock()
	defer b.mu.Unlock()
	prefix, rate := "", ""
	if b.total > 1 {
		prefix, rate = b.progress()
	}
	in := r.Input
	if len(r.Inputs) > 1 {
		in = strings.Join(r.Inputs, "+")
	}
	switch r.Status {
	case "done":
		b.line(true, "%s%s -> %s: %d columns, %.1f %% screened, %.2f s%s", prefix, in, r.Output, r.Columns, 100*r.ScreenedFraction, r.Seconds, rate)
		if len(r.ScreenedBy) > 0 {
			b.line(true, "%s: screened by the product's quality information: %s", in, strings.Join(r.ScreenedBy, "; "))
		}
	case "skipped":
		b.line(true, "%s%s: complete output %s exists, skipped (--redo to process again)%s", prefix, in, r.Output, rate)
	case "interrupted":
		b.line(true, "%s%s: interrupted, no output written%s", prefix, in, rate)
	default:
		if !single { // a single file's error is the command's error, printed once
			b.line(true, "%s%s: failed: %s%s", prefix, in, r.Error, rate)
		}
	}
}

// finish writes the closing tally: files by status, columns, and the columns screened
// by reason (QC bits, and the product's masks and flag codes).
func (b *batchReport) finish(recs []batch.Record) {
	n := map[string]int{}
	var cols, screened int64
	byReason := map[string]int64{}
	var reasons []string
	add := func(lines []string) {
		for _, l := range lines {
			i := strings.LastIndex(l, ": ")
			if i < 0 {
				continue
			}
			c, err := strconv.ParseInt(l[i+2:], 10, 64)
			if err != nil {
				continue
			}
			k := l[:i]
			if _, ok := byReason[k]; !ok {
				reasons = append(reasons, k)
			}
			byReason[k] += c
		}
	}
	for _, r := range recs {
		n[r.Status]++
		if r.Status == "done" {
			cols += r.Columns
			screened += r.Screened
			add(r.ScreenedQC)
			add(r.ScreenedBy)
		}
	}
	which := ""
	if b.shard != "" {
		which = "shard " + b.shard + ": "
	}
	interrupted := n["interrupted"] + b.total - len(recs) // files never handed out
	b.line(false, "end %s: %s%d done, %d skipped, %d failed, %d interrupted of %s in %s; %d columns processed, %d screened",
		time.Now().UTC().Format(time.RFC3339), which, n["done"], n["skipped"], n["failed"], interrupted, files(b.total),
		time.Since(b.t0).Round(time.Second), cols, screened)
	if len(reasons) > 0 {
		sort.SliceStable(reasons, func(i, j int) bool { return byReason[reasons[i]] > byReason[reasons[j]] })
		parts := make([]string, len(reasons))
		for i, k := range reasons {
			parts[i] = fmt.Sprintf("%s %d", k, byReason[k])
		}
		b.line(false, "screened by reason (a column may have several): %s", strings.Join(parts, ", "))
	}
}

// screenFlags are the QC bits that screen a column, with their flag_meanings words.
var screenFlags = func() []struct {
	bit  int
	name string
} {
	var out []struct {
		bit  int
		name string
	}
	for _, f := range microphys.QCFlags {
		if f.Screen {
			out = append(out, struct {
				bit  int
				name string
			}{bits.TrailingZeros32(uint32(f.Bit)), f.Name})
		}
	}
	for _, f := range microphys.InputQCFlags {
		if f.Screen {
			out = append(out, struct {
				bit  int
				name string
			}{bits.TrailingZeros32(f.Bit), f.Name})
		}
	}
	return out
}()

// countScreen adds the screening bits of one screened column's QC value to c.
func countScreen(c *[32]int64, qc uint32) {
	for b := qc; b != 0; b &= b - 1 {
		c[bits.TrailingZeros32(b)]++
	}
}

// screenLines words the counts of the screening bits ("thin_cloud: 1200"), in bit order.
func screenLines(c *[32]int64) []string {
	var out []string
	for _, f := range screenFlags {
		if c[f.bit] > 0 {
			out = append(out, fmt.Sprintf("%s: %d", f.name, c[f.bit]))
		}
	}
	return out
}

// files is "1 file" or "N files".
func files(n int) string {
	if n == 1 {
		return "1 file"
	}
	return fmt.Sprintf("%d files", n)
}
