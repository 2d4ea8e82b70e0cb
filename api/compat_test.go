package api_test

import (
	"encoding/json"
	"strings"
	"testing"

	"wheelbench/service"
)

// Invented test builds; no real product is described.

// roadFrontBody is a plain 32-hole road front: 2.0 mm stainless spokes
// (head, elbow and thread filled by gauge), brass 12 mm nipples, a 622 rim
// of 19 mm inner width and a 25 mm tyre.
const roadFrontBody = `{
  "spoke_count": 32,
  "hub": {"holes": 32, "kind": "bicycle", "type": "j_bend", "spacing_mm": 100,
          "left":  {"pcd_mm": 38, "center_to_flange_mm": 35, "hole_diameter_mm": 2.6, "thickness_mm": 2.7},
          "right": {"pcd_mm": 38, "center_to_flange_mm": 35, "hole_diameter_mm": 2.6, "thickness_mm": 2.7}},
  "rim": {"holes": 32, "erd_mm": 600, "bsd_mm": 622, "inner_width_mm": 19, "hole_diameter_mm": 4.3, "max_tension_n": 1300},
  "spoke": {"diameter_mm": 2.0, "material": "stainless_steel"},
  "nipple": {"thread": {"diameter_mm": 2.0, "tpi": 56}, "shank_diameter_mm": 3.9, "head_diameter_mm": 5.6,
             "length_mm": 12, "material": "brass"},
  "washers": [{"thickness_mm": 0.5, "inner_diameter_mm": 2.2, "outer_diameter_mm": 5.0}],
  "tyre": {"bsd_mm": 622, "width_mm": 25},
  "frame_spacing_mm": 100,
  "crosses": {"left": 3, "right": 3},
  "target_tension_n": 1000 }`

// motorBody is a 36-hole hub motor with 4.0 mm flange holes and 4.5 mm thick
// flanges, 13-gauge spokes with 6.0 mm elbows, nipples whose 4.5 mm shank
// will not pass the 4.2 mm holes of a 406 rim, and a 0.8 mm hub washer on
// hand.
const motorBody = `{
  "spoke_count": 36,
  "hub": {"holes": 36, "kind": "motor", "spacing_mm": 135,
          "left":  {"pcd_mm": 150, "center_to_flange_mm": 22, "hole_diameter_mm": 4.0, "thickness_mm": 4.5},
          "right": {"pcd_mm": 150, "center_to_flange_mm": 22, "hole_diameter_mm": 4.0, "thickness_mm": 4.5}},
  "rim": {"holes": 36, "erd_mm": 380, "bsd_mm": 406, "inner_width_mm": 30, "hole_diameter_mm": 4.2, "max_tension_n": 1200},
  "spoke": {"gauge": 13, "elbow_length_mm": 6.0, "material": "stainless_steel"},
  "nipple": {"thread": {"diameter_mm": 2.34, "tpi": 56}, "shank_diameter_mm": 4.5, "head_diameter_mm": 6.4,
             "length_mm": 14, "material": "brass"},
  "washers": [{"thickness_mm": 0.8, "inner_diameter_mm": 2.5, "outer_diameter_mm": 7.0, "where": "hub"}],
  "tyre": {"bsd_mm": 406, "width_mm": 55},
  "frame_spacing_mm": 135,
  "crosses": {"left": 2, "right": 2},
  "target_tension_n": 1100 }`

type reportJSON struct {
	Verdict  string `json:"verdict"`
	Findings []struct {
		Code     string             `json:"code"`
		Severity string             `json:"severity"`
		Side     string             `json:"side"`
		Remedy   string             `json:"remedy"`
		Values   map[string]float64 `json:"values"`
		Assumed  []string           `json:"assumed"`
	} `json:"findings"`
	Changes []struct {
		Kind        string   `json:"kind"`
		Where       string   `json:"where"`
		Side        string   `json:"side"`
		PerSpoke    int      `json:"per_spoke"`
		Count       int      `json:"count"`
		StackMM     *float64 `json:"stack_mm"`
		DiameterMM  *float64 `json:"diameter_mm"`
		ThicknessMM *float64 `json:"thickness_mm"`
	} `json:"changes"`
	Cautions []string `json:"cautions"`
	Left     struct {
		LengthMM      float64  `json:"length_mm"`
		StockLengthMM *float64 `json:"stock_length_mm"`
		TensionN      float64  `json:"tension_n"`
	} `json:"left"`
	Geometry struct {
		Crosses struct{ Left, Right int } `json:"crosses"`
		Left    sideJSON                  `json:"left"`
		Right   sideJSON                  `json:"right"`
	} `json:"geometry"`
}

