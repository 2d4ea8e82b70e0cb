package api_test

import (
	"context"
	"math"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"
	"github.com/google/uuid"

	"wheelbench/service"
	"wheelbench/service/tension"
)

type resultOut struct {
	Reading     float64                 `json:"reading"`
	TensionN    float64                 `json:"tension_n"`
	TensionKgf  float64                 `json:"tension_kgf"`
	TensionLbf  float64                 `json:"tension_lbf"`
	IntervalN   [2]float64              `json:"interval_n"`
	Reliable    bool                    `json:"reliable"`
	Status      string                  `json:"status"`
	Method      string                  `json:"method"`
	DeltaD      float64                 `json:"delta_diameter_mm"`
	Ratio       float64                 `json:"stiffness_ratio"`
	Resolution  float64                 `json:"resolution_n_per_unit"`
	Sensitivity *float64                `json:"sensitivity_n_per_0_01_mm"`
	Warnings    []struct{ Code string } `json:"warnings"`
	Cautions    []string                `json:"cautions"`
}

type conversionOut struct {
	Calibration *struct {
		ID      uuid.UUID `json:"id"`
		Version int       `json:"version"`
	} `json:"calibration"`
	Results []resultOut `json:"results"`
	Target  *struct {
		TensionN        float64    `json:"tension_n"`
		TensionKgf      float64    `json:"tension_kgf"`
		TensionLbf      float64    `json:"tension_lbf"`
		Reading         float64    `json:"reading"`
		ReadingInterval [2]float64 `json:"reading_interval"`
		Status          string     `json:"status"`
		Cautions        []string   `json:"cautions"`
	} `json:"target"`
}

func (e *env) convert(body map[string]any, status int) (conversionOut, response) {
	e.t.Helper()
	r := e.want(e.do("POST", "/v1/tension-conversions", e.keyA[service.RoleRead], body), status)
	var out conversionOut
	if status == 200 {
		r.json(e.t, &out)
	}
	return out, r
}

// TestCalibrationVersions: versions count 1, 2 per tool, are immutable
// (no routes to change them, and the database refuses), keep the tool facts
// they were fitted with, replay under Idempotency-Key, and reach the feed.
func TestCalibrationVersions(t *testing.T) {
	e := newEnv(t)
	tool := e.newTool()
	cols := e.synthColumns(1.5, 1.8, 2.0, 2.3)
	v1 := e.publish(tool, cols)
	if v1.Version != 1 || !v1.Model.Identified || v1.Tool.UnitMM != 0.01 {
		t.Fatalf("v1 = %+v", v1)
	}
	// The fit recovers the synthetic span within a few standard errors.
	for _, p := range v1.Model.Parameters {
		if p.Name == "span_mm" && math.Abs(p.Value-synthParams.SpanMM) > 4*p.SE+0.5 {
			t.Errorf("fitted span %g ± %g, synthetic %g", p.Value, p.SE, synthParams.SpanMM)
		}
	}
	// The tool's dial unit changes; v1 keeps its facts, v2 gets the new.
	tr := e.want(e.do("GET", "/v1/tools/"+tool.String(), e.keyA[service.RoleRead], nil), 200)
	e.want(e.do("PATCH", "/v1/tools/"+tool.String(), e.keyA[service.RoleWrite], map[string]any{"unit_mm": 0.02}, "If-Match", tr.Header.Get("ETag")), 200)
	v2 := e.publish(tool, cols)
	if v2.Version != 2 || v2.Tool.UnitMM != 0.02 {
		t.Fatalf("v2 = %+v", v2)
	}
	var again calibrationOut
	e.want(e.do("GET", "/v1/calibrations/"+v1.ID.String(), e.keyA[service.RoleRead], nil), 200).json(t, &again)
	if again.Version != 1 || again.Tool.UnitMM != 0.01 {
		t.Errorf("v1 read back as %+v", again)
	}
	// Another tool numbers from 1.
	if v := e.publish(e.newTool(), cols[:2]); v.Version != 1 {
		t.Errorf("another tool's first version is %d", v.Version)
	}
	// Idempotency-Key: the retry replays version 3, it does not make version 4.
	path := "/v1/tools/" + tool.String() + "/calibrations"
	body := map[string]any{"columns": cols}
	k := []string{"Idempotency-Key", "cal-3"}
	first := e.want(e.do("POST", path, e.keyA[service.RoleWrite], body, k...), 201)
	replay := e.want(e.do("POST", path, e.keyA[service.RoleWrite], body, k...), 201)
	if string(first.body) != string(replay.body) || replay.Header.Get("Idempotent-Replayed") != "true" {
		t.Error("the retry was not a replay")
	}
	e.want(e.do("POST", path, e.keyA[service.RoleRead], body), 403)
	// List: three versions, in order, one per page.
	var versions []int
	cursor := ""
	for range 5 {
		var pg struct {
			Items      []calibrationOut `json:"items"`
			NextCursor string           `json:"next_cursor"`
		}
		q := path + "?limit=1"
		if cursor != "" {
			q += "&cursor=" + cursor
		}
		e.want(e.do("GET", q, e.keyA[service.RoleRead], nil), 200).json(t, &pg)
		for _, it := range pg.Items {
			versions = append(versions, it.Version)
		}
		if cursor = pg.NextCursor; cursor == "" {
			break
		}
	}
	if !cmp.Equal(versions, []int{1, 2, 3}) {
		t.Errorf("listed versions %v", versions)
	}
	e.want(e.do("GET", "/v1/tools/"+uuid.NewString()+"/calibrations", e.keyA[service.RoleRead], nil), 404)
	// No route changes or deletes a version (not in the spec: 404 or 405).
	for _, m := range []string{"PATCH", "DELETE", "PUT"} {
		r := e.do(m, "/v1/calibrations/"+v1.ID.String(), e.keyA[service.RoleAdmin], map[string]any{"notes": "x"})
		if r.StatusCode != 404 && r.StatusCode != 405 {
			t.Errorf("%s a calibration: %d", m, r.StatusCode)
		}
	}
	// Nor does the database.
	ctx := context.Background()
	if _, err := e.st.Pool().Exec(ctx, `UPDATE calibrations SET notes = 'changed' WHERE id = $1`, v1.ID); err == nil {
		t.Error("the database let a calibration version change")
	}
	if _, err := e.st.Pool().Exec(ctx, `DELETE FROM calibrations WHERE id = $1`, v1.ID); err == nil {
		t.Error("the database let a calibration version be deleted")
	}
	if got := e.feedTypes("calibration", v1.ID, 1); !cmp.Equal(got, []string{"calibration.published"}) {
		t.Errorf("feed for v1: %v", got)
	}
}

