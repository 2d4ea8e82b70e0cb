package fit

import (
	"fmt"
	"math"
	"slices"
	"strings"
)

// Check validates in (FieldErrors as Validate returns them), checks g
// (ErrGeometry when a fact is missing or not finite) and opt (ErrOptions),
// and applies every rule.
// The Report is deterministic and finite: no NaN or Inf in any value.
func Check(in Input, g Geometry, opt Options) (Report, error) {
	if err := Validate(in); err != nil {
		return Report{}, err
	}
	if err := opt.validate(); err != nil {
		return Report{}, err
	}
	if err := g.validate(); err != nil {
		return Report{}, err
	}
	p, err := resolveParts(in)
	if err != nil {
		return Report{}, err
	}
	stressArea, err := stressAreaMM2(p)
	if err != nil {
		return Report{}, err
	}

	var fs []Finding
	var cs []Change
	var cautions []string

	if in.SpokeCount != in.Hub.Holes || in.SpokeCount != in.Rim.Holes {
		fs = append(fs, Finding{
			Code: CodeHoleCountMismatch, Severity: Error,
			Message: fmt.Sprintf("Spoke count %d, hub holes %d and rim holes %d must all agree.", in.SpokeCount, in.Hub.Holes, in.Rim.Holes),
			Remedy:  "Choose a hub and a rim with the same number of holes, and that many spokes.",
			Values: map[string]float64{
				"spoke_count": float64(in.SpokeCount), "hub_holes": float64(in.Hub.Holes), "rim_holes": float64(in.Rim.Holes),
			},
		})
	}

	sides := []struct {
		name    string
		flange  Flange
		geo     SideGeometry
		crosses int
	}{
		{"left", in.Hub.Left, g.Left, in.Crosses.Left},
		{"right", in.Hub.Right, g.Right, in.Crosses.Right},
	}
	for _, s := range sides {
		if s.geo.Wraps {
			fs = append(fs, Finding{
				Code: CodeLacingWrapsFlange, Severity: Error, Side: s.name,
				Message: fmt.Sprintf("At %d crosses the %s spokes would wrap around the flange (past the tangent limit).", s.crosses, s.name),
				Remedy:  fmt.Sprintf("Lace the %s side with at most %d crosses.", s.name, s.geo.MaxCrosses),
				Values:  map[string]float64{"crosses": float64(s.crosses), "max_crosses": float64(s.geo.MaxCrosses)},
			})
		}
		if s.geo.HeadOverlap {
			fs = append(fs, Finding{
				Code: CodeSpokeHeadOverlap, Severity: Error, Side: s.name,
				Message: fmt.Sprintf("At %d crosses the %s spoke heads would sit over their neighbours.", s.crosses, s.name),
				Remedy:  fmt.Sprintf("Lace the %s side with at most %d crosses, or use a hub with a larger flange.", s.name, s.geo.MaxCrosses),
				Values:  map[string]float64{"crosses": float64(s.crosses), "max_crosses": float64(s.geo.MaxCrosses)},
			})
		}
		f, c := checkFlange(in, p, s.name, s.flange, opt)
		fs, cs = append(fs, f...), append(cs, c...)
	}

	rim := checkRim(in, p, opt)
	fs, cs, cautions = append(fs, rim.findings...), append(cs, rim.changes...), append(cautions, rim.cautions...)
	for _, s := range sides {
		f, c := checkSpokeEnd(in, p, s.name, s.geo, opt)
		fs, cs = append(fs, f...), append(cs, c...)
	}

	tl, tr := sideTensions(in.TargetTensionN, g.TensionRatioLeftToRight)
	tf, tc := checkTension(in, p, g, tl, tr, stressArea, opt)
	fs, cautions = append(fs, tf...), append(cautions, tc...)

	fs = append(fs, checkTyre(in, opt)...)
	if h, fr := in.Hub.SpacingMM, in.FrameSpacingMM; h != nil && fr != nil && math.Abs(*h-*fr) > opt.HubSpacingToleranceMM+eps {
		fs = append(fs, Finding{
			Code: CodeHubSpacingMismatch, Severity: Error,
			Message: fmt.Sprintf("The hub is %.4g mm over the locknuts; the frame is spaced %.4g mm.", *h, *fr),
			Remedy:  fmt.Sprintf("Use a hub spaced %.4g mm, or have the hub re-spaced as its maker allows.", *fr),
			Values: map[string]float64{
				"hub_spacing_mm": *h, "frame_spacing_mm": *fr,
				"difference_mm": round4(*h - *fr), "tolerance_mm": opt.HubSpacingToleranceMM,
			},
		})
	}

	switch hubKind(in.Hub) {
	case Motor, MotorVehicle:
		cautions = append(cautions, "This is a motor hub: follow the motor maker's requirements for spoke gauge and material, nipples, lacing and tension, and its axle-nut and torque-arm torques; a powered wheel must also meet the vehicle rules where it will be ridden.")
	case Tandem, Cargo:
		cautions = append(cautions, "Tandem and cargo wheels carry far more load than a solo bicycle's: confirm the hub, rim and spoke makers rate their parts for the load.")
	}
	if a := assumedInUse(fs); len(a) > 0 {
		cautions = append(cautions, fmt.Sprintf("Some warnings and errors rest on typical values, not measurements (%s): measure those parts to confirm.", strings.Join(a, ", ")))
	}

	rep := Report{
		Findings: fs,
		Changes:  mergeSides(cs),
		Cautions: cautions,
		Left:     SideLength{LengthMM: g.Left.LengthMM, StockLengthMM: g.Left.StockLengthMM, TensionN: round4(tl)},
		Right:    SideLength{LengthMM: g.Right.LengthMM, StockLengthMM: g.Right.StockLengthMM, TensionN: round4(tr)},
	}
	if rep.Findings == nil {
		rep.Findings = []Finding{}
	}
	if rep.Changes == nil {
		rep.Changes = []Change{}
	}
	if rep.Cautions == nil {
		rep.Cautions = []string{}
	}
	rep.Verdict = verdictOf(rep.Findings)
	return rep, nil
}

// assumedInUse lists, sorted and once each, the assumed fields behind
// warnings and errors.
func assumedInUse(fs []Finding) []string {
	var out []string
	for _, f := range fs {
		if f.Severity == Info {
			continue
		}
		for _, a := range f.Assumed {
			if !slices.Contains(out, a) {
				out = append(out, a)
			}
		}
	}
	slices.Sort(out)
	return out
}
