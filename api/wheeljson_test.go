package api

import (
	"encoding/json"
	"math/rand/v2"
	"reflect"
	"strings"
	"testing"

	"wheelbench/service/geometry"
)

// wheelSeeds are bodies the fast path must agree on with encoding/json:
// plain ones it takes, and unusual ones it must decline or get right.
var wheelSeeds = []string{
	`{ "spoke_count": 32,
	  "hub": { "type": "j_bend",
	           "left":  {"pcd_mm": 45, "center_to_flange_mm": 36,   "hole_diameter_mm": 2.6, "thickness_mm": 3.0},
	           "right": {"pcd_mm": 45, "center_to_flange_mm": 18.5, "hole_diameter_mm": 2.6} },
	  "rim":   { "erd_mm": 599, "spoke_hole_offset_mm": 0 },
	  "crosses": { "left": 3, "right": 3 },
	  "spoke": { "diameter_mm": 2.0, "material": "stainless_steel" },
	  "target_tension_n": 1100,
	  "stock": { "increment_mm": 2 } }`,
	`{"spoke_count":36,"hub":{"type":"straight_pull","disc_brake":true,"driven":false,"motor":true,"left":{"pcd_mm":1e2,"center_to_flange_mm":-0.5e1,"spoke_exit_offset_mm":-1.25E-1},"right":{"pcd_mm":0,"center_to_flange_mm":20}},"rim":{"erd_mm":605,"stagger_mm":{"left":1,"right":-1},"nipple_washer_mm":0.5},"crosses":{"left":0,"right":-2},"spoke":{"gauge":14,"e_gpa":193,"head_diameter_mm":4,"sections":[{"length_mm":230,"diameter_mm":1.8},{"diameter_mm":1.7,"length_mm":10}]},"stock":{"lengths_mm":[284,286.5]}}`,
	`{"spoke":{"sections":[]},"stock":{"lengths_mm":[]}}`,
	`{}`, `[]`, `null`, `5`, `"x"`, ``, ` `, `{`, `{"spoke_count":}`,
	`{"spoke_count": 32.0}`, `{"spoke_count": 1e1}`, `{"spoke_count": 99999999999999999999}`, `{"spoke_count": -0}`,
	`{"spoke_count": 01}`, `{"rim": {"erd_mm": 1.}}`, `{"rim": {"erd_mm": .5}}`, `{"rim": {"erd_mm": 1e999}}`,
	`{"rim": {"erd_mm": -}}`, `{"rim": {"erd_mm": +1}}`, `{"rim": {"erd_mm": NaN}}`, `{"rim": {"erd_mm": "1"}}`,
	`{"Spoke_Count": 32}`, `{"spoke_count": 32, "spoke_count": 36}`, `{"hub": {"type": "j\u005fbend"}}`,
	`{"hub": {"type": "\u00e9"}}`, `{"hub": {"type": "é"}}`, `{"hub": {"type": null}}`, `{"spoke": null}`,
	`{"crosses": {"left": null, "right": 2}}`, `{"colour": 1}`, `{"hub": {"left": {"colour": 1}}}`,
	`{"spoke_count": 32,}`, `{"spoke_count": 32} {}`, `{"spoke_count": 32}x`, `{"hub": {"motor": tru}}`,
	`{"hub": {"motor": 1}}`, `{"spoke": {"sections": [1]}}`, `{"spoke": {"sections": [{},]}}`,
	`{"stock": {"lengths_mm": [1,,2]}}`, "{\"hub\": {\"type\": \"a\tb\"}}",
}

// agree fails unless the fast path either declines or decodes exactly what
// encoding/json (strict, as decodeBytes) decodes.
func agree(t *testing.T, body []byte) {
	var fast, slow geometry.Wheel
	if !parseWheel(body, &fast, &arena{}) {
		return
	}
	if err := decodeBytes(body, &slow); err != nil {
		t.Fatalf("fast path took %q, encoding/json refuses it: %v", body, err)
	}
	if !reflect.DeepEqual(fast, slow) {
		t.Fatalf("fast path and encoding/json disagree on %q:\n%+v\n%+v", body, fast, slow)
	}
}

func TestWheelParserAgrees(t *testing.T) {
	took := 0
	for _, s := range wheelSeeds {
		agree(t, []byte(s))
		var w geometry.Wheel
		if parseWheel([]byte(s), &w, nil) {
			took++
		}
	}
	// The plain forms must take the fast path, or it is no use.
	if took < 3 {
		t.Errorf("the fast path took %d of the seeds, want at least the 3 plain ones", took)
	}
}

