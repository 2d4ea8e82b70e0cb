package geometry

import (
	"strings"
	"testing"
)

// The thresholds behind these findings are rules of thumb (common practice,
// see DefaultOptions); each test builds a wheel on either side of one.

// TestHeadOverlap, by plane geometry: 36 holes 4-cross on a 45 mm flange,
// hole H at (22.5, 0), the next hole P at 20° = (21.14, 7.70), rim hole at
// 80° on R = 300 = (52.09, 295.44): the unit spoke direction is (0.0997,
// 0.9950) and |HP × u| = |−1.357·0.9950 − 7.695·0.0997| ≈ 2.12 mm, less
// than head radius 2 + spoke radius 1 mm: it runs over the head. At 3-cross
// (rim hole at 60°) the gap is ≈ 4.6 mm: clear.
func TestHeadOverlap(t *testing.T) {
	f := Flange{PCDMM: 45, CenterToFlangeMM: 35, HoleDiameterMM: fp(2.6)}
	mk := func(n, k int) Wheel {
		return Wheel{SpokeCount: n, Hub: Hub{Left: f, Right: f}, Rim: Rim{ERDMM: 600}, Crosses: cross(k, k), Spoke: &Spoke{DiameterMM: fp(2)}}
	}
	res, err := Compute(mk(36, 4))
	if err != nil {
		t.Fatal(err)
	}
	if !hasCode(res, CodeHeadOverlap, "left") || !hasCode(res, CodeHeadOverlap, "right") {
		t.Errorf("36h 4-cross on 45 mm flanges: want head_overlap both sides, got %+v", res.Findings)
	}
	if len(res.Cautions) == 0 {
		t.Errorf("head overlap needs a caution")
	}
	res, _ = Compute(mk(36, 3))
	if hasCode(res, CodeHeadOverlap, "left") {
		t.Errorf("36h 3-cross: unexpected head_overlap %+v", res.Findings)
	}
	// A straight-pull hub has no heads on the flange.
	w := mk(36, 4)
	w.Hub.Type = StraightPull
	w.Hub.Left.HoleDiameterMM, w.Hub.Right.HoleDiameterMM = nil, nil
	res, _ = Compute(w)
	if hasCode(res, CodeHeadOverlap, "left") {
		t.Errorf("straight pull: unexpected head_overlap")
	}
}

// TestTorqueSides: a radially laced rotor side cannot carry braking torque,
// nor a radial drive side pedalling torque (statics: a radial spoke has no
// tangential component at the hub).
func TestTorqueSides(t *testing.T) {
	w := contractWheel()
	w.Hub.DiscBrake = true
	w.Crosses = cross(0, 3)
	res, err := Compute(w)
	if err != nil {
		t.Fatal(err)
	}
	if !hasCode(res, CodeRadialDiscSide, "left") || len(res.Cautions) == 0 {
		t.Errorf("radial disc side: want radial_disc_side and a caution, got %+v / %q", res.Findings, res.Cautions)
	}
	w.Hub.DiscBrake, w.Hub.Driven = false, true
	w.Crosses = cross(3, 0)
	res, _ = Compute(w)
	if !hasCode(res, CodeRadialDriveSide, "right") || hasCode(res, CodeRadialDiscSide, "left") {
		t.Errorf("radial drive side: got %+v", res.Findings)
	}
	w.Hub.Driven = false
	res, _ = Compute(w)
	if hasCode(res, CodeRadialDriveSide, "right") {
		t.Errorf("radial right side of an undriven hub is no finding")
	}
	w.Hub.Motor = true
	w.Crosses = cross(0, 3)
	res, _ = Compute(w)
	if !hasCode(res, CodeRadialDriveSide, "left") || len(res.Cautions) < 2 {
		t.Errorf("motor hub radial left: want radial_drive_side and motor cautions, got %+v / %q", res.Findings, res.Cautions)
	}
}

