package geometry

// Result is the response of POST /v1/spoke-lengths for one wheel.
type Result struct {
	Left  SideResult `json:"left"`
	Right SideResult `json:"right"`
	// TensionRatioLeftToRight is T_left / T_right from lateral balance,
	// T_L·sin β_L = T_R·sin β_R, with β the angle of the 3-D spoke line to
	// the wheel plane.
	TensionRatioLeftToRight float64 `json:"tension_ratio_left_to_right"`
	// Findings are never nil (an empty list encodes as []).
	Findings []Finding `json:"findings"`
	// Cautions are plain sentences about results that can hurt a rider when
	// wrong; never nil.
	Cautions []string `json:"cautions"`
}

// SideResult is one side's spokes. Optional values are nil when their inputs
// are missing.
type SideResult struct {
	// LengthMM is the loaded geometric length to the effective ERD: the 3-D
	// hub hole ↔ rim hole distance, less half the flange hole for J-bend.
	LengthMM float64 `json:"length_mm"`
	// OrderLengthMM is the unloaded length that stretches to LengthMM at
	// TensionN (needs the spoke size and a target tension).
	OrderLengthMM *float64 `json:"order_length_mm,omitempty"`
	// StockLengthMM is the available length nearest OrderLengthMM (or
	// LengthMM when the stretch is unknown).
	StockLengthMM *float64 `json:"stock_length_mm,omitempty"`
	// SpokeEndMM is where the stock spoke ends along its axis relative to
	// the ERD level at TensionN: positive past it (too long), negative short.
	SpokeEndMM *float64 `json:"spoke_end_mm,omitempty"`
	// BracingAngleDeg is the angle between the spoke and the wheel plane.
	BracingAngleDeg float64 `json:"bracing_angle_deg"`
	// NippleAngleDeg is the spoke's angle to the rim radius at the nipple.
	NippleAngleDeg NippleAngle `json:"nipple_angle_deg"`
	// HubAngleDeg is the in-plane angle, seen from the axle, between the hub
	// hole and the rim hole: crosses × 720° / spoke_count.
	HubAngleDeg float64 `json:"hub_angle_deg"`
	// MaxCrosses is the largest cross count this side's geometry can take
	// before the spoke would leave the flange past the tangent (0 when the
	// spoke count allows radial lacing only).
	MaxCrosses int `json:"max_crosses"`
	// TensionN is this side's tension when a target is given.
	TensionN *float64 `json:"tension_n,omitempty"`
}

// NippleAngle splits the angle between the spoke and the rim radius at the
// nipple, in degrees.
type NippleAngle struct {
	// InPlane is the component in the wheel plane (0 for radial spokes).
	InPlane float64 `json:"in_plane"`
	// OutOfPlane is the component in the plane through the radius and the
	// axle (from flange offset and dish).
	OutOfPlane float64 `json:"out_of_plane"`
	// Total is the full 3-D angle between spoke and radius.
	Total float64 `json:"total"`
}

// Finding is one observation about the wheel. Codes are listed below.
type Finding struct {
	Code string `json:"code"`
	// Severity is "error", "warning" or "info".
	Severity string `json:"severity"`
	Message  string `json:"message"`
	// Side is "left" or "right" when the finding concerns one side.
	Side string `json:"side,omitempty"`
}

// Severities.
const (
	SeverityError   = "error"
	SeverityWarning = "warning"
	SeverityInfo    = "info"
)

// Finding codes.
const (
	// CodeHoleDiameterAssumed (info): no flange hole diameter was given;
	// Options.DefaultHoleDiameterMM was used for the J-bend correction.
	CodeHoleDiameterAssumed = "hole_diameter_assumed"
	// CodeHoleLoose (info): the flange hole is much larger than the spoke.
	CodeHoleLoose = "hole_loose"
	// CodeHeadOverlap (warning): the spoke runs over the head of the
	// neighbouring spoke on the same flange.
	CodeHeadOverlap = "head_overlap"
	// CodeLowBracingAngle (warning): the side's bracing angle is very low.
	CodeLowBracingAngle = "low_bracing_angle"
	// CodeTensionRatioHigh (warning): one side needs far more tension than
	// the other.
	CodeTensionRatioHigh = "tension_ratio_high"
	// CodeLowSideTension (warning): at the target, the low side's tension is
	// below Options.MinLowSideTensionN.
	CodeLowSideTension = "low_side_tension"
	// CodeNippleAngleHigh (warning): the spoke meets the nipple at a steep
	// angle to the rim radius.
	CodeNippleAngleHigh = "nipple_angle_high"
	// CodeSpokeStressHigh (warning): the stress in the thinnest section
	// exceeds Options.MaxStressFraction of the material's UTS.
	CodeSpokeStressHigh = "spoke_stress_high"
	// CodeRadialDiscSide (warning): the rotor side is laced radially.
	CodeRadialDiscSide = "radial_disc_side"
	// CodeRadialDriveSide (warning): a side that carries drive torque is
	// laced radially.
	CodeRadialDriveSide = "radial_drive_side"
	// CodeStockEndLong (warning): the stock spoke ends past the ERD level by
	// more than Options.StockEndLongMM.
	CodeStockEndLong = "stock_end_long"
	// CodeStockEndShort (warning): the stock spoke ends short of the ERD
	// level by more than Options.StockEndShortMM.
	CodeStockEndShort = "stock_end_short"
)
