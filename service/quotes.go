package service

import (
	"bytes"
	"cmp"
	"context"
	"errors"
	"fmt"
	"math"
	"slices"
	"time"

	"github.com/google/uuid"

	"wheelbench/service/field"
	"wheelbench/service/fit"
	"wheelbench/service/geometry"
	"wheelbench/service/quote"
)

// PriceList is an organisation's labour price list (quote.PriceList).
type PriceList struct {
	quote.PriceList
	Version   int64     `json:"-"`
	UpdatedAt time.Time `json:"updated_at"`
}

// ETag is the price list's entity tag.
func (p PriceList) ETag() string { return fmt.Sprintf(`"price-list.%d"`, p.Version) }

// GetPriceList reads the organisation's price list.
func (s *Service) GetPriceList(ctx context.Context, p Principal) (PriceList, error) {
	return s.store.GetPriceList(ctx, p.OrgID)
}

// PutPriceList sets the price list. The first time needs no If-Match;
// later ones need the current ETag.
func (s *Service) PutPriceList(ctx context.Context, p Principal, ifMatch string, pl quote.PriceList) (PriceList, error) {
	if pl.ValidityDays == 0 {
		pl.ValidityDays = quote.DefaultValidityDays
	}
	if err := pl.Validate(); err != nil {
		return PriceList{}, err
	}
	cur, err := s.store.GetPriceList(ctx, p.OrgID)
	switch {
	case errors.Is(err, ErrNotFound):
		cur.Version = 0
	case err != nil:
		return PriceList{}, err
	default:
		if err := checkIfMatch(ifMatch, cur.ETag(), "price list"); err != nil {
			return PriceList{}, err
		}
	}
	return s.store.PutPriceList(ctx, p.OrgID, cur.Version, pl)
}

// QuoteStatus is where a quote is.
type QuoteStatus string

// Quote statuses.
const (
	QuoteOpen       QuoteStatus = "open"
	QuoteAccepted   QuoteStatus = "accepted"
	QuoteSuperseded QuoteStatus = "superseded"
)

// StockNeed is stock an accepted quote takes from a location.
type StockNeed struct {
	PartID     uuid.UUID `json:"part_id"`
	LocationID uuid.UUID `json:"location_id"`
	LengthMM   float64   `json:"length_mm"`
	Quantity   int64     `json:"quantity"`
}

// Quote is a priced build: parts and labour lines and totals in integer
// minor units, valid until a date; accepting it orders the build.
type Quote struct {
	ID         uuid.UUID   `json:"id"`
	OrgID      uuid.UUID   `json:"-"`
	BuildID    uuid.UUID   `json:"build_id"`
	LocationID uuid.UUID   `json:"location_id"`
	Status     QuoteStatus `json:"status"`
	quote.Quote
	StockNeeds []StockNeed `json:"stock_needs"`
	ValidUntil time.Time   `json:"valid_until"`
	CreatedAt  time.Time   `json:"created_at"`
	AcceptedAt *time.Time  `json:"accepted_at,omitempty"`
}

// ErrStockShort: accepting would take more stock than a location has.
var ErrStockShort = fmt.Errorf("%w: not enough stock", ErrConflict)

