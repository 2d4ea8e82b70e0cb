package geometry

import (
	"math"
	"strconv"

	"wheelbench/service/spoke"
)

// Wheel is one request of POST /v1/spoke-lengths. Required: SpokeCount, both
// flanges' PCDMM and CenterToFlangeMM, Rim.ERDMM and both Crosses. Optional
// numbers are pointers (absent = nil; an explicit 0 is rejected where zero is
// not a valid size) or have a zero value that means "none".
type Wheel struct {
	SpokeCount int   `json:"spoke_count"`
	Hub        Hub   `json:"hub"`
	Rim        Rim   `json:"rim"`
	Crosses    Cross `json:"crosses"`
	// Spoke describes the spoke wire; needed for order lengths and stress.
	Spoke *Spoke `json:"spoke,omitempty"`
	// TargetTensionN is the tension of the higher-tension side, in newtons.
	TargetTensionN *float64 `json:"target_tension_n,omitempty"`
	// Stock says which lengths can be bought; a stock length is chosen per side.
	Stock *Stock `json:"stock,omitempty"`
}

// Hub types.
const (
	JBend        = "j_bend"
	StraightPull = "straight_pull"
)

// Hub is the hub shell: its spoke type and its two flanges.
type Hub struct {
	// Type is "j_bend" (the default when empty) or "straight_pull".
	Type  string `json:"type,omitempty"`
	Left  Flange `json:"left"`
	Right Flange `json:"right"`
	// DiscBrake says a rotor is mounted (on the left): brake torque goes
	// through the left flange's spokes.
	DiscBrake bool `json:"disc_brake,omitempty"`
	// Driven says the hub is driven from the right (a rear wheel): pedalling
	// torque goes through the right flange's spokes.
	Driven bool `json:"driven,omitempty"`
	// Motor says the hub contains a motor: drive and regenerative torque go
	// through both flanges.
	Motor bool `json:"motor,omitempty"`
}

// Flange is one hub flange.
type Flange struct {
	// PCDMM is the diameter of the circle through the spoke-hole centres.
	PCDMM float64 `json:"pcd_mm"`
	// CenterToFlangeMM is the axial distance from the hub's centre plane to
	// the flange's mid-plane, positive outward on both sides.
	CenterToFlangeMM float64 `json:"center_to_flange_mm"`
	// HoleDiameterMM is the spoke-hole diameter (J-bend). Absent: the
	// Options default is assumed and an info finding says so.
	HoleDiameterMM *float64 `json:"hole_diameter_mm,omitempty"`
	// ThicknessMM is the flange thickness; validated only: the hole's centre
	// plane is the spoke's pivot, so the length does not depend on it.
	ThicknessMM *float64 `json:"thickness_mm,omitempty"`
	// SpokeExitOffsetMM (straight-pull only) is the signed distance along
	// the spoke from the PCD point to where the spoke leaves its head seat;
	// positive toward the rim (the spoke is that much shorter), negative when
	// the spoke leaves behind the PCD point (that much longer).
	SpokeExitOffsetMM *float64 `json:"spoke_exit_offset_mm,omitempty"`
}

// Rim is the rim as the spokes see it.
type Rim struct {
	// ERDMM is the effective rim diameter: the diameter at which the spoke
	// ends sit when the nipples are seated.
	ERDMM float64 `json:"erd_mm"`
	// SpokeHoleOffsetMM is the axial offset of the rim's spoke-hole line from
	// the rim's centre plane, positive toward the left flange.
	SpokeHoleOffsetMM float64 `json:"spoke_hole_offset_mm,omitempty"`
	// StaggerMM is, per side, the axial distance of the holes that side's
	// spokes use from the spoke-hole line, positive toward that side's own
	// flange (zero for a single row of holes).
	StaggerMM Sides `json:"stagger_mm,omitzero"`
	// NippleWasherMM is the thickness of a washer under each nipple head. It
	// lifts the nipple seat toward the hub: the effective ERD shrinks by twice
	// the thickness. Zero: no washers.
	NippleWasherMM float64 `json:"nipple_washer_mm,omitempty"`
}

// Sides is a pair of per-side lengths in mm.
type Sides struct {
	Left  float64 `json:"left"`
	Right float64 `json:"right"`
}

// Cross is the number of crossings per spoke on each side; 0 is radial. Both
// are required.
type Cross struct {
	Left  *int `json:"left"`
	Right *int `json:"right"`
}

