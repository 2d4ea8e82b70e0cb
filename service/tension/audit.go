package tension

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"wheelbench/service/field"
	"wheelbench/service/spoke"
)

// defaultTolerancePct is ±10 % around the aim, common practice.
const defaultTolerancePct = 10

// AuditRequest is one built wheel's readings to audit. Spoke is the
// section of every spoke unless SpokeLeft or SpokeRight overrides it for a
// side.
//
// The target tension (N, kgf or lbf; optional) is always the tighter
// side's, as everywhere in wheelbench. With the geometric left/right ratio
// ρ = T_left/T_right the tighter side is the left when ρ > 1, the right
// when ρ < 1 and both when ρ = 1; the other side's aim is the target
// scaled by the ratio (target·ρ for the left, target/ρ for the right).
// TargetSide may still be sent: with a ratio it must name the tighter side
// (naming the slacker one is refused, 422 at /target_side); without a
// ratio it names the one side the target is for, and the other side is
// judged against its own mean. With neither, the target applies to both
// sides and a warning says that a dished wheel needs the ratio. Without a
// target each side is judged against its own mean.
type AuditRequest struct {
	Spoke            spoke.Spec     `json:"spoke"`
	SpokeLeft        *spoke.Spec    `json:"spoke_left"`
	SpokeRight       *spoke.Spec    `json:"spoke_right"`
	Readings         []AuditReading `json:"readings"`
	TargetTensionN   *float64       `json:"target_tension_n"`
	TargetTensionKgf *float64       `json:"target_tension_kgf"`
	TargetTensionLbf *float64       `json:"target_tension_lbf"`
	TargetSide       string         `json:"target_side"`
	// TolerancePct is the allowed deviation in percent (default 10).
	TolerancePct *float64 `json:"tolerance_pct"`
	// GeometricLeftRightRatio is T_left/T_right from the wheel's geometry.
	GeometricLeftRightRatio *float64 `json:"geometric_left_right_ratio"`
}

// AuditReading is one spoke's dial reading.
type AuditReading struct {
	Side    string  `json:"side"`
	Spoke   int     `json:"spoke"`
	Reading float64 `json:"reading"`
}

// AuditResult summarises the wheel per side and per spoke. TargetSide is
// where the target went: "left", "right" or "both" (empty without one).
type AuditResult struct {
	TolerancePct            float64        `json:"tolerance_pct"`
	TargetSide              string         `json:"target_side,omitempty"`
	Sides                   []SideSummary  `json:"sides"`
	Spokes                  []SpokeVerdict `json:"spokes"`
	MeasuredLeftRightRatio  *float64       `json:"measured_left_right_ratio,omitempty"`
	GeometricLeftRightRatio *float64       `json:"geometric_left_right_ratio,omitempty"`
	Warnings                []Warning      `json:"warnings"`
	Cautions                []string       `json:"cautions"`
}

// SideSummary is one side's statistics. AimN is the tension the side's
// spokes should have (its target, or its mean without one); Outliers lists
// the spoke indices outside ±tolerance of the side's mean.
type SideSummary struct {
	Side         string  `json:"side"`
	Count        int     `json:"count"`
	AimN         float64 `json:"aim_n"`
	AimReading   float64 `json:"aim_reading"`
	MeanN        float64 `json:"mean_n"`
	SDN          float64 `json:"sd_n"`
	MinN         float64 `json:"min_n"`
	MaxN         float64 `json:"max_n"`
	MeanVsAimPct float64 `json:"mean_vs_aim_pct"`
	Outliers     []int   `json:"outliers"`
}

// SpokeVerdict is one spoke: its tension, how far it is from the side's
// aim and mean, the reading to aim for, and the action: "tighten" below
// aim − tolerance, "loosen" above aim + tolerance, else "ok".
type SpokeVerdict struct {
	Side          string     `json:"side"`
	Spoke         int        `json:"spoke"`
	Reading       float64    `json:"reading"`
	TensionN      float64    `json:"tension_n"`
	IntervalN     [2]float64 `json:"interval_n"`
	Reliable      bool       `json:"reliable"`
	VsAimPct      float64    `json:"vs_aim_pct"`
	VsMeanPct     float64    `json:"vs_mean_pct"`
	Outlier       bool       `json:"outlier"`
	TargetReading float64    `json:"target_reading"`
	Action        string     `json:"action"`
}

// Audit warning codes.
const (
	// WarnRatioMismatch: the measured left/right ratio disagrees with the
	// geometric one.
	WarnRatioMismatch = "left_right_ratio_mismatch"
	// WarnNoTarget (info): no target; each side is judged on its own mean.
	WarnNoTarget = "no_target"
	// WarnNoGeometricRatio: a target without the geometric left/right
	// ratio, so the slacker side's aim is unknown.
	WarnNoGeometricRatio = "no_geometric_ratio"
)

