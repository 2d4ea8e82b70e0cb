package fit

import (
	"fmt"
	"math"
	"strings"

	"wheelbench/service/geometry"
)

// checkRimLimit judges the tighter side's tension against the rim maker's
// limit, and aluminium nipples against the load.
func checkRimLimit(j *judge, in Input, high float64, kind string, opt Options) {
	if lim := in.Rim.MaxTensionN; lim == nil {
		j.add(Finding{
			Code:    CodeRimLimitUnknown,
			Message: fmt.Sprintf("No rim tension limit was given; the tighter side runs at %.4g N.", round4(high)),
			Remedy:  "Ask the rim maker for its maximum spoke tension.",
			Values:  map[string]float64{"tension_n": round4(high)},
		})
	} else if high > *lim+eps {
		j.add(Finding{
			Code:    CodeTensionAboveRimLimit,
			Message: fmt.Sprintf("The tighter side's %.4g N exceeds the rim maker's limit of %.4g N.", round4(high), *lim),
			Remedy:  fmt.Sprintf("Build to at most %.4g N, or use a rim rated for %.4g N.", *lim, round4(high)),
			Values:  map[string]float64{"tension_n": round4(high), "max_tension_n": *lim},
		})
		j.caution("The target tension is above the rim maker's limit: a rim built over its limit can crack at the spoke holes; build to the limit or choose a stronger rim.")
	} else if high > opt.NearRimLimitFraction**lim+eps {
		j.caution(fmt.Sprintf(
			"The tighter side's %.4g N is within %.0f %% of the rim maker's %.4g N limit: check tension with a calibrated tensiometer and do not exceed it.",
			round4(high), 100*(1-opt.NearRimLimitFraction), *lim))
	}
	if in.Nipple.Material == "aluminium" {
		heavy := kind == geometry.KindMotor || kind == geometry.KindMotorVehicle || kind == geometry.KindCargo || kind == geometry.KindTandem
		if heavy || high > opt.AluminiumNippleMaxTensionN+eps {
			why := fmt.Sprintf("a %s hub", strings.ReplaceAll(kind, "_", " "))
			if !heavy {
				why = fmt.Sprintf("%.4g N (above %.4g N)", round4(high), opt.AluminiumNippleMaxTensionN)
			}
			j.add(Finding{
				Code:    CodeAluminiumNippleHighLoad,
				Message: fmt.Sprintf("Aluminium nipples on this wheel (%s) can crack or round off under the load.", why),
				Remedy:  "Use brass nipples.",
				Values:  map[string]float64{"tension_n": round4(high), "max_aluminium_tension_n": opt.AluminiumNippleMaxTensionN},
			})
			j.caution("Aluminium nipples crack and corrode under high or repeated load and a failed nipple frees its spoke; use brass nipples on this wheel.")
		}
	}
}

func checkTyre(j *judge, in Input, opt Options) {
	rimBSD := in.Rim.BSDMM
	if _, ok := LookupBSD(rimBSD, opt.BSDToleranceMM); !ok {
		j.add(Finding{
			Code:    CodeBSDNotInTable,
			Message: fmt.Sprintf("The rim's bead seat diameter %.4g mm is not in the ISO 5775 table this service knows; check it against the rim maker's data.", rimBSD),
			Values:  map[string]float64{"rim_bsd_mm": rimBSD},
		})
	}
	t := in.Tyre
	if t == nil {
		return
	}
	if math.Abs(t.BSDMM-rimBSD) > opt.BSDToleranceMM+eps {
		j.add(Finding{
			Code: CodeTyreRimDiameterMismatch,
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
	code := ""
	switch {
	case ratio < acc[0]-eps || ratio > acc[1]+eps:
		code = CodeTyreWidthOutOfRange
	case ratio < rec[0]-eps || ratio > rec[1]+eps:
		code = CodeTyreWidthOutsideRecommended
	}
	if code != "" {
		j.add(Finding{
			Code: code,
			Message: fmt.Sprintf("A %.4g mm tyre on a %.4g mm inner-width rim is a width ratio of %.3g (recommended %.3g–%.3g, accepted %.3g–%.3g).",
				t.WidthMM, in.Rim.InnerWidthMM, ratio, rec[0], rec[1], acc[0], acc[1]),
			Remedy: fmt.Sprintf("A rim of about %.3g mm inner width suits this tyre; check the tyre maker's rim-width chart.", round4(frac*t.WidthMM)),
			Values: map[string]float64{
				"tyre_width_mm": t.WidthMM, "rim_inner_width_mm": in.Rim.InnerWidthMM, "ratio": round4(ratio),
				"suggested_inner_width_mm": round4(frac * t.WidthMM),
			},
		})
	}
}
