package service

import (
	"errors"
	"fmt"
	"slices"
	"strconv"

	"wheelbench/service/fit"
	"wheelbench/service/geometry"
)

// CompatibilityInput is the body of a compatibility check: the parts
// (fit.Input) and, optionally, the spoke lengths the shop can get, so that
// a stock length is chosen per side and the thread checks use where that
// spoke really ends.
type CompatibilityInput struct {
	fit.Input
	Stock *geometry.Stock `json:"stock,omitempty"`
}

// CompatibilityReport is fit's report (verdict, findings, changes, cautions,
// per-side lengths and tensions) with the full spoke-length calculation it
// rests on. Cautions merge fit's and the geometry's, each once.
type CompatibilityReport struct {
	fit.Report
	Geometry CompatibilityGeometry `json:"geometry"`
}

// CompatibilityGeometry is the spoke-length calculation behind a report.
type CompatibilityGeometry struct {
	// Crosses are the crosses the lengths were computed for: the requested
	// ones, except that a side whose requested crosses pass the tangent is
	// computed at that side's max_crosses instead (and the report says so).
	Crosses  fit.Crosses         `json:"crosses"`
	Left     geometry.SideResult `json:"left"`
	Right    geometry.SideResult `json:"right"`
	Ratio    float64             `json:"tension_ratio_left_to_right"`
	Findings []geometry.Finding  `json:"findings"`
}

// CheckCompatibility checks whether the parts make a wheel, computing the
// spoke lengths with the geometry package and handing fit the facts it needs
// (see fit.Geometry):
//
//   - The request is validated by fit first, so its 400/422 name fields of
//     this body.
//   - A side whose crosses pass the tangent (geometry's 422 at
//     /crosses/left or /crosses/right) is not an error here: it becomes fit's
//     lacing_wraps_flange finding, and that side's lengths are computed at its
//     max_crosses so the report still carries lengths (labelled by
//     geometry.crosses and a caution).
//   - head_overlap comes from the geometry's head_overlap finding for that
//     side; max_crosses is the most crosses with neither wrap nor overlap.
//   - When fit proposes washers under the nipple heads, the geometry is
//     recomputed with that nipple-seat correction and fit runs again on it.
//
// Every other geometry error is returned as a field error whose pointer
// names a field of this body.
func (s *Service) CheckCompatibility(in CompatibilityInput) (CompatibilityReport, error) {
	if err := fit.Validate(in.Input); err != nil {
		return CompatibilityReport{}, err
	}
	opt := fit.DefaultOptions()
	w := wheelOf(in)
	facts, err := geometryFacts(in, w)
	if err != nil {
		return CompatibilityReport{}, err
	}
	rep, err := fit.Check(in.Input, facts.fit, opt)
	if err != nil {
		return CompatibilityReport{}, err
	}
	if t, ok := rimWasherStack(rep); ok {
		w.Rim.NippleWasherMM = t
		if facts, err = geometryFacts(in, w); err != nil {
			return CompatibilityReport{}, repoint(err, in, rep)
		}
		if rep, err = fit.Check(in.Input, facts.fit, opt); err != nil {
			return CompatibilityReport{}, err
		}
		rep.Cautions = append(rep.Cautions, fmt.Sprintf(
			"The spoke lengths in this report already include the %s mm nipple-seat correction for the proposed rim washers.",
			strconv.FormatFloat(t, 'f', -1, 64)))
	}
	out := CompatibilityReport{Report: rep, Geometry: CompatibilityGeometry{
		Crosses: facts.crosses, Left: facts.res.Left, Right: facts.res.Right,
		Ratio: facts.res.TensionRatioLeftToRight, Findings: facts.res.Findings,
	}}
	for _, side := range facts.wrapped {
		c := in.Crosses.Left
		at := facts.crosses.Left
		if side == "right" {
			c, at = in.Crosses.Right, facts.crosses.Right
		}
		out.Cautions = append(out.Cautions, fmt.Sprintf(
			"The %s side cannot be laced %d-cross with this hub and rim; its spoke lengths are computed for %d crosses, the most this geometry allows.",
			side, c, at))
	}
	for _, c := range facts.res.Cautions {
		if !slices.Contains(out.Cautions, c) {
			out.Cautions = append(out.Cautions, c)
		}
	}
	return out, nil
}

