package demo

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"

	"github.com/google/uuid"

	"wheelbench/service"
	"wheelbench/service/quote"
)

// The demo shop's catalog, stock, price list and three builds: an e-cargo
// hub-motor wheel (36 holes, large flanges, a 406 BSD rim, 13-gauge
// spokes), a 48-hole tandem rear, and a 622 BSD touring front with a dynamo
// hub. Every dimension, SKU and price is invented for the demo.

type demoPart struct {
	kind  service.PartKind
	sku   string
	name  string
	price int64
	dims  any
}

var demoParts = []demoPart{
	{service.PartHub, "DEMO-HUB-MOTOR36", "Cargo hub motor, 36 holes (invented)", 38000, map[string]any{
		"holes": 36, "kind": "motor", "type": "j_bend", "spacing_mm": 135,
		"left":  map[string]any{"pcd_mm": 154, "center_to_flange_mm": 22, "hole_diameter_mm": 3.0, "thickness_mm": 4.5},
		"right": map[string]any{"pcd_mm": 154, "center_to_flange_mm": 22, "hole_diameter_mm": 3.0, "thickness_mm": 4.5}}},
	{service.PartRim, "DEMO-RIM-406-36", "Cargo rim 406 BSD, 36 holes (invented)", 5200, map[string]any{
		"holes": 36, "erd_mm": 390, "bsd_mm": 406, "inner_width_mm": 30, "hole_diameter_mm": 4.2, "max_tension_n": 1400, "spoke_hole_offset_mm": 0}},
	{service.PartSpoke, "DEMO-SPK-13G", "Spoke 13 gauge stainless (invented)", 95, map[string]any{
		"gauge": 13, "head_diameter_mm": 4.6, "elbow_length_mm": 5.8, "thread": map[string]any{"diameter_mm": 2.34, "tpi": 56}, "thread_length_mm": 10, "material": "stainless_steel"}},
	{service.PartNipple, "DEMO-NIP-13G", "Nipple for 13 gauge, brass (invented)", 40, map[string]any{
		"thread": map[string]any{"diameter_mm": 2.34, "tpi": 56}, "shank_diameter_mm": 4.5, "head_diameter_mm": 6.2, "length_mm": 14, "material": "brass"}},
	{service.PartWasher, "DEMO-WSH-08", "Spoke-head washer 0.8 mm (invented)", 10, map[string]any{
		"thickness_mm": 0.8, "inner_diameter_mm": 2.6, "outer_diameter_mm": 5.5, "where": "hub"}},
	{service.PartTyre, "DEMO-TYRE-406-55", "Cargo tyre 55-406 (invented)", 3900, map[string]any{"bsd_mm": 406, "width_mm": 55}},

	{service.PartHub, "DEMO-HUB-TANDEM48", "Tandem rear hub, 48 holes (invented)", 21000, map[string]any{
		"holes": 48, "kind": "tandem", "type": "j_bend", "spacing_mm": 145,
		"left":  map[string]any{"pcd_mm": 60, "center_to_flange_mm": 35, "hole_diameter_mm": 2.6, "thickness_mm": 3.2},
		"right": map[string]any{"pcd_mm": 60, "center_to_flange_mm": 21, "hole_diameter_mm": 2.6, "thickness_mm": 3.2}}},
	{service.PartRim, "DEMO-RIM-559-48", "Touring rim 559 BSD, 48 holes (invented)", 6400, map[string]any{
		"holes": 48, "erd_mm": 541, "bsd_mm": 559, "inner_width_mm": 25, "hole_diameter_mm": 4.2, "max_tension_n": 1300, "spoke_hole_offset_mm": 0}},
	{service.PartSpoke, "DEMO-SPK-20", "Spoke 2.0 mm stainless (invented)", 70, map[string]any{
		"diameter_mm": 2.0, "head_diameter_mm": 4.0, "elbow_length_mm": 3.0, "thread": map[string]any{"diameter_mm": 2.0, "tpi": 56}, "thread_length_mm": 10, "material": "stainless_steel"}},
	{service.PartNipple, "DEMO-NIP-20", "Nipple 2.0 mm brass, 12 mm (invented)", 30, map[string]any{
		"thread": map[string]any{"diameter_mm": 2.0, "tpi": 56}, "shank_diameter_mm": 3.9, "head_diameter_mm": 5.6, "length_mm": 12, "material": "brass"}},
	{service.PartTyre, "DEMO-TYRE-559-50", "Touring tyre 50-559 (invented)", 4200, map[string]any{"bsd_mm": 559, "width_mm": 50}},

	{service.PartHub, "DEMO-HUB-DYNAMO36", "Dynamo front hub, 36 holes (invented)", 16500, map[string]any{
		"holes": 36, "kind": "bicycle", "type": "j_bend", "spacing_mm": 100,
		"left":  map[string]any{"pcd_mm": 66, "center_to_flange_mm": 32, "hole_diameter_mm": 2.6, "thickness_mm": 3.0},
		"right": map[string]any{"pcd_mm": 66, "center_to_flange_mm": 34, "hole_diameter_mm": 2.6, "thickness_mm": 3.0}}},
	{service.PartRim, "DEMO-RIM-622-36", "Touring rim 622 BSD, 36 holes (invented)", 5900, map[string]any{
		"holes": 36, "erd_mm": 603, "bsd_mm": 622, "inner_width_mm": 21, "hole_diameter_mm": 4.2, "max_tension_n": 1300, "spoke_hole_offset_mm": 0}},
	{service.PartTyre, "DEMO-TYRE-622-42", "Touring tyre 42-622 (invented)", 3600, map[string]any{"bsd_mm": 622, "width_mm": 42}},
}