// TestCalibrationRefusals: a column whose readings fall is a 422 naming
// the point; a single column is stored with identified false and its reason.
func TestCalibrationRefusals(t *testing.T) {
	e := newEnv(t)
	tool := e.newTool()
	cols := e.synthColumns(1.8, 2.0)
	cols[1].Points[3].Reading = cols[1].Points[2].Reading - 5
	r := e.want(e.do("POST", "/v1/tools/"+tool.String()+"/calibrations", e.keyA[service.RoleWrite], map[string]any{"columns": cols}), 422)
	wantPointer(t, r.problem(t), "/columns/1/points/3/reading")
	bad := map[string]any{"columns": []any{map[string]any{"spoke": map[string]any{"diameter_mm": 2.0, "material": "unobtainium"},
		"points": []any{map[string]any{"tension_n": 800, "reading": 60}, map[string]any{"tension_n": 900, "reading": 62}}}}}
	wantPointer(t, e.want(e.do("POST", "/v1/tools/"+tool.String()+"/calibrations", e.keyA[service.RoleWrite], bad), 400).problem(t), "/columns/0/spoke/material")
	one := e.publish(tool, e.synthColumns(2.0))
	if one.Model.Identified || one.Model.UnidentifiedReason == "" {
		t.Errorf("a single column identified the model: %+v", one.Model)
	}
	var list struct{ Items []calibrationOut }
	e.want(e.do("GET", "/v1/tools/"+tool.String()+"/calibrations", e.keyA[service.RoleRead], nil), 200).json(t, &list)
	if len(list.Items) != 1 {
		t.Errorf("refused calibrations were stored: %d versions", len(list.Items))
	}
}

