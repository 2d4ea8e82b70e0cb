package fit

import (
	"math"
	"slices"
)

// Verdict is the overall answer of a compatibility check.
type Verdict string

// Verdicts. Only error findings decide the verdict; warnings and infos never
// change it, and every rider-relevant one carries a caution as well.
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

// Finding codes: one per rule, each with one severity (severityOf) and
// one threshold (an Options field), whichever endpoint finds it.
const (
	// Rules on the geometry alone (spoke lengths, compatibility checks,
	// builds).
	CodeHoleDiameterAssumed      = "hole_diameter_assumed"
	CodeSpokeLooseInFlangeHole   = "spoke_loose_in_flange_hole"
	CodeSpokeHeadOverlap         = "spoke_head_overlap"
	CodeLowBracingAngle          = "low_bracing_angle"
	CodeTensionRatioHigh         = "tension_ratio_high"
	CodeLowSideTensionLow        = "low_side_tension_low"
	CodeNippleAngleHigh          = "nipple_angle_high"
	CodeSpokeStressHigh          = "spoke_stress_high"
	CodeRadialDriveSide          = "radial_drive_side"
	CodeRadialBrakeSide          = "radial_brake_side"
	CodeRadialLacingHubApproval  = "radial_lacing_hub_approval"
	CodeRimOffsetReversed        = "rim_offset_reversed"
	CodeSeatPatternMismatch      = "seat_pattern_mismatch"
	CodeSpokeProtrudesPastNipple = "spoke_protrudes_past_nipple"
	CodeThreadEngagementShort    = "thread_engagement_short"
	CodeSpokeThreadBottoms       = "spoke_thread_bottoms"

	// Rules on the parts (compatibility checks and builds).
	CodeHoleCountMismatch       = "hole_count_mismatch"
	CodeLacingWrapsFlange       = "lacing_wraps_flange"
	CodeSpokeHeadPullsThrough   = "spoke_head_pulls_through"
	CodeElbowGap                = "elbow_gap"
	CodeElbowTooShort           = "elbow_too_short"
	CodeNippleWontPassRimHole   = "nipple_wont_pass_rim_hole"
	CodeNippleHeadPullsThrough  = "nipple_head_pulls_through"
	CodeThreadMismatch          = "thread_mismatch"
	CodeTensionAboveRimLimit    = "tension_above_rim_limit"
	CodeRimLimitUnknown         = "rim_limit_unknown"
	CodeAluminiumNippleHighLoad = "aluminium_nipple_high_load"
	CodeTyreRimDiameterMismatch = "tyre_rim_diameter_mismatch"
	CodeTyreWidthOutOfRange     = "tyre_width_out_of_range"
	// CodeTyreWidthOutsideRecommended: outside the recommended tyre/rim
	// width band, inside the accepted one.
	CodeTyreWidthOutsideRecommended = "tyre_width_outside_recommended"
	CodeBSDNotInTable               = "bsd_not_in_table"
	CodeHubSpacingMismatch          = "hub_spacing_mismatch"
)

// severities is the one severity of every rule.
var severities = map[string]Severity{
	CodeHoleDiameterAssumed:         Info,
	CodeSpokeLooseInFlangeHole:      Warning,
	CodeSpokeHeadOverlap:            Warning,
	CodeLowBracingAngle:             Warning,
	CodeTensionRatioHigh:            Warning,
	CodeLowSideTensionLow:           Warning,
	CodeNippleAngleHigh:             Warning,
	CodeSpokeStressHigh:             Warning,
	CodeRadialDriveSide:             Warning,
	CodeRadialBrakeSide:             Warning,
	CodeRadialLacingHubApproval:     Info,
	CodeRimOffsetReversed:           Warning,
	CodeSeatPatternMismatch:         Warning,
	CodeSpokeProtrudesPastNipple:    Warning,
	CodeThreadEngagementShort:       Error,
	CodeSpokeThreadBottoms:          Error,
	CodeHoleCountMismatch:           Error,
	CodeLacingWrapsFlange:           Error,
	CodeSpokeHeadPullsThrough:       Error,
	CodeElbowGap:                    Error,
	CodeElbowTooShort:               Error,
	CodeNippleWontPassRimHole:       Error,
	CodeNippleHeadPullsThrough:      Error,
	CodeThreadMismatch:              Error,
	CodeTensionAboveRimLimit:        Error,
	CodeRimLimitUnknown:             Info,
	CodeAluminiumNippleHighLoad:     Warning,
	CodeTyreRimDiameterMismatch:     Error,
	CodeTyreWidthOutOfRange:         Warning,
	CodeTyreWidthOutsideRecommended: Info,
	CodeBSDNotInTable:               Info,
	CodeHubSpacingMismatch:          Error,
}

// Codes lists every finding code, sorted.
func Codes() []string {
	out := make([]string, 0, len(severities))
	for c := range severities {
		out = append(out, c)
	}
	slices.Sort(out)
	return out
}

// SeverityOf is a code's severity.
func SeverityOf(code string) Severity { return severities[code] }

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
	// FixedByChange is true when a change in the report's changes fixes it.
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
	// Count is the total number of washers, or of holes to drill, or of
	// spokes to change.
	Count           int      `json:"count,omitempty"`
	ThicknessMM     *float64 `json:"thickness_mm,omitempty"`
	InnerDiameterMM *float64 `json:"inner_diameter_mm,omitempty"`
	OuterDiameterMM *float64 `json:"outer_diameter_mm,omitempty"`
	// StackMM is the washer stack per spoke (add_washers).
	StackMM *float64 `json:"stack_mm,omitempty"`
	// FromGiven is true when the washer is one of Input.Washers; PartID
	// names the catalog washer proposed (builds); neither: a standard
	// washer to buy.
	FromGiven bool   `json:"from_given,omitempty"`
	PartID    string `json:"part_id,omitempty"`
	// DiameterMM is the drill diameter (drill_rim_holes).
	DiameterMM *float64 `json:"diameter_mm,omitempty"`
	// ByMM is the length change, negative = shorter; ToMM the length to
	// use (change_spoke_length).
	ByMM *float64 `json:"by_mm,omitempty"`
	ToMM *float64 `json:"to_mm,omitempty"`
	// Part is "nipple" for swap_part.
	Part       string `json:"part,omitempty"`
	Reason     string `json:"reason,omitempty"`
	Suggestion string `json:"suggestion,omitempty"`
	// Fixes lists the finding codes this change fixes.
	Fixes []string `json:"fixes"`
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
		eq(a.DiameterMM, b.DiameterMM) && eq(a.ByMM, b.ByMM) && eq(a.ToMM, b.ToMM) && a.Part == b.Part &&
		a.FromGiven == b.FromGiven && a.PartID == b.PartID
}

// round4 rounds to 0.0001 for values shown to people; −0 becomes 0.
func round4(x float64) float64 { return math.Round(x*1e4)/1e4 + 0 }

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
