package spokejson

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"github.com/go-json-experiment/json/jsontext"

	"wheelbench/api/strictjson"
	"wheelbench/service/field"
	"wheelbench/service/fit"
	"wheelbench/service/geometry"
	"wheelbench/service/spoke"
)

// wheelSeeds are bodies the fast path must agree on with the strict decoder:
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
	// The shared hub, flange and spoke members and include_lacing.
	sharedMembersSeed,
	`{"include_lacing": false}`, `{"include_lacing": null}`, `{"include_lacing": 1}`, `{"include_lacing": "true"}`,
	`{"Include_lacing": true}`, `{"include_lacing": true, "include_lacing": false}`,
	`{"hub": {"kind": "motor", "kind": "cargo"}}`, `{"hub": {"brake": null}}`, `{"hub": {"holes": 32.5}}`,
	`{"hub": {"left": {"spokes": 1.5}}}`, `{"hub": {"left": {"spokes": null}}}`, `{"hub": {"left": {"exit": "\u0000"}}}`,
	`{"hub": {"left": {"exit_angle_deg": 1e999}}}`, `{"hub": {"left": {"Exit": "angled"}}}`,
	`{"spoke": {"measured_section": "section_\u0031"}}`, `{"spoke": {"measured_section": "a\u0000"}}`,
	`{"spoke": {"sections": [{"profile": null}]}}`, `{"spoke": {"sections": [{"length_mm": 1, "Profile": "oval"}]}}`,
	`{"spoke": {"profile": "bladed", "width_mm": 2.3, "thickness_mm": 1.2}}`, `{"spoke": {"thread": {"tpi": 56}}}`,
	`{"spoke_count":24,"include_lacing":true,"hub":{"kind":"cargo","brake":"rotor","holes":24,"driven":true,"left":{"pcd_mm":44,"center_to_flange_mm":35,"spokes":8},"right":{"pcd_mm":44,"center_to_flange_mm":20,"spokes":16}},"rim":{"erd_mm":590},"crosses":{"left":1,"right":2}}`,
	`{"spoke_count":24,"hub":{"type":"straight_pull","left":{"pcd_mm":50,"center_to_flange_mm":28,"exit":"angled","exit_angle_deg":60},"right":{"pcd_mm":50,"center_to_flange_mm":24,"exit":"tangential"}},"rim":{"erd_mm":600},"crosses":{"left":2,"right":0},"spoke":{"profile":"bladed","width_mm":2.3,"thickness_mm":0.9,"diameter_mm":2,"measured_section":"body","sections":[{"length_mm":24,"diameter_mm":2},{"length_mm":5,"profile":"oval","width_mm":2.1,"thickness_mm":1.5}]}}`,
	`{"include_lacing":1}`, `{"hub":{"left":{"spokes":1.5}}}`, `{"spoke":{"profile":null}}`, `{"hub":{"Kind":"motor"}}`,
}

// sharedMembersSeed sets every hub, flange and spoke member the fast path
// knows, in the plain form it must take.
const sharedMembersSeed = `{"spoke_count":32,"include_lacing":true,"hub":{"holes":32,"kind":"bicycle","type":"straight_pull","brake":"rotor",` +
	`"left":{"pcd_mm":45,"center_to_flange_mm":30,"spokes":16,"exit":"tangential"},` +
	`"right":{"pcd_mm":45,"center_to_flange_mm":20,"spokes":16,"exit":"angled","exit_angle_deg":80}},` +
	`"rim":{"erd_mm":599},"crosses":{"left":3,"right":3},"spoke":{"profile":"round","diameter_mm":2,"measured_section":"section_1",` +
	`"sections":[{"length_mm":200,"profile":"round","diameter_mm":1.8}],"width_mm":2.3,"thickness_mm":1.2}}`

// maxWheels is the batch limit of the tests (the service's is the same).
const maxWheels = 10000

// compute is the service's spoke-length use case (fit.ComputeWheel with
// the default options), for the tests.
func compute(w geometry.Wheel) (fit.WheelResult, error) {
	return fit.ComputeWheel(w, fit.DefaultOptions())
}