type demoBuild struct {
	ref      string
	location uuid.UUID
	spec     map[string]any // part SKUs are replaced by their ids
	quote    bool
}

var demoBuilds = []demoBuild{
	{"DEMO-CARGO-1", Locations[0].ID, map[string]any{"spoke_count": 36, "hub_id": "DEMO-HUB-MOTOR36", "rim_id": "DEMO-RIM-406-36",
		"spoke_id": "DEMO-SPK-13G", "nipple_id": "DEMO-NIP-13G", "washer_ids": []any{"DEMO-WSH-08"}, "tyre_id": "DEMO-TYRE-406-55",
		"crosses": map[string]any{"left": 1, "right": 1}, "target_tension_n": 1200, "frame_spacing_mm": 135}, true},
	{"DEMO-TANDEM-1", Locations[1].ID, map[string]any{"spoke_count": 48, "hub_id": "DEMO-HUB-TANDEM48", "rim_id": "DEMO-RIM-559-48",
		"spoke_id": "DEMO-SPK-20", "nipple_id": "DEMO-NIP-20", "tyre_id": "DEMO-TYRE-559-50",
		"crosses": map[string]any{"left": 4, "right": 4}, "target_tension_n": 1150, "frame_spacing_mm": 145}, true},
	{"DEMO-TOURING-1", Locations[2].ID, map[string]any{"spoke_count": 36, "hub_id": "DEMO-HUB-DYNAMO36", "rim_id": "DEMO-RIM-622-36",
		"spoke_id": "DEMO-SPK-20", "nipple_id": "DEMO-NIP-20", "tyre_id": "DEMO-TYRE-622-42",
		"crosses": map[string]any{"left": 3, "right": 3}, "target_tension_n": 1050, "frame_spacing_mm": 100}, false},
}

// demoShop loads the catalog, stock, price list and builds once; a second
// run finds them by SKU and external reference and changes nothing.
func demoShop(ctx context.Context, svc *service.Service, p service.Principal) (parts, builds int, err error) {
	ids := map[string]uuid.UUID{}
	for _, dp := range demoParts {
		found, err := svc.ListParts(ctx, p, service.PartFilter{SKU: dp.sku}, service.Page{Limit: 1})
		if err != nil {
			return 0, 0, err
		}
		if len(found) == 1 {
			ids[dp.sku] = found[0].ID
			continue
		}
		dims, _ := json.Marshal(dp.dims)
		pt, err := svc.CreatePart(ctx, p, service.PartInput{Kind: dp.kind, SKU: dp.sku, Name: dp.name, PriceMinor: dp.price, Currency: "EUR", Dimensions: dims})
		if err != nil {
			return 0, 0, fmt.Errorf("demo part %s: %w", dp.sku, err)
		}
		ids[pt.SKU] = pt.ID
		if err := demoStock(ctx, svc, p, pt); err != nil {
			return 0, 0, err
		}
	}
	if _, err := svc.GetPriceList(ctx, p); errors.Is(err, service.ErrNotFound) {
		if _, err := svc.PutPriceList(ctx, p, "", quote.PriceList{Currency: "EUR", BaseBuildMinor: 4500, PerSpokeMinor: 60,
			PerDrilledHoleMinor: 120, PerWasherMinor: 25, PerCutSpokeMinor: 90, ValidityDays: 21}); err != nil {
			return 0, 0, fmt.Errorf("demo price list: %w", err)
		}
	} else if err != nil {
		return 0, 0, err
	}
	for _, db := range demoBuilds {
		ref := db.ref
		found, err := svc.ListBuilds(ctx, p, service.BuildFilter{ExternalRef: &ref}, service.Page{Limit: 1})
		if err != nil {
			return 0, 0, err
		}
		if len(found) == 1 {
			builds++
			continue
		}
		spec := map[string]any{}
		for k, v := range db.spec {
			switch x := v.(type) {
			case string:
				spec[k] = ids[x]
			case []any:
				list := []uuid.UUID{}
				for _, s := range x {
					list = append(list, ids[s.(string)])
				}
				spec[k] = list
			default:
				spec[k] = v
			}
		}
		raw, _ := json.Marshal(spec)
		b, err := svc.CreateBuild(ctx, p, service.BuildInput{Spec: raw, ExternalRef: db.ref, LocationID: db.location})
		if err != nil {
			return 0, 0, fmt.Errorf("demo build %s: %w", db.ref, err)
		}
		builds++
		if db.quote {
			if _, err := svc.CreateQuote(ctx, p, b.ID); err != nil {
				return 0, 0, fmt.Errorf("demo quote for %s: %w", db.ref, err)
			}
		}
	}
	return len(ids), builds, nil
}

// demoStock stocks a new demo part at every location: spokes from 100 to
// 310 mm in 2 mm steps, other parts by the piece.
func demoStock(ctx context.Context, svc *service.Service, p service.Principal, pt service.Part) error {
	var levels []service.StockLevel
	for _, l := range Locations {
		if pt.Kind == service.PartSpoke {
			for mm := 100; mm <= 310; mm += 2 {
				levels = append(levels, service.StockLevel{LocationID: l.ID, LengthMM: float64(mm), Quantity: 120})
			}
			continue
		}
		qty := int64(6)
		switch pt.Kind {
		case service.PartNipple, service.PartWasher:
			qty = 500
		}
		levels = append(levels, service.StockLevel{LocationID: l.ID, Quantity: qty})
	}
	_, err := svc.PutPartStock(ctx, p, pt.ID, "*", levels)
	return err
}
