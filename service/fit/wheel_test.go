package fit

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"wheelbench/service/geometry"
	"wheelbench/service/spoke"
)

// The rules on a wheel's geometry alone, as the spoke-length answer applies
// them. The thresholds are rules of thumb (common practice, see
// DefaultOptions); each test builds a wheel on either side of one, its
// geometry computed, never made up.

// rearWheel is a dished J-bend rear: 32 holes, 3-cross both sides, 2.0 mm
// stainless spokes at 1100 N, stock in 2 mm steps.
func rearWheel() geometry.Wheel {
	return geometry.Wheel{
		SpokeCount: 32,
		Hub: geometry.Hub{Type: geometry.JBend, Driven: true,
			Left:  geometry.Flange{PCDMM: 45, CenterToFlangeMM: 36, HoleDiameterMM: f64(2.6), ThicknessMM: f64(3)},
			Right: geometry.Flange{PCDMM: 45, CenterToFlangeMM: 18.5, HoleDiameterMM: f64(2.6)}},
		Rim:            geometry.Rim{ERDMM: 599},
		Crosses:        crosses(3, 3),
		Spoke:          &spoke.Spec{DiameterMM: f64(2.0), Material: "stainless_steel"},
		TargetTensionN: f64(1100),
		Stock:          &geometry.Stock{IncrementMM: f64(2)},
	}
}

// assess computes w and judges it as the spoke-length answer does.
func assess(t *testing.T, w geometry.Wheel) (geometry.Result, []Finding, []string) {
	t.Helper()
	res, err := geometry.Compute(w)
	if err != nil {
		t.Fatal(err)
	}
	fs, cs := AssessWheel(w, &res, DefaultOptions())
	for _, f := range fs {
		if f.Severity != SeverityOf(f.Code) || f.Severity == "" {
			t.Errorf("%s has severity %q, its rule's is %q", f.Code, f.Severity, SeverityOf(f.Code))
		}
		if f.Message == "" || f.Remedy == "" {
			t.Errorf("%s needs a message and a remedy: %+v", f.Code, f)
		}
	}
	return res, fs, cs
}

func has(fs []Finding, code, side string) *Finding {
	for i := range fs {
		if fs[i].Code == code && fs[i].Side == side {
			return &fs[i]
		}
	}
	return nil
}

func hasCaution(cs []string, part string) bool {
	for _, c := range cs {
		if strings.Contains(c, part) {
			return true
		}
	}
	return false
}

// TestHeadOverlapRule: 36 holes 4-cross on a 45 mm flange runs over the
// neighbouring head (gap ≈ 2.12 mm against 3 mm, plane geometry worked in
// the geometry package's TestHeadGapHandValue): a warning whose remedy
// names the 3-cross that clears the heads, with a caution; 3-cross is
// clear; a straight-pull hub has no heads on its flange.
func TestHeadOverlapRule(t *testing.T) {
	f := geometry.Flange{PCDMM: 45, CenterToFlangeMM: 35, HoleDiameterMM: f64(2.6)}
	mk := func(k int) geometry.Wheel {
		return geometry.Wheel{SpokeCount: 36, Hub: geometry.Hub{Left: f, Right: f}, Rim: geometry.Rim{ERDMM: 600},
			Crosses: crosses(k, k), Spoke: &spoke.Spec{DiameterMM: f64(2)}}
	}
	_, fs, cs := assess(t, mk(4))
	fd := has(fs, CodeSpokeHeadOverlap, "left")
	if fd == nil || has(fs, CodeSpokeHeadOverlap, "right") == nil || fd.Severity != Warning {
		t.Fatalf("36h 4-cross on 45 mm flanges: want spoke_head_overlap warnings both sides, got %+v", fs)
	}
	if !strings.Contains(fd.Remedy, "3-cross") || fd.Values["max_crosses_clear_of_heads"] != 3 || fd.Values["max_crosses"] != 4 {
		t.Errorf("remedy %q values %v: want 3-cross named, clear 3 of max 4", fd.Remedy, fd.Values)
	}
	if !hasCaution(cs, "neighbouring head") {
		t.Errorf("head overlap needs a caution: %q", cs)
	}
	if _, fs, _ = assess(t, mk(3)); has(fs, CodeSpokeHeadOverlap, "left") != nil {
		t.Errorf("36h 3-cross: unexpected head overlap %+v", fs)
	}
	w := mk(4)
	w.Hub.Type = geometry.StraightPull
	w.Hub.Left.HoleDiameterMM, w.Hub.Right.HoleDiameterMM = nil, nil
	if _, fs, _ = assess(t, w); has(fs, CodeSpokeHeadOverlap, "left") != nil {
		t.Errorf("straight pull: unexpected head overlap")
	}
}

