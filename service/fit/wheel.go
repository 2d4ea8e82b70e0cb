package fit

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"wheelbench/service/geometry"
	"wheelbench/service/spoke"
)

// judge collects one evaluation's findings, changes and cautions.
type judge struct {
	fs       []Finding
	cs       []Change
	cautions []string
}

// add appends f with its rule's one severity.
func (j *judge) add(f Finding) {
	f.Severity = severities[f.Code]
	j.fs = append(j.fs, f)
}

// caution adds s once.
func (j *judge) caution(s string) {
	if !slices.Contains(j.cautions, s) {
		j.cautions = append(j.cautions, s)
	}
}

var sideNames = [2]string{"left", "right"}

// WheelResult is the spoke-length answer for one wheel: the geometry and the
// rule set's findings and cautions on it.
type WheelResult struct {
	geometry.Result `json:",inline"`
	// Findings are never nil (an empty list encodes as []).
	Findings []Finding `json:"findings"`
	// Cautions are plain sentences about results that can hurt a rider when
	// wrong; never nil.
	Cautions []string `json:"cautions"`
}

// ComputeWheel computes one wheel (geometry.Compute) and judges it
// (AssessWheel). Bad or impossible input comes back as *field.Error values
// (400 or 422), never as NaN or Inf.
func ComputeWheel(w geometry.Wheel, opt Options) (WheelResult, error) {
	res, err := geometry.Compute(w)
	if err != nil {
		return WheelResult{}, err
	}
	out := WheelResult{Result: res}
	out.Findings, out.Cautions = AssessWheel(w, &out.Result, opt)
	return out, nil
}

// AssessWheel judges a wheel's geometry alone (the spoke-length answer):
// every rule whose facts the geometry has. res is geometry.Compute(w).
// Slices are never nil.
func AssessWheel(w geometry.Wheel, res *geometry.Result, opt Options) (findings []Finding, cautions []string) {
	var j judge
	j.wheelRules(w, res, nil, opt)
	if j.fs == nil {
		j.fs = []Finding{}
	}
	if j.cautions == nil {
		j.cautions = []string{}
	}
	return j.fs, j.cautions
}