// wheelOf maps a compatibility request onto the geometry's wheel.
func wheelOf(in CompatibilityInput) geometry.Wheel {
	h := in.Hub
	flange := func(f fit.Flange) geometry.Flange {
		return geometry.Flange{PCDMM: f.PCDMM, CenterToFlangeMM: f.CenterToFlangeMM,
			HoleDiameterMM: ptr(f.HoleDiameterMM), ThicknessMM: ptr(f.ThicknessMM)}
	}
	w := geometry.Wheel{
		SpokeCount: in.SpokeCount,
		Hub: geometry.Hub{Type: string(h.Type), Left: flange(h.Left), Right: flange(h.Right),
			Motor: h.Kind == fit.Motor || h.Kind == fit.MotorVehicle},
		Rim:            geometry.Rim{ERDMM: in.Rim.ERDMM, SpokeHoleOffsetMM: in.Rim.SpokeHoleOffsetMM},
		Crosses:        geometry.Cross{Left: ptrInt(in.Crosses.Left), Right: ptrInt(in.Crosses.Right)},
		TargetTensionN: ptr(in.TargetTensionN),
		Stock:          in.Stock,
	}
	sp := &geometry.Spoke{HeadDiameterMM: in.Spoke.HeadDiameterMM}
	// fit accepts diameter and gauge together when they agree; the geometry
	// wants one: the measured diameter wins.
	if in.Spoke.DiameterMM != nil {
		sp.DiameterMM = in.Spoke.DiameterMM
	} else {
		sp.Gauge = in.Spoke.Gauge
	}
	if in.Spoke.Material != nil {
		sp.Material = *in.Spoke.Material
	}
	w.Spoke = sp
	return w
}

// facts is one geometry pass over a request.
type facts struct {
	res     geometry.Result
	fit     fit.Geometry
	crosses fit.Crosses // the crosses res was computed at
	wrapped []string    // sides whose requested crosses pass the tangent
}

// geometryFacts computes w and fills fit's geometry facts.
func geometryFacts(in CompatibilityInput, w geometry.Wheel) (facts, error) {
	f := facts{crosses: in.Crosses}
	res, err := geometry.Compute(w)
	if err != nil {
		// The tangent case: with a spoke count divisible by 4 (fit refuses
		// crosses that reach half the wheel), a 422 at /crosses/<side> says
		// the crosses pass that side's max_crosses. Anything else is the
		// client's to mend.
		fes, ok := fieldErrors(err)
		if !ok {
			return facts{}, err
		}
		var rest []error
		for _, fe := range fes {
			p := fe.FieldPointer()
			switch {
			case fe.IsUnprocessable() && in.SpokeCount%4 == 0 && p == "/crosses/left":
				f.wrapped = append(f.wrapped, "left")
			case fe.IsUnprocessable() && in.SpokeCount%4 == 0 && p == "/crosses/right":
				f.wrapped = append(f.wrapped, "right")
			default:
				rest = append(rest, fe)
			}
		}
		if len(rest) > 0 {
			return facts{}, errors.Join(rest...)
		}
		// Radial on the wrapped sides gives their max_crosses; then compute
		// at that maximum to still report lengths.
		probe := w
		for _, side := range f.wrapped {
			setCrosses(&probe, side, 0)
		}
		pr, err := geometry.Compute(probe)
		if err != nil {
			return facts{}, err
		}
		for _, side := range f.wrapped {
			m := pr.Left.MaxCrosses
			if side == "right" {
				m = pr.Right.MaxCrosses
			}
			setCrosses(&w, side, m)
			if side == "left" {
				f.crosses.Left = m
			} else {
				f.crosses.Right = m
			}
		}
		if res, err = geometry.Compute(w); err != nil {
			return facts{}, err
		}
	}
	f.res = res
	f.fit = fit.Geometry{
		Left:                    sideFacts(w, res, res.Left, "left", slices.Contains(f.wrapped, "left"), *w.Crosses.Left),
		Right:                   sideFacts(w, res, res.Right, "right", slices.Contains(f.wrapped, "right"), *w.Crosses.Right),
		TensionRatioLeftToRight: res.TensionRatioLeftToRight,
	}
	return f, nil
}

