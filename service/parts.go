package service

import (
	"context"
	"errors"
	"fmt"
	"math"
	"regexp"
	"strings"
	"time"
	"unicode/utf8"

	"github.com/google/uuid"

	"wheelbench/service/field"
	"wheelbench/service/fit"
	"wheelbench/service/geometry"
	"wheelbench/service/spoke"
)

// PartKind is what a catalog part is.
type PartKind string

// Part kinds; each carries the dimensions the fit check takes for it.
const (
	PartHub    PartKind = "hub"
	PartRim    PartKind = "rim"
	PartSpoke  PartKind = "spoke"
	PartNipple PartKind = "nipple"
	PartWasher PartKind = "washer"
	PartTyre   PartKind = "tyre"
)

// Valid reports whether k is a known kind.
func (k PartKind) Valid() bool {
	switch k {
	case PartHub, PartRim, PartSpoke, PartNipple, PartWasher, PartTyre:
		return true
	}
	return false
}

// Part is a catalog entry with its measured dimensions: for each kind what
// the compatibility check takes in its place (see PartKind.NewDimensions).
type Part struct {
	ID         uuid.UUID `json:"id"`
	OrgID      uuid.UUID `json:"-"`
	Kind       PartKind  `json:"kind"`
	SKU        string    `json:"sku"`
	Name       string    `json:"name"`
	PriceMinor int64     `json:"price_minor"`
	Currency   string    `json:"currency"`
	// Dimensions is the value PartKind.NewDimensions makes for Kind, filled.
	Dimensions any       `json:"dimensions"`
	Version    int64     `json:"-"`
	CreatedAt  time.Time `json:"created_at"`
	UpdatedAt  time.Time `json:"updated_at"`
}

// ETag is the part's entity tag.
func (p Part) ETag() string { return ETag(p.ID, p.Version) }

// NewDimensions returns a new, empty value of what a part of kind k
// measures — the compatibility check's part: *geometry.Hub, *geometry.Rim,
// *spoke.Spec, *fit.Nipple, *fit.Washer or *fit.Tyre — or nil for an
// unknown kind. Readers of stored or sent dimensions fill it.
func (k PartKind) NewDimensions() any {
	switch k {
	case PartHub:
		return new(geometry.Hub)
	case PartRim:
		return new(geometry.Rim)
	case PartSpoke:
		return new(spoke.Spec)
	case PartNipple:
		return new(fit.Nipple)
	case PartWasher:
		return new(fit.Washer)
	case PartTyre:
		return new(fit.Tyre)
	}
	return nil
}

// holds reports whether dims is a value of what kind k measures.
func (k PartKind) holds(dims any) bool {
	switch d := dims.(type) {
	case *geometry.Hub:
		return k == PartHub && d != nil
	case *geometry.Rim:
		return k == PartRim && d != nil
	case *spoke.Spec:
		return k == PartSpoke && d != nil
	case *fit.Nipple:
		return k == PartNipple && d != nil
	case *fit.Washer:
		return k == PartWasher && d != nil
	case *fit.Tyre:
		return k == PartTyre && d != nil
	}
	return false
}

// PartInput creates a part. Dimensions is the value NewDimensions makes
// for Kind, filled.
type PartInput struct {
	Kind       PartKind
	SKU        string
	Name       string
	PriceMinor int64
	Currency   string
	Dimensions any
}

// PartPatch changes a part; nil leaves a field. The kind never changes, so
// new dimensions are read for it: Dimensions, when not nil, returns the
// value NewDimensions makes for the part's kind, filled (the HTTP layer
// decodes them from the request there).
type PartPatch struct {
	SKU        *string
	Name       *string
	PriceMinor *int64
	Currency   *string
	Dimensions func(PartKind) (any, error)
}

// PartFilter narrows a part list.
type PartFilter struct {
	Kind PartKind
	SKU  string
}

// StockLevel is the quantity of a part at a location; spokes are counted
// per length (length_mm 0 for every other kind).
type StockLevel struct {
	LocationID uuid.UUID `json:"location_id"`
	LengthMM   float64   `json:"length_mm"`
	Quantity   int64     `json:"quantity"`
}

// PartStock is a part's stock at every location.
type PartStock struct {
	PartID  uuid.UUID    `json:"part_id"`
	Levels  []StockLevel `json:"levels"`
	Version int64        `json:"-"`
}

