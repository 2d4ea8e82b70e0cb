package quote

import (
	"math"
	"math/big"
	"testing"
)

// Exponents are ISO 4217 minor units, from memory (see minorUnits).
func TestMinorUnits(t *testing.T) {
	cases := []struct {
		code string
		exp  int
		ok   bool
	}{
		{"EUR", 2, true}, // ISO 4217, from memory: 100 cent
		{"GBP", 2, true}, // ISO 4217, from memory: 100 pence
		{"USD", 2, true}, // ISO 4217, from memory: 100 cents
		{"CHF", 2, true}, // ISO 4217, from memory
		{"SEK", 2, true}, // ISO 4217, from memory
		{"JPY", 0, true}, // ISO 4217, from memory: no minor unit
		{"KWD", 3, true}, // ISO 4217, from memory: 1000 fils
		{"eur", 0, false},
		{"XYZ", 0, false},
		{"", 0, false},
	}
	for _, c := range cases {
		exp, ok := MinorUnits(c.code)
		if exp != c.exp || ok != c.ok {
			t.Errorf("MinorUnits(%q) = %d, %v; want %d, %v", c.code, exp, ok, c.exp, c.ok)
		}
	}
}

// Every entry has the ISO 4217 shape: three upper-case letters, and an
// exponent among those ISO 4217 uses (0 to 4).
func TestCurrencyTableShape(t *testing.T) {
	codes := Currencies()
	if len(codes) != len(minorUnits) {
		t.Fatalf("Currencies returned %d codes, table has %d", len(codes), len(minorUnits))
	}
	for i, c := range codes {
		if !wellFormedCode(c) {
			t.Errorf("%q is not three upper-case letters", c)
		}
		if e := minorUnits[c]; e < 0 || e > 4 {
			t.Errorf("%s exponent %d outside 0..4", c, e)
		}
		if i > 0 && codes[i-1] >= c {
			t.Errorf("Currencies not sorted at %d: %s, %s", i, codes[i-1], c)
		}
	}
}

func TestFormatMinor(t *testing.T) {
	cases := []struct {
		amount int64
		cur    string
		want   string
	}{
		{12345, "EUR", "123.45"}, // 12345 / 10^2
		{5, "EUR", "0.05"},       // 5 / 10^2: leading zeros padded
		{-5, "EUR", "-0.05"},     // sign kept in front
		{0, "EUR", "0.00"},       // exponent 2 always shows two decimals
		{100, "GBP", "1.00"},     // 100 / 10^2
		{12345, "JPY", "12345"},  // exponent 0: no decimal point
		{-7, "JPY", "-7"},        // exponent 0, negative
		{12345, "KWD", "12.345"}, // 12345 / 10^3
		{1, "KWD", "0.001"},      // 1 / 10^3
		// 2^63 − 1 = 9223372036854775807 and −2^63 = −9223372036854775808
		// (the int64 limits), two decimals cut off.
		{math.MaxInt64, "USD", "92233720368547758.07"},
		{math.MinInt64, "USD", "-92233720368547758.08"},
	}
	for _, c := range cases {
		got, err := FormatMinor(c.amount, c.cur)
		if err != nil || got != c.want {
			t.Errorf("FormatMinor(%d, %s) = %q, %v; want %q", c.amount, c.cur, got, err, c.want)
		}
	}
	if _, err := FormatMinor(1, "XYZ"); err == nil {
		t.Error("FormatMinor with an unknown currency returned no error")
	}
}

// FormatMinor against math/big.Rat's own decimal formatting of
// amount / 10^exp, for every exponent the table uses and many amounts.
func TestFormatMinorMatchesBigRat(t *testing.T) {
	amounts := []int64{0, 1, -1, 9, 10, 99, 100, 101, -999, 123456789, -123456789,
		1<<53 - 1, math.MaxInt64, math.MinInt64, math.MinInt64 + 1}
	for _, exp := range []int{0, 2, 3} {
		for _, a := range amounts {
			r := new(big.Rat).SetFrac(big.NewInt(a), new(big.Int).Exp(big.NewInt(10), big.NewInt(int64(exp)), nil))
			want := r.FloatString(exp)
			if got := formatExp(a, exp); got != want {
				t.Errorf("formatExp(%d, %d) = %q; big.Rat says %q", a, exp, got, want)
			}
		}
	}
}
