package geometry

import (
	"encoding/json"
	"math"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"

	"wheelbench/service/spoke"
)

// TestHandDerived36Hole3Cross is worked by hand (plane trigonometry).
//
//	36 holes, 3-cross: hub angle α = 3 × 720° / 36 = 60°, cos α = 1/2.
//	r = 45/2 = 22.5 mm, R = 600/2 = 300 mm, flange 35 mm from the centre,
//	rim holes on the centre plane.
//	in-plane² = R² + r² − 2Rr cos α = 90000 + 506.25 − 6750 = 83756.25 mm²
//	3-D²      = 83756.25 + 35² = 83756.25 + 1225 = 84981.25 mm²
//	distance  = √84981.25 = 291.515436984047… mm (30-digit decimal sqrt)
//	length    = 291.515436984047 − 2.6/2 = 290.215436984047 mm
//	bracing   = atan(35 / √83756.25) = atan(0.120937067088…) = 6.8956953596…°
//	max crosses: arccos(22.5/300) = 85.699…°, / (720°/36 = 20°) → 4.28 → 4
func TestHandDerived36Hole3Cross(t *testing.T) {
	f := Flange{PCDMM: 45, CenterToFlangeMM: 35, HoleDiameterMM: fp(2.6)}
	res, err := Compute(Wheel{SpokeCount: 36, Hub: Hub{Left: f, Right: f}, Rim: Rim{ERDMM: 600}, Crosses: cross(3, 3)})
	if err != nil {
		t.Fatal(err)
	}
	for _, s := range []SideResult{res.Left, res.Right} {
		if !near(s.LengthMM, 290.215436984047, 1e-9) {
			t.Errorf("length %.12f, hand-derived 290.215436984047", s.LengthMM)
		}
		if !near(s.BracingAngleDeg, 6.8956953596, 1e-9) {
			t.Errorf("bracing %.10f°, hand-derived 6.8956953596°", s.BracingAngleDeg)
		}
		if s.HubAngleDeg != 60 || s.MaxCrosses != 4 {
			t.Errorf("hub angle %v°, max crosses %d; hand-derived 60°, 4", s.HubAngleDeg, s.MaxCrosses)
		}
	}
	// Symmetric hub: equal tensions (T_L sin β = T_R sin β).
	if !near(res.TensionRatioLeftToRight, 1, 1e-15) {
		t.Errorf("ratio %v, want 1 for a symmetric wheel", res.TensionRatioLeftToRight)
	}
}

// TestHandDerivedRadial: 32 holes radial, hand-derived.
//
//	in-plane = R − r = 300 − 20 = 280 mm (α = 0); flanges 30 mm out.
//	distance = √(280² + 30²) = √79300 = 281.602556806574… mm
//	length   = 281.602556806574 − 1.3 = 280.302556806574 mm
//	nipple angle: in plane 0; out of plane = total = atan(30/280) = 6.115503566…°
func TestHandDerivedRadial(t *testing.T) {
	f := Flange{PCDMM: 40, CenterToFlangeMM: 30, HoleDiameterMM: fp(2.6)}
	res, err := Compute(Wheel{SpokeCount: 32, Hub: Hub{Left: f, Right: f}, Rim: Rim{ERDMM: 600}, Crosses: cross(0, 0)})
	if err != nil {
		t.Fatal(err)
	}
	if !near(res.Left.LengthMM, 280.302556806574, 1e-9) {
		t.Errorf("length %.12f, hand-derived 280.302556806574", res.Left.LengthMM)
	}
	// atan(30/280) = atan(0.107142857…) = 6.1155035…° (hand: tan⁻¹ series,
	// x − x³/3 + x⁵/5 = 0.106736… rad).
	n := res.Left.NippleAngleDeg
	if n.InPlane != 0 || !near(n.OutOfPlane, math.Atan(30.0/280)*deg, 1e-12) || !near(n.Total, n.OutOfPlane, 1e-12) || !near(n.Total, 6.1155, 1e-4) {
		t.Errorf("nipple angles %+v, want 0 / 6.1155° / 6.1155°", n)
	}
}

