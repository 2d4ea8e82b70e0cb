package api_test

import (
	"testing"

	"github.com/google/uuid"

	"wheelbench/service"
)

// Invented catalog dimensions (demo-style data, not any maker's part).
var (
	hubDims = map[string]any{"holes": 32, "kind": "bicycle", "spacing_mm": 100,
		"left":  map[string]any{"pcd_mm": 45, "center_to_flange_mm": 35, "hole_diameter_mm": 2.6, "thickness_mm": 3},
		"right": map[string]any{"pcd_mm": 45, "center_to_flange_mm": 35, "hole_diameter_mm": 2.6, "thickness_mm": 3}}
	rimDims = map[string]any{"holes": 32, "erd_mm": 601, "bsd_mm": 622, "inner_width_mm": 19, "hole_diameter_mm": 4.2,
		"max_tension_n": 1300, "spoke_hole_offset_mm": 0}
	spokeDims  = map[string]any{"diameter_mm": 2.0, "head_diameter_mm": 4.0, "elbow_length_mm": 2.8, "thread": map[string]any{"diameter_mm": 2.0, "tpi": 56}, "material": "stainless_steel"}
	nippleDims = map[string]any{"thread": map[string]any{"diameter_mm": 2.0, "tpi": 56}, "shank_diameter_mm": 3.9, "head_diameter_mm": 5.6, "length_mm": 12, "material": "brass"}
	tyreDims   = map[string]any{"bsd_mm": 622, "width_mm": 28}
)

func (e *env) createPart(kind, sku string, price int64, dims any) uuid.UUID {
	e.t.Helper()
	var p struct{ ID uuid.UUID }
	e.want(e.do("POST", "/v1/parts", e.keyA[service.RoleWrite], map[string]any{
		"kind": kind, "sku": sku, "name": kind + " " + sku, "price_minor": price, "currency": "EUR", "dimensions": dims}), 201).json(e.t, &p)
	return p.ID
}