func (r reportJSON) codes(minSeverity string) []string {
	rank := map[string]int{"info": 0, "warning": 1, "error": 2}
	var out []string
	for _, f := range r.Findings {
		if rank[f.Severity] >= rank[minSeverity] {
			out = append(out, f.Code+"/"+f.Side)
		}
	}
	return out
}

func (e *env) check(body string, status int) (reportJSON, response) {
	e.t.Helper()
	r := e.want(e.do("POST", "/v1/compatibility-checks", e.keyA[service.RoleRead], body), status)
	noNonFinite(e.t, r)
	var rep reportJSON
	if status == 200 {
		r.json(e.t, &rep)
	}
	return rep, r
}

// TestCompatibilityRoadFront: a plain road front fits with nothing above
// info, and its lengths are the geometry's: 32 holes, 3-cross, r = 19,
// R = 300, 35 mm flanges → √(300² + 19² − 2·300·19·cos 67.5° + 35²) − 1.3
// (law of cosines).
func TestCompatibilityRoadFront(t *testing.T) {
	e := newEnv(t)
	rep, _ := e.check(roadFrontBody, 200)
	if rep.Verdict != "fits" {
		t.Errorf("verdict %s, findings %v", rep.Verdict, rep.codes("info"))
	}
	if got := rep.codes("warning"); len(got) != 0 {
		t.Errorf("findings above info: %v", got)
	}
	want := lawOfCosines(32, 3, 38, 600, 35, 2.6)
	if d := rep.Left.LengthMM - want; d > 1e-9 || d < -1e-9 || rep.Geometry.Left.LengthMM != rep.Left.LengthMM {
		t.Errorf("left length %.9f (geometry %.9f), law of cosines %.9f", rep.Left.LengthMM, rep.Geometry.Left.LengthMM, want)
	}
	if rep.Left.TensionN != 1000 { // symmetric hub: both sides at the target
		t.Errorf("left tension %v, want 1000", rep.Left.TensionN)
	}
	// No stock given: the thread checks rest on the computed length, and
	// every info finding that uses it says so.
	for _, f := range rep.Findings {
		if f.Code == "thread_engagement_short" && !strings.Contains(strings.Join(f.Assumed, ","), "spoke_end_mm") {
			t.Errorf("thread finding without the assumed spoke end: %+v", f)
		}
	}
}

// TestCompatibilityStock: with stock lengths the report carries each side's
// stock length and the thread checks use where that spoke really ends.
func TestCompatibilityStock(t *testing.T) {
	e := newEnv(t)
	body := strings.Replace(roadFrontBody, `"target_tension_n": 1000 }`, `"target_tension_n": 1000, "stock": {"increment_mm": 2} }`, 1)
	rep, _ := e.check(body, 200)
	if rep.Left.StockLengthMM == nil || rep.Geometry.Left.SpokeEndMM == nil {
		t.Fatalf("stock length %v, spoke end %v: want both", rep.Left.StockLengthMM, rep.Geometry.Left.SpokeEndMM)
	}
	// 2 mm steps: the nearest is at most 1 mm from the order length.
	if d := *rep.Left.StockLengthMM - *rep.Geometry.Left.OrderLengthMM; d > 1 || d < -1 {
		t.Errorf("stock %v is not the nearest 2 mm step to %v", *rep.Left.StockLengthMM, *rep.Geometry.Left.OrderLengthMM)
	}
}