// CreateQuote prices a draft or quoted build from the catalog, the price
// list and the build location's tax rate; the build becomes quoted and any
// earlier open quote of it is superseded.
func (s *Service) CreateQuote(ctx context.Context, p Principal, buildID uuid.UUID) (Quote, error) {
	b, err := s.reachableBuild(ctx, p, buildID)
	if errors.Is(err, ErrNotFound) {
		return Quote{}, field.Unprocessable("/build_id", "no such build in this organisation")
	}
	if err != nil {
		return Quote{}, err
	}
	if b.Status != BuildDraft && b.Status != BuildQuoted {
		return Quote{}, fmt.Errorf("%w: a %s build cannot be quoted", ErrConflict, b.Status)
	}
	if b.Snapshot.Compatibility.Verdict == fit.DoesNotFit {
		return Quote{}, field.Unprocessable("/build_id", "the build's parts do not fit; see its findings")
	}
	pl, err := s.store.GetPriceList(ctx, p.OrgID)
	if errors.Is(err, ErrNotFound) {
		return Quote{}, field.Unprocessable("/build_id", "set the organisation's price list (PUT /v1/price-list) before quoting")
	}
	if err != nil {
		return Quote{}, err
	}
	loc, err := s.store.GetLocation(ctx, p.OrgID, b.LocationID)
	if err != nil {
		return Quote{}, err
	}
	in, needs, err := s.quoteInput(ctx, p, b, pl.Currency)
	if err != nil {
		return Quote{}, err
	}
	in.TaxRatePPM = loc.TaxRatePPM
	q, err := quote.Compute(in, pl.PriceList)
	if err != nil {
		return Quote{}, fmt.Errorf("price the build: %w", err)
	}
	now := s.now().UTC()
	out := Quote{ID: uuid.Must(uuid.NewV7()), OrgID: p.OrgID, BuildID: b.ID, LocationID: b.LocationID, Status: QuoteOpen,
		Quote: q, StockNeeds: needs, ValidUntil: q.ValidUntil(now), CreatedAt: now}
	if err := s.store.CreateQuote(ctx, out, b.Status); err != nil {
		return Quote{}, err
	}
	return out, nil
}

// quoteInput turns a build's snapshot into quote lines and the stock the
// build will take. Inline parts are customer-supplied: no line, no stock.
func (s *Service) quoteInput(ctx context.Context, p Principal, b Build, currency string) (quote.Input, []StockNeed, error) {
	in := quote.Input{Currency: currency}
	var needs []StockNeed
	snap := b.Snapshot
	part := func(id *uuid.UUID) (*Part, error) {
		if id == nil {
			return nil, nil
		}
		pt, err := s.store.GetPart(ctx, p.OrgID, *id)
		if err != nil {
			return nil, err
		}
		if pt.Currency != currency {
			return nil, field.Unprocessable("/build_id", "part %s is priced in %s, the price list in %s", pt.SKU, pt.Currency, currency)
		}
		return &pt, nil
	}
	line := func(pt *Part, qty int64) *quote.PartLine {
		return &quote.PartLine{SKU: pt.SKU, Description: pt.Name, Quantity: qty, UnitPriceMinor: pt.PriceMinor}
	}
	need := func(pt *Part, length float64, qty int64) {
		needs = append(needs, StockNeed{PartID: pt.ID, LocationID: b.LocationID, LengthMM: length, Quantity: qty})
	}
	n := int64(snap.Resolved.SpokeCount)
	perSide := n / 2
	for _, x := range []struct {
		id  *uuid.UUID
		dst **quote.PartLine
		qty int64
	}{{snap.Parts.Hub, &in.Hub, 1}, {snap.Parts.Rim, &in.Rim, 1}, {snap.Parts.Nipple, &in.Nipples, n}} {
		pt, err := part(x.id)
		if err != nil {
			return in, nil, err
		}
		if pt != nil {
			*x.dst = line(pt, x.qty)
			need(pt, 0, x.qty)
		}
	}
	if tyre, err := part(snap.Parts.Tyre); err != nil {
		return in, nil, err
	} else if tyre != nil {
		in.Other = append(in.Other, *line(tyre, 1))
		need(tyre, 0, 1)
	}
	spoke, err := part(snap.Parts.Spoke)
	if err != nil {
		return in, nil, err
	}
	geo := snap.Compatibility.Geometry
	for _, side := range []struct {
		name string
		r    geometry.SideResult
	}{{"left", geo.Left}, {"right", geo.Right}} {
		length := side.r.LengthMM
		if side.r.StockLengthMM != nil {
			length = *side.r.StockLengthMM
		}
		if spoke != nil {
			g := quote.SpokeGroup{Side: side.name, LengthMM: int(math.Round(length)), PartLine: *line(spoke, perSide)}
			in.Spokes = append(in.Spokes, g)
			if side.r.StockLengthMM != nil {
				need(spoke, *side.r.StockLengthMM, perSide)
			}
		}
		// Spokes are cut when no stock length was chosen, or when the chosen
		// one ends past the nipple head.
		if side.r.StockLengthMM == nil || hasFinding(geo.Findings, fit.CodeSpokeProtrudesPastNipple, side.name) {
			in.Labour.SpokesCut += perSide
		}
	}
	in.Labour.Spokes = n
	for _, c := range snap.Compatibility.Changes {
		switch c.Kind {
		case "add_washers":
			in.Labour.WashersFitted += int64(c.Count)
			var wid *uuid.UUID
			switch {
			case c.PartID != "": // the catalog washer the check proposed
				if id, err := uuid.Parse(c.PartID); err == nil {
					wid = &id
				}
			case len(snap.Parts.Washers) > 0 && c.FromGiven:
				wid = &snap.Parts.Washers[0]
			}
			if wid != nil {
				w, err := part(wid)
				if err != nil {
					return in, nil, err
				}
				if in.Washers == nil {
					in.Washers = line(w, 0)
				}
				in.Washers.Quantity += int64(c.Count)
				need(w, 0, int64(c.Count))
			}
		case "drill_rim_holes":
			in.Labour.DrilledHoles += int64(c.Count)
		}
	}
	return in, mergeNeeds(needs), nil
}