// wheelRules applies the rules on the geometry. nip is the nipple when the
// request names one (nil: a typical nipple, and the thread rules judge a
// spoke end only where a stock length fixes it).
func (j *judge) wheelRules(w geometry.Wheel, res *geometry.Result, nip *Nipple, opt Options) {
	f := &res.Facts
	sides := [2]*geometry.SideResult{&res.Left, &res.Right}

	for k, sf := range f.Sides {
		name := sideNames[k]
		if sf.Exit == geometry.ExitJBend && sf.HoleAssumed {
			j.add(Finding{Code: CodeHoleDiameterAssumed, Side: name,
				Message: fmt.Sprintf("No hole_diameter_mm was given for the %s flange: %.4g mm is assumed for the J-bend correction.", name, sf.HoleMM),
				Remedy:  "Measure the flange holes and give hole_diameter_mm for an exact length.",
				Values:  map[string]float64{"assumed_hole_diameter_mm": sf.HoleMM}})
		}
		if sf.Exit == geometry.ExitJBend && !sf.HoleAssumed && f.HasSpoke {
			if clearance := sf.HoleMM - f.Spoke.EndMM; clearance > opt.LooseHoleClearanceMM+eps {
				j.add(Finding{Code: CodeSpokeLooseInFlangeHole, Side: name,
					Message: fmt.Sprintf("The %.4g mm %s flange holes are %.3g mm larger than the %.4g mm spoke (more than %.3g mm): the elbow can work in the hole and fatigue.",
						sf.HoleMM, name, round4(clearance), f.Spoke.EndMM, opt.LooseHoleClearanceMM),
					Remedy: "Prefer a thicker spoke that suits the hole, or a washer under each head whose bore fits the spoke; check the elbows after the first rides.",
					Values: map[string]float64{"hole_diameter_mm": sf.HoleMM, "spoke_diameter_mm": round4(f.Spoke.EndMM),
						"clearance_mm": round4(clearance), "max_clearance_mm": opt.LooseHoleClearanceMM}})
			}
		}
		if sf.PassesHeads && sf.HeadGapMM < sf.ClearMM-eps {
			clear := sides[k].MaxCrossesClearOfHeads
			remedy := fmt.Sprintf("Lace the %s side %d-cross, which clears the heads, or lace %d-cross with each spoke set over the neighbouring head with care.", name, clear, sf.Crosses)
			if clear == 0 {
				remedy = fmt.Sprintf("No crossed pattern clears the heads on this flange: lace the %s side radially if the hub maker allows it, or use a hub with a larger flange.", name)
			}
			fd := Finding{Code: CodeSpokeHeadOverlap, Side: name,
				Message: fmt.Sprintf("At %d crosses each %s spoke passes %.2f mm from the centre of the neighbouring flange hole, less than the %.2f mm the neighbour's head and this spoke need: it runs over that head.",
					sf.Crosses, name, sf.HeadGapMM, sf.ClearMM),
				Remedy: remedy,
				Values: map[string]float64{"head_gap_mm": round4(sf.HeadGapMM), "needed_gap_mm": round4(sf.ClearMM),
					"crosses": float64(sf.Crosses), "max_crosses_clear_of_heads": float64(clear), "max_crosses": float64(sides[k].MaxCrosses)}}
			if f.HeadAssumed {
				fd.Assumed = []string{"spoke.head_diameter_mm"}
			}
			j.add(fd)
			j.caution("A spoke bent over a neighbouring head is pre-stressed at the flange and can fatigue early; lace fewer crosses or check the spoke line at the flange.")
		}
		if sf.BracingMinDeg < opt.MinBracingAngleDeg-eps {
			j.add(Finding{Code: CodeLowBracingAngle, Side: name,
				Message: fmt.Sprintf("The %s bracing angle is %.2f°, below %.3g°: this side gives the rim little lateral support.", name, sf.BracingMinDeg, opt.MinBracingAngleDeg),
				Remedy:  "Use a hub with the flange farther from the centre, or a rim with its holes offset toward this side.",
				Values:  map[string]float64{"bracing_angle_deg": round4(sf.BracingMinDeg), "min_bracing_angle_deg": opt.MinBracingAngleDeg}})
		}
		if sf.NippleMaxDeg > opt.MaxNippleAngleDeg+eps {
			j.nippleAngle(w, res, k, opt)
		}
		if sf.Exit != geometry.ExitJBend && sf.Crosses > 0 {
			pitch := 360 / float64(sf.Spokes)
			if math.Abs(sf.PatternAngleDeg-sf.SeatAngleDeg) > pitch/2+eps {
				fit := int(math.Round(sf.SeatAngleDeg / pitch))
				fit = max(1, min(fit, sf.Spokes/2-1))
				j.add(Finding{Code: CodeSeatPatternMismatch, Side: name,
					Message: fmt.Sprintf("The %s seats send the spokes %.1f° round the wheel to the rim; %d crosses put their rim holes %.1f° round: the spokes would bend to reach them.",
						name, sf.SeatAngleDeg, sf.Crosses, sf.PatternAngleDeg),
					Remedy: fmt.Sprintf("Lace the %s side %d-cross (%.1f° round), or give the seats' exit angle (exit angled, exit_angle_deg) if they do not point the spokes along the tangent.",
						name, fit, float64(fit)*pitch),
					Values: map[string]float64{"seat_angle_deg": round4(sf.SeatAngleDeg), "pattern_angle_deg": round4(sf.PatternAngleDeg),
						"crosses": float64(sf.Crosses), "suggested_crosses": float64(fit)}})
			}
		}
	}

	// Tensions.
	var t [2]float64
	if res.Left.TensionN != nil {
		t = [2]float64{*res.Left.TensionN, *res.Right.TensionN}
	}
	ratio := res.TensionRatioLeftToRight
	high, low, lowSide := ratio, 1.0, 1
	if ratio < 1 {
		high, low, lowSide = 1, ratio, 0
	}
	if high/low > opt.MaxTensionRatio+eps {
		j.add(Finding{Code: CodeTensionRatioHigh,
			Message: fmt.Sprintf("The %s side runs at %.0f %% of the other side's tension (ratio %.2f:1, limit %.3g:1).", sideNames[lowSide], 100*low/high, high/low, opt.MaxTensionRatio),
			Remedy:  "Reduce the dish: a hub with the flanges closer to symmetric, a rim with offset holes, or 2:1 lacing.",
			Values:  map[string]float64{"tension_ratio": round4(high / low), "max_tension_ratio": opt.MaxTensionRatio}})
		j.caution("The low-tension side can go slack under load and its spokes fatigue; check its tension after the first rides, or reduce the dish with a different hub or an offset rim.")
	}
	if f.TargetN > 0 {
		if lt := math.Min(t[0], t[1]); lt < opt.MinLowSideTensionN-eps {
			j.add(Finding{Code: CodeLowSideTensionLow, Side: sideNames[lowSide],
				Message: fmt.Sprintf("At the target the %s side runs at only %.4g N (below %.4g N): its spokes can go slack under load and fatigue.", sideNames[lowSide], round4(lt), opt.MinLowSideTensionN),
				Remedy:  fmt.Sprintf("Raise the target so the %s side reaches %.4g N if the rim allows, or choose a hub or lacing with less dish.", sideNames[lowSide], opt.MinLowSideTensionN),
				Values: map[string]float64{"low_side_tension_n": round4(lt), "min_tension_n": opt.MinLowSideTensionN,
					"tension_ratio_left_to_right": round4(ratio)}})
			j.caution("The low-tension side is below a safe minimum: its nipples can unwind and its spokes go slack under load; raise the target within the rim's limit.")
		}
		if f.HasSpoke {
			j.stress(w, f, math.Max(t[0], t[1]), opt)
		}
	}

	// Torque, radial sides and the rim's orientation.
	drive := [2]bool{f.Kind == geometry.KindMotor || f.Kind == geometry.KindMotorVehicle, f.Driven || f.Kind == geometry.KindMotor || f.Kind == geometry.KindMotorVehicle}
	var brake [2]bool
	switch f.Brake {
	case geometry.BrakeRotor, geometry.BrakeDrum:
		brake[0] = true
	case geometry.BrakeCoaster:
		brake = [2]bool{true, true}
	}
	for k, sf := range f.Sides {
		if sf.Crosses != 0 || (sf.Exit == geometry.ExitTangential) {
			continue
		}
		name := sideNames[k]
		if drive[k] {
			j.add(Finding{Code: CodeRadialDriveSide, Side: name,
				Message: fmt.Sprintf("The %s side carries drive torque and is laced radially: radial spokes cannot carry torque.", name),
				Remedy:  fmt.Sprintf("Lace the %s side crossed (2- or 3-cross is common practice).", name),
				Values:  map[string]float64{"crosses": 0}})
			j.caution("Radial spokes cannot carry drive torque; lace every side that carries drive torque crossed.")
		}
		if brake[k] {
			j.add(Finding{Code: CodeRadialBrakeSide, Side: name,
				Message: fmt.Sprintf("The %s side carries the %s brake's torque and is laced radially: radial spokes cannot carry braking torque.", name, f.Brake),
				Remedy:  fmt.Sprintf("Lace the %s side crossed.", name),
				Values:  map[string]float64{"crosses": 0}})
			j.caution("Radial spokes cannot carry braking torque; lace every side that carries the brake's torque crossed.")
		}
		j.add(Finding{Code: CodeRadialLacingHubApproval, Side: name,
			Message: fmt.Sprintf("The %s side is laced radially: radial spokes pull the flange's edge outward, and not every hub is made for it.", name),
			Remedy:  "Confirm that the hub maker allows radial lacing on this flange, and with which spokes and tension.",
			Values:  map[string]float64{"crosses": 0}})
		j.caution("Radial lacing can crack a flange not made for it: confirm that the hub maker allows it before lacing.")
	}
	if turned := f.RatioIfRimTurned; turned > 0 && math.Abs(math.Log(ratio))-math.Abs(math.Log(turned)) > math.Log(opt.RimTurnedMargin) {
		toward := "right" // offsets are positive toward the left
		if w.Rim.SpokeHoleOffsetMM < 0 {
			toward = "left"
		}
		remedy := fmt.Sprintf("Turn the rim round so its spoke holes sit toward the %s flange.", toward)
		if w.Rim.SpokeHoleOffsetMM == 0 {
			remedy = "Turn the rim round so each side's spokes use the other row of holes."
		}
		j.add(Finding{Code: CodeRimOffsetReversed,
			Message: fmt.Sprintf("The rim's offset faces the wrong way: turned round it would bring the left/right tension ratio from %.3f to %.3f.", ratio, turned),
			Remedy:  remedy,
			Values:  map[string]float64{"tension_ratio_left_to_right": round4(ratio), "ratio_if_turned": round4(turned), "spoke_hole_offset_mm": w.Rim.SpokeHoleOffsetMM}})
		j.caution("The rim is mounted the wrong way round for its offset: the slack side runs slacker than it needs to; turn the rim round before lacing.")
	}

	// Where each spoke ends against the nipple.
	if nip != nil || f.Stock != nil {
		for k := range sides {
			j.spokeEnds(w, res, k, nip, opt)
		}
	}

	switch f.Kind {
	case geometry.KindMotor:
		j.caution("This is a hub motor: follow the motor maker's requirements for spoke gauge and material, nipples, lacing and tension, and its axle-nut and torque-arm torques; check tension after the first rides. A powered wheel must also meet the vehicle rules where it will be ridden.")
	case geometry.KindMotorVehicle:
		j.caution("This is a motor-vehicle hub: a bicycle rim, spokes and tyre are not rated for a motor vehicle's speed, weight and braking. Use a rim, spokes and tyre rated for that vehicle and follow the vehicle's rules and its maker's specification.")
	case geometry.KindTandem, geometry.KindCargo:
		j.caution("Tandem and cargo wheels carry far more load than a solo bicycle's: confirm the hub, rim and spoke makers rate their parts for the load.")
	}
}

