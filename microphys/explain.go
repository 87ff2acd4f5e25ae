package microphys

import "math"

// ColumnGeometry is the cloud and the sub-cloud layer of one column as Model.Column's direct
// integrations see them: the adiabatic cloud (thickness, gamma = f_ad c_w, N_d and the air at
// cloud top) the collector drop falls through, the collector of the parameters, and the
// sub-cloud layer below cloud base. CollectDirect(Cloud, Setup) and EvaporateDirect(r, Layer)
// are then exactly the integrations Column makes with CollectorDirect (same inputs to the
// last bit), so a path sampled from them ends where Column's diagnostics say.
type ColumnGeometry struct {
	Cloud CloudColumn    // H (m), Gamma (kg m-4), Nd (m-3), Air at cloud top
	Setup CollectorSetup // Params.Collector with the collision and coalescence laws
	K     float64        // Params.K, (r_v/r_e)^3
	// Layer is the sub-cloud layer (cloud-base height, temperature and pressure, surface
	// humidity); HasLayer is false when it is undefined (cloud base at or below the surface,
	// a cloud thicker than 5 km) or the evaporation is switched off.
	Layer    SubCloudLayer
	HasLayer bool
}

// Geometry returns the ColumnGeometry of the column in (SI inputs, completed as Column gets
// them: Model.Complete first when the inputs come from a file) and true, or false when
// Column screens the column (then nothing is integrated):
//
//	T, p = CTT, CTP (Params.DefaultCTT, DefaultCTP when absent)
//	c_w = CondensationRate(p, T) (or Params.FixedCw), gamma = f_ad c_w
//	tau = Tau, or TauAdiabatic(LWP, r_e, Q_ext);  N_d = DropletNumber(tau, r_e, k, Q_ext, f_ad, c_w)
//	H = Thickness(LWP, f_ad, c_w)
//	(p_b, T_b) = CloudBase(p, T, H); z_b = CTH - H, or DryBaseHeight(p_b, T_b, Params.SurfacePressure)
//
// in the arithmetic of these exported functions (Column's bulk diagnostics use folded
// constants equal to them within 1e-12 relative; the direct integrations get these inputs).
//
// Reference: [Brenguier2000] (adiabatic cloud); CloudBase and DryBaseHeight for the layer.
// Valid: any inputs; screened or invalid columns give false.
func (m *Model) Geometry(in *Inputs) (ColumnGeometry, bool) {
	var out Outputs
	m.Column(in, &out)
	if out.QC&QCScreenMask != 0 {
		return ColumnGeometry{}, false
	}
	p := &m.p
	T, pr := in.CTT, in.CTP
	if math.IsNaN(T) {
		T = p.DefaultCTT
	}
	if math.IsNaN(pr) {
		pr = p.DefaultCTP
	}
	ex := m.exactColumn(in.LWP, in.Re, in.Tau, T, pr)
	g := ColumnGeometry{Cloud: CloudColumn{H: ex.h, Gamma: ex.gamma, Nd: ex.nd, Air: NewAir(pr, T)}, Setup: m.setup, K: p.K}
	if !p.EnableEvaporation {
		return g, true
	}
	rhs := in.SurfaceRH
	if math.IsNaN(rhs) {
		rhs = p.SurfaceRH
	}
	tb, pb := math.NaN(), math.NaN()
	if ex.h <= 5000 {
		tb, pb = cloudBase(T, pr, ex.h, ex.gm)
	}
	g.HasLayer = m.subCloudFrom(tb, pb, ex.h, in.CTH, rhs, &g.Layer)
	return g, true
}

// ProfileLevel is one level of an adiabatic cloud: height above cloud base (m), liquid water
// content (kg m-3), mean-volume and effective radius of the cloud droplets (m).
type ProfileLevel struct {
	Height, LWC, MeanVolumeRadius, EffectiveRadius float64
}