// Spoke is the spoke wire. Give the nominal size as DiameterMM or as a
// BS 3737 Gauge, not both.
type Spoke struct {
	DiameterMM *float64 `json:"diameter_mm,omitempty"`
	Gauge      *int     `json:"gauge,omitempty"`
	// Material is a service/spoke material name; default "stainless_steel".
	Material string `json:"material,omitempty"`
	// EGPa overrides the material's Young's modulus.
	EGPa *float64 `json:"e_gpa,omitempty"`
	// Sections are butted lengths at other diameters (unloaded, as made);
	// the rest of the spoke is at the nominal diameter.
	Sections []Section `json:"sections,omitempty"`
	// HeadDiameterMM is the J-bend head's diameter, for the head-overlap
	// check; absent: Options.HeadToSpokeRatio × the nominal diameter.
	HeadDiameterMM *float64 `json:"head_diameter_mm,omitempty"`
}

// Section is one butted stretch of a spoke.
type Section struct {
	LengthMM   float64 `json:"length_mm"`
	DiameterMM float64 `json:"diameter_mm"`
}

// Stock is what the shop can buy: every multiple of IncrementMM, or the
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
	maxEGPa        = 1000  // stiffer than any metal
	maxSections    = 8     // butting rarely has more than three
	maxStockList   = 1000  // a shop's whole catalogue of lengths
	maxCrossesIn   = 1 << 20
	minIncrementMM = 0.1 // no shop stocks spokes finer than this // beyond this a crosses value is garbage, not a wheel
)

// side is one side's validated, resolved geometry.
type side struct {
	r, z    float64 // flange hole circle radius; flange plane z (signed)
	zRim    float64 // z of this side's rim holes
	hole    float64 // hole diameter used for the J-bend correction
	exit    float64 // straight-pull exit offset
	crosses int
	// assumedHole is set when the hole diameter was not given.
	assumedHole bool
	thickness   float64 // 0 when not given
}

