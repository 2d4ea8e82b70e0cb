package api_test

import (
	"context"
	"net/http"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"github.com/jackc/pgx/v5/pgxpool"

	"wheelbench/service"
	"wheelbench/service/background"
	"wheelbench/service/webhook"
	"wheelbench/store"
	"wheelbench/store/storetest"
)

// replicas returns the stores of n replicas on one database, each with a
// pool of its own, as n serve processes would have; the first is the
// env's, whose service takes loopback webhook URLs.
func replicas(t *testing.T, n int) (*env, []*store.Store) {
	t.Helper()
	url := storetest.URL(t)
	var sts []*store.Store
	var e *env
	for i := range n {
		pool, err := pgxpool.New(context.Background(), url)
		if err != nil {
			t.Fatal(err)
		}
		t.Cleanup(pool.Close)
		if i == 0 {
			e = newEnvPool(t, pool)
			sts = append(sts, e.st)
			continue
		}
		sts = append(sts, store.New(pool))
	}
	e.svc.ConfigureWebhooks(service.WebhookSettings{AllowPrivate: true})
	return e, sts
}

func dispatcher(t *testing.T, st *store.Store, cfg background.Config) *background.Dispatcher {
	t.Helper()
	d, err := background.NewDispatcher(st, nil, cfg)
	if err != nil {
		t.Fatal(err)
	}
	return d
}

