package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"log/slog"

	"github.com/google/uuid"

	"wheelbench/service"
)

// admin runs the organisation and key chores.
func admin(ctx context.Context, cfg config, getenv func(string) string, log *slog.Logger, args []string, stdout io.Writer) error {
	if len(args) == 0 {
		return usageError(usage)
	}
	fs := flag.NewFlagSet("admin "+args[0], flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	name := fs.String("name", "", "name")
	org := fs.String("org", "", "organisation id")
	loc := fs.String("location", "", "location id")
	role := fs.String("role", "", "read, write or admin")
	prefix := fs.String("prefix", "", "key prefix")
	if err := fs.Parse(args[1:]); err != nil {
		return usageError(err.Error() + "\n" + usage)
	}
	switch args[0] {
	case "create-org":
		if *name == "" {
			return usageError("create-org needs --name\n" + usage)
		}
	case "create-key":
		if *org == "" || *role == "" {
			return usageError("create-key needs --org and --role\n" + usage)
		}
	case "revoke-key":
		if *prefix == "" {
			return usageError("revoke-key needs --prefix\n" + usage)
		}
	default:
		return usageError(fmt.Sprintf("unknown admin command %q\n%s", args[0], usage))
	}

	a, err := openApp(ctx, cfg, getenv, log)
	if err != nil {
		return err
	}
	defer a.close()
	switch args[0] {
	case "create-org":
		o, k, err := a.svc.CreateOrganisation(ctx, *name)
		if err != nil {
			return err
		}
		fmt.Fprintf(stdout, "organisation: %s\nAPI key: %s\n", o.ID, k.Secret)
	case "create-key":
		orgID, err := uuid.Parse(*org)
		if err != nil {
			return usageError("--org must be an organisation id")
		}
		in := service.NewKeyInput{Name: "admin command", Role: service.Role(*role)}
		if *loc != "" {
			id, err := uuid.Parse(*loc)
			if err != nil {
				return usageError("--location must be a location id")
			}
			in.LocationID = &id
		}
		if _, err := a.st.GetOrganisation(ctx, orgID); err != nil {
			return fmt.Errorf("organisation %s: %w", orgID, err)
		}
		k, err := a.svc.CreateAPIKey(ctx, orgID, in)
		if err != nil {
			return err
		}
		fmt.Fprintf(stdout, "key id: %s\nprefix: %s\nAPI key: %s\n", k.ID, k.Prefix, k.Secret)
	case "revoke-key":
		k, err := a.svc.RevokeAPIKeyByPrefix(ctx, *prefix)
		if err != nil {
			return fmt.Errorf("revoke %s: %w", *prefix, err)
		}
		fmt.Fprintf(stdout, "revoked: %s (%s)\n", k.Prefix, k.ID)
	}
	return nil
}
