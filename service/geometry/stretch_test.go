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
	w := newWire(1000, e*1000, 2.0, nil)
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
	w := newWire(tension, e, 1.8, []Section{{LengthMM: 40, DiameterMM: 2.0}, {LengthMM: 30, DiameterMM: 2.0}})
	if got := w.stretchMM(300); !near(got, want, 1e-12) {
		t.Errorf("butted stretch %.12f mm, series Hooke %.12f", got, want)
	}
	if w.minArea != area(1.8) {
		t.Errorf("thinnest section %v mm², want %v", w.minArea, area(1.8))
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
		for _, sections := range [][]Section{nil, {{LengthMM: 50, DiameterMM: 2.0}, {LengthMM: 12, DiameterMM: 2.3}}} {
			w := contractWheel()
			w.Spoke = &Spoke{DiameterMM: fp(1.8), Material: name, Sections: sections}
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
					stretch += tension * sec.LengthMM / (e * a(sec.DiameterMM))
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