// TestThreeDispatchersOneReceiver: three dispatchers (three services, three
// pools) on one database deliver to one receiver that answers 503 for a
// while and then 200. Every event arrives with a valid signature; an event
// is only ever repeated under its own webhook-id; the attempts the database
// counted equal the requests the receiver saw.
func TestThreeDispatchersOneReceiver(t *testing.T) {
	e, svcs := replicas(t, 3)
	var up atomic.Bool
	var refused atomic.Int64
	rv := newReceiver(t, func(int64) int {
		if up.Load() {
			return http.StatusOK
		}
		refused.Add(1)
		return http.StatusServiceUnavailable
	})
	e.createEndpoint(rv, "location.created", "part.*")
	// An endpoint subscribed to other types only: it must get nothing.
	other := newReceiver(t, func(int64) int { return http.StatusOK })
	e.createEndpoint(other, "quote.accepted")

	sender := newLoopbackSender(t, rv, other)
	ctx, cancel := context.WithCancel(context.Background())
	var wg sync.WaitGroup
	counts := make([]*outcomes, len(svcs))
	for i, s := range svcs {
		counts[i] = &outcomes{}
		d := dispatcher(t, s, background.Config{Sender: sender, Poll: 10 * time.Millisecond, Batch: 5, Workers: 2,
			Lease: 30 * time.Second, Retry: fastRetry, Observer: counts[i]})
		wg.Add(1)
		go func() { defer wg.Done(); d.Run(ctx) }()
	}
	stopped := false
	stop := func() {
		if !stopped {
			stopped = true
			cancel()
			wg.Wait()
		}
	}
	defer stop()

	start := time.Now()
	const nLocations, nParts = 40, 20
	want := map[string]string{} // resource id → type
	for _, id := range e.createLocations(nLocations, "bench") {
		want[id] = "location.created"
	}
	for i := range nParts {
		var p struct{ ID string }
		e.want(e.do("POST", "/v1/parts", e.keyA[service.RoleWrite], map[string]any{
			"kind": "washer", "sku": "W-" + string(rune('a'+i)), "name": "washer", "price_minor": 10, "currency": "EUR",
			"dimensions": map[string]any{"thickness_mm": 0.5, "inner_diameter_mm": 2.2, "outer_diameter_mm": 4},
		}), 201).json(t, &p)
		want[p.ID] = "part.created"
	}
	// Down until at least 60 requests were refused, then up.
	until(t, 20*time.Second, "60 refused requests", func() bool { return refused.Load() >= 60 })
	up.Store(true)
	total := nLocations + nParts
	delivered := func() map[string]bool {
		ok := map[string]bool{}
		for _, r := range rv.snapshot() {
			if r.status == http.StatusOK {
				ok[r.id] = true
			}
		}
		return ok
	}
	until(t, 30*time.Second, "every event delivered", func() bool { return len(delivered()) == total })
	elapsed := time.Since(start)
	stop()
	rv.checkSignatures()

	// Every event, with the right type and resource; one webhook-id each.
	got := rv.snapshot()
	idOf := map[string]string{} // resource id → webhook-id
	perID := map[string]int{}   // webhook-id → requests
	okPerID := map[string]int{} // webhook-id → requests answered 200
	bodyOf := map[string]string{}
	for _, r := range got {
		res := r.event.ResourceID.String()
		if want[res] != r.event.Type {
			t.Errorf("event %s: type %s for resource %s, want %q", r.id, r.event.Type, res, want[res])
		}
		if prev, ok := idOf[res]; ok && prev != r.id {
			t.Errorf("resource %s arrived under two webhook-ids, %s and %s", res, prev, r.id)
		}
		idOf[res] = r.id
		if prev, ok := bodyOf[r.id]; ok && prev != string(r.body) {
			t.Errorf("webhook-id %s was sent with two different bodies", r.id)
		}
		bodyOf[r.id] = string(r.body)
		perID[r.id]++
		if r.status == http.StatusOK {
			okPerID[r.id]++
		}
	}
	if len(idOf) != total {
		t.Errorf("%d resources arrived, want %d", len(idOf), total)
	}
	dupes := 0
	for _, n := range okPerID {
		dupes += n - 1
	}
	retried := 0
	for _, n := range perID {
		if n > 1 {
			retried++
		}
	}
	// Each attempt the database counted is one request the receiver saw.
	var attempts, pending int
	if err := e.st.Pool().QueryRow(context.Background(),
		`SELECT coalesce(sum(attempts), 0), count(*) FILTER (WHERE status <> 'delivered') FROM webhook_deliveries`).Scan(&attempts, &pending); err != nil {
		t.Fatal(err)
	}
	if attempts != len(got) || pending != 0 {
		t.Errorf("database: %d attempts, %d not delivered; receiver saw %d requests", attempts, pending, len(got))
	}
	if n := len(other.snapshot()); n != 0 {
		t.Errorf("the quote.accepted endpoint got %d requests", n)
	}
	worked := 0
	var split []int
	for _, c := range counts {
		n := c.get(background.OutcomeDelivered) + c.get(background.OutcomeRetry)
		split = append(split, n)
		if n > 0 {
			worked++
		}
	}
	if worked < 2 {
		t.Errorf("only %d of 3 dispatchers did any work (attempts per dispatcher %v)", worked, split)
	}
	t.Logf("%d events, %d requests (%d answered 503), %d events retried, %d duplicate 200s, attempts per dispatcher %v, %v",
		total, len(got), refused.Load(), retried, dupes, split, elapsed.Round(time.Millisecond))
}

// TestGoneDisablesAndStops: a receiver answering 410 gets one request: the
// endpoint is switched off, its other pending deliveries are cancelled, and
// later changes are not sent.
func TestGoneDisablesAndStops(t *testing.T) {
	e, svcs := replicas(t, 1)
	rv := newReceiver(t, func(int64) int { return http.StatusGone })
	id, _ := e.createEndpoint(rv, "location.*")
	e.createLocations(3, "bench")
	obs := &outcomes{}
	d := dispatcher(t, svcs[0], background.Config{Sender: newLoopbackSender(t, rv), Batch: 1, Retry: fastRetry, Observer: obs})
	ctx := context.Background()
	for range 5 {
		if _, err := d.RunOnce(ctx); err != nil {
			t.Fatal(err)
		}
	}
	if n := len(rv.snapshot()); n != 1 {
		t.Fatalf("receiver got %d requests, want 1", n)
	}
	var ep endpointJSON
	e.want(e.do("GET", "/v1/webhook-endpoints/"+id, e.keyA[service.RoleAdmin], nil), 200).json(t, &ep)
	if ep.Active || ep.DisabledReason != service.DisabledGone {
		t.Errorf("after 410: %+v", ep)
	}
	e.createLocations(2, "later")
	for range 5 {
		if _, err := d.RunOnce(ctx); err != nil {
			t.Fatal(err)
		}
	}
	if n := len(rv.snapshot()); n != 1 {
		t.Errorf("receiver got %d requests after the 410, want still 1", n)
	}
	if c := e.deliveryCounts(); c["failed"] != 1 || c["cancelled"] != 2 || c["pending"] != 0 || len(c) != 2 {
		t.Errorf("outbox %v, want 1 failed (the 410) and 2 cancelled", c)
	}
	if obs.get(background.OutcomeGone) != 1 {
		t.Errorf("outcomes %v", obs.n)
	}
	rv.checkSignatures()
}