// TestTorqueSides: a radially laced side that carries braking or drive
// torque cannot carry it (statics: a radial spoke has no tangential
// component at the hub). Rotor and drum brakes load the left; a coaster
// brake reacts through the whole shell; a driven hub loads the right; a
// motor both. Every radial side also asks to confirm that the hub maker
// allows radial lacing.
func TestTorqueSides(t *testing.T) {
	cases := []struct {
		name   string
		hub    func(*geometry.Hub)
		kl, kr int
		want   []string // code/side that must fire
		not    []string
	}{
		{"rotor, radial left", func(h *geometry.Hub) { h.Brake, h.Driven = geometry.BrakeRotor, false }, 0, 3,
			[]string{"radial_brake_side/left", "radial_lacing_hub_approval/left"}, []string{"radial_drive_side/left"}},
		{"older disc_brake spelling", func(h *geometry.Hub) { h.DiscBrake, h.Driven = true, false }, 0, 3,
			[]string{"radial_brake_side/left"}, nil},
		{"drum, radial left", func(h *geometry.Hub) { h.Brake, h.Driven = geometry.BrakeDrum, false }, 0, 3,
			[]string{"radial_brake_side/left"}, nil},
		{"coaster, radial right", func(h *geometry.Hub) { h.Brake = geometry.BrakeCoaster }, 3, 0,
			[]string{"radial_brake_side/right", "radial_drive_side/right"}, nil},
		{"rim brake front, radial both", func(h *geometry.Hub) { h.Brake, h.Driven = geometry.BrakeRim, false }, 0, 0,
			[]string{"radial_lacing_hub_approval/left", "radial_lacing_hub_approval/right"}, []string{"radial_brake_side/left", "radial_drive_side/right"}},
		{"driven, radial right", func(h *geometry.Hub) {}, 3, 0,
			[]string{"radial_drive_side/right"}, []string{"radial_brake_side/right"}},
		{"undriven, radial right", func(h *geometry.Hub) { h.Driven = false }, 3, 0,
			nil, []string{"radial_drive_side/right"}},
		{"motor, radial left", func(h *geometry.Hub) { h.Kind, h.Driven = geometry.KindMotor, false }, 0, 3,
			[]string{"radial_drive_side/left"}, nil},
	}
	for _, c := range cases {
		w := rearWheel()
		c.hub(&w.Hub)
		w.Crosses = crosses(c.kl, c.kr)
		_, fs, cs := assess(t, w)
		got := codes(fs, Info)
		for _, want := range c.want {
			if !contains(got, want) {
				t.Errorf("%s: want %s, got %v", c.name, want, got)
			}
		}
		for _, not := range c.not {
			if contains(got, not) {
				t.Errorf("%s: unexpected %s", c.name, not)
			}
		}
		if len(c.want) > 0 && !hasCaution(cs, "Radial") {
			t.Errorf("%s: no caution about radial lacing: %q", c.name, cs)
		}
	}
}

func contains(ss []string, s string) bool {
	for _, x := range ss {
		if x == s {
			return true
		}
	}
	return false
}

