package fit

import (
	"fmt"
	"math"
	"strings"
)

// rimSide is the outcome of the rim-side rules shared by both sides.
type rimSide struct {
	findings []Finding
	changes  []Change
	cautions []string
}

// rimWasherType returns a washer for under the nipple heads: a given one
// that suits, else the catalog's, else a standard one; ok is false when no
// bore both passes the shank and holds the head.
func rimWasherType(in Input, holeMM float64, opt Options) (washerType, bool) {
	n := in.Nipple
	suits := func(w Washer) bool {
		return w.Where != AtHub && w.InnerDiameterMM >= n.ShankDiameterMM && n.HeadDiameterMM-w.InnerDiameterMM >= opt.NippleHeadMarginMM-eps &&
			w.OuterDiameterMM-holeMM >= opt.NippleHeadMarginMM-eps
	}
	for _, w := range in.Washers {
		if suits(w) {
			return washerType{w.ThicknessMM, w.InnerDiameterMM, w.OuterDiameterMM, true, ""}, true
		}
	}
	for _, w := range in.CatalogWashers {
		if suits(w.Washer) {
			return washerType{w.ThicknessMM, w.InnerDiameterMM, w.OuterDiameterMM, false, w.PartID}, true
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
	return washerType{t, inner, roundUp(holeMM+2*opt.NippleHeadMarginMM, 0.1), false, ""}, true
}

// checkRim runs the rules on the nipple against the rim hole and on the
// spoke and nipple threads. It returns the washer stack it proposes under
// each nipple head (0: none), which the spoke lengths must include.
func checkRim(j *judge, in Input, p parts, opt Options) (washerMM float64) {
	r, n := in.Rim, in.Nipple

	hole := r.HoleDiameterMM
	need := n.ShankDiameterMM + opt.RimHoleClearanceMM
	if hole < need-eps {
		drill := roundUp(need, opt.DrillStepMM)
		canDrill := opt.AllowDrilling && !r.Eyelets && drill-hole <= opt.MaxDrillEnlargementMM+eps
		fd := Finding{
			Code: CodeNippleWontPassRimHole,
			Message: fmt.Sprintf("The %.4g mm nipple shank needs a %.4g mm rim hole (%.3g mm clearance); the rim's holes are %.4g mm.",
				n.ShankDiameterMM, round4(need), opt.RimHoleClearanceMM, hole),
			Values: map[string]float64{
				"shank_diameter_mm": n.ShankDiameterMM, "rim_hole_diameter_mm": hole,
				"required_hole_mm": round4(need), "drill_diameter_mm": round4(drill),
			},
			FixedByChange: canDrill,
		}
		holes := r.Holes
		if holes == 0 {
			holes = in.SpokeCount
		}
		switch {
		case canDrill:
			fd.Remedy = fmt.Sprintf("Drill the %d rim spoke holes to %.4g mm and deburr them, or use nipples whose shank is at most %.4g mm.",
				holes, round4(drill), round4(hole-opt.RimHoleClearanceMM))
			j.cs = append(j.cs, Change{
				Kind: ChangeDrillRimHoles, Side: "both", Count: holes, DiameterMM: ptr(round4(drill)),
				Reason: fmt.Sprintf("nipple shank %.4g mm, rim holes %.4g mm", n.ShankDiameterMM, hole),
				Fixes:  []string{CodeNippleWontPassRimHole},
			})
			j.caution(fmt.Sprintf(
				"Drilling the rim's spoke holes from %.4g mm to %.4g mm removes material from the spoke bed and weakens it, and may void the rim maker's warranty; deburr every hole and confirm with the rim maker that the rim suits this build.",
				hole, round4(drill)))
			hole = round4(drill)
		case r.Eyelets:
			fd.Remedy = fmt.Sprintf("The rim's holes carry eyelets and must not be drilled: use nipples whose shank is at most %.4g mm, or another rim.", round4(hole-opt.RimHoleClearanceMM))
		default:
			fd.Remedy = fmt.Sprintf("Drilling to %.4g mm is more than this shop allows: use nipples whose shank is at most %.4g mm, or another rim.", round4(drill), round4(hole-opt.RimHoleClearanceMM))
		}
		j.add(fd)
	}

	if margin := n.HeadDiameterMM - hole; margin < opt.NippleHeadMarginMM-eps && r.NippleWasherMM == 0 {
		w, ok := rimWasherType(in, hole, opt)
		fd := Finding{
			Code: CodeNippleHeadPullsThrough,
			Message: fmt.Sprintf("The %.4g mm nipple head is only %.3g mm larger than the %.4g mm rim hole (needs %.3g mm): it can pull through the spoke bed.",
				n.HeadDiameterMM, round4(margin), hole, opt.NippleHeadMarginMM),
			Values: map[string]float64{
				"head_diameter_mm": n.HeadDiameterMM, "rim_hole_diameter_mm": hole,
				"margin_mm": round4(margin), "required_margin_mm": opt.NippleHeadMarginMM,
			},
			FixedByChange: true,
		}
		if ok {
			fd.Remedy = fmt.Sprintf("Fit one %.4g mm washer (bore %.4g mm, outside %.4g mm) under each nipple head.", w.thicknessMM, w.innerMM, w.outerMM)
			j.cs = append(j.cs, Change{
				Kind: ChangeAddWashers, Where: AtRim, Side: "both", PerSpoke: 1, Count: in.SpokeCount,
				ThicknessMM: ptr(w.thicknessMM), InnerDiameterMM: ptr(w.innerMM), OuterDiameterMM: ptr(w.outerMM),
				StackMM: ptr(w.thicknessMM), FromGiven: w.fromGiven, PartID: w.partID,
				Fixes: []string{CodeNippleHeadPullsThrough},
			})
			washerMM = w.thicknessMM
			j.caution(fmt.Sprintf(
				"The spoke lengths in this report include the %.4g mm that the proposed washers lift each nipple head away from the hub; without those washers the spokes would be %.4g mm too long.",
				w.thicknessMM, w.thicknessMM))
		} else {
			min := hole + opt.NippleHeadMarginMM
			fd.Remedy = fmt.Sprintf("Use nipples with a head of at least %.4g mm.", round4(min))
			j.cs = append(j.cs, Change{
				Kind: ChangeSwapPart, Part: "nipple",
				Reason:     fmt.Sprintf("nipple head %.4g mm on a %.4g mm rim hole", n.HeadDiameterMM, hole),
				Suggestion: fmt.Sprintf("nipples with a head of at least %.4g mm and the same thread", round4(min)),
				Fixes:      []string{CodeNippleHeadPullsThrough},
			})
		}
		j.add(fd)
	}

	checkThreads(j, in, p, opt)
	return washerMM
}

// checkThreads compares the spoke's thread with the nipple's like with
// like: the spoke sizes they are cut for (a nipple named only by its
// measured major diameter fits spokes up to RolledThreadRiseMaxMM thinner
// than that, since rolling raises the thread above the wire), two measured
// major diameters when both are given, and the pitches.
func checkThreads(j *judge, in Input, p parts, opt Options) {
	nt := in.Nipple.Thread
	tol := opt.ThreadDiameterToleranceMM
	var why []string
	values := map[string]float64{"spoke_thread_size_mm": round4(p.threadSizeMM), "spoke_thread_tpi": p.threadTPI}
	if nt.TPI != nil {
		values["nipple_thread_tpi"] = *nt.TPI
		if math.Abs(p.threadTPI-*nt.TPI) > opt.TPITolerance+eps {
			why = append(why, fmt.Sprintf("the pitches differ (%.4g and %.4g TPI)", p.threadTPI, *nt.TPI))
		}
	}
	if size := nt.Size(); size > 0 {
		values["nipple_thread_size_mm"] = round4(size)
		if math.Abs(size-p.threadSizeMM) > tol+eps {
			why = append(why, fmt.Sprintf("the nipple is threaded for %.4g mm spokes, the spoke's thread is for %.4g mm", size, p.threadSizeMM))
		}
	} else if nt.DiameterMM != nil {
		m := *nt.DiameterMM
		if p.threadSizeMM < m-opt.RolledThreadRiseMaxMM-tol-eps || p.threadSizeMM > m+tol+eps {
			why = append(why, fmt.Sprintf("a %.4g mm measured nipple thread fits spokes of %.4g to %.4g mm, not %.4g mm",
				m, round4(m-opt.RolledThreadRiseMaxMM), m, p.threadSizeMM))
		}
	}
	if nt.DiameterMM != nil && p.threadMajorMM > 0 {
		values["nipple_thread_diameter_mm"] = *nt.DiameterMM
		values["spoke_thread_diameter_mm"] = p.threadMajorMM
		if math.Abs(*nt.DiameterMM-p.threadMajorMM) > tol+eps {
			why = append(why, fmt.Sprintf("the measured threads differ (%.4g and %.4g mm)", p.threadMajorMM, *nt.DiameterMM))
		}
	}
	if len(why) == 0 {
		return
	}
	j.add(Finding{
		Code:          CodeThreadMismatch,
		Message:       "The spoke thread does not mate with the nipple thread: " + strings.Join(why, "; ") + ".",
		Remedy:        fmt.Sprintf("Use nipples threaded for %.4g mm spokes at %.4g TPI.", round4(p.threadSizeMM), p.threadTPI),
		Values:        values,
		Assumed:       p.assumedOf("spoke.thread"),
		FixedByChange: true,
	})
	j.cs = append(j.cs, Change{
		Kind: ChangeSwapPart, Part: "nipple",
		Reason:     "nipple thread does not match the spoke thread",
		Suggestion: fmt.Sprintf("nipples threaded for %.4g mm spokes at %.4g TPI", round4(p.threadSizeMM), p.threadTPI),
		Fixes:      []string{CodeThreadMismatch},
	})
}