// TestTangentBoundary: 32 holes, 3-cross, α = 67.5°. The spoke leaves the
// flange tangentially when cos α = r/R, i.e. R = 22.5 / cos 67.5° (plane
// trigonometry: the hub-hole angle is 90°). Just inside is buildable with
// max_crosses 3; just past is a 422 at /crosses/left stating the maximum.
func TestTangentBoundary(t *testing.T) {
	rTangent := 22.5 / math.Cos(67.5*math.Pi/180)
	mk := func(rimR float64) Wheel {
		f := Flange{PCDMM: 45, CenterToFlangeMM: 30, HoleDiameterMM: fp(2.6)}
		return Wheel{SpokeCount: 32, Hub: Hub{Left: f, Right: f}, Rim: Rim{ERDMM: 2 * rimR}, Crosses: cross(3, 2)}
	}
	res, err := Compute(mk(rTangent * (1 + 1e-6)))
	if err != nil {
		t.Fatalf("just inside the tangent: %v", err)
	}
	if res.Left.MaxCrosses != 3 {
		t.Errorf("just inside: max_crosses %d, want 3", res.Left.MaxCrosses)
	}
	_, err = Compute(mk(rTangent * (1 - 1e-6)))
	fe := hasFieldError(t, err, "/crosses/left", true)
	if fe == nil {
		t.Fatalf("just past the tangent: want 422 at /crosses/left, got %v", err)
	}
	if !strings.Contains(fe.Message, "at most 2 crosses") {
		t.Errorf("message %q does not state the maximum (2)", fe.Message)
	}
	if hasFieldError(t, err, "/crosses/right", true) != nil {
		t.Errorf("the right side (2-cross) is feasible but was flagged: %v", err)
	}
}

// TestSpokeCountDivisibleBy4: crossed lacing alternates leading and
// trailing spokes on each flange, so each flange's count N/2 must be even
// (common practice, and forced by the alternation).
func TestSpokeCountDivisibleBy4(t *testing.T) {
	f := Flange{PCDMM: 45, CenterToFlangeMM: 30, HoleDiameterMM: fp(2.6)}
	w := Wheel{SpokeCount: 30, Hub: Hub{Left: f, Right: f}, Rim: Rim{ERDMM: 600}, Crosses: cross(0, 2)}
	_, err := Compute(w)
	fe := hasFieldError(t, err, "/crosses/right", true)
	if fe == nil || !strings.Contains(fe.Message, "at most 0 crosses") {
		t.Fatalf("30 holes, 2-cross: want 422 at /crosses/right stating at most 0, got %v", err)
	}
	if hasFieldError(t, err, "/crosses/left", true) != nil {
		t.Errorf("radial left side flagged")
	}
	w.Crosses = cross(0, 0)
	res, err := Compute(w)
	if err != nil {
		t.Fatalf("30 holes radial: %v", err)
	}
	if res.Left.MaxCrosses != 0 || res.Right.MaxCrosses != 0 {
		t.Errorf("30 holes: max_crosses %d/%d, want 0/0", res.Left.MaxCrosses, res.Right.MaxCrosses)
	}
	w.SpokeCount = 31
	if _, err := Compute(w); hasFieldError(t, err, "/spoke_count", true) == nil {
		t.Errorf("31 holes: want 422 at /spoke_count, got %v", err)
	}
}