// TestInactiveAndDeletedGetNothing: an endpoint created inactive, one
// switched off with deliveries pending and one deleted with deliveries
// pending get nothing, while an active endpoint in the same rounds gets
// every event (so the rounds did run).
func TestInactiveAndDeletedGetNothing(t *testing.T) {
	e, svcs := replicas(t, 1)
	admin := e.keyA[service.RoleAdmin]
	ok := func(int64) int { return http.StatusOK }
	live, inactive, switched, deleted := newReceiver(t, ok), newReceiver(t, ok), newReceiver(t, ok), newReceiver(t, ok)
	e.createEndpoint(live, "*")
	var created endpointJSON
	e.want(e.do("POST", "/v1/webhook-endpoints", admin, map[string]any{"url": inactive.URL(), "events": []string{"*"}, "active": false}), 201).json(t, &created)
	inactive.setSecret(created.Secret)
	if created.Active {
		t.Fatal("created active")
	}
	switchedID, etag := e.createEndpoint(switched, "*")
	deletedID, _ := e.createEndpoint(deleted, "location.created")

	e.createLocations(4, "bench") // pending for live, switched and deleted
	if c := e.deliveryCounts(); c["pending"] != 12 {
		t.Fatalf("outbox %v, want 12 pending (4 changes × 3 active endpoints)", c)
	}
	e.want(e.do("PATCH", "/v1/webhook-endpoints/"+switchedID, admin, map[string]any{"active": false}, "If-Match", etag), 200)
	e.want(e.do("DELETE", "/v1/webhook-endpoints/"+deletedID, admin, nil), 204)
	e.createLocations(2, "later")

	d := dispatcher(t, svcs[0], background.Config{Sender: newLoopbackSender(t, live, inactive, switched, deleted), Retry: fastRetry})
	for range 5 {
		if _, err := d.RunOnce(context.Background()); err != nil {
			t.Fatal(err)
		}
	}
	if n := len(live.snapshot()); n != 6 {
		t.Errorf("the active endpoint got %d requests, want 6", n)
	}
	for name, rv := range map[string]*receiver{"created inactive": inactive, "switched off": switched, "deleted": deleted} {
		if n := len(rv.snapshot()); n != 0 {
			t.Errorf("the %s endpoint got %d requests", name, n)
		}
	}
	if c := e.deliveryCounts(); c["delivered"] != 6 || c["cancelled"] != 4 || len(c) != 2 {
		t.Errorf("outbox %v, want 6 delivered and the switched-off endpoint's 4 cancelled (the deleted one's are gone)", c)
	}
	live.checkSignatures()
}

