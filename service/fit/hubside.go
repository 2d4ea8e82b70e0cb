package fit

import (
	"fmt"
	"math"

	"wheelbench/service/geometry"
)

// eps keeps a value exactly at a limit on the passing side despite binary
// rounding (3.1 − 2.8 is 0.30000000000000027).
const eps = 1e-9

// washerType is a washer kind considered for a stack.
type washerType struct {
	thicknessMM, innerMM, outerMM float64
	fromGiven                     bool
	partID                        string // a catalog washer's part
}

// roundUp rounds x up to a multiple of step (ignoring binary noise).
func roundUp(x, step float64) float64 {
	if step <= 0 {
		return x
	}
	return math.Ceil(x/step-1e-9) * step
}

// hubWasherTypes returns the washers that suit this flange under this
// spoke's head: the given ones, else the catalog's, else standard washers of
// the Options' thicknesses.
func hubWasherTypes(in Input, p parts, holeMM float64, opt Options) []washerType {
	bore := math.Max(p.endMM, p.threadMajorMM)
	suits := func(w Washer) bool {
		return w.Where != AtRim && w.InnerDiameterMM >= bore && p.headMM-w.InnerDiameterMM >= opt.HeadBearingMarginMM-eps &&
			w.OuterDiameterMM-holeMM >= opt.HeadBearingMarginMM-eps
	}
	var out []washerType
	for _, w := range in.Washers {
		if suits(w) {
			out = append(out, washerType{w.ThicknessMM, w.InnerDiameterMM, w.OuterDiameterMM, true, ""})
		}
	}
	if len(out) > 0 {
		return out
	}
	for _, w := range in.CatalogWashers {
		if suits(w.Washer) {
			out = append(out, washerType{w.ThicknessMM, w.InnerDiameterMM, w.OuterDiameterMM, false, w.PartID})
		}
	}
	if len(out) > 0 {
		return out
	}
	inner := roundUp(bore+opt.WasherBoreClearanceMM, 0.1)
	outer := roundUp(holeMM+2*opt.HeadBearingMarginMM, 0.1)
	if p.headMM-inner < opt.HeadBearingMarginMM-eps {
		return nil // no washer bore both passes the spoke and holds the head
	}
	for _, t := range opt.StandardWasherThicknessesMM {
		if t > 0 && finite(t) {
			out = append(out, washerType{t, inner, outer, false, ""})
		}
	}
	return out
}

// stack is a chosen washer stack.
type stack struct {
	w        washerType
	n        int
	residual float64 // gap left: elbow − (flange + stack)
}

// planStack picks the stack with the fewest washers (then the smallest
// residual gap) that leaves the gap g within [−shortTol, gapTol], with at
// least one washer. ok is false when none does.
func planStack(types []washerType, g float64, opt Options) (best stack, ok bool) {
	for _, w := range types {
		for n := 1; n <= opt.MaxWashersPerSpoke; n++ {
			r := g - float64(n)*w.thicknessMM
			if r > opt.ElbowGapToleranceMM+eps {
				continue
			}
			if r < -opt.ElbowShortToleranceMM-eps {
				break
			}
			c := stack{w, n, r}
			if !ok || c.n < best.n || (c.n == best.n && math.Abs(c.residual) < math.Abs(best.residual)-eps) {
				best, ok = c, true
			}
			break
		}
	}
	return best, ok
}

