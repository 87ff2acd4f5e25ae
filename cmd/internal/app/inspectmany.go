package app

import (
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"sort"
	"strings"
	"time"

	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/microphys"
)

// archiveFile is what inspect compares between the files of an archive.
type archiveFile struct {
	File    string            `json:"file"`
	Problem string            `json:"problem,omitempty"` // the file cannot be read as an input
	Aspects map[string]string `json:"aspects,omitempty"` // aspect -> its value in words
	Start   string            `json:"time_start,omitempty"`
	End     string            `json:"time_end,omitempty"`
	Steps   int               `json:"time_steps,omitempty"`
	Differs []string          `json:"differs"` // "aspect: value (most files: value)"
	start   float64           // seconds since 1970, for the overlap check
	end     float64
}

// archiveReport is inspect's report over several files (--json prints it).
type archiveReport struct {
	Files      int               `json:"files"`
	Consistent int               `json:"consistent"`
	Odd        int               `json:"differing"`
	Unreadable int               `json:"unreadable"`
	Reference  map[string]string `json:"reference"` // aspect -> the value most files have
	List       []archiveFile     `json:"list"`
}

// archiveAspects are the aspects compared, in the order they are reported.
var archiveAspects = []string{"roles", "units", "layout", "grid", "leading", "time step"}

// describeForArchive opens one file as process would and words its aspects.
func describeForArchive(path string, ovs []grid.Override, inp *inputFlags, masks []grid.MaskSpec, p microphys.Params) archiveFile {
	f := archiveFile{File: path, Differs: []string{}}
	opt := grid.OpenOptions{Overrides: ovs, OverrideHint: "--bind ROLE=VAR[:UNITS]"}
	inp.openOptions(&opt, masks, p)
	in, err := grid.Open(path, opt)
	if err != nil {
		f.Problem = err.Error()
		return f
	}
	defer in.Close()
	var roles, units []string
	for _, b := range in.Bindings() {
		if b.Role.Rule().Internal {
			continue
		}
		roles = append(roles, fmt.Sprintf("%s=%s", b.Role, b.Var))
		if !b.Role.Rule().Codes() {
			units = append(units, fmt.Sprintf("%s %q", b.Role, b.UnitsGiven))
		}
	}
	L := in.Layout
	var hz, lead []string
	for _, d := range L.Horizontal {
		hz = append(hz, fmt.Sprintf("%s=%d", d.Name, d.Len))
	}
	for _, d := range L.Leading {
		n := fmt.Sprint(d.Len)
		if L.Time != nil && d.Name == L.Time.Var {
			n = "(time)" // the number of steps is compared with the time
		}
		lead = append(lead, d.Name+"="+n)
	}
	g := fmt.Sprintf("%s; latitude %s, longitude %s", strings.Join(hz, ", "), orNone(L.Lat), orNone(L.Lon))
	switch {
	case L.LatLon2D:
		g += " (2-D: a swath; positions are not compared)"
	case L.Lat != "" && L.Lon != "":
		h := sha256.New()
		for _, v := range []string{L.Lat, L.Lon} {
			data, _, err := grid.ReadVariable(path, v)
			if err != nil {
				f.Problem = fmt.Sprintf("%s: coordinate %s: %v", path, v, err)
				return f
			}
			var b [8]byte
			for _, x := range data {
				binary.LittleEndian.PutUint64(b[:], math.Float64bits(x))
				h.Write(b[:])
			}
		}
		g += ", positions " + hex.EncodeToString(h.Sum(nil))[:12]
	}
	f.Aspects = map[string]string{
		"roles":   strings.Join(roles, " "),
		"units":   strings.Join(units, ", "),
		"layout":  string(L.Shape),
		"grid":    g,
		"leading": orNone(strings.Join(lead, ", ")),
	}
	if L.Time != nil {
		x, _, err := grid.ReadVariable(path, L.Time.Var)
		if err != nil {
			f.Problem = fmt.Sprintf("%s: time %s: %v", path, L.Time.Var, err)
			return f
		}
		secs := make([]float64, len(x))
		for i, v := range x {
			secs[i] = L.Time.Seconds(v)
		}
		f.Steps = len(secs)
		step := "one step"
		if len(secs) > 1 {
			d := secs[1] - secs[0]
			step = time.Duration(d * float64(time.Second)).String()
			for i := 2; i < len(secs); i++ {
				if secs[i]-secs[i-1] != d {
					step = "irregular"
					break
				}
			}
			step = fmt.Sprintf("%d steps of %s", len(secs), step)
		}
		f.Aspects["time step"] = step
		if len(secs) > 0 {
			f.start, f.end = secs[0], secs[len(secs)-1]
			f.Start, f.End = unixText(f.start), unixText(f.end)
		}
	} else {
		f.Aspects["time step"] = "no time axis"
	}
	return f
}

