package quote

import (
	"math"
	"math/big"
	"math/rand/v2"
	"testing"
)

// ratRoundHalfAway is the reference for the rounding rule, computed another
// way: a × b / d as an exact math/big.Rat, then |x| + 1/2 floored, sign put
// back.
func ratRoundHalfAway(a, b, d int64) *big.Int {
	r := new(big.Rat).SetFrac(new(big.Int).Mul(big.NewInt(a), big.NewInt(b)), big.NewInt(d))
	neg := r.Sign() < 0
	r.Abs(r)
	r.Add(r, big.NewRat(1, 2))
	q := new(big.Int).Quo(r.Num(), r.Denom()) // floor, both positive
	if neg {
		q.Neg(q)
	}
	return q
}

// Exact halves and their neighbours, both signs. Each want is the exact
// quotient written out, then the rule (halves away from zero).
func TestRoundingAtHalves(t *testing.T) {
	cases := []struct {
		a, b, d int64
		want    int64
	}{
		{50, 10000, PPM, 1},    // 50 × 1 % = 0.5 → 1 (half-to-even would give 0)
		{150, 10000, PPM, 2},   // 1.5 → 2
		{250, 10000, PPM, 3},   // 2.5 → 3 (half-to-even would give 2)
		{249, 10000, PPM, 2},   // 2.49 → 2
		{251, 10000, PPM, 3},   // 2.51 → 3
		{-50, 10000, PPM, -1},  // −0.5 → −1
		{-250, 10000, PPM, -3}, // −2.5 → −3 (half-to-even would give −2)
		{-249, 10000, PPM, -2}, // −2.49 → −2
		{250, -10000, PPM, -3}, // sign from either factor: −2.5 → −3
		{-250, -10000, PPM, 3}, // two negatives: 2.5 → 3
		{1, 1, 2, 1},           // 1/2 → 1
		{-1, 1, 2, -1},         // −1/2 → −1
		{1, 1, 3, 0},           // 0.333… → 0
		{2, 1, 3, 1},           // 0.666… → 1
		{0, 190000, PPM, 0},    // nothing taxed
		// 23130 × 19 % = 4394.7 → 4395
		{23130, 190000, PPM, 4395},
		// 2^53 − 1 = 9007199254740991 at 100 %: the whole amount
		{MaxAmountMinor, PPM, PPM, MaxAmountMinor},
		// 9007199254740991 × 0.5 = 4503599627370495.5 → 4503599627370496
		{MaxAmountMinor, 500000, PPM, 4503599627370496},
	}
	for _, c := range cases {
		got, ok := mulDivRoundHalfAway(c.a, c.b, c.d)
		if !ok || got != c.want {
			t.Errorf("mulDivRoundHalfAway(%d, %d, %d) = %d, %v; want %d", c.a, c.b, c.d, got, ok, c.want)
		}
		if ref := ratRoundHalfAway(c.a, c.b, c.d); ref.Cmp(big.NewInt(c.want)) != 0 {
			t.Errorf("table row (%d, %d, %d): big.Rat reference gives %v, table says %d", c.a, c.b, c.d, ref, c.want)
		}
	}
}

// Random a, b, d across the whole int64 range against the math/big.Rat
// reference: equal whenever the reference fits int64, refused otherwise.
func TestMulDivRoundMatchesBigRat(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	pick := func() int64 {
		switch rng.IntN(4) {
		case 0:
			return rng.Int64N(2000) - 1000
		case 1:
			return int64(rng.Uint64())
		case 2:
			return rng.Int64N(1<<40) - 1<<39
		default:
			return []int64{math.MinInt64, math.MaxInt64, 0, 1, -1, MaxAmountMinor}[rng.IntN(6)]
		}
	}
	for range iterations(200000) {
		a, b, d := pick(), pick(), pick()
		if d <= 0 {
			d = 1 + rng.Int64N(2*PPM)
		}
		got, ok := mulDivRoundHalfAway(a, b, d)
		ref := ratRoundHalfAway(a, b, d)
		if ref.IsInt64() {
			if !ok || got != ref.Int64() {
				t.Fatalf("mulDivRoundHalfAway(%d, %d, %d) = %d, %v; big.Rat says %v", a, b, d, got, ok, ref)
			}
		} else if ok {
			t.Fatalf("mulDivRoundHalfAway(%d, %d, %d) = %d, but the exact result %v does not fit int64", a, b, d, got, ref)
		}
	}
	if _, ok := mulDivRoundHalfAway(1, 1, 0); ok {
		t.Error("a zero divisor was accepted")
	}
}

