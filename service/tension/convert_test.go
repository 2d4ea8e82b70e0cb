package tension

import (
	"encoding/json"
	"errors"
	"math"
	"testing"

	"github.com/google/go-cmp/cmp"

	"wheelbench/service/field"
)

func fieldErr(t *testing.T, err error) *field.Error {
	t.Helper()
	var fe *field.Error
	if !errors.As(err, &fe) {
		t.Fatalf("want a *field.Error, got %v", err)
	}
	return fe
}

// TestConvertOutsideTable: readings of the synthetic tool on sections
// outside its 1.5–2.3 mm round steel table convert to intervals that hold
// the synthetic truth (the tension the reading was generated at).
func TestConvertOutsideTable(t *testing.T) {
	m := synthModel(t)
	e := 113.8
	cases := []struct {
		name string
		spec SpokeSpec
	}{
		{"2.6 mm steel", steelRound(2.6)},
		{"3.2 mm steel", steelRound(3.2)},
		{"1.9 mm steel (between columns)", steelRound(1.9)},
		{"2.0 mm titanium", SpokeSpec{DiameterMM: 2.0, Material: "titanium"}},
		{"2.0 mm e_gpa 113.8", SpokeSpec{DiameterMM: 2.0, EGPa: &e}},
		{"blade 2.3 × 1.3 mm", SpokeSpec{Profile: "bladed", WidthMM: 2.3, ThicknessMM: 1.3, Material: "stainless_steel"}},
		{"blade 2.2 × 1.0 mm", SpokeSpec{Profile: "bladed", WidthMM: 2.2, ThicknessMM: 1.0, Material: "stainless_steel"}},
	}
	for _, c := range cases {
		for _, truth := range []float64{600, 1000, 1400} {
			// The builder reads a whole dial unit; truth generated it.
			r := math.Round(synthReading(t, c.spec, truth))
			res, err := m.Convert(c.spec, r)
			if err != nil {
				t.Errorf("%s at %v N (reading %v): %v", c.name, truth, r, err)
				continue
			}
			// The reading was rounded, so truth lies within the interval of
			// some reading within ±0.5 units; the half-unit model-form term
			// in the interval covers that.
			covered := truth >= res.IntervalN[0] && truth <= res.IntervalN[1]
			if !res.Reliable {
				// Flagged unreliable (stiffness ratio beyond 2.2 or a wide
				// interval): coverage is not promised, the flag and its
				// caution are.
				if !hasWarning(res.Warnings, WarnUnreliable) || len(res.Cautions) == 0 {
					t.Errorf("%s: unreliable without warning or caution: %+v", c.name, res)
				}
				if !covered {
					t.Logf("%s at %v N: flagged unreliable, interval %.1f–%.1f misses the truth", c.name, truth, res.IntervalN[0], res.IntervalN[1])
				}
			} else if !covered {
				t.Errorf("%s at %v N: reading %v → %.1f N, interval %.1f–%.1f misses the truth", c.name, truth, r, res.TensionN, res.IntervalN[0], res.IntervalN[1])
			}
			if res.Method != MethodModel {
				t.Errorf("%s: method %q", c.name, res.Method)
			}
			t.Logf("%-30s %5.0f N: reading %4.0f → %7.1f N [%7.1f, %7.1f] %s ratio %.2f Δd %+.2f res %.1f N/unit sens %.1f reliable %v",
				c.name, truth, r, res.TensionN, res.IntervalN[0], res.IntervalN[1], res.Status, res.StiffnessRatio, res.DeltaDiameterMM,
				res.ResolutionNPerUnit, *res.SensitivityNPer001MM, res.Reliable)
		}
	}
}

