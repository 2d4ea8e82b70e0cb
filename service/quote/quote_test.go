package quote

import (
	"encoding/json"
	"testing"
	"time"

	"github.com/google/go-cmp/cmp"
)

// The demo prices below are invented. Every expected figure is worked out by
// hand in the comment beside it; the tax rule is the package's (exact
// fraction, halves away from zero).

// An invented road front in EUR (ISO 4217 exponent 2, from memory) at a
// 19 % rate.
func TestComputeRoadFrontEUR(t *testing.T) {
	in := Input{
		Currency:   "EUR",
		TaxRatePPM: 190000, // 19 %
		Hub:        &PartLine{SKU: "HUB-F-32", Description: "Front hub, 32 holes", Quantity: 1, UnitPriceMinor: 8950},
		Rim:        &PartLine{SKU: "RIM-622-32", Quantity: 1, UnitPriceMinor: 6400},
		Spokes: []SpokeGroup{
			{Side: SideRight, LengthMM: 260, PartLine: PartLine{SKU: "SP-2.0-260", Quantity: 16, UnitPriceMinor: 95}},
			{Side: SideLeft, LengthMM: 262, PartLine: PartLine{SKU: "SP-2.0-262", Quantity: 16, UnitPriceMinor: 95}},
		},
		Nipples: &PartLine{Quantity: 32, UnitPriceMinor: 20},
		Washers: &PartLine{Quantity: 0, UnitPriceMinor: 10}, // none fitted: line left out
		Labour:  Labour{Spokes: 32},
	}
	pl := PriceList{Currency: "EUR", BaseBuildMinor: 2500, PerSpokeMinor: 50, PerDrilledHoleMinor: 80,
		PerWasherMinor: 15, PerCutSpokeMinor: 120}
	q, err := Compute(in, pl)
	if err != nil {
		t.Fatal(err)
	}
	want := Quote{
		Currency: "EUR",
		Lines: []Line{
			{Kind: KindPart, Code: CodeHub, Description: "Front hub, 32 holes", SKU: "HUB-F-32", Quantity: 1, UnitPriceMinor: 8950, AmountMinor: 8950}, // 1 × 8950
			{Kind: KindPart, Code: CodeRim, Description: "Rim", SKU: "RIM-622-32", Quantity: 1, UnitPriceMinor: 6400, AmountMinor: 6400},               // 1 × 6400, default description
			// left before right whatever the input order
			{Kind: KindPart, Code: CodeSpokes, Description: "Spokes, left, 262 mm", SKU: "SP-2.0-262", Side: SideLeft, LengthMM: 262, Quantity: 16, UnitPriceMinor: 95, AmountMinor: 1520},   // 16 × 95
			{Kind: KindPart, Code: CodeSpokes, Description: "Spokes, right, 260 mm", SKU: "SP-2.0-260", Side: SideRight, LengthMM: 260, Quantity: 16, UnitPriceMinor: 95, AmountMinor: 1520}, // 16 × 95
			{Kind: KindPart, Code: CodeNipples, Description: "Nipples", Quantity: 32, UnitPriceMinor: 20, AmountMinor: 640},                                                                  // 32 × 20
			{Kind: KindLabour, Code: CodeLabourBase, Description: "Wheel build", Quantity: 1, UnitPriceMinor: 2500, AmountMinor: 2500},                                                       // once per wheel
			{Kind: KindLabour, Code: CodeLabourSpokes, Description: "Lacing and tensioning, per spoke", Quantity: 32, UnitPriceMinor: 50, AmountMinor: 1600},                                 // 32 × 50
		},
		// 8950 + 6400 + 1520 + 1520 + 640 + 2500 + 1600 = 23130
		SubtotalMinor: 23130,
		TaxRatePPM:    190000,
		// 23130 × 19 / 100 = 439470 / 100 = 4394.70 → 4395
		TaxMinor: 4395,
		// 23130 + 4395
		TotalMinor:   27525,
		ValidityDays: DefaultValidityDays, // price list left it 0
	}
	if d := cmp.Diff(want, q); d != "" {
		t.Errorf("quote (-want +got):\n%s", d)
	}
}

