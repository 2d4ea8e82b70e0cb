package geometry

import "wheelbench/service/spoke"

// Result is one wheel's geometry: what POST /v1/spoke-lengths answers
// beside the rule set's findings and cautions.
type Result struct {
	Left  SideResult `json:"left"`
	Right SideResult `json:"right"`
	// TensionRatioLeftToRight is T_left / T_right from lateral balance over
	// every spoke, Σ_L T_L·sin β = Σ_R T_R·sin β (n_L·T_L·sin β_L =
	// n_R·T_R·sin β_R when each side has one length), with β the angle of
	// the 3-D spoke line to the wheel plane.
	TensionRatioLeftToRight float64 `json:"tension_ratio_left_to_right"`
	// Lacing is the plan, one entry per spoke in spoke order, when asked
	// for (Wheel.IncludeLacing).
	Lacing []LacingSpoke `json:"lacing,omitempty"`
	// KeySpoke is the spoke laced first, when the plan is given.
	KeySpoke int `json:"key_spoke,omitempty"`
	// Facts are what the rule set needs beyond the answer.
	Facts Facts `json:"-"`
}

// SideResult is one side's spokes. Optional values are nil when their inputs
// are missing. With uneven lacing a side has several lengths
// (LengthGroups); the side's single figures are those of its longest
// group.
type SideResult struct {
	// LengthMM is the loaded geometric length to the effective ERD: the 3-D
	// hub hole ↔ rim hole distance, less half the flange hole for J-bend
	// (less the exit offset for seated spokes). The longest group's.
	LengthMM float64 `json:"length_mm"`
	// OrderLengthMM is the unloaded length that stretches to LengthMM at
	// TensionN (needs the spoke and a target tension).
	OrderLengthMM *float64 `json:"order_length_mm,omitempty"`
	// StockLengthMM is the available length nearest OrderLengthMM (or
	// LengthMM when the stretch is unknown).
	StockLengthMM *float64 `json:"stock_length_mm,omitempty"`
	// SpokeEndMM is where the stock spoke ends along its axis relative to
	// the ERD level (the nipple head) at TensionN: positive past it.
	SpokeEndMM *float64 `json:"spoke_end_mm,omitempty"`
	// BracingAngleDeg is the angle between the spoke and the wheel plane.
	BracingAngleDeg float64 `json:"bracing_angle_deg"`
	// NippleAngleDeg is the spoke's angle to the rim radius at the nipple.
	NippleAngleDeg NippleAngle `json:"nipple_angle_deg"`
	// HubAngleDeg is the in-plane angle, seen from the axle, between the hub
	// hole and the rim hole: crosses × 360° / spokes on the flange for an
	// evenly laced J-bend side.
	HubAngleDeg float64 `json:"hub_angle_deg"`
	// MaxCrosses is the largest cross count this side's geometry can take
	// before a J-bend spoke would leave the flange past the tangent (0 when
	// the flange's spoke count allows radial lacing only).
	MaxCrosses int `json:"max_crosses"`
	// TensionN is this side's tension when a target is given.
	TensionN *float64 `json:"tension_n,omitempty"`
	// Spokes is how many spokes the side's flange carries.
	Spokes int `json:"spokes"`
	// Exit is the model the length was computed with: j_bend, tangential
	// or angled (ExitAngleDeg then gives the angle).
	Exit         string   `json:"exit"`
	ExitAngleDeg *float64 `json:"exit_angle_deg,omitempty"`
	// MaxCrossesClearOfHeads is the most crosses at which a J-bend spoke
	// passes clear of its neighbour's head (MaxCrosses for seated spokes).
	MaxCrossesClearOfHeads int `json:"max_crosses_clear_of_heads"`
	// LengthGroups are the side's distinct lengths, longest first.
	LengthGroups []LengthGroup `json:"length_groups"`
}

// LengthGroup is one length of a side and how many spokes take it.
type LengthGroup struct {
	LengthMM      float64  `json:"length_mm"`
	Count         int      `json:"count"`
	OrderLengthMM *float64 `json:"order_length_mm,omitempty"`
	StockLengthMM *float64 `json:"stock_length_mm,omitempty"`
	SpokeEndMM    *float64 `json:"spoke_end_mm,omitempty"`
}

// LacingSpoke is one spoke of the plan.
type LacingSpoke struct {
	// Spoke is its number: 1 is the first rim hole clockwise of the valve
	// as seen from the right.
	Spoke int `json:"spoke"`
	// Side is left or right.
	Side string `json:"side"`
	// RimHoleDeg and HubHoleDeg are the holes' angles in the wheel plane,
	// clockwise from the valve as seen from the right. For a seated spoke
	// HubHoleDeg is where it leaves the hole circle.
	RimHoleDeg float64 `json:"rim_hole_deg"`
	HubHoleDeg float64 `json:"hub_hole_deg"`
	// Head is in (on the flange's inner face) or out.
	Head string `json:"head"`
	// Direction is leading, trailing or radial.
	Direction string  `json:"direction"`
	Crosses   int     `json:"crosses"`
	LengthMM  float64 `json:"length_mm"`
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

// Facts are the resolved inputs and worst cases the rule set judges.
type Facts struct {
	// Kind and Brake are the hub's, defaults applied (bicycle, none).
	Kind, Brake string
	Driven      bool
	// Sides: 0 is left, 1 is right.
	Sides [2]SideFacts
	// HasSpoke: the spoke was described; Spoke is it, resolved (nil when
	// not described).
	HasSpoke bool
	Spoke    *spoke.Resolved
	// HeadMM is the J-bend head diameter used (HeadAssumed when estimated).
	HeadMM      float64
	HeadAssumed bool
	// TargetN is the target tension, 0 when none.
	TargetN float64
	// RatioIfRimTurned is T_left/T_right with the rim turned round (its
	// offset and stagger mirrored); 0 when the rim has neither, or when
	// turned round the left spokes would have no bracing (no ratio).
	RatioIfRimTurned float64
	// Stock is what stock lengths were chosen from (nil: none).
	Stock *Stock
}

// SideFacts are one side's resolved inputs and worst cases.
type SideFacts struct {
	Exit    string
	Crosses int
	Spokes  int
	// HoleMM is the J-bend hole used, HoleAssumed when the default.
	HoleMM      float64
	HoleAssumed bool
	ThicknessMM float64 // 0 when not given
	// PassesHeads: the side's spokes run past their neighbours' heads
	// (crossed J-bend); HeadGapMM is then the smallest gap between a spoke
	// and a neighbour's head centre, ClearMM the gap it needs.
	PassesHeads        bool
	HeadGapMM, ClearMM float64
	// NippleMaxDeg is the largest total nipple angle, BracingMinDeg the
	// smallest bracing angle, of the side's spokes.
	NippleMaxDeg, BracingMinDeg float64
	// SeatAngleDeg is, for seated spokes, the in-plane angle at which the
	// seat sends them to the rim; PatternAngleDeg the angle the crosses
	// give (crosses × 360° / spokes on the flange).
	SeatAngleDeg, PatternAngleDeg float64
}
