package api_test

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"strings"
	"testing"

	"wheelbench/service"
)

// contractBody is the example request of the spoke-length endpoint contract:
// a dished 32-hole J-bend rear, 3-cross both sides.
const contractBody = `{ "spoke_count": 32,
  "hub": { "type": "j_bend",
           "left":  {"pcd_mm": 45, "center_to_flange_mm": 36,   "hole_diameter_mm": 2.6, "thickness_mm": 3.0},
           "right": {"pcd_mm": 45, "center_to_flange_mm": 18.5, "hole_diameter_mm": 2.6} },
  "rim":   { "erd_mm": 599, "spoke_hole_offset_mm": 0 },
  "crosses": { "left": 3, "right": 3 },
  "spoke": { "diameter_mm": 2.0, "material": "stainless_steel" },
  "target_tension_n": 1100,
  "stock": { "increment_mm": 2 } }`

type nippleAngle struct {
	InPlane    float64 `json:"in_plane"`
	OutOfPlane float64 `json:"out_of_plane"`
	Total      float64 `json:"total"`
}

type sideJSON struct {
	LengthMM        float64     `json:"length_mm"`
	OrderLengthMM   *float64    `json:"order_length_mm"`
	StockLengthMM   *float64    `json:"stock_length_mm"`
	SpokeEndMM      *float64    `json:"spoke_end_mm"`
	BracingAngleDeg float64     `json:"bracing_angle_deg"`
	NippleAngleDeg  nippleAngle `json:"nipple_angle_deg"`
	HubAngleDeg     float64     `json:"hub_angle_deg"`
	MaxCrosses      int         `json:"max_crosses"`
	TensionN        *float64    `json:"tension_n"`
}

type findingJSON struct {
	Code     string `json:"code"`
	Severity string `json:"severity"`
	Message  string `json:"message"`
	Side     string `json:"side"`
}

type resultJSON struct {
	Left     sideJSON      `json:"left"`
	Right    sideJSON      `json:"right"`
	Ratio    float64       `json:"tension_ratio_left_to_right"`
	Findings []findingJSON `json:"findings"`
	Cautions []string      `json:"cautions"`
}

// hasPointer reports whether the problem names pointer; it returns that
// field's message.
func hasPointer(p problemJSON, pointer string) (string, bool) {
	for _, f := range p.Errors {
		if f.Pointer == pointer {
			return f.Message, true
		}
	}
	return "", false
}

type problemJSON struct {
	Type   string `json:"type"`
	Title  string `json:"title"`
	Status int    `json:"status"`
	Detail string `json:"detail"`
	Errors []struct {
		Pointer string `json:"pointer"`
		Message string `json:"message"`
	} `json:"errors"`
}

// noNonFinite fails when a body carries a non-finite value: every number
// must parse as a finite float64 and no text may spell NaN or an infinity
// (as a %f of one would). encoding/json refuses to write NaN or ±Inf, so a
// non-finite result would also surface as a 500.
func noNonFinite(t *testing.T, r response) {
	t.Helper()
	if r.StatusCode >= 500 {
		t.Fatalf("%s: status %d\n%s", r.Request.URL.Path, r.StatusCode, r.body)
	}
	dec := json.NewDecoder(bytes.NewReader(r.body))
	dec.UseNumber()
	var doc any
	if err := dec.Decode(&doc); err != nil {
		t.Fatalf("%s: body is not JSON: %v", r.Request.URL.Path, err)
	}
	var walk func(v any, at string)
	walk = func(v any, at string) {
		switch x := v.(type) {
		case json.Number:
			f, err := x.Float64()
			if err != nil || math.IsNaN(f) || math.IsInf(f, 0) {
				t.Fatalf("%s: %s = %s is not a finite number", r.Request.URL.Path, at, x)
			}
		case string:
			for _, bad := range []string{"NaN", "+Inf", "-Inf", "Infinity"} {
				if strings.Contains(x, bad) && !strings.HasSuffix(at, "/request_id") {
					t.Fatalf("%s: %s spells %q: %s", r.Request.URL.Path, at, bad, x)
				}
			}
		case map[string]any:
			for k, y := range x {
				walk(y, at+"/"+k)
			}
		case []any:
			for i, y := range x {
				walk(y, fmt.Sprintf("%s/%d", at, i))
			}
		}
	}
	walk(doc, "")
}