// TestValidation: each bad input yields a FieldError at its pointer with the
// right kind (400 malformed vs 422 impossible). Expected pointers follow the
// request JSON of the endpoint contract.
func TestValidation(t *testing.T) {
	nan, inf := math.NaN(), math.Inf(1)
	cases := []struct {
		name    string
		mod     func(*Wheel)
		pointer string
		unproc  bool
	}{
		{"zero spokes", func(w *Wheel) { w.SpokeCount = 0 }, "/spoke_count", false},
		{"negative spokes", func(w *Wheel) { w.SpokeCount = -32 }, "/spoke_count", false},
		{"absurd spokes", func(w *Wheel) { w.SpokeCount = 1 << 30 }, "/spoke_count", false},
		{"odd spokes", func(w *Wheel) { w.SpokeCount = 33 }, "/spoke_count", true},
		{"bad hub type", func(w *Wheel) { w.Hub.Type = "bent" }, "/hub/type", false},
		{"zero pcd", func(w *Wheel) { w.Hub.Left.PCDMM = 0 }, "/hub/left/pcd_mm", false},
		{"NaN pcd", func(w *Wheel) { w.Hub.Right.PCDMM = nan }, "/hub/right/pcd_mm", false},
		{"negative flange", func(w *Wheel) { w.Hub.Right.CenterToFlangeMM = -18 }, "/hub/right/center_to_flange_mm", false},
		{"Inf flange", func(w *Wheel) { w.Hub.Left.CenterToFlangeMM = inf }, "/hub/left/center_to_flange_mm", false},
		{"zero hole", func(w *Wheel) { w.Hub.Left.HoleDiameterMM = fp(0) }, "/hub/left/hole_diameter_mm", false},
		{"hole smaller than spoke", func(w *Wheel) { w.Hub.Right.HoleDiameterMM = fp(1.8) }, "/hub/right/hole_diameter_mm", true},
		{"negative thickness", func(w *Wheel) { w.Hub.Left.ThicknessMM = fp(-3) }, "/hub/left/thickness_mm", false},
		{"exit offset on j-bend", func(w *Wheel) { w.Hub.Left.SpokeExitOffsetMM = fp(1) }, "/hub/left/spoke_exit_offset_mm", false},
		{"exit offset eats the spoke", func(w *Wheel) {
			w.Hub.Type = StraightPull
			w.Hub.Left.SpokeExitOffsetMM = fp(400)
		}, "/hub/left/spoke_exit_offset_mm", true},
		{"zero ERD", func(w *Wheel) { w.Rim.ERDMM = 0 }, "/rim/erd_mm", false},
		{"ERD equal to pcd", func(w *Wheel) { w.Rim.ERDMM = 45 }, "/rim/erd_mm", false},
		{"NaN offset", func(w *Wheel) { w.Rim.SpokeHoleOffsetMM = nan }, "/rim/spoke_hole_offset_mm", false},
		{"offset past the right flange", func(w *Wheel) { w.Rim.SpokeHoleOffsetMM = -20 }, "/rim/spoke_hole_offset_mm", true},
		{"Inf stagger", func(w *Wheel) { w.Rim.StaggerMM.Right = inf }, "/rim/stagger_mm/right", false},
		{"negative washer", func(w *Wheel) { w.Rim.NippleWasherMM = -0.5 }, "/rim/nipple_washer_mm", false},
		{"absurd washer", func(w *Wheel) { w.Rim.NippleWasherMM = 80 }, "/rim/nipple_washer_mm", false},
		{"missing crosses", func(w *Wheel) { w.Crosses.Left = nil }, "/crosses/left", false},
		{"negative crosses", func(w *Wheel) { w.Crosses.Right = ip(-1) }, "/crosses/right", false},
		{"too many crosses", func(w *Wheel) { w.Crosses.Left = ip(5) }, "/crosses/left", true},
		{"diameter and another gauge", func(w *Wheel) { w.Spoke.Gauge = ip(13) }, "/spoke/gauge", false},
		{"unknown gauge", func(w *Wheel) { w.Spoke.DiameterMM, w.Spoke.Gauge = nil, ip(3) }, "/spoke/gauge", false},
		{"unknown material", func(w *Wheel) { w.Spoke.Material = "unobtainium" }, "/spoke/material", false},
		{"zero modulus", func(w *Wheel) { w.Spoke.EGPa = fp(0) }, "/spoke/e_gpa", false},
		{"NaN section", func(w *Wheel) { w.Spoke.Sections = []spoke.Butt{{LengthMM: nan, DiameterMM: fp(1.8)}} }, "/spoke/sections/0/length_mm", false},
		{"section without size", func(w *Wheel) { w.Spoke.Sections = []spoke.Butt{{LengthMM: 200}} }, "/spoke/sections/0/diameter_mm", false},
		{"sections longer than spoke", func(w *Wheel) { w.Spoke.Sections = []spoke.Butt{{LengthMM: 400, DiameterMM: fp(1.8)}} }, "/spoke/sections", true},
		{"bladed without width", func(w *Wheel) { w.Spoke.Profile = spoke.Bladed; w.Spoke.ThicknessMM = fp(0.9) }, "/spoke/width_mm", false},
		{"blade thicker than wide", func(w *Wheel) {
			w.Spoke.Profile, w.Spoke.WidthMM, w.Spoke.ThicknessMM = spoke.Bladed, fp(1), fp(2)
		}, "/spoke/thickness_mm", false},
		{"unknown measured section", func(w *Wheel) { w.Spoke.MeasuredSection = "section_2" }, "/spoke/measured_section", false},
		{"flange spokes do not add up", func(w *Wheel) { w.Hub.Left.Spokes, w.Hub.Right.Spokes = ip(10), ip(20) }, "/hub/left/spokes", true},
		{"zero flange spokes", func(w *Wheel) { w.Hub.Left.Spokes = ip(0) }, "/hub/left/spokes", false},
		{"odd flange, crossed", func(w *Wheel) { w.Hub.Left.Spokes = ip(11) }, "/crosses/left", true},
		{"unknown exit", func(w *Wheel) { w.Hub.Left.Exit = "sideways" }, "/hub/left/exit", false},
		{"seated exit on a J-bend hub", func(w *Wheel) { w.Hub.Left.Exit = ExitTangential }, "/hub/left/exit", false},
		{"angled without angle", func(w *Wheel) {
			w.Hub.Type, w.Hub.Left.Exit, w.Hub.Left.HoleDiameterMM, w.Hub.Right.HoleDiameterMM = StraightPull, ExitAngled, nil, nil
		}, "/hub/left/exit_angle_deg", false},
		{"exit angle past tangent", func(w *Wheel) {
			w.Hub.Type, w.Hub.Left.Exit, w.Hub.Left.ExitAngleDeg = StraightPull, ExitAngled, fp(95)
		}, "/hub/left/exit_angle_deg", false},
		{"unknown kind", func(w *Wheel) { w.Hub.Kind = "rocket" }, "/hub/kind", false},
		{"unknown brake", func(w *Wheel) { w.Hub.Brake = "anchor" }, "/hub/brake", false},
		{"disc_brake against brake", func(w *Wheel) { w.Hub.DiscBrake, w.Hub.Brake = true, BrakeDrum }, "/hub/disc_brake", false},
		{"half-way crosses", func(w *Wheel) { w.Hub.Type = StraightPull; w.Crosses.Left = ip(8) }, "/crosses/left", true},
		{"zero tension", func(w *Wheel) { w.TargetTensionN = fp(0) }, "/target_tension_n", false},
		{"NaN tension", func(w *Wheel) { w.TargetTensionN = fp(nan) }, "/target_tension_n", false},
		{"empty stock", func(w *Wheel) { w.Stock = &Stock{} }, "/stock", false},
		{"both stocks", func(w *Wheel) { w.Stock.LengthsMM = []float64{290} }, "/stock", false},
		{"tiny increment", func(w *Wheel) { w.Stock.IncrementMM = fp(1e-300) }, "/stock/increment_mm", false},
		{"bad stock length", func(w *Wheel) { w.Stock = &Stock{LengthsMM: []float64{290, -1}} }, "/stock/lengths_mm/1", false},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			w := contractWheel()
			c.mod(&w)
			res, err := Compute(w)
			if err == nil {
				t.Fatalf("no error; result %+v", res)
			}
			if hasFieldError(t, err, c.pointer, c.unproc) == nil {
				t.Errorf("want FieldError at %s (unprocessable=%v), got %v", c.pointer, c.unproc, err)
			}
			if !cmp.Equal(res, Result{}) {
				t.Errorf("an error must come with a zero Result")
			}
		})
	}
}