// FuzzWheelParser: go test ./api -run XXX -fuzz FuzzWheelParser.
func FuzzWheelParser(f *testing.F) {
	for _, s := range wheelSeeds {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, b []byte) { agree(t, b) })
}

// TestSplitWheels: the splitter finds the same elements encoding/json
// does, or declines.
func TestSplitWheels(t *testing.T) {
	bodies := []string{
		`{"wheels": [` + strings.Join(wheelSeeds[:3], ",") + `]}`,
		`{"wheels":[1, "a,]}", [2,{"x":"]"}], null, {"s":"\"}"}]}`,
		`{"wheels": []}`, ` {"wheels" : [ {} ] } `,
		`{"wheels": [}`, `{"wheels": [1,]}`, `{"wheels": [,1]}`, `{"wheels": [1 2]}`, `{"wheels": [{]}`,
		`{"Wheels": [1]}`, `{"wheels": [1], "x": 2}`, `{"wheels": [1]} x`, `{"wheels": [[[]]}`,
	}
	for _, b := range bodies {
		items, ok := splitWheels([]byte(b))
		if !ok {
			continue
		}
		var env struct{ Wheels []json.RawMessage }
		if err := json.Unmarshal([]byte(b), &env); err != nil {
			t.Errorf("split %q, encoding/json refuses it: %v", b, err)
			continue
		}
		if len(items) != len(env.Wheels) {
			t.Errorf("%q: %d items, encoding/json %d", b, len(items), len(env.Wheels))
			continue
		}
		for i := range items {
			if strings.TrimSpace(string(items[i])) != string(env.Wheels[i]) {
				t.Errorf("%q item %d: %q, encoding/json %q", b, i, items[i], env.Wheels[i])
			}
		}
	}
}

// TestAppendResultMatches: the hand encoder writes exactly what
// encoding/json writes, over random wheels (with and without the optional
// outputs, with findings and cautions of every kind the generator reaches)
// and a few hand-made values at the float format's edges.
func TestAppendResultMatches(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	fp := func(v float64) *float64 { return &v }
	ip := func(v int) *int { return &v }
	check := func(r geometry.Result) {
		want, err := json.Marshal(r)
		if err != nil {
			t.Fatal(err)
		}
		got, err := appendResult(nil, &r)
		if err != nil {
			t.Fatal(err)
		}
		if string(got) != string(want) {
			t.Fatalf("appendResult\n%s\nencoding/json\n%s", got, want)
		}
	}
	results := 0
	for range 20000 {
		n := 4 * (1 + rng.IntN(12))
		w := geometry.Wheel{
			SpokeCount: n,
			Hub: geometry.Hub{
				Left:      geometry.Flange{PCDMM: 20 + rng.Float64()*140, CenterToFlangeMM: 5 + rng.Float64()*40, HoleDiameterMM: fp(2 + rng.Float64()*2)},
				Right:     geometry.Flange{PCDMM: 20 + rng.Float64()*140, CenterToFlangeMM: 5 + rng.Float64()*40},
				DiscBrake: rng.IntN(2) == 0, Driven: rng.IntN(2) == 0, Motor: rng.IntN(4) == 0,
			},
			Rim:     geometry.Rim{ERDMM: 200 + rng.Float64()*450, SpokeHoleOffsetMM: rng.Float64()*4 - 2},
			Crosses: geometry.Cross{Left: ip(rng.IntN(4)), Right: ip(rng.IntN(4))},
		}
		if rng.IntN(2) == 0 {
			w.Spoke = &geometry.Spoke{DiameterMM: fp(1.5 + rng.Float64())}
			w.TargetTensionN = fp(200 + rng.Float64()*2000)
		}
		if rng.IntN(2) == 0 {
			w.Stock = &geometry.Stock{IncrementMM: fp(1 + float64(rng.IntN(3)))}
		}
		r, err := geometry.Compute(w)
		if err != nil {
			continue
		}
		results++
		check(r)
	}
	if results < 1000 {
		t.Fatalf("only %d random wheels computed; the generator is off", results)
	}
	edge := geometry.Result{
		Left:                    geometry.SideResult{LengthMM: 1e21, BracingAngleDeg: 1e-7, HubAngleDeg: -0.0, TensionN: fp(5e-324)},
		Right:                   geometry.SideResult{LengthMM: 123456789.125, SpokeEndMM: fp(-1e-6), OrderLengthMM: fp(9.999999999999999e20)},
		TensionRatioLeftToRight: 1,
		Findings:                []geometry.Finding{{Code: "x", Severity: "info", Message: `a "quoted" <b> & ° \ line` + "\n" + "\u2028"}},
		Cautions:                []string{"plain", "ünïcode", "tab\there"},
	}
	check(edge)
	check(geometry.Result{})
}
