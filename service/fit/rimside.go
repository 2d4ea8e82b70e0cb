package fit

import (
	"fmt"
	"math"
)

// rimSide is the outcome of the rim-side rules shared by both sides.
type rimSide struct {
	findings []Finding
	changes  []Change
	cautions []string
}

// rimWasherType returns a washer for under the nipple heads: a given one that
// suits, else a standard one; ok is false when no bore both passes the shank
// and holds the head.
func rimWasherType(in Input, holeMM float64, opt Options) (washerType, bool) {
	n := in.Nipple
	for _, w := range in.Washers {
		if w.Where == AtHub {
			continue
		}
		if w.InnerDiameterMM >= n.ShankDiameterMM && n.HeadDiameterMM-w.InnerDiameterMM >= opt.NippleHeadMarginMM-eps &&
			w.OuterDiameterMM-holeMM >= opt.NippleHeadMarginMM-eps {
			return washerType{w.ThicknessMM, w.InnerDiameterMM, w.OuterDiameterMM, true}, true
		}
	}
	inner := roundUp(n.ShankDiameterMM+opt.WasherBoreClearanceMM, 0.1)
	if n.HeadDiameterMM-inner < opt.NippleHeadMarginMM-eps || len(opt.StandardWasherThicknessesMM) == 0 {
		return washerType{}, false
	}
	t := opt.StandardWasherThicknessesMM[0]
	for _, x := range opt.StandardWasherThicknessesMM {
		t = math.Min(t, x)
	}
	return washerType{t, inner, roundUp(holeMM+2*opt.NippleHeadMarginMM, 0.1), false}, true
}

