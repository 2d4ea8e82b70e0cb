package tension

import (
	"math"
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
	out, err := m.Audit(AuditRequest{Spoke: spec, Readings: rds, TargetTensionN: &target, GeometricLeftRightRatio: &geo})
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
	out, err = m.Audit(AuditRequest{Spoke: spec, Readings: rds, TargetTensionN: &target, GeometricLeftRightRatio: &geo})
	if err != nil || !hasWarning(out.Warnings, WarnRatioMismatch) {
		t.Errorf("ratio mismatch not flagged: %v %+v", err, out.Warnings)
	}
	// Bad side → 400 at its pointer.
	rds[3].Side = "front"
	_, err = m.Audit(AuditRequest{Spoke: spec, Readings: rds})
	if fe := fieldErr(t, err); fe.Pointer != "/readings/3/side" || fe.Unprocessable {
		t.Errorf("bad side: %+v", fe)
	}
}