// resolved is a validated wheel with defaults applied.
type resolved struct {
	n           int
	straight    bool
	rimR        float64 // effective rim radius (ERD/2 − washer)
	left, right side
	hasSpoke    bool
	d           float64 // nominal diameter, mm
	eNmm2       float64 // Young's modulus, N/mm²
	utsMPa      float64
	sections    []Section
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

func (l *errList) flange(p string, f Flange, straight bool, def float64, s *side) {
	okR := l.size(p, "/pcd_mm", f.PCDMM)
	okZ := l.size(p, "/center_to_flange_mm", f.CenterToFlangeMM)
	if okR {
		s.r = f.PCDMM / 2
	}
	if okZ {
		s.z = f.CenterToFlangeMM
	}
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
			l.bad(at(p, "/spoke_exit_offset_mm"), "applies to straight_pull hubs only")
		} else if l.signed(p, "/spoke_exit_offset_mm", *f.SpokeExitOffsetMM) {
			s.exit = *f.SpokeExitOffsetMM
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

// resolve validates w and applies defaults. Every returned error is a
// *FieldError or an errors.Join of them.
func resolve(w *Wheel, o *Options) (resolved, error) {
	var l errList
	var r resolved
	switch {
	case w.SpokeCount < 4:
		l.bad("/spoke_count", "must be at least 4")
	case w.SpokeCount > maxSpokes:
		l.bad("/spoke_count", "must be at most "+strconv.Itoa(maxSpokes))
	case w.SpokeCount%2 != 0:
		l.impossible("/spoke_count", "must be even: each flange takes half the spokes")
	default:
		r.n = w.SpokeCount
	}
	switch w.Hub.Type {
	case "", JBend:
	case StraightPull:
		r.straight = true
	default:
		l.bad("/hub/type", `must be "j_bend" or "straight_pull"`)
	}
	l.flange("/hub/left", w.Hub.Left, r.straight, o.DefaultHoleDiameterMM, &r.left)
	l.flange("/hub/right", w.Hub.Right, r.straight, o.DefaultHoleDiameterMM, &r.right)
	r.right.z = -r.right.z

	okERD := l.size("/rim/erd_mm", "", w.Rim.ERDMM)
	okOff := l.signed("/rim/spoke_hole_offset_mm", "", w.Rim.SpokeHoleOffsetMM)
	okSL := l.signed("/rim/stagger_mm/left", "", w.Rim.StaggerMM.Left)
	okSR := l.signed("/rim/stagger_mm/right", "", w.Rim.StaggerMM.Right)
	washer := w.Rim.NippleWasherMM
	okW := finite(washer) && washer >= 0 && washer <= maxSizeMM
	if !okW {
		l.bad("/rim/nipple_washer_mm", "must be a finite thickness ≥ 0 mm")
	}
	if okERD && okW {
		r.rimR = w.Rim.ERDMM/2 - washer
		maxPCD := math.Max(w.Hub.Left.PCDMM, w.Hub.Right.PCDMM)
		switch {
		case w.Rim.ERDMM <= maxPCD:
			l.bad("/rim/erd_mm", "must be larger than the flanges' pcd_mm ("+fmtMM(maxPCD)+")")
		case 2*r.rimR <= maxPCD:
			l.impossible("/rim/nipple_washer_mm", "washers this thick bring the nipples inside the flange circle")
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

	l.spoke(w.Spoke, o, &r)
	if t := w.TargetTensionN; t != nil {
		if !finite(*t) || *t <= 0 || *t > maxTensionN {
			l.bad("/target_tension_n", "must be a positive, finite tension of at most "+fmtNum(maxTensionN)+" N")
		} else {
			r.target = *t
		}
	}
	if !r.straight && r.d > 0 {
		l.holeFits("/hub/left/hole_diameter_mm", r.left, r.d)
		l.holeFits("/hub/right/hole_diameter_mm", r.right, r.d)
	}
	if s := w.Stock; s != nil {
		l.stock(s)
		r.stock = s
	}
	return r, l.err()
}

// holeFits rejects a measured J-bend hole the spoke cannot pass through.
func (l *errList) holeFits(p string, s side, d float64) {
	if !s.assumedHole && s.hole < d {
		l.impossible(p, "is smaller than the spoke ("+fmtMM(d)+"): the spoke cannot pass")
	}
}

func (l *errList) spoke(sp *Spoke, o *Options, r *resolved) {
	r.headD = o.HeadToSpokeRatio * o.DefaultSpokeDiameterMM
	if sp == nil {
		return
	}
	switch {
	case sp.DiameterMM != nil && sp.Gauge != nil:
		l.bad("/spoke/gauge", "give diameter_mm or gauge, not both")
	case sp.DiameterMM != nil:
		if l.size("/spoke/diameter_mm", "", *sp.DiameterMM) {
			r.d = *sp.DiameterMM
		}
	case sp.Gauge != nil:
		if d, ok := spoke.GaugeDiameterMM(*sp.Gauge); ok {
			r.d = d
		} else {
			l.bad("/spoke/gauge", "is not a BS 3737 gauge spokes come in (8 to 17)")
		}
	}
	name := sp.Material
	if name == "" {
		name = "stainless_steel"
	}
	m, ok := spoke.LookupMaterial(name)
	if !ok {
		l.bad("/spoke/material", "must be one of stainless_steel, titanium, aluminium, brass")
	}
	r.eNmm2 = m.EGPa * 1000 // 1 GPa = 1000 N/mm²
	r.utsMPa = m.UTSMPa
	if sp.EGPa != nil {
		if e := *sp.EGPa; !finite(e) || e <= 0 || e > maxEGPa {
			l.bad("/spoke/e_gpa", "must be a positive, finite modulus of at most "+fmtNum(maxEGPa)+" GPa")
		} else {
			r.eNmm2 = e * 1000
		}
	}
	if len(sp.Sections) > maxSections {
		l.bad("/spoke/sections", "at most "+strconv.Itoa(maxSections)+" butted sections")
	} else {
		for i, s := range sp.Sections {
			if !finite(s.LengthMM) || !finite(s.DiameterMM) || s.LengthMM <= 0 || s.DiameterMM <= 0 || s.LengthMM > maxSizeMM || s.DiameterMM > maxSizeMM {
				p := "/spoke/sections/" + strconv.Itoa(i)
				l.size(p, "/length_mm", s.LengthMM)
				l.size(p, "/diameter_mm", s.DiameterMM)
			}
		}
		r.sections = sp.Sections
	}
	if sp.HeadDiameterMM != nil {
		if l.size("/spoke/head_diameter_mm", "", *sp.HeadDiameterMM) {
			r.headD = *sp.HeadDiameterMM
		}
	} else if r.d > 0 {
		r.headD = o.HeadToSpokeRatio * r.d
	}
	r.hasSpoke = r.d > 0 && r.eNmm2 > 0
	if len(sp.Sections) > 0 && r.d == 0 {
		l.bad("/spoke/sections", "butted sections need the nominal diameter_mm or gauge")
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