// nippleAngle reports a side's steep nipple angle and names the cross
// count that fixes it, before rim drilling.
func (j *judge) nippleAngle(w geometry.Wheel, res *geometry.Result, k int, opt Options) {
	sf := res.Facts.Sides[k]
	name := sideNames[k]
	fix, fixAngle := -1, 0.0
	for c := sf.Crosses - 1; c >= 0; c-- {
		probe := w
		probe.IncludeLacing, probe.Stock = false, nil
		if k == 0 {
			probe.Crosses.Left = &c
		} else {
			probe.Crosses.Right = &c
		}
		pr, err := geometry.Compute(probe)
		if err != nil {
			continue
		}
		if a := pr.Facts.Sides[k].NippleMaxDeg; a <= opt.MaxNippleAngleDeg+eps {
			fix, fixAngle = c, a
			break
		}
	}
	var remedy string
	switch {
	case fix > 0:
		remedy = fmt.Sprintf("Lace the %s side %d-cross: the spokes then meet the nipples at %.1f°. Failing that, a rim drilled at an angle to the spoke line.", name, fix, fixAngle)
	case fix == 0:
		remedy = fmt.Sprintf("Only radial lacing brings the %s nipple angle under %.3g° (%.1f°), and only if the side carries no torque and the hub maker allows it; otherwise use a rim drilled at an angle to the spoke line, or a hub with a smaller flange.", name, opt.MaxNippleAngleDeg, fixAngle)
	default:
		remedy = "Use a rim drilled at an angle to the spoke line, or a hub with a smaller flange or a rim of larger diameter."
	}
	values := map[string]float64{"nipple_angle_deg": round4(sf.NippleMaxDeg), "max_nipple_angle_deg": opt.MaxNippleAngleDeg,
		"crosses": float64(sf.Crosses)}
	if fix >= 0 {
		values["suggested_crosses"] = float64(fix)
		values["suggested_nipple_angle_deg"] = round4(fixAngle)
	}
	j.add(Finding{Code: CodeNippleAngleHigh, Side: name,
		Message: fmt.Sprintf("The %s spokes meet the nipples %.1f° off the rim radius, more than %.3g°: each spoke bends where it enters its nipple.", name, sf.NippleMaxDeg, opt.MaxNippleAngleDeg),
		Remedy:  remedy, Values: values})
	j.caution("Spokes that meet the nipple at a steep angle bend there and break early under load; change the lacing or the rim as the finding says before building.")
}