// testProblem writes a failed wheel's slot as the tests read it: its index
// and, per field error, the pointer under /wheels/i, the kind and the
// message; a fault shows as such.
func testProblem(b []byte, err error, i int) ([]byte, error) {
	type fe struct {
		Pointer       string `json:"pointer"`
		Message       string `json:"message"`
		Unprocessable bool   `json:"unprocessable"`
	}
	slot := struct {
		Wheel  int  `json:"wheel"`
		Fault  bool `json:"fault,omitempty"`
		Errors []fe `json:"errors"`
	}{Wheel: i}
	for _, e := range field.All(err) {
		slot.Errors = append(slot.Errors, fe{"/wheels/" + strconv.Itoa(i) + e.Pointer, e.Message, e.Unprocessable})
	}
	slot.Fault = len(slot.Errors) == 0
	j, jerr := json.Marshal(slot)
	return append(b, j...), jerr
}

func testBatch() Batch {
	return Batch{Compute: compute, Problem: testProblem, MaxWheels: maxWheels}
}

// agree fails unless the fast path either declines or decodes exactly what
// the strict decoder (strictjson.Unmarshal) decodes.
func agree(t *testing.T, body []byte) {
	var fast, slow geometry.Wheel
	if !parseWheel(body, &fast, &arena{}) {
		return
	}
	if err := strictjson.Unmarshal(body, &slow); err != nil {
		t.Fatalf("fast path took %q, the strict decoder refuses it: %v", body, err)
	}
	if !reflect.DeepEqual(fast, slow) {
		t.Fatalf("fast path and the strict decoder disagree on %q:\n%+v\n%+v", body, fast, slow)
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
	var w geometry.Wheel
	if !parseWheel([]byte(sharedMembersSeed), &w, nil) {
		t.Errorf("the fast path declined the plain form of the shared members")
	}
}

// FuzzWheelParser: go test ./api -run XXX -fuzz FuzzWheelParser.
func FuzzWheelParser(f *testing.F) {
	for _, s := range wheelSeeds {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, b []byte) { agree(t, b) })
}

