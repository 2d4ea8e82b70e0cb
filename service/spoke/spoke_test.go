package spoke

import (
	"math"
	"strconv"
	"testing"
	"wheelbench/service/reftest"
)

func num(t *testing.T, s string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// TestGaugeDiameters checks every gauge against BS 3737 (testdata/reference/swg.tsv).
func TestGaugeDiameters(t *testing.T) {
	rows := reftest.Rows(t, "swg.tsv")
	if len(rows) != len(Gauges()) {
		t.Fatalf("reference has %d gauges, package %d", len(rows), len(Gauges()))
	}
	for _, r := range rows {
		g, _ := strconv.Atoi(r[0])
		d, ok := GaugeDiameterMM(g)
		if !ok {
			t.Fatalf("gauge %d missing", g)
		}
		if want := num(t, r[2]); math.Abs(d-want) > 5e-5 {
			t.Errorf("gauge %d: %v mm, BS 3737 gives %v", g, d, want)
		}
		area := Section{DiameterMM: d}.AreaMM2()
		if want := num(t, r[3]); math.Abs(area-want)/want > 1e-7 {
			t.Errorf("gauge %d area %v, reference %v", g, area, want)
		}
	}
	if _, ok := GaugeDiameterMM(30); ok {
		t.Error("gauge 30 should be unknown")
	}
}

// TestSections checks areas and second moments against worked values
// (testdata/reference/sections.tsv, computed with mpmath and by integration).
func TestSections(t *testing.T) {
	ref := map[string]float64{}
	for _, r := range reftest.Rows(t, "sections.tsv") {
		ref[r[0]] = num(t, r[1])
	}
	round := Section{Profile: Round, DiameterMM: 2}
	blade := Section{Profile: Bladed, WidthMM: 2, ThicknessMM: 1} // semi-axes 1 and 0.5
	cases := []struct {
		name string
		got  float64
	}{
		{"circle_d2_area_mm2", round.AreaMM2()},
		{"circle_d2_I_mm4", round.SecondMomentMM4()},
		{"ellipse_a1_b0.5_Ix_mm4", blade.SecondMomentMM4()},
	}
	for _, c := range cases {
		if want := ref[c.name]; math.Abs(c.got-want)/want > 1e-11 {
			t.Errorf("%s = %.13g, reference %.13g", c.name, c.got, want)
		}
	}
	// Rectangle wt³/12 (handbook formula): 2 × 1³ / 12.
	if got := (Section{Profile: Rectangular, WidthMM: 2, ThicknessMM: 1}).SecondMomentMM4(); math.Abs(got-2.0/12) > 1e-15 {
		t.Errorf("rectangle I = %v", got)
	}
	if got := blade.Thickness(); got != 1 {
		t.Errorf("blade thickness %v", got)
	}
	if got := round.EquivalentDiameterMM(); math.Abs(got-2) > 1e-12 {
		t.Errorf("equivalent diameter %v", got)
	}
}

func TestValidate(t *testing.T) {
	bad := []struct {
		s     Section
		field string
	}{
		{Section{}, "diameter_mm"},
		{Section{DiameterMM: -1}, "diameter_mm"},
		{Section{DiameterMM: math.NaN()}, "diameter_mm"},
		{Section{DiameterMM: math.Inf(1)}, "diameter_mm"},
		{Section{Profile: Bladed, WidthMM: 2}, "thickness_mm"},
		{Section{Profile: Bladed, ThicknessMM: 1}, "width_mm"},
		{Section{Profile: Bladed, WidthMM: 1, ThicknessMM: 2}, "thickness_mm"},
		{Section{Profile: "square", DiameterMM: 2}, "profile"},
	}
	for _, c := range bad {
		f, err := c.s.Validate()
		if err == nil || f != c.field {
			t.Errorf("%+v: field %q err %v, want field %q", c.s, f, err, c.field)
		}
	}
	if f, err := (Section{DiameterMM: 2}).Validate(); err != nil {
		t.Errorf("valid round section refused: %s %v", f, err)
	}
}

// TestMaterials checks the table against testdata/reference/materials.tsv.
func TestMaterials(t *testing.T) {
	rows := reftest.Rows(t, "materials.tsv")
	for _, r := range rows {
		m, ok := LookupMaterial(r[0])
		if !ok {
			t.Fatalf("material %s missing", r[0])
		}
		if m.EGPa != num(t, r[1]) || m.UTSMPa != num(t, r[2]) {
			t.Errorf("%s: E %v UTS %v, reference %s %s", r[0], m.EGPa, m.UTSMPa, r[1], r[2])
		}
	}
	if len(MaterialNames()) != len(rows) {
		t.Errorf("package has %d materials, reference %d", len(MaterialNames()), len(rows))
	}
}