// TestConversions goes through the contract with the synthetic tool: a
// calibrated point, interpolation in a column and between columns, an
// extrapolated section with its caution and an interval holding the
// synthetic truth, targets in kgf and lbf, and the refusals.
func TestConversions(t *testing.T) {
	e := newEnv(t)
	cols := e.synthColumns(1.5, 1.8, 2.0, 2.3)
	cal := e.publish(e.newTool(), cols)
	byID := func(extra map[string]any) map[string]any {
		b := map[string]any{"calibration_id": cal.ID}
		for k, v := range extra {
			b[k] = v
		}
		return b
	}

	// A table point of the 2.0 mm column: calibrated, the table's tension.
	p := cols[2].Points[4] // 800 N
	out, _ := e.convert(byID(map[string]any{"spoke": steel(2.0), "readings": []float64{p.Reading, p.Reading + 0.5}}), 200)
	if out.Calibration == nil || out.Calibration.ID != cal.ID || out.Calibration.Version != 1 {
		t.Errorf("conversion does not name its calibration: %+v", out.Calibration)
	}
	r0, r1 := out.Results[0], out.Results[1]
	if r0.Status != "calibrated" || r0.Method != "column_monotone_cubic" || r0.TensionN != p.TensionN {
		t.Errorf("table point: %+v", r0)
	}
	// Units by definition: kgf = 9.80665 N (CGPM 1901), lbf = 4.4482216152605 N.
	if math.Abs(r0.TensionKgf-p.TensionN/9.80665) > 1e-9 || math.Abs(r0.TensionLbf-p.TensionN/4.4482216152605) > 1e-9 {
		t.Errorf("units: %g N = %g kgf = %g lbf", r0.TensionN, r0.TensionKgf, r0.TensionLbf)
	}
	if r1.Status != "interpolated" || r1.TensionN <= r0.TensionN || r1.TensionN >= cols[2].Points[5].TensionN {
		t.Errorf("half a unit above the table point: %+v", r1)
	}

	// Between columns (1.9 mm) and beyond them (2.6 mm, the demo's thick
	// spoke): the tool model. Truth is the synthetic tension the reading
	// was generated at.
	for _, c := range []struct {
		d      float64
		status string
	}{{1.9, "interpolated"}, {2.6, "extrapolated"}, {2.3368, "extrapolated"}} {
		for _, truth := range []float64{700, 1100} {
			rd := math.Round(e.synthReading(steel(c.d), truth))
			out, _ := e.convert(byID(map[string]any{"spoke": steel(c.d), "readings": []float64{rd}}), 200)
			res := out.Results[0]
			if res.Status != c.status || res.Method != "tool_model" {
				t.Errorf("%g mm: status %s method %s", c.d, res.Status, res.Method)
			}
			if res.Reliable && (truth < res.IntervalN[0] || truth > res.IntervalN[1]) {
				t.Errorf("%g mm, reading %g: %.0f N, interval %.0f–%.0f misses the synthetic %g N", c.d, rd, res.TensionN, res.IntervalN[0], res.IntervalN[1], truth)
			}
			if c.status == "extrapolated" {
				if len(res.Cautions) == 0 || res.DeltaD <= 0 || res.Ratio <= 1 {
					t.Errorf("%g mm extrapolated without caution or distance: %+v", c.d, res)
				}
			}
			if res.Sensitivity == nil || *res.Sensitivity <= 0 || res.Resolution <= 0 {
				t.Errorf("%g mm: sensitivity %v, resolution %g", c.d, res.Sensitivity, res.Resolution)
			}
		}
	}

	// Targets: 120 kgf ≈ 1177 N (common shop figure; 120 × 9.80665 = 1176.798 N),
	// 270 lbf = 270 × 4.4482216152605 N. The reading to aim for brackets the
	// synthetic tool's own reading at that tension.
	for _, c := range []struct {
		field string
		v, n  float64
	}{{"target_tension_kgf", 120, 120 * 9.80665}, {"target_tension_lbf", 270, 270 * 4.4482216152605}, {"target_tension_n", 1000, 1000}} {
		out, _ := e.convert(byID(map[string]any{"spoke": steel(2.6), c.field: c.v}), 200)
		tg := out.Target
		if tg == nil || math.Abs(tg.TensionN-c.n) > 1e-9 {
			t.Fatalf("%s %g: target %+v", c.field, c.v, tg)
		}
		truth := e.synthReading(steel(2.6), c.n)
		if truth < tg.ReadingInterval[0] || truth > tg.ReadingInterval[1] || tg.Status != "extrapolated" || len(tg.Cautions) == 0 {
			t.Errorf("%s: aim %g [%g, %g] (%s), synthetic reading %g", c.field, tg.Reading, tg.ReadingInterval[0], tg.ReadingInterval[1], tg.Status, truth)
		}
	}

	// Refusals.
	_, r := e.convert(byID(map[string]any{"spoke": steel(2.0), "readings": []float64{1e5}}), 422)
	wantPointer(t, r.problem(t), "/readings/0")
	_, r = e.convert(byID(map[string]any{"spoke": steel(2.0), "target_tension_n": 900, "target_tension_kgf": 90}), 400)
	r.problem(t)
	_, r = e.convert(byID(map[string]any{"spoke": steel(2.0)}), 400)
	wantPointer(t, r.problem(t), "/readings")
	_, r = e.convert(map[string]any{"spoke": steel(2.0), "readings": []float64{60}}, 400)
	wantPointer(t, r.problem(t), "/calibration_id")
	_, r = e.convert(map[string]any{"calibration_id": cal.ID, "calibration": map[string]any{"columns": cols}, "spoke": steel(2.0), "readings": []float64{60}}, 400)
	wantPointer(t, r.problem(t), "/calibration")
	_, r = e.convert(map[string]any{"calibration_id": uuid.New(), "spoke": steel(2.0), "readings": []float64{60}}, 404)
	r.problem(t)

	// A single-column calibration converts its own column and refuses any
	// other diameter.
	single := e.publish(e.newTool(), e.synthColumns(2.0))
	e.convert(map[string]any{"calibration_id": single.ID, "spoke": steel(2.0), "readings": []float64{p.Reading}}, 200)
	_, r = e.convert(map[string]any{"calibration_id": single.ID, "spoke": steel(2.3), "readings": []float64{p.Reading}}, 422)
	wantPointer(t, r.problem(t), "/spoke")
	// The same inline, and a non-monotone inline column.
	_, r = e.convert(map[string]any{"calibration": map[string]any{"columns": e.synthColumns(2.0)}, "spoke": steel(2.3), "readings": []float64{60}}, 422)
	wantPointer(t, r.problem(t), "/spoke")
	bent := e.synthColumns(1.8, 2.0)
	bent[0].Points[6].Reading = bent[0].Points[5].Reading - 3
	_, r = e.convert(map[string]any{"calibration": map[string]any{"columns": bent}, "spoke": steel(2.0), "readings": []float64{60}}, 422)
	wantPointer(t, r.problem(t), "/calibration/columns/0/points/6/reading")
	_, r = e.convert(map[string]any{"calibration": map[string]any{"columns": cols, "tool": map[string]any{"unit_mm": 5}}, "spoke": steel(2.0), "readings": []float64{60}}, 400)
	wantPointer(t, r.problem(t), "/calibration/tool/unit_mm")
}