// TestSplitWheels: the splitter finds the same elements the strict decoder
// (the handler's fallback) does, or declines.
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
		var env batchRequest
		if err := strictjson.Unmarshal([]byte(b), &env); err != nil {
			t.Errorf("split %q, the strict decoder refuses it: %v", b, err)
			continue
		}
		if len(items) != len(env.Wheels) {
			t.Errorf("%q: %d items, the strict decoder %d", b, len(items), len(env.Wheels))
			continue
		}
		for i := range items {
			if strings.TrimSpace(string(items[i])) != string(env.Wheels[i]) {
				t.Errorf("%q item %d: %q, the strict decoder %q", b, i, items[i], env.Wheels[i])
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
	check := func(r fit.WheelResult) {
		want, err := json.Marshal(r)
		if err != nil {
			t.Fatal(err)
		}
		got, err := AppendResult(nil, &r)
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
			Rim:           geometry.Rim{ERDMM: 200 + rng.Float64()*450, SpokeHoleOffsetMM: rng.Float64()*4 - 2},
			Crosses:       geometry.Cross{Left: ip(rng.IntN(4)), Right: ip(rng.IntN(4))},
			IncludeLacing: rng.IntN(8) == 0,
		}
		switch rng.IntN(6) {
		case 0: // uneven
			nl := 2 * (n / 6)
			w.Hub.Left.Spokes, w.Hub.Right.Spokes = ip(nl), ip(n-nl)
		case 1: // seated spokes
			w.Hub.Type = geometry.StraightPull
			w.Hub.Left.HoleDiameterMM = nil
			if rng.IntN(2) == 0 {
				w.Hub.Right.Exit, w.Hub.Right.ExitAngleDeg = geometry.ExitAngled, fp(90*rng.Float64())
			}
		}
		if rng.IntN(2) == 0 {
			w.Spoke = &spoke.Spec{DiameterMM: fp(1.5 + rng.Float64())}
			w.TargetTensionN = fp(200 + rng.Float64()*2000)
		}
		if rng.IntN(2) == 0 {
			w.Stock = &geometry.Stock{IncrementMM: fp(1 + float64(rng.IntN(3)))}
		}
		r, err := compute(w)
		if err != nil {
			continue
		}
		results++
		check(r)
	}
	if results < 1000 {
		t.Fatalf("only %d random wheels computed; the generator is off", results)
	}
	edge := fit.WheelResult{Result: geometry.Result{
		Left: geometry.SideResult{LengthMM: 1e21, BracingAngleDeg: 1e-7, HubAngleDeg: math.Copysign(0, -1), TensionN: fp(5e-324),
			ExitAngleDeg: fp(1e-7), LengthGroups: []geometry.LengthGroup{{LengthMM: 1, Count: 2, SpokeEndMM: fp(-0.5)}, {LengthMM: 2e-7, Count: 1}}},
		Right:                   geometry.SideResult{LengthMM: 123456789.125, SpokeEndMM: fp(-1e-6), OrderLengthMM: fp(9.999999999999999e20)},
		TensionRatioLeftToRight: 1,
		Lacing:                  []geometry.LacingSpoke{{Spoke: 1, Side: "left", RimHoleDeg: 359.99999999999994, HubHoleDeg: 1e-9, Head: "in", Direction: "trailing"}},
		KeySpoke:                1,
	},
		Findings: []fit.Finding{{Code: "x", Severity: "info", Message: `a "quoted" <b> & ° \ line` + "\n" + "\u2028",
			Remedy: "ü", Values: map[string]float64{"b_mm": 1e-9, "a": 2, "ü": -0.0}, Assumed: []string{"spoke.thread", "<"}, FixedByChange: true}},
		Cautions: []string{"plain", "ünïcode", "tab\there"},
	}
	check(edge)
	check(fit.WheelResult{})
}

// splitWheels is the batch's splitter in one serial pass, as the handler
// had it before it cut the body into parts (scanWheels): it finds the
// elements of a body {"wheels": [e0, e1, …]} without decoding them. ok is
// false for any other shape (another member, escapes in the member name,
// unbalanced brackets, …): the handler then decodes the envelope with
// the strict decoder, which also words the error. TestBatchAnswerAgrees holds
// the handler to it.
func splitWheels(b []byte) (items [][]byte, ok bool) {
	p := wheelParser{b: b}
	if !p.expect('{') || string(p.key()) != "wheels" || !p.expect(':') || !p.expect('[') {
		return nil, false
	}
	items = make([][]byte, 0, len(b)/300)
	if p.peek(']') {
		p.i++
	} else {
		for {
			p.ws()
			start := p.i
			if !p.skip() {
				return nil, false
			}
			items = append(items, b[start:p.i])
			p.ws()
			if p.i < len(b) && b[p.i] == ',' {
				p.i++
				continue
			}
			if !p.expect(']') {
				return nil, false
			}
			break
		}
	}
	if !p.expect('}') {
		return nil, false
	}
	p.ws()
	return items, p.i == len(b)
}