// mulAmount and addAmount against math/big: exact when at most
// MaxAmountMinor, refused above it and for negatives.
func TestMulAddAmountMatchBig(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	limit := big.NewInt(MaxAmountMinor)
	for range iterations(100000) {
		q := rng.Int64N(1 << uint(1+rng.IntN(62)))
		p := rng.Int64N(1 << uint(1+rng.IntN(62)))
		if rng.IntN(10) == 0 {
			q = -q
		}
		exact := new(big.Int).Mul(big.NewInt(q), big.NewInt(p))
		got, ok := mulAmount(q, p)
		wantOK := q >= 0 && p >= 0 && exact.Cmp(limit) <= 0
		if ok != wantOK || (ok && got != exact.Int64()) {
			t.Fatalf("mulAmount(%d, %d) = %d, %v; big says %v", q, p, got, ok, exact)
		}
		sum := new(big.Int).Add(big.NewInt(q), big.NewInt(p))
		s, ok := addAmount(q, p)
		wantOK = q >= 0 && p >= 0 && q <= MaxAmountMinor && p <= MaxAmountMinor && sum.Cmp(limit) <= 0
		if ok != wantOK || (ok && s != sum.Int64()) {
			t.Fatalf("addAmount(%d, %d) = %d, %v; big says %v", q, p, s, ok, sum)
		}
	}
	// Edges: 2^53 − 1 is allowed, one more is not.
	if v, ok := mulAmount(MaxAmountMinor, 1); !ok || v != MaxAmountMinor {
		t.Errorf("mulAmount(max, 1) = %d, %v", v, ok)
	}
	if _, ok := mulAmount(1<<53, 1); ok {
		t.Error("mulAmount(2^53, 1) accepted")
	}
	if _, ok := mulAmount(math.MaxInt64, math.MaxInt64); ok {
		t.Error("mulAmount(MaxInt64, MaxInt64) accepted")
	}
	if _, ok := addAmount(MaxAmountMinor, 1); ok {
		t.Error("addAmount(max, 1) accepted")
	}
}

// Tax is monotone in the subtotal for every rate, and never more than the
// subtotal (rate ≤ 100 %). Checked on consecutive subtotals, where a rounding
// slip would show first, and on random pairs; the rule's reference is big.Rat.
func TestTaxMonotoneInSubtotal(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	rates := []int64{0, 1, 10000, 70000, 77000, 88750, 190000, 200000, 250000, 499999, 500000, PPM}
	for range 50 {
		rates = append(rates, rng.Int64N(PPM+1))
	}
	for _, rate := range rates {
		start := rng.Int64N(MaxAmountMinor - 5000)
		prev, _ := taxOf(start, rate)
		for s := start + 1; s < start+5000; s++ {
			tax, ok := taxOf(s, rate)
			if !ok || tax < prev || tax > s {
				t.Fatalf("rate %d ppm: tax(%d) = %d, %v after tax(%d) = %d", rate, s, tax, ok, s-1, prev)
			}
			prev = tax
		}
		for range 2000 {
			a, b := rng.Int64N(MaxAmountMinor+1), rng.Int64N(MaxAmountMinor+1)
			if a > b {
				a, b = b, a
			}
			ta, _ := taxOf(a, rate)
			tb, _ := taxOf(b, rate)
			if ta > tb {
				t.Fatalf("rate %d ppm: tax(%d) = %d > tax(%d) = %d", rate, a, ta, b, tb)
			}
		}
	}
}
