package api_test

import (
	"fmt"
	"sync"
	"testing"

	"github.com/google/uuid"

	"wheelbench/service"
)

// shop is organisation A with a location, a price list and catalog parts
// (all invented), and spoke stock at the location.
type shop struct {
	loc                           uuid.UUID
	hub, rim, spoke, nipple, tyre uuid.UUID
}

func (e *env) newShop(hubStock int64) shop {
	e.t.Helper()
	admin, w := e.keyA[service.RoleAdmin], e.keyA[service.RoleWrite]
	var loc struct{ ID uuid.UUID }
	e.want(e.do("POST", "/v1/locations", admin, map[string]any{"name": "Front bench", "tax_rate_ppm": 200000}), 201).json(e.t, &loc)
	pl := e.do("GET", "/v1/price-list", admin, nil)
	e.want(e.do("PUT", "/v1/price-list", admin, map[string]any{"currency": "EUR", "base_build_minor": 4000, "per_spoke_minor": 50,
		"per_drilled_hole_minor": 150, "per_washer_minor": 20, "per_cut_spoke_minor": 80, "validity_days": 14}, "If-Match", pl.Header.Get("ETag")), 200)
	s := shop{loc: loc.ID}
	s.hub = e.createPart("hub", "HUB-"+uuid.NewString()[:6], 9000, hubDims)
	s.rim = e.createPart("rim", "RIM-"+uuid.NewString()[:6], 7000, rimDims)
	s.spoke = e.createPart("spoke", "SPK-"+uuid.NewString()[:6], 60, spokeDims)
	s.nipple = e.createPart("nipple", "NIP-"+uuid.NewString()[:6], 25, nippleDims)
	s.tyre = e.createPart("tyre", "TYR-"+uuid.NewString()[:6], 3500, tyreDims)
	var levels []map[string]any
	for l := 280; l <= 310; l += 2 {
		levels = append(levels, map[string]any{"location_id": loc.ID, "length_mm": l, "quantity": 1000})
	}
	e.putStock(s.spoke, levels)
	e.putStock(s.nipple, []map[string]any{{"location_id": loc.ID, "quantity": 10000}})
	e.putStock(s.rim, []map[string]any{{"location_id": loc.ID, "quantity": 1000}})
	e.putStock(s.tyre, []map[string]any{{"location_id": loc.ID, "quantity": 1000}})
	e.putStock(s.hub, []map[string]any{{"location_id": loc.ID, "quantity": hubStock}})
	_ = w
	return s
}

func (e *env) putStock(part uuid.UUID, levels []map[string]any) {
	e.t.Helper()
	w := e.keyA[service.RoleWrite]
	st := e.want(e.do("GET", "/v1/parts/"+part.String()+"/stock", w, nil), 200)
	e.want(e.do("PUT", "/v1/parts/"+part.String()+"/stock", w, map[string]any{"levels": levels}, "If-Match", st.Header.Get("ETag")), 200)
}

// inlineSpec is a build spec with every part inline (no catalog) and
// stock lengths every 2 mm.
func inlineSpec() map[string]any {
	return map[string]any{"spoke_count": 32, "hub": hubDims, "rim": rimDims, "spoke": spokeDims, "nipple": nippleDims,
		"crosses": map[string]any{"left": 3, "right": 3}, "target_tension_n": 1000, "stock": map[string]any{"increment_mm": 2}}
}

func (s shop) spec() map[string]any {
	return map[string]any{"spoke_count": 32, "hub_id": s.hub, "rim_id": s.rim, "spoke_id": s.spoke, "nipple_id": s.nipple,
		"tyre_id": s.tyre, "crosses": map[string]any{"left": 3, "right": 3}, "target_tension_n": 1000}
}

