package store_test

import (
	"context"
	"errors"
	"testing"

	"github.com/jackc/pgx/v5/pgconn"
)

// TestTenantsAreKept: organisations and locations cannot be deleted,
// truncated or given another id (the triggers of migration 00001), so
// every row that names one goes on naming it.
func TestTenantsAreKept(t *testing.T) {
	ctx := context.Background()
	f := newHookFixture(t, "location.*")
	l := f.location(t, "kept bench")
	other := newOrg(t, f.st, "other shop")
	for _, c := range []struct {
		q    string
		args []any
	}{
		{`DELETE FROM locations WHERE id = $1`, []any{l.ID}},
		{`UPDATE locations SET id = gen_random_uuid() WHERE id = $1`, []any{l.ID}},
		{`UPDATE locations SET org_id = $2 WHERE id = $1`, []any{l.ID, other}},
		{`TRUNCATE locations CASCADE`, nil},
		{`DELETE FROM organisations WHERE id = $1`, []any{f.org}},
		{`UPDATE organisations SET id = gen_random_uuid() WHERE id = $1`, []any{f.org}},
		{`TRUNCATE organisations CASCADE`, nil},
	} {
		tx, err := f.pool.Begin(ctx)
		if err != nil {
			t.Fatal(err)
		}
		_, err = tx.Exec(ctx, c.q, c.args...)
		_ = tx.Rollback(ctx)
		var pgErr *pgconn.PgError
		if !errors.As(err, &pgErr) || pgErr.Code != "23001" {
			t.Errorf("%s: %v, want restrict_violation (23001)", c.q, err)
		}
	}
	// A rename is still an update like any other.
	if _, err := f.pool.Exec(ctx, `UPDATE locations SET name = 'renamed' WHERE id = $1`, l.ID); err != nil {
		t.Errorf("rename refused: %v", err)
	}
}

// TestTenantKeysInTheSchema: the database itself refuses a build whose
// location is another organisation's (or none) and a change of an unknown
// organisation — foreign keys (migrations 00002 and 00004), not only the service's
// check before the insert.
func TestTenantKeysInTheSchema(t *testing.T) {
	ctx := context.Background()
	f := newHookFixture(t, "location.*")
	l := f.location(t, "own bench")
	other := newOrg(t, f.st, "other shop")
	for _, c := range []struct {
		q    string
		args []any
	}{
		{`INSERT INTO builds (org_id, id, location_id, external_ref, status, spec, snapshot, notes, version, created_at, updated_at)
		  VALUES ($1, gen_random_uuid(), $2, '', 'draft', '{}', '{}', '', 1, now(), now())`, []any{other, l.ID}},
		{`INSERT INTO builds (org_id, id, location_id, external_ref, status, spec, snapshot, notes, version, created_at, updated_at)
		  VALUES ($1, gen_random_uuid(), gen_random_uuid(), '', 'draft', '{}', '{}', '', 1, now(), now())`, []any{f.org}},
		{`INSERT INTO changes (org_id, type, resource_id, data, occurred_at) VALUES (gen_random_uuid(), 'part.created', gen_random_uuid(), '{}', now())`, nil},
	} {
		_, err := f.pool.Exec(ctx, c.q, c.args...)
		var pgErr *pgconn.PgError
		if !errors.As(err, &pgErr) || pgErr.Code != "23503" {
			t.Errorf("%s: %v, want foreign_key_violation (23503)", c.q, err)
		}
	}
	// The same insert with the organisation's own location is taken.
	if _, err := f.pool.Exec(ctx, `INSERT INTO builds (org_id, id, location_id, external_ref, status, spec, snapshot, notes, version, created_at, updated_at)
		  VALUES ($1, gen_random_uuid(), $2, '', 'draft', '{}', '{}', '', 1, now(), now())`, f.org, l.ID); err != nil {
		t.Errorf("own location refused: %v", err)
	}
}
