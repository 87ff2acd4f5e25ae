package microphys

import (
	"regexp"
	"testing"
)

// TestQCFlags checks the QC table is usable for CF flag_masks/flag_meanings (common practice:
// distinct single bits, names of lowercase words joined with _, CF conventions §3.5).
func TestQCFlags(t *testing.T) {
	t.Parallel()
	name := regexp.MustCompile(`^[a-z]+(_[a-z]+)*$`)
	seen := map[uint16]bool{}
	names := map[string]bool{}
	var screen uint16
	prev := uint16(0)
	for _, f := range QCFlags {
		if f.Bit == 0 || f.Bit&(f.Bit-1) != 0 {
			t.Errorf("%s: bit %#x is not a single bit", f.Name, f.Bit)
		}
		if f.Bit <= prev {
			t.Errorf("%s: bits not in increasing order", f.Name)
		}
		prev = f.Bit
		if seen[f.Bit] || names[f.Name] {
			t.Errorf("%s: duplicate", f.Name)
		}
		seen[f.Bit], names[f.Name] = true, true
		if !name.MatchString(f.Name) {
			t.Errorf("%q is not lowercase words joined with _", f.Name)
		}
		if f.Meaning == "" {
			t.Errorf("%s: no meaning", f.Name)
		}
		if f.Screen {
			screen |= f.Bit
		}
	}
	if screen != QCScreenMask {
		t.Errorf("screening bits in QCFlags %#x != QCScreenMask %#x", screen, QCScreenMask)
	}
	for _, want := range []string{"input_missing", "input_invalid", "thin_cloud", "effective_radius_out_of_range",
		"possible_ice", "droplet_number_implausible", "thickness_implausible", "air_state_assumed",
		"collector_failed", "evaporation_skipped"} {
		if !names[want] {
			t.Errorf("flag %s missing", want)
		}
	}
	if got := QCNames(QCThinCloud | QCAirStateAssumed); len(got) != 2 || got[0] != "thin_cloud" || got[1] != "air_state_assumed" {
		t.Errorf("QCNames = %v", got)
	}
}
