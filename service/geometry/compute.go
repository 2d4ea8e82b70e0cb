package geometry

import (
	"fmt"
	"math"
	"strconv"
)

// Options are the rule-of-thumb thresholds behind the findings and the
// defaults for unmeasured sizes. A zero field takes its DefaultOptions value.
type Options struct {
	// MinBracingAngleDeg: a lower bracing angle gives low_bracing_angle.
	MinBracingAngleDeg float64
	// MaxTensionRatio: a higher high/low tension ratio gives tension_ratio_high.
	MaxTensionRatio float64
	// MinLowSideTensionN: a lower low-side tension gives low_side_tension.
	MinLowSideTensionN float64
	// MaxNippleAngleDeg: a larger total nipple angle gives nipple_angle_high.
	MaxNippleAngleDeg float64
	// MaxStressFraction of the UTS: more stress gives spoke_stress_high.
	MaxStressFraction float64
	// StockEndLongMM, StockEndShortMM: tolerances on spoke_end_mm.
	StockEndLongMM, StockEndShortMM float64
	// HoleLooseMM: hole minus spoke diameter above this gives hole_loose.
	HoleLooseMM float64
	// DefaultHoleDiameterMM is assumed for a J-bend flange without one.
	DefaultHoleDiameterMM float64
	// DefaultSpokeDiameterMM is assumed for the head-overlap check when
	// the spoke is not given.
	DefaultSpokeDiameterMM float64
	// HeadToSpokeRatio estimates a J-bend head's diameter from the spoke's.
	HeadToSpokeRatio float64
}

// DefaultOptions are rules of thumb (common practice, from memory), not
// standards; shops may set their own.
func DefaultOptions() Options {
	return Options{
		MinBracingAngleDeg:     3,   // common practice: below ~3° the side barely resists lateral load
		MaxTensionRatio:        2,   // common practice: beyond ~2:1 the low side tends to slacken
		MinLowSideTensionN:     500, // common practice, from memory: ~50 kgf minimum
		MaxNippleAngleDeg:      10,  // common practice: steeper bends the spoke at the nipple
		MaxStressFraction:      0.5, // our own conservative margin on the UTS
		StockEndLongMM:         1,   // common practice: the end may bottom in the nipple
		StockEndShortMM:        2,   // common practice: less thread engaged
		HoleLooseMM:            0.8, // common practice: the elbow flexes in the hole
		DefaultHoleDiameterMM:  2.6, // from memory: typical for 2.0 mm spokes
		DefaultSpokeDiameterMM: 2.0, // from memory: the most common size
		HeadToSpokeRatio:       2.0, // from memory: J-bend heads are about twice the wire
	}
}

func (o Options) withDefaults() Options {
	d := DefaultOptions()
	set := func(v *float64, def float64) {
		if *v == 0 || !finite(*v) {
			*v = def
		}
	}
	set(&o.MinBracingAngleDeg, d.MinBracingAngleDeg)
	set(&o.MaxTensionRatio, d.MaxTensionRatio)
	set(&o.MinLowSideTensionN, d.MinLowSideTensionN)
	set(&o.MaxNippleAngleDeg, d.MaxNippleAngleDeg)
	set(&o.MaxStressFraction, d.MaxStressFraction)
	set(&o.StockEndLongMM, d.StockEndLongMM)
	set(&o.StockEndShortMM, d.StockEndShortMM)
	set(&o.HoleLooseMM, d.HoleLooseMM)
	set(&o.DefaultHoleDiameterMM, d.DefaultHoleDiameterMM)
	set(&o.DefaultSpokeDiameterMM, d.DefaultSpokeDiameterMM)
	set(&o.HeadToSpokeRatio, d.HeadToSpokeRatio)
	return o
}

var defaultOptions = DefaultOptions()

