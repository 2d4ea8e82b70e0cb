package quote

// DefaultValidityDays is the validity a PriceList with ValidityDays 0 gives
// its quotes. Our own default, not a trade rule.
const DefaultValidityDays = 14

// Bounds far beyond any wheel build that separate absurd input from real
// input (HTTP 400).
const (
	// MaxQuantity bounds every quantity and labour count.
	MaxQuantity int64 = 100_000
	// MaxSpokeLengthMM bounds a spoke stock length.
	MaxSpokeLengthMM = 1000
	// MaxValidityDays bounds PriceList.ValidityDays.
	MaxValidityDays = 366
	// MaxGroups bounds the number of spoke groups and of other part lines.
	MaxGroups = 100
	// MaxDescriptionRunes and MaxSKUBytes bound the free text of a line.
	MaxDescriptionRunes = 200
	MaxSKUBytes         = 64
)

// PriceList is a location's labour prices, all in minor units of Currency,
// and how long its quotes stay valid. Every price must be 0 to
// MaxAmountMinor.
type PriceList struct {
	// Currency is an ISO 4217 alphabetic code that MinorUnits knows.
	Currency string `json:"currency"`
	// BaseBuildMinor is charged once per quote: one quote is one wheel.
	BaseBuildMinor int64 `json:"base_build_minor"`
	// PerSpokeMinor is charged for every spoke laced and tensioned.
	PerSpokeMinor int64 `json:"per_spoke_minor"`
	// PerDrilledHoleMinor is charged for every rim or hub hole drilled out.
	PerDrilledHoleMinor int64 `json:"per_drilled_hole_minor"`
	// PerWasherMinor is charged for every spoke washer fitted.
	PerWasherMinor int64 `json:"per_washer_minor"`
	// PerCutSpokeMinor is charged for every spoke cut and threaded to length
	// because stock lacks the length.
	PerCutSpokeMinor int64 `json:"per_cut_spoke_minor"`
	// ValidityDays is how many days a quote stays valid, 1 to
	// MaxValidityDays; 0 means DefaultValidityDays.
	ValidityDays int `json:"validity_days"`
}

// PartLine is one part on the quote: Quantity of the same part at
// UnitPriceMinor each. Quantity is 0 to MaxQuantity (0 drops the line);
// UnitPriceMinor is 0 to MaxAmountMinor.
type PartLine struct {
	// SKU is the shop's stock-keeping code, optional, at most MaxSKUBytes.
	SKU string `json:"sku,omitempty"`
	// Description is printed on the quote, at most MaxDescriptionRunes. For
	// hub, rim, nipples and washers an empty one gets a plain default; for
	// other parts it is required.
	Description    string `json:"description,omitempty"`
	Quantity       int64  `json:"quantity"`
	UnitPriceMinor int64  `json:"unit_price_minor"`
}

// Sides of the wheel, as seen by a rider on the bike.
const (
	SideLeft  = "left"
	SideRight = "right"
)

// SpokeGroup is the spokes of one side taken from one stock length. At most
// one group per (Side, LengthMM).
type SpokeGroup struct {
	// Side is SideLeft or SideRight.
	Side string `json:"side"`
	// LengthMM is the stock length taken from the shelf, before any cutting,
	// in whole millimetres, 1 to MaxSpokeLengthMM.
	LengthMM int `json:"length_mm"`
	PartLine
}

// Labour counts the work on one wheel; each is 0 to MaxQuantity.
type Labour struct {
	// Spokes laced and tensioned.
	Spokes int64 `json:"spokes"`
	// DrilledHoles: holes drilled out to take a larger nipple or spoke.
	DrilledHoles int64 `json:"drilled_holes"`
	// WashersFitted: spoke washers fitted.
	WashersFitted int64 `json:"washers_fitted"`
	// SpokesCut: spokes cut and threaded to length; at most Spokes.
	SpokesCut int64 `json:"spokes_cut"`
}

// Input is everything one quote is computed from: the parts of one wheel
// with their prices, the labour counts, the currency and the location's tax
// rate. A nil part or an empty list means the part is not on the quote (the
// customer brings it, or the build has none).
type Input struct {
	// Currency must equal the PriceList's.
	Currency string `json:"currency"`
	// TaxRatePPM is the location's tax rate in parts per million of the
	// subtotal, 0 to 1 000 000 (19 % is 190000).
	TaxRatePPM int64        `json:"tax_rate_ppm"`
	Hub        *PartLine    `json:"hub,omitempty"`
	Rim        *PartLine    `json:"rim,omitempty"`
	Spokes     []SpokeGroup `json:"spokes,omitempty"`
	Nipples    *PartLine    `json:"nipples,omitempty"`
	Washers    *PartLine    `json:"washers,omitempty"`
	// Other parts (a tyre, rim tape, a valve…), each with a description.
	Other  []PartLine `json:"other,omitempty"`
	Labour Labour     `json:"labour"`
}
