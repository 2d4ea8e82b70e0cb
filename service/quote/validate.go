package quote

import (
	"errors"
	"strconv"
	"unicode"
	"unicode/utf8"

	"wheelbench/service/field"
)

// Bad fields are *field.Error values. A Pointer is an RFC 6901 JSON pointer
// into the Input as it encodes to JSON ("/spokes/1/quantity"), or into the
// PriceList under "/price_list" when Compute reports it: 400 for malformed
// or absurd values (negative, out of range, not a currency code, an amount
// past MaxAmountMinor), 422 for well-formed values that cannot be quoted
// (an unknown currency, currencies that differ). Several come back joined
// with errors.Join.

// validator collects field errors.
type validator struct{ errs []error }

func (v *validator) add(e *field.Error) { v.errs = append(v.errs, e) }

func (v *validator) err() error {
	switch len(v.errs) {
	case 0:
		return nil
	case 1:
		return v.errs[0]
	}
	return errors.Join(v.errs...)
}

// currency checks an ISO 4217 code: shape (400), then known (422).
func (v *validator) currency(pointer, c string) bool {
	if !wellFormedCode(c) {
		v.add(field.Invalid(pointer, "%q is not an ISO 4217 code (three upper-case letters)", c))
		return false
	}
	if _, ok := MinorUnits(c); !ok {
		v.add(field.Unprocessable(pointer, "currency %s is not one this service quotes in (one of %v)", c, Currencies()))
		return false
	}
	return true
}

func (v *validator) price(pointer string, p int64) {
	switch {
	case p < 0:
		v.add(field.Invalid(pointer, "must not be negative (got %d)", p))
	case p > MaxAmountMinor:
		v.add(field.Invalid(pointer, "%d is past the largest amount, %d minor units", p, MaxAmountMinor))
	}
}

func (v *validator) quantity(pointer string, q int64) {
	switch {
	case q < 0:
		v.add(field.Invalid(pointer, "must not be negative (got %d)", q))
	case q > MaxQuantity:
		v.add(field.Invalid(pointer, "%d is not a plausible quantity (at most %d)", q, MaxQuantity))
	}
}

// text checks free text: valid UTF-8, no control characters, bounded.
func (v *validator) text(pointer, s string, maxRunes, maxBytes int) {
	switch {
	case !utf8.ValidString(s):
		v.add(field.Invalid(pointer, "is not valid UTF-8"))
	case maxRunes > 0 && utf8.RuneCountInString(s) > maxRunes:
		v.add(field.Invalid(pointer, "is longer than %d characters", maxRunes))
	case maxBytes > 0 && len(s) > maxBytes:
		v.add(field.Invalid(pointer, "is longer than %d bytes", maxBytes))
	default:
		for _, r := range s {
			if unicode.IsControl(r) {
				v.add(field.Invalid(pointer, "must not contain control characters"))
				return
			}
		}
	}
}

func (v *validator) part(pointer string, p PartLine, needDescription bool) {
	v.text(pointer+"/sku", p.SKU, 0, MaxSKUBytes)
	if needDescription && p.Description == "" {
		v.add(field.Invalid(pointer+"/description", "is required"))
	}
	v.text(pointer+"/description", p.Description, MaxDescriptionRunes, 0)
	v.quantity(pointer+"/quantity", p.Quantity)
	v.price(pointer+"/unit_price_minor", p.UnitPriceMinor)
}

// Validate checks every field of a price list and returns nil or its
// field errors (joined), with pointers relative to the PriceList
// ("/per_spoke_minor").
func (pl PriceList) Validate() error {
	var v validator
	pl.validate(&v, "")
	return v.err()
}

func (pl PriceList) validate(v *validator, prefix string) bool {
	n := len(v.errs)
	v.currency(prefix+"/currency", pl.Currency)
	v.price(prefix+"/base_build_minor", pl.BaseBuildMinor)
	v.price(prefix+"/per_spoke_minor", pl.PerSpokeMinor)
	v.price(prefix+"/per_drilled_hole_minor", pl.PerDrilledHoleMinor)
	v.price(prefix+"/per_washer_minor", pl.PerWasherMinor)
	v.price(prefix+"/per_cut_spoke_minor", pl.PerCutSpokeMinor)
	if pl.ValidityDays < 0 || pl.ValidityDays > MaxValidityDays {
		v.add(field.Invalid(prefix+"/validity_days", "must be 0 (the default, %d) or 1 to %d (got %d)", DefaultValidityDays, MaxValidityDays, pl.ValidityDays))
	}
	return len(v.errs) == n
}

// Validate checks every field of the input and returns nil or its
// field errors (joined). Compute calls it; it does not see the price list, so
// the currency match and the amounts are checked by Compute alone.
func (in Input) Validate() error {
	var v validator
	in.validate(&v)
	return v.err()
}

func (in Input) validate(v *validator) bool {
	n := len(v.errs)
	v.currency("/currency", in.Currency)
	if in.TaxRatePPM < 0 || in.TaxRatePPM > PPM {
		v.add(field.Invalid("/tax_rate_ppm", "must be 0 to %d parts per million (got %d)", PPM, in.TaxRatePPM))
	}
	for _, p := range []struct {
		ptr  string
		line *PartLine
	}{{"/hub", in.Hub}, {"/rim", in.Rim}, {"/nipples", in.Nipples}, {"/washers", in.Washers}} {
		if p.line != nil {
			v.part(p.ptr, *p.line, false)
		}
	}
	if len(in.Spokes) > MaxGroups {
		v.add(field.Invalid("/spokes", "%d spoke groups is not plausible (at most %d)", len(in.Spokes), MaxGroups))
	} else {
		type key struct {
			side   string
			length int
		}
		seen := map[key]int{}
		for i, g := range in.Spokes {
			ptr := "/spokes/" + strconv.Itoa(i)
			okSide := g.Side == SideLeft || g.Side == SideRight
			if !okSide {
				v.add(field.Invalid(ptr+"/side", "must be %q or %q (got %q)", SideLeft, SideRight, g.Side))
			}
			okLen := g.LengthMM >= 1 && g.LengthMM <= MaxSpokeLengthMM
			if !okLen {
				v.add(field.Invalid(ptr+"/length_mm", "must be 1 to %d mm (got %d)", MaxSpokeLengthMM, g.LengthMM))
			}
			if okSide && okLen {
				k := key{g.Side, g.LengthMM}
				if j, dup := seen[k]; dup {
					v.add(field.Invalid(ptr, "a second group of %s %d mm spokes (the first is /spokes/%d): put them in one group", g.Side, g.LengthMM, j))
				} else {
					seen[k] = i
				}
			}
			v.part(ptr, g.PartLine, false)
		}
	}
	if len(in.Other) > MaxGroups {
		v.add(field.Invalid("/other", "%d other lines is not plausible (at most %d)", len(in.Other), MaxGroups))
	} else {
		for i, p := range in.Other {
			v.part("/other/"+strconv.Itoa(i), p, true)
		}
	}
	l := in.Labour
	v.quantity("/labour/spokes", l.Spokes)
	v.quantity("/labour/drilled_holes", l.DrilledHoles)
	v.quantity("/labour/washers_fitted", l.WashersFitted)
	v.quantity("/labour/spokes_cut", l.SpokesCut)
	if l.SpokesCut > l.Spokes && l.Spokes >= 0 && l.SpokesCut <= MaxQuantity {
		v.add(field.Unprocessable("/labour/spokes_cut", "%d spokes cut but only %d laced", l.SpokesCut, l.Spokes))
	}
	return len(v.errs) == n
}
