package geometry

import (
	"math"
	"strconv"

	"wheelbench/service/spoke"
)

// Wheel is one request of POST /v1/spoke-lengths, and the geometric part
// of every other description of a wheel (compatibility checks and builds
// use the same Hub, Rim, Cross and spoke). Required: SpokeCount, both
// flanges' PCDMM and CenterToFlangeMM, Rim.ERDMM and both Crosses.
// Optional numbers are pointers (absent = nil) or have a zero value that
// means "none".
type Wheel struct {
	SpokeCount int   `json:"spoke_count"`
	Hub        Hub   `json:"hub"`
	Rim        Rim   `json:"rim"`
	Crosses    Cross `json:"crosses"`
	// Spoke describes the spoke; needed for order lengths and stress.
	Spoke *spoke.Spec `json:"spoke,omitempty"`
	// TargetTensionN is the tighter side's tension, in newtons.
	TargetTensionN *float64 `json:"target_tension_n,omitempty"`
	// Stock says which lengths can be had; a stock length is chosen per
	// length group.
	Stock *Stock `json:"stock,omitempty"`
	// IncludeLacing asks for the lacing plan (one entry per spoke) in the
	// answer; it is always computed for uneven lacing.
	IncludeLacing bool `json:"include_lacing,omitempty"`
}

// Hub types.
const (
	JBend        = "j_bend"
	StraightPull = "straight_pull"
)

// Flange exits: how a flange's spokes leave it.
const (
	// ExitJBend: through a drilled hole, the elbow's inside bearing on the
	// hole's edge; the length is less half the hole.
	ExitJBend = "j_bend"
	// ExitTangential: from a seat that points the spoke along the tangent
	// to the hole circle; in-plane length √(R² − r²) whatever the crosses.
	ExitTangential = "tangential"
	// ExitAngled: from a seat at ExitAngleDeg to the radius (0 = radial,
	// 90 = tangential).
	ExitAngled = "angled"
)

// Hub kinds: what sort of hub is laced. They decide load and cautions.
const (
	KindBicycle      = "bicycle"
	KindMotor        = "motor"
	KindMotorVehicle = "motor_vehicle"
	KindTandem       = "tandem"
	KindCargo        = "cargo"
)

// HubKinds lists the accepted kinds.
var HubKinds = []string{KindBicycle, KindMotor, KindMotorVehicle, KindTandem, KindCargo}

// Brakes: what brakes the wheel, which decides where braking torque goes.
const (
	BrakeNone    = "none"
	BrakeRim     = "rim"
	BrakeRotor   = "rotor"
	BrakeDrum    = "drum"
	BrakeCoaster = "coaster"
)

// Brakes lists the accepted brakes.
var Brakes = []string{BrakeNone, BrakeRim, BrakeRotor, BrakeDrum, BrakeCoaster}

// Hub is the hub, described the same way everywhere.
type Hub struct {
	// Holes is the number of spoke holes in both flanges together; the fit
	// rules compare it with the spoke count and the rim.
	Holes int `json:"holes,omitempty"`
	// Kind is bicycle (default), motor, motor_vehicle, tandem or cargo.
	Kind string `json:"kind,omitempty"`
	// Type is j_bend (default) or straight_pull.
	Type string `json:"type,omitempty"`
	// Brake is none (default), rim, rotor, drum or coaster. A rotor or a
	// drum sits on the left; a coaster brake reacts through the whole
	// shell.
	Brake string `json:"brake,omitempty"`
	// Driven says the hub is driven from the right (a rear wheel):
	// pedalling torque goes through the right flange's spokes.
	Driven bool `json:"driven,omitempty"`
	// SpacingMM is the over-locknut width; compared with the frame's.
	SpacingMM *float64 `json:"spacing_mm,omitempty"`
	Left      Flange   `json:"left"`
	Right     Flange   `json:"right"`
	// DiscBrake is the older way to say brake "rotor"; Motor the older way
	// to say kind "motor". Both are still accepted.
	DiscBrake bool `json:"disc_brake,omitempty"`
	Motor     bool `json:"motor,omitempty"`
}