// mergeNeeds adds up needs of the same part, location and length.
func mergeNeeds(ns []StockNeed) []StockNeed {
	out := []StockNeed{}
	for _, n := range ns {
		merged := false
		for i := range out {
			if out[i].PartID == n.PartID && out[i].LocationID == n.LocationID && out[i].LengthMM == n.LengthMM {
				out[i].Quantity += n.Quantity
				merged = true
			}
		}
		if !merged {
			out = append(out, n)
		}
	}
	// A fixed order (by part) keeps concurrent acceptances from deadlocking.
	slices.SortFunc(out, func(a, b StockNeed) int {
		if c := bytes.Compare(a.PartID[:], b.PartID[:]); c != 0 {
			return c
		}
		return cmp.Compare(a.LengthMM, b.LengthMM)
	})
	return out
}

// GetQuote reads one quote.
func (s *Service) GetQuote(ctx context.Context, p Principal, id uuid.UUID) (Quote, error) {
	q, err := s.store.GetQuote(ctx, p.OrgID, id)
	if err == nil && !p.Reaches(q.LocationID) {
		return Quote{}, ErrNotFound
	}
	return q, err
}

// AcceptQuote orders the quote's build and takes its stock, atomically:
// when any location is short the whole acceptance is refused (409) and
// nothing changes; stock never goes negative. Only an open quote that has
// not expired may be accepted (acceptable).
func (s *Service) AcceptQuote(ctx context.Context, p Principal, id uuid.UUID) (Quote, error) {
	if p.Bound() { // a quote's location never changes: checked before, it holds
		if _, err := s.GetQuote(ctx, p, id); err != nil {
			return Quote{}, err
		}
	}
	now := s.now().UTC()
	return s.store.AcceptQuote(ctx, p.OrgID, id, now, func(q Quote) error { return q.acceptable(now) })
}

// acceptable says whether q may be accepted at now: it is open (not
// accepted already, nor superseded by a newer quote of its build) and not
// past its validity.
func (q Quote) acceptable(now time.Time) error {
	switch {
	case q.Status == QuoteAccepted:
		return fmt.Errorf("%w: the quote is already accepted", ErrConflict)
	case q.Status != QuoteOpen:
		return fmt.Errorf("%w: the quote was superseded by a newer one", ErrConflict)
	case now.After(q.ValidUntil):
		return fmt.Errorf("%w: the quote expired on %s; ask for a new one", ErrConflict, q.ValidUntil.Format(time.DateOnly))
	}
	return nil
}

// hasFinding reports whether fs holds code for side.
func hasFinding(fs []fit.Finding, code, side string) bool {
	for _, f := range fs {
		if f.Code == code && f.Side == side {
			return true
		}
	}
	return false
}