// TestStoredModelReused: a conversion by calibration_id equals the same
// calibration sent inline (fitted per request), and it uses the model as
// stored — a model changed in the database changes the answer, so nothing
// is refitted on the way.
func TestStoredModelReused(t *testing.T) {
	e := newEnv(t)
	cols := e.synthColumns(1.5, 1.8, 2.0, 2.3)
	cal := e.publish(e.newTool(), cols)
	rd := math.Round(e.synthReading(steel(2.6), 1000))
	req := map[string]any{"spoke": steel(2.6), "readings": []float64{rd, rd + 3}}
	byID, _ := e.convert(map[string]any{"calibration_id": cal.ID, "spoke": req["spoke"], "readings": req["readings"]}, 200)
	inline, _ := e.convert(map[string]any{"calibration": map[string]any{"columns": cols}, "spoke": req["spoke"], "readings": req["readings"]}, 200)
	if inline.Calibration != nil {
		t.Error("an inline conversion names a stored calibration")
	}
	if diff := cmp.Diff(inline.Results, byID.Results); diff != "" {
		t.Errorf("by id and inline differ (-inline +id):\n%s", diff)
	}
	// Move the stored span by 2 mm behind the service's back.
	ctx := context.Background()
	pool := e.st.Pool()
	for _, q := range []string{
		`ALTER TABLE calibrations DISABLE TRIGGER calibrations_immutable`,
		`UPDATE calibrations SET model = jsonb_set(model, '{physical,params,0}', to_jsonb((model #>> '{physical,params,0}')::float8 + 2)) WHERE id = '` + cal.ID.String() + `'`,
		`ALTER TABLE calibrations ENABLE TRIGGER calibrations_immutable`,
	} {
		if _, err := pool.Exec(ctx, q); err != nil {
			t.Fatal(err)
		}
	}
	moved, _ := e.convert(map[string]any{"calibration_id": cal.ID, "spoke": req["spoke"], "readings": req["readings"]}, 200)
	if moved.Results[0].TensionN == byID.Results[0].TensionN {
		t.Error("a changed stored model gave the same tension: the model was not read from the version")
	}
}

// TestAudit: a synthetic wheel, 12 spokes a side, right at 1100 N and left
// at 0.62 × 1100 N (the geometric ratio given), with right spoke 5 20 %
// tight and left spoke 2 25 % slack. Readings are the synthetic tool's.
func TestAudit(t *testing.T) {
	e := newEnv(t)
	cal := e.publish(e.newTool(), e.synthColumns(1.5, 1.8, 2.0, 2.3))
	const right, ratio = 1100.0, 0.62
	var readings []map[string]any
	for side, base := range map[string]float64{"right": right, "left": right * ratio} {
		for i := range 12 {
			tn := base
			if side == "right" && i == 5 {
				tn *= 1.2
			}
			if side == "left" && i == 2 {
				tn *= 0.75
			}
			readings = append(readings, map[string]any{"side": side, "spoke": i, "reading": math.Round(e.synthReading(steel(2.0), tn))})
		}
	}
	body := map[string]any{"calibration_id": cal.ID, "spoke": steel(2.0), "readings": readings,
		"target_tension_n": right, "geometric_left_right_ratio": ratio}
	var a struct {
		TolerancePct float64 `json:"tolerance_pct"`
		Sides        []struct {
			Side       string  `json:"side"`
			AimN       float64 `json:"aim_n"`
			AimReading float64 `json:"aim_reading"`
			MeanN      float64 `json:"mean_n"`
			MinN       float64 `json:"min_n"`
			MaxN       float64 `json:"max_n"`
			Outliers   []int   `json:"outliers"`
		} `json:"sides"`
		Spokes []struct {
			Side   string `json:"side"`
			Spoke  int    `json:"spoke"`
			Action string `json:"action"`
		} `json:"spokes"`
		Measured *float64 `json:"measured_left_right_ratio"`
	}
	e.want(e.do("POST", "/v1/tension-audits", e.keyA[service.RoleRead], body), 200).json(t, &a)
	if a.TolerancePct != 10 {
		t.Errorf("default tolerance %g, want 10 %% (common practice)", a.TolerancePct)
	}
	for _, s := range a.Sides {
		wantAim := map[string]float64{"right": right, "left": right * ratio}[s.Side]
		if math.Abs(s.AimN-wantAim) > 1e-9 {
			t.Errorf("%s aim %g, want %g", s.Side, s.AimN, wantAim)
		}
		// The aim reading is the target conversion's reading.
		out, _ := e.convert(map[string]any{"calibration_id": cal.ID, "spoke": steel(2.0), "target_tension_n": wantAim}, 200)
		if s.AimReading != out.Target.Reading {
			t.Errorf("%s aim reading %g, target conversion %g", s.Side, s.AimReading, out.Target.Reading)
		}
		wantOut := map[string][]int{"right": {5}, "left": {2}}[s.Side]
		if !cmp.Equal(s.Outliers, wantOut) || s.MinN >= s.MeanN || s.MaxN <= s.MeanN {
			t.Errorf("%s: %+v", s.Side, s)
		}
	}
	actions := map[string]string{}
	for _, sp := range a.Spokes {
		if sp.Action != "ok" {
			actions[sp.Side+string(rune('0'+sp.Spoke))] = sp.Action
		}
	}
	if !cmp.Equal(actions, map[string]string{"right5": "loosen", "left2": "tighten"}) {
		t.Errorf("actions %v", actions)
	}
	if a.Measured == nil || math.Abs(*a.Measured-ratio) > 0.05*ratio {
		t.Errorf("measured ratio %v, built to %g", a.Measured, ratio)
	}
	// Bad readings name the field.
	wantPointer(t, e.want(e.do("POST", "/v1/tension-audits", e.keyA[service.RoleRead], map[string]any{"calibration_id": cal.ID, "spoke": steel(2.0),
		"readings": []any{map[string]any{"side": "left", "spoke": 0, "reading": 1e5}}}), 422).problem(t), "/readings/0/reading")
	wantPointer(t, e.want(e.do("POST", "/v1/tension-audits", e.keyA[service.RoleRead], map[string]any{"calibration_id": cal.ID, "spoke": steel(2.0),
		"readings": []any{map[string]any{"side": "middle", "spoke": 0, "reading": 60}}}), 400).problem(t), "/readings/0/side")
}