// checkFlange runs the hub-side parts rules for one side: the head pulling
// through the hole, and the elbow against the flange's thickness, with the
// washer stack that fixes them.
func checkFlange(j *judge, in Input, p parts, side string, f geometry.Flange, seated bool, spokes int, opt Options) {
	hole, thick := *f.HoleDiameterMM, *f.ThicknessMM
	headMargin := p.headMM - hole
	pullThrough := headMargin < opt.HeadBearingMarginMM-eps
	g := p.elbowMM - thick
	gap := !seated && g > opt.ElbowGapToleranceMM+eps
	short := !seated && g < -opt.ElbowShortToleranceMM-eps

	var plan stack
	planned := false
	if (pullThrough || gap) && !short {
		types := hubWasherTypes(in, p, hole, opt)
		if !seated {
			plan, planned = planStack(types, g, opt)
		} else if len(types) > 0 {
			// Seated spokes: no elbow, one washer of the thinnest kind.
			plan, planned = stack{w: types[0], n: 1}, true
			for _, w := range types[1:] {
				if w.thicknessMM < plan.w.thicknessMM {
					plan.w = w
				}
			}
		}
	}
	stackText := ""
	if planned {
		stackText = fmt.Sprintf("a %.4g mm washer stack under each spoke head on the %s flange (%d × %.4g mm, bore %.4g mm, outside %.4g mm)",
			float64(plan.n)*plan.w.thicknessMM, side, plan.n, plan.w.thicknessMM, plan.w.innerMM, plan.w.outerMM)
	}

	if pullThrough {
		fd := Finding{
			Code: CodeSpokeHeadPullsThrough, Side: side,
			Message: fmt.Sprintf("The %.4g mm spoke head is only %.3g mm larger than the %.4g mm %s flange hole (needs %.3g mm): it can pull through.",
				p.headMM, round4(headMargin), hole, side, opt.HeadBearingMarginMM),
			Values: map[string]float64{
				"head_diameter_mm": p.headMM, "hole_diameter_mm": hole,
				"margin_mm": round4(headMargin), "required_margin_mm": opt.HeadBearingMarginMM,
			},
			Assumed:       p.assumedOf("spoke.head_diameter_mm"),
			FixedByChange: planned,
		}
		if planned {
			fd.Remedy = "Fit " + stackText + " so the head bears on the washer and the washer on the flange."
		} else {
			fd.Remedy = fmt.Sprintf("Use spokes with heads of at least %.4g mm, or a hub with smaller holes; no washer stack suits this elbow and head.",
				hole+opt.HeadBearingMarginMM)
		}
		j.add(fd)
	}

	if gap {
		fd := Finding{
			Code: CodeElbowGap, Side: side,
			Message: fmt.Sprintf("The %.4g mm elbow is %.3g mm longer than the %.4g mm %s flange is thick (tolerance %.3g mm): the head stands off the flange and the elbow flexes.",
				p.elbowMM, round4(g), thick, side, opt.ElbowGapToleranceMM),
			Values: map[string]float64{
				"elbow_length_mm": p.elbowMM, "flange_thickness_mm": thick,
				"gap_mm": round4(g), "tolerance_mm": opt.ElbowGapToleranceMM,
			},
			Assumed:       p.assumedOf("spoke.elbow_length_mm"),
			FixedByChange: planned,
		}
		if planned {
			if plan.residual >= 0 {
				fd.Remedy = "Fit " + stackText + fmt.Sprintf("; %.3g mm of gap remains, within tolerance.", round4(plan.residual))
			} else {
				fd.Remedy = "Fit " + stackText + fmt.Sprintf("; the stack is %.3g mm thicker than the gap, within tolerance.", round4(-plan.residual))
			}
			fd.Values["stack_mm"] = round4(float64(plan.n) * plan.w.thicknessMM)
		} else {
			fd.Remedy = fmt.Sprintf("No stack of at most %d washers closes a %.3g mm gap; use spokes with an elbow for a %.4g mm flange.",
				opt.MaxWashersPerSpoke, round4(g), thick)
		}
		j.add(fd)
	}

	if short {
		j.add(Finding{
			Code: CodeElbowTooShort, Side: side,
			Message: fmt.Sprintf("The %.4g mm elbow is %.3g mm shorter than the %.4g mm %s flange is thick (tolerance %.3g mm): the head cannot seat.",
				p.elbowMM, round4(-g), thick, side, opt.ElbowShortToleranceMM),
			Remedy: fmt.Sprintf("Use spokes with an elbow of about %.4g mm for this flange.", thick),
			Values: map[string]float64{
				"elbow_length_mm": p.elbowMM, "flange_thickness_mm": thick,
				"shortfall_mm": round4(-g), "tolerance_mm": opt.ElbowShortToleranceMM,
			},
			Assumed: p.assumedOf("spoke.elbow_length_mm"),
		})
	}

	if planned && (pullThrough || gap) {
		var fixes []string
		if pullThrough {
			fixes = append(fixes, CodeSpokeHeadPullsThrough)
		}
		if gap {
			fixes = append(fixes, CodeElbowGap)
		}
		j.cs = append(j.cs, Change{
			Kind: ChangeAddWashers, Where: AtHub, Side: side,
			PerSpoke: plan.n, Count: plan.n * spokes,
			ThicknessMM: ptr(plan.w.thicknessMM), InnerDiameterMM: ptr(plan.w.innerMM), OuterDiameterMM: ptr(plan.w.outerMM),
			StackMM: ptr(round4(float64(plan.n) * plan.w.thicknessMM)), FromGiven: plan.w.fromGiven, PartID: plan.w.partID,
			Fixes: fixes,
		})
	}
}
