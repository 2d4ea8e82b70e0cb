package geometry

import (
	"math"
	"testing"

	"wheelbench/service/reftest"
	"wheelbench/service/spoke"
)

// referenceModuli reads E (GPa) per material from testdata/reference/
// materials.tsv, whose source column cites the handbook data sheets.
func referenceModuli(t *testing.T) map[string]float64 {
	t.Helper()
	out := map[string]float64{}
	for _, cols := range reftest.Rows(t, "materials.tsv") {
		out[cols[0]] = reftest.Float(t, cols[1])
	}
	return out
}

// TestHookeWorkedExample: Hooke's law for an elastic wire, ΔL = T·L/(E·A),
// A = πd²/4 (textbook axial-member formula δ = PL/(AE)). E(AISI 304) =
// 193 GPa from the ASM data sheet (materials.tsv). d = 2.0 mm, L = 300 mm,
// T = 1000 N: A = π mm², ΔL = 1000·300/(193000·π) = 300/(193π)
// = 0.494782206503 mm (independently computed reference value).
func TestHookeWorkedExample(t *testing.T) {
	e := referenceModuli(t)["stainless_steel"]
	if e != 193 {
		t.Fatalf("materials.tsv gives E = %v GPa for stainless steel, the worked example assumes 193", e)
	}
	w := newWire(1000, e*1000, round(2.0), nil, nil)
	if got := w.stretchMM(300); !near(got, 0.494782206503, 1e-12) {
		t.Errorf("stretch %.12f mm, Hooke's law gives 0.494782206503", got)
	}
	// The inverse: a spoke that is 300.494782206503 mm under 1000 N was
	// 300 mm unloaded.
	if got := w.unloadedMM(300 + 0.494782206503); !near(got, 300, 1e-9) {
		t.Errorf("unloaded %.12f mm, want 300", got)
	}
}

// TestHookeButted: a butted spoke is springs in series, ΔL = T·Σ Lᵢ/(E·Aᵢ)
// (Hooke's law per section, handbook formula). 2.0/1.8/2.0 mm: 40 mm and
// 30 mm at 2.0, the 230 mm remainder at 1.8 (the nominal), titanium E from
// materials.tsv (ASM MTP641).
func TestHookeButted(t *testing.T) {
	e := referenceModuli(t)["titanium"] * 1000 // N/mm²
	const tension = 900.0
	area := func(d float64) float64 { return math.Pi * d * d / 4 }
	want := tension * (40/(e*area(2.0)) + 30/(e*area(2.0)) + 230/(e*area(1.8)))
	w := newWire(tension, e, round(1.8), []spoke.Section{round(2.0), round(2.0)}, []float64{40, 30})
	if got := w.stretchMM(300); !near(got, want, 1e-12) {
		t.Errorf("butted stretch %.12f mm, series Hooke %.12f", got, want)
	}
}

