package fit

import (
	"fmt"
	"math"
)

// isoStressAreaFactor: the tensile stress area of a 60° thread of major
// diameter d and pitch P is π/4·(d − 0.9382·P)² (ISO 898-1 handbook formula;
// 0.9382 = 13√3/24). Rolled spoke threads have this profile.
const isoStressAreaFactor = 0.9382

// stressAreaMM2 is the smaller of the spoke body's area and its thread's
// tensile stress area: where the spoke is weakest in tension.
func stressAreaMM2(p parts) (float64, error) {
	body := math.Pi * p.spokeDiameterMM * p.spokeDiameterMM / 4
	pitch := 25.4 / p.threadTPI // 1 in = 25.4 mm exactly
	root := p.threadDiameterMM - isoStressAreaFactor*pitch
	if root <= 0 || !finite(root) {
		return 0, unprocessable("/spoke/thread/tpi",
			"a %.4g mm thread cannot have %.4g threads per inch (pitch deeper than the thread)", p.threadDiameterMM, p.threadTPI)
	}
	return math.Min(body, math.Pi*root*root/4), nil
}

// sideTensions returns each side's tension: the tighter side at target, the
// other scaled by the left/right ratio.
func sideTensions(target, ratioLR float64) (left, right float64) {
	if ratioLR <= 1 {
		return target * ratioLR, target
	}
	return target, target / ratioLR
}

func checkTension(in Input, p parts, g Geometry, tl, tr, area float64, opt Options) ([]Finding, []string) {
	var fs []Finding
	var cautions []string
	high, low := math.Max(tl, tr), math.Min(tl, tr)
	lowSide := "left"
	if tr < tl {
		lowSide = "right"
	}

	if lim := in.Rim.MaxTensionN; lim == nil {
		fs = append(fs, Finding{
			Code: CodeRimLimitUnknown, Severity: Info,
			Message: fmt.Sprintf("No rim tension limit was given; the tighter side runs at %.4g N.", round4(high)),
			Remedy:  "Ask the rim maker for its maximum spoke tension.",
			Values:  map[string]float64{"tension_n": round4(high)},
		})
	} else if high > *lim+eps {
		fs = append(fs, Finding{
			Code: CodeTensionAboveRimLimit, Severity: Error,
			Message: fmt.Sprintf("The tighter side's %.4g N exceeds the rim maker's limit of %.4g N.", round4(high), *lim),
			Remedy:  fmt.Sprintf("Build to at most %.4g N, or use a rim rated for %.4g N.", *lim, round4(high)),
			Values:  map[string]float64{"tension_n": round4(high), "max_tension_n": *lim},
		})
	} else if high > opt.NearRimLimitFraction**lim+eps {
		cautions = append(cautions, fmt.Sprintf(
			"The tighter side's %.4g N is within %.0f %% of the rim maker's %.4g N limit: check tension with a calibrated tensiometer and do not exceed it.",
			round4(high), 100*(1-opt.NearRimLimitFraction), *lim))
	}

	stress := high / area // N/mm² = MPa
	allowed := p.material.UTSMPa / opt.SpokeSafetyFactor
	if stress > allowed+eps {
		fs = append(fs, Finding{
			Code: CodeSpokeStressHigh, Severity: Error,
			Message: fmt.Sprintf("At %.4g N the spoke's weakest section (%.4g mm²) carries %.4g MPa, above %.4g MPa (%s UTS %.4g MPa ÷ safety factor %.3g).",
				round4(high), round4(area), round4(stress), round4(allowed), p.material.Name, p.material.UTSMPa, opt.SpokeSafetyFactor),
			Remedy: fmt.Sprintf("Lower the tension to at most %.4g N, or use a thicker or stronger spoke.", round4(allowed*area)),
			Values: map[string]float64{
				"tension_n": round4(high), "stress_area_mm2": round4(area), "stress_mpa": round4(stress),
				"allowed_mpa": round4(allowed), "uts_mpa": p.material.UTSMPa, "safety_factor": opt.SpokeSafetyFactor,
			},
			Assumed: p.assumedOf("spoke.thread", "spoke.material"),
		})
	}

	if low < opt.MinLowSideTensionN-eps {
		lowGeo := g.Left
		if lowSide == "right" {
			lowGeo = g.Right
		}
		fs = append(fs, Finding{
			Code: CodeLowSideTensionLow, Severity: Warning, Side: lowSide,
			Message: fmt.Sprintf("The %s side runs at only %.4g N (below %.4g N): its spokes can go slack under load and fatigue.",
				lowSide, round4(low), opt.MinLowSideTensionN),
			Remedy: fmt.Sprintf("Raise the target so the %s side reaches %.4g N if the rim allows, or choose a hub or lacing with less dish.", lowSide, opt.MinLowSideTensionN),
			Values: map[string]float64{
				"low_side_tension_n": round4(low), "min_tension_n": opt.MinLowSideTensionN,
				"tension_ratio_left_to_right": round4(g.TensionRatioLeftToRight), "bracing_angle_deg": round4(lowGeo.BracingAngleDeg),
			},
		})
	}
	return fs, cautions
}

