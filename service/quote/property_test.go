package quote

import (
	"encoding/json"
	"math/big"
	"math/rand/v2"
	"testing"

	"github.com/google/go-cmp/cmp"
)

var partCodes = map[string]bool{CodeHub: true, CodeRim: true, CodeSpokes: true, CodeNipples: true, CodeWashers: true, CodeOther: true}
var labourCodes = map[string]bool{CodeLabourBase: true, CodeLabourSpokes: true, CodeLabourDrilling: true, CodeLabourWashers: true, CodeLabourCutting: true}

// refTotals recomputes a quote's figures another way, in math/big, from the
// input alone: every (quantity, unit price) pair of quantity > 0, the exact
// subtotal, the tax by the big.Rat reference of the rounding rule, and the
// total. fits is false when any figure passes MaxAmountMinor.
func refTotals(in Input, pl PriceList) (lines int, subtotal, tax, total *big.Int, fits bool) {
	limit := big.NewInt(MaxAmountMinor)
	fits = true
	subtotal = new(big.Int)
	add := func(q, p int64) {
		if q == 0 {
			return
		}
		lines++
		a := new(big.Int).Mul(big.NewInt(q), big.NewInt(p))
		if a.Cmp(limit) > 0 {
			fits = false
		}
		subtotal.Add(subtotal, a)
	}
	for _, p := range []*PartLine{in.Hub, in.Rim, in.Nipples, in.Washers} {
		if p != nil {
			add(p.Quantity, p.UnitPriceMinor)
		}
	}
	for _, g := range in.Spokes {
		add(g.Quantity, g.UnitPriceMinor)
	}
	for _, p := range in.Other {
		add(p.Quantity, p.UnitPriceMinor)
	}
	add(1, pl.BaseBuildMinor)
	add(in.Labour.Spokes, pl.PerSpokeMinor)
	add(in.Labour.DrilledHoles, pl.PerDrilledHoleMinor)
	add(in.Labour.WashersFitted, pl.PerWasherMinor)
	add(in.Labour.SpokesCut, pl.PerCutSpokeMinor)
	if subtotal.Cmp(limit) > 0 {
		fits = false
		return lines, subtotal, nil, nil, fits
	}
	tax = ratRoundHalfAway(subtotal.Int64(), in.TaxRatePPM, PPM)
	total = new(big.Int).Add(subtotal, tax)
	if total.Cmp(limit) > 0 {
		fits = false
	}
	return lines, subtotal, tax, total, fits
}

// checkQuote asserts every invariant of a Quote computed from in and pl.
func checkQuote(t testing.TB, in Input, pl PriceList, q Quote) {
	t.Helper()
	if _, err := json.Marshal(q); err != nil {
		t.Fatalf("quote does not encode: %v", err)
	}
	if q.Currency != in.Currency || q.TaxRatePPM != in.TaxRatePPM {
		t.Fatalf("currency/rate %s/%d, input %s/%d", q.Currency, q.TaxRatePPM, in.Currency, in.TaxRatePPM)
	}
	limit := big.NewInt(MaxAmountMinor)
	sum := new(big.Int)
	for i, l := range q.Lines {
		// every amount = quantity × unit price, exactly (math/big)
		exact := new(big.Int).Mul(big.NewInt(l.Quantity), big.NewInt(l.UnitPriceMinor))
		if l.Quantity <= 0 || l.UnitPriceMinor < 0 || exact.Cmp(big.NewInt(l.AmountMinor)) != 0 || exact.Cmp(limit) > 0 {
			t.Fatalf("line %d %+v: amount is not quantity × unit price (%v) within the limit", i, l, exact)
		}
		if (l.Kind == KindPart) != partCodes[l.Code] || (l.Kind == KindLabour) != labourCodes[l.Code] {
			t.Fatalf("line %d: kind %q and code %q disagree", i, l.Kind, l.Code)
		}
		if l.Description == "" {
			t.Fatalf("line %d has no description", i)
		}
		sum.Add(sum, exact)
	}
	// subtotal = Σ amounts
	if sum.Cmp(big.NewInt(q.SubtotalMinor)) != 0 {
		t.Fatalf("subtotal %d, Σ amounts %v", q.SubtotalMinor, sum)
	}
	// total = subtotal + tax, 0 ≤ tax ≤ subtotal (rate ≤ 100 %)
	if q.TotalMinor != q.SubtotalMinor+q.TaxMinor || q.TaxMinor < 0 || q.TaxMinor > q.SubtotalMinor || q.TotalMinor > MaxAmountMinor {
		t.Fatalf("subtotal %d, tax %d, total %d", q.SubtotalMinor, q.TaxMinor, q.TotalMinor)
	}
	// every figure against the independent math/big recomputation
	n, sub, tax, total, fits := refTotals(in, pl)
	if !fits || n != len(q.Lines) || sub.Cmp(big.NewInt(q.SubtotalMinor)) != 0 ||
		tax.Cmp(big.NewInt(q.TaxMinor)) != 0 || total.Cmp(big.NewInt(q.TotalMinor)) != 0 {
		t.Fatalf("quote has %d lines, %d + %d = %d; math/big says %d lines, %v + %v = %v (fits %v)",
			len(q.Lines), q.SubtotalMinor, q.TaxMinor, q.TotalMinor, n, sub, tax, total, fits)
	}
	wantDays := pl.ValidityDays
	if wantDays == 0 {
		wantDays = DefaultValidityDays
	}
	if q.ValidityDays != wantDays {
		t.Fatalf("validity %d, want %d", q.ValidityDays, wantDays)
	}
}