// stress judges the tighter side's tension against the spoke's weakest
// section: the thinnest part of the wire or the thread's stress area.
func (j *judge) stress(w geometry.Wheel, f *geometry.Facts, high float64, opt Options) {
	sp := f.Spoke
	wire, which := sp.MinArea()
	area, threadGoverns := wire, false
	tpi, major, typicalTPI := 0.0, 0.0, false
	if th := w.Spoke.Thread; th != nil && th.TPI != nil {
		tpi = *th.TPI
		if th.DiameterMM != nil {
			major = *th.DiameterMM
		}
	} else if typ, ok := spoke.TypicalFor(sp.Gauge); ok && typ.ThreadTPI > 0 {
		tpi, typicalTPI = typ.ThreadTPI, true
	}
	if tpi > 0 {
		if ta, ok := spoke.ThreadStressArea(sp.EndMM, major, tpi); ok && ta < area {
			area, threadGoverns = ta, true
		}
	}
	stress := high / area // N/mm² = MPa
	allowed := sp.Material.UTSMPa / opt.SpokeSafetyFactor
	if stress <= allowed+eps {
		return // the common case builds no message
	}
	where := "the " + sectionWords(w.Spoke, which)
	if threadGoverns {
		where = "the thread's stress area"
	}
	var assumed, notes []string
	switch {
	case typicalTPI:
		assumed = append(assumed, "spoke.thread")
		notes = append(notes, fmt.Sprintf("the thread is taken as rolled on the %.4g mm end at %.3g TPI (typical, not given)", sp.EndMM, tpi))
	case tpi == 0:
		assumed = append(assumed, "spoke.thread")
		notes = append(notes, "the thread is not judged (no pitch given and none is typical for this size)")
	}
	if sp.MaterialAssumed {
		assumed = append(assumed, "spoke.material")
		notes = append(notes, "the material as stainless steel (not given)")
	}
	msg := fmt.Sprintf("At %.4g N the spoke's weakest section (%s, %.4g mm²) carries %.4g MPa, above %.4g MPa (%s tensile strength %.4g MPa ÷ safety factor %.3g).",
		round4(high), where, round4(area), round4(stress), round4(allowed), strings.ReplaceAll(sp.Material.Name, "_", " "), sp.Material.UTSMPa, opt.SpokeSafetyFactor)
	if len(notes) > 0 {
		msg += " Assumed: " + strings.Join(notes, "; ") + "."
	}
	j.add(Finding{Code: CodeSpokeStressHigh, Message: msg,
		Remedy: fmt.Sprintf("Keep the tighter side at or below %.4g N, or use a thicker or stronger spoke; the spoke maker's own limit comes first.", math.Floor(allowed*area)),
		Values: map[string]float64{"tension_n": round4(high), "stress_area_mm2": round4(area), "stress_mpa": round4(stress),
			"allowed_mpa": round4(allowed), "uts_mpa": sp.Material.UTSMPa, "safety_factor": opt.SpokeSafetyFactor},
		Assumed: assumed})
	j.caution("The spoke stress is high for its material: use a thicker or stronger spoke or a lower tension; a spoke that breaks under load can collapse the wheel.")
}

