package fit

import "slices"

// Verdict is the overall answer.
type Verdict string

// Verdicts.
const (
	// Fits: no error finding.
	Fits Verdict = "fits"
	// FitsWithChanges: every error finding is fixed by a listed change.
	FitsWithChanges Verdict = "fits_with_changes"
	// DoesNotFit: some error finding is fixed by no listed change.
	DoesNotFit Verdict = "does_not_fit"
)

// Severity of a finding.
type Severity string

// Severities.
const (
	Error   Severity = "error"
	Warning Severity = "warning"
	Info    Severity = "info"
)

// Finding codes. The first group is the contract's fixed list; the rest are
// this package's own.
const (
	CodeHoleCountMismatch        = "hole_count_mismatch"
	CodeLacingWrapsFlange        = "lacing_wraps_flange"
	CodeSpokeHeadOverlap         = "spoke_head_overlap"
	CodeSpokeHeadPullsThrough    = "spoke_head_pulls_through"
	CodeSpokeLooseInFlangeHole   = "spoke_loose_in_flange_hole"
	CodeElbowGap                 = "elbow_gap"
	CodeElbowTooShort            = "elbow_too_short"
	CodeNippleWontPassRimHole    = "nipple_wont_pass_rim_hole"
	CodeNippleHeadPullsThrough   = "nipple_head_pulls_through"
	CodeThreadMismatch           = "thread_mismatch"
	CodeThreadEngagementShort    = "thread_engagement_short"
	CodeSpokeProtrudesPastNipple = "spoke_protrudes_past_nipple"
	CodeTensionAboveRimLimit     = "tension_above_rim_limit"
	CodeSpokeStressHigh          = "spoke_stress_high"
	CodeLowSideTensionLow        = "low_side_tension_low"
	CodeTyreRimDiameterMismatch  = "tyre_rim_diameter_mismatch"
	CodeTyreWidthOutOfRange      = "tyre_width_out_of_range"
	CodeHubSpacingMismatch       = "hub_spacing_mismatch"

	// CodeSpokeThreadBottoms: the spoke's unthreaded body would enter the
	// nipple's thread before the spoke is tight (spoke too long for its
	// thread).
	CodeSpokeThreadBottoms = "spoke_thread_bottoms"
	// CodeBSDNotInTable: the rim's bead seat diameter is not in the ISO 5775
	// table this package knows (info).
	CodeBSDNotInTable = "bsd_not_in_table"
	// CodeRimLimitUnknown: no rim tension limit was given (info).
	CodeRimLimitUnknown = "rim_limit_unknown"
)

// Finding is one result of one rule.
type Finding struct {
	Code     string   `json:"code"`
	Severity Severity `json:"severity"`
	// Side is "left" or "right" for a one-side finding, empty otherwise.
	Side    string `json:"side,omitempty"`
	Message string `json:"message"`
	Remedy  string `json:"remedy,omitempty"`
	// Values are the measured and limiting numbers the rule compared,
	// named with their units.
	Values map[string]float64 `json:"values,omitempty"`
	// Assumed lists the request fields (dotted paths) whose typical values,
	// not given ones, this finding rests on.
	Assumed []string `json:"assumed,omitempty"`
	// FixedByChange is true when a change in Report.Changes fixes it.
	FixedByChange bool `json:"fixed_by_change"`
}

// Change kinds.
const (
	ChangeAddWashers    = "add_washers"
	ChangeDrillRimHoles = "drill_rim_holes"
	ChangeSwapPart      = "swap_part"
	ChangeSpokeLength   = "change_spoke_length"
)

