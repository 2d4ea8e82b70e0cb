package quote

import (
	"strings"
	"testing"
)

// FuzzCompute varies quantities, prices, the rate, a spoke group, the
// currency and the free text around a small build. Compute must either
// refuse with field errors only, each with an RFC 6901 pointer into the input
// ("/…"), or return a quote that keeps every invariant checkQuote asserts
// (amounts exact, sums exact, the rounding rule, the 2^53 − 1 limit, JSON
// encodable). Seeds are in testdata/fuzz/FuzzCompute.
func FuzzCompute(f *testing.F) {
	f.Add(int64(1), int64(8950), int64(16), int64(95), 262, "left", int64(190000), int64(32), int64(0), int64(50), "EUR", "Rim tape")
	f.Add(int64(2), int64(MaxAmountMinor), int64(1), int64(1), 1, "right", int64(PPM), int64(0), int64(0), int64(0), "JPY", "")
	f.Add(int64(-1), int64(-1), int64(MaxQuantity+1), int64(-5), 0, "drive", int64(-1), int64(-1), int64(7), int64(-1), "eur", "\x00")
	f.Fuzz(func(t *testing.T, hubQty, hubPrice, spokeQty, spokePrice int64, length int, side string,
		rate, labourSpokes, spokesCut, perSpoke int64, currency, desc string) {
		in := Input{
			Currency:   currency,
			TaxRatePPM: rate,
			Hub:        &PartLine{Quantity: hubQty, UnitPriceMinor: hubPrice},
			Spokes:     []SpokeGroup{{Side: side, LengthMM: length, PartLine: PartLine{Quantity: spokeQty, UnitPriceMinor: spokePrice}}},
			Other:      []PartLine{{Description: desc, Quantity: 1, UnitPriceMinor: 300}},
			Labour:     Labour{Spokes: labourSpokes, SpokesCut: spokesCut},
		}
		pl := PriceList{Currency: currency, BaseBuildMinor: 2500, PerSpokeMinor: perSpoke, PerCutSpokeMinor: 120}
		q, err := Compute(in, pl)
		if err != nil {
			fes := fieldErrors(t, err)
			if len(fes) == 0 {
				t.Fatalf("empty error %v", err)
			}
			for _, fe := range fes {
				if !strings.HasPrefix(fe.Pointer, "/") || fe.Message == "" {
					t.Fatalf("field error without pointer or message: %#v", fe)
				}
			}
			return
		}
		checkQuote(t, in, pl, q)
	})
}