// lawOfCosines is the spoke length by plane trigonometry (the textbook
// derivation, independent of the geometry package's component form): the
// in-plane hub-hole ↔ rim-hole distance² is R² + r² − 2Rr·cos α with
// α = crosses × 720° / N, the axial distance dz is added in quadrature, and
// half the flange hole comes off a J-bend spoke.
func lawOfCosines(n, crosses int, pcd, erd, dz, hole float64) float64 {
	R, r := erd/2, pcd/2
	a := float64(crosses) * 4 * math.Pi / float64(n)
	return math.Sqrt(R*R+r*r-2*R*r*math.Cos(a)+dz*dz) - hole/2
}

// TestSpokeLengthsContract: the contract example through the real stack.
// Lengths are checked against the law of cosines (plane trigonometry),
// tensions against lateral balance T_L·sin β_L = T_R·sin β_R, the stock
// against the 2 mm increment.
func TestSpokeLengthsContract(t *testing.T) {
	e := newEnv(t)
	r := e.want(e.do("POST", "/v1/spoke-lengths", e.keyA[service.RoleRead], contractBody), 200)
	noNonFinite(t, r)
	var res resultJSON
	r.json(t, &res)
	for _, c := range []struct {
		name string
		got  sideJSON
		dz   float64
	}{{"left", res.Left, 36}, {"right", res.Right, 18.5}} {
		want := lawOfCosines(32, 3, 45, 599, c.dz, 2.6)
		if math.Abs(c.got.LengthMM-want) > 1e-9 {
			t.Errorf("%s length %.9f, law of cosines %.9f", c.name, c.got.LengthMM, want)
		}
		if c.got.HubAngleDeg != 67.5 { // 3 × 720° / 32
			t.Errorf("%s hub angle %v, want 67.5°", c.name, c.got.HubAngleDeg)
		}
		// arccos(22.5/299.5) = 85.69°, over 22.5° per cross → 3 (plane trigonometry).
		if c.got.MaxCrosses != 3 {
			t.Errorf("%s max crosses %d, want 3", c.name, c.got.MaxCrosses)
		}
		if c.got.OrderLengthMM == nil || *c.got.OrderLengthMM >= c.got.LengthMM {
			t.Errorf("%s order length %v: want present and shorter than %.3f (stretch)", c.name, c.got.OrderLengthMM, c.got.LengthMM)
		}
		if s := c.got.StockLengthMM; s == nil || math.Mod(*s, 2) != 0 || math.Abs(*s-*c.got.OrderLengthMM) > 1 {
			t.Errorf("%s stock %v: want the multiple of 2 mm nearest %v", c.name, s, c.got.OrderLengthMM)
		}
		if c.got.SpokeEndMM == nil || c.got.TensionN == nil {
			t.Fatalf("%s: spoke_end_mm or tension_n missing", c.name)
		}
	}
	// The right (drive) side braces less steeply, so it carries the target.
	sinL := math.Sin(res.Left.BracingAngleDeg * math.Pi / 180)
	sinR := math.Sin(res.Right.BracingAngleDeg * math.Pi / 180)
	if *res.Right.TensionN != 1100 || math.Abs(*res.Left.TensionN*sinL-*res.Right.TensionN*sinR) > 1e-6 {
		t.Errorf("tensions %v / %v do not balance laterally", *res.Left.TensionN, *res.Right.TensionN)
	}
	if math.Abs(res.Ratio-sinR/sinL) > 1e-9 {
		t.Errorf("ratio %v, want sin β_R / sin β_L = %v", res.Ratio, sinR/sinL)
	}
	if res.Findings == nil || res.Cautions == nil {
		t.Error("findings and cautions must be arrays, never null")
	}
}