// Change is one required change, ready to become a quote line.
type Change struct {
	Kind string `json:"kind"`
	// Where is "hub" or "rim" for add_washers.
	Where WasherPlace `json:"where,omitempty"`
	// Side is "left", "right" or "both".
	Side string `json:"side,omitempty"`
	// PerSpoke is the number of washers per spoke (add_washers).
	PerSpoke int `json:"per_spoke,omitempty"`
	// Count is the total number of washers, or of holes to drill.
	Count           int      `json:"count,omitempty"`
	ThicknessMM     *float64 `json:"thickness_mm,omitempty"`
	InnerDiameterMM *float64 `json:"inner_diameter_mm,omitempty"`
	OuterDiameterMM *float64 `json:"outer_diameter_mm,omitempty"`
	// StackMM is the washer stack per spoke (add_washers).
	StackMM *float64 `json:"stack_mm,omitempty"`
	// FromGiven is true when the washer is one of Input.Washers, false when
	// it is a standard washer to buy (add_washers).
	FromGiven bool `json:"from_given,omitempty"`
	// DiameterMM is the drill diameter (drill_rim_holes).
	DiameterMM *float64 `json:"diameter_mm,omitempty"`
	// ByMM is the length change, negative = shorter (change_spoke_length).
	ByMM *float64 `json:"by_mm,omitempty"`
	// Part is "nipple" for swap_part.
	Part       string `json:"part,omitempty"`
	Reason     string `json:"reason,omitempty"`
	Suggestion string `json:"suggestion,omitempty"`
	// Fixes lists the finding codes this change fixes.
	Fixes []string `json:"fixes"`
}

// SideLength echoes one side's spoke lengths.
type SideLength struct {
	LengthMM      float64  `json:"length_mm"`
	StockLengthMM *float64 `json:"stock_length_mm,omitempty"`
	// TensionN is this side's tension at the target.
	TensionN float64 `json:"tension_n"`
}

// Report is the answer to a compatibility check. Slices are never nil, so
// they encode as [] rather than null.
type Report struct {
	Verdict  Verdict    `json:"verdict"`
	Findings []Finding  `json:"findings"`
	Changes  []Change   `json:"changes"`
	Cautions []string   `json:"cautions"`
	Left     SideLength `json:"left"`
	Right    SideLength `json:"right"`
}

func ptr(x float64) *float64 { return &x }

// verdictOf applies the rule: an error no change fixes → does_not_fit; errors
// all fixed → fits_with_changes; no error → fits.
func verdictOf(fs []Finding) Verdict {
	v := Fits
	for _, f := range fs {
		if f.Severity != Error {
			continue
		}
		if !f.FixedByChange {
			return DoesNotFit
		}
		v = FitsWithChanges
	}
	return v
}

// mergeSides folds a left and a right change that differ only in side and
// count into one change for both sides.
func mergeSides(cs []Change) []Change {
	var out []Change
	used := make([]bool, len(cs))
	for i := range cs {
		if used[i] {
			continue
		}
		c := cs[i]
		for j := i + 1; j < len(cs); j++ {
			if used[j] || !sameBut(c, cs[j]) {
				continue
			}
			used[j] = true
			c.Side = "both"
			c.Count += cs[j].Count
			for _, code := range cs[j].Fixes {
				if !slices.Contains(c.Fixes, code) {
					c.Fixes = append(c.Fixes, code)
				}
			}
			break
		}
		out = append(out, c)
	}
	return out
}

func sameBut(a, b Change) bool {
	eq := func(x, y *float64) bool { return (x == nil) == (y == nil) && (x == nil || *x == *y) }
	return a.Kind == b.Kind && a.Where == b.Where && a.PerSpoke == b.PerSpoke &&
		a.Side != b.Side && a.Side != "both" && b.Side != "both" &&
		eq(a.ThicknessMM, b.ThicknessMM) && eq(a.InnerDiameterMM, b.InnerDiameterMM) &&
		eq(a.OuterDiameterMM, b.OuterDiameterMM) && eq(a.StackMM, b.StackMM) &&
		eq(a.DiameterMM, b.DiameterMM) && eq(a.ByMM, b.ByMM) && a.Part == b.Part &&
		a.FromGiven == b.FromGiven
}
