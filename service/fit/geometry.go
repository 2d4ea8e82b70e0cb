package fit

import (
	"errors"
	"fmt"
	"math"
)

// ErrGeometry marks Geometry facts that are missing or not finite: a bug in
// the caller, not in the client's request.
var ErrGeometry = errors.New("fit: invalid geometry facts")

// Geometry is what Check needs from a spoke-length calculation of the same
// Input. Fill it from the geometry package's result; Check never computes
// geometry itself.
type Geometry struct {
	Left  SideGeometry `json:"left"`
	Right SideGeometry `json:"right"`
	// TensionRatioLeftToRight is T_left / T_right at equilibrium, from the
	// lateral force balance T_L·sin β_L = T_R·sin β_R, i.e.
	// sin β_R / sin β_L with β the bracing angles. Must be positive. The
	// tighter side gets Input.TargetTensionN, the other side that times the
	// ratio (or divided by it).
	TensionRatioLeftToRight float64 `json:"tension_ratio_left_to_right"`
}

// SideGeometry holds one side's facts.
type SideGeometry struct {
	// LengthMM is the computed spoke length to the ERD level (spoke end flush
	// with the head end of a seated nipple, any nipple-seat correction for
	// rim washers included). Positive. Echoed in the report.
	LengthMM float64 `json:"length_mm"`
	// StockLengthMM is the spoke length actually chosen (a stock length or a
	// cut length); nil when none was chosen yet.
	StockLengthMM *float64 `json:"stock_length_mm,omitempty"`
	// SpokeEndMM is where the chosen spoke's end sits relative to the head
	// end of its seated nipple, in mm along the spoke: positive = past it
	// (toward the tyre), negative = short of it, inside the nipple. Fill it
	// as StockLengthMM − LengthMM plus the spoke's elastic stretch at this
	// side's tension if the calculation gives one. Nil means "the computed
	// length", i.e. 0, and the thread checks then say so in Assumed.
	SpokeEndMM *float64 `json:"spoke_end_mm,omitempty"`
	// Wraps is true when the requested crosses break the tangent limit
	// (cos θ < r_flange/R_rim in the lacing plane): the spoke would wrap
	// around the flange.
	Wraps bool `json:"wraps"`
	// HeadOverlap is true when a spoke head, at the requested crosses, sits
	// over a neighbouring hole's head or spoke.
	HeadOverlap bool `json:"head_overlap"`
	// MaxCrosses is the most crosses this side can be laced with neither
	// Wraps nor HeadOverlap; used in remedies. Zero or more.
	MaxCrosses int `json:"max_crosses"`
	// BracingAngleDeg is the angle between the spoke and the wheel plane.
	// Reported in values only. Between 0 and 90.
	BracingAngleDeg float64 `json:"bracing_angle_deg"`
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// validate reports the first bad fact.
func (g Geometry) validate() error {
	if r := g.TensionRatioLeftToRight; !finite(r) || r <= 0 {
		return fmt.Errorf("%w: tension_ratio_left_to_right %v must be positive and finite", ErrGeometry, r)
	}
	for _, s := range []struct {
		side string
		g    SideGeometry
	}{{"left", g.Left}, {"right", g.Right}} {
		sg := s.g
		if !finite(sg.LengthMM) || sg.LengthMM <= 0 || sg.LengthMM > maxRimMM {
			return fmt.Errorf("%w: %s length_mm %v must be positive, finite, at most %g", ErrGeometry, s.side, sg.LengthMM, maxRimMM)
		}
		if sg.StockLengthMM != nil && (!finite(*sg.StockLengthMM) || *sg.StockLengthMM <= 0 || *sg.StockLengthMM > maxRimMM) {
			return fmt.Errorf("%w: %s stock_length_mm must be positive, finite, at most %g", ErrGeometry, s.side, maxRimMM)
		}
		if sg.SpokeEndMM != nil && (!finite(*sg.SpokeEndMM) || math.Abs(*sg.SpokeEndMM) > maxRimMM) {
			return fmt.Errorf("%w: %s spoke_end_mm must be finite, at most %g either way", ErrGeometry, s.side, maxRimMM)
		}
		if sg.MaxCrosses < 0 {
			return fmt.Errorf("%w: %s max_crosses must not be negative", ErrGeometry, s.side)
		}
		if !finite(sg.BracingAngleDeg) || sg.BracingAngleDeg < 0 || sg.BracingAngleDeg > 90 {
			return fmt.Errorf("%w: %s bracing_angle_deg must lie in [0, 90]", ErrGeometry, s.side)
		}
	}
	return nil
}