// TestConvertStatusAndWarnings checks statuses, thresholds and cautions.
func TestConvertStatusAndWarnings(t *testing.T) {
	m := synthModel(t)
	cal := synthCalibration(t)
	col := cal.Columns[2] // 2.0 mm
	// At a table point: calibrated, the table's tension exactly.
	p := col.Points[5]
	res, err := m.Convert(col.Spoke, p.Reading)
	if err != nil {
		t.Fatal(err)
	}
	if res.Status != StatusCalibrated || res.Method != MethodColumn || res.TensionN != p.TensionN {
		t.Errorf("table point: %+v", res)
	}
	// Between two table points: interpolated, between their tensions.
	mid := (col.Points[5].Reading + col.Points[6].Reading) / 2
	res, err = m.Convert(col.Spoke, mid)
	if err != nil {
		t.Fatal(err)
	}
	if res.Status != StatusInterpolated || res.TensionN <= col.Points[5].TensionN || res.TensionN >= col.Points[6].TensionN {
		t.Errorf("between points: %+v", res)
	}
	// 3.2 mm: EI ratio (3.2/2.3)⁴ = 3.75 > 2.2 → all three stiffness warnings,
	// unreliable, extrapolated, with cautions.
	res, err = m.Convert(steelRound(3.2), math.Round(synthReading(t, steelRound(3.2), 1000)))
	if err != nil {
		t.Fatal(err)
	}
	for _, code := range []string{WarnStiffnessVerify, WarnStiffnessCalibrate, WarnUnreliable, WarnCoarseResolution} {
		if !hasWarning(res.Warnings, code) {
			t.Errorf("3.2 mm: missing %s in %+v", code, res.Warnings)
		}
	}
	if res.Reliable || res.Status != StatusExtrapolated || len(res.Cautions) < 2 {
		t.Errorf("3.2 mm: reliable %v status %s cautions %q", res.Reliable, res.Status, res.Cautions)
	}
	if want := math.Pow(3.2/2.3, 4); math.Abs(res.StiffnessRatio-want) > 1e-9 {
		t.Errorf("stiffness ratio %v, (3.2/2.3)⁴ = %v", res.StiffnessRatio, want)
	}
	if math.Abs(res.DeltaDiameterMM-0.9) > 1e-9 {
		t.Errorf("Δd %v, want 3.2 − 2.3 = 0.9", res.DeltaDiameterMM)
	}
	// 2.5 mm: ratio (2.5/2.3)⁴ = 1.396 → verify only.
	res, err = m.Convert(steelRound(2.5), math.Round(synthReading(t, steelRound(2.5), 1000)))
	if err != nil {
		t.Fatal(err)
	}
	if !hasWarning(res.Warnings, WarnStiffnessVerify) || hasWarning(res.Warnings, WarnStiffnessCalibrate) {
		t.Errorf("2.5 mm warnings %+v", res.Warnings)
	}
	if res.Status != StatusExtrapolated || len(res.Cautions) == 0 {
		t.Errorf("2.5 mm: status %s cautions %q", res.Status, res.Cautions)
	}
	// Units beside the newtons (definitions in units.go).
	if math.Abs(res.TensionKgf*NewtonsPerKgf-res.TensionN) > 1e-9 || math.Abs(res.TensionLbf*NewtonsPerLbf-res.TensionN) > 1e-9 {
		t.Errorf("kgf/lbf inconsistent: %+v", res)
	}
}

// TestForwardInverse: target tension → reading → tension returns the
// target, for a column, a model section and a refined one (property).
func TestForwardInverse(t *testing.T) {
	m := synthModel(t)
	for _, spec := range []SpokeSpec{steelRound(2.0), steelRound(2.6), steelRound(1.65), {DiameterMM: 2.0, Material: "titanium"}} {
		for _, tn := range []float64{450, 800, 1234.5, 1600, 1900} {
			tg, err := m.Target(spec, tn)
			if err != nil {
				t.Errorf("%+v %v N: %v", spec, tn, err)
				continue
			}
			res, err := m.Convert(spec, tg.Reading)
			if err != nil {
				t.Errorf("%+v reading %v: %v", spec, tg.Reading, err)
				continue
			}
			if math.Abs(res.TensionN-tn) > 1e-6*tn {
				t.Errorf("%+v: %v N → reading %v → %v N", spec, tn, tg.Reading, res.TensionN)
			}
			if !(tg.ReadingInterval[0] < tg.Reading && tg.Reading < tg.ReadingInterval[1]) {
				t.Errorf("reading interval %v around %v", tg.ReadingInterval, tg.Reading)
			}
		}
	}
}

// TestConvertMonotone: tension and both interval ends rise with the
// reading, for a column section and a model section (property).
func TestConvertMonotone(t *testing.T) {
	m := synthModel(t)
	for _, spec := range []SpokeSpec{steelRound(2.0), steelRound(2.6)} {
		lo := math.Ceil(synthReading(t, spec, 500))
		hi := math.Floor(synthReading(t, spec, 1500))
		var prev Result
		for r := lo; r <= hi; r += 0.25 {
			res, err := m.Convert(spec, r)
			if err != nil {
				t.Fatal(err)
			}
			if r > lo && (res.TensionN <= prev.TensionN || res.IntervalN[0] < prev.IntervalN[0] || res.IntervalN[1] < prev.IntervalN[1]) {
				t.Fatalf("%+v: not monotone at reading %v: %+v after %+v", spec, r, res, prev)
			}
			if !(res.IntervalN[0] <= res.TensionN && res.TensionN <= res.IntervalN[1]) {
				t.Fatalf("estimate outside its interval: %+v", res)
			}
			prev = res
		}
	}
}