// Compute computes both sides of one wheel with DefaultOptions. Invalid or
// impossible input returns a *FieldError or an errors.Join of them, and a
// zero Result. No NaN or Inf is ever returned.
func Compute(w Wheel) (Result, error) { return compute(&w, &defaultOptions) }

// Compute computes w with the thresholds in o (zero fields take defaults).
func (o Options) Compute(w Wheel) (Result, error) {
	o = o.withDefaults()
	return compute(&w, &o)
}

func compute(w *Wheel, o *Options) (Result, error) {
	r, err := resolve(w, o)
	if err != nil {
		return Result{}, err
	}
	gl := lacingSide(r.n, r.rimR, &r.left)
	gr := lacingSide(r.n, r.rimR, &r.right)
	var l errList
	l.feasible("/crosses/left", r.n, r.left.crosses, gl)
	l.feasible("/crosses/right", r.n, r.right.crosses, gr)
	lenL, lenR := gl.lengthMM(r.straight, &r.left), gr.lengthMM(r.straight, &r.right)
	if lenL <= 0 {
		l.impossible("/hub/left/spoke_exit_offset_mm", "leaves no spoke: the offset exceeds the hub-to-rim distance")
	}
	if lenR <= 0 {
		l.impossible("/hub/right/spoke_exit_offset_mm", "leaves no spoke: the offset exceeds the hub-to-rim distance")
	}
	if err := l.err(); err != nil {
		return Result{}, err
	}

	res := Result{Findings: []Finding{}, Cautions: []string{}}
	sL, sR := gl.sinBrace(), gr.sinBrace()
	res.TensionRatioLeftToRight = sR / sL // both > 0 after validation
	res.Left = sideResult(gl, lenL)
	res.Right = sideResult(gr, lenR)

	// Optional outputs point into one backing array, allocated only when needed.
	var opt *[2]sideOpt
	if r.target > 0 || r.stock != nil {
		opt = new([2]sideOpt)
	}
	var tL, tR float64
	if r.target > 0 {
		// T_L·sin β_L = T_R·sin β_R: the side with the smaller lateral
		// component carries the target, the other side proportionally less.
		if sL < sR {
			tL, tR = r.target, r.target*sL/sR
		} else {
			tL, tR = r.target*sR/sL, r.target
		}
		opt[0].tension, opt[1].tension = tL, tR
		res.Left.TensionN, res.Right.TensionN = &opt[0].tension, &opt[1].tension
	}
	if opt != nil {
		res.orderAndStock(&l, o, &r, &res.Left, &opt[0], lenL, tL, "left")
		res.orderAndStock(&l, o, &r, &res.Right, &opt[1], lenR, tR, "right")
	}
	if err := l.err(); err != nil {
		return Result{}, err
	}
	res.sideFindings(o, &r, &r.left, gl, "left")
	res.sideFindings(o, &r, &r.right, gr, "right")
	res.balanceFindings(o, w, tL, tR)
	return res, nil
}

// sideOpt backs one side's optional outputs.
type sideOpt struct{ tension, order, stock, end float64 }