// referenceBatch is the batch answer as the handler computed it before it
// cut the body into parts, step by step and serially: split the envelope
// (or let the strict decoder do it), check the count, decode every wheel
// (fast path, else the strict decoder), refuse the body at its first wheel
// that is not JSON (saying where by the JSON policy), compute each wheel in
// order, encode the slots in order.
func referenceBatch(bt Batch, body []byte) ([]byte, error) {
	raws, ok := splitWheels(body)
	if !ok {
		var req batchRequest
		if err := strictjson.Unmarshal(body, &req); err != nil {
			return nil, err
		}
		raws = nil
		for _, r := range req.Wheels {
			raws = append(raws, r)
		}
	}
	if len(raws) == 0 || len(raws) > bt.MaxWheels {
		return nil, field.Invalid("/wheels", "must hold 1 to %d wheels", bt.MaxWheels)
	}
	wheels := make([]geometry.Wheel, len(raws))
	decodeErr := make([]error, len(raws))
	for i, raw := range raws {
		if parseWheel(raw, &wheels[i], nil) {
			continue
		}
		if !jsontext.Value(raw).IsValid() {
			if err := strictjson.Check(body); err != nil {
				return nil, err
			}
			return nil, field.Invalid("/wheels/"+strconv.Itoa(i), "is not valid JSON")
		}
		wheels[i] = geometry.Wheel{}
		decodeErr[i] = strictjson.Unmarshal(raw, &wheels[i])
	}
	b := []byte(`{"results":[`)
	good := 0
	for i := range raws {
		if i > 0 {
			b = append(b, ',')
		}
		err := decodeErr[i]
		var res fit.WheelResult
		if err == nil {
			res, err = bt.Compute(wheels[i])
		}
		if err != nil {
			if b, err = bt.Problem(b, err, i); err != nil {
				return nil, err
			}
			continue
		}
		if b, err = AppendResult(b, &res); err != nil {
			return nil, err
		}
		good++
	}
	return fmt.Appendf(b, `],"succeeded":%d,"failed":%d}`+"\n", good, len(raws)-good), nil
}

// batchElements are wheels and other elements for TestBatchAnswerAgrees:
// ones the fast path takes, ones it declines (escapes, repeats, case),
// failing ones (unknown members, wrong types, impossible wheels), ones
// that are JSON but no wheel, and strings that hold what a guessed cut
// looks for ("},").
var batchElements = append([]string{
	`{"spoke_count":28,"hub":{"type":"straight_pull","left":{"pcd_mm":40,"center_to_flange_mm":30},"right":{"pcd_mm":40,"center_to_flange_mm":20}},"rim":{"erd_mm":540},"crosses":{"left":2,"right":2}}`,
	`{"spoke_count":32,"hub":{"type":"j_b\u0065nd","left":{"pcd_mm":45,"center_to_flange_mm":36},"right":{"pcd_mm":45,"center_to_flange_mm":18}},"rim":{"erd_mm":599},"crosses":{"left":3,"right":3}}`,
	`{"spoke_count":32,"Hub":{"type":"j_bend","left":{"pcd_mm":45,"center_to_flange_mm":36},"right":{"pcd_mm":45,"center_to_flange_mm":18}},"rim":{"erd_mm":599},"crosses":{"left":3,"right":3}}`,
	`{"spoke_count":32,"hub":{"type":"},{","left":{"pcd_mm":45,"center_to_flange_mm":36},"right":{"pcd_mm":45,"center_to_flange_mm":18}},"rim":{"erd_mm":599},"crosses":{"left":3,"right":3}}`,
	`{"spoke":{"material":"a\"},{\"b"}}`, `{"colour": "}, {"}`, `"},{"`, `"}, {\"x\": 1},"`,
	`[{"a":1},{"b":2}]`, `{"wheels":[{},{}]}`, `5`, `null`, `true`, `{}`,
	`{"spoke_count": 32, "spoke_count": 36}`, `{"rim": {"erd_mm": 1e999}}`,
}, wheelSeeds[:3]...)

