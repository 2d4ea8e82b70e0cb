package service

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"strings"
	"time"
	"unicode/utf8"

	"github.com/google/uuid"

	"wheelbench/service/field"
)

// CreateOrganisation creates a tenant and its first admin key.
func (s *Service) CreateOrganisation(ctx context.Context, name string) (Organisation, CreatedKey, error) {
	name = strings.TrimSpace(name)
	if name == "" || utf8.RuneCountInString(name) > 200 {
		return Organisation{}, CreatedKey{}, field.Invalid("/name", "name must be 1 to 200 characters")
	}
	id, err := uuid.NewV7()
	if err != nil {
		return Organisation{}, CreatedKey{}, err
	}
	o := Organisation{ID: id, Name: name, CreatedAt: s.now().UTC()}
	if err := s.EnsureOrganisation(ctx, o); err != nil {
		return Organisation{}, CreatedKey{}, err
	}
	k, err := s.CreateAPIKey(ctx, o.ID, NewKeyInput{Name: "first admin key", Role: RoleAdmin})
	if err != nil {
		return Organisation{}, CreatedKey{}, err
	}
	return o, k, nil
}

// EnsureOrganisation creates o unless an organisation with its id exists.
func (s *Service) EnsureOrganisation(ctx context.Context, o Organisation) error {
	if _, err := s.store.GetOrganisation(ctx, o.ID); err == nil {
		return nil
	} else if !errors.Is(err, ErrNotFound) {
		return err
	}
	if o.CreatedAt.IsZero() {
		o.CreatedAt = s.now().UTC()
	}
	if err := s.store.CreateOrganisation(ctx, o); err != nil && !errors.Is(err, ErrConflict) {
		return fmt.Errorf("create organisation: %w", err)
	}
	return nil
}

// Me describes the caller's organisation, location and role.
type Me struct {
	Organisation Organisation
	Location     *Location
	Principal    Principal
}

// WhoAmI returns the caller's identity.
func (s *Service) WhoAmI(ctx context.Context, p Principal) (Me, error) {
	o, err := s.store.GetOrganisation(ctx, p.OrgID)
	if err != nil {
		return Me{}, err
	}
	me := Me{Organisation: o, Principal: p}
	if p.LocationID != nil {
		l, err := s.store.GetLocation(ctx, p.OrgID, *p.LocationID)
		if err != nil {
			return Me{}, err
		}
		me.Location = &l
	}
	return me, nil
}

// LocationInput is what creating a location takes.
type LocationInput struct {
	ID         uuid.UUID `json:"-"` // optional: zero means a new id
	Name       string    `json:"name"`
	Code       string    `json:"code"`
	Timezone   string    `json:"timezone"`
	Address    string    `json:"address"`
	TaxRatePPM int64     `json:"tax_rate_ppm"`
}

func validateLocationFields(name, code, tz, address *string, taxPPM *int64) error {
	var errs []error
	if taxPPM != nil && (*taxPPM < 0 || *taxPPM > 1_000_000) {
		errs = append(errs, field.Invalid("/tax_rate_ppm", "tax_rate_ppm must be from 0 to 1000000 (parts per million)"))
	}
	if name != nil {
		if n := strings.TrimSpace(*name); n == "" || utf8.RuneCountInString(n) > 200 {
			errs = append(errs, field.Invalid("/name", "name must be 1 to 200 characters"))
		}
	}
	if code != nil && utf8.RuneCountInString(*code) > 32 {
		errs = append(errs, field.Invalid("/code", "code must be at most 32 characters"))
	}
	if tz != nil && *tz != "" {
		if _, err := time.LoadLocation(*tz); err != nil || *tz == "Local" {
			errs = append(errs, field.Invalid("/timezone", "timezone must be an IANA time zone name (Area/Location, Etc/GMT-2 or UTC)"))
		}
	}
	if address != nil && utf8.RuneCountInString(*address) > 1000 {
		errs = append(errs, field.Invalid("/address", "address must be at most 1000 characters"))
	}
	return errors.Join(errs...)
}

// CreateLocation adds a location to the caller's organisation.
func (s *Service) CreateLocation(ctx context.Context, p Principal, in LocationInput) (Location, error) {
	if err := validateLocationFields(&in.Name, &in.Code, &in.Timezone, &in.Address, &in.TaxRatePPM); err != nil {
		return Location{}, err
	}
	id := in.ID
	if id == uuid.Nil {
		var err error
		if id, err = uuid.NewV7(); err != nil {
			return Location{}, err
		}
	}
	if in.Timezone == "" {
		in.Timezone = "UTC"
	}
	now := s.now().UTC()
	l := Location{ID: id, OrgID: p.OrgID, Name: strings.TrimSpace(in.Name), Code: in.Code,
		Timezone: in.Timezone, Address: in.Address, TaxRatePPM: in.TaxRatePPM, Version: 1, CreatedAt: now, UpdatedAt: now}
	if err := s.store.CreateLocation(ctx, l); err != nil {
		return Location{}, fmt.Errorf("create location: %w", err)
	}
	return l, nil
}

// GetLocation reads one of the caller's locations.
func (s *Service) GetLocation(ctx context.Context, p Principal, id uuid.UUID) (Location, error) {
	if !p.Reaches(id) {
		return Location{}, ErrNotFound
	}
	return s.store.GetLocation(ctx, p.OrgID, id)
}

// ListLocations lists the caller's locations in creation order: a key held
// to one location sees that one.
func (s *Service) ListLocations(ctx context.Context, p Principal, page Page) ([]Location, error) {
	if p.Bound() {
		if bytes.Compare(p.LocationID[:], page.After[:]) <= 0 {
			return nil, nil
		}
		l, err := s.store.GetLocation(ctx, p.OrgID, *p.LocationID)
		if err != nil {
			return nil, err
		}
		return []Location{l}, nil
	}
	return s.store.ListLocations(ctx, p.OrgID, page)
}

// UpdateLocation applies patch if ifMatch is the location's current ETag.
func (s *Service) UpdateLocation(ctx context.Context, p Principal, id uuid.UUID, ifMatch string, patch LocationPatch) (Location, error) {
	defer s.locations.forgetOrganisation(p.OrgID)
	if !p.Reaches(id) {
		return Location{}, ErrNotFound
	}
	if err := validateLocationFields(patch.Name, patch.Code, patch.Timezone, patch.Address, patch.TaxRatePPM); err != nil {
		return Location{}, err
	}
	cur, err := s.store.GetLocation(ctx, p.OrgID, id)
	if err != nil {
		return Location{}, err
	}
	if ifMatch == "" {
		return Location{}, fmt.Errorf("%w: send If-Match with the location's ETag", ErrPreconditionRequired)
	}
	if ifMatch != "*" && ifMatch != cur.ETag() {
		return Location{}, fmt.Errorf("%w: the location has changed since it was read", ErrPreconditionFailed)
	}
	if patch.Name != nil {
		n := strings.TrimSpace(*patch.Name)
		patch.Name = &n
	}
	return s.store.UpdateLocation(ctx, p.OrgID, id, cur.Version, patch)
}

// Ready reports whether the database answers.
func (s *Service) Ready(ctx context.Context) error {
	return s.store.Ping(ctx)
}