// TestSeveralErrorsJoined: every bad field is reported, not just the first.
func TestSeveralErrorsJoined(t *testing.T) {
	w := contractWheel()
	w.Hub.Left.PCDMM = -1
	w.Rim.ERDMM = math.NaN()
	w.Crosses.Right = nil
	got := map[string]bool{}
	_, err := Compute(w)
	for _, fe := range fieldErrors(t, err) {
		got[fe.Pointer] = true
	}
	want := map[string]bool{"/hub/left/pcd_mm": true, "/rim/erd_mm": true, "/crosses/right": true}
	if diff := cmp.Diff(want, got); diff != "" {
		t.Errorf("pointers (-want +got):\n%s", diff)
	}
}

// TestDecodeContractExample: the endpoint contract's example JSON decodes
// straight into Wheel, and the result encodes with the contract's names.
func TestDecodeContractExample(t *testing.T) {
	body := `{ "spoke_count": 32,
	  "hub": { "type": "j_bend",
	           "left":  {"pcd_mm": 45, "center_to_flange_mm": 36,   "hole_diameter_mm": 2.6, "thickness_mm": 3.0},
	           "right": {"pcd_mm": 45, "center_to_flange_mm": 18.5, "hole_diameter_mm": 2.6} },
	  "rim":   { "erd_mm": 599, "spoke_hole_offset_mm": 0 },
	  "crosses": { "left": 3, "right": 3 },
	  "spoke": { "diameter_mm": 2.0, "material": "stainless_steel" },
	  "target_tension_n": 1100,
	  "stock": { "increment_mm": 2 } }`
	var w Wheel
	if err := json.Unmarshal([]byte(body), &w); err != nil {
		t.Fatal(err)
	}
	if diff := cmp.Diff(contractWheel(), w); diff != "" {
		t.Fatalf("decoded wheel (-want +got):\n%s", diff)
	}
	res, err := Compute(w)
	if err != nil {
		t.Fatal(err)
	}
	b, err := json.Marshal(res)
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"left", "right", "tension_ratio_left_to_right"} {
		if _, ok := m[k]; !ok {
			t.Errorf("result lacks %q: %s", k, b)
		}
	}
	if _, ok := m["lacing"]; ok {
		t.Errorf("the lacing plan is answered only when asked for: %s", b)
	}
	left := m["left"].(map[string]any)
	for _, k := range []string{"length_mm", "order_length_mm", "stock_length_mm", "spoke_end_mm", "bracing_angle_deg", "nipple_angle_deg", "max_crosses",
		"tension_n", "hub_angle_deg", "spokes", "exit", "max_crosses_clear_of_heads", "length_groups"} {
		if _, ok := left[k]; !ok {
			t.Errorf("left side lacks %q: %s", k, b)
		}
	}
	for _, k := range []string{"in_plane", "out_of_plane", "total"} {
		if _, ok := left["nipple_angle_deg"].(map[string]any)[k]; !ok {
			t.Errorf("nipple_angle_deg lacks %q", k)
		}
	}
	// Without spoke, tension and stock the optional outputs are absent.
	w.Spoke, w.TargetTensionN, w.Stock = nil, nil, nil
	res, _ = Compute(w)
	b = mustJSON(t, res.Left)
	for _, k := range []string{"order_length_mm", "stock_length_mm", "spoke_end_mm", "tension_n"} {
		if strings.Contains(string(b), k) {
			t.Errorf("%q present without its inputs: %s", k, b)
		}
	}
}