type buildJSON struct {
	ID       uuid.UUID `json:"id"`
	Status   string    `json:"status"`
	Snapshot struct {
		StockSource   string `json:"stock_source"`
		Compatibility struct {
			Verdict  string `json:"verdict"`
			Geometry struct {
				Left struct {
					LengthMM      float64  `json:"length_mm"`
					StockLengthMM *float64 `json:"stock_length_mm"`
				} `json:"left"`
			} `json:"geometry"`
		} `json:"compatibility"`
	} `json:"snapshot"`
}

type quoteJSON struct {
	ID            uuid.UUID `json:"id"`
	Status        string    `json:"status"`
	SubtotalMinor int64     `json:"subtotal_minor"`
	TaxMinor      int64     `json:"tax_minor"`
	TotalMinor    int64     `json:"total_minor"`
	Lines         []struct {
		Code        string `json:"code"`
		Quantity    int64  `json:"quantity"`
		AmountMinor int64  `json:"amount_minor"`
		LengthMM    int    `json:"length_mm"`
	} `json:"lines"`
}

func TestBuildQuoteAccept(t *testing.T) {
	e := newEnv(t)
	w := e.keyA[service.RoleWrite]
	s := e.newShop(5)
	var b buildJSON
	r := e.want(e.do("POST", "/v1/builds", w, map[string]any{"spec": s.spec(), "location_id": s.loc, "external_ref": "ORDER-1001"}), 201)
	r.json(t, &b)
	if b.Status != "draft" || b.Snapshot.StockSource != "location_stock" || b.Snapshot.Compatibility.Verdict == "does_not_fit" {
		t.Fatalf("build %+v\n%s", b, r.body)
	}
	sl := b.Snapshot.Compatibility.Geometry.Left.StockLengthMM
	if sl == nil || *sl < 280 || *sl > 310 {
		t.Fatalf("stock length %v for computed %v", sl, b.Snapshot.Compatibility.Geometry.Left.LengthMM)
	}

	var q quoteJSON
	e.want(e.do("POST", "/v1/quotes", w, map[string]any{"build_id": b.ID}), 201).json(t, &q)
	// Totals: subtotal = Σ amounts; tax = 20 % of the subtotal rounded half
	// away from zero (the documented rule); total = subtotal + tax.
	var sum int64
	for _, l := range q.Lines {
		sum += l.AmountMinor
	}
	if q.SubtotalMinor != sum || q.TaxMinor != (q.SubtotalMinor*2+5)/10 || q.TotalMinor != q.SubtotalMinor+q.TaxMinor {
		t.Fatalf("quote totals %+v", q)
	}
	// Parts: hub 9000 + rim 7000 + 32 spokes × 60 + 32 nipples × 25 + tyre 3500;
	// labour: base 4000 + 32 × 50 (no drilling, washers or cutting expected).
	want := int64(9000 + 7000 + 32*60 + 32*25 + 3500 + 4000 + 32*50)
	if q.SubtotalMinor != want {
		t.Errorf("subtotal %d, want %d; lines %+v", q.SubtotalMinor, want, q.Lines)
	}
	var got buildJSON
	e.want(e.do("GET", "/v1/builds/"+b.ID.String(), w, nil), 200).json(t, &got)
	if got.Status != "quoted" {
		t.Errorf("build status %s after quoting", got.Status)
	}
	e.want(e.do("POST", "/v1/quotes/"+q.ID.String()+"/accept", w, nil), 200)
	e.want(e.do("POST", "/v1/quotes/"+q.ID.String()+"/accept", w, nil), 409)
	e.want(e.do("GET", "/v1/builds/"+b.ID.String(), w, nil), 200).json(t, &got)
	if got.Status != "ordered" {
		t.Errorf("build status %s after accepting", got.Status)
	}
	var hubStock struct {
		Levels []struct{ Quantity int64 } `json:"levels"`
	}
	e.want(e.do("GET", "/v1/parts/"+s.hub.String()+"/stock", w, nil), 200).json(t, &hubStock)
	if hubStock.Levels[0].Quantity != 4 {
		t.Errorf("hub stock %d after one accept, want 4", hubStock.Levels[0].Quantity)
	}
	// An ordered build cannot be quoted again.
	e.want(e.do("POST", "/v1/quotes", w, map[string]any{"build_id": b.ID}), 409)
	// Bad build specs.
	bad := s.spec()
	bad["hub_id"] = s.rim
	e.want(e.do("POST", "/v1/builds", w, map[string]any{"spec": bad, "location_id": s.loc}), 422)
	bad = s.spec()
	bad["hub_id"] = uuid.New()
	e.want(e.do("POST", "/v1/builds", w, map[string]any{"spec": bad, "location_id": s.loc}), 422)
	bad = s.spec()
	bad["hub"] = hubDims
	e.want(e.do("POST", "/v1/builds", w, map[string]any{"spec": bad, "location_id": s.loc}), 400)
	e.want(e.do("POST", "/v1/builds", w, map[string]any{"spec": s.spec(), "location_id": uuid.New()}), 422)
	e.want(e.do("POST", "/v1/builds", w, map[string]any{"spec": map[string]any{"spoke_count": "many"}, "location_id": s.loc}), 400)
}

