package store_test

import (
	"context"
	"encoding/json"
	"errors"
	"sync"
	"testing"
	"time"

	"github.com/google/uuid"
	"github.com/jackc/pgx/v5/pgxpool"

	"wheelbench/service"
	"wheelbench/service/background"
	"wheelbench/service/fit"
	"wheelbench/store"
	"wheelbench/store/storetest"
)

// hookFixture is an organisation with one endpoint, on a fresh database.
type hookFixture struct {
	pool *pgxpool.Pool
	st   *store.Store
	org  uuid.UUID
	ep   service.WebhookEndpoint
}

func newHookFixture(t *testing.T, events ...string) hookFixture {
	t.Helper()
	ctx := context.Background()
	pool := storetest.Pool(t)
	st := store.New(pool)
	org := newOrg(t, st, "hooks")
	ep := service.WebhookEndpoint{ID: uuid.Must(uuid.NewV7()), OrgID: org, URL: "https://receiver.example/hook",
		Events: events, Active: true, Secret: "whsec_AAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAA", Version: 1,
		CreatedAt: time.Now(), UpdatedAt: time.Now()}
	if err := st.CreateWebhookEndpoint(ctx, ep); err != nil {
		t.Fatal(err)
	}
	return hookFixture{pool: pool, st: st, org: org, ep: ep}
}

func (f hookFixture) location(t *testing.T, name string) service.Location {
	t.Helper()
	l := service.Location{ID: uuid.Must(uuid.NewV7()), OrgID: f.org, Name: name, Timezone: "UTC", Version: 1,
		CreatedAt: time.Now(), UpdatedAt: time.Now()}
	if err := f.st.CreateLocation(context.Background(), l); err != nil {
		t.Fatal(err)
	}
	return l
}

func (f hookFixture) count(t *testing.T, status string) int {
	t.Helper()
	var n int
	if err := f.pool.QueryRow(context.Background(), `SELECT count(*) FROM webhook_deliveries WHERE status = $1`, status).Scan(&n); err != nil {
		t.Fatal(err)
	}
	return n
}

// TestOutboxWrittenWithTheChange: a change writes one outbox row per
// subscribed endpoint in its own transaction, with the event as body; an
// endpoint not subscribed to the type gets none.
func TestOutboxWrittenWithTheChange(t *testing.T) {
	ctx := context.Background()
	f := newHookFixture(t, "location.*")
	other := f.ep
	other.ID, other.Events = uuid.Must(uuid.NewV7()), []string{"part.created"}
	if err := f.st.CreateWebhookEndpoint(ctx, other); err != nil {
		t.Fatal(err)
	}
	l := f.location(t, "front bench")
	ds, err := f.st.ClaimWebhookDeliveries(ctx, 10, time.Minute)
	if err != nil {
		t.Fatal(err)
	}
	if len(ds) != 1 || ds[0].EndpointID != f.ep.ID || ds[0].Type != "location.created" || ds[0].Attempt != 1 {
		t.Fatalf("claimed %+v, want one location.created for the location.* endpoint", ds)
	}
	var ev service.WebhookEvent
	if err := json.Unmarshal(ds[0].Body, &ev); err != nil {
		t.Fatal(err)
	}
	if ev.ID != ds[0].EventID || ev.Type != "location.created" || ev.ResourceID != l.ID || ev.LocationID == nil || *ev.LocationID != l.ID {
		t.Errorf("event body %+v does not describe the change (event id %s)", ev, ds[0].EventID)
	}
	var data struct{ Name string }
	if err := json.Unmarshal(ev.Data, &data); err != nil || data.Name != "front bench" {
		t.Errorf("event data %s: %v", ev.Data, err)
	}
	// The event's occurred_at is its change-feed row's. (Read from the table:
	// the feed itself serves rows only below the cluster's snapshot xmin,
	// which a concurrent test's transaction can hold back.)
	var at time.Time
	if err := f.pool.QueryRow(ctx, `SELECT occurred_at FROM changes WHERE resource_id = $1`, l.ID).Scan(&at); err != nil || !at.Equal(ev.OccurredAt) {
		t.Errorf("feed row occurred_at %v (%v); event occurred_at %v", at, err, ev.OccurredAt)
	}
}

