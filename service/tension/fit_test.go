package tension

import (
	"math"
	"testing"
)

// TestFitRecoversSyntheticTool: the fit recovers the synthetic tool's
// parameters (synthTool, generated from the model itself) from its rounded
// 4 × 13 table, each within three standard errors of the truth.
func TestFitRecoversSyntheticTool(t *testing.T) {
	m := synthModel(t)
	ph := m.Physical
	t.Logf("fit: %d iterations, s = %.3f units, dof %d, cond %.3g", ph.Iterations, ph.ResidualSDUnits, ph.DoF, ph.ConditionNumber)
	for j := 0; j < nToolParams; j++ {
		got, se, want := ph.Params[j], ph.SE[j], synthTool[j]
		t.Logf("%-16s true %10.5g  fitted %10.5g  SE %8.3g  (%+.2f SE, %+.2f %%)", ph.ParamNames[j], want, got, se, (got-want)/se, 100*(got-want)/want)
		if math.Abs(got-want) > 3*se {
			t.Errorf("%s = %v ± %v, synthetic truth %v", ph.ParamNames[j], got, se, want)
		}
	}
	// Rounding to whole units leaves uniform errors of SD 1/√12 ≈ 0.29 units.
	if s := ph.ResidualSDUnits; s < 0.15 || s > 0.45 {
		t.Errorf("residual SD %v units, expected near 0.29 from rounding", s)
	}
}

// TestFitExactSyntheticTable: with unrounded synthetic readings the fit
// must return the generating parameters to high precision (the optimiser
// and the analytic Jacobian are consistent with the forward model).
func TestFitExactSyntheticTable(t *testing.T) {
	cal := synthCalibration(t)
	for i := range cal.Columns {
		for j := range cal.Columns[i].Points {
			p := &cal.Columns[i].Points[j]
			p.Reading = synthReading(t, cal.Columns[i].Spoke, p.TensionN)
		}
	}
	m, err := Fit(cal, Tool{})
	if err != nil || m.Physical == nil {
		t.Fatalf("fit: %v %+v", err, m)
	}
	for j := 0; j < nToolParams; j++ {
		if e := relErr(m.Physical.Params[j], synthTool[j]); e > 1e-6 {
			t.Errorf("%s = %.10g, truth %.10g (rel %.2g)", paramNames[j], m.Physical.Params[j], synthTool[j], e)
		}
	}
}

// TestFitSpanCheck: a measured span that disagrees by more than 3 % with the
// fitted one warns (DESIGN.md §4.2 threshold); one that agrees does not.
func TestFitSpanCheck(t *testing.T) {
	for _, c := range []struct {
		span float64
		warn bool
	}{{50, false}, {45, true}} {
		span := c.span
		m, err := Fit(synthCalibration(t), Tool{MeasuredSpanMM: &span})
		if err != nil {
			t.Fatal(err)
		}
		got := hasWarning(m.Warnings, WarnSpanMismatch)
		if got != c.warn {
			t.Errorf("measured span %v: warning %v, want %v (fitted %v)", c.span, got, c.warn, m.Physical.SpanMM)
		}
	}
}

func hasWarning(ws []Warning, code string) bool {
	for _, w := range ws {
		if w.Code == code {
			return true
		}
	}
	return false
}