// checkRim runs the rules on the nipple against the rim hole, and on the
// spoke and nipple threads.
func checkRim(in Input, p parts, opt Options) rimSide {
	var out rimSide
	r, n := in.Rim, in.Nipple

	hole := r.HoleDiameterMM
	need := n.ShankDiameterMM + opt.RimHoleClearanceMM
	if hole < need-eps {
		drill := roundUp(need, opt.DrillStepMM)
		canDrill := opt.AllowDrilling && !r.Eyelets && drill-hole <= opt.MaxDrillEnlargementMM+eps
		fd := Finding{
			Code: CodeNippleWontPassRimHole, Severity: Error,
			Message: fmt.Sprintf("The %.4g mm nipple shank needs a %.4g mm rim hole (%.3g mm clearance); the rim's holes are %.4g mm.",
				n.ShankDiameterMM, need, opt.RimHoleClearanceMM, hole),
			Values: map[string]float64{
				"shank_diameter_mm": n.ShankDiameterMM, "rim_hole_diameter_mm": hole,
				"required_hole_mm": round4(need), "drill_diameter_mm": round4(drill),
			},
			FixedByChange: canDrill,
		}
		switch {
		case canDrill:
			fd.Remedy = fmt.Sprintf("Drill the %d rim spoke holes to %.4g mm and deburr them, or use nipples whose shank is at most %.4g mm.",
				r.Holes, round4(drill), round4(hole-opt.RimHoleClearanceMM))
			out.changes = append(out.changes, Change{
				Kind: ChangeDrillRimHoles, Side: "both", Count: r.Holes, DiameterMM: ptr(round4(drill)),
				Reason: fmt.Sprintf("nipple shank %.4g mm, rim holes %.4g mm", n.ShankDiameterMM, hole),
				Fixes:  []string{CodeNippleWontPassRimHole},
			})
			out.cautions = append(out.cautions, fmt.Sprintf(
				"Drilling the rim's spoke holes from %.4g mm to %.4g mm removes material from the spoke bed and weakens it, and may void the rim maker's warranty; deburr every hole and confirm with the rim maker that the rim suits this build.",
				hole, round4(drill)))
			hole = round4(drill)
		case r.Eyelets:
			fd.Remedy = fmt.Sprintf("The rim's holes carry eyelets and must not be drilled: use nipples whose shank is at most %.4g mm, or another rim.", round4(hole-opt.RimHoleClearanceMM))
		default:
			fd.Remedy = fmt.Sprintf("Drilling to %.4g mm is more than this shop allows: use nipples whose shank is at most %.4g mm, or another rim.", round4(drill), round4(hole-opt.RimHoleClearanceMM))
		}
		out.findings = append(out.findings, fd)
	}

	if margin := n.HeadDiameterMM - hole; margin < opt.NippleHeadMarginMM-eps {
		w, ok := rimWasherType(in, hole, opt)
		fd := Finding{
			Code: CodeNippleHeadPullsThrough, Severity: Error,
			Message: fmt.Sprintf("The %.4g mm nipple head is only %.3g mm larger than the %.4g mm rim hole (needs %.3g mm): it can pull through the spoke bed.",
				n.HeadDiameterMM, margin, hole, opt.NippleHeadMarginMM),
			Values: map[string]float64{
				"head_diameter_mm": n.HeadDiameterMM, "rim_hole_diameter_mm": hole,
				"margin_mm": round4(margin), "required_margin_mm": opt.NippleHeadMarginMM,
			},
			FixedByChange: true,
		}
		if ok {
			fd.Remedy = fmt.Sprintf("Fit one %.4g mm washer (bore %.4g mm, outside %.4g mm) under each nipple head.", w.thicknessMM, w.innerMM, w.outerMM)
			out.changes = append(out.changes, Change{
				Kind: ChangeAddWashers, Where: AtRim, Side: "both", PerSpoke: 1, Count: in.SpokeCount,
				ThicknessMM: ptr(w.thicknessMM), InnerDiameterMM: ptr(w.innerMM), OuterDiameterMM: ptr(w.outerMM),
				StackMM: ptr(w.thicknessMM), FromGiven: w.fromGiven,
				Fixes: []string{CodeNippleHeadPullsThrough},
			})
			out.cautions = append(out.cautions, fmt.Sprintf(
				"Washers under the nipple heads raise the nipple seat by %.4g mm: recompute the spoke lengths with that nipple-seat correction before cutting or ordering spokes.", w.thicknessMM))
		} else {
			min := hole + opt.NippleHeadMarginMM
			fd.Remedy = fmt.Sprintf("Use nipples with a head of at least %.4g mm.", round4(min))
			out.changes = append(out.changes, Change{
				Kind: ChangeSwapPart, Part: "nipple",
				Reason:     fmt.Sprintf("nipple head %.4g mm on a %.4g mm rim hole", n.HeadDiameterMM, hole),
				Suggestion: fmt.Sprintf("nipples with a head of at least %.4g mm and the same thread", round4(min)),
				Fixes:      []string{CodeNippleHeadPullsThrough},
			})
		}
		out.findings = append(out.findings, fd)
	}

	dd := math.Abs(p.threadDiameterMM - n.Thread.DiameterMM)
	dt := math.Abs(p.threadTPI - n.Thread.TPI)
	if dd > opt.ThreadDiameterToleranceMM+eps || dt > opt.TPITolerance+eps {
		out.findings = append(out.findings, Finding{
			Code: CodeThreadMismatch, Severity: Error,
			Message: fmt.Sprintf("The spoke thread (%.4g mm, %.4g TPI) does not mate with the nipple thread (%.4g mm, %.4g TPI).",
				p.threadDiameterMM, p.threadTPI, n.Thread.DiameterMM, n.Thread.TPI),
			Remedy: fmt.Sprintf("Use nipples threaded %.4g mm × %.4g TPI.", p.threadDiameterMM, p.threadTPI),
			Values: map[string]float64{
				"spoke_thread_diameter_mm": p.threadDiameterMM, "spoke_thread_tpi": p.threadTPI,
				"nipple_thread_diameter_mm": n.Thread.DiameterMM, "nipple_thread_tpi": n.Thread.TPI,
			},
			Assumed:       p.assumedOf("spoke.thread"),
			FixedByChange: true,
		})
		out.changes = append(out.changes, Change{
			Kind: ChangeSwapPart, Part: "nipple",
			Reason:     "nipple thread does not match the spoke thread",
			Suggestion: fmt.Sprintf("nipples threaded %.4g mm × %.4g TPI", p.threadDiameterMM, p.threadTPI),
			Fixes:      []string{CodeThreadMismatch},
		})
	}
	return out
}

// threads describes where the threads sit along the spoke axis, measured
// from the head end of the seated nipple (positive toward the tyre).
type threads struct {
	spokeThreadMM          float64 // spoke thread length
	nippleTopMM, nippleLow float64 // nipple internal thread: [nippleLow, nippleTopMM]
}

func threadsOf(p parts) threads {
	top := -p.nippleThreadStartMM
	return threads{p.threadLengthMM, top, top - p.nippleThreadLengthMM}
}