func unixText(s float64) string {
	if math.IsNaN(s) {
		return "not a date"
	}
	return time.Unix(int64(math.Floor(s)), 0).UTC().Format("2006-01-02T15:04:05Z")
}

// inspectArchive compares the files of an archive: every aspect of each readable file
// against the value most files have, and the time spans for overlaps.
func inspectArchive(paths []string, ovs []grid.Override, inp *inputFlags, masks []grid.MaskSpec, p microphys.Params) *archiveReport {
	rep := &archiveReport{Files: len(paths), Reference: map[string]string{}}
	for _, path := range paths {
		rep.List = append(rep.List, describeForArchive(path, ovs, inp, masks, p))
	}
	for _, a := range archiveAspects {
		count := map[string]int{}
		best, bestN := "", 0
		for _, f := range rep.List {
			if f.Problem != "" {
				continue
			}
			v := f.Aspects[a]
			count[v]++
			if count[v] > bestN { // ties go to the file listed first
				best, bestN = v, count[v]
			}
		}
		rep.Reference[a] = best
		for i := range rep.List {
			f := &rep.List[i]
			if f.Problem == "" && f.Aspects[a] != best {
				f.Differs = append(f.Differs, fmt.Sprintf("%s: %s (most files: %s)", a, orNone(f.Aspects[a]), orNone(best)))
			}
		}
	}
	// Two files covering the same times: a copy, or a reprocessed version beside the old.
	var timed []*archiveFile
	for i := range rep.List {
		if f := &rep.List[i]; f.Problem == "" && f.Start != "" {
			timed = append(timed, f)
		}
	}
	sort.SliceStable(timed, func(i, j int) bool { return timed[i].start < timed[j].start })
	for i := 1; i < len(timed); i++ {
		a, b := timed[i-1], timed[i]
		if b.start <= a.end {
			b.Differs = append(b.Differs, fmt.Sprintf("time: %s .. %s overlaps %s (%s .. %s)", b.Start, b.End, a.File, a.Start, a.End))
		}
	}
	for _, f := range rep.List {
		switch {
		case f.Problem != "":
			rep.Unreadable++
		case len(f.Differs) > 0:
			rep.Odd++
		default:
			rep.Consistent++
		}
	}
	return rep
}

func (r *archiveReport) writeText(w io.Writer) error {
	fmt.Fprintf(w, "%d files; what most of them have:\n", r.Files)
	for _, a := range archiveAspects {
		fmt.Fprintf(w, "  %-10s %s\n", a+":", orNone(r.Reference[a]))
	}
	fmt.Fprintln(w, "\nfiles:")
	for _, f := range r.List {
		span := ""
		if f.Start != "" {
			span = fmt.Sprintf(" (%s .. %s)", f.Start, f.End)
		}
		switch {
		case f.Problem != "":
			fmt.Fprintf(w, "  %s: cannot be read: %s\n", f.File, f.Problem)
		case len(f.Differs) == 0:
			fmt.Fprintf(w, "  %s%s: as most\n", f.File, span)
		default:
			fmt.Fprintf(w, "  %s%s: differs\n", f.File, span)
			for _, d := range f.Differs {
				fmt.Fprintf(w, "      %s\n", d)
			}
		}
	}
	_, err := fmt.Fprintf(w, "\n%d of %d files as most, %d differ, %d cannot be read\n", r.Consistent, r.Files, r.Odd, r.Unreadable)
	return err
}

// runInspectArchive prints the archive report and fails when a file differs or cannot
// be read.
func runInspectArchive(e *env, paths []string, ovs []grid.Override, inp *inputFlags, masks []grid.MaskSpec, p microphys.Params, asJSON bool) error {
	rep := inspectArchive(paths, ovs, inp, masks, p)
	if asJSON {
		enc := json.NewEncoder(e.stdout)
		enc.SetIndent("", "  ")
		enc.SetEscapeHTML(false)
		if err := enc.Encode(rep); err != nil {
			return err
		}
	} else if err := rep.writeText(e.stdout); err != nil {
		return err
	}
	if bad := rep.Odd + rep.Unreadable; bad > 0 {
		return fmt.Errorf("%d of %d files differ from the others or cannot be read (see the list on stdout)", bad, rep.Files)
	}
	return nil
}