func TestBuildStatusAndETag(t *testing.T) {
	e := newEnv(t)
	w := e.keyA[service.RoleWrite]
	s := e.newShop(1)
	var b buildJSON
	r := e.want(e.do("POST", "/v1/builds", w, map[string]any{"spec": s.spec(), "location_id": s.loc}), 201)
	r.json(t, &b)
	path := "/v1/builds/" + b.ID.String()
	etag := r.Header.Get("ETag")
	// Two updates with the same ETag: one 200, one 412.
	var wg sync.WaitGroup
	codes := make(chan int, 2)
	for _, note := range []string{"first", "second"} {
		wg.Add(1)
		go func() {
			defer wg.Done()
			codes <- e.do("PATCH", path, w, map[string]any{"notes": note}, "If-Match", etag).StatusCode
		}()
	}
	wg.Wait()
	close(codes)
	seen := map[int]int{}
	for c := range codes {
		seen[c]++
	}
	if seen[200] != 1 || seen[412] != 1 {
		t.Fatalf("concurrent updates with one ETag: %v, want one 200 and one 412", seen)
	}
	cur := e.want(e.do("GET", path, w, nil), 200)
	// draft → ordered skips quoted: 409; draft → cancelled is fine; cancelled → done 409.
	e.want(e.do("PATCH", path, w, map[string]any{"status": "ordered"}, "If-Match", cur.Header.Get("ETag")), 409)
	c2 := e.want(e.do("PATCH", path, w, map[string]any{"status": "cancelled"}, "If-Match", cur.Header.Get("ETag")), 200)
	e.want(e.do("PATCH", path, w, map[string]any{"status": "done"}, "If-Match", c2.Header.Get("ETag")), 409)
	e.want(e.do("PATCH", path, w, map[string]any{"status": "finished"}, "If-Match", c2.Header.Get("ETag")), 400)
	e.want(e.do("PATCH", path, w, map[string]any{"snapshot": map[string]any{}}, "If-Match", c2.Header.Get("ETag")), 400)
	e.want(e.do("PATCH", path, w, map[string]any{"notes": "x"}), 428)
	// Filters.
	var list struct{ Items []buildJSON }
	e.want(e.do("GET", "/v1/builds?status=cancelled", w, nil), 200).json(t, &list)
	if len(list.Items) != 1 {
		t.Errorf("status filter: %d builds", len(list.Items))
	}
	e.want(e.do("GET", "/v1/builds?status=draft", w, nil), 200).json(t, &list)
	if len(list.Items) != 0 {
		t.Errorf("draft filter: %d builds", len(list.Items))
	}
	e.want(e.do("GET", "/v1/builds?updated_after=yesterday", w, nil), 400)
}

