package fit

import (
	"errors"
	"fmt"
)

// Options holds every clearance, margin and limit the rules use. None is a
// published standard except where noted; the trade rules of thumb are marked
// "common practice" and values recalled without a source "from memory". Start
// from DefaultOptions and override what the shop decides otherwise.
type Options struct {
	// MinBracingAngleDeg: a lower bracing angle gives low_bracing_angle;
	// below about 3° a side barely resists lateral load. Common practice.
	MinBracingAngleDeg float64 `json:"min_bracing_angle_deg"`
	// MaxTensionRatio: a higher tight/slack tension ratio gives
	// tension_ratio_high. Common practice.
	MaxTensionRatio float64 `json:"max_tension_ratio"`
	// MaxNippleAngleDeg: a larger total angle between spoke and rim radius
	// at the nipple gives nipple_angle_high. Common practice.
	MaxNippleAngleDeg float64 `json:"max_nipple_angle_deg"`
	// RimTurnedMargin: a rim whose offset, turned round, would bring the
	// tension ratio closer to 1 by more than this factor gives
	// rim_offset_reversed. Our own margin against rounding.
	RimTurnedMargin float64 `json:"rim_turned_margin"`
	// AluminiumNippleMaxTensionN: aluminium nipples above this target (or
	// on motor, cargo and tandem hubs) give aluminium_nipple_high_load.
	// Common practice, from memory.
	AluminiumNippleMaxTensionN float64 `json:"aluminium_nipple_max_tension_n"`
	// RolledThreadRiseMaxMM: a rolled thread measures up to this much more
	// than the wire it was rolled on; a nipple named only by its measured
	// thread diameter fits spokes of sizes from that diameter less this up
	// to the diameter itself. From memory.
	RolledThreadRiseMaxMM float64 `json:"rolled_thread_rise_max_mm"`
	// TypicalNippleLengthMM is the nipple length assumed when the request
	// names no nipple (spoke lengths alone). From memory: 12 mm is the
	// commonest.
	TypicalNippleLengthMM float64 `json:"typical_nipple_length_mm"`
	// HeadBearingMarginMM: a spoke head must be at least this much larger in
	// diameter than the hole (or washer bore) it bears on, else it can pull
	// through. Common practice.
	HeadBearingMarginMM float64 `json:"head_bearing_margin_mm"`
	// LooseHoleClearanceMM: a flange hole more than this much larger than the
	// spoke lets the elbow work in the hole. Common practice.
	LooseHoleClearanceMM float64 `json:"loose_hole_clearance_mm"`
	// ElbowGapToleranceMM: an elbow may be this much longer than the flange
	// (plus hub washers) is thick before the head stands off the flange.
	// Common practice.
	ElbowGapToleranceMM float64 `json:"elbow_gap_tolerance_mm"`
	// ElbowShortToleranceMM: an elbow may be this much shorter than the
	// flange (plus hub washers) is thick and still seat. Common practice.
	ElbowShortToleranceMM float64 `json:"elbow_short_tolerance_mm"`
	// MaxWashersPerSpoke is the most washers stacked under one head or one
	// nipple. Common practice.
	MaxWashersPerSpoke int `json:"max_washers_per_spoke"`
	// StandardWasherThicknessesMM are the thicknesses proposed when no
	// suitable washer was given. From memory (common spoke-washer stock).
	StandardWasherThicknessesMM []float64 `json:"standard_washer_thicknesses_mm"`
	// WasherBoreClearanceMM: a proposed standard washer's bore is the spoke
	// (or nipple shank) diameter plus this. Common practice.
	WasherBoreClearanceMM float64 `json:"washer_bore_clearance_mm"`
	// RimHoleClearanceMM: a rim hole must be at least this much larger than
	// the nipple shank so the nipple passes and can swivel. Common practice.
	RimHoleClearanceMM float64 `json:"rim_hole_clearance_mm"`
	// DrillStepMM: proposed drill diameters are rounded up to this step
	// (metric jobber drills). Common practice.
	DrillStepMM float64 `json:"drill_step_mm"`
	// MaxDrillEnlargementMM: drilling a rim hole larger than its original
	// diameter by more than this is not proposed. Common practice.
	MaxDrillEnlargementMM float64 `json:"max_drill_enlargement_mm"`
	// AllowDrilling: when false, a nipple too big for the rim holes is never
	// fixed by drilling.
	AllowDrilling bool `json:"allow_drilling"`
	// NippleHeadMarginMM: a nipple head must be at least this much larger
	// than the rim hole (or rim washer bore). Common practice.
	NippleHeadMarginMM float64 `json:"nipple_head_margin_mm"`
	// ThreadDiameterToleranceMM: spoke and nipple thread sizes (or two
	// measured major diameters) farther apart than this do not mate; sizes
	// come at least 0.2 mm apart, and 2.0 mm is sold as 14 gauge
	// (2.032 mm). Common practice.
	ThreadDiameterToleranceMM float64 `json:"thread_diameter_tolerance_mm"`
	// TPITolerance: thread pitches farther apart (threads per inch) do not
	// mate. Common practice.
	TPITolerance float64 `json:"tpi_tolerance"`
	// MinThreadEngagementDiameters: engaged thread length must be at least
	// this many thread diameters (the fastener rule for a steel thread in a
	// softer nut). Common practice.
	MinThreadEngagementDiameters float64 `json:"min_thread_engagement_diameters"`
	// MaxSpokeEndPastNippleMM: a spoke end farther than this past the head
	// end of its nipple can cut the rim tape or tube. Common practice; it is
	// also the tolerance of choosing the nearest of stock lengths 2 mm
	// apart, so the nearest length is never judged too long.
	MaxSpokeEndPastNippleMM float64 `json:"max_spoke_end_past_nipple_mm"`
	// SpokeSafetyFactor: the highest spoke stress (at the thread's stress
	// area) must not exceed the material's UTS divided by this. Common
	// practice.
	SpokeSafetyFactor float64 `json:"spoke_safety_factor"`
	// NearRimLimitFraction: tension above this fraction of the rim maker's
	// limit draws a caution. Common practice.
	NearRimLimitFraction float64 `json:"near_rim_limit_fraction"`
	// MinLowSideTensionN: the slacker side's tension below this lets spokes
	// go slack under load. Common practice.
	MinLowSideTensionN float64 `json:"min_low_side_tension_n"`
	// TyreRimRatioRecommended is the tyre-width / rim-inner-width band
	// outside which an info finding is given: 1.4 to 2.2 (Cycling UK / CTC
	// guidance, quoted second-hand; confidence B).
	TyreRimRatioRecommended [2]float64 `json:"tyre_rim_ratio_recommended"`
	// TyreRimRatioAccepted is the wider band outside which a warning is
	// given. Common practice, from memory (current narrow road tyres on wide
	// rims sit near 1.1 to 1.3).
	TyreRimRatioAccepted [2]float64 `json:"tyre_rim_ratio_accepted"`
	// HubSpacingToleranceMM: hub and frame spacing farther apart than this
	// do not fit. Common practice.
	HubSpacingToleranceMM float64 `json:"hub_spacing_tolerance_mm"`
	// BSDToleranceMM: tyre and rim bead seat diameters farther apart than
	// this are different ISO 5775 sizes (sizes are whole millimetres; the
	// closest listed pair, 587 and 584, is 3 mm apart).
	BSDToleranceMM float64 `json:"bsd_tolerance_mm"`
}