// sectionWords names a spoke section for a message.
func sectionWords(s *spoke.Spec, which string) string {
	if which == "body" {
		if s.Profile == "" || s.Profile == spoke.Round {
			return "wire"
		}
		return string(s.Profile) + " body"
	}
	return strings.Replace(which, "section_", "butted section ", 1)
}

// threads is where the threads sit along the spoke axis, measured from the
// head end of the seated nipple (positive toward the tyre).
type threads struct {
	spokeThreadMM          float64 // spoke thread length
	nippleTopMM, nippleLow float64 // nipple internal thread: [nippleLow, nippleTopMM]
	sizeMM                 float64 // thread size, for the engagement needed
	// assumed[:nAssumed] are the typical values used (a fixed array, so a
	// threads on the stack stays there).
	assumed  [3]string
	nAssumed int
}

func (t *threads) assume(path string) { t.assumed[t.nAssumed] = path; t.nAssumed++ }

// threadsOf resolves the thread facts, typical values filling gaps.
func threadsOf(t *threads, w geometry.Wheel, f *geometry.Facts, nip *Nipple, opt Options) bool {
	if !f.HasSpoke {
		return false
	}
	t.sizeMM = f.Spoke.EndMM
	typ, haveTyp := spoke.TypicalFor(f.Spoke.Gauge)
	switch {
	case w.Spoke.ThreadLengthMM != nil:
		t.spokeThreadMM = *w.Spoke.ThreadLengthMM
	case haveTyp:
		t.spokeThreadMM = typ.ThreadLengthMM
		t.assume("spoke.thread_length_mm")
	default:
		return false
	}
	start, length := typicalNippleThreadStartMM, typicalNippleThreadLengthRatio*opt.TypicalNippleLengthMM
	if nip == nil {
		t.assume("nipple")
	} else {
		length = typicalNippleThreadLengthRatio * nip.LengthMM
		if nip.ThreadStartMM != nil {
			start = *nip.ThreadStartMM
		} else {
			t.assume("nipple.thread_start_mm")
		}
		if nip.ThreadLengthMM != nil {
			length = *nip.ThreadLengthMM
		} else {
			t.assume("nipple.thread_length_mm")
		}
	}
	t.nippleTopMM, t.nippleLow = -start, -start-length
	return true
}

