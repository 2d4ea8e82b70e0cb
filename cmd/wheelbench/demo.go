package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"log/slog"

	"github.com/google/uuid"

	"wheelbench/service"
)

// The demo is an invented shop: three locations of a wheel-building
// co-operative in a made-up town. Every name in it is fictional. Its ids are
// derived from fixed names so that loading it twice changes nothing.
var demoNamespace = uuid.MustParse("6f1d3c52-4b8e-5a7d-9c0e-2f4a6b8d0e1c")

func demoID(name string) uuid.UUID { return uuid.NewSHA1(demoNamespace, []byte(name)) }

// DemoOrgID is the demo organisation's fixed id.
var DemoOrgID = demoID("organisation")

var demoLocations = []service.LocationInput{
	{ID: demoID("location/mill"), Name: "Wrenhollow Wheelworks — Mill Lane", Code: "MILL", Timezone: "UTC", TaxRatePPM: 200000, Address: "4 Mill Lane, Wrenhollow (fictional)"},
	{ID: demoID("location/harbour"), Name: "Wrenhollow Wheelworks — Harbour Yard", Code: "HARB", Timezone: "UTC", TaxRatePPM: 200000, Address: "Unit 2, Harbour Yard, Wrenhollow (fictional)"},
	{ID: demoID("location/station"), Name: "Wrenhollow Wheelworks — Station Arches", Code: "STAT", Timezone: "UTC", TaxRatePPM: 200000, Address: "Arch 7, Station Road, Wrenhollow (fictional)"},
}

// demo loads the demo organisation idempotently and prints a fresh admin key.
func demo(ctx context.Context, cfg config, getenv func(string) string, log *slog.Logger, stdout io.Writer) error {
	a, err := openApp(ctx, cfg, getenv, log)
	if err != nil {
		return err
	}
	defer a.close()
	if err := a.svc.EnsureOrganisation(ctx, service.Organisation{ID: DemoOrgID, Name: "Wrenhollow Wheelworks (demo)"}); err != nil {
		return err
	}
	p := service.Principal{OrgID: DemoOrgID, Role: service.RoleAdmin}
	for _, l := range demoLocations {
		if _, err := a.svc.GetLocation(ctx, p, l.ID); err == nil {
			continue
		} else if !errors.Is(err, service.ErrNotFound) {
			return err
		}
		if _, err := a.svc.CreateLocation(ctx, p, l); err != nil && !errors.Is(err, service.ErrConflict) {
			return fmt.Errorf("demo location %s: %w", l.Code, err)
		}
	}
	tools, cals, err := demoTools(ctx, a.svc, p)
	if err != nil {
		return err
	}
	parts, builds, err := demoShop(ctx, a.svc, p)
	if err != nil {
		return err
	}
	k, err := a.svc.CreateAPIKey(ctx, DemoOrgID, service.NewKeyInput{Name: "demo", Role: service.RoleAdmin})
	if err != nil {
		return err
	}
	fmt.Fprintf(stdout, "demo organisation: %s (3 locations, %d tensiometers, %d calibrations, %d parts, %d builds)\nAPI key: %s\n",
		DemoOrgID, tools, cals, parts, builds, k.Secret)
	return nil
}