// TestSpokeLengthsTangent: 4-cross on the contract hub and rim needs a hub
// angle of 90°, past arccos(22.5/299.5) = 85.69° (plane trigonometry): 422 at
// /crosses/left stating the maximum, 3.
func TestSpokeLengthsTangent(t *testing.T) {
	e := newEnv(t)
	body := strings.Replace(contractBody, `"left": 3, "right": 3`, `"left": 4, "right": 3`, 1)
	r := e.want(e.do("POST", "/v1/spoke-lengths", e.keyA[service.RoleRead], body), 422)
	var p problemJSON
	r.json(t, &p)
	msg, ok := hasPointer(p, "/crosses/left")
	if !ok || !strings.Contains(msg, "at most 3 crosses") {
		t.Errorf("problem %+v: want /crosses/left stating at most 3 crosses", p)
	}
	if _, ok := hasPointer(p, "/crosses/right"); ok {
		t.Errorf("the feasible right side is flagged: %+v", p)
	}
}

// TestSpokeLengthsBadInput: every malformed or impossible wheel is a 4xx
// naming its field, and no body ever carries a non-finite number.
func TestSpokeLengthsBadInput(t *testing.T) {
	e := newEnv(t)
	key := e.keyA[service.RoleRead]
	rep := func(old, new string) string { return strings.Replace(contractBody, old, new, 1) }
	cases := []struct {
		name    string
		body    string
		status  int
		pointer string
	}{
		// An ERD inside the flange circle would make the law of cosines
		// meaningless (the spoke would point inward).
		{"erd inside the flange circle", rep(`"erd_mm": 599`, `"erd_mm": 40`), 400, "/rim/erd_mm"},
		{"erd equal to the flange circle", rep(`"erd_mm": 599`, `"erd_mm": 45`), 400, "/rim/erd_mm"},
		{"zero pcd", rep(`"pcd_mm": 45, "center_to_flange_mm": 36`, `"pcd_mm": 0, "center_to_flange_mm": 36`), 400, "/hub/left/pcd_mm"},
		{"negative erd", rep(`"erd_mm": 599`, `"erd_mm": -599`), 400, "/rim/erd_mm"},
		{"zero flange distance", rep(`"center_to_flange_mm": 18.5`, `"center_to_flange_mm": 0`), 400, "/hub/right/center_to_flange_mm"},
		{"negative hole", rep(`"hole_diameter_mm": 2.6, "thickness_mm"`, `"hole_diameter_mm": -2.6, "thickness_mm"`), 400, "/hub/left/hole_diameter_mm"},
		{"zero spoke", rep(`"diameter_mm": 2.0`, `"diameter_mm": 0`), 400, "/spoke/diameter_mm"},
		{"negative tension", rep(`"target_tension_n": 1100`, `"target_tension_n": -1`), 400, "/target_tension_n"},
		{"zero increment", rep(`"increment_mm": 2`, `"increment_mm": 0`), 400, "/stock/increment_mm"},
		{"negative crosses", rep(`"left": 3, "right": 3`, `"left": -1, "right": 3`), 400, "/crosses/left"},
		{"negative spoke count", rep(`"spoke_count": 32`, `"spoke_count": -32`), 400, "/spoke_count"},
		{"odd spoke count", rep(`"spoke_count": 32`, `"spoke_count": 33`), 422, "/spoke_count"},
		{"crossed with 30 spokes", rep(`"spoke_count": 32`, `"spoke_count": 30`), 422, "/crosses/left"},
		{"overflowing number", rep(`"erd_mm": 599`, `"erd_mm": 1e999`), 400, ""},
		{"wrong type", rep(`"spoke_count": 32`, `"spoke_count": "32"`), 400, "/spoke_count"},
		{"wrong nested type", rep(`"erd_mm": 599`, `"erd_mm": "599"`), 400, "/rim/erd_mm"},
		{"unknown field", rep(`"thickness_mm": 3.0`, `"thickness_mm": 3.0, "colour": "red"`), 400, "/hub/left/colour"},
		{"unknown hub type", rep(`"type": "j_bend"`, `"type": "bent"`), 400, "/hub/type"},
		{"missing crosses", rep(`"crosses": { "left": 3, "right": 3 },`, ``), 400, "/crosses"},
		{"missing left crosses", rep(`"left": 3, "right": 3`, `"right": 3`), 400, "/crosses/left"},
		{"garbage", `{"spoke_count": 32, "hub": {`, 400, ""},
		{"not an object", `[1, 2, 3]`, 400, ""},
		{"empty", ``, 400, ""},
		{"trailing data", contractBody + ` {}`, 400, ""},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			r := e.want(e.do("POST", "/v1/spoke-lengths", key, c.body), c.status)
			noNonFinite(t, r)
			p := r.problem(t)
			if c.pointer == "" {
				return
			}
			found := false
			for _, f := range p.Errors {
				found = found || f.Pointer == c.pointer
			}
			if !found {
				t.Errorf("errors %+v do not name %s", p.Errors, c.pointer)
			}
		})
	}
}