// TestRefusals: what must be refused, with the pointer and the status class.
func TestRefusals(t *testing.T) {
	one := Calibration{Columns: []Column{synthCalibration(t).Columns[2]}}
	m1, err := Fit(one, Tool{})
	if err != nil {
		t.Fatal(err)
	}
	if m1.Physical != nil || m1.Unidentified == "" {
		t.Fatalf("one column identified the model: %+v", m1.Physical)
	}
	// The calibrated column still converts …
	if _, err := m1.Convert(steelRound(2.0), one.Columns[0].Points[3].Reading); err != nil {
		t.Errorf("single column, own section: %v", err)
	}
	// … another diameter is refused (422 at /spoke).
	_, err = m1.Convert(steelRound(2.6), 100)
	if fe := fieldErr(t, err); fe.Pointer != "/spoke" || !fe.Unprocessable {
		t.Errorf("single column + other diameter: %+v", fe)
	}

	// A non-monotone column: 422 naming column 1, point 4.
	bad := synthCalibration(t)
	bad.Columns[1].Points[4].Reading = bad.Columns[1].Points[3].Reading - 3
	_, err = Fit(bad, Tool{})
	if fe := fieldErr(t, err); fe.Pointer != "/columns/1/points/4/reading" || !fe.Unprocessable {
		t.Errorf("non-monotone column: %+v", fe)
	}

	// A reading beyond what the model can produce: 422 at /reading.
	m := synthModel(t)
	_, err = m.Convert(steelRound(2.6), 1e5)
	if fe := fieldErr(t, err); fe.Pointer != "/reading" || !fe.Unprocessable {
		t.Errorf("reading out of reach: %+v", fe)
	}
	_, err = m.Convert(steelRound(2.6), -1e5)
	if fe := fieldErr(t, err); fe.Pointer != "/reading" || !fe.Unprocessable {
		t.Errorf("reading below reach: %+v", fe)
	}

	// Malformed values: 400s with pointers, several joined.
	mal := synthCalibration(t)
	mal.Columns[0].Points[2].TensionN = math.NaN()
	mal.Columns[3].Spoke.Material = "unobtainium"
	_, err = Fit(mal, Tool{UnitMM: -1})
	var got []string
	for _, e := range err.(interface{ Unwrap() []error }).Unwrap() {
		collect(e, &got)
	}
	want := []string{"/unit_mm", "/columns/0/points/2/tension_n", "/columns/3/spoke/material"}
	if diff := cmp.Diff(want, got); diff != "" {
		t.Errorf("pointers (-want +got):\n%s", diff)
	}

	// Out-of-reach reading in a request points at its index.
	_, err = m.ConvertRequest(ConversionRequest{Spoke: whole(steelRound(2.6)), Readings: []float64{math.Round(synthReading(t, steelRound(2.6), 1000)), 1e5}})
	if fe := fieldErr(t, err); fe.Pointer != "/readings/1" {
		t.Errorf("request pointer %q", fe.Pointer)
	}
}

func collect(err error, out *[]string) {
	if multi, ok := err.(interface{ Unwrap() []error }); ok {
		for _, e := range multi.Unwrap() {
			collect(e, out)
		}
		return
	}
	var fe *field.Error
	if errors.As(err, &fe) {
		*out = append(*out, fe.Pointer)
	}
}

// TestModelJSONRoundTrip: a stored and reloaded model converts identically.
func TestModelJSONRoundTrip(t *testing.T) {
	m := synthModel(t)
	b, err := json.Marshal(m)
	if err != nil {
		t.Fatal(err)
	}
	var back Model
	if err := json.Unmarshal(b, &back); err != nil {
		t.Fatal(err)
	}
	for _, spec := range []SpokeSpec{steelRound(2.0), steelRound(2.9)} {
		r := math.Round(synthReading(t, spec, 1100))
		a, err1 := m.Convert(spec, r)
		c, err2 := back.Convert(spec, r)
		if err1 != nil || err2 != nil {
			t.Fatal(err1, err2)
		}
		if diff := cmp.Diff(a, c); diff != "" {
			t.Errorf("%+v after JSON (-before +after):\n%s", spec, diff)
		}
	}
}