// ETag is the stock's entity tag (a version of its own, apart from the part's).
func (s PartStock) ETag() string { return ETag(s.PartID, s.Version) + "-stock" }

var (
	currencyRE = regexp.MustCompile(`^[A-Z]{3}$`)
	skuRE      = regexp.MustCompile(`^[A-Za-z0-9][A-Za-z0-9._/-]{0,63}$`)
)

// checkDimensions refuses a part without dimensions of its kind. The sizes
// the fit rules need are checked when a build uses the part.
func checkDimensions(kind PartKind, dims any) error {
	switch {
	case !kind.Valid():
		return field.Invalid("/kind", "kind must be hub, rim, spoke, nipple, washer or tyre")
	case dims == nil:
		return field.Invalid("/dimensions", "dimensions are required: the %s object the compatibility check takes", kind)
	case !kind.holds(dims):
		return field.Invalid("/dimensions", "dimensions must be the %s object the compatibility check takes", kind)
	}
	return nil
}

func validatePartFields(sku, name *string, price *int64, currency *string) error {
	var errs []error
	if sku != nil && !skuRE.MatchString(*sku) {
		errs = append(errs, field.Invalid("/sku", "sku must be 1 to 64 letters, digits, '.', '_', '/' or '-', starting with a letter or digit"))
	}
	if name != nil && (strings.TrimSpace(*name) == "" || utf8.RuneCountInString(*name) > 200) {
		errs = append(errs, field.Invalid("/name", "name must be 1 to 200 characters"))
	}
	if price != nil && (*price < 0 || *price > 1e12) {
		errs = append(errs, field.Invalid("/price_minor", "price_minor must be from 0 to 10^12 minor units"))
	}
	if currency != nil && !currencyRE.MatchString(*currency) {
		errs = append(errs, field.Invalid("/currency", "currency must be an ISO 4217 code such as EUR"))
	}
	return errors.Join(errs...)
}

// CreatePart adds a part to the catalog.
func (s *Service) CreatePart(ctx context.Context, p Principal, in PartInput) (Part, error) {
	if err := validatePartFields(&in.SKU, &in.Name, &in.PriceMinor, &in.Currency); err != nil {
		return Part{}, err
	}
	if err := checkDimensions(in.Kind, in.Dimensions); err != nil {
		return Part{}, err
	}
	now := s.now().UTC()
	part := Part{ID: uuid.Must(uuid.NewV7()), OrgID: p.OrgID, Kind: in.Kind, SKU: in.SKU, Name: strings.TrimSpace(in.Name),
		PriceMinor: in.PriceMinor, Currency: in.Currency, Dimensions: in.Dimensions, Version: 1, CreatedAt: now, UpdatedAt: now}
	if err := s.store.CreatePart(ctx, part); err != nil {
		if errors.Is(err, ErrConflict) {
			return Part{}, field.Unprocessable("/sku", "another part already has this sku")
		}
		return Part{}, err
	}
	return part, nil
}

// GetPart reads one part.
func (s *Service) GetPart(ctx context.Context, p Principal, id uuid.UUID) (Part, error) {
	return s.store.GetPart(ctx, p.OrgID, id)
}

// ListParts lists the catalog by id.
func (s *Service) ListParts(ctx context.Context, p Principal, f PartFilter, page Page) ([]Part, error) {
	if f.Kind != "" && !f.Kind.Valid() {
		return nil, field.Invalid("query:kind", "kind must be hub, rim, spoke, nipple, washer or tyre")
	}
	return s.store.ListParts(ctx, p.OrgID, f, page)
}

// UpdatePart applies patch if ifMatch is the part's current ETag.
func (s *Service) UpdatePart(ctx context.Context, p Principal, id uuid.UUID, ifMatch string, patch PartPatch) (Part, error) {
	if err := validatePartFields(patch.SKU, patch.Name, patch.PriceMinor, patch.Currency); err != nil {
		return Part{}, err
	}
	cur, err := s.store.GetPart(ctx, p.OrgID, id)
	if err != nil {
		return Part{}, err
	}
	if err := checkIfMatch(ifMatch, cur.ETag(), "part"); err != nil {
		return Part{}, err
	}
	var dims any
	if patch.Dimensions != nil {
		if dims, err = patch.Dimensions(cur.Kind); err != nil {
			return Part{}, err
		}
		if err := checkDimensions(cur.Kind, dims); err != nil {
			return Part{}, err
		}
	}
	out, err := s.store.UpdatePart(ctx, p.OrgID, id, cur.Version, patch, dims)
	if errors.Is(err, ErrConflict) {
		return Part{}, field.Unprocessable("/sku", "another part already has this sku")
	}
	return out, err
}