// TestHookeBladed: a bladed spoke's body is an ellipse of full width w and
// thickness t, area π·(w/2)·(t/2) (handbook area of an ellipse); its round
// ends are sections. 2.3 × 0.9 mm blade, two 12 mm round ends of 2.0 mm,
// 280 mm unloaded, stainless 193 GPa (materials.tsv), 1100 N:
//
//	A_blade = π·1.15·0.45 = 1.625774198… mm², A_end = π mm²
//	ΔL = 1100/193000 · (256/1.625774198 + 24/π) = 0.941000862… mm
//	(the digits from a 30-digit decimal evaluation of the same sum)
//
// and the spoke computed with it orders that much less than its length.
func TestHookeBladed(t *testing.T) {
	e := referenceModuli(t)["stainless_steel"] * 1000
	aBlade := math.Pi * (2.3 / 2) * (0.9 / 2)
	want := 1100 / e * (256/aBlade + 24/math.Pi)
	if !near(want, 0.941000862, 1e-9) {
		t.Fatalf("hand figure %.9f, derived 0.941000862", want)
	}
	blade := spoke.Section{Profile: spoke.Bladed, WidthMM: 2.3, ThicknessMM: 0.9}
	w := newWire(1100, e, blade, []spoke.Section{round(2.0)}, []float64{24})
	if got := w.stretchMM(280); !near(got, want, 1e-12) {
		t.Errorf("bladed stretch %.12f mm, series Hooke %.12f", got, want)
	}
	wh := contractWheel()
	wh.TargetTensionN = fp(1100)
	wh.Spoke = &spoke.Spec{Profile: spoke.Bladed, WidthMM: fp(2.3), ThicknessMM: fp(0.9), DiameterMM: fp(2.0),
		Sections: []spoke.Butt{{LengthMM: 24, DiameterMM: fp(2.0)}}}
	res, err := Compute(wh)
	if err != nil {
		t.Fatal(err)
	}
	for _, s := range []SideResult{res.Left, res.Right} {
		l0, tn := *s.OrderLengthMM, *s.TensionN
		stretch := tn / e * ((l0-24)/aBlade + 24/math.Pi)
		if !near(l0+stretch, s.LengthMM, 1e-9) {
			t.Errorf("bladed: order %.9f + stretch %.9f ≠ length %.9f", l0, stretch, s.LengthMM)
		}
	}
}

// TestOrderLengthIsHookeInverse: for every material in materials.tsv, plain
// and butted, the order length stretched by Hooke's law at the side's
// tension gives back length_mm: order + T·Σ Lᵢ/(E·Aᵢ) = length.
func TestOrderLengthIsHookeInverse(t *testing.T) {
	for name, eGPa := range referenceModuli(t) {
		if m, _ := spoke.LookupMaterial(name); m.EGPa != eGPa {
			t.Errorf("%s: package E %v GPa, reference %v", name, m.EGPa, eGPa)
		}
		for _, sections := range [][]spoke.Butt{nil, {{LengthMM: 50, DiameterMM: fp(2.0)}, {LengthMM: 12, DiameterMM: fp(2.3)}}} {
			w := contractWheel()
			w.Spoke = &spoke.Spec{DiameterMM: fp(1.8), Material: name, Sections: sections}
			if name == "aluminium" {
				w.TargetTensionN = fp(900)
			}
			res, err := Compute(w)
			if err != nil {
				t.Fatal(err)
			}
			e := eGPa * 1000
			a := func(d float64) float64 { return math.Pi * d * d / 4 }
			for _, s := range []SideResult{res.Left, res.Right} {
				l0, tension := *s.OrderLengthMM, *s.TensionN
				rest := l0
				stretch := 0.0
				for _, sec := range sections {
					stretch += tension * sec.LengthMM / (e * a(*sec.DiameterMM))
					rest -= sec.LengthMM
				}
				stretch += tension * rest / (e * a(1.8))
				if !near(l0+stretch, s.LengthMM, 1e-9) {
					t.Errorf("%s sections=%v: order %.9f + stretch %.9f = %.9f, length %.9f", name, sections, l0, stretch, l0+stretch, s.LengthMM)
				}
			}
		}
	}
}

// TestModulusOverride: e_gpa replaces the material's modulus; stiffer wire
// stretches less (Hooke's law: ΔL ∝ 1/E).
func TestModulusOverride(t *testing.T) {
	a, b := contractWheel(), contractWheel()
	b.Spoke.EGPa = fp(2 * 193)
	ra, _ := Compute(a)
	rb, err := Compute(b)
	if err != nil {
		t.Fatal(err)
	}
	sa := ra.Right.LengthMM - *ra.Right.OrderLengthMM
	sb := rb.Right.LengthMM - *rb.Right.OrderLengthMM
	// Doubling E halves the strain k; (L − L/(1+k)) = L·k/(1+k).
	k := 1100 / (193000 * math.Pi)
	wantRatio := (k / (1 + k)) / ((k / 2) / (1 + k/2))
	if !near(sa/sb, wantRatio, 1e-9) {
		t.Errorf("stretch ratio %v for doubled E, want %v", sa/sb, wantRatio)
	}
}