// Rim inner width as a fraction of the tyre's nominal width: about 65 % for
// tyres under 30 mm and 55 % for wider ones (ISO 5775 encyclopedia article,
// older revision; confidence A). Used for the suggested rim width in the
// tyre_width_out_of_range finding.
const (
	narrowTyreRimFraction = 0.65
	wideTyreRimFraction   = 0.55
	narrowTyreLimitMM     = 30.0
)

// DefaultOptions returns the defaults documented on each Options field.
func DefaultOptions() Options {
	return Options{
		MinBracingAngleDeg:           3,                        // common practice
		MaxTensionRatio:              2,                        // common practice
		MaxNippleAngleDeg:            10,                       // common practice
		RimTurnedMargin:              1.02,                     // our own margin
		AluminiumNippleMaxTensionN:   1200,                     // common practice, from memory
		RolledThreadRiseMaxMM:        0.3,                      // from memory
		TypicalNippleLengthMM:        12,                       // from memory
		HeadBearingMarginMM:          0.8,                      // common practice
		LooseHoleClearanceMM:         0.8,                      // common practice
		ElbowGapToleranceMM:          0.3,                      // common practice
		ElbowShortToleranceMM:        0.3,                      // common practice
		MaxWashersPerSpoke:           3,                        // common practice
		StandardWasherThicknessesMM:  []float64{0.5, 0.8, 1.0}, // from memory
		WasherBoreClearanceMM:        0.2,                      // common practice
		RimHoleClearanceMM:           0.2,                      // common practice
		DrillStepMM:                  0.1,                      // common practice
		MaxDrillEnlargementMM:        1.0,                      // common practice
		AllowDrilling:                true,
		NippleHeadMarginMM:           0.8,                   // common practice
		ThreadDiameterToleranceMM:    0.1,                   // common practice
		TPITolerance:                 0.5,                   // common practice
		MinThreadEngagementDiameters: 2.0,                   // common practice
		MaxSpokeEndPastNippleMM:      1.0,                   // common practice
		SpokeSafetyFactor:            2.5,                   // common practice
		NearRimLimitFraction:         0.9,                   // common practice
		MinLowSideTensionN:           500,                   // common practice, from memory: about 50 kgf
		TyreRimRatioRecommended:      [2]float64{1.4, 2.2},  // CTC guidance (B)
		TyreRimRatioAccepted:         [2]float64{1.05, 2.6}, // common practice, from memory
		HubSpacingToleranceMM:        1.0,                   // common practice
		BSDToleranceMM:               1.0,
	}
}