func mustJSON(t *testing.T, v any) []byte {
	t.Helper()
	b, err := json.Marshal(v)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// TestGaugeInput: gauge 14 is 0.080 in = 2.032 mm (BS 3737, testdata/
// reference/swg.tsv); the order length then follows Hooke's law at 2.032 mm.
func TestGaugeInput(t *testing.T) {
	a, b := contractWheel(), contractWheel()
	a.Spoke = &spoke.Spec{Gauge: ip(14)}
	b.Spoke = &spoke.Spec{DiameterMM: fp(0.080 * 25.4)}
	ra, err := Compute(a)
	if err != nil {
		t.Fatal(err)
	}
	rb, _ := Compute(b)
	if diff := cmp.Diff(rb, ra); diff != "" {
		t.Errorf("gauge 14 vs 2.032 mm (-diameter +gauge):\n%s", diff)
	}
}

// TestStock: nearest stock length and the spoke end, from the definitions:
// end = stock + Hooke stretch(stock) − loaded length.
func TestStock(t *testing.T) {
	w := contractWheel()
	w.Stock = &Stock{LengthsMM: []float64{288, 290, 291, 294}}
	res, err := Compute(w)
	if err != nil {
		t.Fatal(err)
	}
	const e = 193000.0 // N/mm², stainless steel (materials.tsv: 193 GPa)
	a := math.Pi       // mm², d = 2 mm
	for _, s := range []SideResult{res.Left, res.Right} {
		order, stock, end, tension := *s.OrderLengthMM, *s.StockLengthMM, *s.SpokeEndMM, *s.TensionN
		// nearest of the list, by brute force over the list
		best := 288.0
		for _, v := range w.Stock.LengthsMM {
			if math.Abs(v-order) < math.Abs(best-order) {
				best = v
			}
		}
		if stock != best {
			t.Errorf("order %.3f: stock %v, nearest is %v", order, stock, best)
		}
		if want := stock + tension*stock/(e*a) - s.LengthMM; !near(end, want, 1e-9) {
			t.Errorf("spoke end %.9f, want %.9f", end, want)
		}
	}
	// Increment 2 mm: ties round down, otherwise nearest multiple.
	for _, c := range []struct{ want, got float64 }{{291, 290}, {291.01, 292}, {290.99, 290}, {0.4, 2}} {
		if s := chooseStock(&Stock{IncrementMM: fp(2)}, c.want); s != c.got {
			t.Errorf("increment 2, want %v: chose %v, expected %v", c.want, s, c.got)
		}
	}
}
