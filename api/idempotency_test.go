package api_test

import (
	"sync"
	"testing"

	"wheelbench/service"
)

func TestIdempotencyKey(t *testing.T) {
	e := newEnv(t)
	admin := e.keyA[service.RoleAdmin]
	body := map[string]any{"name": "Retry bench"}
	first := e.want(e.do("POST", "/v1/locations", admin, body, "Idempotency-Key", "k-1"), 201)
	again := e.want(e.do("POST", "/v1/locations", admin, body, "Idempotency-Key", "k-1"), 201)
	if string(first.body) != string(again.body) || first.Header.Get("Location") != again.Header.Get("Location") ||
		first.Header.Get("ETag") != again.Header.Get("ETag") {
		t.Fatalf("replay differs:\n%s\n%s", first.body, again.body)
	}
	if again.Header.Get("Idempotent-Replayed") != "true" {
		t.Error("replay not marked")
	}
	// Same key, other body → 422; other organisation may use the same key.
	e.want(e.do("POST", "/v1/locations", admin, map[string]any{"name": "Other"}, "Idempotency-Key", "k-1"), 422).problem(t)
	e.want(e.do("POST", "/v1/locations", e.keyB, body, "Idempotency-Key", "k-1"), 201)
	// A 4xx is replayed too, and writes nothing.
	bad := map[string]any{"name": "Bad", "timezone": "Nowhere/Land"}
	e.want(e.do("POST", "/v1/locations", admin, bad, "Idempotency-Key", "k-2"), 400)
	e.want(e.do("POST", "/v1/locations", admin, bad, "Idempotency-Key", "k-2"), 400)
	e.want(e.do("POST", "/v1/locations", admin, body, "Idempotency-Key", "bad key with spaces"), 400)

	var pg struct{ Items []struct{ Name string } }
	e.want(e.do("GET", "/v1/locations", admin, nil), 200).json(t, &pg)
	if len(pg.Items) != 1 {
		t.Fatalf("organisation A has %d locations, want 1: %+v", len(pg.Items), pg.Items)
	}
}

// TestIdempotencyConcurrent: many simultaneous requests with one key create
// one location; the others get the replay or 409 while the first runs.
func TestIdempotencyConcurrent(t *testing.T) {
	e := newEnv(t)
	admin := e.keyA[service.RoleAdmin]
	var wg sync.WaitGroup
	statuses := make(chan int, 20)
	for range 20 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			r := e.do("POST", "/v1/locations", admin, map[string]any{"name": "Once"}, "Idempotency-Key", "same")
			statuses <- r.StatusCode
		}()
	}
	wg.Wait()
	close(statuses)
	for s := range statuses {
		if s != 201 && s != 409 {
			t.Errorf("status %d", s)
		}
	}
	var pg struct{ Items []any }
	e.want(e.do("GET", "/v1/locations", admin, nil), 200).json(t, &pg)
	if len(pg.Items) != 1 {
		t.Fatalf("%d locations, want 1", len(pg.Items))
	}
}