// TestConcurrentAccepts: fifty quotes compete for a hub with stock for
// twelve. Exactly twelve accepts succeed, the rest get 409, and the stock
// ends at zero, never below.
func TestConcurrentAccepts(t *testing.T) {
	e := newEnv(t)
	w := e.keyA[service.RoleWrite]
	s := e.newShop(12)
	quotes := make([]uuid.UUID, 50)
	for i := range quotes {
		var b buildJSON
		e.want(e.do("POST", "/v1/builds", w, map[string]any{"spec": s.spec(), "location_id": s.loc, "external_ref": fmt.Sprint("R", i)}), 201).json(t, &b)
		var q quoteJSON
		e.want(e.do("POST", "/v1/quotes", w, map[string]any{"build_id": b.ID}), 201).json(t, &q)
		quotes[i] = q.ID
	}
	var wg sync.WaitGroup
	codes := make(chan int, len(quotes))
	for _, id := range quotes {
		wg.Add(1)
		go func() {
			defer wg.Done()
			codes <- e.do("POST", "/v1/quotes/"+id.String()+"/accept", w, nil).StatusCode
		}()
	}
	wg.Wait()
	close(codes)
	seen := map[int]int{}
	for c := range codes {
		seen[c]++
	}
	if seen[200] != 12 || seen[409] != 38 {
		t.Fatalf("accepts: %v, want 12 × 200 and 38 × 409", seen)
	}
	var hubStock struct {
		Levels []struct{ Quantity int64 } `json:"levels"`
	}
	e.want(e.do("GET", "/v1/parts/"+s.hub.String()+"/stock", w, nil), 200).json(t, &hubStock)
	if hubStock.Levels[0].Quantity != 0 {
		t.Fatalf("hub stock ends at %d, want 0", hubStock.Levels[0].Quantity)
	}
	var ordered struct{ Items []buildJSON }
	e.want(e.do("GET", "/v1/builds?status=ordered&limit=200", w, nil), 200).json(t, &ordered)
	if len(ordered.Items) != 12 {
		t.Errorf("%d ordered builds, want 12", len(ordered.Items))
	}
}

// TestBuildTargetsAndAudits: a build at a location whose tensiometer has a
// calibration carries target readings; audits are stored, the newer one
// superseding the older, and the database refuses to edit them.
func TestBuildTargetsAndAudits(t *testing.T) {
	e := newEnv(t)
	w := e.keyA[service.RoleWrite]
	s := e.newShop(3)
	var tool struct{ ID uuid.UUID }
	e.want(e.do("POST", "/v1/tools", w, map[string]any{"label": "front bench tensiometer", "location_id": s.loc}), 201).json(t, &tool)
	cal := e.publish(tool.ID, e.synthColumns(1.5, 1.8, 2.0, 2.3))
	var b struct {
		ID       uuid.UUID `json:"id"`
		Snapshot struct {
			TargetTensionsN struct{ Left, Right float64 } `json:"target_tensions_n"`
			TargetReadings  *struct {
				CalibrationID uuid.UUID `json:"calibration_id"`
				Right         struct {
					Reading float64 `json:"reading"`
					Status  string  `json:"status"`
				} `json:"right"`
			} `json:"target_readings"`
		} `json:"snapshot"`
	}
	e.want(e.do("POST", "/v1/builds", w, map[string]any{"spec": s.spec(), "location_id": s.loc}), 201).json(t, &b)
	tr := b.Snapshot.TargetReadings
	if tr == nil || tr.CalibrationID != cal.ID || tr.Right.Reading <= 0 {
		t.Fatalf("target readings %+v", tr)
	}
	// The right side's aim reading converts back to its target tension
	// (forward then inverse through the same stored model).
	want := e.synthReading(steel(2.0), b.Snapshot.TargetTensionsN.Right)
	if d := tr.Right.Reading - want; d > 1.5 || d < -1.5 {
		t.Errorf("aim reading %.2f, the synthetic tool reads %.2f at %.0f N", tr.Right.Reading, want, b.Snapshot.TargetTensionsN.Right)
	}
	readings := []map[string]any{}
	for i := range 16 {
		readings = append(readings, map[string]any{"side": "left", "spoke": i, "reading": tr.Right.Reading - 20},
			map[string]any{"side": "right", "spoke": i, "reading": tr.Right.Reading})
	}
	path := "/v1/builds/" + b.ID.String() + "/tension-audits"
	var a1, a2 struct{ ID uuid.UUID }
	e.want(e.do("POST", path, w, map[string]any{"calibration_id": cal.ID, "readings": readings}), 201).json(t, &a1)
	e.want(e.do("POST", path, w, map[string]any{"calibration_id": cal.ID, "readings": readings, "notes": "after truing"}), 201).json(t, &a2)
	var list struct {
		Items []struct {
			ID           uuid.UUID  `json:"id"`
			SupersededBy *uuid.UUID `json:"superseded_by"`
		} `json:"items"`
	}
	e.want(e.do("GET", path, w, nil), 200).json(t, &list)
	if len(list.Items) != 2 || list.Items[0].SupersededBy == nil || *list.Items[0].SupersededBy != a2.ID || list.Items[1].SupersededBy != nil {
		t.Fatalf("audits %+v", list.Items)
	}
	if _, err := e.st.Pool().Exec(t.Context(), `UPDATE build_tension_audits SET notes = 'edited' WHERE id = $1`, a2.ID); err == nil {
		t.Error("an audit was edited")
	}
	if _, err := e.st.Pool().Exec(t.Context(), `DELETE FROM build_tension_audits WHERE id = $1`, a1.ID); err == nil {
		t.Error("an audit was deleted")
	}
	e.want(e.do("POST", path, w, map[string]any{"calibration_id": uuid.New(), "readings": readings}), 422)
	e.want(e.do("POST", path, w, map[string]any{"calibration_id": cal.ID, "readings": []any{}}), 400)
}

