// Package demo is the invented demo shop: three locations of a
// wheel-building co-operative in a made-up town, their tensiometers with an
// invented maker table, a catalog with stock, a price list and three builds.
// Every name, dimension and price in it is fictional.
//
// `wheelbench demo` loads it into a database; tests load it through the
// same Load to check what the service makes of it. It uses the service's
// use cases only (no SQL), and nothing but cmd and tests import it.
package demo

import (
	"context"
	"errors"
	"fmt"

	"github.com/google/uuid"

	"wheelbench/service"
)

// Its ids are derived from fixed names so that loading it twice changes
// nothing.
var namespace = uuid.MustParse("6f1d3c52-4b8e-5a7d-9c0e-2f4a6b8d0e1c")

func demoID(name string) uuid.UUID { return uuid.NewSHA1(namespace, []byte(name)) }

// OrgID is the demo organisation's fixed id.
var OrgID = demoID("organisation")

// Locations are the demo shop's three locations.
var Locations = []service.LocationInput{
	{ID: demoID("location/mill"), Name: "Wrenhollow Wheelworks — Mill Lane", Code: "MILL", Timezone: "UTC", TaxRatePPM: 200000, Address: "4 Mill Lane, Wrenhollow (fictional)"},
	{ID: demoID("location/harbour"), Name: "Wrenhollow Wheelworks — Harbour Yard", Code: "HARB", Timezone: "UTC", TaxRatePPM: 200000, Address: "Unit 2, Harbour Yard, Wrenhollow (fictional)"},
	{ID: demoID("location/station"), Name: "Wrenhollow Wheelworks — Station Arches", Code: "STAT", Timezone: "UTC", TaxRatePPM: 200000, Address: "Arch 7, Station Road, Wrenhollow (fictional)"},
}

// BuildRefs are the external references of the demo builds, in load order.
var BuildRefs = func() []string {
	out := make([]string, len(demoBuilds))
	for i, b := range demoBuilds {
		out[i] = b.ref
	}
	return out
}()

// Summary counts what the demo holds after Load.
type Summary struct {
	Tools, Calibrations, Parts, Builds int
}

// Load loads the demo organisation idempotently: what exists already (by
// fixed id, SKU or external reference) is left as it is.
func Load(ctx context.Context, svc *service.Service) (Summary, error) {
	if err := svc.EnsureOrganisation(ctx, service.Organisation{ID: OrgID, Name: "Wrenhollow Wheelworks (demo)"}); err != nil {
		return Summary{}, err
	}
	p := service.Principal{OrgID: OrgID, Role: service.RoleAdmin}
	for _, l := range Locations {
		if _, err := svc.GetLocation(ctx, p, l.ID); err == nil {
			continue
		} else if !errors.Is(err, service.ErrNotFound) {
			return Summary{}, err
		}
		if _, err := svc.CreateLocation(ctx, p, l); err != nil && !errors.Is(err, service.ErrConflict) {
			return Summary{}, fmt.Errorf("demo location %s: %w", l.Code, err)
		}
	}
	var s Summary
	var err error
	if s.Tools, s.Calibrations, err = demoTools(ctx, svc, p); err != nil {
		return Summary{}, err
	}
	if s.Parts, s.Builds, err = demoShop(ctx, svc, p); err != nil {
		return Summary{}, err
	}
	return s, nil
}
