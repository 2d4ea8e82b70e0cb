package fit

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strconv"

	"wheelbench/service/spoke"
)

// FieldError is one bad field of the request body. Pointer is an RFC 6901
// JSON pointer into the body as the client sent it ("/hub/left/pcd_mm").
// Unprocessable is false for malformed or absurd values (HTTP 400: not
// finite, not positive, out of any sane range, unknown name) and true for
// well-formed values that cannot describe a buildable wheel (HTTP 422).
// Several bad fields come back as errors.Join of several *FieldError.
type FieldError struct {
	Pointer       string
	Message       string
	Unprocessable bool
}

// Error returns "pointer: message".
func (e *FieldError) Error() string { return e.Pointer + ": " + e.Message }

// FieldPointer returns the JSON pointer of the bad field.
func (e *FieldError) FieldPointer() string { return e.Pointer }

// IsUnprocessable reports whether the field is well-formed but impossible.
func (e *FieldError) IsUnprocessable() bool { return e.Unprocessable }

func invalid(pointer, format string, a ...any) *FieldError {
	return &FieldError{Pointer: pointer, Message: fmt.Sprintf(format, a...)}
}

func unprocessable(pointer, format string, a ...any) *FieldError {
	return &FieldError{Pointer: pointer, Message: fmt.Sprintf(format, a...), Unprocessable: true}
}

func joinErrs(errs []error) error {
	if len(errs) == 1 {
		return errs[0]
	}
	return errors.Join(errs...)
}

// Sane upper bounds, far beyond any wheel, that separate absurd input from
// real parts (HTTP 400).
const (
	maxPartMM     = 50.0   // a hole, head, elbow, nipple, washer or thread
	maxHubMM      = 500.0  // flange circle, centre-to-flange, spacing
	maxRimMM      = 1000.0 // ERD, BSD, rim or tyre width
	maxTensionN   = 20000.0
	maxTPI        = 200.0
	maxSpokeCount = 200
)

// validator collects FieldErrors.
type validator struct{ errs []error }

func (v *validator) add(e *FieldError) { v.errs = append(v.errs, e) }

// size checks a required positive, finite dimension no larger than max.
func (v *validator) size(pointer string, x, max float64) bool {
	switch {
	case math.IsNaN(x) || math.IsInf(x, 0):
		v.add(invalid(pointer, "must be a finite number"))
	case x <= 0:
		v.add(invalid(pointer, "must be positive (got %g)", x))
	case x > max:
		v.add(invalid(pointer, "%g is not a plausible size (at most %g)", x, max))
	default:
		return true
	}
	return false
}

// optSize checks an optional dimension when given.
func (v *validator) optSize(pointer string, x *float64, max float64) {
	if x != nil {
		v.size(pointer, *x, max)
	}
}

func (v *validator) count(pointer string, n, max int) bool {
	if n <= 0 || n > max {
		v.add(invalid(pointer, "must be between 1 and %d (got %d)", max, n))
		return false
	}
	return true
}

func (v *validator) material(pointer string, name *string) {
	if name == nil {
		return
	}
	if _, ok := spoke.LookupMaterial(*name); !ok {
		v.add(invalid(pointer, "unknown material %q (one of %v)", *name, spoke.MaterialNames()))
	}
}

func (v *validator) thread(pointer string, t Thread) {
	v.size(pointer+"/diameter_mm", t.DiameterMM, maxPartMM)
	v.size(pointer+"/tpi", t.TPI, maxTPI)
}

