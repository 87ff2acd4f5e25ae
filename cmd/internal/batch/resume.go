package batch

import (
	"encoding/json"
	"fmt"
)

// Existing is what an output path already holds, as read from its
// provenance attributes (nil: nothing is there).
type Existing struct {
	Ours     bool   // written by warmrain (it has warmrain's provenance)
	Identity string // stored input identity (Identity.String)
	Digest   string // stored parameter digest
	Build    string // stored build identity (hash of the executable)
	Version  string // stored version string (for messages only)
	Time     string // when it was written (the newest history line), for messages
}

// Action is what to do with one planned output.
type Action int

const (
	Write   Action = iota // nothing is there: write it (never replacing what appears meanwhile)
	Skip                  // a complete output of this input, parameters and build is there
	Replace               // replace what is there (asked for, or our own stale output of the same input)
	Refuse                // something else is there and the user did not ask to replace it
)

// Decision is the resume check's verdict on one output, with the reason in
// words (for the summary line or the refusal message).
type Decision struct {
	Action Action
	Why    string
}

// Decide is the resume check: what to do with output path, which already
// holds ex (nil when absent), for input id under parameter digest and build.
// The rule: an existing file is replaced only when the user asked (force for
// any file, redo for warmrain's outputs of the same input), or when it is
// warmrain's own output of the same input with the same parameters that is no
// longer complete (the input changed, another build wrote it, or checksums
// are asked for and it has none). Outputs of another input, or of other
// parameters, are refused with what is there and how to proceed.
func Decide(path string, ex *Existing, id Identity, digest, build string, redo, force bool) Decision {
	if ex == nil {
		return Decision{Action: Write}
	}
	if force {
		return Decision{Replace, "replacing it (--force)"}
	}
	if !ex.Ours {
		return Decision{Refuse, fmt.Sprintf("%s exists and was not written by warmrain; it is kept. Choose another output name or folder, or give --force to replace it", path)}
	}
	var s Identity
	_ = json.Unmarshal([]byte(ex.Identity), &s)
	if s.Path != id.Path {
		other := s.Path
		if other == "" {
			other = "an unknown input"
		}
		return Decision{Refuse, fmt.Sprintf("%s holds warmrain's output of another input (%s), not of %s; it is kept. Use a name pattern that tells the inputs apart (--name '{relpath}_warmrain.nc' or {parent}), another folder, or --force to replace it", path, other, id.Path)}
	}
	if redo {
		return Decision{Replace, "replacing it (--redo)"}
	}
	if ex.Digest != digest {
		return Decision{Refuse, fmt.Sprintf("%s holds warmrain's output of this input written with other parameters (digest %s%s, this run %s); it is kept. Give --redo to replace it, or write to another folder to keep both", path, ex.Digest, ex.describe(), digest)}
	}
	switch {
	case !id.Matches(ex.Identity):
		return Decision{Replace, "the input changed since it was written"}
	case build == "" || ex.Build != build:
		return Decision{Replace, "it was written by another build of warmrain"}
	}
	return Decision{Action: Skip}
}

func (ex *Existing) describe() string {
	s := ""
	if ex.Version != "" {
		s += ", warmrain " + ex.Version
	}
	if ex.Time != "" {
		s += ", " + ex.Time
	}
	return s
}
