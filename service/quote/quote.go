package quote

import (
	"cmp"
	"fmt"
	"slices"
	"strconv"
	"time"

	"wheelbench/service/field"
)

// Line kinds.
const (
	KindPart   = "part"
	KindLabour = "labour"
)

// Line codes: what a line is for, stable for integrators.
const (
	CodeHub            = "hub"
	CodeRim            = "rim"
	CodeSpokes         = "spokes"
	CodeNipples        = "nipples"
	CodeWashers        = "washers"
	CodeOther          = "other"
	CodeLabourBase     = "labour_base"
	CodeLabourSpokes   = "labour_spokes"
	CodeLabourDrilling = "labour_drilling"
	CodeLabourWashers  = "labour_washers"
	CodeLabourCutting  = "labour_cutting"
)

// Line is one line of a quote. AmountMinor is exactly
// Quantity × UnitPriceMinor; Quantity is never 0.
type Line struct {
	// Kind is KindPart or KindLabour.
	Kind string `json:"kind"`
	// Code is one of the Code constants.
	Code        string `json:"code"`
	Description string `json:"description"`
	SKU         string `json:"sku,omitempty"`
	// Side and LengthMM are set on spoke lines only.
	Side           string `json:"side,omitempty"`
	LengthMM       int    `json:"length_mm,omitempty"`
	Quantity       int64  `json:"quantity"`
	UnitPriceMinor int64  `json:"unit_price_minor"`
	AmountMinor    int64  `json:"amount_minor"`
}

// Quote is the priced wheel. SubtotalMinor is the sum of the lines'
// AmountMinor, TaxMinor is SubtotalMinor × TaxRatePPM / 10^6 rounded by the
// package rule (halves away from zero), TotalMinor is SubtotalMinor +
// TaxMinor; every figure is at most MaxAmountMinor.
type Quote struct {
	Currency string `json:"currency"`
	// Lines: parts first (hub, rim, spokes left then right by ascending
	// length, nipples, washers, other parts in input order), then labour
	// (base, spokes, drilling, washers, cutting). Lines of quantity 0 are
	// left out; a line of price 0 is kept.
	Lines         []Line `json:"lines"`
	SubtotalMinor int64  `json:"subtotal_minor"`
	TaxRatePPM    int64  `json:"tax_rate_ppm"`
	TaxMinor      int64  `json:"tax_minor"`
	TotalMinor    int64  `json:"total_minor"`
	// ValidityDays is the price list's validity (its default applied).
	ValidityDays int `json:"validity_days"`
}

// ValidUntil returns the instant the quote stops being valid when it was
// issued at issued: issued plus ValidityDays calendar days, in issued's
// location. The caller supplies the clock; this package reads none.
func (q Quote) ValidUntil(issued time.Time) time.Time {
	return issued.AddDate(0, 0, q.ValidityDays)
}

// pricedLine is a line and the pointer to blame when its amount or the
// running subtotal would pass MaxAmountMinor.
type pricedLine struct {
	Line
	blame string
}

// Compute prices one wheel: it validates in and pl, builds the lines,
// multiplies, adds, and applies the tax rule. It returns *field.Error values
// (joined) and no Quote when anything is wrong: a malformed or absurd field
// (400), a currency not known or differing between in and pl (422), or an
// amount, subtotal or total past MaxAmountMinor (400, naming the price whose
// line passed the limit). Deterministic: the same arguments give the same
// Quote.
func Compute(in Input, pl PriceList) (Quote, error) {
	var v validator
	inOK := in.validate(&v)
	plOK := pl.validate(&v, "/price_list")
	if inOK && plOK && in.Currency != pl.Currency {
		v.add(field.Unprocessable("/currency", "quote currency %s differs from the price list's %s", in.Currency, pl.Currency))
	}
	if err := v.err(); err != nil {
		return Quote{}, err
	}

	lines := buildLines(in, pl)
	q := Quote{
		Currency:     in.Currency,
		Lines:        make([]Line, 0, len(lines)),
		TaxRatePPM:   in.TaxRatePPM,
		ValidityDays: pl.ValidityDays,
	}
	if q.ValidityDays == 0 {
		q.ValidityDays = DefaultValidityDays
	}
	limit := formatExp(MaxAmountMinor, minorUnits[in.Currency]) + " " + in.Currency
	for _, l := range lines {
		amount, ok := mulAmount(l.Quantity, l.UnitPriceMinor)
		if !ok {
			v.add(field.Invalid(l.blame, "%d × %d minor units is past the largest amount, %s", l.Quantity, l.UnitPriceMinor, limit))
			continue
		}
		l.AmountMinor = amount
		q.Lines = append(q.Lines, l.Line)
		if sub, ok := addAmount(q.SubtotalMinor, amount); ok {
			q.SubtotalMinor = sub
		} else if len(v.errs) == 0 {
			v.add(field.Invalid(l.blame, "this line takes the subtotal past the largest amount, %s", limit))
		}
	}
	if err := v.err(); err != nil {
		return Quote{}, err
	}
	tax, ok := taxOf(q.SubtotalMinor, q.TaxRatePPM)
	if !ok { // unreachable: rate ≤ 100 % keeps tax ≤ subtotal
		return Quote{}, field.Invalid("/tax_rate_ppm", "tax on %d minor units does not fit", q.SubtotalMinor)
	}
	q.TaxMinor = tax
	total, ok := addAmount(q.SubtotalMinor, q.TaxMinor)
	if !ok {
		return Quote{}, field.Invalid("/tax_rate_ppm", "subtotal plus tax is past the largest amount, %s", limit)
	}
	q.TotalMinor = total
	return q, nil
}

