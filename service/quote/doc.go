// Package quote owns the money of a wheel build: the part and labour lines of
// a quote, their amounts, the subtotal, the tax and the total, all in integer
// minor units of one ISO 4217 currency, plus the ISO 4217 minor-unit exponents
// needed to show an amount as a decimal string.
//
// It is pure: no context, no I/O, no logging, deterministic; standard library
// only. It must not import the rest of wheelbench (service, store, api, the
// geometry, tension and fit packages): the caller turns a stored build and its
// location's price list into an Input and a PriceList, calls Compute, and
// stores the Quote.
//
// Arithmetic. No floating point anywhere. Every line amount is
// quantity × unit price, exact, in int64. Every amount, the subtotal, the tax
// and the total must not exceed MaxAmountMinor (2^53 − 1, the largest integer
// an IEEE 754 double — and so any JSON client — holds exactly); an input that
// would pass it is refused with a field error (HTTP 400), never wrapped.
//
// Rounding rule, the only one: tax is charged once, on the subtotal, never
// per line: tax = subtotal × tax_rate_ppm / 1 000 000, computed exactly as an
// integer fraction and rounded to the nearest minor unit, exact halves away
// from zero (0.5 → 1, 2.5 → 3, −2.5 → −3). Nothing else is ever rounded.
//
// Tax rates are in parts per million (ppm) of the subtotal, 0 to 1 000 000:
// 19 % is 190000, 8.875 % is 88750; basis points would not hold the latter.
//
// Errors. Compute returns either a Quote or *field.Error values (several joined
// with errors.Join). A field error's Pointer is an RFC 6901 JSON pointer into
// the Input as it encodes to JSON ("/spokes/1/quantity"); faults in the price
// list are reported under "/price_list" ("/price_list/per_spoke_minor").
package quote