// TestSpokeLengthsAlwaysFinite sweeps wheels at the edges of the geometry
// (ERD a hair above the flange circle, huge and tiny sizes, offsets at the
// flange, straight-pull exits) and requires every answer to be a finite
// result or a 4xx problem.
func TestSpokeLengthsAlwaysFinite(t *testing.T) {
	e := newEnv(t)
	key := e.keyA[service.RoleRead]
	for _, pcd := range []float64{1e-9, 0.5, 45, 598.999999, 4999} {
		for _, erd := range []float64{45.000001, 599, 4999.999} {
			for _, c2f := range []float64{1e-9, 18.5, 300, 4999} {
				for _, cr := range []int{0, 1, 3, 12, 1 << 20} {
					w := fmt.Sprintf(`{"spoke_count": 36, "hub": {"type": "straight_pull",
					  "left": {"pcd_mm": %g, "center_to_flange_mm": %g, "spoke_exit_offset_mm": 1},
					  "right": {"pcd_mm": %g, "center_to_flange_mm": 20}},
					  "rim": {"erd_mm": %g, "spoke_hole_offset_mm": 2, "nipple_washer_mm": 0.5},
					  "crosses": {"left": %d, "right": 0},
					  "spoke": {"gauge": 14}, "target_tension_n": 1200, "stock": {"increment_mm": 1}}`,
						pcd, c2f, pcd, erd, cr)
					r := e.do("POST", "/v1/spoke-lengths", key, w)
					noNonFinite(t, r)
					if r.StatusCode != 200 && r.StatusCode != 400 && r.StatusCode != 422 {
						t.Fatalf("status %d for %s", r.StatusCode, w)
					}
				}
			}
		}
	}
}

func TestSpokeLengthsNeedsAKey(t *testing.T) {
	e := newEnv(t)
	e.want(e.do("POST", "/v1/spoke-lengths", "", contractBody), 401).problem(t)
	e.want(e.do("POST", "/v1/spoke-lengths/batch", "", `{"wheels": []}`), 401).problem(t)
	e.want(e.do("POST", "/v1/compatibility-checks", "", `{}`), 401).problem(t)
}

type batchJSON struct {
	Results   []json.RawMessage `json:"results"`
	Succeeded int               `json:"succeeded"`
	Failed    int               `json:"failed"`
}