// Typical nipple internal thread, from memory: the thread starts about 2 mm
// below the head end (driver slot and counterbore) and runs for about half
// the nipple's length.
const (
	typicalNippleThreadStartMM     = 2.0
	typicalNippleThreadLengthRatio = 0.5
)

// engagedMM is the overlap of the spoke thread [e − L, e] and the nipple
// thread when the spoke end sits at e.
func (t threads) engagedMM(e float64) float64 {
	return math.Max(0, math.Min(e, t.nippleTopMM)-math.Max(e-t.spokeThreadMM, t.nippleLow))
}

// bottomsAt is the spoke-end position past which the unthreaded spoke body
// would enter the nipple's thread.
func (t threads) bottomsAt() float64 { return t.spokeThreadMM + t.nippleLow }

// spokeEnds judges where each of a side's length groups ends against its
// nipple: past the head, too little thread engaged, or the unthreaded body
// reaching the nipple's thread. A remedy names the length to use.
func (j *judge) spokeEnds(w geometry.Wheel, res *geometry.Result, k int, nip *Nipple, opt Options) {
	f := &res.Facts
	side := &res.Left
	if k == 1 {
		side = &res.Right
	}
	var t threads
	if !threadsOf(&t, w, f, nip, opt) {
		return
	}
	required := opt.MinThreadEngagementDiameters * t.sizeMM
	for _, g := range side.LengthGroups {
		e, assumedEnd := 0.0, true
		if g.SpokeEndMM != nil {
			e, assumedEnd = *g.SpokeEndMM, false
		} else if f.Stock != nil {
			continue
		}
		if t.engagedMM(e) >= required-eps && e <= t.bottomsAt()+eps && e <= opt.MaxSpokeEndPastNippleMM+eps {
			continue // nothing to report: build no message
		}
		j.spokeEnd(f, &t, g, e, assumedEnd, required, sideNames[k], nip != nil, opt)
	}
}

