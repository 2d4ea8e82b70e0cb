package demo

import (
	"context"
	"errors"
	"fmt"

	"github.com/google/uuid"

	"wheelbench/service"
	"wheelbench/service/fit"
	"wheelbench/service/geometry"
	"wheelbench/service/quote"
	"wheelbench/service/spoke"
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
	dims  any // the value kind.NewDimensions makes, filled
}

func fp(v float64) *float64 { return &v }
func ip(v int) *int         { return &v }

// flange is a demo hub flange: hole circle, centre to flange, hole and
// thickness, mm.
func flange(pcd, c2f, hole, thick float64) geometry.Flange {
	return geometry.Flange{PCDMM: pcd, CenterToFlangeMM: c2f, HoleDiameterMM: fp(hole), ThicknessMM: fp(thick)}
}

var demoParts = []demoPart{
	{service.PartHub, "DEMO-HUB-MOTOR36", "Cargo hub motor, 36 holes (invented)", 38000, &geometry.Hub{
		Holes: 36, Kind: "motor", Type: "j_bend", SpacingMM: fp(135), Left: flange(154, 22, 3.0, 4.5), Right: flange(154, 22, 3.0, 4.5)}},
	{service.PartRim, "DEMO-RIM-406-36", "Cargo rim 406 BSD, 36 holes (invented)", 5200, &geometry.Rim{
		Holes: 36, ERDMM: 390, BSDMM: 406, InnerWidthMM: 30, HoleDiameterMM: 4.2, MaxTensionN: fp(1400)}},
	{service.PartSpoke, "DEMO-SPK-13G", "Spoke 13 gauge stainless (invented)", 95, &spoke.Spec{
		Gauge: ip(13), HeadDiameterMM: fp(4.6), ElbowLengthMM: fp(5.8), Thread: &spoke.Thread{DiameterMM: fp(2.34), TPI: fp(56)},
		ThreadLengthMM: fp(10), Material: "stainless_steel"}},
	{service.PartNipple, "DEMO-NIP-13G", "Nipple for 13 gauge, brass (invented)", 40, &fit.Nipple{
		Thread: spoke.Thread{DiameterMM: fp(2.34), TPI: fp(56)}, ShankDiameterMM: 4.5, HeadDiameterMM: 6.2, LengthMM: 14, Material: "brass"}},
	{service.PartWasher, "DEMO-WSH-08", "Spoke-head washer 0.8 mm (invented)", 10, &fit.Washer{
		ThicknessMM: 0.8, InnerDiameterMM: 2.6, OuterDiameterMM: 5.5, Where: fit.AtHub}},
	{service.PartTyre, "DEMO-TYRE-406-55", "Cargo tyre 55-406 (invented)", 3900, &fit.Tyre{BSDMM: 406, WidthMM: 55}},

	{service.PartHub, "DEMO-HUB-TANDEM48", "Tandem rear hub, 48 holes (invented)", 21000, &geometry.Hub{
		Holes: 48, Kind: "tandem", Type: "j_bend", SpacingMM: fp(145), Left: flange(60, 35, 2.6, 3.2), Right: flange(60, 21, 2.6, 3.2)}},
	{service.PartRim, "DEMO-RIM-559-48", "Touring rim 559 BSD, 48 holes (invented)", 6400, &geometry.Rim{
		Holes: 48, ERDMM: 541, BSDMM: 559, InnerWidthMM: 25, HoleDiameterMM: 4.2, MaxTensionN: fp(1300)}},
	{service.PartSpoke, "DEMO-SPK-20", "Spoke 2.0 mm stainless (invented)", 70, &spoke.Spec{
		DiameterMM: fp(2.0), HeadDiameterMM: fp(4.0), ElbowLengthMM: fp(3.0), Thread: &spoke.Thread{DiameterMM: fp(2.0), TPI: fp(56)},
		ThreadLengthMM: fp(10), Material: "stainless_steel"}},
	{service.PartNipple, "DEMO-NIP-20", "Nipple 2.0 mm brass, 12 mm (invented)", 30, &fit.Nipple{
		Thread: spoke.Thread{DiameterMM: fp(2.0), TPI: fp(56)}, ShankDiameterMM: 3.9, HeadDiameterMM: 5.6, LengthMM: 12, Material: "brass"}},
	{service.PartTyre, "DEMO-TYRE-559-50", "Touring tyre 50-559 (invented)", 4200, &fit.Tyre{BSDMM: 559, WidthMM: 50}},

	{service.PartHub, "DEMO-HUB-DYNAMO36", "Dynamo front hub, 36 holes (invented)", 16500, &geometry.Hub{
		Holes: 36, Kind: "bicycle", Type: "j_bend", SpacingMM: fp(100), Left: flange(66, 32, 2.6, 3.0), Right: flange(66, 34, 2.6, 3.0)}},
	{service.PartRim, "DEMO-RIM-622-36", "Touring rim 622 BSD, 36 holes (invented)", 5900, &geometry.Rim{
		Holes: 36, ERDMM: 603, BSDMM: 622, InnerWidthMM: 21, HoleDiameterMM: 4.2, MaxTensionN: fp(1300)}},
	{service.PartTyre, "DEMO-TYRE-622-42", "Touring tyre 42-622 (invented)", 3600, &fit.Tyre{BSDMM: 622, WidthMM: 42}},
}