// TestBatchAnswerAgrees: the batch answer, cut into any number of parts
// at guessed places, is byte for byte the serial reference's answer (or
// the same refusal), over random batches of the elements above and over
// malformed bodies.
func TestBatchAnswerAgrees(t *testing.T) {
	bt := testBatch()
	rng := rand.New(rand.NewPCG(3, 4))
	seps := []string{",", ", ", " ,\n", "\t,\r\n "}
	var bodies []string
	for range 300 {
		n := 1 + rng.IntN(40)
		var sb strings.Builder
		sb.WriteString(`{"wheels": [`)
		for i := range n {
			if i > 0 {
				sb.WriteString(seps[rng.IntN(len(seps))])
			}
			sb.WriteString(batchElements[rng.IntN(len(batchElements))])
		}
		sb.WriteString([]string{"]}", " ] } ", "]}\n"}[rng.IntN(3)])
		bodies = append(bodies, sb.String())
	}
	plain := `{"wheels": [` + strings.Repeat(batchElements[0]+",", 50) + batchElements[0] + `]}`
	bodies = append(bodies, plain,
		`{"wheels": [{}, {"spoke_count": 32,,}, {}]}`, `{"wheels": [{},{},]}`, `{"wheels": [,{}]}`,
		`{"wheels": []}`, `{"wheels": [{}]} x`, `{"wheels": [{}], "x": 1}`, `{"Wheels": [{}, {}]}`,
		`{"wheels": [{}, {}], "wheels": [{}]}`, `{"wheels": [{}}`, `{"wheels": [{} {}]}`,
		`{"wheels": [`+strings.Repeat(`{},`, maxWheels)+`{}]}`,
		`{"wheels": [`+strings.Repeat(`{},`, maxWheels-1)+`{}]}`,
		`{"wheels": [`+strings.Repeat(`{},`, 20)+`{"a":1,,}, 7]}`,
	)
	// A body whose middle is inside one wheel's butted sections: the guessed
	// cut there is not between two wheels.
	inside := `{"wheels": [{}, {"spoke":{"sections":[` + strings.Repeat(`{"length_mm":1,"diameter_mm":1.8},`, 40) +
		`{"length_mm":1,"diameter_mm":1.8}]}}, {}]}`
	bodies = append(bodies, inside)
	answer := func(out []byte, err error) string {
		if err != nil {
			return fmt.Sprintf("refused: %T %v", err, err)
		}
		return string(out)
	}
	for _, body := range bodies {
		want := answer(referenceBatch(bt, []byte(body)))
		for _, cpus := range []int{1, 2, 3, 7} {
			for _, minPart := range []int{1, 40, minCutPart} {
				cut := bt
				cut.CPUs, cut.MinPart = cpus, minPart
				out, err := cut.Answer([]byte(body))
				got := answer(out, err)
				PutAnswer(out)
				if got != want {
					t.Fatalf("%d parts of at least %d bytes, body %.300q:\n got %.500s\nwant %.500s", cpus, minPart, body, got, want)
				}
			}
		}
	}
	// The plain body really is shared out, and the parts' guessed cuts hold.
	parts, ok := bt.fromBody([]byte(plain), 3, 1)
	if !ok || len(parts) != 3 {
		t.Fatalf("the plain body went into %d parts (ok %v), want 3", len(parts), ok)
	}
	// The wrong guess is dropped: one part, scanned on past it.
	from := len(`{"wheels": [`)
	if cuts := cutWheels([]byte(inside), from, 2, 1); len(cuts) != 1 || !strings.HasPrefix(inside[cuts[0]:], `{"length_mm"`) {
		t.Fatalf("cuts %v of the body with sections do not fall inside the sections", cuts)
	}
	if parts, ok := bt.fromBody([]byte(inside), 2, 1); !ok || len(parts) != 1 || parts[0].n != 3 {
		t.Fatalf("the body with sections went into %d parts (ok %v), want 1 of 3 wheels", len(parts), ok)
	}
}