// targetAims decides which side the target is for and each side's aim
// (AuditRequest's rule): applied is "left", "right" or "both", warn the
// warning for a target without a ratio. A targetSide that contradicts the
// ratio is a 422 at /target_side.
func targetAims(target float64, ratio *float64, targetSide string) (aims map[string]float64, applied string, warn *Warning, err error) {
	aims = map[string]float64{}
	if ratio == nil {
		if targetSide == "" {
			aims["left"], aims["right"] = target, target
			return aims, "both", &Warning{WarnNoGeometricRatio, "warning",
				"no geometric_left_right_ratio: the target applies to both sides. A dished wheel (a rear wheel, a disc front) runs its sides at different tensions; give the ratio so the slacker side is aimed at its own, lower tension"}, nil
		}
		other := map[string]string{"left": "right", "right": "left"}[targetSide]
		aims[targetSide] = target
		return aims, targetSide, &Warning{WarnNoGeometricRatio, "warning",
			"no geometric_left_right_ratio: the target applies to the " + targetSide + " side only, and the " + other +
				" side is judged against its own mean; give the ratio to aim both sides"}, nil
	}
	r := *ratio
	tighter := "both"
	switch {
	case r > 1:
		tighter = "left"
	case r < 1:
		tighter = "right"
	}
	if targetSide != "" && tighter != "both" && targetSide != tighter {
		return nil, "", nil, field.Unprocessable("/target_side", "target_side %s names the slacker side: the target tension is always the tighter side's, and with geometric_left_right_ratio %g (T_left/T_right) the tighter side is the %s; omit target_side or send %s, with the %s side's tension as the target",
			targetSide, r, tighter, tighter, tighter)
	}
	switch tighter {
	case "left":
		aims["left"], aims["right"] = target, target/r
	case "right":
		aims["left"], aims["right"] = target*r, target
	default:
		aims["left"], aims["right"] = target, target
	}
	return aims, tighter, nil, nil
}