// ErrOptions marks Options that cannot be used (a caller bug).
var ErrOptions = errors.New("fit: invalid options")

// validate refuses non-finite or negative margins, a safety factor below 1,
// and empty or inverted width bands.
func (o Options) validate() error {
	nonNeg := []float64{o.MinBracingAngleDeg, o.MaxNippleAngleDeg, o.AluminiumNippleMaxTensionN, o.RolledThreadRiseMaxMM, o.HeadBearingMarginMM, o.LooseHoleClearanceMM, o.ElbowGapToleranceMM, o.ElbowShortToleranceMM,
		o.WasherBoreClearanceMM, o.RimHoleClearanceMM, o.DrillStepMM, o.MaxDrillEnlargementMM, o.NippleHeadMarginMM,
		o.ThreadDiameterToleranceMM, o.TPITolerance, o.MinThreadEngagementDiameters, o.MaxSpokeEndPastNippleMM,
		o.NearRimLimitFraction, o.MinLowSideTensionN, o.HubSpacingToleranceMM, o.BSDToleranceMM}
	for _, x := range nonNeg {
		if !finite(x) || x < 0 {
			return fmt.Errorf("%w: margins and tolerances must be finite and not negative", ErrOptions)
		}
	}
	if !finite(o.MaxTensionRatio) || o.MaxTensionRatio < 1 || !finite(o.RimTurnedMargin) || o.RimTurnedMargin < 1 {
		return fmt.Errorf("%w: max_tension_ratio and rim_turned_margin must be at least 1", ErrOptions)
	}
	if !finite(o.TypicalNippleLengthMM) || o.TypicalNippleLengthMM <= 0 {
		return fmt.Errorf("%w: typical_nipple_length_mm must be positive", ErrOptions)
	}
	if !finite(o.SpokeSafetyFactor) || o.SpokeSafetyFactor < 1 {
		return fmt.Errorf("%w: spoke_safety_factor must be at least 1", ErrOptions)
	}
	if o.MaxWashersPerSpoke < 0 {
		return fmt.Errorf("%w: max_washers_per_spoke must not be negative", ErrOptions)
	}
	for _, t := range o.StandardWasherThicknessesMM {
		if !finite(t) || t <= 0 {
			return fmt.Errorf("%w: standard washer thicknesses must be positive", ErrOptions)
		}
	}
	for _, b := range [][2]float64{o.TyreRimRatioRecommended, o.TyreRimRatioAccepted} {
		if !finite(b[0]) || !finite(b[1]) || b[0] <= 0 || b[1] < b[0] {
			return fmt.Errorf("%w: tyre/rim ratio bands must be positive and ordered", ErrOptions)
		}
	}
	return nil
}