// TestDishFindings: a deeply dished rear (right flange 12 mm from centre)
// has a bracing angle near 2.3° (atan(12/~291)) below 3°, a tension ratio
// beyond 2:1 and, at 1000 N, a left side near 1000·(12/291)/(36/293) ≈ 336 N
// below 500 N — each with its caution.
func TestDishFindings(t *testing.T) {
	w := contractWheel()
	w.Hub.Right.CenterToFlangeMM = 12
	w.TargetTensionN = fp(1000)
	res, err := Compute(w)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct{ code, side string }{
		{CodeLowBracingAngle, "right"}, {CodeTensionRatioHigh, ""}, {CodeLowSideTension, "left"},
	} {
		if !hasCode(res, c.code, c.side) {
			t.Errorf("want %s (%s), got %+v", c.code, c.side, res.Findings)
		}
	}
	if len(res.Cautions) < 2 {
		t.Errorf("want cautions for the slack side, got %q", res.Cautions)
	}
	// The contract example (18.5 mm) stays clear of all three.
	res, _ = Compute(contractWheel())
	for _, code := range []string{CodeLowBracingAngle, CodeTensionRatioHigh, CodeLowSideTension} {
		for _, f := range res.Findings {
			if f.Code == code {
				t.Errorf("contract example: unexpected %+v", f)
			}
		}
	}
	// Options move the thresholds.
	o := Options{MaxTensionRatio: 1.5, MinBracingAngleDeg: 4}
	res, _ = o.Compute(contractWheel())
	if !hasCode(res, CodeTensionRatioHigh, "") || !hasCode(res, CodeLowBracingAngle, "right") {
		t.Errorf("stricter options: want tension_ratio_high and low_bracing_angle, got %+v", res.Findings)
	}
}

// TestStressAndNipple: 7075 aluminium 2.0 mm at 1100 N carries
// 1100/π = 350 MPa, above 50 % of its 572 MPa UTS (materials.tsv); steel
// does not (350 < 848). A 20 mm offset-free hub on a small rim sends the
// spoke in at more than 10° to the radius.
func TestStressAndNipple(t *testing.T) {
	w := contractWheel()
	w.Spoke.Material = "aluminium"
	res, err := Compute(w)
	if err != nil {
		t.Fatal(err)
	}
	if !hasCode(res, CodeSpokeStressHigh, "right") || len(res.Cautions) == 0 {
		t.Errorf("aluminium at 1100 N: want spoke_stress_high with a caution, got %+v", res.Findings)
	}
	res, _ = Compute(contractWheel())
	if hasCode(res, CodeSpokeStressHigh, "right") {
		t.Errorf("steel at 1100 N: unexpected spoke_stress_high")
	}
	w = contractWheel()
	w.Rim.ERDMM = 300
	w.Crosses = cross(2, 2)
	res, err = Compute(w)
	if err != nil {
		t.Fatal(err)
	}
	// Left: atan(36/(150 − 22.5·cos 45°)) ≈ 14.6° out of plane alone.
	if !hasCode(res, CodeNippleAngleHigh, "left") {
		t.Errorf("small rim, wide flange: want nipple_angle_high, got %+v (angles %+v)", res.Findings, res.Left.NippleAngleDeg)
	}
}

// TestHoleFindings: no hole given → the default is assumed and said; a
// 3.2 mm hole for a 2.0 mm spoke is loose (1.2 mm > 0.8 mm).
func TestHoleFindings(t *testing.T) {
	w := contractWheel()
	w.Hub.Left.HoleDiameterMM = nil
	w.Hub.Right.HoleDiameterMM = fp(3.2)
	res, err := Compute(w)
	if err != nil {
		t.Fatal(err)
	}
	if !hasCode(res, CodeHoleDiameterAssumed, "left") || !hasCode(res, CodeHoleLoose, "right") {
		t.Errorf("got %+v", res.Findings)
	}
	for _, f := range res.Findings {
		if f.Severity != SeverityInfo && f.Severity != SeverityWarning && f.Severity != SeverityError {
			t.Errorf("finding %+v: bad severity", f)
		}
		if f.Message == "" || strings.ToLower(f.Code) != f.Code {
			t.Errorf("finding %+v: needs a message and a snake_case code", f)
		}
	}
}

// TestHeadGapHandValue pins the gap of the 36h 4-cross case to the hand
// value above (≈ 2.12 mm, to the 0.01 mm the hand arithmetic carries).
func TestHeadGapHandValue(t *testing.T) {
	g := lacingSide(36, 300, &side{r: 22.5, z: 35, crosses: 4})
	if !near(g.headGap, 2.12, 0.01) {
		t.Errorf("head gap %.4f mm, hand value ≈ 2.12", g.headGap)
	}
	g = lacingSide(36, 300, &side{r: 22.5, z: 35, crosses: 3})
	if !near(g.headGap, 4.6, 0.05) {
		t.Errorf("head gap %.4f mm at 3-cross, hand value ≈ 4.6", g.headGap)
	}
}
