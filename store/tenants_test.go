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
	for _, q := range []string{
		`DELETE FROM locations WHERE id = '` + l.ID.String() + `'`,
		`UPDATE locations SET id = gen_random_uuid() WHERE id = '` + l.ID.String() + `'`,
		`UPDATE locations SET org_id = '` + other.String() + `' WHERE id = '` + l.ID.String() + `'`,
		`TRUNCATE locations CASCADE`,
		`DELETE FROM organisations WHERE id = '` + f.org.String() + `'`,
		`UPDATE organisations SET id = gen_random_uuid() WHERE id = '` + f.org.String() + `'`,
		`TRUNCATE organisations CASCADE`,
	} {
		tx, err := f.pool.Begin(ctx)
		if err != nil {
			t.Fatal(err)
		}
		_, err = tx.Exec(ctx, q)
		_ = tx.Rollback(ctx)
		var pgErr *pgconn.PgError
		if !errors.As(err, &pgErr) || pgErr.Code != "23001" {
			t.Errorf("%s: %v, want restrict_violation (23001)", q, err)
		}
	}
	// A rename is still an update like any other.
	if _, err := f.pool.Exec(ctx, `UPDATE locations SET name = 'renamed' WHERE id = $1`, l.ID); err != nil {
		t.Errorf("rename refused: %v", err)
	}
}
