package quote

import (
	"math"
	"math/bits"
)

// MaxAmountMinor is the largest amount, in minor units, that a line, the
// subtotal, the tax or the total may reach: 2^53 − 1, the largest integer an
// IEEE 754 double holds exactly, so that every JSON client reads the figures
// unchanged. Inputs that would pass it are refused (HTTP 400).
const MaxAmountMinor int64 = 1<<53 - 1

// PPM is the denominator of a tax rate: a rate of r ppm is r / 1 000 000.
const PPM int64 = 1_000_000

// mulAmount returns q × p when q and p are non-negative and the product is
// at most MaxAmountMinor; ok is false otherwise. Exact: the full 128-bit
// product is formed before the comparison.
func mulAmount(q, p int64) (int64, bool) {
	if q < 0 || p < 0 {
		return 0, false
	}
	hi, lo := bits.Mul64(uint64(q), uint64(p))
	if hi != 0 || lo > uint64(MaxAmountMinor) {
		return 0, false
	}
	return int64(lo), true
}

// addAmount returns a + b for non-negative a and b when the sum is at most
// MaxAmountMinor. Both are at most 2^53 − 1, so a + b cannot wrap int64.
func addAmount(a, b int64) (int64, bool) {
	if a < 0 || b < 0 || a > MaxAmountMinor || b > MaxAmountMinor {
		return 0, false
	}
	s := a + b
	return s, s <= MaxAmountMinor
}

// mulDivRoundHalfAway returns a × b / d rounded to the nearest integer, exact
// halves away from zero (the package's one rounding rule), for d > 0 and any
// signs of a and b. ok is false when d ≤ 0 or the result does not fit int64.
// The product is formed in 128 bits, so nothing is lost before the division.
func mulDivRoundHalfAway(a, b, d int64) (int64, bool) {
	if d <= 0 {
		return 0, false
	}
	neg := (a < 0) != (b < 0)
	ua, ub := magnitude(a), magnitude(b)
	hi, lo := bits.Mul64(ua, ub)
	ud := uint64(d)
	if hi >= ud {
		return 0, false // the quotient would need more than 64 bits
	}
	q, r := bits.Div64(hi, lo, ud)
	// Round up the magnitude when the remainder is at least half of d:
	// r ≥ d − r is 2r ≥ d without overflowing.
	if r >= ud-r {
		if q == math.MaxUint64 {
			return 0, false
		}
		q++
	}
	if neg {
		if q > 1<<63 {
			return 0, false
		}
		return int64(-q), true // −2^63 wraps to itself, which is right
	}
	if q > math.MaxInt64 {
		return 0, false
	}
	return int64(q), true
}

// magnitude is |x| as uint64, defined for math.MinInt64 too.
func magnitude(x int64) uint64 {
	if x < 0 {
		return -uint64(x)
	}
	return uint64(x)
}

// taxOf applies the rounding rule to a subtotal: subtotal × ratePPM / 10^6,
// exact halves away from zero. For 0 ≤ subtotal ≤ MaxAmountMinor and
// 0 ≤ ratePPM ≤ PPM it always fits and never exceeds the subtotal.
func taxOf(subtotal, ratePPM int64) (int64, bool) {
	return mulDivRoundHalfAway(subtotal, ratePPM, PPM)
}