// engagedMM is the overlap of the spoke thread [e − L, e] and the nipple
// thread when the spoke end sits at e.
func (t threads) engagedMM(e float64) float64 {
	return math.Max(0, math.Min(e, t.nippleTopMM)-math.Max(e-t.spokeThreadMM, t.nippleLow))
}

// bottomsAt is the spoke-end position past which the unthreaded spoke body
// would enter the nipple's thread.
func (t threads) bottomsAt() float64 { return t.spokeThreadMM + t.nippleLow }

// checkSpokeEnd runs the length-dependent thread rules for one side.
func checkSpokeEnd(in Input, p parts, side string, sg SideGeometry, opt Options) ([]Finding, []Change) {
	e, assumedEnd := 0.0, true
	if sg.SpokeEndMM != nil {
		e, assumedEnd = *sg.SpokeEndMM, false
	}
	assumed := p.assumedOf("spoke.thread_length_mm", "nipple.thread_start_mm", "nipple.thread_length_mm")
	if assumedEnd {
		assumed = append(assumed, "geometry."+side+".spoke_end_mm")
	}
	t := threadsOf(p)
	required := opt.MinThreadEngagementDiameters * p.threadDiameterMM
	engaged := t.engagedMM(e)

	// The best end position: flush with the nipple head, or lower if the
	// spoke would bottom there.
	best := math.Min(0, t.bottomsAt())
	feasible := t.engagedMM(best) >= required-eps && best <= opt.MaxSpokeEndPastNippleMM+eps
	by := round4(best - e)

	vals := func() map[string]float64 {
		return map[string]float64{
			"spoke_end_mm": round4(e), "engaged_mm": round4(engaged), "required_engagement_mm": round4(required),
			"spoke_thread_length_mm": p.threadLengthMM, "nipple_thread_start_mm": p.nippleThreadStartMM,
			"nipple_thread_length_mm": p.nippleThreadLengthMM, "max_past_nipple_mm": opt.MaxSpokeEndPastNippleMM,
		}
	}
	lengthRemedy := func(what string) string {
		if feasible {
			return fmt.Sprintf("Use %s spokes on the %s side, %.3g mm %s, to bring the spoke end to %.3g mm from the nipple head.",
				what, side, math.Abs(by), map[bool]string{true: "longer", false: "shorter"}[by > 0], round4(best))
		}
		return fmt.Sprintf("No spoke length gives %.3g mm of thread engagement with these spokes and nipples: use longer nipples or spokes with a longer thread.", required)
	}
	var fs []Finding
	if engaged < required-eps {
		fs = append(fs, Finding{
			Code: CodeThreadEngagementShort, Severity: Error, Side: side,
			Message: fmt.Sprintf("Only %.3g mm of the %s spoke thread engages the nipple (needs %.3g mm, %.3g thread diameters).",
				engaged, side, required, opt.MinThreadEngagementDiameters),
			Remedy: lengthRemedy("longer"), Values: vals(), Assumed: assumed, FixedByChange: feasible && by > 0,
		})
	}
	if e > t.bottomsAt()+eps {
		fs = append(fs, Finding{
			Code: CodeSpokeThreadBottoms, Severity: Error, Side: side,
			Message: fmt.Sprintf("The %s spoke's unthreaded body reaches the nipple's thread: the nipple will bind before the spoke is tight.", side),
			Remedy:  lengthRemedy("shorter"), Values: vals(), Assumed: assumed, FixedByChange: feasible && by < 0,
		})
	}
	if e > opt.MaxSpokeEndPastNippleMM+eps {
		fs = append(fs, Finding{
			Code: CodeSpokeProtrudesPastNipple, Severity: Error, Side: side,
			Message: fmt.Sprintf("The %s spoke ends %.3g mm past the nipple head (at most %.3g mm): it can cut the rim tape or tube.",
				side, e, opt.MaxSpokeEndPastNippleMM),
			Remedy: lengthRemedy("shorter"), Values: vals(), Assumed: assumed, FixedByChange: feasible && by < 0,
		})
	}
	var cs []Change
	if len(fs) > 0 && feasible && by != 0 {
		var fixes []string
		for _, f := range fs {
			if f.FixedByChange {
				fixes = append(fixes, f.Code)
			}
		}
		if len(fixes) > 0 {
			cs = append(cs, Change{
				Kind: ChangeSpokeLength, Side: side, Count: in.SpokeCount / 2, ByMM: ptr(by),
				Reason: fmt.Sprintf("spoke end %.3g mm from the nipple head", round4(e)),
				Fixes:  fixes,
			})
		}
	}
	return fs, cs
}
