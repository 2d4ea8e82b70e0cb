package quote

import (
	"errors"
	"math"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"

	"wheelbench/service/field"
)

// fieldErrors walks an errors.Join tree as the HTTP layer does. It fails the
// test on any error that is not a *field.Error.
func fieldErrors(t testing.TB, err error) []*field.Error {
	t.Helper()
	var out []*field.Error
	var walk func(error)
	walk = func(e error) {
		if fe, ok := e.(*field.Error); ok {
			out = append(out, fe)
			return
		}
		if j, ok := e.(interface{ Unwrap() []error }); ok {
			for _, x := range j.Unwrap() {
				walk(x)
			}
			return
		}
		t.Fatalf("error of unexpected type %T: %v", e, e)
	}
	walk(err)
	return out
}

type wantField struct {
	Pointer       string
	Unprocessable bool
}

// goodInput is a small valid quote to break one field at a time.
func goodInput() (Input, PriceList) {
	in := Input{
		Currency:   "EUR",
		TaxRatePPM: 200000,
		Hub:        &PartLine{Quantity: 1, UnitPriceMinor: 4000},
		Rim:        &PartLine{Quantity: 1, UnitPriceMinor: 3000},
		Spokes: []SpokeGroup{
			{Side: SideLeft, LengthMM: 262, PartLine: PartLine{Quantity: 16, UnitPriceMinor: 80}},
			{Side: SideRight, LengthMM: 260, PartLine: PartLine{Quantity: 16, UnitPriceMinor: 80}},
		},
		Nipples: &PartLine{Quantity: 32, UnitPriceMinor: 15},
		Other:   []PartLine{{Description: "Rim tape", Quantity: 1, UnitPriceMinor: 300}},
		Labour:  Labour{Spokes: 32, SpokesCut: 2},
	}
	pl := PriceList{Currency: "EUR", BaseBuildMinor: 2000, PerSpokeMinor: 40, PerDrilledHoleMinor: 60,
		PerWasherMinor: 10, PerCutSpokeMinor: 100, ValidityDays: 14}
	return in, pl
}

func TestGoodInputIsGood(t *testing.T) {
	in, pl := goodInput()
	if _, err := Compute(in, pl); err != nil {
		t.Fatal(err)
	}
}