// TestBuildBadBodies: POST /v1/builds judges a body itself first and falls
// back to the spec only for a body it refuses; the answers must be the
// spec's 400s with the pointer of the bad field.
func TestBuildBadBodies(t *testing.T) {
	e := newEnv(t)
	w := e.keyA[service.RoleWrite]
	s := e.newShop(1)
	with := func(edit func(spec map[string]any)) map[string]any {
		spec := s.spec()
		edit(spec)
		return map[string]any{"spec": spec, "location_id": s.loc}
	}
	cases := []struct {
		name    string
		body    any
		status  int
		pointer string
	}{
		{"garbage", "{not json", 400, ""},
		{"wrong type", with(func(sp map[string]any) { sp["spoke_count"] = "many" }), 400, "/spec/spoke_count"},
		{"unknown field", with(func(sp map[string]any) { sp["colour"] = "red" }), 400, "/spec/colour"},
		{"nested wrong type", with(func(sp map[string]any) {
			delete(sp, "hub_id")
			sp["hub"] = map[string]any{"holes": 32, "left": map[string]any{"pcd_mm": "wide", "center_to_flange_mm": 35}, "right": map[string]any{"pcd_mm": 45, "center_to_flange_mm": 35}}
		}), 400, "/spec/hub/left/pcd_mm"},
		{"bad uuid", with(func(sp map[string]any) { sp["rim_id"] = "not-an-id" }), 400, "/spec/rim_id"},
		{"missing location", map[string]any{"spec": s.spec()}, 400, ""},
		{"hub inline and by id", with(func(sp map[string]any) { sp["hub"] = hubDims }), 400, "/spec/hub_id"},
		{"no hub at all", with(func(sp map[string]any) { delete(sp, "hub_id"); sp["hub"] = nil }), 400, "/spec/hub"},
		{"negative crosses", with(func(sp map[string]any) { sp["crosses"] = map[string]any{"left": -1, "right": 3} }), 400, "/spec/crosses/left"},
		{"NaN-producing ERD", with(func(sp map[string]any) {
			delete(sp, "rim_id")
			sp["rim"] = map[string]any{"holes": 32, "erd_mm": 30, "bsd_mm": 622, "inner_width_mm": 19, "hole_diameter_mm": 4.2}
		}), 0, "/spec/rim/erd_mm"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			r := e.do("POST", "/v1/builds", w, c.body)
			if c.status != 0 && r.StatusCode != c.status || r.StatusCode < 400 || r.StatusCode >= 500 {
				t.Fatalf("status %d, want %d\n%s", r.StatusCode, c.status, r.body)
			}
			p := r.problem(t)
			if c.pointer != "" {
				found := false
				for _, f := range p.Errors {
					found = found || f.Pointer == c.pointer
				}
				if !found {
					t.Errorf("errors %+v do not name %s", p.Errors, c.pointer)
				}
			}
		})
	}
	var list struct{ Items []any }
	e.want(e.do("GET", "/v1/builds", w, nil), 200).json(t, &list)
	if len(list.Items) != 0 {
		t.Errorf("bad bodies stored %d builds", len(list.Items))
	}
}

