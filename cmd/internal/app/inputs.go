package app

import (
	"fmt"
	"strings"
	"sync"

	"github.com/spf13/pflag"
	"github.com/warmrain/warmrain/grid"
	"github.com/warmrain/warmrain/microphys"
)

// inputFlags are the options about what the input holds, shared by process and
// inspect: masks on the product's quality information and what the LWP averages.
// The physics assumptions that complete missing inputs (--droplet-number,
// --lwp-profile, --min-cloud-fraction) are parameters (microphys.ParamDecls).
type inputFlags struct {
	masks   []string
	lwpKind string
}

const dropletNumberHint = "--droplet-number N (cm-3), or --bind nd=VAR"

func addInputFlags(fs *pflag.FlagSet) *inputFlags {
	f := &inputFlags{}
	fs.StringArrayVar(&f.masks, "mask", nil, "screen columns by a quality variable: 'VAR:MEANING[,MEANING...]' (a CF flag variable has any of the flag_meanings words) or 'VAR<N' (also <=, >, >=, ==, !=; in VAR's own units); repeatable")
	fs.StringVar(&f.lwpKind, "lwp-kind", "auto", "what the LWP averages: auto (from cell_methods, the variable name and model attributes), in-cloud, or grid-mean (divided by the cloud fraction)")
	return f
}

// defaultInputFlags are the options' defaults (for jobs built without flags).
func defaultInputFlags() *inputFlags { return &inputFlags{lwpKind: "auto"} }

// check validates the options and returns the masks.
func (f *inputFlags) check() ([]grid.MaskSpec, error) {
	var specs []grid.MaskSpec
	for _, s := range f.masks {
		m, err := grid.ParseMask(s)
		if err != nil {
			return nil, usagef("--mask: %v", err)
		}
		specs = append(specs, m)
	}
	switch f.lwpKind {
	case "auto", grid.LWPInCloud, grid.LWPGridMean:
	default:
		return nil, usagef("--lwp-kind %q: want auto, in-cloud or grid-mean", f.lwpKind)
	}
	return specs, nil
}

// openOptions fills the input-related fields of grid.OpenOptions.
func (f *inputFlags) openOptions(o *grid.OpenOptions, specs []grid.MaskSpec, p microphys.Params) {
	o.Masks = specs
	o.DropletNumber = p.DropletNumber > 0
	o.DropletNumberHint = dropletNumberHint
	if f.lwpKind != "auto" {
		o.LWPKind = f.lwpKind
	}
}

// settings are the options as name/value pairs for the resume digest.
func (f *inputFlags) settings() [][2]string {
	return [][2]string{{"masks", strings.Join(f.masks, ";")}, {"lwp_kind", f.lwpKind}}
}

// assumed describes, in sentences, what the run assumes for this input: the text
// appended to every output's comment and written as a global attribute. Empty
// when the input needs no assumption of this kind.
func assumed(in *grid.Input, p microphys.Params) []string {
	var s []string
	has := in.Has
	if !has(grid.RoleLWP) {
		c := "5/9 (adiabatic cloud)"
		if p.UniformLWP {
			c = "2/3 (vertically uniform cloud)"
		}
		s = append(s, fmt.Sprintf("Liquid water path derived from optical thickness and effective radius: LWP = %s rho_w tau r_e (QC bit lwp_from_optical_thickness).", c))
	}
	if !has(grid.RoleRe) {
		if has(grid.RoleNd) {
			b, _ := in.Binding(grid.RoleNd)
			s = append(s, fmt.Sprintf("Effective radius derived from LWP and the input droplet number %s for an adiabatic cloud (QC bit droplet_number_from_input).", b.Var))
		}
		if p.DropletNumber > 0 {
			where := "in every column"
			if has(grid.RoleNd) {
				where = "where the input droplet number is missing"
			}
			s = append(s, fmt.Sprintf("Assumed constant droplet number concentration %g cm-3 %s: effective radius derived from LWP for an adiabatic cloud (QC bit droplet_number_assumed).", p.DropletNumber*1e-6, where))
		}
	}
	if in.GridMean {
		if has(grid.RoleCloudFraction) {
			b, _ := in.Binding(grid.RoleCloudFraction)
			s = append(s, fmt.Sprintf("The input LWP is a grid-box mean (%s): in-cloud LWP = LWP / %s, columns with cloud fraction below %g screened (QC bits in_cloud_lwp_from_grid_mean, cloud_fraction_below_minimum).", in.GridMeanWhy, b.Var, p.MinCloudFraction))
		} else {
			s = append(s, fmt.Sprintf("The input LWP is a grid-box mean (%s) and no cloud fraction was found: it is used as in-cloud LWP, an underestimate (QC bit grid_mean_lwp_used).", in.GridMeanWhy))
		}
	}
	if !has(grid.RoleCTT) && (has(grid.RoleCTP) || has(grid.RoleCTH)) {
		from := "cloud-top pressure"
		if !has(grid.RoleCTP) {
			from = "cloud-top height (as altitude)"
		}
		s = append(s, fmt.Sprintf("Cloud-top temperature from the U.S. Standard Atmosphere 1976 (ICAO) at the %s (QC bit air_state_standard_atmosphere).", from))
	}
	return s
}