// Audit converts every reading with the model and judges the wheel.
// Errors are *field.Error with pointers into the audit body.
func (m *Model) Audit(req AuditRequest) (AuditResult, error) {
	var errs []error
	tol := float64(defaultTolerancePct)
	if req.TolerancePct != nil {
		tol = *req.TolerancePct
		if !finite(tol) || tol <= 0 || tol > 50 {
			errs = append(errs, field.Invalid("/tolerance_pct", "tolerance_pct must be above 0 and at most 50"))
		}
	}
	ratio := req.GeometricLeftRightRatio
	if ratio != nil && (!finite(*ratio) || *ratio <= 0 || *ratio > 10) {
		errs = append(errs, field.Invalid("/geometric_left_right_ratio", "geometric_left_right_ratio must be positive and at most 10"))
	}
	targetSide := req.TargetSide
	if targetSide != "" && targetSide != "left" && targetSide != "right" {
		errs = append(errs, field.Invalid("/target_side", "target_side must be left or right"))
	}
	var target *float64
	set := 0
	for _, c := range []struct {
		at string
		v  *float64
		f  func(float64) float64
	}{{"/target_tension_n", req.TargetTensionN, func(v float64) float64 { return v }},
		{"/target_tension_kgf", req.TargetTensionKgf, NFromKgf}, {"/target_tension_lbf", req.TargetTensionLbf, NFromLbf}} {
		if c.v == nil {
			continue
		}
		set++
		v := c.f(*c.v)
		if set > 1 {
			errs = append(errs, field.Invalid(c.at, "give one target tension only"))
		} else if !finite(v) || v <= 0 || v > maxTensionN {
			errs = append(errs, field.Invalid(c.at, "the target tension must be positive and at most %d N", maxTensionN))
		} else {
			target = &v
		}
	}
	if len(req.Readings) == 0 || len(req.Readings) > maxReadings {
		errs = append(errs, field.Invalid("/readings", "give between 1 and %d readings", maxReadings))
	}
	if err := errors.Join(errs...); err != nil {
		return AuditResult{}, err
	}
	var aims map[string]float64
	var applied string
	var aimWarn *Warning
	if target != nil {
		var err error
		if aims, applied, aimWarn, err = targetAims(*target, ratio, targetSide); err != nil {
			return AuditResult{}, err
		}
	}
	specs := map[string]spoke.Spec{"left": req.Spoke, "right": req.Spoke}
	atOf := map[string]string{"left": "/spoke", "right": "/spoke"}
	if req.SpokeLeft != nil {
		specs["left"], atOf["left"] = *req.SpokeLeft, "/spoke_left"
	}
	if req.SpokeRight != nil {
		specs["right"], atOf["right"] = *req.SpokeRight, "/spoke_right"
	}
	preps := map[string]*prepared{}
	out := AuditResult{TolerancePct: tol, TargetSide: applied, GeometricLeftRightRatio: ratio, Warnings: []Warning{}, Cautions: []string{}}
	if aimWarn != nil {
		out.Warnings = append(out.Warnings, *aimWarn)
	}
	warned := map[Warning]bool{}
	caution := map[string]bool{}
	addCaution := func(c string) {
		if !caution[c] {
			caution[c] = true
			out.Cautions = append(out.Cautions, c)
		}
	}
	seen := map[[2]any]bool{}
	bySide := map[string][]int{}
	for i, rd := range req.Readings {
		if rd.Side != "left" && rd.Side != "right" {
			errs = append(errs, field.Invalid(ptr("readings", i, "side"), "side must be left or right"))
			continue
		}
		if rd.Spoke < 0 {
			errs = append(errs, field.Invalid(ptr("readings", i, "spoke"), "spoke must be a non-negative index"))
			continue
		}
		key := [2]any{rd.Side, rd.Spoke}
		if seen[key] {
			errs = append(errs, field.Invalid(ptr("readings", i, "spoke"), "spoke %d on the %s side is listed twice", rd.Spoke, rd.Side))
			continue
		}
		seen[key] = true
		p := preps[rd.Side]
		if p == nil {
			pp, err := m.prepareSpoke(specs[rd.Side], atOf[rd.Side])
			if err != nil {
				return AuditResult{}, err
			}
			p = &pp
			preps[rd.Side] = p
			// The section's own warnings (stiffness, a profile the
			// calibration lacks), once per wheel.
			for _, w := range p.secWarns {
				if !warned[w] {
					warned[w] = true
					out.Warnings = append(out.Warnings, w)
				}
			}
		}
		res, err := p.convert(rd.Reading, func() string { return ptr("readings", i, "reading") })
		if err != nil {
			errs = append(errs, err)
			continue
		}
		for _, c := range res.Cautions {
			addCaution(c)
		}
		out.Spokes = append(out.Spokes, SpokeVerdict{Side: rd.Side, Spoke: rd.Spoke, Reading: rd.Reading,
			TensionN: res.TensionN, IntervalN: res.IntervalN, Reliable: res.Reliable})
		bySide[rd.Side] = append(bySide[rd.Side], len(out.Spokes)-1)
	}
	if err := errors.Join(errs...); err != nil {
		return AuditResult{}, err
	}
	if target == nil {
		out.Warnings = append(out.Warnings, Warning{WarnNoTarget, "info", "no target tension: each side is judged against its own mean"})
	}
	means := map[string]float64{}
	for _, side := range []string{"left", "right"} {
		idx := bySide[side]
		if len(idx) == 0 {
			continue
		}
		s := SideSummary{Side: side, Count: len(idx), MinN: math.Inf(1), Outliers: []int{}}
		for _, k := range idx {
			t := out.Spokes[k].TensionN
			s.MeanN += t
			s.MinN, s.MaxN = math.Min(s.MinN, t), math.Max(s.MaxN, t)
		}
		s.MeanN /= float64(len(idx))
		for _, k := range idx {
			d := out.Spokes[k].TensionN - s.MeanN
			s.SDN += d * d
		}
		if len(idx) > 1 {
			s.SDN = math.Sqrt(s.SDN / float64(len(idx)-1)) // sample SD
		} else {
			s.SDN = 0
		}
		aim, ok := aims[side]
		if !ok {
			aim = s.MeanN
		}
		s.AimN = aim
		tg, err := preps[side].target(aim, "/target_tension_n")
		if err != nil {
			return AuditResult{}, err
		}
		s.AimReading = tg.Reading
		for _, c := range tg.Cautions {
			addCaution(c)
		}
		s.MeanVsAimPct = 100 * (s.MeanN - aim) / aim
		for _, k := range idx {
			v := &out.Spokes[k]
			v.VsAimPct = 100 * (v.TensionN - aim) / aim
			v.VsMeanPct = 100 * (v.TensionN - s.MeanN) / s.MeanN
			v.Outlier = math.Abs(v.VsMeanPct) > tol
			v.TargetReading = tg.Reading
			switch {
			case v.VsAimPct < -tol:
				v.Action = "tighten"
			case v.VsAimPct > tol:
				v.Action = "loosen"
			default:
				v.Action = "ok"
			}
			if v.Outlier {
				s.Outliers = append(s.Outliers, v.Spoke)
			}
			if v.TensionN < 0.5*aim {
				addCaution(fmt.Sprintf("Spoke %d on the %s side is below half its aim; slack spokes loosen and break. Bring it up before the wheel is ridden.", v.Spoke, side))
			}
		}
		sort.Ints(s.Outliers)
		means[side] = s.MeanN
		out.Sides = append(out.Sides, s)
	}
	if l, r := means["left"], means["right"]; l > 0 && r > 0 {
		mr := l / r
		out.MeasuredLeftRightRatio = &mr
		if ratio != nil && math.Abs(mr / *ratio - 1) > tol/100 {
			out.Warnings = append(out.Warnings, Warning{WarnRatioMismatch, "warning", fmt.Sprintf(
				"the measured left/right ratio %.3f differs from the geometric %.3f by more than %g %%: check the dish and the readings", mr, *ratio, tol)})
		}
	}
	return out, nil
}