// TestRequestTargets: kgf and lbf targets convert through their definitions.
func TestRequestTargets(t *testing.T) {
	m := synthModel(t)
	kgf := 120.0
	out, err := m.ConvertRequest(ConversionRequest{Spoke: whole(steelRound(2.0)), TargetTensionKgf: &kgf})
	if err != nil {
		t.Fatal(err)
	}
	// 120 kgf = 1176.798 N (CGPM 1901 definition).
	if out.Target == nil || math.Abs(out.Target.TensionN-1176.798) > 1e-9 {
		t.Errorf("target %+v", out.Target)
	}
	n := 1000.0
	if _, err := m.ConvertRequest(ConversionRequest{Spoke: whole(steelRound(2.0)), TargetTensionN: &n, TargetTensionKgf: &kgf}); err == nil {
		t.Error("two targets accepted")
	}
}

// TestProfileNotInCalibration: a bladed or oval section converted from
// the synthetic tool's round-only table carries profile_not_in_calibration
// in a conversion, a target and an audit, and is extrapolated (with its
// caution); a round section does not carry it, nor does a blade once the
// calibration has a bladed column.
func TestProfileNotInCalibration(t *testing.T) {
	m := synthModel(t)
	blade := SpokeSpec{Profile: "bladed", WidthMM: 2.3, ThicknessMM: 1.3, Material: "stainless_steel"}
	oval := SpokeSpec{Profile: "oval", WidthMM: 2.2, ThicknessMM: 1.6, Material: "stainless_steel"}
	for _, spec := range []SpokeSpec{blade, oval} {
		res, err := m.Convert(spec, math.Round(synthReading(t, spec, 1000)))
		if err != nil {
			t.Fatal(err)
		}
		if !hasWarning(res.Warnings, WarnProfileNotCalibrated) || res.Status != StatusExtrapolated || len(res.Cautions) == 0 {
			t.Errorf("%s conversion: status %s warnings %+v cautions %q", spec.Profile, res.Status, res.Warnings, res.Cautions)
		}
		tg, err := m.Target(spec, 1000)
		if err != nil {
			t.Fatal(err)
		}
		if !hasWarning(tg.Warnings, WarnProfileNotCalibrated) || tg.Status != StatusExtrapolated {
			t.Errorf("%s target: status %s warnings %+v", spec.Profile, tg.Status, tg.Warnings)
		}
		// Audit: round on the left, this profile on the right; the warning
		// comes once, at the top of the audit.
		target, ratio := 1000.0, 0.8
		var rds []AuditReading
		for i := range 4 {
			rds = append(rds, AuditReading{Side: "right", Spoke: i, Reading: synthReading(t, spec, 1000)},
				AuditReading{Side: "left", Spoke: i, Reading: synthReading(t, steelRound(2.0), 800)})
		}
		a, err := m.Audit(AuditRequest{Spoke: whole(steelRound(2.0)), SpokeRight: wholePtr(spec), Readings: rds, TargetTensionN: &target, GeometricLeftRightRatio: &ratio})
		if err != nil {
			t.Fatal(err)
		}
		n := 0
		for _, w := range a.Warnings {
			if w.Code == WarnProfileNotCalibrated {
				n++
			}
		}
		if n != 1 {
			t.Errorf("%s audit: %d profile warnings in %+v", spec.Profile, n, a.Warnings)
		}
	}
	res, err := m.Convert(steelRound(2.6), math.Round(synthReading(t, steelRound(2.6), 1000)))
	if err != nil || hasWarning(res.Warnings, WarnProfileNotCalibrated) {
		t.Errorf("round 2.6 mm: %v %+v", err, res.Warnings)
	}
	// A calibration with a bladed column (the synthetic tool's readings on
	// a 2.3 × 1.3 mm blade): another blade converts without the warning.
	cal := synthCalibration(t)
	col := Column{Spoke: blade}
	for tn := 400.0; tn <= 1600; tn += 100 {
		col.Points = append(col.Points, Point{TensionN: tn, Reading: math.Round(synthReading(t, blade, tn))})
	}
	cal.Columns = append(cal.Columns, col)
	mb, err := Fit(cal, Tool{})
	if err != nil || mb.Physical == nil {
		t.Fatalf("fit with a bladed column: %v", err)
	}
	other := SpokeSpec{Profile: "bladed", WidthMM: 2.2, ThicknessMM: 1.2, Material: "stainless_steel"}
	res, err = mb.Convert(other, math.Round(synthReading(t, other, 1000)))
	if err != nil || hasWarning(res.Warnings, WarnProfileNotCalibrated) {
		t.Errorf("blade on a calibration with a bladed column: %v %+v", err, res.Warnings)
	}
}