// TestBuildRefusesAnotherOrganisationsLocation: a build naming another
// organisation's location is a 422 on /location_id and writes nothing.
// The service's organisation-scoped check refuses it before the insert
// (the database's foreign key would too, as a conflict) — also when the
// location is in the service's cache for its own organisation, as it is
// here after A's build.
func TestBuildRefusesAnotherOrganisationsLocation(t *testing.T) {
	e := newEnv(t)
	var locA struct{ ID uuid.UUID }
	e.want(e.do("POST", "/v1/locations", e.keyA[service.RoleAdmin], map[string]any{"name": "A bench"}), 201).json(t, &locA)
	spec := inlineSpec()
	e.want(e.do("POST", "/v1/builds", e.keyA[service.RoleWrite], map[string]any{"spec": spec, "location_id": locA.ID}), 201)
	p := e.want(e.do("POST", "/v1/builds", e.keyB, map[string]any{"spec": spec, "location_id": locA.ID}), 422).problem(t)
	if len(p.Errors) != 1 || p.Errors[0].Pointer != "/location_id" {
		t.Errorf("problem %+v, want one error on /location_id", p)
	}
	var builds, changes int
	err := e.st.Pool().QueryRow(t.Context(), `SELECT (SELECT count(*) FROM builds WHERE org_id = $1),
	  (SELECT count(*) FROM changes WHERE org_id = $1 AND type = 'build.created')`, e.orgB).Scan(&builds, &changes)
	if err != nil {
		t.Fatal(err)
	}
	if builds != 0 || changes != 0 {
		t.Errorf("organisation B has %d builds and %d build.created changes, want none", builds, changes)
	}
}

// TestButtedSpokeAimsOnItsMiddle: a 2.0/1.8/2.0 spoke is measured on its
// 1.8 mm middle, so the build's aim reading is the synthetic tool's reading
// of a 1.8 mm spoke at the target (the forward model, a second computation
// through the tool's own beam equations), not a 2.0 mm one's — which the
// same calibration converts to far more than the target on the 1.8 mm
// section. The snapshot names the section.
func TestButtedSpokeAimsOnItsMiddle(t *testing.T) {
	e := newEnv(t)
	w := e.keyA[service.RoleWrite]
	s := e.newShop(2)
	var tool struct{ ID uuid.UUID }
	e.want(e.do("POST", "/v1/tools", w, map[string]any{"label": "butted bench tensiometer", "location_id": s.loc}), 201).json(t, &tool)
	e.publish(tool.ID, e.synthColumns(1.5, 1.8, 2.0, 2.3))
	spec := inlineSpec()
	butted := map[string]any{}
	for k, v := range spokeDims {
		butted[k] = v
	}
	butted["sections"] = []any{map[string]any{"length_mm": 230, "diameter_mm": 1.8}}
	spec["spoke"] = butted
	var b struct {
		Snapshot struct {
			TargetTensionsN struct{ Left, Right float64 } `json:"target_tensions_n"`
			TargetReadings  *struct {
				MeasuredSection struct {
					Name       string  `json:"name"`
					DiameterMM float64 `json:"diameter_mm"`
				} `json:"measured_section"`
				Right struct {
					Reading float64 `json:"reading"`
				} `json:"right"`
			} `json:"target_readings"`
		} `json:"snapshot"`
	}
	e.want(e.do("POST", "/v1/builds", w, map[string]any{"spec": spec, "location_id": s.loc}), 201).json(t, &b)
	tr := b.Snapshot.TargetReadings
	if tr == nil || tr.MeasuredSection.Name != "section_1" || tr.MeasuredSection.DiameterMM != 1.8 {
		t.Fatalf("target readings %+v: want them on section_1, 1.8 mm", tr)
	}
	target := b.Snapshot.TargetTensionsN.Right
	on18 := e.synthReading(steel(1.8), target)
	on20 := e.synthReading(steel(2.0), target)
	if d := tr.Right.Reading - on18; d > 1.5 || d < -1.5 {
		t.Errorf("aim reading %.2f; the tool reads %.2f on 1.8 mm and %.2f on 2.0 mm at %.0f N", tr.Right.Reading, on18, on20, target)
	}
	if on20-on18 < 5 {
		t.Fatalf("the case does not tell the sections apart: %.2f vs %.2f", on18, on20)
	}
}

