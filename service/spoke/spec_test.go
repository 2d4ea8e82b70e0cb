package spoke

import (
	"math"
	"testing"
)

func fp(v float64) *float64 { return &v }
func ip(v int) *int         { return &v }

// TestMeasuredSection: the tensiometer sits on the thinnest section unless
// the spoke says otherwise — a butted spoke's thin middle, a bladed spoke's
// blade (its thickness, not its width, lies under the plunger).
func TestMeasuredSection(t *testing.T) {
	butted := Spec{DiameterMM: fp(2.0), Sections: []Butt{{LengthMM: 230, DiameterMM: fp(1.8)}}}
	r, ps := butted.Resolve(true)
	if len(ps) > 0 || r.MeasuredName != "section_1" || r.Measured.DiameterMM != 1.8 {
		t.Errorf("2.0/1.8/2.0: measured %s %+v (%v), want section_1 at 1.8 mm", r.MeasuredName, r.Measured, ps)
	}
	butted.MeasuredSection = "body"
	if r, _ := butted.Resolve(true); r.MeasuredName != "body" || r.Measured.DiameterMM != 2.0 {
		t.Errorf("body asked: got %s %+v", r.MeasuredName, r.Measured)
	}
	bladed := Spec{Profile: Bladed, WidthMM: fp(2.3), ThicknessMM: fp(0.9), DiameterMM: fp(2.0),
		Sections: []Butt{{LengthMM: 24, DiameterMM: fp(2.0)}}}
	r, ps = bladed.Resolve(true)
	if len(ps) > 0 || r.MeasuredName != "body" || r.Measured.Profile != Bladed || r.Measured.ThicknessMM != 0.9 {
		t.Errorf("bladed: measured %s %+v (%v)", r.MeasuredName, r.Measured, ps)
	}
	// Area π·2.3·0.9/4 = 1.6258 mm² (ellipse) is the smallest section.
	if a, which := r.MinArea(); which != "body" || math.Abs(a-math.Pi*2.3*0.9/4) > 1e-12 {
		t.Errorf("min area %v at %s", a, which)
	}
	// A conversion needs only the measured section: no end diameter.
	if _, ps := (Spec{Profile: Oval, WidthMM: fp(2.2), ThicknessMM: fp(1.4)}).Resolve(false); len(ps) > 0 {
		t.Errorf("oval section alone refused: %v", ps)
	}
	if _, ps := (Spec{Profile: Oval, WidthMM: fp(2.2), ThicknessMM: fp(1.4)}).Resolve(true); len(ps) != 1 || ps[0].Pointer != "/diameter_mm" {
		t.Errorf("lengths need the end diameter: %v", ps)
	}
}

// TestMaterialDefault: no material or modulus means stainless steel, said
// so, in every use; a modulus alone is no assumption.
func TestMaterialDefault(t *testing.T) {
	r, _ := Spec{DiameterMM: fp(2)}.Resolve(true)
	if r.Material.Name != "stainless_steel" || !r.MaterialAssumed || r.EGPa != 193 {
		t.Errorf("default material %+v assumed=%v E=%v", r.Material, r.MaterialAssumed, r.EGPa)
	}
	r, _ = Spec{DiameterMM: fp(2), EGPa: fp(110)}.Resolve(true)
	if r.MaterialAssumed || r.EGPa != 110 {
		t.Errorf("modulus given: assumed=%v E=%v", r.MaterialAssumed, r.EGPa)
	}
}

// TestGaugeAndDiameter: both may be given when they agree (2.0 mm is sold
// as 14 gauge, 2.032 mm, BS 3737); otherwise one must go.
func TestGaugeAndDiameter(t *testing.T) {
	if r, ps := (Spec{DiameterMM: fp(2.0), Gauge: ip(14)}).Resolve(true); len(ps) > 0 || r.EndMM != 2.0 || r.Gauge != 14 {
		t.Errorf("2.0 mm and 14 gauge: %+v %v", r, ps)
	}
	if _, ps := (Spec{DiameterMM: fp(2.0), Gauge: ip(13)}).Resolve(true); len(ps) != 1 || ps[0].Pointer != "/gauge" {
		t.Errorf("2.0 mm and 13 gauge: %v", ps)
	}
}

// TestThreadStressArea: π/4·(d − 0.9382·P)² (ISO 898-1 stress-area
// formula). Measured major 2.0 mm at 56 TPI: 1.946940819 mm²; rolled on
// 2.0 mm wire (major = wire + 0.649519·P, the ISO 724 pitch-diameter
// relation): 2.743705862 mm² (30-digit decimal evaluations).
func TestThreadStressArea(t *testing.T) {
	if a, ok := ThreadStressArea(2.0, 2.0, 56); !ok || math.Abs(a-1.946940819) > 1e-9 {
		t.Errorf("measured 2.0 mm: %v", a)
	}
	if a, ok := ThreadStressArea(2.0, 0, 56); !ok || math.Abs(a-2.743705862) > 1e-9 {
		t.Errorf("rolled on 2.0 mm: %v", a)
	}
	// A 2.0 mm thread at 2 TPI has a 12.7 mm pitch: no thread root at all.
	if _, ok := ThreadStressArea(2.0, 2.0, 2); ok {
		t.Error("pitch deeper than the thread accepted")
	}
}