// TestClaimsAreDisjoint: concurrent claimers (SKIP LOCKED) never take the
// same delivery, and between them take all that are due.
func TestClaimsAreDisjoint(t *testing.T) {
	ctx := context.Background()
	f := newHookFixture(t, "*")
	const n = 60
	for range n {
		f.location(t, "bench")
	}
	var mu sync.Mutex
	seen := map[int64]int{}
	var wg sync.WaitGroup
	for range 6 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for {
				ds, err := f.st.ClaimWebhookDeliveries(ctx, 4, time.Minute)
				if err != nil {
					t.Error(err)
					return
				}
				if len(ds) == 0 {
					return
				}
				mu.Lock()
				for _, d := range ds {
					seen[d.ID]++
				}
				mu.Unlock()
			}
		}()
	}
	wg.Wait()
	if len(seen) != n {
		t.Errorf("claimed %d distinct deliveries, want %d", len(seen), n)
	}
	for id, k := range seen {
		if k != 1 {
			t.Errorf("delivery %d claimed %d times", id, k)
		}
	}
}

// TestOutcomeFencedByAttempt: once a lease runs out and another claim takes
// the delivery, the first claim's outcome is dropped; release hands a
// delivery back uncounted.
func TestOutcomeFencedByAttempt(t *testing.T) {
	ctx := context.Background()
	f := newHookFixture(t, "*")
	f.location(t, "bench")
	first, err := f.st.ClaimWebhookDeliveries(ctx, 1, time.Minute)
	if err != nil || len(first) != 1 {
		t.Fatalf("claim: %v %v", first, err)
	}
	if again, _ := f.st.ClaimWebhookDeliveries(ctx, 1, time.Minute); len(again) != 0 {
		t.Fatalf("claimed again while leased: %+v", again)
	}
	// The lease running out is next_attempt_at passing: move it rather than wait.
	if _, err := f.pool.Exec(ctx, `UPDATE webhook_deliveries SET next_attempt_at = now() - interval '1 second'`); err != nil {
		t.Fatal(err)
	}
	second, err := f.st.ClaimWebhookDeliveries(ctx, 1, time.Minute)
	if err != nil {
		t.Fatal(err)
	}
	if len(second) != 1 || second[0].Attempt != 2 || second[0].EventID != first[0].EventID {
		t.Fatalf("after the lease: %+v, want attempt 2 with event id %s", second, first[0].EventID)
	}
	ok, err := f.st.FinishWebhookDelivery(ctx, background.Result{Delivery: first[0], Outcome: background.OutcomeDelivered, Status: 200})
	if err != nil || ok {
		t.Fatalf("stale claim's outcome recorded=%v err=%v, want dropped", ok, err)
	}
	if err := f.st.ReleaseWebhookDeliveries(ctx, second); err != nil {
		t.Fatal(err)
	}
	third, err := f.st.ClaimWebhookDeliveries(ctx, 1, time.Minute)
	if err != nil || len(third) != 1 || third[0].Attempt != 2 {
		t.Fatalf("after release: %+v %v, want attempt 2 again (the released one uncounted)", third, err)
	}
	ok, err = f.st.FinishWebhookDelivery(ctx, background.Result{Delivery: third[0], Outcome: background.OutcomeDelivered, Status: 204})
	if err != nil || !ok || f.count(t, "delivered") != 1 {
		t.Fatalf("recorded=%v err=%v delivered=%d", ok, err, f.count(t, "delivered"))
	}
}