// TestRetriesGiveUpAfterTheWindow: a receiver that always fails is tried
// once plus once per step of the schedule, then the delivery is failed.
func TestRetriesGiveUpAfterTheWindow(t *testing.T) {
	e, svcs := replicas(t, 1)
	rv := newReceiver(t, func(int64) int { return http.StatusInternalServerError })
	e.createEndpoint(rv, "location.created")
	e.createLocations(1, "bench")
	// Nominal delays 1 ms, 1 ms, 1 ms fit the 3 ms window; a 4th would not
	// (see webhook.RetryConfig): 4 attempts, then failed.
	retry := webhook.RetryConfig{Base: time.Millisecond, Factor: 1, MaxDelay: time.Millisecond, Window: 3 * time.Millisecond}
	if got := len(retry.Schedule()); got != 3 {
		t.Fatalf("schedule has %d steps, want 3", got)
	}
	obs := &outcomes{}
	d := dispatcher(t, svcs[0], background.Config{Sender: newLoopbackSender(t, rv), Retry: retry, Observer: obs})
	until(t, 10*time.Second, "the delivery to fail", func() bool {
		if _, err := d.RunOnce(context.Background()); err != nil {
			t.Fatal(err)
		}
		return e.deliveryCounts()["failed"] == 1
	})
	var ids = map[string]bool{}
	for _, r := range rv.snapshot() {
		ids[r.id] = true
	}
	if n := len(rv.snapshot()); n != 4 || len(ids) != 1 {
		t.Errorf("%d requests under %d webhook-ids, want 4 under 1", n, len(ids))
	}
	if obs.get(background.OutcomeRetry) != 3 || obs.get(background.OutcomeFailed) != 1 {
		t.Errorf("outcomes %v, want 3 retried and 1 failed", obs.n)
	}
	var status int
	var last string
	if err := e.st.Pool().QueryRow(context.Background(), `SELECT last_status, last_error FROM webhook_deliveries`).Scan(&status, &last); err != nil || status != 500 {
		t.Errorf("last_status %d (%v)", status, err)
	}
	rv.checkSignatures()
}

// TestShutdownFinishesSendsAndReleasesTheRest: when the dispatcher is
// stopped mid-round, the send under way completes and is recorded, and the
// claimed deliveries not yet started go back to pending, uncounted.
func TestShutdownFinishesSendsAndReleasesTheRest(t *testing.T) {
	e, svcs := replicas(t, 1)
	rv := newReceiver(t, func(int64) int { return http.StatusNoContent })
	hold := make(chan struct{})
	rv.setHold(hold)
	e.createEndpoint(rv, "*")
	e.createLocations(3, "bench")
	d := dispatcher(t, svcs[0], background.Config{Sender: newLoopbackSender(t, rv), Batch: 3, Workers: 1, Retry: fastRetry})
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan struct{})
	go func() { defer close(done); d.Run(ctx) }()
	select {
	case <-rv.arrived:
	case <-time.After(10 * time.Second):
		t.Fatal("no request arrived")
	}
	cancel()
	select {
	case <-done:
		t.Fatal("Run returned while a send was under way")
	case <-time.After(50 * time.Millisecond):
	}
	close(hold)
	select {
	case <-done:
	case <-time.After(10 * time.Second):
		t.Fatal("Run did not return after the send finished")
	}
	var delivered, pending, pendingAttempts int
	if err := e.st.Pool().QueryRow(context.Background(), `SELECT count(*) FILTER (WHERE status = 'delivered'),
	    count(*) FILTER (WHERE status = 'pending'), coalesce(sum(attempts) FILTER (WHERE status = 'pending'), 0)
	  FROM webhook_deliveries`).Scan(&delivered, &pending, &pendingAttempts); err != nil {
		t.Fatal(err)
	}
	if n := len(rv.snapshot()); n != 1 || delivered != 1 || pending != 2 || pendingAttempts != 0 {
		t.Errorf("requests %d, delivered %d, pending %d with %d attempts; want 1, 1, 2 with 0", n, delivered, pending, pendingAttempts)
	}
	// Released means due now: another dispatcher takes them at once.
	rv.setHold(nil)
	d2 := dispatcher(t, svcs[0], background.Config{Sender: newLoopbackSender(t, rv), Retry: fastRetry})
	if n, err := d2.RunOnce(context.Background()); err != nil || n != 2 {
		t.Errorf("next round claimed %d (%v), want 2", n, err)
	}
	rv.checkSignatures()
}