// orderAndStock fills a side's order length (Hooke's law at tension t when
// the spoke is known) and its stock choice, with their findings.
func (res *Result) orderAndStock(l *errList, o *Options, r *resolved, out *SideResult, opt *sideOpt, length, t float64, name string) {
	want := length
	var wr wire
	hasStretch := r.hasSpoke && t > 0
	if hasStretch {
		wr = newWire(t, r.eNmm2, r.d, r.sections)
		want = wr.unloadedMM(length)
		if want <= wr.buttLen {
			l.impossible("/spoke/sections", "the butted sections ("+fmtMM(wr.buttLen)+") are longer than the "+name+" spoke ("+fmtMM(want)+")")
			return
		}
		opt.order = want
		out.OrderLengthMM = &opt.order
		if stress := t / wr.minArea; stress > o.MaxStressFraction*r.utsMPa {
			res.add(CodeSpokeStressHigh, SeverityWarning, name, fmt.Sprintf(
				"at %.0f N the thinnest section carries %.0f MPa, more than %.0f %% of the material's %.0f MPa tensile strength",
				t, stress, 100*o.MaxStressFraction, r.utsMPa))
			res.caution("The spoke stress is high for its material: use a thicker or stronger spoke or a lower tension; a spoke that breaks under load can collapse the wheel.")
		}
	}
	if r.stock == nil {
		return
	}
	stock := chooseStock(r.stock, want)
	end := stock - length
	if hasStretch {
		end = stock + wr.stretchMM(stock) - length
	}
	opt.stock, opt.end = stock, end
	out.StockLengthMM, out.SpokeEndMM = &opt.stock, &opt.end
	switch {
	case end > o.StockEndLongMM:
		res.add(CodeStockEndLong, SeverityWarning, name, fmt.Sprintf(
			"the %.1f mm stock spoke ends %.2f mm past the ERD level: it may bottom in the nipple before reaching tension", stock, end))
	case end < -o.StockEndShortMM:
		res.add(CodeStockEndShort, SeverityWarning, name, fmt.Sprintf(
			"the %.1f mm stock spoke ends %.2f mm short of the ERD level: fewer threads are engaged in the nipple", stock, -end))
		res.caution("A spoke that ends well short of the nipple head engages fewer threads and can strip or pull through; choose a longer spoke.")
	}
}

func sideResult(g sideGeom, length float64) SideResult {
	return SideResult{
		LengthMM:        length,
		BracingAngleDeg: g.bracingDeg(),
		NippleAngleDeg:  g.nipple(),
		HubAngleDeg:     g.alphaDeg,
		MaxCrosses:      g.maxCrosses,
	}
}

// feasible checks a side's cross count against the hole count and the
// tangent limit.
func (l *errList) feasible(p string, n, crosses int, g sideGeom) {
	if crosses == 0 {
		return
	}
	if n%4 != 0 {
		l.impossible(p, "crossed lacing needs a spoke_count divisible by 4 (leading and trailing spokes alternate on each flange); "+strconv.Itoa(n)+" spokes allow radial lacing only: at most 0 crosses")
		return
	}
	if crosses > g.maxCrosses {
		l.impossible(p, fmt.Sprintf("%d crosses would make the spoke leave the flange past the tangent (hub angle %.1f° > %.1f° = arccos(r/R)): at most %d crosses for this geometry",
			crosses, g.alphaDeg, g.limit*deg, g.maxCrosses))
	}
}

func (res *Result) add(code, severity, side, msg string) {
	res.Findings = append(res.Findings, Finding{Code: code, Severity: severity, Message: msg, Side: side})
}

func (res *Result) caution(s string) {
	for _, c := range res.Cautions {
		if c == s {
			return
		}
	}
	res.Cautions = append(res.Cautions, s)
}

