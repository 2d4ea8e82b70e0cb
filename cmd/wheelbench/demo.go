package main

import (
	"context"
	"fmt"
	"io"
	"log/slog"

	"wheelbench/service"
	"wheelbench/service/demo"
)

// runDemo loads the invented demo shop (package demo) idempotently and
// prints a fresh admin key.
func runDemo(ctx context.Context, cfg config, getenv func(string) string, log *slog.Logger, stdout io.Writer) error {
	a, err := openApp(ctx, cfg, getenv, log)
	if err != nil {
		return err
	}
	defer a.close()
	s, err := demo.Load(ctx, a.svc)
	if err != nil {
		return err
	}
	k, err := a.svc.CreateAPIKey(ctx, demo.OrgID, service.NewKeyInput{Name: "demo", Role: service.RoleAdmin})
	if err != nil {
		return err
	}
	fmt.Fprintf(stdout, "demo organisation: %s (%d locations, %d tensiometers, %d calibrations, %d parts, %d builds)\nAPI key: %s\n",
		demo.OrgID, len(demo.Locations), s.Tools, s.Calibrations, s.Parts, s.Builds, k.Secret)
	return nil
}