// TestDishRules: a deeply dished rear (right flange 12 mm from centre) has a
// bracing angle near atan(12/291) ≈ 2.4° below 3°, a tension ratio beyond
// 2:1 and, at 1000 N, a left side near 1000·(12/291)/(36/293) ≈ 336 N below
// 500 N — each with its caution. An offset rim balances a dished rear when
// its holes sit toward the far (left) flange, raising the right spokes'
// bracing angle; holes toward the dished side make it worse and the rim is
// reversed.
func TestDishRules(t *testing.T) {
	w := rearWheel()
	w.Hub.Right.CenterToFlangeMM = 12
	w.TargetTensionN = f64(1000)
	_, fs, cs := assess(t, w)
	for _, want := range []string{"low_bracing_angle/right", "tension_ratio_high", "low_side_tension_low/left"} {
		if !contains(codes(fs, Info), want) {
			t.Errorf("want %s, got %v", want, codes(fs, Info))
		}
	}
	if !hasCaution(cs, "low-tension side") || !hasCaution(cs, "safe minimum") {
		t.Errorf("want cautions for the slack side, got %q", cs)
	}
	if lt := has(fs, CodeLowSideTensionLow, "left").Values["low_side_tension_n"]; !near(lt, 1000*(12.0/291)/(36.0/293), 5) {
		t.Errorf("low side %v N, hand estimate ≈ 336", lt)
	}
	_, fs, _ = assess(t, rearWheel())
	for _, code := range []string{CodeLowBracingAngle, CodeTensionRatioHigh, CodeLowSideTensionLow, CodeRimOffsetReversed} {
		for _, f := range fs {
			if f.Code == code {
				t.Errorf("plain rear: unexpected %+v", f)
			}
		}
	}
	w = rearWheel()
	w.Rim.SpokeHoleOffsetMM = -3 // toward the right, the dished side
	res, fs, cs := assess(t, w)
	fd := has(fs, CodeRimOffsetReversed, "")
	if fd == nil || !strings.Contains(fd.Remedy, "toward the left flange") || !hasCaution(cs, "wrong way round") {
		t.Fatalf("offset toward the dished right side: want rim_offset_reversed naming the left flange, got %+v", fs)
	}
	if fd.Values["ratio_if_turned"] <= res.TensionRatioLeftToRight {
		t.Errorf("turning should raise the slack left side's share: %v", fd.Values)
	}
	w.Rim.SpokeHoleOffsetMM = 3
	if _, fs, _ = assess(t, w); has(fs, CodeRimOffsetReversed, "") != nil {
		t.Errorf("offset toward the far flange is the right way round: %+v", fs)
	}
}

// TestStressRule: the tighter side's tension over the spoke's weakest
// section against the material's tensile strength ÷ 2.5 (common practice).
// Without thread data the thread is taken as rolled on the wire at its
// typical pitch — pitch diameter ≈ wire, so the ISO 898-1 stress area is
// π/4·(d − 0.2887·P)² = 2.7437 mm² for 2.0 mm at 56 TPI — and the finding
// is a warning that says so, never an error. Titanium (Ti-6Al-4V, 950 MPa,
// materials.tsv) 2.0 mm at 1150 N: 1150/2.7437 = 419 MPa > 380 MPa.
// Stainless (1696 MPa, ASTM A313) 2.0 mm at 1400 N: 510 MPa < 678.4: clear.
func TestStressRule(t *testing.T) {
	w := rearWheel()
	w.Spoke.Material, w.TargetTensionN = "titanium", f64(1150)
	_, fs, cs := assess(t, w)
	fd := has(fs, CodeSpokeStressHigh, "")
	if fd == nil || fd.Severity != Warning {
		t.Fatalf("titanium 2.0 mm at 1150 N: want a spoke_stress_high warning, got %+v", fs)
	}
	if !near(fd.Values["stress_area_mm2"], 2.7437, 1e-4) || !near(fd.Values["stress_mpa"], 419.1411, 1e-3) {
		t.Errorf("values %v: want area 2.7437 mm², 419.14 MPa", fd.Values)
	}
	if !strings.Contains(fd.Message, "typical, not given") || !contains(fd.Assumed, "spoke.thread") {
		t.Errorf("the finding must state its thread assumption: %q %v", fd.Message, fd.Assumed)
	}
	if !hasCaution(cs, "stress is high") {
		t.Errorf("no caution: %q", cs)
	}
	w = rearWheel()
	w.TargetTensionN = f64(1400)
	if _, fs, _ = assess(t, w); has(fs, CodeSpokeStressHigh, "") != nil {
		t.Errorf("stainless 2.0 mm at 1400 N: unexpected %+v", has(fs, CodeSpokeStressHigh, ""))
	}
	// A butted 1.5 mm middle governs: 1300/(π·1.5²/4) = 735.6 MPa > 678.4.
	w = rearWheel()
	w.TargetTensionN = f64(1300)
	w.Spoke.Sections = []spoke.Butt{{LengthMM: 200, DiameterMM: f64(1.5)}}
	_, fs, _ = assess(t, w)
	if fd := has(fs, CodeSpokeStressHigh, ""); fd == nil || !strings.Contains(fd.Message, "butted section 1") || !near(fd.Values["stress_mpa"], 735.6, 0.1) {
		t.Errorf("butted 1.5 mm at 1300 N: want the section named at 735.6 MPa, got %+v", fd)
	}
}