// AdiabaticProfile tabulates the adiabatic cloud c at n+1 equally spaced heights from base
// (z = 0) to top (z = H):
//
//	LWC(z) = gamma z,  r_v(z) = (3 LWC/(4 pi rho_w N_d))^(1/3),  r_e(z) = r_v(z)/k^(1/3)
//
// (AdiabaticLWC, MeanVolumeRadius and EffectiveRadius with f_ad c_w = gamma).
//
// Reference: [Brenguier2000].
// Valid: n >= 1, c.H >= 0, c.Gamma > 0, c.Nd > 0, 0 < k <= 1; NaN fields otherwise (nil for n < 1).
func AdiabaticProfile(c CloudColumn, k float64, n int) []ProfileLevel {
	if n < 1 {
		return nil
	}
	lv := make([]ProfileLevel, 0, n+1)
	for i := 0; i <= n; i++ {
		z := c.H * float64(i) / float64(n)
		lv = append(lv, ProfileLevel{Height: z, LWC: AdiabaticLWC(z, 1, c.Gamma),
			MeanVolumeRadius: MeanVolumeRadius(z, c.Nd, 1, c.Gamma), EffectiveRadius: EffectiveRadius(z, c.Nd, k, 1, c.Gamma)})
	}
	return lv
}

// TrackPoint is one point of a drop's path: time since release (s), radius (m) and height
// (m; above cloud base in a CollectorTrack, above the surface in an EvaporationTrack), with
// the relative humidity (1) of the level in an EvaporationTrack (NaN in a CollectorTrack).
type TrackPoint struct {
	Time, Radius, Height, RH float64
}

// CollectorTrack is a collector drop's path through a cloud: the CollectDirect result
// (Path), points along it, and the error of the integrated heights at the exit level.
type CollectorTrack struct {
	Path CollectorPath
	// Points are n+1 points evenly spaced in time (the nearest dense sample), from release
	// to the exit; the last is the exit itself (height 0 at base, H at top).
	Points []TrackPoint
	// HeightClosure is the integrated height at the exit time minus the exit level, m: the
	// error of the trapezoidal height integral (NaN when the integration failed).
	HeightClosure float64
}

// collectorDense is the number of radii at which CollectorTrack samples the path.
const collectorDense = 240

// TrackCollector integrates the collector drop of s through the cloud c with CollectDirect
// and samples its path. CollectDirect returns the end of the path and the time the drop
// reaches s.DrizzleRadius; the radius grows monotonically (collection only adds mass), so
// calling it with DrizzleRadius set to successive radii R_i = R_0 (R_exit/R_0)^(i/240)
// gives the exact times t_i of the one path (same integrator, same tolerance). The height
// follows from
//
//	dz/dt = w - V(R)
//
// integrated with the trapezoidal rule over the dense samples (V = Air.FallSpeed depends on
// R only); HeightClosure is that integral at the exit time minus the exact exit level, its
// error (tested below 1e-3 H in cmd/internal/app/column_test.go).
//
// Reference: CollectDirect; [Beard1976] fall speed; trapezoidal rule (common practice).
// Valid: as CollectDirect; n >= 1. A failed integration gives Points empty and
// HeightClosure NaN, Path as CollectDirect returned it.
func TrackCollector(c CloudColumn, s CollectorSetup, n int) CollectorTrack {
	full := CollectDirect(c, s)
	tr := CollectorTrack{Path: full, HeightClosure: math.NaN()}
	if n < 1 || !(full.ExitRadius > 0) || math.IsNaN(full.ExitTime) {
		return tr
	}
	exitZ := c.H
	if full.ExitBase {
		exitZ = 0
	}
	z0 := c.H
	if s.Updraft > 0 {
		z0 = 0
	}
	nan := math.NaN()
	dense := []TrackPoint{{0, s.R0, z0, nan}}
	if full.ExitRadius > s.R0 && full.ExitTime > 0 {
		q := s
		ratio := full.ExitRadius / s.R0
		for i := 1; i < collectorDense; i++ {
			R := s.R0 * math.Pow(ratio, float64(i)/collectorDense)
			q.DrizzleRadius = R
			t := CollectDirect(c, q).DrizzleTime
			if math.IsNaN(t) || t < dense[len(dense)-1].Time || t > full.ExitTime {
				continue
			}
			dense = append(dense, TrackPoint{t, R, 0, nan})
		}
	}
	dense = append(dense, TrackPoint{full.ExitTime, full.ExitRadius, 0, nan})
	w := s.Updraft
	for i := 1; i < len(dense); i++ {
		a, b := dense[i-1], &dense[i]
		va, vb := c.Air.FallSpeed(2*a.Radius), c.Air.FallSpeed(2*b.Radius)
		b.Height = a.Height + (w-(va+vb)/2)*(b.Time-a.Time)
	}
	last := len(dense) - 1
	tr.HeightClosure = dense[last].Height - exitZ
	used := map[int]bool{}
	for k := 0; k <= n; k++ {
		target := full.ExitTime * float64(k) / float64(n)
		best := 0
		for i, d := range dense {
			if math.Abs(d.Time-target) < math.Abs(dense[best].Time-target) {
				best = i
			}
		}
		if k == n {
			best = last
		}
		if used[best] {
			continue
		}
		used[best] = true
		d := dense[best]
		if best == last {
			d.Height = exitZ
		}
		tr.Points = append(tr.Points, d)
	}
	return tr
}