// TestBuildProposesCatalogWasher: a 3.2 mm head on a 2.6 mm flange hole
// bears on 0.6 mm, less than the 0.8 mm margin (common practice), so a
// washer goes under each head; the catalog carries one that suits (bore
// 2.1 mm ≥ the 2.0 mm spoke, 3.2 − 2.1 = 1.1 mm under the head, 5.0 − 2.6
// = 2.4 mm on the flange), so the build proposes that part rather than a
// washer to buy, and its quote bills that part, 32 of them.
func TestBuildProposesCatalogWasher(t *testing.T) {
	e := newEnv(t)
	w := e.keyA[service.RoleWrite]
	s := e.newShop(2)
	sku := "WSH-" + uuid.NewString()[:6]
	washer := e.createPart("washer", sku, 5, map[string]any{"thickness_mm": 0.5, "inner_diameter_mm": 2.1, "outer_diameter_mm": 5.0, "where": "hub"})
	e.putStock(washer, []map[string]any{{"location_id": s.loc, "quantity": 500}})
	sp := map[string]any{}
	for k, v := range spokeDims {
		sp[k] = v
	}
	sp["head_diameter_mm"], sp["elbow_length_mm"] = 3.2, 3.3
	spec := s.spec()
	delete(spec, "spoke_id")
	spec["spoke"] = sp
	var b struct {
		ID       uuid.UUID `json:"id"`
		Snapshot struct {
			Compatibility struct {
				Verdict string `json:"verdict"`
				Changes []struct {
					Kind   string `json:"kind"`
					PartID string `json:"part_id"`
					Count  int    `json:"count"`
				} `json:"changes"`
			} `json:"compatibility"`
		} `json:"snapshot"`
	}
	e.want(e.do("POST", "/v1/builds", w, map[string]any{"spec": spec, "location_id": s.loc}), 201).json(t, &b)
	c := b.Snapshot.Compatibility
	if c.Verdict != "fits_with_changes" || len(c.Changes) != 1 || c.Changes[0].PartID != washer.String() || c.Changes[0].Count != 32 {
		t.Fatalf("want the catalog washer proposed for 32 spokes, got %+v", c)
	}
	var q struct {
		Lines []struct {
			SKU      string `json:"sku"`
			Quantity int64  `json:"quantity"`
		} `json:"lines"`
	}
	e.want(e.do("POST", "/v1/quotes", w, map[string]any{"build_id": b.ID}), 201).json(t, &q)
	billed := false
	for _, l := range q.Lines {
		billed = billed || l.SKU == sku && l.Quantity == 32
	}
	if !billed {
		t.Errorf("the quote does not bill 32 × %s: %+v", sku, q.Lines)
	}
}
