package service

import (
	"bytes"
	"context"
	"encoding/json"
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
	"wheelbench/strictjson"
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

// Part is a catalog entry with its measured dimensions: for each kind the
// JSON object the compatibility check takes in its place (a hub's is the
// check's "hub" object, and so on).
type Part struct {
	ID         uuid.UUID       `json:"id"`
	OrgID      uuid.UUID       `json:"-"`
	Kind       PartKind        `json:"kind"`
	SKU        string          `json:"sku"`
	Name       string          `json:"name"`
	PriceMinor int64           `json:"price_minor"`
	Currency   string          `json:"currency"`
	Dimensions json.RawMessage `json:"dimensions"`
	Version    int64           `json:"-"`
	CreatedAt  time.Time       `json:"created_at"`
	UpdatedAt  time.Time       `json:"updated_at"`
}

// ETag is the part's entity tag.
func (p Part) ETag() string { return ETag(p.ID, p.Version) }

// PartInput creates a part.
type PartInput struct {
	Kind       PartKind
	SKU        string
	Name       string
	PriceMinor int64
	Currency   string
	Dimensions json.RawMessage
}

// PartPatch changes a part; nil leaves a field. The kind never changes.
type PartPatch struct {
	SKU        *string
	Name       *string
	PriceMinor *int64
	Currency   *string
	Dimensions json.RawMessage
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

// decodeDimensions checks a part's dimensions against the fit check's
// shape for its kind: strict JSON, every size finite and positive.
func decodeDimensions(kind PartKind, raw json.RawMessage) (json.RawMessage, error) {
	var target any
	switch kind {
	case PartHub:
		target = &geometry.Hub{}
	case PartRim:
		target = &geometry.Rim{}
	case PartSpoke:
		target = &spoke.Spec{}
	case PartNipple:
		target = &fit.Nipple{}
	case PartWasher:
		target = &fit.Washer{}
	case PartTyre:
		target = &fit.Tyre{}
	default:
		return nil, field.Invalid("/kind", "kind must be hub, rim, spoke, nipple, washer or tyre")
	}
	if len(bytes.TrimSpace(raw)) == 0 || bytes.Equal(bytes.TrimSpace(raw), []byte("null")) {
		return nil, field.Invalid("/dimensions", "dimensions are required: the %s object the compatibility check takes", kind)
	}
	if err := strictjson.Unmarshal(raw, target); err != nil {
		return nil, field.Under("/dimensions", err)
	}
	// Every number in the object must be finite and not negative; sizes the
	// fit check needs are checked there when a build uses the part.
	var generic any
	_ = json.Unmarshal(raw, &generic)
	if ptr, ok := firstBadNumber(generic, "/dimensions"); !ok {
		return nil, field.Invalid(ptr, "must be a finite number, not negative")
	}
	out, err := json.Marshal(target)
	if err != nil {
		return nil, err
	}
	return out, nil
}

func firstBadNumber(v any, at string) (string, bool) {
	switch x := v.(type) {
	case float64:
		if x < 0 || math.IsInf(x, 0) || math.IsNaN(x) {
			return at, false
		}
	case map[string]any:
		for k, e := range x {
			if p, ok := firstBadNumber(e, at+"/"+k); !ok {
				return p, false
			}
		}
	case []any:
		for i, e := range x {
			if p, ok := firstBadNumber(e, fmt.Sprintf("%s/%d", at, i)); !ok {
				return p, false
			}
		}
	}
	return "", true
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
	dims, err := decodeDimensions(in.Kind, in.Dimensions)
	if err != nil {
		return Part{}, err
	}
	now := s.now().UTC()
	part := Part{ID: uuid.Must(uuid.NewV7()), OrgID: p.OrgID, Kind: in.Kind, SKU: in.SKU, Name: strings.TrimSpace(in.Name),
		PriceMinor: in.PriceMinor, Currency: in.Currency, Dimensions: dims, Version: 1, CreatedAt: now, UpdatedAt: now}
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
	if patch.Dimensions != nil {
		if patch.Dimensions, err = decodeDimensions(cur.Kind, patch.Dimensions); err != nil {
			return Part{}, err
		}
	}
	out, err := s.store.UpdatePart(ctx, p.OrgID, id, cur.Version, patch)
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