// TestChart: the SVG carries the requested section's curve and band.
func TestChart(t *testing.T) {
	e := newEnv(t)
	cal := e.publish(e.newTool(), e.synthColumns(1.5, 1.8, 2.0, 2.3))
	path := "/v1/calibrations/" + cal.ID.String() + "/chart.svg"
	r := e.want(e.do("GET", path+"?diameter_mm=2.6", e.keyA[service.RoleRead], nil), 200)
	svg := string(r.body)
	if r.Header.Get("Content-Type") != "image/svg+xml" || !strings.HasPrefix(svg, "<svg") {
		t.Fatalf("content type %q, body %.80s", r.Header.Get("Content-Type"), svg)
	}
	if !strings.Contains(svg, "requested: round 2.6 mm") || !strings.Contains(svg, `class="band extrapolated"`) {
		t.Error("the chart lacks the requested 2.6 mm curve with its band, extrapolated")
	}
	if !strings.Contains(svg, "Tensiometer bench tensiometer · serial not recorded · calibration version 1") {
		t.Error("the chart's title does not name the tool and the calibration version")
	}
	if n := strings.Count(svg, `class="curve"`); n != 5 {
		t.Errorf("%d curves, want the four columns and the requested section", n)
	}
	plain := string(e.want(e.do("GET", path, e.keyA[service.RoleRead], nil), 200).body)
	if strings.Contains(plain, "requested") {
		t.Error("a chart without a section draws one")
	}
	blade := string(e.want(e.do("GET", path+"?profile=bladed&width_mm=2.3&thickness_mm=1.2", e.keyA[service.RoleRead], nil), 200).body)
	if !strings.Contains(blade, "requested: bladed 2.3 × 1.2 mm") {
		t.Error("the bladed section is not drawn")
	}
	wantPointer(t, e.want(e.do("GET", path+"?diameter_mm=abc", e.keyA[service.RoleRead], nil), 400).problem(t), "query:diameter_mm")
	wantPointer(t, e.want(e.do("GET", path+"?diameter_mm=2&material=unobtainium", e.keyA[service.RoleRead], nil), 400).problem(t), "query:material")
	single := e.publish(e.newTool(), e.synthColumns(2.0))
	e.want(e.do("GET", "/v1/calibrations/"+single.ID.String()+"/chart.svg?diameter_mm=2.3", e.keyA[service.RoleRead], nil), 422).problem(t)
	e.want(e.do("GET", "/v1/calibrations/"+single.ID.String()+"/chart.svg?diameter_mm=2.0", e.keyA[service.RoleRead], nil), 200)
}