// One bad field at a time: Compute names it, with its HTTP class.
func TestComputeNamesTheField(t *testing.T) {
	const max = MaxAmountMinor // 2^53 − 1
	cases := []struct {
		name string
		set  func(*Input, *PriceList)
		want []wantField
	}{
		{"lower-case currency", func(in *Input, _ *PriceList) { in.Currency = "eur" }, []wantField{{"/currency", false}}},
		{"long currency", func(in *Input, _ *PriceList) { in.Currency = "EURO" }, []wantField{{"/currency", false}}},
		{"unknown currency", func(in *Input, _ *PriceList) { in.Currency = "XYZ" }, []wantField{{"/currency", true}}},
		{"currency mismatch", func(in *Input, _ *PriceList) { in.Currency = "USD" }, []wantField{{"/currency", true}}},
		{"price list currency missing", func(_ *Input, pl *PriceList) { pl.Currency = "" }, []wantField{{"/price_list/currency", false}}},
		{"negative tax rate", func(in *Input, _ *PriceList) { in.TaxRatePPM = -1 }, []wantField{{"/tax_rate_ppm", false}}},
		{"tax rate over 100 %", func(in *Input, _ *PriceList) { in.TaxRatePPM = PPM + 1 }, []wantField{{"/tax_rate_ppm", false}}},
		{"negative hub price", func(in *Input, _ *PriceList) { in.Hub.UnitPriceMinor = -1 }, []wantField{{"/hub/unit_price_minor", false}}},
		{"negative rim quantity", func(in *Input, _ *PriceList) { in.Rim.Quantity = -1 }, []wantField{{"/rim/quantity", false}}},
		{"absurd nipple quantity", func(in *Input, _ *PriceList) { in.Nipples.Quantity = MaxQuantity + 1 }, []wantField{{"/nipples/quantity", false}}},
		{"price past the limit", func(in *Input, _ *PriceList) { in.Hub.UnitPriceMinor = max + 1 }, []wantField{{"/hub/unit_price_minor", false}}},
		{"int64 extremes", func(in *Input, _ *PriceList) {
			in.Rim.Quantity, in.Rim.UnitPriceMinor = math.MaxInt64, math.MinInt64
		}, []wantField{{"/rim/quantity", false}, {"/rim/unit_price_minor", false}}},
		{"spoke side", func(in *Input, _ *PriceList) { in.Spokes[1].Side = "drive" }, []wantField{{"/spokes/1/side", false}}},
		{"spoke length 0", func(in *Input, _ *PriceList) { in.Spokes[0].LengthMM = 0 }, []wantField{{"/spokes/0/length_mm", false}}},
		{"spoke length absurd", func(in *Input, _ *PriceList) { in.Spokes[0].LengthMM = MaxSpokeLengthMM + 1 }, []wantField{{"/spokes/0/length_mm", false}}},
		{"duplicate spoke group", func(in *Input, _ *PriceList) { in.Spokes[1].Side, in.Spokes[1].LengthMM = SideLeft, 262 }, []wantField{{"/spokes/1", false}}},
		{"negative spoke price", func(in *Input, _ *PriceList) { in.Spokes[1].UnitPriceMinor = -80 }, []wantField{{"/spokes/1/unit_price_minor", false}}},
		{"other without description", func(in *Input, _ *PriceList) { in.Other[0].Description = "" }, []wantField{{"/other/0/description", false}}},
		{"control character", func(in *Input, _ *PriceList) { in.Other[0].Description = "tape\x00" }, []wantField{{"/other/0/description", false}}},
		{"bad UTF-8", func(in *Input, _ *PriceList) { in.Hub.SKU = "\xff" }, []wantField{{"/hub/sku", false}}},
		{"long SKU", func(in *Input, _ *PriceList) { in.Hub.SKU = strings.Repeat("A", MaxSKUBytes+1) }, []wantField{{"/hub/sku", false}}},
		{"long description", func(in *Input, _ *PriceList) {
			in.Rim.Description = strings.Repeat("é", MaxDescriptionRunes+1)
		}, []wantField{{"/rim/description", false}}},
		{"too many other lines", func(in *Input, _ *PriceList) {
			in.Other = make([]PartLine, MaxGroups+1)
		}, []wantField{{"/other", false}}},
		{"negative labour", func(in *Input, _ *PriceList) { in.Labour.DrilledHoles = -3 }, []wantField{{"/labour/drilled_holes", false}}},
		{"absurd washers", func(in *Input, _ *PriceList) { in.Labour.WashersFitted = MaxQuantity + 1 }, []wantField{{"/labour/washers_fitted", false}}},
		{"more cut than laced", func(in *Input, _ *PriceList) { in.Labour.SpokesCut = 33 }, []wantField{{"/labour/spokes_cut", true}}},
		{"negative labour price", func(_ *Input, pl *PriceList) { pl.PerWasherMinor = -10 }, []wantField{{"/price_list/per_washer_minor", false}}},
		{"validity negative", func(_ *Input, pl *PriceList) { pl.ValidityDays = -1 }, []wantField{{"/price_list/validity_days", false}}},
		{"validity absurd", func(_ *Input, pl *PriceList) { pl.ValidityDays = MaxValidityDays + 1 }, []wantField{{"/price_list/validity_days", false}}},

		// Overflow of a product or a sum, each below the field limits:
		// 2 × (2^53 − 1) is past 2^53 − 1.
		{"hub amount overflow", func(in *Input, _ *PriceList) { in.Hub.Quantity, in.Hub.UnitPriceMinor = 2, max }, []wantField{{"/hub/unit_price_minor", false}}},
		// 100000 × 2^40 ≈ 1.1 × 10^17 > 9.0 × 10^15; the index is the input's
		// even though left sorts first.
		{"spoke amount overflow", func(in *Input, _ *PriceList) {
			in.Spokes[1].Quantity, in.Spokes[1].UnitPriceMinor = MaxQuantity, 1<<40
		}, []wantField{{"/spokes/1/unit_price_minor", false}}},
		// 32 × (2^53 − 1) for labour blames the price list's price.
		{"labour amount overflow", func(_ *Input, pl *PriceList) { pl.PerSpokeMinor = max }, []wantField{{"/price_list/per_spoke_minor", false}}},
		// hub alone at the limit, then the rim's 3000 pushes the sum past.
		{"subtotal overflow", func(in *Input, _ *PriceList) { in.Hub.UnitPriceMinor = max }, []wantField{{"/rim/unit_price_minor", false}}},
		// subtotal exactly 2^53 − 1 (one line, no labour prices); tax at
		// 1 ppm = 9007199254740991 / 10^6 = 9007199254.740991 → 9007199255,
		// and the total has no room left for it.
		{"total overflow", func(in *Input, pl *PriceList) {
			*in = Input{Currency: "EUR", TaxRatePPM: 1, Other: []PartLine{{Description: "x", Quantity: 1, UnitPriceMinor: max}}}
			*pl = PriceList{Currency: "EUR"}
		}, []wantField{{"/tax_rate_ppm", false}}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			in, pl := goodInput()
			c.set(&in, &pl)
			q, err := Compute(in, pl)
			if err == nil {
				t.Fatalf("accepted, quote %+v", q)
			}
			if d := cmp.Diff(Quote{}, q); d != "" {
				t.Errorf("a quote came back with the error:\n%s", d)
			}
			var got []wantField
			for _, fe := range fieldErrors(t, err) {
				got = append(got, wantField{fe.Pointer, fe.Unprocessable})
				if fe.Message == "" || fe.Error() != fe.Pointer+": "+fe.Message {
					t.Errorf("field error %#v reads %q", fe, fe.Error())
				}
			}
			if d := cmp.Diff(c.want, got); d != "" {
				t.Errorf("fields (-want +got):\n%s\nerror: %v", d, err)
			}
		})
	}
}

