package api_test

import (
	"bytes"
	"encoding/json"
	"flag"
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"

	"wheelbench/service"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata/golden from the current responses")

// The demo scenario's wheels. Every dimension is invented for the demo (a
// plausible size, not a measured part); no real product is described.
const (
	// demoMotorBody: a 36-hole hub motor with large (158 mm) flanges laced
	// 1-cross to a 20-inch (406 BSD) rim, 13-gauge spokes, rotor on the left.
	demoMotorBody = `{"spoke_count": 36,
	  "hub": {"type": "j_bend", "motor": true, "disc_brake": true,
	          "left":  {"pcd_mm": 158, "center_to_flange_mm": 24, "hole_diameter_mm": 2.9, "thickness_mm": 3.5},
	          "right": {"pcd_mm": 158, "center_to_flange_mm": 20, "hole_diameter_mm": 2.9, "thickness_mm": 3.5}},
	  "rim": {"erd_mm": 390, "spoke_hole_offset_mm": 0},
	  "crosses": {"left": 1, "right": 1},
	  "spoke": {"gauge": 13, "material": "stainless_steel"},
	  "target_tension_n": 1200,
	  "stock": {"increment_mm": 2}}`

	// demoTandemBody: a 48-hole dished tandem rear on a 622 rim, 4-cross,
	// 14-gauge spokes, rotor on the left, chosen from a short list of stock.
	demoTandemBody = `{"spoke_count": 48,
	  "hub": {"type": "j_bend", "driven": true, "disc_brake": true,
	          "left":  {"pcd_mm": 58, "center_to_flange_mm": 37, "hole_diameter_mm": 2.6, "thickness_mm": 3.2},
	          "right": {"pcd_mm": 58, "center_to_flange_mm": 23, "hole_diameter_mm": 2.6, "thickness_mm": 3.2}},
	  "rim": {"erd_mm": 604, "spoke_hole_offset_mm": 0},
	  "crosses": {"left": 4, "right": 4},
	  "spoke": {"gauge": 14, "material": "stainless_steel"},
	  "target_tension_n": 1300,
	  "stock": {"lengths_mm": [284, 286, 288, 290, 292, 294]}}`

	// demoTouringBody: a 36-hole dynamo front on a 29-inch (622 BSD) rim,
	// 3-cross, double-butted 2.0/1.8/2.0 mm spokes, rotor on the left.
	demoTouringBody = `{"spoke_count": 36,
	  "hub": {"type": "j_bend", "disc_brake": true,
	          "left":  {"pcd_mm": 57, "center_to_flange_mm": 29, "hole_diameter_mm": 2.6, "thickness_mm": 2.8},
	          "right": {"pcd_mm": 57, "center_to_flange_mm": 34, "hole_diameter_mm": 2.6, "thickness_mm": 2.8}},
	  "rim": {"erd_mm": 605, "spoke_hole_offset_mm": 0},
	  "crosses": {"left": 3, "right": 3},
	  "spoke": {"diameter_mm": 2.0, "material": "stainless_steel", "sections": [{"length_mm": 230, "diameter_mm": 1.8}]},
	  "target_tension_n": 1100,
	  "stock": {"increment_mm": 2}}`
)

// golden compares body with testdata/golden/name (as indented JSON, numbers
// to 1e-9 so that a platform's last-bit rounding does not fail it), or
// rewrites the file under -update.
func golden(t *testing.T, name string, body []byte) {
	t.Helper()
	var pretty bytes.Buffer
	if err := json.Indent(&pretty, body, "", "  "); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join("..", "testdata", "golden", name)
	if *update {
		if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, pretty.Bytes(), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test ./api -run Golden -update to create it)", err)
	}
	var g, w any
	if err := json.Unmarshal(pretty.Bytes(), &g); err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(want, &w); err != nil {
		t.Fatal(err)
	}
	if diff := cmp.Diff(w, g, cmpopts.EquateApprox(1e-12, 1e-9)); diff != "" {
		t.Errorf("%s differs (-golden +got):\n%s", name, diff)
	}
}

// lengthsByHand checks a response's side lengths against the law of
// cosines (see lawOfCosines), the same hand calculation that was used to
// review the golden file.
func lengthsByHand(t *testing.T, body []byte, n, crossL, crossR int, pcd, erd, dzL, dzR, hole float64) {
	t.Helper()
	var res resultJSON
	if err := json.Unmarshal(body, &res); err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		side string
		got  float64
		want float64
	}{
		{"left", res.Left.LengthMM, lawOfCosines(n, crossL, pcd, erd, dzL, hole)},
		{"right", res.Right.LengthMM, lawOfCosines(n, crossR, pcd, erd, dzR, hole)},
	} {
		if math.Abs(c.got-c.want) > 1e-9 {
			t.Errorf("%s length %.9f, law of cosines %.9f", c.side, c.got, c.want)
		}
	}
}