// EvaporationTrack is a drop's fall from cloud base through a sub-cloud layer: the
// EvaporateDirect result (Path) and points along it.
type EvaporationTrack struct {
	Path EvapPath
	// Points are at n+1 heights evenly spaced from cloud base down to the surface (or to
	// the evaporation height); Time is the time below cloud base, Radius the radius there,
	// RH the layer's relative humidity at that height.
	Points []TrackPoint
}

// TrackEvaporation integrates the fall of a drop of radius r0 (m) from cloud base through the
// layer l with EvaporateDirect and samples it at n+1 heights. A layer cut at height z0 (its
// surface moved up to z0, its surface humidity set to S(z0)) has exactly the temperature,
// pressure and humidity of l above z0 (SubCloudLayer.State is linear in z for T and S and
// hydrostatic for p), so EvaporateDirect on it gives the radius at z0 and the time to reach
// it.
//
// Reference: EvaporateDirect; SubCloudLayer.State.
// Valid: as EvaporateDirect; n >= 1. Points is empty when EvaporateDirect gives no result.
func TrackEvaporation(r0 float64, l SubCloudLayer, n int) EvaporationTrack {
	e := EvaporateDirect(r0, l)
	tr := EvaporationTrack{Path: e}
	if n < 1 || math.IsNaN(e.Time) {
		return tr
	}
	bottom := 0.0
	if !e.Reached {
		bottom = e.EvapHeight
	}
	for k := 0; k <= n; k++ {
		z0 := l.BaseHeight - (l.BaseHeight-bottom)*float64(k)/float64(n)
		_, _, S := l.State(z0)
		pt := TrackPoint{Height: z0, RH: S}
		switch {
		case k == 0:
			pt.Time, pt.Radius = 0, r0
		case k == n:
			pt.Time, pt.Radius = e.Time, e.SurfaceRadius
		default:
			cut := SubCloudLayer{BaseHeight: l.BaseHeight - z0, BaseT: l.BaseT, BaseP: l.BaseP, SurfaceRH: S, WellMixed: l.WellMixed}
			c := EvaporateDirect(r0, cut)
			if !c.Reached {
				continue
			}
			pt.Time, pt.Radius = c.Time, c.SurfaceRadius
		}
		tr.Points = append(tr.Points, pt)
	}
	return tr
}