// TestNippleAngleRemedy: the remedy names the cross count that brings the
// nipple angle under 10° before rim drilling (1-cross on a big motor
// flange in a small rim is common practice). 36 holes, 130 mm flanges
// 12 mm from centre, ERD 420: at 2-cross the spoke meets the nipple at
// atan(√(41.8² + 12²)/160.2) ≈ 15.2°, at 1-cross atan(√(22.2² + 12²)/148.9)
// ≈ 9.7° (plane geometry: y = r·sin α, x = R − r·cos α, r = 65, R = 210).
func TestNippleAngleRemedy(t *testing.T) {
	f := geometry.Flange{PCDMM: 130, CenterToFlangeMM: 12, HoleDiameterMM: f64(2.6)}
	w := geometry.Wheel{SpokeCount: 36, Hub: geometry.Hub{Kind: geometry.KindMotor, Left: f, Right: f},
		Rim: geometry.Rim{ERDMM: 420}, Crosses: crosses(2, 2)}
	res, fs, cs := assess(t, w)
	fd := has(fs, CodeNippleAngleHigh, "left")
	if fd == nil || !near(res.Left.NippleAngleDeg.Total, 15.2, 0.1) {
		t.Fatalf("want nipple_angle_high at ≈ 15.2°, got %+v (%.2f°)", fs, res.Left.NippleAngleDeg.Total)
	}
	if fd.Values["suggested_crosses"] != 1 || !near(fd.Values["suggested_nipple_angle_deg"], 9.7, 0.1) ||
		!strings.HasPrefix(fd.Remedy, "Lace the left side 1-cross") {
		t.Errorf("remedy %q values %v: want 1-cross at ≈ 9.7° named first", fd.Remedy, fd.Values)
	}
	if !hasCaution(cs, "steep angle") {
		t.Errorf("no caution: %q", cs)
	}
	// Far too steep for any cross count: the rim is the remedy.
	w.Hub.Left.CenterToFlangeMM, w.Hub.Right.CenterToFlangeMM = 40, 40
	_, fs, _ = assess(t, w)
	if fd := has(fs, CodeNippleAngleHigh, "left"); fd == nil || !strings.Contains(fd.Remedy, "drilled at an angle") {
		t.Errorf("want the rim drilling remedy, got %+v", fd)
	}
}

// TestSpokeEndRules: where a stock spoke ends against a typical 12 mm
// nipple (thread from 2 to 8 mm below its head, from memory) and a 14
// gauge spoke's 9.5 mm thread (from memory). The nearest of stock lengths
// 2 mm apart is never judged: it ends within ±1 mm. A stock list whose
// only lengths are 4 mm long or short gets the finding, and the remedy
// names the stock length to use instead.
func TestSpokeEndRules(t *testing.T) {
	for _, inc := range []float64{1, 2} {
		w := rearWheel()
		w.Stock = &geometry.Stock{IncrementMM: f64(inc)}
		res, fs, _ := assess(t, w)
		for _, f := range fs {
			if f.Code == CodeSpokeProtrudesPastNipple || f.Code == CodeThreadEngagementShort || f.Code == CodeSpokeThreadBottoms {
				t.Errorf("nearest %g mm stock (ends %.2f/%.2f mm): unexpected %+v", inc, *res.Left.SpokeEndMM, *res.Right.SpokeEndMM, f)
			}
		}
	}
	w := rearWheel()
	w.Stock = nil
	res, _, _ := assess(t, w)
	left := *res.Left.OrderLengthMM
	// A list holding only a length about 4 mm long: past the head by more
	// than 1 mm, and past the 1.5 mm at which the unthreaded body enters
	// the nipple's thread (9.5 − 8 mm): a warning and an error.
	long := math.Round(left) + 4
	w.Stock = &geometry.Stock{LengthsMM: []float64{long}}
	_, fs, cs := assess(t, w)
	fd := has(fs, CodeSpokeProtrudesPastNipple, "left")
	if fd == nil || fd.Severity != Warning || !hasCaution(cs, "rim tape") {
		t.Fatalf("a %.0f mm spoke for %.2f mm: want spoke_protrudes_past_nipple with a caution, got %+v", long, left, fs)
	}
	if fd := has(fs, CodeSpokeThreadBottoms, "left"); fd == nil || fd.Severity != Error || !contains(fd.Assumed, "nipple") {
		t.Errorf("want spoke_thread_bottoms resting on a typical nipple, got %+v", fd)
	}
	// Short: below −2 mm the engagement is e + 8 mm and must reach 2 × 2 mm
	// (common practice), so a spoke ending 6 mm short is refused.
	short := math.Round(left) - 6
	w.Stock = &geometry.Stock{LengthsMM: []float64{short}}
	_, fs, _ = assess(t, w)
	fd = has(fs, CodeThreadEngagementShort, "left")
	if fd == nil || fd.Severity != Error || !strings.Contains(fd.Remedy, "No available length") {
		t.Errorf("a spoke 6 mm short with no other length: want thread_engagement_short, got %+v", fd)
	}
}

