package tension

import (
	"math"
	"testing"
)

// TestToolParamsReading: the exported forward model is the one Fit inverts:
// it reproduces the synthetic tool's readings exactly, and a table made with
// it and fitted gives back the parameters (the synthetic tool of
// synthetic_test.go; the fit itself is checked against NIST StRD in lsq_test).
func TestToolParamsReading(t *testing.T) {
	tp := ToolParams{SpanMM: synthTool[pSpan], PreloadN: synthTool[pPreload], SpringNPerMM: synthTool[pSpring],
		ZeroMM: synthTool[pZero], StretchPerMM: synthTool[pStretch]}
	var cal Calibration
	for _, d := range []float64{1.5, 1.8, 2.0, 2.3} {
		col := Column{Spoke: steelRound(d)}
		for tn := 400.0; tn <= 1600; tn += 100 {
			r, err := tp.Reading(col.Spoke, 0, tn)
			if err != nil {
				t.Fatal(err)
			}
			if want := synthReading(t, col.Spoke, tn); r != want {
				t.Fatalf("%g mm at %g N: Reading %v, forward %v", d, tn, r, want)
			}
			col.Points = append(col.Points, Point{TensionN: tn, Reading: r})
		}
		cal.Columns = append(cal.Columns, col)
	}
	m, err := Fit(cal, Tool{})
	if err != nil || m.Physical == nil {
		t.Fatalf("fit: %v %+v", err, m)
	}
	for i, want := range synthTool {
		got := m.Physical.Params[i]
		if math.Abs(got-want) > 1e-4*math.Abs(want) {
			t.Errorf("%s: fitted %g, synthetic %g", paramNames[i], got, want)
		}
	}
	if _, err := tp.Reading(steelRound(0), 0, 1000); err == nil {
		t.Error("a zero diameter gave a reading")
	}
	if _, err := tp.Reading(steelRound(2), 0, math.NaN()); err == nil {
		t.Error("a NaN tension gave a reading")
	}
}
