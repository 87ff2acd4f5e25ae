package app

import (
	"fmt"
	"strconv"
	"strings"

	"github.com/spf13/pflag"
	"github.com/warmrain/warmrain/microphys"
)

// physicsFlags are the physics and screening options shared by process and
// column. Values on the command line are in the units people use (µm, g m-2,
// cm-3, hPa); toParams converts them to SI once.
type physicsFlags struct {
	autoconv, collision, coalescence, method string
	k, qext, fad, cw                         float64
	reStar, onsetWidth, gamma                float64
	r0, drizzleR, updraft                    float64
	surfaceRH, surfaceP                      float64
	defCTT, defCTP                           float64
	drizzleLaw                               string
	kesslerRate, kesslerThr                  float64
	noCollector, noEvaporation               bool
	minLWP, minTau, minCTT, maxH             float64
	reRange, ndRange                         string
}

func addPhysicsFlags(fs *pflag.FlagSet) *physicsFlags {
	d := microphys.DefaultParams()
	f := &physicsFlags{}
	fs.StringVar(&f.autoconv, "autoconversion", d.Autoconv.String(), "autoconversion scheme: kk2000, kessler1969, liu-daum2004, seifert-beheng2001")
	fs.StringVar(&f.collision, "collision", d.Collision.String(), "collision efficiency of the collector drop: hall1980, long1974")
	fs.StringVar(&f.coalescence, "coalescence", d.Coalescence.String(), "coalescence efficiency: seifert2005 (Beard-Ochs/Low-List blend), beard-ochs1995, low-list1982, unity")
	fs.Float64Var(&f.k, "k-ratio", d.K, "k = (r_v/r_e)^3, ratio of mean-volume to effective radius cubed")
	fs.Float64Var(&f.qext, "extinction-efficiency", d.Qext, "extinction efficiency Q_ext")
	fs.Float64Var(&f.fad, "adiabatic-fraction", d.Fad, "adiabatic fraction f_ad in (0, 1]")
	fs.Float64Var(&f.cw, "condensation-rate", 0, "fixed condensation rate c_w in g m-3 km-1 (0: from cloud-top temperature and pressure)")
	fs.Float64Var(&f.reStar, "onset-radius", d.ReStar*1e6, "drizzle-onset cloud-top effective radius r_e*, µm")
	fs.Float64Var(&f.onsetWidth, "onset-width", d.OnsetWidth*1e6, "width of the r_e range, µm, centred on --onset-radius, over which the drizzle-onset probability rises from 0 to 1 (0: a step at --onset-radius)")
	fs.Float64Var(&f.gamma, "gamma-shape", d.GammaShape, "gamma shape of sub-grid LWP when the input has no LWP standard deviation")
	fs.Float64Var(&f.r0, "collector-radius", d.Collector.R0*1e6, "start radius of the collector drop, µm")
	fs.Float64Var(&f.drizzleR, "drizzle-radius", d.Collector.DrizzleRadius*1e6, "radius at which the collector counts as a drizzle drop, µm")
	fs.Float64Var(&f.updraft, "updraft", d.Collector.Updraft, "updraft speed, m s-1 (0: collector released at cloud top, the stratocumulus picture; >0: enters at cloud base and is carried up first, a cumulus picture)")
	fs.Float64Var(&f.surfaceRH, "surface-rh", d.SurfaceRH, "surface relative humidity (0-1) when the input has none")
	fs.Float64Var(&f.surfaceP, "surface-pressure", d.SurfacePressure/100, "surface pressure, hPa, to place cloud base when the input has no cloud-top height")
	fs.Float64Var(&f.defCTT, "default-ctt", d.DefaultCTT, "cloud-top temperature, K, when the input has none")
	fs.Float64Var(&f.defCTP, "default-ctp", d.DefaultCTP/100, "cloud-top pressure, hPa, when the input has none")
	fs.StringVar(&f.drizzleLaw, "drizzle-law", fmt.Sprintf("%g,%g,%g", d.DrizzleCoef, d.DrizzleLWPExp, d.DrizzleNdExp),
		"cloud-base drizzle rate R = a LWP^b N_d^-c as a,b,c (R mm day-1, LWP g m-2, N_d cm-3)")
	fs.Float64Var(&f.kesslerRate, "kessler-rate", d.KesslerRate, "Kessler rate constant, s-1")
	fs.Float64Var(&f.kesslerThr, "kessler-threshold", d.KesslerThreshold*1e3, "Kessler threshold cloud-water mixing ratio, g kg-1")
	fs.StringVar(&f.method, "collector-method", d.CollectorMethod.String(), "collector and evaporation results: table (interpolated, tested to 0.5 %) or direct (integrated per column, slow)")
	fs.BoolVar(&f.noCollector, "no-collector", false, "skip the collector drop and its evaporation")
	fs.BoolVar(&f.noEvaporation, "no-evaporation", false, "skip the sub-cloud evaporation of the collector drop")
	fs.Float64Var(&f.minLWP, "min-lwp", d.MinLWP*1e3, "screen columns with LWP below this, g m-2")
	fs.Float64Var(&f.minTau, "min-tau", d.MinTau, "screen columns with optical thickness below this")
	fs.StringVar(&f.reRange, "re-range", fmt.Sprintf("%g,%g", d.ReMin*1e6, d.ReMax*1e6), "valid effective-radius range, µm, as min,max")
	fs.Float64Var(&f.minCTT, "min-ctt", d.MinCTT, "screen columns with cloud-top temperature below this (possible ice), K")
	fs.StringVar(&f.ndRange, "nd-range", fmt.Sprintf("%g,%g", d.NdMin*1e-6, d.NdMax*1e-6), "plausible droplet-number range, cm-3, as min,max")
	fs.Float64Var(&f.maxH, "max-thickness", d.HMax, "screen columns with adiabatic thickness above this, m")
	return f
}