// TestCompatibilityMotorHub: the motor build gets its hub washers and its
// drilled rim holes, the motor caution, and the drilling caution; its
// geometry is that of 2-cross on a 150 mm flange circle.
func TestCompatibilityMotorHub(t *testing.T) {
	e := newEnv(t)
	rep, _ := e.check(motorBody, 200)
	if rep.Verdict != "fits_with_changes" {
		t.Fatalf("verdict %s, findings %v", rep.Verdict, rep.codes("info"))
	}
	var washers, drill bool
	for _, c := range rep.Changes {
		switch {
		// Gap 6.0 − 4.5 = 1.5 mm; 2 × 0.8 mm leaves −0.1 mm, within ±0.3 mm
		// (common practice) → 2 per spoke, 72 for 36 spokes.
		case c.Kind == "add_washers" && c.Where == "hub":
			washers = c.PerSpoke == 2 && c.Count == 72 && c.StackMM != nil && *c.StackMM == 1.6
		// Shank 4.5 + 0.2 mm clearance (common practice) → drill 4.7 mm.
		case c.Kind == "drill_rim_holes":
			drill = c.DiameterMM != nil && *c.DiameterMM == 4.7 && c.Count == 36
		}
	}
	if !washers || !drill {
		t.Errorf("changes %+v: want 2 × 0.8 mm hub washers per spoke and 36 holes drilled to 4.7 mm", rep.Changes)
	}
	all := strings.Join(rep.Cautions, "\n")
	for _, want := range []string{"motor maker's requirements", "vehicle rules", "may void the rim maker's warranty"} {
		if !strings.Contains(all, want) {
			t.Errorf("cautions lack %q:\n%s", want, all)
		}
	}
	want := lawOfCosines(36, 2, 150, 380, 22, 4.0)
	if d := rep.Left.LengthMM - want; d > 1e-9 || d < -1e-9 {
		t.Errorf("left length %.9f, law of cosines %.9f", rep.Left.LengthMM, want)
	}
}

// TestCompatibilityRimWashers: a nipple head that would pull through the
// rim hole gets a washer under each nipple, and the lengths include it: the
// washer lifts each nipple head away from the hub, so the effective ERD
// grows by twice the washer.
func TestCompatibilityRimWashers(t *testing.T) {
	e := newEnv(t)
	// A 5.6 mm head on a 5.0 mm hole: 0.6 mm < 0.8 mm (common practice).
	body := strings.Replace(roadFrontBody, `"hole_diameter_mm": 4.3`, `"hole_diameter_mm": 5.0`, 1)
	rep, _ := e.check(body, 200)
	var stack float64
	for _, c := range rep.Changes {
		if c.Kind == "add_washers" && c.Where == "rim" && c.StackMM != nil {
			stack = *c.StackMM
		}
	}
	if stack == 0 {
		t.Fatalf("no rim washers proposed: %+v", rep.Changes)
	}
	want := lawOfCosines(32, 3, 38, 600+2*stack, 35, 2.6)
	if d := rep.Left.LengthMM - want; d > 1e-9 || d < -1e-9 {
		t.Errorf("left length %.9f, want %.9f with %.2f mm washers under the nipple heads", rep.Left.LengthMM, want, stack)
	}
	if !strings.Contains(strings.Join(rep.Cautions, " "), "include the 0.5 mm") {
		t.Errorf("cautions do not say the lengths include the correction: %v", rep.Cautions)
	}
}

// Test584On622: 584 and 622 are different ISO 5775 bead seat diameters.
func TestCompatibility584On622(t *testing.T) {
	e := newEnv(t)
	rep, _ := e.check(strings.Replace(roadFrontBody, `"bsd_mm": 622, "width_mm": 25`, `"bsd_mm": 584, "width_mm": 25`, 1), 200)
	if rep.Verdict != "does_not_fit" {
		t.Fatalf("verdict %s", rep.Verdict)
	}
	found := false
	for _, f := range rep.Findings {
		found = found || (f.Code == "tyre_rim_diameter_mismatch" && f.Severity == "error")
	}
	if !found {
		t.Errorf("no tyre_rim_diameter_mismatch error: %v", rep.codes("info"))
	}
}

// TestCompatibilityWraps: 4-cross on the 150 mm motor flange and a 380 ERD
// needs a hub angle of 80°, past arccos(75/190) = 66.75° (plane
// trigonometry), so the most is 3 (60°). Not an error here: the finding
// lacing_wraps_flange, and that side's lengths computed at 3 crosses.
func TestCompatibilityWraps(t *testing.T) {
	e := newEnv(t)
	rep, _ := e.check(strings.Replace(motorBody, `"left": 2, "right": 2`, `"left": 4, "right": 2`, 1), 200)
	if rep.Verdict != "does_not_fit" {
		t.Errorf("verdict %s", rep.Verdict)
	}
	var remedy string
	for _, f := range rep.Findings {
		if f.Code == "lacing_wraps_flange" && f.Side == "left" {
			remedy = f.Remedy
		}
	}
	if !strings.Contains(remedy, "at most 3 crosses") {
		t.Errorf("wraps remedy %q does not say at most 3 crosses; findings %v", remedy, rep.codes("info"))
	}
	if rep.Geometry.Crosses.Left != 3 || rep.Geometry.Crosses.Right != 2 {
		t.Errorf("computed at crosses %+v, want 3/2", rep.Geometry.Crosses)
	}
	want := lawOfCosines(36, 3, 150, 380, 22, 4.0)
	if d := rep.Left.LengthMM - want; d > 1e-9 || d < -1e-9 {
		t.Errorf("left length %.9f, want the 3-cross %.9f", rep.Left.LengthMM, want)
	}
	if !strings.Contains(strings.Join(rep.Cautions, " "), "computed for 3 crosses") {
		t.Errorf("cautions do not label the recomputed side: %v", rep.Cautions)
	}
}