// Just inside every limit is accepted: 2^53 − 1 as one amount and as the
// total (rate 0), MaxQuantity, the 100 % rate.
func TestComputeAtTheLimits(t *testing.T) {
	in := Input{Currency: "USD", Other: []PartLine{{Description: "x", Quantity: 1, UnitPriceMinor: MaxAmountMinor}}}
	q, err := Compute(in, PriceList{Currency: "USD"})
	if err != nil {
		t.Fatal(err)
	}
	// base build at price 0 adds 0: total = 2^53 − 1
	if q.TotalMinor != MaxAmountMinor {
		t.Errorf("total %d, want %d", q.TotalMinor, MaxAmountMinor)
	}
	// half the limit at 100 %: (2^53 − 2)/2 = 4503599627370495, taxed the
	// same again = 9007199254740990 ≤ 2^53 − 1
	in = Input{Currency: "USD", TaxRatePPM: PPM, Other: []PartLine{{Description: "x", Quantity: MaxQuantity, UnitPriceMinor: 45035996273}}}
	q, err = Compute(in, PriceList{Currency: "USD", BaseBuildMinor: 4503599627370495 - MaxQuantity*45035996273})
	if err != nil {
		t.Fatal(err)
	}
	// 100000 × 45035996273 = 4503599627300000; + base 70495 = 4503599627370495
	if q.SubtotalMinor != 4503599627370495 || q.TaxMinor != 4503599627370495 || q.TotalMinor != 9007199254740990 {
		t.Errorf("subtotal, tax, total = %d, %d, %d", q.SubtotalMinor, q.TaxMinor, q.TotalMinor)
	}
}

// Several bad fields come back together, each once, joined.
func TestComputeJoinsErrors(t *testing.T) {
	in, pl := goodInput()
	in.TaxRatePPM = -5
	in.Hub.Quantity = -1
	in.Spokes[0].Side = ""
	pl.PerCutSpokeMinor = -1
	_, err := Compute(in, pl)
	got := fieldErrors(t, err)
	var ptrs []string
	for _, fe := range got {
		ptrs = append(ptrs, fe.Pointer)
	}
	want := []string{"/tax_rate_ppm", "/hub/quantity", "/spokes/0/side", "/price_list/per_cut_spoke_minor"}
	if d := cmp.Diff(want, ptrs); d != "" {
		t.Errorf("pointers (-want +got):\n%s", d)
	}
	// The HTTP layer finds them as the one field-error type.
	var fp *field.Error
	if !errors.As(err, &fp) || fp.Pointer != "/tax_rate_ppm" {
		t.Errorf("errors.As to the interface failed on %v", err)
	}
}

// PriceList.Validate and Input.Validate alone use pointers relative to
// their own documents.
func TestValidateAlone(t *testing.T) {
	in, pl := goodInput()
	pl.BaseBuildMinor = -1
	if fe := fieldErrors(t, pl.Validate()); len(fe) != 1 || fe[0].Pointer != "/base_build_minor" {
		t.Errorf("PriceList.Validate: %v", fe)
	}
	in.Currency = "USD" // well-formed and known: only Compute sees the mismatch
	if err := in.Validate(); err != nil {
		t.Errorf("Input.Validate: %v", err)
	}
}