// Validate checks every field of in and returns nil or the FieldErrors
// (joined). Check calls it first; callers may call it alone to answer 400/422
// before computing geometry.
func Validate(in Input) error {
	var v validator
	spokesOK := v.count("/spoke_count", in.SpokeCount, maxSpokeCount)
	if spokesOK && in.SpokeCount%2 != 0 {
		v.add(unprocessable("/spoke_count", "a wheel laced from two flanges needs an even spoke count (got %d)", in.SpokeCount))
		spokesOK = false
	}

	h := in.Hub
	v.count("/hub/holes", h.Holes, maxSpokeCount)
	if h.Kind != "" && !slices.Contains(HubKinds, h.Kind) {
		v.add(invalid("/hub/kind", "unknown hub kind %q (one of %v)", h.Kind, HubKinds))
	}
	if h.Type != "" && h.Type != JBend && h.Type != StraightPull {
		v.add(invalid("/hub/type", "unknown hub type %q (j_bend or straight_pull)", h.Type))
	}
	v.optSize("/hub/spacing_mm", h.SpacingMM, maxHubMM)
	for _, f := range []struct {
		side string
		f    Flange
	}{{"left", h.Left}, {"right", h.Right}} {
		p := "/hub/" + f.side
		pcdOK := v.size(p+"/pcd_mm", f.f.PCDMM, maxHubMM)
		v.size(p+"/center_to_flange_mm", f.f.CenterToFlangeMM, maxHubMM)
		holeOK := v.size(p+"/hole_diameter_mm", f.f.HoleDiameterMM, maxPartMM)
		v.size(p+"/thickness_mm", f.f.ThicknessMM, maxPartMM)
		if pcdOK && holeOK && f.f.HoleDiameterMM >= f.f.PCDMM {
			v.add(unprocessable(p+"/hole_diameter_mm", "a flange hole cannot be as large as the flange's hole circle"))
		}
	}

	r := in.Rim
	v.count("/rim/holes", r.Holes, maxSpokeCount)
	erdOK := v.size("/rim/erd_mm", r.ERDMM, maxRimMM)
	bsdOK := v.size("/rim/bsd_mm", r.BSDMM, maxRimMM)
	if erdOK && bsdOK && r.ERDMM >= r.BSDMM {
		v.add(unprocessable("/rim/erd_mm", "the effective rim diameter (%g mm) must be smaller than the bead seat diameter (%g mm)", r.ERDMM, r.BSDMM))
	}
	v.size("/rim/inner_width_mm", r.InnerWidthMM, maxRimMM)
	v.size("/rim/hole_diameter_mm", r.HoleDiameterMM, maxPartMM)
	v.optSize("/rim/max_tension_n", r.MaxTensionN, maxTensionN)
	if x := r.SpokeHoleOffsetMM; math.IsNaN(x) || math.IsInf(x, 0) || math.Abs(x) > maxPartMM {
		v.add(invalid("/rim/spoke_hole_offset_mm", "must be a finite offset of at most %g mm either way", maxPartMM))
	}

	s := in.Spoke
	switch {
	case s.DiameterMM == nil && s.Gauge == nil:
		v.add(invalid("/spoke", "give the spoke's diameter_mm or its BS 3737 gauge"))
	case s.Gauge != nil:
		gd, ok := spoke.GaugeDiameterMM(*s.Gauge)
		if !ok {
			v.add(invalid("/spoke/gauge", "gauge %d is not a BS 3737 spoke gauge (one of %v)", *s.Gauge, spoke.Gauges()))
		} else if s.DiameterMM != nil && v.size("/spoke/diameter_mm", *s.DiameterMM, maxPartMM) &&
			math.Abs(*s.DiameterMM-gd) > nearestGaugeToleranceMM {
			v.add(invalid("/spoke/diameter_mm", "%g mm disagrees with gauge %d (%.4f mm, BS 3737)", *s.DiameterMM, *s.Gauge, gd))
		}
	default:
		v.size("/spoke/diameter_mm", *s.DiameterMM, maxPartMM)
	}
	v.optSize("/spoke/head_diameter_mm", s.HeadDiameterMM, maxPartMM)
	v.optSize("/spoke/elbow_length_mm", s.ElbowLengthMM, maxPartMM)
	v.optSize("/spoke/thread_length_mm", s.ThreadLengthMM, maxPartMM)
	if s.Thread != nil {
		v.thread("/spoke/thread", *s.Thread)
	}
	v.material("/spoke/material", s.Material)

	n := in.Nipple
	v.thread("/nipple/thread", n.Thread)
	v.size("/nipple/shank_diameter_mm", n.ShankDiameterMM, maxPartMM)
	v.size("/nipple/head_diameter_mm", n.HeadDiameterMM, maxPartMM)
	v.size("/nipple/length_mm", n.LengthMM, maxPartMM)
	v.optSize("/nipple/thread_length_mm", n.ThreadLengthMM, maxPartMM)
	if n.ThreadStartMM != nil {
		if x := *n.ThreadStartMM; math.IsNaN(x) || math.IsInf(x, 0) || x < 0 || x > maxPartMM {
			v.add(invalid("/nipple/thread_start_mm", "must be a finite depth, zero or more"))
		}
	}
	v.material("/nipple/material", n.Material)

	for i, w := range in.Washers {
		p := "/washers/" + strconv.Itoa(i)
		v.size(p+"/thickness_mm", w.ThicknessMM, maxPartMM)
		inOK := v.size(p+"/inner_diameter_mm", w.InnerDiameterMM, maxPartMM)
		outOK := v.size(p+"/outer_diameter_mm", w.OuterDiameterMM, maxPartMM)
		if inOK && outOK && w.InnerDiameterMM >= w.OuterDiameterMM {
			v.add(invalid(p+"/inner_diameter_mm", "a washer's bore must be smaller than its outside diameter"))
		}
		if w.Where != "" && w.Where != AtHub && w.Where != AtRim {
			v.add(invalid(p+"/where", "unknown place %q (hub or rim)", w.Where))
		}
	}

	if t := in.Tyre; t != nil {
		v.size("/tyre/bsd_mm", t.BSDMM, maxRimMM)
		v.size("/tyre/width_mm", t.WidthMM, maxRimMM)
	}
	v.optSize("/frame_spacing_mm", in.FrameSpacingMM, maxHubMM)

	for _, c := range []struct {
		side string
		n    int
	}{{"left", in.Crosses.Left}, {"right", in.Crosses.Right}} {
		p := "/crosses/" + c.side
		switch {
		case c.n < 0:
			v.add(invalid(p, "crosses cannot be negative (0 = radial)"))
		case spokesOK && 4*c.n >= in.SpokeCount:
			// crosses × 720°/N must stay below 180°: a spoke cannot reach a rim
			// hole half the wheel away.
			v.add(unprocessable(p, "%d crosses cannot be laced with %d spokes (fewer than %d)", c.n, in.SpokeCount, (in.SpokeCount+3)/4))
		}
	}
	v.size("/target_tension_n", in.TargetTensionN, maxTensionN)

	if len(v.errs) == 0 {
		return nil
	}
	return joinErrs(v.errs)
}
