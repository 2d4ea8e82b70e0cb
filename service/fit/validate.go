package fit

import (
	"errors"
	"math"
	"strconv"

	"wheelbench/service/field"
	"wheelbench/service/geometry"
	"wheelbench/service/spoke"
)

// joinErrs joins bad fields: *field.Error values with pointers into the
// body as the client sent it ("/hub/left/pcd_mm"), 400 for malformed or
// absurd values (not finite, not positive, out of any sane range, unknown
// name), 422 for well-formed values that cannot describe a buildable wheel.
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

// validator collects field errors.
type validator struct{ errs []error }

func (v *validator) add(e *field.Error) { v.errs = append(v.errs, e) }

// size checks a required positive, finite dimension no larger than max.
func (v *validator) size(pointer string, x, max float64) bool {
	switch {
	case math.IsNaN(x) || math.IsInf(x, 0):
		v.add(field.Invalid(pointer, "must be a finite number"))
	case x <= 0:
		v.add(field.Invalid(pointer, "must be positive (got %g)", x))
	case x > max:
		v.add(field.Invalid(pointer, "%g is not a plausible size (at most %g)", x, max))
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
		v.add(field.Invalid(pointer, "must be between 1 and %d (got %d)", max, n))
		return false
	}
	return true
}

func (v *validator) material(pointer string, name string) {
	if name == "" {
		return
	}
	if _, ok := spoke.LookupMaterial(name); !ok {
		v.add(field.Invalid(pointer, "unknown material %q (one of %v)", name, spoke.MaterialNames()))
	}
}

// Validate checks the members only the fit rules use, and those they need
// that the geometry takes as optional (flange holes and thickness, the
// spoke, the nipple, the rim's holes and bead seat). The geometry
// validates its own members when Check computes it. It returns nil or the
// field errors (joined).
func Validate(in Input) error {
	var v validator
	v.count("/spoke_count", in.SpokeCount, maxSpokeCount)

	h := in.Hub
	v.count("/hub/holes", h.Holes, maxSpokeCount)
	v.optSize("/hub/spacing_mm", h.SpacingMM, maxHubMM)
	for _, f := range []struct {
		side string
		f    geometry.Flange
	}{{"left", h.Left}, {"right", h.Right}} {
		p := "/hub/" + f.side
		if f.f.HoleDiameterMM == nil {
			v.add(field.Invalid(p+"/hole_diameter_mm", "is required: the fit rules compare it with the spoke and its head"))
		} else if v.size(p+"/hole_diameter_mm", *f.f.HoleDiameterMM, maxPartMM) && *f.f.HoleDiameterMM >= f.f.PCDMM && f.f.PCDMM > 0 {
			v.add(field.Unprocessable(p+"/hole_diameter_mm", "a flange hole cannot be as large as the flange's hole circle"))
		}
		if f.f.ThicknessMM == nil {
			v.add(field.Invalid(p+"/thickness_mm", "is required: the fit rules compare it with the spoke's elbow"))
		} else {
			v.size(p+"/thickness_mm", *f.f.ThicknessMM, maxPartMM)
		}
	}

	r := in.Rim
	v.count("/rim/holes", r.Holes, maxSpokeCount)
	bsdOK := v.size("/rim/bsd_mm", r.BSDMM, maxRimMM)
	if bsdOK && r.ERDMM > 0 && r.ERDMM >= r.BSDMM {
		v.add(field.Unprocessable("/rim/erd_mm", "the effective rim diameter (%g mm) must be smaller than the bead seat diameter (%g mm)", r.ERDMM, r.BSDMM))
	}
	v.size("/rim/inner_width_mm", r.InnerWidthMM, maxRimMM)
	v.size("/rim/hole_diameter_mm", r.HoleDiameterMM, maxPartMM)
	v.optSize("/rim/max_tension_n", r.MaxTensionN, maxTensionN)

	if _, ps := in.Spoke.Resolve(true); len(ps) > 0 {
		for _, p := range ps {
			c := *p
			c.Pointer = "/spoke" + p.Pointer
			v.add(&c)
		}
	}

	n := in.Nipple
	for _, p := range n.Thread.CheckNippleThread("/nipple/thread") {
		v.add(p)
	}
	v.size("/nipple/shank_diameter_mm", n.ShankDiameterMM, maxPartMM)
	v.size("/nipple/head_diameter_mm", n.HeadDiameterMM, maxPartMM)
	v.size("/nipple/length_mm", n.LengthMM, maxPartMM)
	v.optSize("/nipple/thread_length_mm", n.ThreadLengthMM, maxPartMM)
	if n.ThreadStartMM != nil {
		if x := *n.ThreadStartMM; math.IsNaN(x) || math.IsInf(x, 0) || x < 0 || x > maxPartMM {
			v.add(field.Invalid("/nipple/thread_start_mm", "must be a finite depth, zero or more"))
		}
	}
	v.material("/nipple/material", n.Material)

	for i, w := range in.Washers {
		p := "/washers/" + strconv.Itoa(i)
		v.size(p+"/thickness_mm", w.ThicknessMM, maxPartMM)
		inOK := v.size(p+"/inner_diameter_mm", w.InnerDiameterMM, maxPartMM)
		outOK := v.size(p+"/outer_diameter_mm", w.OuterDiameterMM, maxPartMM)
		if inOK && outOK && w.InnerDiameterMM >= w.OuterDiameterMM {
			v.add(field.Invalid(p+"/inner_diameter_mm", "a washer's bore must be smaller than its outside diameter"))
		}
		if w.Where != "" && w.Where != AtHub && w.Where != AtRim {
			v.add(field.Invalid(p+"/where", "unknown place %q (hub or rim)", w.Where))
		}
	}

	if t := in.Tyre; t != nil {
		v.size("/tyre/bsd_mm", t.BSDMM, maxRimMM)
		v.size("/tyre/width_mm", t.WidthMM, maxRimMM)
	}
	v.optSize("/frame_spacing_mm", in.FrameSpacingMM, maxHubMM)
	v.size("/target_tension_n", in.TargetTensionN, maxTensionN)

	if len(v.errs) == 0 {
		return nil
	}
	return joinErrs(v.errs)
}
