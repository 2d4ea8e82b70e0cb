package store_test

import (
	"context"
	"errors"
	"testing"

	"github.com/jackc/pgx/v5/pgconn"
)

// TestTenantsAreKept: organisations and locations cannot be deleted,
// truncated or given another id, which is what lets builds and changes do
// without foreign keys to them: what a write checked stays true.
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