// checkIfMatch enforces optimistic concurrency: missing → 428, stale → 412.
func checkIfMatch(ifMatch, current, what string) error {
	if ifMatch == "" {
		return fmt.Errorf("%w: send If-Match with the %s's ETag", ErrPreconditionRequired, what)
	}
	if ifMatch != "*" && ifMatch != current {
		return fmt.Errorf("%w: the %s has changed since it was read", ErrPreconditionFailed, what)
	}
	return nil
}

// GetPartStock reads a part's stock at every location the caller reaches.
func (s *Service) GetPartStock(ctx context.Context, p Principal, id uuid.UUID) (PartStock, error) {
	st, err := s.store.GetPartStock(ctx, p.OrgID, id)
	return reachable(p, st), err
}

// reachable is st with only the levels at locations p reaches.
func reachable(p Principal, st PartStock) PartStock {
	if !p.Bound() {
		return st
	}
	levels := make([]StockLevel, 0, len(st.Levels))
	for _, l := range st.Levels {
		if p.Reaches(l.LocationID) {
			levels = append(levels, l)
		}
	}
	st.Levels = levels
	return st
}

// maxStockQuantity bounds one stock level (absurd beyond).
const maxStockQuantity = 1_000_000_000

// PutPartStock replaces a part's stock levels if ifMatch is the stock's
// ETag: at every location, or for a key held to one location at that one
// (the others' levels stay; a level elsewhere is a location it cannot name).
func (s *Service) PutPartStock(ctx context.Context, p Principal, id uuid.UUID, ifMatch string, levels []StockLevel) (PartStock, error) {
	cur, err := s.store.GetPartStock(ctx, p.OrgID, id)
	if err != nil {
		return PartStock{}, err
	}
	part, err := s.store.GetPart(ctx, p.OrgID, id)
	if err != nil {
		return PartStock{}, err
	}
	var errs []error
	seen := map[StockLevel]bool{}
	for i, l := range levels {
		at := fmt.Sprintf("/levels/%d", i)
		if l.Quantity < 0 || l.Quantity > maxStockQuantity {
			errs = append(errs, field.Invalid(at+"/quantity", "quantity must be from 0 to %d", maxStockQuantity))
		}
		if part.Kind == PartSpoke {
			if !(l.LengthMM > 0 && l.LengthMM <= 1000) || math.Abs(l.LengthMM*10-math.Round(l.LengthMM*10)) > 1e-9 {
				errs = append(errs, field.Invalid(at+"/length_mm", "a spoke's stock needs length_mm, above 0 and at most 1000, in steps of 0.1 mm"))
			}
		} else if l.LengthMM != 0 {
			errs = append(errs, field.Invalid(at+"/length_mm", "only spokes are stocked by length"))
		}
		key := StockLevel{LocationID: l.LocationID, LengthMM: l.LengthMM}
		if seen[key] {
			errs = append(errs, field.Invalid(at, "the same location and length appear twice"))
		}
		seen[key] = true
		if !p.Reaches(l.LocationID) {
			errs = append(errs, field.Unprocessable(at+"/location_id", "no such location in this organisation"))
		} else if _, err := s.store.GetLocation(ctx, p.OrgID, l.LocationID); errors.Is(err, ErrNotFound) {
			errs = append(errs, field.Unprocessable(at+"/location_id", "no such location in this organisation"))
		} else if err != nil {
			return PartStock{}, err
		}
	}
	if err := errors.Join(errs...); err != nil {
		return PartStock{}, err
	}
	if err := checkIfMatch(ifMatch, cur.ETag(), "stock"); err != nil {
		return PartStock{}, err
	}
	st, err := s.store.PutPartStock(ctx, p.OrgID, id, cur.Version, levels, p.LocationID)
	return reachable(p, st), err
}
