package tension

import (
	"math"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"
)

// TestAudit: an invented 16-spoke wheel read with the synthetic tool. The
// right side is laced near 1100 N with one spoke 20 % high and one 20 %
// low, the left near 1100 × 0.6 N. Readings are generated from the
// synthetic tool at those tensions, so the audit's numbers can be derived.
func TestAudit(t *testing.T) {
	m := synthModel(t)
	spec := steelRound(2.0)
	right := []float64{1100, 1100, 1320, 1100, 880, 1100, 1100, 1100}
	left := []float64{660, 660, 660, 660, 660, 660, 660, 660}
	var rds []AuditReading
	for i, tn := range right {
		rds = append(rds, AuditReading{Side: "right", Spoke: 2*i + 1, Reading: synthReading(t, spec, tn)})
	}
	for i, tn := range left {
		rds = append(rds, AuditReading{Side: "left", Spoke: 2 * i, Reading: synthReading(t, spec, tn)})
	}
	target, geo := 1100.0, 0.6
	out, err := m.Audit(AuditRequest{Spoke: whole(spec), Readings: rds, TargetTensionN: &target, GeometricLeftRightRatio: &geo})
	if err != nil {
		t.Fatal(err)
	}
	if out.TolerancePct != 10 {
		t.Errorf("default tolerance %v, want 10 (common practice)", out.TolerancePct)
	}
	side := map[string]SideSummary{}
	for _, s := range out.Sides {
		side[s.Side] = s
	}
	// Right mean: (6·1100 + 1320 + 880)/8 = 1100; left aim 1100·0.6 = 660.
	// The column curve runs through a table rounded to whole units (12–20 N
	// per unit at 2.0 mm), so tensions come back within about 1.5 % of the
	// truth.
	r := side["right"]
	if math.Abs(r.MeanN-1100) > 16.5 || r.AimN != 1100 || math.Abs(side["left"].AimN-660) > 1e-9 {
		t.Errorf("sides: %+v", out.Sides)
	}
	// Spokes at ±20 % of the mean are outliers beyond ±10 %: indices 5 and 9.
	if diff := cmp.Diff([]int{5, 9}, r.Outliers); diff != "" {
		t.Errorf("right outliers (-want +got):\n%s", diff)
	}
	// SD of {6×1100, 1320, 880}: √((220² + 220²)/7) = 117.6 N.
	if math.Abs(r.SDN-117.6) > 5 {
		t.Errorf("right SD %v, want ≈ 117.6", r.SDN)
	}
	actions := map[int]string{}
	for _, v := range out.Spokes {
		actions[v.Spoke] = v.Action
	}
	if actions[5] != "loosen" || actions[9] != "tighten" || actions[1] != "ok" || actions[0] != "ok" {
		t.Errorf("actions %v", actions)
	}
	// Measured ratio 660/1100 = 0.6 against the geometric 0.6: no warning.
	if out.MeasuredLeftRightRatio == nil || math.Abs(*out.MeasuredLeftRightRatio-0.6) > 0.01 || hasWarning(out.Warnings, WarnRatioMismatch) {
		t.Errorf("ratio %v, warnings %+v", out.MeasuredLeftRightRatio, out.Warnings)
	}
	// The aim reading converts back to the aim (forward–inverse property).
	back, err := m.Convert(spec, r.AimReading)
	if err != nil || math.Abs(back.TensionN-1100) > 1e-6 {
		t.Errorf("aim reading %v → %v, %v", r.AimReading, back.TensionN, err)
	}
	// A geometric ratio of 0.8 disagrees with the measured 0.6 by 25 %.
	geo = 0.8
	out, err = m.Audit(AuditRequest{Spoke: whole(spec), Readings: rds, TargetTensionN: &target, GeometricLeftRightRatio: &geo})
	if err != nil || !hasWarning(out.Warnings, WarnRatioMismatch) {
		t.Errorf("ratio mismatch not flagged: %v %+v", err, out.Warnings)
	}
	// Bad side → 400 at its pointer.
	rds[3].Side = "front"
	_, err = m.Audit(AuditRequest{Spoke: whole(spec), Readings: rds})
	if fe := fieldErr(t, err); fe.Pointer != "/readings/3/side" || fe.Unprocessable {
		t.Errorf("bad side: %+v", fe)
	}
}

// discFront is an invented disc front read with the synthetic tool on
// 2.0 mm spokes: the rotor (left) side is the tighter one, geometric
// ratio T_left/T_right = 1.213, built to a 1150 N target, so the left
// spokes carry 1150 N and the right 1150/1.213 = 948.0627 N (by hand:
// 1.213 × 948 = 1149.924, and 0.076/1.213 = 0.0627).
func discFront(t *testing.T) []AuditReading {
	var rds []AuditReading
	for i := range 8 {
		rds = append(rds, AuditReading{Side: "left", Spoke: 2 * i, Reading: synthReading(t, steelRound(2.0), 1150)},
			AuditReading{Side: "right", Spoke: 2*i + 1, Reading: synthReading(t, steelRound(2.0), 1150/1.213)})
	}
	return rds
}

func aimsOf(out AuditResult) map[string]float64 {
	aims := map[string]float64{}
	for _, s := range out.Sides {
		aims[s.Side] = s.AimN
	}
	return aims
}