// TestAppendFloatFixed: appendFloat writes what encoding/json writes for a
// float64 (json.Marshal is the reference), over random bit patterns, short
// decimals, integers, and the edges of the 'f' form's range.
func TestAppendFloatFixed(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	var vals []float64
	for range 200000 {
		vals = append(vals, math.Float64frombits(rng.Uint64()))
	}
	for range 200000 {
		// a few digits at a scale that puts the point anywhere
		v := float64(rng.IntN(1_000_000)) * math.Pow(10, float64(rng.IntN(30)-12))
		if rng.IntN(2) == 0 {
			v = -v
		}
		vals = append(vals, v, math.Nextafter(v, 0), math.Nextafter(v, math.Inf(1)))
	}
	for e := -8; e <= 22; e++ {
		p := math.Pow(10, float64(e))
		vals = append(vals, p, -p, math.Nextafter(p, 0), math.Nextafter(p, 2*p), 1.5*p, 123456789*p)
	}
	vals = append(vals, 0, math.Copysign(0, -1), 1e21, math.Nextafter(1e21, 0), 1e-6, math.Nextafter(1e-6, 0),
		math.MaxFloat64, math.SmallestNonzeroFloat64, 9007199254740993, 292.5450000260333, 1100, 67.5)
	for _, v := range vals {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			continue
		}
		want, err := json.Marshal(v)
		if err != nil {
			t.Fatal(err)
		}
		got, err := appendFloat(nil, v)
		if err != nil || string(got) != string(want) {
			t.Fatalf("%b: appendFloat %q (%v), encoding/json %q", v, got, err, want)
		}
	}
}

// TestNumberAgrees: the parser's numbers are strconv's, bit for bit (the
// sign of zero included), over random literals of every length, with and
// without fraction and exponent; its integers are strconv.ParseInt's.
func TestNumberAgrees(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	digits := func(n int) string {
		var sb strings.Builder
		for range n {
			sb.WriteByte(byte('0' + rng.IntN(10)))
		}
		return sb.String()
	}
	for range 300000 {
		s := digits(1 + rng.IntN(20))
		if len(s) > 1 && rng.IntN(4) > 0 {
			s = strings.TrimLeft(s, "0")
			if s == "" {
				s = "0"
			}
		}
		integer := true
		if rng.IntN(3) > 0 {
			s += "." + digits(1+rng.IntN(20))
			integer = false
		}
		if rng.IntN(6) == 0 {
			s += "e" + []string{"", "+", "-"}[rng.IntN(3)] + digits(1+rng.IntN(3))
			integer = false
		}
		if rng.IntN(2) == 0 {
			s = "-" + s
		}
		if u := strings.TrimPrefix(s, "-"); len(u) > 1 && u[0] == '0' && u[1] >= '0' && u[1] <= '9' {
			continue // a leading zero: not a JSON number
		}
		p := wheelParser{b: []byte(s)}
		got := p.number()
		want, err := strconv.ParseFloat(s, 64)
		if p.bad != (err != nil) || err == nil && math.Float64bits(got) != math.Float64bits(want) {
			t.Fatalf("%s: parser %v (declined %v), strconv %v (%v)", s, got, p.bad, want, err)
		}
		if !integer {
			continue
		}
		p = wheelParser{b: []byte(s)}
		gi := p.integer()
		wi, err := strconv.ParseInt(s, 10, 0)
		if p.bad != (err != nil) || err == nil && int64(gi) != wi {
			t.Fatalf("%s: parser %d (declined %v), strconv %d (%v)", s, gi, p.bad, wi, err)
		}
	}
}

// TestKeyAgrees: the word-at-a-time key scan ends a key where a byte loop
// does, and declines the same keys, with the byte that ends it at every
// offset.
func TestKeyAgrees(t *testing.T) {
	ends := []byte{'"', '\\', 0, 0x1f, 0x20, 0x7f, 0x80, 0xff, 'a', '!', '#', '[', ']'}
	for n := range 40 {
		for _, end := range ends {
			for _, after := range []string{`"`, `x"`, ``} {
				body := `"` + strings.Repeat("k", n) + string([]byte{end}) + after
				p := wheelParser{b: []byte(body)}
				got := p.key()
				// the byte loop: the first byte that is not plain
				i := 1
				for i < len(body) && body[i] != '"' && body[i] != '\\' && body[i] >= 0x20 && body[i] < 0x80 {
					i++
				}
				wantBad := i >= len(body) || body[i] != '"'
				if p.bad != wantBad || !wantBad && (string(got) != body[1:i] || p.i != i+1) {
					t.Fatalf("%q: key %q at %d (declined %v), want %q at %d (declined %v)", body, got, p.i, p.bad, body[1:min(i, len(body))], i+1, wantBad)
				}
			}
		}
	}
}
