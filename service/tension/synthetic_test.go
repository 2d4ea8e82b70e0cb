package tension

import (
	"math"
	"testing"
	"wheelbench/service/spoke"
)

// synthTool is a SYNTHETIC tensiometer invented for the tests: its readings
// are generated from the package's own physical model with known
// parameters, so a fit must recover them. It is not data from any real tool.
var synthTool = [nToolParams]float64{
	pSpan:    50,     // mm between the anvils
	pPreload: 120,    // N plunger preload
	pSpring:  15,     // N/mm plunger spring rate
	pZero:    2.0,    // mm dial zero
	pStretch: 1.5e-3, // 1/mm share of the tool's stretch the wheel keeps, per mm of spoke
}

func steelRound(d float64) SpokeSpec {
	return SpokeSpec{Profile: "round", DiameterMM: d, Material: "stainless_steel"}
}

// synthReading is the exact reading of the synthetic tool (not rounded).
func synthReading(t testing.TB, spec SpokeSpec, tN float64) float64 {
	t.Helper()
	sec, err := spec.resolve("")
	if err != nil {
		t.Fatal(err)
	}
	r, _, ok := forward(synthTool[:], evalSection{ei0: sec.EI, ea: sec.EA, t: sec.T, kEI: 1, iK: -1, iC: -1}, 0.01, tN)
	if !ok {
		t.Fatalf("synthetic tool: no reading for %+v at %v N", spec, tN)
	}
	return r
}

// synthCalibration is the synthetic tool's maker table: round steel
// 1.5, 1.8, 2.0, 2.3 mm × 13 tensions 400…1600 N, readings rounded to whole
// dial units as a table prints them.
func synthCalibration(t testing.TB) Calibration {
	t.Helper()
	var cal Calibration
	cal.Source = SourceMakerTable
	for _, d := range []float64{1.5, 1.8, 2.0, 2.3} {
		col := Column{Spoke: steelRound(d)}
		for tn := 400.0; tn <= 1600; tn += 100 {
			col.Points = append(col.Points, Point{TensionN: tn, Reading: math.Round(synthReading(t, col.Spoke, tn))})
		}
		cal.Columns = append(cal.Columns, col)
	}
	return cal
}

func synthModel(t testing.TB) *Model {
	t.Helper()
	m, err := Fit(synthCalibration(t), Tool{})
	if err != nil {
		t.Fatal(err)
	}
	if m.Physical == nil {
		t.Fatalf("synthetic calibration did not identify the model: %s", m.Unidentified)
	}
	return m
}

// whole is a section as a whole spoke of that section all along (a round
// one by its diameter), for the requests that take a spoke.
func whole(s SpokeSpec) spoke.Spec {
	out := spoke.Spec{Profile: spoke.Profile(s.Profile), Material: s.Material, EGPa: s.EGPa}
	if s.Profile == "" || s.Profile == string(spoke.Round) {
		d := s.DiameterMM
		out.DiameterMM = &d
	} else {
		w, t := s.WidthMM, s.ThicknessMM
		out.WidthMM, out.ThicknessMM = &w, &t
	}
	return out
}

func wholePtr(s SpokeSpec) *spoke.Spec { w := whole(s); return &w }