// TestGoldenDemoMotor406. Reviewed by hand (law of cosines, Python as the
// calculator): R = 195, r = 79, α = 1 × 720°/36 = 20°; in-plane² = 195² +
// 79² − 2·195·79·cos 20° = 15314.07; left 3-D √(15314.07 + 24²) = 126.056,
// less 2.9/2 → 124.606 mm; right √(15314.07 + 20²) = 125.356 → 123.906 mm.
// Max crosses ⌊arccos(79/195) / 20°⌋ = ⌊66.1°/20°⌋ = 3. In-plane nipple
// angle atan(79 sin 20° / (195 − 79 cos 20°)) = atan(27.02/120.76) = 12.6°,
// over the 10° rule of thumb (common practice): the nipple_angle_high
// warnings. Bracing atan(24/123.75) = 10.98° left, 9.18° right: the right
// carries the 1200 N, the left sin 9.18°/sin 10.98° = 0.838 of it (lateral
// balance). Stretch on the right: 1200 N × 123.7 mm / (193 GPa × 4.2888 mm²)
// = 0.179 mm (Hooke's law; E of AISI 304 from the ASM data sheet; 13 gauge
// = 2.3368 mm, BS 3737), and the order length is 123.906 − 0.179 = 123.726.
// The motor caution is present.
func TestGoldenDemoMotor406(t *testing.T) {
	e := newEnv(t)
	r := e.want(e.do("POST", "/v1/spoke-lengths", e.keyA[service.RoleRead], demoMotorBody), 200)
	lengthsByHand(t, r.body, 36, 1, 1, 158, 390, 24, 20, 2.9)
	golden(t, "spoke_lengths_demo_motor_406.json", r.body)
}

// TestGoldenDemoTandem48. Reviewed by hand: R = 302, r = 29, α = 4 × 720°/48
// = 60°; in-plane² = 302² + 29² − 302·29 = 83287; left √(83287 + 37²) =
// 290.957 − 1.3 = 289.657 mm; right √(83287 + 23²) = 289.510 − 1.3 =
// 288.210 mm (law of cosines). Max crosses ⌊arccos(29/302)/15°⌋ = ⌊84.5/15⌋
// = 5. Bracing atan(37/288.6) = 7.31° left, atan(23/288.6) = 4.56° right:
// the left runs at sin 4.56°/sin 7.31° = 0.625 of the right's 1300 N
// (lateral balance), 812 N. Stretch on the right: 1300 × 287.6 /
// (193000 × 3.2429) = 0.597 mm (Hooke's law; 14 gauge = 2.032 mm, BS 3737),
// order 287.61 → nearest listed stock 288; left 289.28 → 290.
func TestGoldenDemoTandem48(t *testing.T) {
	e := newEnv(t)
	r := e.want(e.do("POST", "/v1/spoke-lengths", e.keyA[service.RoleRead], demoTandemBody), 200)
	lengthsByHand(t, r.body, 48, 4, 4, 58, 604, 37, 23, 2.6)
	golden(t, "spoke_lengths_demo_tandem_48.json", r.body)
}

// TestGoldenDemoTouring622. Reviewed by hand: R = 302.5, r = 28.5, α = 3 ×
// 720°/36 = 60°; in-plane² = 302.5² + 28.5² − 302.5·28.5 = 83697.25; left
// √(83697.25 + 29²) = 290.754 − 1.3 = 289.454 mm; right √(83697.25 + 34²) =
// 291.296 − 1.3 = 289.996 mm (law of cosines). The left (rotor) side braces
// less steeply (5.72° against 6.70°), so it carries the 1100 N target. Max
// crosses ⌊arccos(28.5/302.5)/20°⌋ = ⌊84.6°/20°⌋ = 4. Stretch over the
// butted spoke, Hooke's law per section: T/E · (230/A₁.₈ + (L₀ − 230)/A₂.₀)
// = 1100/193000 · (230/2.5447 + 58.83/3.1416) = 0.0057 · 109.11 = 0.622 mm
// on the left, so its order length is 289.455 − 0.622 = 288.833 mm and the
// nearest 2 mm stock 288 ends 0.83 mm short of the ERD level at tension.
func TestGoldenDemoTouring622(t *testing.T) {
	e := newEnv(t)
	r := e.want(e.do("POST", "/v1/spoke-lengths", e.keyA[service.RoleRead], demoTouringBody), 200)
	lengthsByHand(t, r.body, 36, 3, 3, 57, 605, 29, 34, 2.6)
	golden(t, "spoke_lengths_demo_touring_622.json", r.body)
}