// spokeEnd reports one length group whose end breaks a thread rule.
func (j *judge) spokeEnd(f *geometry.Facts, t *threads, g geometry.LengthGroup, e float64, assumedEnd bool, required float64, name string, withChanges bool, opt Options) {
	// The best end position: flush with the nipple head, or lower if the
	// spoke would bottom there.
	best := math.Min(0, t.bottomsAt())
	feasible := t.engagedMM(best) >= required-eps && best <= opt.MaxSpokeEndPastNippleMM+eps
	assumed := slices.Clone(t.assumed[:t.nAssumed])
	if assumedEnd {
		assumed = append(assumed, "geometry."+name+".spoke_end_mm")
	}
	engaged := t.engagedMM(e)
	stock := 0.0
	if g.StockLengthMM != nil {
		stock = *g.StockLengthMM
	}
	// The length that brings the end nearest best, from what can be had.
	to, by := 0.0, best-e
	if stock > 0 {
		to = nearestAvailable(f.Stock, stock+by, stock)
		by = to - stock
	}
	vals := func() map[string]float64 {
		v := map[string]float64{
			"spoke_end_mm": round4(e), "engaged_mm": round4(engaged), "required_engagement_mm": round4(required),
			"spoke_thread_length_mm": t.spokeThreadMM, "nipple_thread_start_mm": -t.nippleTopMM,
			"nipple_thread_length_mm": round4(t.nippleTopMM - t.nippleLow), "max_past_nipple_mm": opt.MaxSpokeEndPastNippleMM,
		}
		if stock > 0 {
			v["stock_length_mm"] = stock
			if to != stock {
				v["suggested_length_mm"] = to
			}
		}
		return v
	}
	remedy := func(longer bool) string {
		switch {
		case !feasible:
			return fmt.Sprintf("No spoke length gives %.3g mm of thread engagement with these spokes and nipples: use longer nipples or spokes with a longer thread.", required)
		case stock > 0 && to != stock:
			return fmt.Sprintf("Use %.4g mm spokes on the %s side instead of %.4g mm: the end then sits about %.2f mm from the nipple head.", to, name, stock, round4(e+by))
		case stock > 0:
			return fmt.Sprintf("No available length ends better: cut the %s spokes %.2f mm %s.", name, math.Abs(best-e), map[bool]string{true: "longer", false: "shorter"}[longer])
		}
		return fmt.Sprintf("Use %s spokes on the %s side, %.3g mm %s, to bring the spoke end to %.3g mm from the nipple head.",
			map[bool]string{true: "longer", false: "shorter"}[longer], name, math.Abs(best-e), map[bool]string{true: "longer", false: "shorter"}[longer], round4(best))
	}
	fixable := feasible && by != 0 && (stock == 0 || to != stock)
	var fired []Finding
	if engaged < required-eps {
		fired = append(fired, Finding{Code: CodeThreadEngagementShort, Side: name,
			Message: fmt.Sprintf("Only %.3g mm of the %s spoke thread engages the nipple (needs %.3g mm, %.3g thread diameters).",
				engaged, name, required, opt.MinThreadEngagementDiameters),
			Remedy: remedy(true), Values: vals(), Assumed: assumed, FixedByChange: fixable && by > 0})
	}
	if e > t.bottomsAt()+eps {
		fired = append(fired, Finding{Code: CodeSpokeThreadBottoms, Side: name,
			Message: fmt.Sprintf("The %s spoke's unthreaded body reaches the nipple's thread: the nipple will bind before the spoke is tight.", name),
			Remedy:  remedy(false), Values: vals(), Assumed: assumed, FixedByChange: fixable && by < 0})
	}
	if e > opt.MaxSpokeEndPastNippleMM+eps {
		fired = append(fired, Finding{Code: CodeSpokeProtrudesPastNipple, Side: name,
			Message: fmt.Sprintf("The %s spoke ends %.3g mm past the nipple head (at most %.3g mm): it can cut the rim tape or tube.",
				name, round4(e), opt.MaxSpokeEndPastNippleMM),
			Remedy: remedy(false), Values: vals(), Assumed: assumed, FixedByChange: fixable && by < 0})
		j.caution("A spoke end that stands past the nipple head can cut through the rim tape and puncture the tube; use the shorter length the finding names.")
	}
	for _, fd := range fired {
		j.add(fd)
	}
	if withChanges && len(fired) > 0 && fixable {
		var fixes []string
		for _, fd := range fired {
			if fd.FixedByChange {
				fixes = append(fixes, fd.Code)
			}
		}
		if len(fixes) > 0 {
			c := Change{Kind: ChangeSpokeLength, Side: name, Count: g.Count, ByMM: ptr(round4(by)),
				Reason: fmt.Sprintf("spoke end %.3g mm from the nipple head", round4(e)), Fixes: fixes}
			if stock > 0 {
				c.ToMM = ptr(to)
			}
			j.cs = append(j.cs, c)
		}
	}
}

// nearestAvailable is the length that can be had nearest want (other than
// current when want rounds back to it and another is as near): every
// multiple of the increment, or the listed lengths.
func nearestAvailable(s *geometry.Stock, want, current float64) float64 {
	if s == nil {
		return want
	}
	if s.IncrementMM != nil {
		inc := *s.IncrementMM
		return math.Max(inc, math.Round(want/inc)*inc)
	}
	best := current
	for _, v := range s.LengthsMM {
		if math.Abs(v-want) < math.Abs(best-want)-eps {
			best = v
		}
	}
	return best
}