// TestBatchMixed: valid and invalid wheels keep their order; each invalid
// wheel has a problem in its slot with pointers under /wheels/<i>, and each
// valid slot equals what the single endpoint answers for that wheel.
func TestBatchMixed(t *testing.T) {
	e := newEnv(t)
	key := e.keyA[service.RoleRead]
	tangent := strings.Replace(contractBody, `"left": 3, "right": 3`, `"left": 4, "right": 3`, 1)
	radial := strings.Replace(contractBody, `"left": 3, "right": 3`, `"left": 0, "right": 0`, 1)
	wheels := []string{
		contractBody,
		strings.Replace(contractBody, `"thickness_mm": 3.0`, `"thickness_mm": 3.0, "colour": "red"`, 1), // unknown field
		strings.Replace(contractBody, `"spoke_count": 32`, `"spoke_count": "32"`, 1),                    // wrong type
		tangent,
		strings.Replace(contractBody, `"erd_mm": 599`, `"erd_mm": 40`, 1), // inside the flange circle
		radial,
		`{}`,
	}
	body := `{"wheels": [` + strings.Join(wheels, ",") + `]}`
	r := e.want(e.do("POST", "/v1/spoke-lengths/batch", key, body), 200)
	noNonFinite(t, r)
	var b batchJSON
	r.json(t, &b)
	if len(b.Results) != len(wheels) || b.Succeeded != 2 || b.Failed != 5 {
		t.Fatalf("%d slots, %d succeeded, %d failed; want %d, 2, 5", len(b.Results), b.Succeeded, b.Failed, len(wheels))
	}
	wantProblem := map[int]struct {
		status  int
		pointer string
	}{
		1: {400, "/wheels/1/hub/left/colour"},
		2: {400, "/wheels/2/spoke_count"},
		3: {422, "/wheels/3/crosses/left"},
		4: {400, "/wheels/4/rim/erd_mm"},
		6: {400, "/wheels/6/spoke_count"},
	}
	for i, raw := range b.Results {
		if w, ok := wantProblem[i]; ok {
			var p problemJSON
			if err := json.Unmarshal(raw, &p); err != nil {
				t.Fatal(err)
			}
			if p.Status != w.status || p.Title == "" || p.Type == "" {
				t.Errorf("slot %d: problem %+v, want status %d", i, p, w.status)
			}
			if _, ok := hasPointer(p, w.pointer); !ok {
				t.Errorf("slot %d: errors %+v do not name %s", i, p.Errors, w.pointer)
			}
			continue
		}
		single := e.want(e.do("POST", "/v1/spoke-lengths", key, wheels[i]), 200)
		var got, want any
		if err := json.Unmarshal(raw, &got); err != nil {
			t.Fatal(err)
		}
		single.json(t, &want)
		if g, w := fmt.Sprint(got), fmt.Sprint(want); g != w {
			t.Errorf("slot %d differs from the single endpoint:\n%s\n%s", i, g, w)
		}
	}
	// The tangent slot states the maximum, as the single endpoint does.
	var p problemJSON
	_ = json.Unmarshal(b.Results[3], &p)
	if msg, _ := hasPointer(p, "/wheels/3/crosses/left"); !strings.Contains(msg, "at most 3 crosses") {
		t.Errorf("tangent slot message %q does not state the maximum", msg)
	}
}

// TestBatchLimits: 10,000 wheels are fine, 10,001 are refused as a whole,
// and a body over 16 MiB is 413.
func TestBatchLimits(t *testing.T) {
	e := newEnv(t)
	key := e.keyA[service.RoleRead]
	wheel := strings.Join(strings.Fields(contractBody), " ")
	batch := func(n int) string {
		return `{"wheels": [` + strings.TrimSuffix(strings.Repeat(wheel+",", n), ",") + `]}`
	}
	r := e.want(e.do("POST", "/v1/spoke-lengths/batch", key, batch(service.MaxBatchWheels)), 200)
	var b batchJSON
	r.json(t, &b)
	if len(b.Results) != service.MaxBatchWheels || b.Failed != 0 {
		t.Errorf("10,000 wheels: %d slots, %d failed", len(b.Results), b.Failed)
	}
	r = e.do("POST", "/v1/spoke-lengths/batch", key, batch(service.MaxBatchWheels+1))
	if r.StatusCode != 400 && r.StatusCode != 413 {
		t.Fatalf("10,001 wheels: status %d", r.StatusCode)
	}
	if p := r.problem(t); r.StatusCode == 400 && !strings.HasPrefix(p.Errors[0].Pointer, "/wheels") {
		t.Errorf("10,001 wheels: errors %+v do not name /wheels", p.Errors)
	}
	// 16 MiB + 1 byte of valid JSON: whitespace inside the array.
	huge := `{"wheels": [` + wheel + strings.Repeat(" ", 16<<20) + `]}`
	e.want(e.do("POST", "/v1/spoke-lengths/batch", key, huge), 413).problem(t)
	// The single endpoint keeps the 1 MiB default.
	e.want(e.do("POST", "/v1/spoke-lengths", key, contractBody+strings.Repeat(" ", 1<<20)), 413).problem(t)
	e.want(e.do("POST", "/v1/spoke-lengths/batch", key, `{"wheels": []}`), 400).problem(t)
	e.want(e.do("POST", "/v1/spoke-lengths/batch", key, `{"wheels": [5]}`), 400).problem(t)
	e.want(e.do("POST", "/v1/spoke-lengths/batch", key, `{"wheels": [{}], "extra": 1}`), 400).problem(t)
}