// An invented motor-hub build in JPY (ISO 4217 exponent 0, from memory) at
// 7.7 %: every labour line present, holes drilled, washers fitted, one side
// cut from longer stock.
func TestComputeMotorBuildJPY(t *testing.T) {
	in := Input{
		Currency:   "JPY",
		TaxRatePPM: 77000, // 7.7 %
		Hub:        &PartLine{Description: "Rear motor hub, 36 holes", Quantity: 1, UnitPriceMinor: 38000},
		Rim:        &PartLine{Description: "Rim 406, 36 holes", Quantity: 1, UnitPriceMinor: 9800},
		Spokes: []SpokeGroup{
			{Side: SideRight, LengthMM: 196, PartLine: PartLine{Quantity: 18, UnitPriceMinor: 150}},
			{Side: SideLeft, LengthMM: 196, PartLine: PartLine{Quantity: 18, UnitPriceMinor: 150}},
		},
		Nipples: &PartLine{Quantity: 36, UnitPriceMinor: 40},
		Washers: &PartLine{Quantity: 36, UnitPriceMinor: 15},
		Other:   []PartLine{{SKU: "TYRE-406-55", Description: "Tyre 55-406", Quantity: 1, UnitPriceMinor: 4200}},
		Labour:  Labour{Spokes: 36, DrilledHoles: 36, WashersFitted: 36, SpokesCut: 18},
	}
	pl := PriceList{Currency: "JPY", BaseBuildMinor: 5000, PerSpokeMinor: 200, PerDrilledHoleMinor: 100,
		PerWasherMinor: 50, PerCutSpokeMinor: 300, ValidityDays: 30}
	q, err := Compute(in, pl)
	if err != nil {
		t.Fatal(err)
	}
	amounts := map[string][]int64{}
	for _, l := range q.Lines {
		amounts[l.Code] = append(amounts[l.Code], l.AmountMinor)
	}
	wantAmounts := map[string][]int64{
		CodeHub:            {38000},      // 1 × 38000
		CodeRim:            {9800},       // 1 × 9800
		CodeSpokes:         {2700, 2700}, // 18 × 150 each side
		CodeNipples:        {1440},       // 36 × 40
		CodeWashers:        {540},        // 36 × 15
		CodeOther:          {4200},       // 1 × 4200
		CodeLabourBase:     {5000},       // once
		CodeLabourSpokes:   {7200},       // 36 × 200
		CodeLabourDrilling: {3600},       // 36 × 100
		CodeLabourWashers:  {1800},       // 36 × 50
		CodeLabourCutting:  {5400},       // 18 × 300
	}
	if d := cmp.Diff(wantAmounts, amounts); d != "" {
		t.Errorf("amounts by code (-want +got):\n%s", d)
	}
	// parts 38000 + 9800 + 2700 + 2700 + 1440 + 540 + 4200 = 59380
	// labour 5000 + 7200 + 3600 + 1800 + 5400 = 23000
	// subtotal 59380 + 23000 = 82380
	// tax 82380 × 77 / 1000 = 6343260 / 1000 = 6343.26 → 6343
	// total 82380 + 6343 = 88723
	if q.SubtotalMinor != 82380 || q.TaxMinor != 6343 || q.TotalMinor != 88723 {
		t.Errorf("subtotal, tax, total = %d, %d, %d; want 82380, 6343, 88723", q.SubtotalMinor, q.TaxMinor, q.TotalMinor)
	}
	if q.ValidityDays != 30 {
		t.Errorf("validity %d days, want the price list's 30", q.ValidityDays)
	}
	// Same stock length both sides: left first (sides ordered left, right).
	if s := q.Lines[2]; s.Side != SideLeft || s.Description != "Spokes, left, 196 mm" {
		t.Errorf("first spoke line %+v, want the left side", s)
	}
}

// An invented KWD quote (ISO 4217 exponent 3, from memory) whose tax lands
// on an exact half: 5 % of 12330 = 616.5, which the rule takes to 617
// (half-to-even would give 616).
func TestComputeHalfTaxKWD(t *testing.T) {
	in := Input{
		Currency:   "KWD",
		TaxRatePPM: 50000, // 5 %
		Other:      []PartLine{{Description: "Rim tape", Quantity: 1, UnitPriceMinor: 730}},
		Labour:     Labour{Spokes: 32},
	}
	pl := PriceList{Currency: "KWD", BaseBuildMinor: 10000, PerSpokeMinor: 50}
	q, err := Compute(in, pl)
	if err != nil {
		t.Fatal(err)
	}
	// 730 + 10000 + 32 × 50 = 730 + 10000 + 1600 = 12330
	// 12330 × 5 / 100 = 61650 / 100 = 616.5 → 617; total 12330 + 617 = 12947
	if q.SubtotalMinor != 12330 || q.TaxMinor != 617 || q.TotalMinor != 12947 {
		t.Errorf("subtotal, tax, total = %d, %d, %d; want 12330, 617, 12947", q.SubtotalMinor, q.TaxMinor, q.TotalMinor)
	}
	// 12947 fils with exponent 3 is 12.947
	if s, _ := FormatMinor(q.TotalMinor, q.Currency); s != "12.947" {
		t.Errorf("total formats as %q, want 12.947", s)
	}
}