func TestPartsAndStock(t *testing.T) {
	e := newEnv(t)
	w := e.keyA[service.RoleWrite]
	hub := e.createPart("hub", "HUB-1", 9000, hubDims)
	spoke := e.createPart("spoke", "SPK-20", 60, spokeDims)

	// Same SKU again → 422; another organisation may use it.
	e.want(e.do("POST", "/v1/parts", w, map[string]any{"kind": "hub", "sku": "HUB-1", "name": "dup", "price_minor": 1, "currency": "EUR", "dimensions": hubDims}), 422)
	// Dimensions are checked strictly against the kind's shape.
	for name, c := range map[string]struct {
		body    map[string]any
		pointer string
	}{
		"unknown field":  {map[string]any{"kind": "rim", "sku": "R1", "name": "r", "price_minor": 1, "currency": "EUR", "dimensions": map[string]any{"erd_mm": 600, "colour": "red"}}, "/dimensions/colour"},
		"wrong type":     {map[string]any{"kind": "rim", "sku": "R2", "name": "r", "price_minor": 1, "currency": "EUR", "dimensions": map[string]any{"erd_mm": "wide"}}, "/dimensions/erd_mm"},
		"negative size":  {map[string]any{"kind": "tyre", "sku": "T1", "name": "t", "price_minor": 1, "currency": "EUR", "dimensions": map[string]any{"bsd_mm": -622, "width_mm": 28}}, "/dimensions/bsd_mm"},
		"bad currency":   {map[string]any{"kind": "tyre", "sku": "T2", "name": "t", "price_minor": 1, "currency": "euro", "dimensions": tyreDims}, "/currency"},
		"negative price": {map[string]any{"kind": "tyre", "sku": "T3", "name": "t", "price_minor": -5, "currency": "EUR", "dimensions": tyreDims}, "/price_minor"},
		"unknown kind":   {map[string]any{"kind": "saddle", "sku": "S1", "name": "s", "price_minor": 1, "currency": "EUR", "dimensions": tyreDims}, "/kind"},
		"bad sku":        {map[string]any{"kind": "tyre", "sku": " spaced out ", "name": "t", "price_minor": 1, "currency": "EUR", "dimensions": tyreDims}, "/sku"},
		"missing dims":   {map[string]any{"kind": "tyre", "sku": "T4", "name": "t", "price_minor": 1, "currency": "EUR"}, ""},
	} {
		t.Run(name, func(t *testing.T) {
			r := e.do("POST", "/v1/parts", w, c.body)
			if r.StatusCode != 400 {
				t.Fatalf("status %d\n%s", r.StatusCode, r.body)
			}
			p := r.problem(t)
			if c.pointer != "" && (len(p.Errors) == 0 || p.Errors[0].Pointer != c.pointer) {
				t.Errorf("errors %+v, want pointer %s", p.Errors, c.pointer)
			}
		})
	}
	e.want(e.do("POST", "/v1/parts", e.keyA[service.RoleRead], map[string]any{"kind": "tyre", "sku": "T9", "name": "t", "price_minor": 1, "currency": "EUR", "dimensions": tyreDims}), 403)

	// Read, list with filter, patch with ETag.
	g := e.want(e.do("GET", "/v1/parts/"+hub.String(), w, nil), 200)
	var list struct{ Items []struct{ ID uuid.UUID } }
	e.want(e.do("GET", "/v1/parts?kind=spoke", w, nil), 200).json(t, &list)
	if len(list.Items) != 1 || list.Items[0].ID != spoke {
		t.Errorf("kind filter: %+v", list.Items)
	}
	e.want(e.do("GET", "/v1/parts?kind=saddle", w, nil), 400)
	e.want(e.do("PATCH", "/v1/parts/"+hub.String(), w, map[string]any{"price_minor": 9500}), 428)
	e.want(e.do("PATCH", "/v1/parts/"+hub.String(), w, map[string]any{"price_minor": 9500}, "If-Match", g.Header.Get("ETag")), 200)
	e.want(e.do("PATCH", "/v1/parts/"+hub.String(), w, map[string]any{"price_minor": 9600}, "If-Match", g.Header.Get("ETag")), 412)
	e.want(e.do("PATCH", "/v1/parts/"+hub.String(), w, map[string]any{"kind": "rim"}, "If-Match", "*"), 400)

	// Stock: spokes by length at a location.
	var loc struct{ ID uuid.UUID }
	e.want(e.do("POST", "/v1/locations", e.keyA[service.RoleAdmin], map[string]any{"name": "Bench"}), 201).json(t, &loc)
	st := e.want(e.do("GET", "/v1/parts/"+spoke.String()+"/stock", w, nil), 200)
	levels := map[string]any{"levels": []map[string]any{
		{"location_id": loc.ID, "length_mm": 290, "quantity": 40},
		{"location_id": loc.ID, "length_mm": 292, "quantity": 12}}}
	e.want(e.do("PUT", "/v1/parts/"+spoke.String()+"/stock", w, levels), 428)
	put := e.want(e.do("PUT", "/v1/parts/"+spoke.String()+"/stock", w, levels, "If-Match", st.Header.Get("ETag")), 200)
	e.want(e.do("PUT", "/v1/parts/"+spoke.String()+"/stock", w, levels, "If-Match", st.Header.Get("ETag")), 412)
	var got struct {
		Levels []struct {
			LengthMM float64 `json:"length_mm"`
			Quantity int64   `json:"quantity"`
		} `json:"levels"`
	}
	put.json(t, &got)
	if len(got.Levels) != 2 || got.Levels[0].LengthMM != 290 || got.Levels[1].Quantity != 12 {
		t.Errorf("stock %+v", got.Levels)
	}
	etag := put.Header.Get("ETag")
	for name, body := range map[string]any{
		"negative":        map[string]any{"levels": []map[string]any{{"location_id": loc.ID, "length_mm": 290, "quantity": -1}}},
		"spoke no length": map[string]any{"levels": []map[string]any{{"location_id": loc.ID, "quantity": 3}}},
		"duplicate":       map[string]any{"levels": []map[string]any{{"location_id": loc.ID, "length_mm": 290, "quantity": 1}, {"location_id": loc.ID, "length_mm": 290, "quantity": 2}}},
	} {
		if r := e.do("PUT", "/v1/parts/"+spoke.String()+"/stock", w, body, "If-Match", etag); r.StatusCode != 400 {
			t.Errorf("%s: status %d %s", name, r.StatusCode, r.body)
		}
	}
	// Another organisation's location → 422.
	var locB struct{ ID uuid.UUID }
	e.want(e.do("POST", "/v1/locations", e.keyB, map[string]any{"name": "B bench"}), 201).json(t, &locB)
	e.want(e.do("PUT", "/v1/parts/"+spoke.String()+"/stock", w, map[string]any{"levels": []map[string]any{{"location_id": locB.ID, "length_mm": 290, "quantity": 1}}}, "If-Match", etag), 422)
	// Hubs are not stocked by length.
	hs := e.want(e.do("GET", "/v1/parts/"+hub.String()+"/stock", w, nil), 200)
	e.want(e.do("PUT", "/v1/parts/"+hub.String()+"/stock", w, map[string]any{"levels": []map[string]any{{"location_id": loc.ID, "length_mm": 290, "quantity": 1}}}, "If-Match", hs.Header.Get("ETag")), 400)
}