// TestTensionBadBodies: garbage, wrong types, out-of-range values that
// would produce NaN or Inf, unknown fields and huge bodies are 4xx naming
// the field, never a number.
func TestTensionBadBodies(t *testing.T) {
	e := newEnv(t)
	cal := e.publish(e.newTool(), e.synthColumns(1.8, 2.0))
	id := `"` + cal.ID.String() + `"`
	sp := `"spoke": {"diameter_mm": 2.0, "material": "stainless_steel"}`
	for _, c := range []struct {
		name, body string
		status     int
		pointer    string
	}{
		{"garbage", `{"calibration_id": ` + id + `, `, 400, ""},
		{"reading a string", `{"calibration_id": ` + id + `, ` + sp + `, "readings": ["sixty"]}`, 400, "/readings/0"},
		{"reading NaN text", `{"calibration_id": ` + id + `, ` + sp + `, "readings": ["NaN"]}`, 400, "/readings/0"},
		{"reading overflows", `{"calibration_id": ` + id + `, ` + sp + `, "readings": [1e400]}`, 400, ""},
		{"reading huge", `{"calibration_id": ` + id + `, ` + sp + `, "readings": [1e300]}`, 400, "/readings/0"},
		{"diameter huge", `{"calibration_id": ` + id + `, "spoke": {"diameter_mm": 1e308, "material": "stainless_steel"}, "readings": [60]}`, 400, "/spoke/diameter_mm"},
		{"diameter zero", `{"calibration_id": ` + id + `, "spoke": {"diameter_mm": 0, "material": "stainless_steel"}, "readings": [60]}`, 400, "/spoke/diameter_mm"},
		{"e_gpa tiny", `{"calibration_id": ` + id + `, "spoke": {"diameter_mm": 2, "e_gpa": 1e-300}, "readings": [60]}`, 400, "/spoke/e_gpa"},
		{"lbf to infinity", `{"calibration_id": ` + id + `, ` + sp + `, "target_tension_lbf": 1e308}`, 400, "/target_tension_lbf"},
		{"negative target", `{"calibration_id": ` + id + `, ` + sp + `, "target_tension_n": -5}`, 400, "/target_tension_n"},
		{"bad id", `{"calibration_id": "nope", ` + sp + `, "readings": [60]}`, 400, "/calibration_id"},
		{"unknown field", `{"calibration_id": ` + id + `, ` + sp + `, "readings": [60], "fudge": 1}`, 400, "/fudge"},
		{"inline tension NaN-ish", `{"calibration": {"columns": [{"spoke": {"diameter_mm": 2, "material": "stainless_steel"}, "points": [{"tension_n": 1e309, "reading": 1}]}]}, ` + sp + `, "readings": [60]}`, 400, ""},
		{"inline tension huge", `{"calibration": {"columns": [{"spoke": {"diameter_mm": 2, "material": "stainless_steel"}, "points": [{"tension_n": 1e300, "reading": 1}, {"tension_n": 900, "reading": 2}]}]}, ` + sp + `, "readings": [60]}`, 400, "/calibration/columns/0/points/0/tension_n"},
		{"huge", `{"calibration_id": ` + id + `, ` + sp + `, "readings": [` + strings.Repeat("60,", 1<<19) + `60]}`, 413, ""},
	} {
		t.Run(c.name, func(t *testing.T) {
			p := e.want(e.do("POST", "/v1/tension-conversions", e.keyA[service.RoleRead], c.body), c.status).problem(t)
			if c.pointer != "" {
				wantPointer(t, p, c.pointer)
			}
		})
	}
}

// TestOtherOrganisationsCalibrationID: organisation B cannot use A's
// calibration by id in a conversion or an audit.
func TestOtherOrganisationsCalibrationID(t *testing.T) {
	e := newEnv(t)
	cols := e.synthColumns(1.8, 2.0)
	cal := e.publish(e.newTool(), cols)
	rd := cols[1].Points[5].Reading
	body := map[string]any{"calibration_id": cal.ID, "spoke": steel(2.0), "readings": []float64{rd}}
	e.want(e.do("POST", "/v1/tension-conversions", e.keyB, body), 404).problem(t)
	audit := map[string]any{"calibration_id": cal.ID, "spoke": steel(2.0), "readings": []any{map[string]any{"side": "left", "spoke": 0, "reading": rd}}}
	e.want(e.do("POST", "/v1/tension-audits", e.keyB, audit), 404).problem(t)
	e.want(e.do("POST", "/v1/tension-conversions", e.keyA[service.RoleRead], body), 200)
}

// auditOut is the part of a TensionAudit the target-side tests read.
type auditOut struct {
	TargetSide string `json:"target_side"`
	Sides      []struct {
		Side  string  `json:"side"`
		AimN  float64 `json:"aim_n"`
		MeanN float64 `json:"mean_n"`
	} `json:"sides"`
	Spokes []struct {
		Side     string  `json:"side"`
		Spoke    int     `json:"spoke"`
		TensionN float64 `json:"tension_n"`
		VsAimPct float64 `json:"vs_aim_pct"`
		Action   string  `json:"action"`
	} `json:"spokes"`
	Geometric *float64                `json:"geometric_left_right_ratio"`
	Warnings  []struct{ Code string } `json:"warnings"`
}

func (a auditOut) aims() map[string]float64 {
	m := map[string]float64{}
	for _, s := range a.Sides {
		m[s.Side] = s.AimN
	}
	return m
}

func hasCode(ws []struct{ Code string }, code string) bool {
	for _, w := range ws {
		if w.Code == code {
			return true
		}
	}
	return false
}