// randomCase draws a valid-looking input and price list: small, shop-like
// figures most of the time, huge ones sometimes so that the limit is hit.
func randomCase(rng *rand.Rand) (Input, PriceList) {
	amount := func() int64 {
		switch rng.IntN(6) {
		case 0:
			return 0
		case 1:
			return rng.Int64N(MaxAmountMinor + 1)
		case 2:
			return rng.Int64N(1 << 40)
		default:
			return rng.Int64N(100000)
		}
	}
	qty := func() int64 {
		switch rng.IntN(6) {
		case 0:
			return 0
		case 1:
			return rng.Int64N(MaxQuantity + 1)
		default:
			return rng.Int64N(80)
		}
	}
	part := func() *PartLine {
		if rng.IntN(4) == 0 {
			return nil
		}
		return &PartLine{Quantity: qty(), UnitPriceMinor: amount()}
	}
	codes := Currencies()
	cur := codes[rng.IntN(len(codes))]
	in := Input{
		Currency:   cur,
		TaxRatePPM: rng.Int64N(PPM + 1),
		Hub:        part(), Rim: part(), Nipples: part(), Washers: part(),
	}
	lengths := rng.Perm(MaxSpokeLengthMM)[:rng.IntN(5)]
	for _, l := range lengths {
		side := SideLeft
		if rng.IntN(2) == 0 {
			side = SideRight
		}
		in.Spokes = append(in.Spokes, SpokeGroup{Side: side, LengthMM: l + 1, PartLine: *part0(part())})
	}
	for range rng.IntN(3) {
		p := *part0(part())
		p.Description = "Other part"
		in.Other = append(in.Other, p)
	}
	in.Labour = Labour{Spokes: qty(), DrilledHoles: qty(), WashersFitted: qty()}
	in.Labour.SpokesCut = rng.Int64N(in.Labour.Spokes + 1)
	pl := PriceList{Currency: cur, BaseBuildMinor: amount(), PerSpokeMinor: amount(),
		PerDrilledHoleMinor: amount(), PerWasherMinor: amount(), PerCutSpokeMinor: amount(),
		ValidityDays: rng.IntN(MaxValidityDays + 1)}
	return in, pl
}

// iterations is n, or a tenth of it under -short.
func iterations(n int) int {
	if testing.Short() {
		return n / 10
	}
	return n
}

func part0(p *PartLine) *PartLine {
	if p == nil {
		return &PartLine{}
	}
	return p
}