// buildLines lists every line of quantity > 0 in quote order, with default
// descriptions filled in.
func buildLines(in Input, pl PriceList) []pricedLine {
	var out []pricedLine
	part := func(ptr, code, defaultDesc string, p *PartLine) {
		if p == nil || p.Quantity == 0 {
			return
		}
		desc := p.Description
		if desc == "" {
			desc = defaultDesc
		}
		out = append(out, pricedLine{
			Line: Line{Kind: KindPart, Code: code, Description: desc, SKU: p.SKU,
				Quantity: p.Quantity, UnitPriceMinor: p.UnitPriceMinor},
			blame: ptr + "/unit_price_minor",
		})
	}
	part("/hub", CodeHub, "Hub", in.Hub)
	part("/rim", CodeRim, "Rim", in.Rim)

	order := make([]int, len(in.Spokes))
	for i := range order {
		order[i] = i
	}
	sideRank := map[string]int{SideLeft: 0, SideRight: 1}
	slices.SortFunc(order, func(a, b int) int {
		ga, gb := in.Spokes[a], in.Spokes[b]
		return cmp.Or(cmp.Compare(sideRank[ga.Side], sideRank[gb.Side]), cmp.Compare(ga.LengthMM, gb.LengthMM))
	})
	for _, i := range order {
		g := in.Spokes[i]
		n := len(out)
		part("/spokes/"+strconv.Itoa(i), CodeSpokes, fmt.Sprintf("Spokes, %s, %d mm", g.Side, g.LengthMM), &g.PartLine)
		if len(out) > n {
			out[n].Side, out[n].LengthMM = g.Side, g.LengthMM
		}
	}

	part("/nipples", CodeNipples, "Nipples", in.Nipples)
	part("/washers", CodeWashers, "Spoke washers", in.Washers)
	for i := range in.Other {
		part("/other/"+strconv.Itoa(i), CodeOther, "", &in.Other[i])
	}

	labour := func(code, desc string, count, price int64, blame string) {
		if count == 0 {
			return
		}
		out = append(out, pricedLine{
			Line:  Line{Kind: KindLabour, Code: code, Description: desc, Quantity: count, UnitPriceMinor: price},
			blame: "/price_list/" + blame,
		})
	}
	labour(CodeLabourBase, "Wheel build", 1, pl.BaseBuildMinor, "base_build_minor")
	labour(CodeLabourSpokes, "Lacing and tensioning, per spoke", in.Labour.Spokes, pl.PerSpokeMinor, "per_spoke_minor")
	labour(CodeLabourDrilling, "Drilling holes, per hole", in.Labour.DrilledHoles, pl.PerDrilledHoleMinor, "per_drilled_hole_minor")
	labour(CodeLabourWashers, "Fitting spoke washers, per washer", in.Labour.WashersFitted, pl.PerWasherMinor, "per_washer_minor")
	labour(CodeLabourCutting, "Cutting and threading spokes to length, per spoke", in.Labour.SpokesCut, pl.PerCutSpokeMinor, "per_cut_spoke_minor")
	return out
}