// sideFacts fills one side's fit facts from the result computed at crosses.
func sideFacts(w geometry.Wheel, res geometry.Result, s geometry.SideResult, side string, wraps bool, crosses int) fit.SideGeometry {
	g := fit.SideGeometry{
		LengthMM:        s.LengthMM,
		StockLengthMM:   s.StockLengthMM,
		SpokeEndMM:      s.SpokeEndMM,
		Wraps:           wraps,
		HeadOverlap:     !wraps && hasFinding(res, geometry.CodeHeadOverlap, side),
		MaxCrosses:      clearCrosses(w, side, s.MaxCrosses),
		BracingAngleDeg: s.BracingAngleDeg,
	}
	return g
}

// clearCrosses is the most crosses, up to the tangent limit, at which the
// side's spokes run over no neighbouring head: fit's max_crosses. Each
// probe is one geometry computation (about a microsecond).
func clearCrosses(w geometry.Wheel, side string, tangentMax int) int {
	for c := tangentMax; c > 0; c-- {
		p := w
		p.Crosses = geometry.Cross{Left: ptrInt(0), Right: ptrInt(0)}
		setCrosses(&p, side, c)
		r, err := geometry.Compute(p)
		if err == nil && !hasFinding(r, geometry.CodeHeadOverlap, side) {
			return c
		}
	}
	return 0
}

func setCrosses(w *geometry.Wheel, side string, c int) {
	if side == "left" {
		w.Crosses.Left = ptrInt(c)
	} else {
		w.Crosses.Right = ptrInt(c)
	}
}

func hasFinding(r geometry.Result, code, side string) bool {
	for _, f := range r.Findings {
		if f.Code == code && f.Side == side {
			return true
		}
	}
	return false
}

// rimWasherStack returns the washer stack fit proposes under each nipple.
func rimWasherStack(r fit.Report) (float64, bool) {
	for _, c := range r.Changes {
		if c.Kind == fit.ChangeAddWashers && c.Where == fit.AtRim && c.StackMM != nil {
			return *c.StackMM, true
		}
	}
	return 0, false
}

// repoint moves geometry pointers that have no field in this body onto the
// field they come from: the nipple-seat correction is the proposed rim
// washer (one of /washers when it was given, else the nipple head that
// needs it).
func repoint(err error, in CompatibilityInput, rep fit.Report) error {
	fes, ok := fieldErrors(err)
	if !ok {
		return err
	}
	out := make([]error, 0, len(fes))
	for _, fe := range fes {
		if fe.FieldPointer() != "/rim/nipple_washer_mm" {
			out = append(out, fe)
			continue
		}
		p := "/nipple/head_diameter_mm"
		if t, ok := rimWasherStack(rep); ok {
			for i, wa := range in.Washers {
				if wa.Where != fit.AtHub && wa.ThicknessMM == t {
					p = "/washers/" + strconv.Itoa(i) + "/thickness_mm"
					break
				}
			}
		}
		out = append(out, &FieldError{Pointer: p, Message: messageOfField(fe), Unprocessable: fe.IsUnprocessable()})
	}
	return errors.Join(out...)
}

// fieldError is what the pure packages' field errors offer.
type fieldError interface {
	error
	FieldPointer() string
	IsUnprocessable() bool
}

// fieldErrors flattens an errors.Join tree into its field errors; ok is
// false when some leaf is not a field error.
func fieldErrors(err error) (out []fieldError, ok bool) {
	ok = true
	var walk func(error)
	walk = func(e error) {
		if fe, isFE := e.(fieldError); isFE {
			out = append(out, fe)
			return
		}
		if j, isJoin := e.(interface{ Unwrap() []error }); isJoin {
			for _, x := range j.Unwrap() {
				walk(x)
			}
			return
		}
		ok = false
	}
	if err != nil {
		walk(err)
	}
	return out, ok
}

func messageOfField(fe fieldError) string {
	if m, ok := fe.(*geometry.FieldError); ok {
		return m.Message
	}
	return fe.Error()
}

func ptr(x float64) *float64 { return &x }
func ptrInt(n int) *int      { return &n }