// maskBit is the QC bit of a mask.
func maskBit(m *grid.Mask) uint32 {
	switch m.Kind {
	case grid.MaskCompare:
		return microphys.QCMaskedByThreshold
	case grid.MaskPhase:
		return microphys.QCPhaseNotLiquid
	case grid.MaskMultilayer:
		return microphys.QCMultiLayer
	}
	return microphys.QCMaskedByMeaning
}

// tally collects the screening counts of the workers.
type tally struct {
	mu  sync.Mutex
	c   grid.QualityCounts
	why [32]int64 // screened columns by QC bit (report.go)
}

func (t *tally) add(c *grid.QualityCounts, why *[32]int64) {
	t.mu.Lock()
	t.c.Add(c)
	for k, n := range why {
		t.why[k] += n
	}
	t.mu.Unlock()
}

// appendSentences appends sentences to a comment, ending the comment's last
// sentence first.
func appendSentences(comment string, sentences []string) string {
	c := strings.TrimSpace(comment)
	if c != "" && !strings.HasSuffix(c, ".") {
		c += "."
	}
	return strings.TrimSpace(c + " " + strings.Join(sentences, " "))
}

// unitSampleSize is how many values of each role unitWarnings samples.
const unitSampleSize = 5000

// unitWarnings samples the input's values (grid.Input.Sample) and returns a warning for each
// role whose median lies outside the role's plausible range (grid.RoleRule.Plausible):
// units that cannot be right for the role, such as r_e declared in mm or an LWP in g m-2
// declared as kg m-2 (which would screen every column). The warning names the units, where
// they came from (--bind or the file's units attribute) and the range expected, in the
// units the options use. A failed sample gives no warning (the run reports read errors).
func unitWarnings(gin *grid.Input) []string {
	sm, err := gin.Sample(unitSampleSize)
	if err != nil {
		return nil
	}
	return unitWarningsOf(gin, sm)
}

// unitWarningsOf gives unitWarnings' warnings for the sample sm of gin (process takes it
// from the slabs it decodes, grid.SampleCollector, instead of reading the start twice).
func unitWarningsOf(gin *grid.Input, sm []grid.RoleSample) []string {
	var w []string
	for _, s := range sm {
		pr := s.Role.Rule().Plausible
		if s.Median >= pr[0] && s.Median <= pr[1] {
			continue
		}
		b, _ := gin.Binding(s.Role)
		med, unit := roleDisplay(s.Role, s.Median, b.Canonical)
		lo, _ := roleDisplay(s.Role, pr[0], b.Canonical)
		hi, _ := roleDisplay(s.Role, pr[1], b.Canonical)
		from := fmt.Sprintf("the units attribute %q of %s", b.UnitsGiven, b.Var)
		if b.UnitsFrom == "override" {
			from = fmt.Sprintf("--bind %s=%s:%s", s.Role, b.Var, b.UnitsGiven)
		}
		w = append(w, fmt.Sprintf("%s: read with %s, the %s has a median of %s %s over %d sampled values (%.0f %% outside %s-%s %s, the range expected for it); these units cannot be right for the %s: check them (--bind %s=%s:UNITS)",
			gin.Path, from, s.Role.Rule().Description, num(med), unit, s.Valid, 100*s.Outside, num(lo), num(hi), unit, s.Role.Rule().Description, s.Role, b.Var))
	}
	return w
}