// TestCompatibilityBadInput: garbage and absurd values are 400/422 naming
// the field, in this body's terms.
func TestCompatibilityBadInput(t *testing.T) {
	e := newEnv(t)
	rep := func(old, new string) string {
		if !strings.Contains(roadFrontBody, old) {
			t.Fatalf("fixture lacks %q", old)
		}
		return strings.Replace(roadFrontBody, old, new, 1)
	}
	cases := []struct {
		name    string
		body    string
		status  int
		pointer string
	}{
		{"garbage", `{"spoke_count": 32, "hub": `, 400, ""},
		{"wrong type", rep(`"spoke_count": 32`, `"spoke_count": "many"`), 400, "/spoke_count"},
		{"unknown field", rep(`"target_tension_n": 1000 }`, `"target_tension_n": 1000, "colour": "red" }`), 400, "/colour"},
		{"unknown nested field", rep(`"length_mm": 12,`, `"length_mm": 12, "colour": "gold",`), 400, "/nipple/colour"},
		{"negative pcd", rep(`"pcd_mm": 38, "center_to_flange_mm": 35, "hole_diameter_mm": 2.6, "thickness_mm": 2.7},
          "right"`, `"pcd_mm": -38, "center_to_flange_mm": 35, "hole_diameter_mm": 2.6, "thickness_mm": 2.7},
          "right"`), 400, "/hub/left/pcd_mm"},
		{"zero erd", rep(`"erd_mm": 600`, `"erd_mm": 0`), 400, "/rim/erd_mm"},
		{"erd inside the flange circle", rep(`"erd_mm": 600`, `"erd_mm": 30`), 400, "/rim/erd_mm"},
		{"erd above the bsd", rep(`"erd_mm": 600`, `"erd_mm": 630`), 422, "/rim/erd_mm"},
		{"missing nipple", rep(`"nipple": {"thread": {"diameter_mm": 2.0, "tpi": 56}, "shank_diameter_mm": 3.9, "head_diameter_mm": 5.6,
             "length_mm": 12, "material": "brass"},`, ``), 400, ""},
		{"no spoke size", rep(`"diameter_mm": 2.0, "material"`, `"material"`), 400, "/spoke/diameter_mm"},
		{"unknown material", rep(`"material": "stainless_steel"`, `"material": "unobtainium"`), 400, "/spoke/material"},
		{"absurd tension", rep(`"target_tension_n": 1000`, `"target_tension_n": 1e9`), 400, "/target_tension_n"},
		{"crosses for half the wheel", rep(`"left": 3, "right": 3`, `"left": 8, "right": 3`), 422, "/crosses/left"},
		{"rim holes beyond the flange", rep(`"max_tension_n": 1300`, `"max_tension_n": 1300, "spoke_hole_offset_mm": 40`), 422, "/rim/spoke_hole_offset_mm"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, r := e.check(c.body, c.status)
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

// TestCompatibilityReportShape: the report's lists are arrays, never null,
// and it carries the geometry it rests on.
func TestCompatibilityReportShape(t *testing.T) {
	e := newEnv(t)
	_, r := e.check(roadFrontBody, 200)
	var raw map[string]json.RawMessage
	r.json(t, &raw)
	for _, k := range []string{"findings", "changes", "cautions"} {
		if string(raw[k]) == "null" || len(raw[k]) == 0 {
			t.Errorf("%s is %s", k, raw[k])
		}
	}
	if _, ok := raw["geometry"]; !ok {
		t.Error("no geometry in the report")
	}
}
