package microphys

import "math"

// Input completion: what a column's inputs lack, filled from what it has before Column runs,
// with a QC bit for every assumption (Model.Complete).

// Input QC bits. They extend Outputs.QC (bits 0-15) in the 32-bit QC flag of the outputs:
// Complete sets the completion bits; the screening bits of quality masks and flag codes are
// set by the caller, which reads the product's quality information. A screened column
// (QCInputScreenMask) is not passed to Column and has every diagnostic NaN.
const (
	// Screening bits.
	QCFlagCode          uint32 = 1 << 16 // an input held a flag code of its own flag_values (sea ice, land, rain, ...)
	QCMaskedByMeaning   uint32 = 1 << 17 // a quality flag variable had a meaning named by a mask
	QCMaskedByThreshold uint32 = 1 << 18 // a quality variable compared true with a mask's threshold
	QCPhaseNotLiquid    uint32 = 1 << 19 // the product's cloud-top phase is not liquid
	QCMultiLayer        uint32 = 1 << 20 // the product flags several cloud layers
	QCClearSky          uint32 = 1 << 21 // LWP <= 0: clear sky or a cloud below the retrieval's noise
	QCCloudFractionLow  uint32 = 1 << 22 // grid-box-mean LWP with cloud fraction below the minimum

	// Informational bits (the diagnostics rest on an assumption).
	QCDropletNumberAssumed uint32 = 1 << 23 // r_e from LWP and the assumed constant droplet number
	QCDropletNumberInput   uint32 = 1 << 24 // r_e from LWP and the input droplet number
	QCLWPFromOptics        uint32 = 1 << 25 // LWP from optical thickness and r_e (Params.UniformLWP says which profile)
	QCInCloudLWP           uint32 = 1 << 26 // LWP = grid-box mean / cloud fraction
	QCGridMeanLWPUsed      uint32 = 1 << 27 // grid-box-mean LWP used as in-cloud: no cloud fraction
	QCStandardAtmosphere   uint32 = 1 << 28 // cloud-top temperature (and pressure) from the standard atmosphere

	QCInputScreenMask = QCFlagCode | QCMaskedByMeaning | QCMaskedByThreshold | QCPhaseNotLiquid | QCMultiLayer |
		QCClearSky | QCCloudFractionLow
)

// InputQCFlag describes one input QC bit (as QCFlag does for Outputs.QC).
type InputQCFlag struct {
	Bit     uint32
	Name    string
	Meaning string
	Screen  bool
}

// InputQCFlags lists the input QC bits in increasing bit order.
var InputQCFlags = []InputQCFlag{
	{QCFlagCode, "input_flag_code", "an input held one of its own flag codes (such as sea ice, land or rain), not a value", true},
	{QCMaskedByMeaning, "masked_by_flag_meaning", "a quality flag variable had a meaning the run masks", true},
	{QCMaskedByThreshold, "masked_by_threshold", "a quality variable met the run's masking threshold", true},
	{QCPhaseNotLiquid, "phase_not_liquid", "the product's cloud-top phase is not liquid (ice, mixed, clear or undetermined)", true},
	{QCMultiLayer, "multi_layer_cloud", "the product flags several cloud layers", true},
	{QCClearSky, "clear_sky", "liquid water path <= 0 inside the valid range: clear sky or cloud below the retrieval noise", true},
	{QCCloudFractionLow, "cloud_fraction_below_minimum", "grid-box-mean liquid water path with cloud fraction below the minimum", true},
	{QCDropletNumberAssumed, "droplet_number_assumed", "effective radius derived from the liquid water path and an assumed constant droplet number", false},
	{QCDropletNumberInput, "droplet_number_from_input", "effective radius derived from the liquid water path and the input droplet number", false},
	{QCLWPFromOptics, "lwp_from_optical_thickness", "liquid water path derived from optical thickness and effective radius", false},
	{QCInCloudLWP, "in_cloud_lwp_from_grid_mean", "liquid water path is the grid-box mean divided by the cloud fraction", false},
	{QCGridMeanLWPUsed, "grid_mean_lwp_used", "grid-box-mean liquid water path used as in-cloud (no cloud fraction)", false},
	{QCStandardAtmosphere, "air_state_standard_atmosphere", "cloud-top temperature (and pressure) from the standard atmosphere at the cloud-top pressure or height", false},
}

