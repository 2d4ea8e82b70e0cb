package quote

import (
	"fmt"
	"slices"
	"strconv"
)

// minorUnits maps an ISO 4217 alphabetic code to its minor-unit exponent:
// the number of decimal places between the major unit and the minor unit the
// amounts are counted in (2 for a currency of 100 cents, 0 for one with no
// minor unit in use, 3 for one of 1000 subunits).
//
// ISO 4217 minor units, from memory: no copy of the standard's list was at
// hand to check them against. Add a currency here only with its exponent
// from the current ISO 4217 list.
var minorUnits = map[string]int{
	// exponent 0
	"CLP": 0, "ISK": 0, "JPY": 0, "KRW": 0, "PYG": 0, "UGX": 0, "VND": 0,
	"XAF": 0, "XOF": 0,
	// exponent 2
	"AUD": 2, "BRL": 2, "CAD": 2, "CHF": 2, "CNY": 2, "CZK": 2, "DKK": 2,
	"EUR": 2, "GBP": 2, "HKD": 2, "HUF": 2, "INR": 2, "MXN": 2, "NOK": 2,
	"NZD": 2, "PLN": 2, "SEK": 2, "SGD": 2, "USD": 2, "ZAR": 2,
	// exponent 3
	"BHD": 3, "JOD": 3, "KWD": 3, "OMR": 3, "TND": 3,
}

// MinorUnits returns the ISO 4217 minor-unit exponent of an alphabetic
// currency code (EUR → 2, JPY → 0, KWD → 3) and whether the code is one this
// package knows. Codes are case-sensitive: ISO 4217 codes are upper case.
func MinorUnits(currency string) (int, bool) {
	e, ok := minorUnits[currency]
	return e, ok
}

// Currencies returns the codes MinorUnits knows, sorted.
func Currencies() []string {
	out := make([]string, 0, len(minorUnits))
	for c := range minorUnits {
		out = append(out, c)
	}
	slices.Sort(out)
	return out
}

// wellFormedCode reports whether s is three upper-case ASCII letters, the
// shape of an ISO 4217 alphabetic code.
func wellFormedCode(s string) bool {
	if len(s) != 3 {
		return false
	}
	for i := range 3 {
		if s[i] < 'A' || s[i] > 'Z' {
			return false
		}
	}
	return true
}

// FormatMinor writes an amount in minor units as a decimal string in the
// major unit, with exactly the currency's ISO 4217 number of decimals and no
// grouping or symbol: 12345 EUR → "123.45", 5 EUR → "0.05", −5 EUR → "-0.05",
// 12345 JPY → "12345", 12345 KWD → "12.345". It is exact for every int64. An
// unknown currency is an error.
func FormatMinor(amountMinor int64, currency string) (string, error) {
	exp, ok := MinorUnits(currency)
	if !ok {
		return "", fmt.Errorf("quote: unknown currency %q", currency)
	}
	return formatExp(amountMinor, exp), nil
}

// formatExp formats amount with exp decimals using only integer digits.
func formatExp(amount int64, exp int) string {
	neg := amount < 0
	// The magnitude as uint64 so that math.MinInt64 has one too.
	mag := uint64(amount)
	if neg {
		mag = -mag
	}
	digits := strconv.FormatUint(mag, 10)
	if exp > 0 {
		if len(digits) <= exp {
			digits = zeros(exp-len(digits)+1) + digits
		}
		cut := len(digits) - exp
		digits = digits[:cut] + "." + digits[cut:]
	}
	if neg {
		return "-" + digits
	}
	return digits
}

func zeros(n int) string {
	b := make([]byte, n)
	for i := range b {
		b[i] = '0'
	}
	return string(b)
}