// TestAuditDiscFront: an invented disc front, 10 spokes a side read with
// the synthetic tool on 2.0 mm steel. The rotor (left) side is the tighter
// one, geometric ratio T_left/T_right = 1.213, built to 1150 N: left
// spokes at 1150 N, right at 1150/1.213 = 948.0627 N (by hand: 1.213 × 948
// = 1149.924, 0.076/1.213 = 0.0627). The target is the tighter side's,
// so the left is aimed at 1150 N and the right at 948.06 N, and every
// spoke is ok. (Before, the target went to the right by default and the
// rotor side was aimed at 1150 × 1.213 = 1395 N.) Readings are rounded to
// whole dial units as a builder reads them (12–20 N per unit at 2.0 mm,
// about 1 %, well inside the ±10 % tolerance).
func TestAuditDiscFront(t *testing.T) {
	e := newEnv(t)
	cal := e.publish(e.newTool(), e.synthColumns(1.5, 1.8, 2.0, 2.3))
	const target, ratio = 1150.0, 1.213
	var readings []map[string]any
	for i := range 10 {
		readings = append(readings,
			map[string]any{"side": "left", "spoke": i, "reading": math.Round(e.synthReading(steel(2.0), target))},
			map[string]any{"side": "right", "spoke": i, "reading": math.Round(e.synthReading(steel(2.0), target/ratio))})
	}
	body := func(extra map[string]any) map[string]any {
		b := map[string]any{"calibration_id": cal.ID, "spoke": steel(2.0), "readings": readings}
		for k, v := range extra {
			b[k] = v
		}
		return b
	}
	audit := func(extra map[string]any) auditOut {
		var a auditOut
		e.want(e.do("POST", "/v1/tension-audits", e.keyA[service.RoleRead], body(extra)), 200).json(t, &a)
		return a
	}
	a := audit(map[string]any{"target_tension_n": target, "geometric_left_right_ratio": ratio})
	if aims := a.aims(); a.TargetSide != "left" || aims["left"] != 1150 || math.Abs(aims["right"]-948.0627) > 1e-4 {
		t.Errorf("target side %q, aims %v; want left 1150 N, right 948.0627 N", a.TargetSide, aims)
	}
	for _, sp := range a.Spokes {
		if sp.Action != "ok" {
			t.Errorf("%s spoke %d: %.0f N, %+.1f %% from its aim: %s", sp.Side, sp.Spoke, sp.TensionN, sp.VsAimPct, sp.Action)
		}
	}
	// The same in kgf: 1150 N = 1150/9.80665 kgf (CGPM 1901); the target is
	// still the tighter side's.
	k := audit(map[string]any{"target_tension_kgf": target / 9.80665, "geometric_left_right_ratio": ratio})
	if aims := k.aims(); k.TargetSide != "left" || math.Abs(aims["left"]-1150) > 1e-9 {
		t.Errorf("kgf target: %q %v", k.TargetSide, aims)
	}
	// target_side naming the tighter side agrees; the slacker side is a 422
	// at /target_side that states the rule.
	if l := audit(map[string]any{"target_tension_n": target, "geometric_left_right_ratio": ratio, "target_side": "left"}); !cmp.Equal(l.aims(), a.aims()) {
		t.Errorf("target_side left: aims %v", l.aims())
	}
	p := e.want(e.do("POST", "/v1/tension-audits", e.keyA[service.RoleRead],
		body(map[string]any{"target_tension_n": target, "geometric_left_right_ratio": ratio, "target_side": "right"})), 422).problem(t)
	wantPointer(t, p, "/target_side")
	if len(p.Errors) == 0 || !strings.Contains(p.Errors[0].Message, "tighter side is the left") {
		t.Errorf("the 422 does not explain the rule: %+v", p)
	}
	// Without the ratio: both sides get the target, with a warning.
	n := audit(map[string]any{"target_tension_n": target})
	if aims := n.aims(); n.TargetSide != "both" || aims["right"] != 1150 || !hasCode(n.Warnings, "no_geometric_ratio") {
		t.Errorf("no ratio: %q %v %+v", n.TargetSide, aims, n.Warnings)
	}
}

