package store_test

import (
	"context"
	"testing"

	"github.com/google/uuid"

	"wheelbench/service/background"
	"wheelbench/store"
	"wheelbench/store/storetest"
)

// TestJanitorPrunesOnlyWhatExpired: expired idempotency keys, change rows
// past the retention and finished deliveries past theirs are deleted; fresh
// ones and pending deliveries stay.
func TestJanitorPrunesOnlyWhatExpired(t *testing.T) {
	ctx := context.Background()
	pool := storetest.Pool(t)
	st := store.New(pool)
	org := newOrg(t, st, "janitor")
	ep := uuid.New()
	for _, q := range []string{
		`INSERT INTO idempotency_keys (org_id, key, fingerprint, status, body, expires_at) VALUES ($1, 'old', '', 201, '', now() - interval '1 hour')`,
		`INSERT INTO idempotency_keys (org_id, key, fingerprint, status, body, expires_at) VALUES ($1, 'fresh', '', 201, '', now() + interval '1 hour')`,
		`INSERT INTO changes (org_id, type, resource_id, data, occurred_at) VALUES ($1, 'part.created', gen_random_uuid(), '{}', now() - interval '40 days')`,
		`INSERT INTO changes (org_id, type, resource_id, data) VALUES ($1, 'part.created', gen_random_uuid(), '{}')`,
	} {
		if _, err := pool.Exec(ctx, q, org); err != nil {
			t.Fatal(err)
		}
	}
	if _, err := pool.Exec(ctx, `INSERT INTO webhook_endpoints (org_id, id, url, events, secret) VALUES ($1, $2, 'http://127.0.0.1:1/', '{*}', 'whsec_x')`, org, ep); err != nil {
		t.Fatal(err)
	}
	for _, d := range []struct{ status, age string }{{"delivered", "8 days"}, {"failed", "9 days"}, {"delivered", "1 hour"}, {"pending", "10 days"}} {
		if _, err := pool.Exec(ctx, `INSERT INTO webhook_deliveries (org_id, endpoint_id, event_id, type, body, status, created_at)
		    VALUES ($1, $2, gen_random_uuid()::text, 'part.created', '', $3, now() - $4::interval)`, org, ep, d.status, d.age); err != nil {
			t.Fatal(err)
		}
	}
	background.PruneOnce(ctx, st, background.DefaultRetention, nil)
	count := func(q string) int {
		var n int
		if err := pool.QueryRow(ctx, q, org).Scan(&n); err != nil {
			t.Fatal(err)
		}
		return n
	}
	// Defaults: feed 30 days, finished deliveries 7 days, keys at expiry.
	if n := count(`SELECT count(*) FROM idempotency_keys WHERE org_id = $1`); n != 1 {
		t.Errorf("%d idempotency keys left, want the fresh one", n)
	}
	if n := count(`SELECT count(*) FROM changes WHERE org_id = $1`); n != 1 {
		t.Errorf("%d changes left, want the recent one", n)
	}
	if n := count(`SELECT count(*) FROM webhook_deliveries WHERE org_id = $1`); n != 2 {
		t.Errorf("%d deliveries left, want the recent delivered one and the pending one", n)
	}
}