// Flange is one hub flange.
type Flange struct {
	// PCDMM is the diameter of the circle through the spoke-hole centres.
	PCDMM float64 `json:"pcd_mm"`
	// CenterToFlangeMM is the axial distance from the hub's centre plane to
	// the flange's mid-plane, positive outward on both sides.
	CenterToFlangeMM float64 `json:"center_to_flange_mm"`
	// HoleDiameterMM is the spoke-hole diameter (J-bend). Absent: the
	// Options default is assumed and a finding says so.
	HoleDiameterMM *float64 `json:"hole_diameter_mm,omitempty"`
	// ThicknessMM is the flange thickness at the holes (the fit rules'
	// elbow checks).
	ThicknessMM *float64 `json:"thickness_mm,omitempty"`
	// Spokes is how many spokes this flange carries; default half the
	// wheel. Give both (or one) for uneven lacing such as 2:1.
	Spokes *int `json:"spokes,omitempty"`
	// Exit is how the spokes leave: j_bend, tangential or angled (with
	// ExitAngleDeg). Default: j_bend on a J-bend hub; on a straight-pull
	// hub tangential for a crossed side, radial (angled 0°) for a radial
	// one.
	Exit         string   `json:"exit,omitempty"`
	ExitAngleDeg *float64 `json:"exit_angle_deg,omitempty"`
	// SpokeExitOffsetMM (straight-pull) is the signed distance along the
	// spoke from the seat point on the hole circle to where the spoke
	// leaves its head seat; positive toward the rim (the spoke is that much
	// shorter), negative when it leaves behind that point (longer).
	SpokeExitOffsetMM *float64 `json:"spoke_exit_offset_mm,omitempty"`
}

// Rim is the rim, described the same way everywhere.
type Rim struct {
	// Holes is the rim's spoke-hole count; the fit rules compare it.
	Holes int `json:"holes,omitempty"`
	// ERDMM is the effective rim diameter: the diameter at which the spoke
	// ends sit flush with the heads of seated nipples.
	ERDMM float64 `json:"erd_mm"`
	// SpokeHoleOffsetMM is the axial offset of the rim's spoke-hole line from
	// the rim's centre plane, positive toward the left flange.
	SpokeHoleOffsetMM float64 `json:"spoke_hole_offset_mm,omitempty"`
	// StaggerMM is, per side, the axial distance of the holes that side's
	// spokes use from the spoke-hole line, positive toward that side's own
	// flange (zero for a single row of holes).
	StaggerMM Sides `json:"stagger_mm,omitzero"`
	// NippleWasherMM is the thickness of a washer under each nipple head.
	// It lifts the head away from the hub, so the spoke must reach that
	// much farther: the effective ERD grows by twice the thickness.
	NippleWasherMM float64 `json:"nipple_washer_mm,omitempty"`
	// BSDMM is the ISO 5775 bead seat diameter.
	BSDMM float64 `json:"bsd_mm,omitempty"`
	// InnerWidthMM is the width between the bead hooks or walls.
	InnerWidthMM float64 `json:"inner_width_mm,omitempty"`
	// HoleDiameterMM is the diameter of the spoke (nipple) holes.
	HoleDiameterMM float64 `json:"hole_diameter_mm,omitempty"`
	// MaxTensionN is the rim maker's maximum spoke tension.
	MaxTensionN *float64 `json:"max_tension_n,omitempty"`
	// Eyelets: the holes carry eyelets or sockets (never drilled).
	Eyelets bool `json:"eyelets,omitempty"`
}

// Sides is a pair of per-side lengths in mm.
type Sides struct {
	Left  float64 `json:"left"`
	Right float64 `json:"right"`
}

// Cross is the number of crossings per spoke on each side; 0 is radial.
// Both are required.
type Cross struct {
	Left  *int `json:"left"`
	Right *int `json:"right"`
}

// Stock is what the shop can get: every multiple of IncrementMM, or the
// listed LengthsMM. Give one of the two.
type Stock struct {
	IncrementMM *float64  `json:"increment_mm,omitempty"`
	LengthsMM   []float64 `json:"lengths_mm,omitempty"`
}

// Bounds beyond which an input is absurd rather than merely unusual (HTTP
// 400). They keep every intermediate product finite.
const (
	maxSizeMM      = 5000  // a 5 m wheel is no bicycle wheel
	maxSpokes      = 144   // three times a tandem's 48
	maxTensionN    = 20000 // ten times the strongest spoke's usual target
	maxStockList   = 1000  // a shop's whole catalogue of lengths
	maxCrossesIn   = 1 << 20
	minIncrementMM = 0.1 // no shop stocks spokes finer than this
)

// side is one side's validated, resolved geometry.
type side struct {
	r, z    float64 // flange hole circle radius; flange plane z (signed)
	zRim    float64 // z of this side's rim holes
	hole    float64 // hole diameter used for the J-bend correction
	exit    string  // ExitJBend, ExitTangential or ExitAngled
	angle   float64 // exit angle to the radius, radians (ExitAngled)
	offset  float64 // straight-pull exit offset along the spoke
	crosses int
	n       int // spokes on this flange
	// assumedHole is set when the hole diameter was not given.
	assumedHole bool
	thickness   float64 // 0 when not given
	// clear is the head gap a crossed J-bend spoke needs to pass its
	// neighbour's head: half the head plus half the spoke.
	clear float64
}

