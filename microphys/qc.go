package microphys

// Quality-control bits of Outputs.QC. Screening bits (QCScreenMask) mean the column was
// rejected and every diagnostic in Outputs is NaN; informational bits record an assumption
// or a partial result and leave the diagnostics as computed.
const (
	// Screening bits.
	QCInputMissing              uint16 = 1 << 0 // LWP or Re absent (NaN)
	QCInputInvalid              uint16 = 1 << 1 // an input is ±Inf, negative or outside its physical range
	QCThinCloud                 uint16 = 1 << 2 // LWP < Params.MinLWP or tau < Params.MinTau
	QCEffectiveRadiusOutOfRange uint16 = 1 << 3 // Re outside [Params.ReMin, Params.ReMax]
	QCPossibleIce               uint16 = 1 << 4 // CTT < Params.MinCTT
	QCDropletNumberImplausible  uint16 = 1 << 5 // N_d outside [Params.NdMin, Params.NdMax]
	QCThicknessImplausible      uint16 = 1 << 6 // H > Params.HMax

	// QCCollectorNotLarger (informational) says that the collector's start radius is not
	// larger than the cloud-top mean-volume radius r_v = k^(1/3) r_e: the continuous-
	// collection model, a large drop sweeping up small droplets, does not apply, and the
	// collector outputs are only indicative.
	QCCollectorNotLarger uint16 = 1 << 7

	// Informational bits.
	QCAirStateAssumed    uint16 = 1 << 8  // CTT and/or CTP absent: Params.DefaultCTT/DefaultCTP (or Params.FixedCw) used
	QCGammaShapeAssumed  uint16 = 1 << 9  // LWPStd absent: Params.GammaShape used for the drizzle probability
	QCSurfaceRHAssumed   uint16 = 1 << 10 // SurfaceRH absent: Params.SurfaceRH used (HumiditySurfaceRH only)
	QCCloudBaseAssumed   uint16 = 1 << 11 // CTH absent: cloud-base height from the dry adiabat down to Params.SurfacePressure
	QCCollectorFailed    uint16 = 1 << 12 // collector integration gave no result: collector and evaporation outputs NaN
	QCCollectorExitTop   uint16 = 1 << 13 // collector drop carried out through cloud top: exit radius/time refer to the top, no evaporation
	QCEvaporationSkipped uint16 = 1 << 14 // sub-cloud layer undefined (cloud base at or below the surface) or evaporation off
	QCIntegratedDirectly uint16 = 1 << 15 // collector, evaporation or surface fraction integrated directly: outside the tested tables, near a regime boundary or the collector kink
	QCScreenMask         uint16 = QCInputMissing | QCInputInvalid | QCThinCloud | QCEffectiveRadiusOutOfRange | QCPossibleIce | QCDropletNumberImplausible | QCThicknessImplausible
)

// QCFlag describes one bit of Outputs.QC: the bit value, a CF flag_meanings word and a
// sentence for the flag's comment.
type QCFlag struct {
	Bit     uint16
	Name    string
	Meaning string
	Screen  bool // true: the column is screened (every diagnostic NaN)
}

// QCFlags lists every QC bit in increasing bit order, for the CF attributes flag_masks and
// flag_meanings (names are lowercase words joined with _).
var QCFlags = []QCFlag{
	{QCInputMissing, "input_missing", "liquid water path or effective radius missing", true},
	{QCInputInvalid, "input_invalid", "an input is infinite, negative or outside its physical range", true},
	{QCThinCloud, "thin_cloud", "liquid water path or optical thickness below the screening threshold", true},
	{QCEffectiveRadiusOutOfRange, "effective_radius_out_of_range", "effective radius outside the valid retrieval range", true},
	{QCPossibleIce, "possible_ice", "cloud-top temperature below the freezing threshold", true},
	{QCDropletNumberImplausible, "droplet_number_implausible", "droplet number concentration outside the plausible range", true},
	{QCThicknessImplausible, "thickness_implausible", "adiabatic cloud thickness above the plausible maximum", true},
	{QCCollectorNotLarger, "collector_not_larger", "collector start radius not larger than the cloud-top mean-volume radius: continuous collection does not apply", false},
	{QCAirStateAssumed, "air_state_assumed", "cloud-top temperature or pressure absent; default air state used", false},
	{QCGammaShapeAssumed, "gamma_shape_assumed", "no liquid water path standard deviation; default gamma shape used", false},
	{QCSurfaceRHAssumed, "surface_humidity_assumed", "surface relative humidity absent; default used (sub-cloud humidity surface-rh only)", false},
	{QCCloudBaseAssumed, "cloud_base_height_assumed", "cloud-top height absent; cloud-base height from the dry adiabat to the surface pressure", false},
	{QCCollectorFailed, "collector_failed", "collector-drop integration gave no result", false},
	{QCCollectorExitTop, "collector_exit_top", "collector drop carried out through cloud top", false},
	{QCEvaporationSkipped, "evaporation_skipped", "sub-cloud evaporation not computed", false},
	{QCIntegratedDirectly, "integrated_directly", "collector, evaporation or surface drizzle fraction integrated directly (outside the tested tables, near a regime boundary or where the cloud-top mean-volume radius is near the collector start radius)", false},
}

// QCNames returns the names of the bits set in qc, in bit order (for messages and tables;
// allocates).
//
// Reference: none (software interface).
// Valid: always.
func QCNames(qc uint16) []string {
	var s []string
	for _, f := range QCFlags {
		if qc&f.Bit != 0 {
			s = append(s, f.Name)
		}
	}
	return s
}