func checkTyre(in Input, opt Options) []Finding {
	var fs []Finding
	rimBSD := in.Rim.BSDMM
	if _, ok := LookupBSD(rimBSD, opt.BSDToleranceMM); !ok {
		fs = append(fs, Finding{
			Code: CodeBSDNotInTable, Severity: Info,
			Message: fmt.Sprintf("The rim's bead seat diameter %.4g mm is not in the ISO 5775 table this service knows; check it against the rim maker's data.", rimBSD),
			Values:  map[string]float64{"rim_bsd_mm": rimBSD},
		})
	}
	t := in.Tyre
	if t == nil {
		return fs
	}
	if math.Abs(t.BSDMM-rimBSD) > opt.BSDToleranceMM+eps {
		return append(fs, Finding{
			Code: CodeTyreRimDiameterMismatch, Severity: Error,
			Message: fmt.Sprintf("The tyre's bead seat diameter %s does not match the rim's %s (ISO 5775): it cannot seat safely.",
				describeBSD(t.BSDMM, opt.BSDToleranceMM), describeBSD(rimBSD, opt.BSDToleranceMM)),
			Remedy: fmt.Sprintf("Use a tyre marked with bead seat diameter %.4g (the second number of its ISO 5775 size, e.g. %.4g-%.4g); names like \"26-inch\" or \"28-inch\" cover several sizes.",
				rimBSD, t.WidthMM, rimBSD),
			Values: map[string]float64{"tyre_bsd_mm": t.BSDMM, "rim_bsd_mm": rimBSD},
		})
	}
	ratio := t.WidthMM / in.Rim.InnerWidthMM
	frac := wideTyreRimFraction
	if t.WidthMM < narrowTyreLimitMM {
		frac = narrowTyreRimFraction
	}
	rec, acc := opt.TyreRimRatioRecommended, opt.TyreRimRatioAccepted
	sev := Severity("")
	switch {
	case ratio < acc[0]-eps || ratio > acc[1]+eps:
		sev = Warning
	case ratio < rec[0]-eps || ratio > rec[1]+eps:
		sev = Info
	}
	if sev != "" {
		fs = append(fs, Finding{
			Code: CodeTyreWidthOutOfRange, Severity: sev,
			Message: fmt.Sprintf("A %.4g mm tyre on a %.4g mm inner-width rim is a width ratio of %.3g (recommended %.3g–%.3g, accepted %.3g–%.3g).",
				t.WidthMM, in.Rim.InnerWidthMM, ratio, rec[0], rec[1], acc[0], acc[1]),
			Remedy: fmt.Sprintf("A rim of about %.3g mm inner width suits this tyre; check the tyre maker's rim-width chart.", round4(frac*t.WidthMM)),
			Values: map[string]float64{
				"tyre_width_mm": t.WidthMM, "rim_inner_width_mm": in.Rim.InnerWidthMM, "ratio": round4(ratio),
				"suggested_inner_width_mm": round4(frac * t.WidthMM),
			},
		})
	}
	return fs
}