func parsePair(name, s string) (a, b float64, err error) {
	x, y, ok := strings.Cut(s, ",")
	a, err1 := strconv.ParseFloat(strings.TrimSpace(x), 64)
	b, err2 := strconv.ParseFloat(strings.TrimSpace(y), 64)
	if !ok || err1 != nil || err2 != nil {
		return 0, 0, usagef("--%s %q: want two numbers as min,max", name, s)
	}
	return a, b, nil
}

// toParams converts the flags to SI parameters and validates them.
func (f *physicsFlags) toParams() (microphys.Params, error) {
	p := microphys.DefaultParams()
	var err error
	if p.Autoconv, err = microphys.ParseAutoconvScheme(f.autoconv); err != nil {
		return p, usagef("--autoconversion: %v", err)
	}
	if p.Collision, err = microphys.ParseCollisionKind(f.collision); err != nil {
		return p, usagef("--collision: %v", err)
	}
	if p.Coalescence, err = microphys.ParseCoalescenceKind(f.coalescence); err != nil {
		return p, usagef("--coalescence: %v", err)
	}
	if p.CollectorMethod, err = microphys.ParseCollectorMethod(f.method); err != nil {
		return p, usagef("--collector-method: %v", err)
	}
	p.Collector.Collision, p.Collector.Coalescence = p.Collision, p.Coalescence
	p.K, p.Qext, p.Fad = f.k, f.qext, f.fad
	p.FixedCw = f.cw / 1e6
	p.ReStar = f.reStar / 1e6
	p.OnsetWidth = f.onsetWidth / 1e6
	p.GammaShape = f.gamma
	p.Collector.R0 = f.r0 / 1e6
	p.Collector.DrizzleRadius = f.drizzleR / 1e6
	p.Collector.Updraft = f.updraft
	p.SurfaceRH = f.surfaceRH
	p.SurfacePressure = f.surfaceP * 100
	p.DefaultCTT, p.DefaultCTP = f.defCTT, f.defCTP*100
	parts := strings.Split(f.drizzleLaw, ",")
	if len(parts) != 3 {
		return p, usagef("--drizzle-law %q: want a,b,c", f.drizzleLaw)
	}
	law := make([]float64, 3)
	for i, s := range parts {
		if law[i], err = strconv.ParseFloat(strings.TrimSpace(s), 64); err != nil {
			return p, usagef("--drizzle-law %q: %q is not a number", f.drizzleLaw, s)
		}
	}
	p.DrizzleCoef, p.DrizzleLWPExp, p.DrizzleNdExp = law[0], law[1], law[2]
	p.KesslerRate, p.KesslerThreshold = f.kesslerRate, f.kesslerThr/1e3
	p.EnableCollector = !f.noCollector
	p.EnableEvaporation = !f.noCollector && !f.noEvaporation
	p.MinLWP, p.MinTau, p.MinCTT, p.HMax = f.minLWP/1e3, f.minTau, f.minCTT, f.maxH
	lo, hi, err := parsePair("re-range", f.reRange)
	if err != nil {
		return p, err
	}
	p.ReMin, p.ReMax = lo/1e6, hi/1e6
	lo, hi, err = parsePair("nd-range", f.ndRange)
	if err != nil {
		return p, err
	}
	p.NdMin, p.NdMax = lo*1e6, hi*1e6
	if err := p.Validate(); err != nil {
		return p, usagef("%v (the option is given in the units its help shows)", err)
	}
	return p, nil
}

// physicsWarnings returns the messages that parameters p deserve on stderr: a steady
// updraft that carries the collector up through the cloud first is a cumulus picture, and in
// stratocumulus columns 0.5 m s-1 or more carries it out through cloud top.
func physicsWarnings(p microphys.Params) []string {
	var w []string
	if p.EnableCollector && p.Collector.Updraft > 0 {
		w = append(w, fmt.Sprintf("--updraft %g m s-1: a steady updraft is a cumulus picture; in stratocumulus columns an updraft of 0.5 m s-1 or more carries the collector out through cloud top (flag collector_exit_top). Use 0 (the default) for stratocumulus", p.Collector.Updraft))
	}
	return w
}