// TestLeaseExpiryRedelivers: a dispatcher that claims and then dies (never
// records) leaves the delivery to another once the lease runs out: the
// event arrives, under the same webhook-id as the lost attempt would have.
func TestLeaseExpiryRedelivers(t *testing.T) {
	e, svcs := replicas(t, 2)
	rv := newReceiver(t, func(int64) int { return http.StatusOK })
	e.createEndpoint(rv, "*")
	e.createLocations(1, "bench")
	lost, err := e.st.ClaimWebhookDeliveries(context.Background(), 10, time.Minute) // the "dead" replica's claim
	if err != nil || len(lost) != 1 {
		t.Fatal(lost, err)
	}
	d := dispatcher(t, svcs[1], background.Config{Sender: newLoopbackSender(t, rv), Retry: fastRetry})
	if n, err := d.RunOnce(context.Background()); err != nil || n != 0 {
		t.Fatalf("claimed %d (%v) while the lease held, want 0", n, err)
	}
	// The lease running out is next_attempt_at passing: move it rather than wait.
	if _, err := e.st.Pool().Exec(context.Background(), `UPDATE webhook_deliveries SET next_attempt_at = now() - interval '1 second'`); err != nil {
		t.Fatal(err)
	}
	if n, err := d.RunOnce(context.Background()); err != nil || n != 1 || len(rv.snapshot()) != 1 {
		t.Fatalf("after the lease: claimed %d (%v), receiver got %d, want 1 and 1", n, err, len(rv.snapshot()))
	}
	if got := rv.snapshot()[0]; got.id != lost[0].EventID {
		t.Errorf("redelivered as %s, the lost claim had %s", got.id, lost[0].EventID)
	}
	rv.checkSignatures()
}

// TestShopEventsFollowTheFeed: a build quoted and ordered, with an endpoint
// subscribed to build.* and quote.accepted. What arrives is exactly the
// feed's rows of those types — (type, resource) for (type, resource), read
// from the changes table — and nothing of the other types written on the
// way (locations, parts, stock, price list, quote.created).
func TestShopEventsFollowTheFeed(t *testing.T) {
	e, svcs := replicas(t, 1)
	patterns := []string{"build.*", "quote.accepted"}
	rv := newReceiver(t, func(int64) int { return http.StatusOK })
	e.createEndpoint(rv, patterns...)
	w := e.keyA[service.RoleWrite]
	s := e.newShop(1)
	var b, q struct{ ID string }
	e.want(e.do("POST", "/v1/builds", w, map[string]any{"spec": s.spec(), "location_id": s.loc}), 201).json(t, &b)
	e.want(e.do("POST", "/v1/quotes", w, map[string]any{"build_id": b.ID}), 201).json(t, &q)
	e.want(e.do("POST", "/v1/quotes/"+q.ID+"/accept", w, nil), 200)

	rows, err := e.st.Pool().Query(context.Background(), `SELECT type, resource_id::text FROM changes WHERE org_id = $1`, e.orgA)
	if err != nil {
		t.Fatal(err)
	}
	want, all := map[string]int{}, map[string]bool{}
	for rows.Next() {
		var typ, id string
		if err := rows.Scan(&typ, &id); err != nil {
			t.Fatal(err)
		}
		all[typ] = true
		if service.MatchesEvent(patterns, typ) {
			want[typ+" "+id]++
		}
	}
	if rows.Err() != nil {
		t.Fatal(rows.Err())
	}
	if !all["build.created"] || !all["quote.accepted"] || !all["quote.created"] || !all["part.created"] {
		t.Fatalf("the feed lacks the types this test is about: %v", all)
	}
	d := dispatcher(t, svcs[0], background.Config{Sender: newLoopbackSender(t, rv), Retry: fastRetry})
	if _, err := d.RunOnce(context.Background()); err != nil {
		t.Fatal(err)
	}
	got := map[string]int{}
	for _, r := range rv.snapshot() {
		got[r.event.Type+" "+r.event.ResourceID.String()]++
	}
	if len(got) != len(want) {
		t.Errorf("received %v, want %v", got, want)
	}
	for k, n := range want {
		if got[k] != n {
			t.Errorf("%s: received %d, the feed has %d", k, got[k], n)
		}
	}
	rv.checkSignatures()
	t.Logf("feed types %v; delivered %v", all, got)
}