func (res *Result) sideFindings(o *Options, r *resolved, s *side, g sideGeom, name string) {
	out := &res.Left
	if name == "right" {
		out = &res.Right
	}
	if s.assumedHole {
		res.add(CodeHoleDiameterAssumed, SeverityInfo, name, fmt.Sprintf(
			"no hole_diameter_mm given: %.2f mm assumed for the J-bend correction; measure the flange for an exact length", s.hole))
	}
	if !r.straight && r.hasSpoke && !s.assumedHole && s.hole-r.d > o.HoleLooseMM {
		res.add(CodeHoleLoose, SeverityInfo, name, fmt.Sprintf(
			"the %.2f mm flange hole is %.2f mm larger than the spoke: a washer under the head keeps the elbow from flexing", s.hole, s.hole-r.d))
	}
	if !r.straight && s.crosses > 0 {
		d := r.d
		if d == 0 {
			d = o.DefaultSpokeDiameterMM
		}
		if clear := (r.headD + d) / 2; g.headGap < clear {
			res.add(CodeHeadOverlap, SeverityWarning, name, fmt.Sprintf(
				"the spoke passes %.2f mm from the centre of the neighbouring flange hole, less than the %.2f mm the neighbour's head and this spoke need: it runs over that head; lace fewer crosses or interlace with care",
				g.headGap, clear))
			res.caution("A spoke bent over a neighbouring head is pre-stressed at the flange and can fatigue early; lace fewer crosses or check the spoke line at the flange.")
		}
	}
	if out.BracingAngleDeg < o.MinBracingAngleDeg {
		res.add(CodeLowBracingAngle, SeverityWarning, name, fmt.Sprintf(
			"the bracing angle is %.2f°, below %.1f°: this side gives the rim little lateral support", out.BracingAngleDeg, o.MinBracingAngleDeg))
	}
	if out.NippleAngleDeg.Total > o.MaxNippleAngleDeg {
		res.add(CodeNippleAngleHigh, SeverityWarning, name, fmt.Sprintf(
			"the spoke meets the nipple %.1f° off the rim radius (%.1f° in plane, %.1f° out of plane), more than %.1f°: the spoke bends at the nipple; an offset or angled rim drilling helps",
			out.NippleAngleDeg.Total, out.NippleAngleDeg.InPlane, out.NippleAngleDeg.OutOfPlane, o.MaxNippleAngleDeg))
	}
}

func (res *Result) balanceFindings(o *Options, w *Wheel, tL, tR float64) {
	ratio := res.TensionRatioLeftToRight
	high, low, lowSide := ratio, 1.0, "right"
	if ratio < 1 {
		high, low, lowSide = 1, ratio, "left"
	}
	if high/low > o.MaxTensionRatio {
		res.add(CodeTensionRatioHigh, SeverityWarning, "", fmt.Sprintf(
			"the %s side runs at %.0f %% of the other side's tension (ratio %.2f:1, limit %.1f:1)", lowSide, 100*low/high, high/low, o.MaxTensionRatio))
		res.caution("The low-tension side can go slack under load and its spokes fatigue; check its tension after the first rides, or reduce the dish with a different hub or an offset rim.")
	}
	if tL > 0 {
		if t := math.Min(tL, tR); t < o.MinLowSideTensionN {
			res.add(CodeLowSideTension, SeverityWarning, lowSide, fmt.Sprintf(
				"at the target the %s side carries %.0f N, below %.0f N", lowSide, t, o.MinLowSideTensionN))
			res.caution("The low-tension side is below a safe minimum: its nipples can unwind and its spokes go slack under load; raise the target within the rim's limit.")
		}
	}
	radialL, radialR := res.Left.HubAngleDeg == 0, res.Right.HubAngleDeg == 0
	if w.Hub.DiscBrake && radialL {
		res.add(CodeRadialDiscSide, SeverityWarning, "left", "the rotor side is laced radially: radial spokes cannot carry braking torque")
		res.caution("Radial spokes on the disc side cannot carry braking torque from the rotor; lace the rotor side crossed.")
	}
	if w.Hub.Motor && radialL && !w.Hub.DiscBrake {
		res.add(CodeRadialDriveSide, SeverityWarning, "left", "a motor hub's left side is laced radially: radial spokes cannot carry drive torque")
		res.caution("Radial spokes cannot carry drive torque; lace torque-carrying sides crossed.")
	}
	if (w.Hub.Driven || w.Hub.Motor) && radialR {
		res.add(CodeRadialDriveSide, SeverityWarning, "right", "the drive side is laced radially: radial spokes cannot carry drive torque")
		res.caution("Radial spokes cannot carry drive torque; lace torque-carrying sides crossed.")
	}
	if w.Hub.Motor {
		res.caution("Motor hubs load the spokes with drive and regenerative torque and extra weight: use the motor maker's spoke size and tension limits and check tension after the first rides.")
	}
}