// Complete fills what a column's inputs lack, in this order, and returns the input QC bits
// of what it assumed (and, for bad completing inputs, QCInputInvalid):
//
//  1. Air state: CTT absent and CTP present: CTT = StandardAtmosphereTemperature(CTP); CTT
//     and CTP absent and CTH present: (CTP, CTT) = StandardAtmosphere(CTH) (QCStandardAtmosphere).
//     A real cloud-top pressure is thus never paired with Params.DefaultCTT.
//  2. LWP absent, tau and r_e present: LWP = (5/9) rho_w tau r_e (2/Q_ext), the inverse of
//     TauAdiabatic, or (2/3) rho_w tau r_e (2/Q_ext) with Params.UniformLWP
//     (QCLWPFromOptics).
//  3. Grid-box-mean LWP (gridMean): in-cloud LWP = LWP/f for cloud fraction f >=
//     Params.MinCloudFraction (QCInCloudLWP); f below it screens (QCCloudFractionLow); f
//     absent leaves the LWP as it is (QCGridMeanLWPUsed).
//  4. LWP <= 0 (and >= -10 kg m-2): clear sky or a cloud below the retrieval noise, screened
//     (QCClearSky) instead of an invalid input.
//  5. r_e absent, LWP present: with the droplet number nd (m-3, the input's; NaN: absent) or
//     else Params.DropletNumber, r_e = EffectiveRadius(Thickness(LWP, f_ad, c_w), N_d, k, f_ad,
//     c_w), the cloud-top r_e of the adiabatic cloud holding LWP with that N_d, at the
//     column's air state (QCDropletNumberInput or QCDropletNumberAssumed). An input tau is
//     then dropped: N_d is the assumption, and Column derives it back from LWP and r_e.
//
// cf is the column's cloud fraction (1; NaN: absent). in is changed in place; Column then
// computes the diagnostics. A column Complete screens (QCInputScreenMask) must not be passed
// to Column.
//
// Reference: [Brenguier2000] (adiabatic LWP, tau, r_e and N_d), [Stephens1978] (uniform
// cloud), [USSA1976] (air state); LWP/f for the in-cloud mean is common practice.
// Valid: any inputs; NaN or out-of-range completing inputs leave the column to Column's
// screening or set QCInputInvalid.
func (m *Model) Complete(in *Inputs, nd, cf float64, gridMean bool) uint32 {
	var qc uint32
	p := &m.p
	nan := math.NaN()
	if math.IsNaN(in.CTT) {
		switch {
		case colFinite(in.CTP):
			if T := StandardAtmosphereTemperature(in.CTP); !math.IsNaN(T) {
				in.CTT = T
				qc |= QCStandardAtmosphere
			}
		case math.IsNaN(in.CTP) && colFinite(in.CTH):
			if pr, T := StandardAtmosphere(in.CTH); !math.IsNaN(T) {
				in.CTT, in.CTP = T, pr
				qc |= QCStandardAtmosphere
			}
		}
	}
	if math.IsNaN(in.LWP) && !math.IsNaN(in.Tau) && !math.IsNaN(in.Re) {
		var lwp float64
		if p.UniformLWP {
			lwp = LWPHomogeneous(in.Tau, in.Re)
		} else {
			lwp = LWPAdiabatic(in.Tau, in.Re)
		}
		lwp *= adQextGeometric / p.Qext
		if math.IsNaN(lwp) || math.IsInf(lwp, 0) {
			return qc | uint32(QCInputInvalid)
		}
		in.LWP = lwp
		qc |= QCLWPFromOptics
	}
	lwp := in.LWP
	if gridMean && colFinite(lwp) && lwp > 0 {
		switch {
		case math.IsNaN(cf):
			qc |= QCGridMeanLWPUsed
		case !(cf >= 0 && cf <= 1):
			return qc | uint32(QCInputInvalid)
		case cf < p.MinCloudFraction || cf == 0:
			return qc | QCCloudFractionLow
		default:
			in.LWP = lwp / cf
			qc |= QCInCloudLWP
		}
	}
	if lwp <= 0 && lwp >= -colLWPMax {
		return qc | QCClearSky
	}
	if math.IsNaN(in.Re) && colFinite(in.LWP) && in.LWP > 0 {
		n, bit := nd, QCDropletNumberInput
		if math.IsNaN(n) {
			if !(p.DropletNumber > 0) {
				return qc
			}
			n, bit = p.DropletNumber, QCDropletNumberAssumed
		}
		if !(n > 0 && colFinite(n)) {
			return qc | uint32(QCInputInvalid)
		}
		T, pr := in.CTT, in.CTP
		if math.IsNaN(T) {
			T = p.DefaultCTT
		}
		if math.IsNaN(pr) {
			pr = p.DefaultCTP
		}
		cw := p.FixedCw
		if !(cw > 0) {
			cw = CondensationRate(pr, T)
		}
		re := EffectiveRadius(Thickness(in.LWP, p.Fad, cw), n, p.K, p.Fad, cw)
		if math.IsNaN(re) {
			return qc // the air state is out of range: Column screens it
		}
		in.Re, in.Tau = re, nan
		qc |= bit
	}
	return qc
}

// InputQCNames returns the names of the input QC bits set in qc, in bit order (allocates).
//
// Reference: none (software interface).
// Valid: always.
func InputQCNames(qc uint32) []string {
	var s []string
	for _, f := range InputQCFlags {
		if qc&f.Bit != 0 {
			s = append(s, f.Name)
		}
	}
	return s
}