// TestSpokeEndRemedyNamesStock: the spoke-end rules name the stock length
// to use instead. The answer for a length 4 mm too long is judged against
// a stock list that also holds the right one.
func TestSpokeEndRemedyNamesStock(t *testing.T) {
	w := rearWheel()
	res, _, _ := assess(t, w)
	stock := *res.Left.StockLengthMM
	w.Stock = &geometry.Stock{LengthsMM: []float64{stock + 4}}
	long, err := geometry.Compute(w)
	if err != nil {
		t.Fatal(err)
	}
	long.Facts.Stock = &geometry.Stock{LengthsMM: []float64{stock + 4, stock}}
	fs, _ := AssessWheel(w, &long, DefaultOptions())
	fd := has(fs, CodeSpokeProtrudesPastNipple, "left")
	if fd == nil || fd.Values["suggested_length_mm"] != stock || !strings.Contains(fd.Remedy, fmt.Sprintf("Use %.4g mm spokes", stock)) {
		t.Errorf("want the remedy to name %v mm, got %+v", stock, fd)
	}
}

// TestHoleRules: no hole given → the default is assumed and said (info); a
// 3.2 mm hole for a 2.0 mm spoke is loose (1.2 mm > 0.8 mm): a warning.
func TestHoleRules(t *testing.T) {
	w := rearWheel()
	w.Hub.Left.HoleDiameterMM = nil
	w.Hub.Right.HoleDiameterMM = f64(3.2)
	_, fs, _ := assess(t, w)
	if has(fs, CodeHoleDiameterAssumed, "left") == nil || has(fs, CodeSpokeLooseInFlangeHole, "right").Severity != Warning {
		t.Errorf("got %v", codes(fs, Info))
	}
}

// TestKindCautions: a motor hub carries the motor caution; a motor-vehicle
// hub its own (a bicycle rim and tyre are not rated for such a vehicle),
// not the motor one; tandem and cargo hubs the load caution.
func TestKindCautions(t *testing.T) {
	for _, c := range []struct{ kind, want, not string }{
		{geometry.KindMotor, "hub motor", "motor-vehicle"},
		{geometry.KindMotorVehicle, "not rated for a motor vehicle", "hub motor"},
		{geometry.KindTandem, "far more load", "motor"},
		{geometry.KindCargo, "far more load", "motor"},
	} {
		w := rearWheel()
		w.Hub.Kind = c.kind
		_, _, cs := assess(t, w)
		if !hasCaution(cs, c.want) || hasCaution(cs, c.not) {
			t.Errorf("%s: cautions %q", c.kind, cs)
		}
	}
}

// TestSeatPatternRule: tangential seats on a 24-hole wheel (pcd 42, ERD 588)
// send the spokes arccos(21/294) = 85.9° round to the rim; 2-cross puts
// the rim holes 60° round, more than half a flange pitch (15°) away: the
// remedy names 3-cross (90°).
func TestSeatPatternRule(t *testing.T) {
	f := geometry.Flange{PCDMM: 42, CenterToFlangeMM: 30}
	w := geometry.Wheel{SpokeCount: 24, Hub: geometry.Hub{Type: geometry.StraightPull, Left: f, Right: f},
		Rim: geometry.Rim{ERDMM: 588}, Crosses: crosses(2, 3)}
	_, fs, _ := assess(t, w)
	fd := has(fs, CodeSeatPatternMismatch, "left")
	if fd == nil || fd.Values["suggested_crosses"] != 3 || has(fs, CodeSeatPatternMismatch, "right") != nil {
		t.Errorf("want seat_pattern_mismatch on the 2-cross side naming 3-cross, got %+v", fs)
	}
}