// Exact halves through Compute: one part line and no labour prices, at a
// 1 % rate, so the tax is amount / 100.
func TestComputeTaxAtHalves(t *testing.T) {
	cases := []struct {
		amount, tax int64
	}{
		{50, 1},  // 0.50 → 1 (half-to-even: 0)
		{150, 2}, // 1.50 → 2
		{250, 3}, // 2.50 → 3 (half-to-even: 2)
		{249, 2}, // 2.49 → 2
		{251, 3}, // 2.51 → 3
		{49, 0},  // 0.49 → 0
		{0, 0},   // price 0: the line stays, no tax
	}
	for _, c := range cases {
		in := Input{Currency: "USD", TaxRatePPM: 10000, Other: []PartLine{{Description: "Valve", Quantity: 1, UnitPriceMinor: c.amount}}}
		q, err := Compute(in, PriceList{Currency: "USD"})
		if err != nil {
			t.Fatal(err)
		}
		if q.SubtotalMinor != c.amount || q.TaxMinor != c.tax || q.TotalMinor != c.amount+c.tax {
			t.Errorf("amount %d: subtotal, tax, total = %d, %d, %d; want %d, %d, %d",
				c.amount, q.SubtotalMinor, q.TaxMinor, q.TotalMinor, c.amount, c.tax, c.amount+c.tax)
		}
	}
}

// Quantity 0 drops a line, price 0 keeps it; the base build is always there.
func TestComputeOmitsZeroQuantity(t *testing.T) {
	in := Input{
		Currency: "GBP",
		Hub:      &PartLine{Quantity: 0, UnitPriceMinor: 5000}, // customer's own hub
		Rim:      &PartLine{Quantity: 1, UnitPriceMinor: 0},    // a free rim stays
		Spokes:   []SpokeGroup{{Side: SideLeft, LengthMM: 250, PartLine: PartLine{Quantity: 0, UnitPriceMinor: 90}}},
		Labour:   Labour{Spokes: 0, DrilledHoles: 0},
	}
	q, err := Compute(in, PriceList{Currency: "GBP", BaseBuildMinor: 0, PerSpokeMinor: 60})
	if err != nil {
		t.Fatal(err)
	}
	var codes []string
	for _, l := range q.Lines {
		codes = append(codes, l.Code)
	}
	if d := cmp.Diff([]string{CodeRim, CodeLabourBase}, codes); d != "" {
		t.Errorf("line codes (-want +got):\n%s", d)
	}
	if q.TotalMinor != 0 {
		t.Errorf("total %d, want 0 (0 + 0)", q.TotalMinor)
	}
}

// The JSON shape integrators see: snake_case keys, sku/side/length_mm only
// where set.
func TestQuoteJSONShape(t *testing.T) {
	in := Input{Currency: "CHF", TaxRatePPM: 81000,
		Spokes: []SpokeGroup{{Side: SideRight, LengthMM: 288, PartLine: PartLine{SKU: "S288", Quantity: 2, UnitPriceMinor: 110}}}}
	q, err := Compute(in, PriceList{Currency: "CHF", BaseBuildMinor: 1000, ValidityDays: 7})
	if err != nil {
		t.Fatal(err)
	}
	got, err := json.Marshal(q)
	if err != nil {
		t.Fatal(err)
	}
	// 2 × 110 = 220; 220 + 1000 = 1220; 1220 × 8.1 % = 98.82 → 99; 1220 + 99 = 1319
	want := `{"currency":"CHF","lines":[` +
		`{"kind":"part","code":"spokes","description":"Spokes, right, 288 mm","sku":"S288","side":"right","length_mm":288,"quantity":2,"unit_price_minor":110,"amount_minor":220},` +
		`{"kind":"labour","code":"labour_base","description":"Wheel build","quantity":1,"unit_price_minor":1000,"amount_minor":1000}],` +
		`"subtotal_minor":1220,"tax_rate_ppm":81000,"tax_minor":99,"total_minor":1319,"validity_days":7}`
	if string(got) != want {
		t.Errorf("JSON\n got %s\nwant %s", got, want)
	}
}

// ValidUntil adds calendar days in the issuing location (time.AddDate).
func TestValidUntil(t *testing.T) {
	issued := time.Date(2030, time.February, 20, 15, 4, 0, 0, time.UTC)
	q := Quote{ValidityDays: 14}
	// 20 February + 14 days: 8 days to the end of February 2030 (28 days,
	// 2030 is not a leap year: not divisible by 4), then 6 into March.
	want := time.Date(2030, time.March, 6, 15, 4, 0, 0, time.UTC)
	if got := q.ValidUntil(issued); !got.Equal(want) {
		t.Errorf("ValidUntil = %v, want %v", got, want)
	}
}