// resolved is a validated wheel with defaults applied.
type resolved struct {
	n           int
	rimR        float64 // effective rim radius: ERD/2 + washer
	left, right side
	even        bool // both flanges carry half the spokes
	kind, brake string
	driven      bool
	hasSpoke    bool
	sp          spoke.Resolved
	headD       float64
	target      float64 // 0: none
	stock       *Stock
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// size checks a required positive size at pointer prefix+leaf.
func (l *errList) size(prefix, leaf string, v float64) bool {
	if !finite(v) || v <= 0 {
		l.bad(at(prefix, leaf), "must be a positive, finite number of mm")
		return false
	}
	if v > maxSizeMM {
		l.bad(at(prefix, leaf), "must be at most "+fmtMM(maxSizeMM))
		return false
	}
	return true
}

// signed checks a finite length that may be zero or negative.
func (l *errList) signed(prefix, leaf string, v float64) bool {
	if !finite(v) || math.Abs(v) > maxSizeMM {
		l.bad(at(prefix, leaf), "must be a finite number of mm within ±"+fmtMM(maxSizeMM))
		return false
	}
	return true
}

func (l *errList) flange(p string, f Flange, hubType string, def float64, s *side) {
	okR := l.size(p, "/pcd_mm", f.PCDMM)
	okZ := l.size(p, "/center_to_flange_mm", f.CenterToFlangeMM)
	if okR {
		s.r = f.PCDMM / 2
	}
	if okZ {
		s.z = f.CenterToFlangeMM
	}
	switch f.Exit {
	case "":
		s.exit = "" // decided once the crosses are known
		if hubType == JBend {
			s.exit = ExitJBend
		}
	case ExitJBend:
		if hubType == StraightPull {
			l.bad(at(p, "/exit"), "a straight_pull hub's spokes leave tangential or angled, not j_bend")
		}
		s.exit = ExitJBend
	case ExitTangential, ExitAngled:
		if hubType == JBend {
			l.bad(at(p, "/exit"), "a j_bend hub's spokes leave through holes (exit j_bend): set hub.type straight_pull for seated spokes")
		}
		s.exit = f.Exit
	default:
		l.bad(at(p, "/exit"), `must be "j_bend", "tangential" or "angled"`)
	}
	if f.ExitAngleDeg != nil {
		a := *f.ExitAngleDeg
		switch {
		case f.Exit != ExitAngled:
			l.bad(at(p, "/exit_angle_deg"), `applies with exit "angled" only`)
		case !finite(a) || a < 0 || a > 90:
			l.bad(at(p, "/exit_angle_deg"), "must be an angle from 0° (radial) to 90° (tangential)")
		default:
			s.angle = a / deg
		}
	} else if f.Exit == ExitAngled {
		l.bad(at(p, "/exit_angle_deg"), `is required with exit "angled"`)
	}
	straight := s.exit == ExitTangential || s.exit == ExitAngled || (s.exit == "" && hubType == StraightPull)
	s.hole = def
	s.assumedHole = !straight
	if f.HoleDiameterMM != nil {
		if l.size(p, "/hole_diameter_mm", *f.HoleDiameterMM) {
			s.hole = *f.HoleDiameterMM
			s.assumedHole = false
		}
	}
	if f.ThicknessMM != nil && l.size(p, "/thickness_mm", *f.ThicknessMM) {
		s.thickness = *f.ThicknessMM
	}
	if f.SpokeExitOffsetMM != nil {
		if !straight {
			l.bad(at(p, "/spoke_exit_offset_mm"), "applies to straight-pull (seated) spokes only")
		} else if l.signed(p, "/spoke_exit_offset_mm", *f.SpokeExitOffsetMM) {
			s.offset = *f.SpokeExitOffsetMM
		}
	}
	if f.Spokes != nil {
		switch n := *f.Spokes; {
		case n < 1:
			l.bad(at(p, "/spokes"), "must be at least 1")
		case n > maxSpokes:
			l.bad(at(p, "/spokes"), "must be at most "+strconv.Itoa(maxSpokes))
		default:
			s.n = n
		}
	}
}

func (l *errList) crosses(p string, c *int) int {
	switch {
	case c == nil:
		l.bad(p, "is required (0 for radial)")
	case *c < 0:
		l.bad(p, "must not be negative")
	case *c > maxCrossesIn:
		l.bad(p, "is absurdly large")
	default:
		return *c
	}
	return 0
}

// hubType is the hub's type with the default applied: j_bend, unless a
// flange's exit says the spokes are seated.
func hubType(h Hub) string {
	if h.Type != "" {
		return h.Type
	}
	for _, e := range []string{h.Left.Exit, h.Right.Exit} {
		if e == ExitTangential || e == ExitAngled {
			return StraightPull
		}
	}
	return JBend
}

// resolve validates w and applies defaults. Every returned error is a
// *field.Error or an errors.Join of them.
func resolve(w *Wheel, o *Options) (resolved, error) {
	var l errList
	var r resolved
	switch {
	case w.SpokeCount < 4:
		l.bad("/spoke_count", "must be at least 4")
	case w.SpokeCount > maxSpokes:
		l.bad("/spoke_count", "must be at most "+strconv.Itoa(maxSpokes))
	default:
		r.n = w.SpokeCount
	}
	ht := w.Hub.Type
	switch ht {
	case "":
		ht = hubType(w.Hub)
	case JBend, StraightPull:
	default:
		l.bad("/hub/type", `must be "j_bend" or "straight_pull"`)
		ht = JBend
	}
	r.kind = w.Hub.Kind
	switch r.kind {
	case "":
		r.kind = KindBicycle
		if w.Hub.Motor {
			r.kind = KindMotor
		}
	case KindBicycle, KindMotor, KindMotorVehicle, KindTandem, KindCargo:
		if w.Hub.Motor && r.kind != KindMotor && r.kind != KindMotorVehicle {
			l.bad("/hub/motor", `contradicts kind "`+r.kind+`": leave motor out, or set kind "motor"`)
		}
	default:
		l.bad("/hub/kind", "must be one of bicycle, motor, motor_vehicle, tandem, cargo")
	}
	r.brake = w.Hub.Brake
	switch r.brake {
	case "":
		r.brake = BrakeNone
		if w.Hub.DiscBrake {
			r.brake = BrakeRotor
		}
	case BrakeNone, BrakeRim, BrakeRotor, BrakeDrum, BrakeCoaster:
		if w.Hub.DiscBrake && r.brake != BrakeRotor {
			l.bad("/hub/disc_brake", `contradicts brake "`+r.brake+`": leave disc_brake out, or set brake "rotor"`)
		}
	default:
		l.bad("/hub/brake", "must be one of none, rim, rotor, drum, coaster")
	}
	r.driven = w.Hub.Driven
	l.flange("/hub/left", w.Hub.Left, ht, o.DefaultHoleDiameterMM, &r.left)
	l.flange("/hub/right", w.Hub.Right, ht, o.DefaultHoleDiameterMM, &r.right)
	r.right.z = -r.right.z

	// Spokes per flange: default half each; one given, the other the rest.
	if r.n > 0 {
		switch nl, nr := r.left.n, r.right.n; {
		case nl == 0 && nr == 0:
			if r.n%2 != 0 {
				l.impossible("/spoke_count", "an odd spoke count needs hub.left.spokes and hub.right.spokes: by default each flange takes half")
			}
			r.left.n, r.right.n = r.n/2, r.n-r.n/2
		case nl == 0:
			r.left.n = r.n - nr
		case nr == 0:
			r.right.n = r.n - nl
		}
		oddDefault := r.n%2 != 0 && w.Hub.Left.Spokes == nil && w.Hub.Right.Spokes == nil // reported above
		if !oddDefault && r.left.n+r.right.n != r.n {
			l.impossible("/hub/left/spokes", "hub.left.spokes + hub.right.spokes must equal spoke_count ("+strconv.Itoa(r.n)+")")
		} else if r.left.n < 2 || r.right.n < 2 {
			l.impossible("/hub/left/spokes", "each flange needs at least 2 spokes")
		}
		r.even = r.left.n == r.right.n
	}

	okERD := l.size("/rim/erd_mm", "", w.Rim.ERDMM)
	okOff := l.signed("/rim/spoke_hole_offset_mm", "", w.Rim.SpokeHoleOffsetMM)
	okSL := l.signed("/rim/stagger_mm/left", "", w.Rim.StaggerMM.Left)
	okSR := l.signed("/rim/stagger_mm/right", "", w.Rim.StaggerMM.Right)
	washer := w.Rim.NippleWasherMM
	okW := finite(washer) && washer >= 0 && washer <= 50
	if !okW {
		l.bad("/rim/nipple_washer_mm", "must be a finite thickness from 0 to 50 mm")
	}
	if okERD && okW {
		r.rimR = w.Rim.ERDMM/2 + washer
		if maxPCD := math.Max(w.Hub.Left.PCDMM, w.Hub.Right.PCDMM); w.Rim.ERDMM <= maxPCD {
			l.bad("/rim/erd_mm", "must be larger than the flanges' pcd_mm ("+fmtMM(maxPCD)+")")
		}
	}
	if okOff && okSL && okSR {
		r.left.zRim = w.Rim.SpokeHoleOffsetMM + w.Rim.StaggerMM.Left
		r.right.zRim = w.Rim.SpokeHoleOffsetMM - w.Rim.StaggerMM.Right
		if r.left.z > 0 && r.left.z-r.left.zRim <= 0 {
			l.impossible("/rim/spoke_hole_offset_mm", "the left spoke holes sit at or beyond the left flange plane: the left spokes would pull the rim the wrong way")
		}
		if r.right.z < 0 && r.right.zRim-r.right.z <= 0 {
			l.impossible("/rim/spoke_hole_offset_mm", "the right spoke holes sit at or beyond the right flange plane: the right spokes would pull the rim the wrong way")
		}
	}
	r.left.crosses = l.crosses("/crosses/left", w.Crosses.Left)
	r.right.crosses = l.crosses("/crosses/right", w.Crosses.Right)
	for _, s := range []*side{&r.left, &r.right} {
		if s.exit == "" { // straight-pull default
			s.exit = ExitTangential
			if s.crosses == 0 {
				s.exit, s.angle = ExitAngled, 0
			}
		}
	}

	l.spoke(w.Spoke, o, &r)
	if t := w.TargetTensionN; t != nil {
		if !finite(*t) || *t <= 0 || *t > maxTensionN {
			l.bad("/target_tension_n", "must be a positive, finite tension of at most "+fmtNum(maxTensionN)+" N")
		} else {
			r.target = *t
		}
	}
	d := r.sp.EndMM
	if d == 0 {
		d = o.DefaultSpokeDiameterMM
	}
	r.left.clear, r.right.clear = (r.headD+d)/2, (r.headD+d)/2
	if r.sp.EndMM > 0 {
		l.holeFits("/hub/left/hole_diameter_mm", r.left, r.sp.EndMM)
		l.holeFits("/hub/right/hole_diameter_mm", r.right, r.sp.EndMM)
	}
	if s := w.Stock; s != nil {
		l.stock(s)
		r.stock = s
	}
	return r, l.err()
}

// holeFits rejects a measured J-bend hole the spoke cannot pass through.
func (l *errList) holeFits(p string, s side, d float64) {
	if s.exit == ExitJBend && !s.assumedHole && s.hole < d {
		l.impossible(p, "is smaller than the spoke ("+fmtMM(d)+"): the spoke cannot pass")
	}
}

func (l *errList) spoke(sp *spoke.Spec, o *Options, r *resolved) {
	r.headD = o.HeadToSpokeRatio * o.DefaultSpokeDiameterMM
	if sp == nil {
		return
	}
	res, ps := sp.Resolve(true)
	for _, p := range ps {
		c := *p
		c.Pointer = "/spoke" + p.Pointer
		*l = append(*l, &c)
	}
	if len(ps) > 0 {
		return
	}
	r.sp = res
	r.hasSpoke = res.EndMM > 0 && res.EGPa > 0
	switch {
	case sp.HeadDiameterMM != nil:
		r.headD = *sp.HeadDiameterMM
	case res.EndMM > 0:
		r.headD = o.HeadToSpokeRatio * res.EndMM
	}
}

func (l *errList) stock(s *Stock) {
	switch {
	case s.IncrementMM != nil && len(s.LengthsMM) > 0:
		l.bad("/stock", "give increment_mm or lengths_mm, not both")
	case s.IncrementMM != nil:
		if l.size("/stock/increment_mm", "", *s.IncrementMM) && *s.IncrementMM < minIncrementMM {
			l.bad("/stock/increment_mm", "must be at least "+fmtMM(minIncrementMM))
		}
	case len(s.LengthsMM) > maxStockList:
		l.bad("/stock/lengths_mm", "at most "+strconv.Itoa(maxStockList)+" lengths")
	case len(s.LengthsMM) > 0:
		for i, v := range s.LengthsMM {
			if !finite(v) || v <= 0 || v > maxSizeMM {
				l.size("/stock/lengths_mm/", strconv.Itoa(i), v)
			}
		}
	default:
		l.bad("/stock", "needs increment_mm or a non-empty lengths_mm")
	}
}