// TestAuditTargetIsTheTighterSide: the target tension is the tighter
// side's. On the disc front the target goes to the left; before, it went
// to target_side's default (right), so the rotor side was aimed at
// 1150 × 1.213 = 1394.95 N and every left spoke read as 17.6 % slack.
func TestAuditTargetIsTheTighterSide(t *testing.T) {
	m := synthModel(t)
	rds := discFront(t)
	target, ratio := 1150.0, 1.213
	out, err := m.Audit(AuditRequest{Spoke: whole(steelRound(2.0)), Readings: rds, TargetTensionN: &target, GeometricLeftRightRatio: &ratio})
	if err != nil {
		t.Fatal(err)
	}
	aims := aimsOf(out)
	if out.TargetSide != "left" || aims["left"] != 1150 || math.Abs(aims["right"]-948.0627) > 1e-4 {
		t.Errorf("target side %q, aims %v; want left 1150, right 948.0627", out.TargetSide, aims)
	}
	for _, v := range out.Spokes {
		if v.Action != "ok" {
			t.Errorf("%s spoke %d at %.0f N: %s (vs aim %+.1f %%)", v.Side, v.Spoke, v.TensionN, v.Action, v.VsAimPct)
		}
	}
	// target_side naming the tighter side agrees; naming the slacker side
	// is refused with a 422 at /target_side that states the rule.
	out2, err := m.Audit(AuditRequest{Spoke: whole(steelRound(2.0)), Readings: rds, TargetTensionN: &target, GeometricLeftRightRatio: &ratio, TargetSide: "left"})
	if err != nil || !cmp.Equal(aimsOf(out2), aims) {
		t.Errorf("target_side left: %v %v", err, aimsOf(out2))
	}
	_, err = m.Audit(AuditRequest{Spoke: whole(steelRound(2.0)), Readings: rds, TargetTensionN: &target, GeometricLeftRightRatio: &ratio, TargetSide: "right"})
	if fe := fieldErr(t, err); fe.Pointer != "/target_side" || !fe.Unprocessable || !strings.Contains(fe.Message, "tighter side is the left") {
		t.Errorf("target_side right on a disc front: %+v", fe)
	}
	// A rear wheel (ratio 0.6 < 1): the right is the tighter side; the
	// left's aim is 1100 × 0.6 = 660 N. target_side left is refused.
	rear := 0.6
	t1100 := 1100.0
	out, err = m.Audit(AuditRequest{Spoke: whole(steelRound(2.0)), Readings: rds, TargetTensionN: &t1100, GeometricLeftRightRatio: &rear})
	if a := aimsOf(out); err != nil || out.TargetSide != "right" || a["right"] != 1100 || math.Abs(a["left"]-660) > 1e-9 {
		t.Errorf("rear: %v %q %v", err, out.TargetSide, a)
	}
	_, err = m.Audit(AuditRequest{Spoke: whole(steelRound(2.0)), Readings: rds, TargetTensionN: &t1100, GeometricLeftRightRatio: &rear, TargetSide: "left"})
	if fe := fieldErr(t, err); fe.Pointer != "/target_side" || !fe.Unprocessable {
		t.Errorf("target_side left on a rear wheel: %+v", fe)
	}
	// Ratio 1 (undished): both sides are the tighter one; either side may be named.
	one := 1.0
	for _, side := range []string{"", "left", "right"} {
		out, err = m.Audit(AuditRequest{Spoke: whole(steelRound(2.0)), Readings: rds, TargetTensionN: &target, GeometricLeftRightRatio: &one, TargetSide: side})
		if a := aimsOf(out); err != nil || out.TargetSide != "both" || a["left"] != 1150 || a["right"] != 1150 {
			t.Errorf("ratio 1, target_side %q: %v %q %v", side, err, out.TargetSide, a)
		}
	}
}

// TestAuditTargetWithoutRatio: without the geometric ratio the target
// applies to both sides with a no_geometric_ratio warning; with
// target_side it applies to that side only and the other side is judged
// against its own mean (also warned). Without a target, no_target.
func TestAuditTargetWithoutRatio(t *testing.T) {
	m := synthModel(t)
	rds := discFront(t)
	target := 1150.0
	out, err := m.Audit(AuditRequest{Spoke: whole(steelRound(2.0)), Readings: rds, TargetTensionN: &target})
	if a := aimsOf(out); err != nil || out.TargetSide != "both" || a["left"] != 1150 || a["right"] != 1150 || !hasWarning(out.Warnings, WarnNoGeometricRatio) {
		t.Errorf("no ratio: %v %q %v %+v", err, out.TargetSide, a, out.Warnings)
	}
	out, err = m.Audit(AuditRequest{Spoke: whole(steelRound(2.0)), Readings: rds, TargetTensionN: &target, TargetSide: "left"})
	if err != nil {
		t.Fatal(err)
	}
	var right SideSummary
	for _, s := range out.Sides {
		if s.Side == "right" {
			right = s
		}
	}
	if a := aimsOf(out); out.TargetSide != "left" || a["left"] != 1150 || right.AimN != right.MeanN || !hasWarning(out.Warnings, WarnNoGeometricRatio) {
		t.Errorf("target_side left, no ratio: %q %v (right mean %v) %+v", out.TargetSide, a, right.MeanN, out.Warnings)
	}
	out, err = m.Audit(AuditRequest{Spoke: whole(steelRound(2.0)), Readings: rds})
	if err != nil || out.TargetSide != "" || !hasWarning(out.Warnings, WarnNoTarget) || hasWarning(out.Warnings, WarnNoGeometricRatio) {
		t.Errorf("no target: %v %q %+v", err, out.TargetSide, out.Warnings)
	}
	// A target_side that is neither side is malformed (400).
	_, err = m.Audit(AuditRequest{Spoke: whole(steelRound(2.0)), Readings: rds, TargetTensionN: &target, TargetSide: "front"})
	if fe := fieldErr(t, err); fe.Pointer != "/target_side" || fe.Unprocessable {
		t.Errorf("target_side front: %+v", fe)
	}
}