// TestGoneDisablesEndpoint: a 410 switches the endpoint off, cancels its
// other pending deliveries, and later changes enqueue nothing for it.
func TestGoneDisablesEndpoint(t *testing.T) {
	ctx := context.Background()
	f := newHookFixture(t, "*")
	for range 3 {
		f.location(t, "bench")
	}
	ds, err := f.st.ClaimWebhookDeliveries(ctx, 1, time.Minute)
	if err != nil || len(ds) != 1 {
		t.Fatal(ds, err)
	}
	ok, err := f.st.FinishWebhookDelivery(ctx, background.Result{Delivery: ds[0], Outcome: background.OutcomeGone, Status: 410})
	if err != nil || !ok {
		t.Fatal(ok, err)
	}
	ep, err := f.st.GetWebhookEndpoint(ctx, f.org, f.ep.ID)
	if err != nil || ep.Active || ep.DisabledReason != service.DisabledGone || ep.Version != 2 {
		t.Fatalf("endpoint after 410: %+v %v", ep, err)
	}
	if f.count(t, "pending") != 0 || f.count(t, "cancelled") != 2 || f.count(t, "failed") != 1 {
		t.Errorf("pending %d cancelled %d failed %d, want 0, 2, 1", f.count(t, "pending"), f.count(t, "cancelled"), f.count(t, "failed"))
	}
	f.location(t, "later")
	var n int
	if err := f.pool.QueryRow(ctx, `SELECT count(*) FROM webhook_deliveries`).Scan(&n); err != nil || n != 3 {
		t.Errorf("%d deliveries after a later change, want still 3 (%v)", n, err)
	}
	// Switching it back on clears the reason.
	on := true
	ep, err = f.st.UpdateWebhookEndpoint(ctx, f.org, f.ep.ID, 2, service.WebhookEndpointPatch{Active: &on})
	if err != nil || !ep.Active || ep.DisabledReason != "" {
		t.Fatalf("switched on: %+v %v", ep, err)
	}
	if _, err := f.st.UpdateWebhookEndpoint(ctx, f.org, f.ep.ID, 2, service.WebhookEndpointPatch{Active: &on}); !errors.Is(err, service.ErrPreconditionFailed) {
		t.Errorf("stale version: %v", err)
	}
}

// TestOutboxMatchAgreesWithMatchesEvent: the SQL that picks subscribers
// when a change is written and service.MatchesEvent (the documented rule)
// choose the same endpoints, for every pattern form and the change types
// this package writes.
func TestOutboxMatchAgreesWithMatchesEvent(t *testing.T) {
	ctx := context.Background()
	f := newHookFixture(t, "*")
	patterns := [][]string{{"location.*"}, {"location.created"}, {"location.updated"}, {"part.*"},
		{"part.created", "location.updated"}, {"build.*"}, {"quote.accepted"}, {"locations.created"}}
	eps := map[uuid.UUID][]string{f.ep.ID: f.ep.Events}
	for _, p := range patterns {
		ep := f.ep
		ep.ID, ep.Events = uuid.Must(uuid.NewV7()), p
		if err := f.st.CreateWebhookEndpoint(ctx, ep); err != nil {
			t.Fatal(err)
		}
		eps[ep.ID] = p
	}
	l := f.location(t, "bench")
	name := "renamed"
	if _, err := f.st.UpdateLocation(ctx, f.org, l.ID, 1, service.LocationPatch{Name: &name}); err != nil {
		t.Fatal(err)
	}
	if err := f.st.CreatePart(ctx, service.Part{ID: uuid.Must(uuid.NewV7()), OrgID: f.org, Kind: service.PartWasher, SKU: "W1",
		Name: "washer", Currency: "EUR", Dimensions: &fit.Washer{}, Version: 1, CreatedAt: time.Now(), UpdatedAt: time.Now()}); err != nil {
		t.Fatal(err)
	}
	rows, err := f.pool.Query(ctx, `SELECT endpoint_id, type FROM webhook_deliveries`)
	if err != nil {
		t.Fatal(err)
	}
	got := map[string]bool{}
	for rows.Next() {
		var id uuid.UUID
		var typ string
		if err := rows.Scan(&id, &typ); err != nil {
			t.Fatal(err)
		}
		got[id.String()+" "+typ] = true
	}
	if rows.Err() != nil {
		t.Fatal(rows.Err())
	}
	n := 0
	for id, p := range eps {
		for _, typ := range []string{"location.created", "location.updated", "part.created"} {
			want := service.MatchesEvent(p, typ)
			if want {
				n++
			}
			if got[id.String()+" "+typ] != want {
				t.Errorf("patterns %v, change %s: outbox row %v, MatchesEvent %v", p, typ, got[id.String()+" "+typ], want)
			}
		}
	}
	if len(got) != n || n == 0 {
		t.Errorf("%d outbox rows, %d expected", len(got), n)
	}
}