// TestBuildAuditDiscFront: a build's tension audit follows the same rule,
// with the ratio from the build's snapshot. An invented disc front hub
// whose left (rotor side) flange sits 25 mm from the centre plane and the
// right 35 mm: the left spokes brace at the smaller angle, so the left is
// the tighter side (T_left·sin β_L = T_right·sin β_R) and the ratio is
// above 1. The audit aims each side at the snapshot's own target tension.
func TestBuildAuditDiscFront(t *testing.T) {
	e := newEnv(t)
	w := e.keyA[service.RoleWrite]
	loc := e.newLocation()
	var tool struct{ ID uuid.UUID }
	e.want(e.do("POST", "/v1/tools", w, map[string]any{"label": "bench tensiometer", "location_id": loc}), 201).json(t, &tool)
	cal := e.publish(tool.ID, e.synthColumns(1.5, 1.8, 2.0, 2.3))
	hub := map[string]any{}
	for k, v := range hubDims {
		hub[k] = v
	}
	hub["left"] = map[string]any{"pcd_mm": 45, "center_to_flange_mm": 25, "hole_diameter_mm": 2.6, "thickness_mm": 3}
	spec := inlineSpec()
	spec["hub"] = hub
	var b struct {
		ID       uuid.UUID `json:"id"`
		Snapshot struct {
			TargetTensionsN struct{ Left, Right float64 } `json:"target_tensions_n"`
			Compatibility   struct {
				Geometry struct {
					Ratio float64 `json:"tension_ratio_left_to_right"`
				} `json:"geometry"`
			} `json:"compatibility"`
		} `json:"snapshot"`
	}
	e.want(e.do("POST", "/v1/builds", w, map[string]any{"spec": spec, "location_id": loc}), 201).json(t, &b)
	tt, ratio := b.Snapshot.TargetTensionsN, b.Snapshot.Compatibility.Geometry.Ratio
	// The snapshot keeps tensions to 0.1 mN.
	if !(ratio > 1) || tt.Left != 1000 || math.Abs(tt.Right-1000/ratio) > 1e-4 {
		t.Fatalf("disc front snapshot: ratio %v, targets %+v (want left 1000 N, right 1000/ratio)", ratio, tt)
	}
	var readings []map[string]any
	for i := range 16 {
		readings = append(readings,
			map[string]any{"side": "left", "spoke": i, "reading": math.Round(e.synthReading(steel(2.0), tt.Left))},
			map[string]any{"side": "right", "spoke": i, "reading": math.Round(e.synthReading(steel(2.0), tt.Right))})
	}
	var got struct {
		Result auditOut `json:"result"`
	}
	e.want(e.do("POST", "/v1/builds/"+b.ID.String()+"/tension-audits", w, map[string]any{"calibration_id": cal.ID, "readings": readings}), 201).json(t, &got)
	a := got.Result
	aims := a.aims()
	if a.TargetSide != "left" || aims["left"] != tt.Left || math.Abs(aims["right"]-tt.Right) > 1e-4 || a.Geometric == nil || *a.Geometric != ratio {
		t.Errorf("build audit: target side %q, aims %v, ratio %v; snapshot targets %+v, ratio %v", a.TargetSide, aims, a.Geometric, tt, ratio)
	}
	for _, sp := range a.Spokes {
		if sp.Action != "ok" {
			t.Errorf("%s spoke %d: %s", sp.Side, sp.Spoke, sp.Action)
		}
	}
}

// TestConversionEdges: through HTTP, gauge 13 (BS 3737: 0.092 in =
// 2.3368 mm) just beyond the synthetic table's 2.3 mm column, read at the
// synthetic tool's reading for 575 N, where the column itself is
// unreliable (one dial unit is over 20 N there): the gauge-13 answer is not
// reliable either and says its interval was widened. A bladed spoke on the
// round-only table carries profile_not_in_calibration.
func TestConversionEdges(t *testing.T) {
	e := newEnv(t)
	cal := e.publish(e.newTool(), e.synthColumns(1.5, 1.8, 2.0, 2.3))
	conv := func(spec tension.SpokeSpec, truth float64) resultOut {
		out, _ := e.convert(map[string]any{"calibration_id": cal.ID, "spoke": spec, "readings": []float64{e.synthReading(spec, truth)}}, 200)
		return out.Results[0]
	}
	col := conv(steel(2.3), 575)
	if col.Reliable || col.Method != "column_monotone_cubic" {
		t.Fatalf("the 2.3 mm column at 575 N: reliable %v method %s; the case needs it unreliable", col.Reliable, col.Method)
	}
	g13 := conv(steel(2.3368), 575)
	share := func(r resultOut) float64 { return (r.IntervalN[1] - r.IntervalN[0]) / 2 / r.TensionN }
	if g13.Reliable || !hasCode(g13.Warnings, "interval_widened_to_calibration") || share(g13) <= share(col) || len(g13.Cautions) < 2 {
		t.Errorf("gauge 13 at 575 N: reliable %v, ±%.2f %% beside the column's ±%.2f %%, warnings %+v", g13.Reliable, 100*share(g13), 100*share(col), g13.Warnings)
	}
	blade := tension.SpokeSpec{Profile: "bladed", WidthMM: 2.3, ThicknessMM: 1.3, Material: "stainless_steel"}
	bl := conv(blade, 1000)
	if !hasCode(bl.Warnings, "profile_not_in_calibration") || bl.Status != "extrapolated" || len(bl.Cautions) == 0 {
		t.Errorf("bladed: status %s warnings %+v cautions %q", bl.Status, bl.Warnings, bl.Cautions)
	}
	var tg struct {
		Target struct {
			Warnings []struct{ Code string } `json:"warnings"`
		} `json:"target"`
	}
	_, r := e.convert(map[string]any{"calibration_id": cal.ID, "spoke": blade, "target_tension_n": 1000}, 200)
	r.json(t, &tg)
	if !hasCode(tg.Target.Warnings, "profile_not_in_calibration") {
		t.Errorf("bladed target: warnings %+v", tg.Target.Warnings)
	}
}