// demoBuild is a demo build: its parts by SKU (washers may be none), the
// crosses per side, the target tension (N) and the frame spacing (mm).
type demoBuild struct {
	ref                           string
	location                      uuid.UUID
	spokes                        int
	hub, rim, spoke, nipple, tyre string
	washers                       []string
	crosses                       int
	tensionN, frameMM             float64
	quote                         bool
}

var demoBuilds = []demoBuild{
	{"DEMO-CARGO-1", Locations[0].ID, 36, "DEMO-HUB-MOTOR36", "DEMO-RIM-406-36", "DEMO-SPK-13G", "DEMO-NIP-13G", "DEMO-TYRE-406-55",
		[]string{"DEMO-WSH-08"}, 1, 1200, 135, true},
	{"DEMO-TANDEM-1", Locations[1].ID, 48, "DEMO-HUB-TANDEM48", "DEMO-RIM-559-48", "DEMO-SPK-20", "DEMO-NIP-20", "DEMO-TYRE-559-50",
		nil, 4, 1150, 145, true},
	{"DEMO-TOURING-1", Locations[2].ID, 36, "DEMO-HUB-DYNAMO36", "DEMO-RIM-622-36", "DEMO-SPK-20", "DEMO-NIP-20", "DEMO-TYRE-622-42",
		nil, 3, 1050, 100, false},
}

// spec is the build's spec with its parts named by their catalog ids.
func (db demoBuild) spec(ids map[string]uuid.UUID) service.BuildSpec {
	id := func(sku string) *uuid.UUID { v := ids[sku]; return &v }
	s := service.BuildSpec{SpokeCount: db.spokes, HubID: id(db.hub), RimID: id(db.rim), SpokeID: id(db.spoke), NippleID: id(db.nipple),
		TyreID: id(db.tyre), Crosses: geometry.Cross{Left: ip(db.crosses), Right: ip(db.crosses)}, TargetTensionN: db.tensionN,
		FrameSpacingMM: fp(db.frameMM)}
	for _, w := range db.washers {
		s.WasherIDs = append(s.WasherIDs, ids[w])
	}
	return s
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
		pt, err := svc.CreatePart(ctx, p, service.PartInput{Kind: dp.kind, SKU: dp.sku, Name: dp.name, PriceMinor: dp.price, Currency: "EUR", Dimensions: dp.dims})
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
		b, err := svc.CreateBuild(ctx, p, service.BuildInput{Spec: db.spec(ids), ExternalRef: db.ref, LocationID: db.location})
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