// Compute refuses exactly the inputs whose exact (math/big) figures pass
// MaxAmountMinor, and every quote it returns keeps every invariant.
func TestComputeProperties(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	var ok, refused int
	for range iterations(20000) {
		in, pl := randomCase(rng)
		q, err := Compute(in, pl)
		_, _, _, _, fits := refTotals(in, pl)
		if err != nil {
			for _, fe := range fieldErrors(t, err) {
				if fe.Unprocessable {
					t.Fatalf("overflow reported as 422: %v", fe)
				}
			}
			if fits {
				t.Fatalf("refused %+v / %+v, but math/big finds every figure within the limit: %v", in, pl, err)
			}
			refused++
			continue
		}
		if !fits {
			t.Fatalf("accepted %+v / %+v although math/big finds a figure past the limit", in, pl)
		}
		checkQuote(t, in, pl, q)
		ok++
	}
	t.Logf("%d quotes checked, %d refused past the limit", ok, refused)
	// Both paths must have been exercised for the test to mean anything.
	if ok < iterations(20000)/20 || refused < iterations(20000)/20 {
		t.Fatalf("only %d quotes and %d refusals", ok, refused)
	}
}

// The order of the spoke groups in the input does not change the quote.
func TestComputeSpokeOrderDoesNotMatter(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 10))
	for range 2000 {
		in, pl := randomCase(rng)
		q1, err1 := Compute(in, pl)
		rng.Shuffle(len(in.Spokes), func(i, j int) { in.Spokes[i], in.Spokes[j] = in.Spokes[j], in.Spokes[i] })
		q2, err2 := Compute(in, pl)
		if (err1 == nil) != (err2 == nil) {
			t.Fatalf("shuffling spokes changed acceptance: %v / %v", err1, err2)
		}
		if d := cmp.Diff(q1, q2); d != "" {
			t.Fatalf("shuffling spokes changed the quote:\n%s", d)
		}
	}
}

// Raising one price by one minor unit raises the subtotal by that line's
// quantity and never lowers the tax or the total: tax is monotone in the
// subtotal through Compute.
func TestComputeMonotoneInPrice(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	checked := 0
	for range iterations(20000) {
		in, pl := randomCase(rng)
		q1, err := Compute(in, pl)
		if err != nil {
			continue
		}
		var lines []*PartLine
		for _, p := range []*PartLine{in.Hub, in.Rim, in.Nipples, in.Washers} {
			if p != nil {
				lines = append(lines, p)
			}
		}
		for i := range in.Spokes {
			lines = append(lines, &in.Spokes[i].PartLine)
		}
		if len(lines) == 0 {
			continue
		}
		p := lines[rng.IntN(len(lines))]
		p.UnitPriceMinor++
		q2, err := Compute(in, pl)
		if err != nil {
			continue // the bump passed the limit
		}
		checked++
		if q2.SubtotalMinor != q1.SubtotalMinor+p.Quantity || q2.TaxMinor < q1.TaxMinor || q2.TotalMinor < q1.TotalMinor {
			t.Fatalf("price +1 on quantity %d: subtotal %d → %d, tax %d → %d, total %d → %d",
				p.Quantity, q1.SubtotalMinor, q2.SubtotalMinor, q1.TaxMinor, q2.TaxMinor, q1.TotalMinor, q2.TotalMinor)
		}
	}
	t.Logf("%d price bumps checked", checked)
	if checked < iterations(20000)/20 {
		t.Fatalf("only %d cases checked", checked)
	}
}

// The same arguments give the same quote, and Compute does not change its
// input.
func TestComputeDeterministic(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	for range 500 {
		in, pl := randomCase(rng)
		before, _ := json.Marshal(in)
		q1, e1 := Compute(in, pl)
		q2, e2 := Compute(in, pl)
		after, _ := json.Marshal(in)
		if d := cmp.Diff(q1, q2); d != "" || (e1 == nil) != (e2 == nil) {
			t.Fatalf("two runs differ:\n%s", d)
		}
		if string(before) != string(after) {
			t.Fatalf("Compute changed its input:\n%s\n%s", before, after)
		}
	}
}
