package api_test

import (
	"strings"
	"testing"
	"time"

	"github.com/google/uuid"

	"wheelbench/api"
	"wheelbench/service"
)

func TestToolsLifecycle(t *testing.T) {
	e := newEnv(t)
	w := e.keyA[service.RoleWrite]
	loc := e.newLocation()
	body := map[string]any{"label": "Bench tensiometer", "serial": "SYN-001", "location_id": loc, "measured_span_mm": 50.2}
	e.want(e.do("POST", "/v1/tools", e.keyA[service.RoleRead], body), 403).problem(t)
	r := e.want(e.do("POST", "/v1/tools", w, body), 201)
	var tl struct {
		ID             uuid.UUID `json:"id"`
		UnitMM         float64   `json:"unit_mm"`
		MeasuredSpanMM *float64  `json:"measured_span_mm"`
		Label          string    `json:"label"`
		LocationID     uuid.UUID `json:"location_id"`
	}
	r.json(t, &tl)
	if tl.UnitMM != 0.01 || tl.MeasuredSpanMM == nil || *tl.MeasuredSpanMM != 50.2 || tl.LocationID != loc {
		t.Fatalf("created %+v: want the default dial unit 0.01 mm and the span as given", tl)
	}
	path := "/v1/tools/" + tl.ID.String()
	if r.Header.Get("Location") != path {
		t.Errorf("Location %q", r.Header.Get("Location"))
	}
	etag := r.Header.Get("ETag")
	got := e.want(e.do("GET", path, e.keyA[service.RoleRead], nil), 200)
	if got.Header.Get("ETag") != etag {
		t.Errorf("GET ETag %q, POST %q", got.Header.Get("ETag"), etag)
	}

	// If-Match: missing → 428, current → 200, stale → 412.
	e.want(e.do("PATCH", path, w, map[string]any{"label": "x"}), 428).problem(t)
	e.want(e.do("PATCH", path, e.keyA[service.RoleRead], map[string]any{"label": "x"}, "If-Match", etag), 403)
	r2 := e.want(e.do("PATCH", path, w, map[string]any{"label": "Bench tensiometer (serviced)", "measured_span_mm": nil}, "If-Match", etag), 200)
	var patched struct {
		Label          string   `json:"label"`
		MeasuredSpanMM *float64 `json:"measured_span_mm"`
	}
	r2.json(t, &patched)
	if patched.Label != "Bench tensiometer (serviced)" || patched.MeasuredSpanMM != nil {
		t.Errorf("patched %+v: want the new label and the span removed by null", patched)
	}
	e.want(e.do("PATCH", path, w, map[string]any{"label": "y"}, "If-Match", etag), 412).problem(t)
	etag2 := r2.Header.Get("ETag")
	if etag2 == etag {
		t.Error("ETag did not change")
	}
	// A location of another organisation, or none, is a 422 naming the field.
	var other struct{ ID uuid.UUID }
	e.want(e.do("POST", "/v1/locations", e.keyB, map[string]any{"name": "B's bench"}), 201).json(t, &other)
	p := e.want(e.do("PATCH", path, w, map[string]any{"location_id": other.ID}, "If-Match", etag2), 422).problem(t)
	wantPointer(t, p, "/location_id")
	p = e.want(e.do("POST", "/v1/tools", w, map[string]any{"label": "x", "location_id": other.ID}), 422).problem(t)
	wantPointer(t, p, "/location_id")
	// Out-of-range facts are 400s naming the field.
	for _, c := range []struct {
		body    map[string]any
		pointer string
	}{
		{map[string]any{"label": "x", "location_id": loc, "unit_mm": 0}, "/unit_mm"},
		{map[string]any{"label": "x", "location_id": loc, "unit_mm": 2}, "/unit_mm"},
		{map[string]any{"label": "x", "location_id": loc, "measured_span_mm": -1}, "/measured_span_mm"},
		{map[string]any{"label": "", "location_id": loc}, "/label"},
		{map[string]any{"label": "x", "location_id": "nope"}, "/location_id"},
		{map[string]any{"label": "x", "location_id": loc, "colour": "red"}, "/colour"},
	} {
		wantPointer(t, e.want(e.do("POST", "/v1/tools", w, c.body), 400).problem(t), c.pointer)
	}
	e.want(e.do("PATCH", path, w, map[string]any{}, "If-Match", etag2), 400)

	// Idempotency-Key: the retry replays the first answer, nothing new.
	k := []string{"Idempotency-Key", "tool-create-1"}
	first := e.want(e.do("POST", "/v1/tools", w, body, k...), 201)
	again := e.want(e.do("POST", "/v1/tools", w, body, k...), 201)
	if string(first.body) != string(again.body) || again.Header.Get("Idempotent-Replayed") != "true" {
		t.Errorf("replay differs:\n%s\n%s", first.body, again.body)
	}
	e.want(e.do("POST", "/v1/tools", w, map[string]any{"label": "other", "location_id": loc}, k...), 422)

	// Two tools, paged one at a time.
	seen := map[uuid.UUID]bool{}
	cursor := ""
	for range 5 {
		var pg struct {
			Items      []struct{ ID uuid.UUID } `json:"items"`
			NextCursor string                   `json:"next_cursor"`
		}
		q := "/v1/tools?limit=1"
		if cursor != "" {
			q += "&cursor=" + cursor
		}
		e.want(e.do("GET", q, e.keyA[service.RoleRead], nil), 200).json(t, &pg)
		for _, it := range pg.Items {
			seen[it.ID] = true
		}
		if cursor = pg.NextCursor; cursor == "" {
			break
		}
	}
	if len(seen) != 2 {
		t.Errorf("paged through %d tools, want 2", len(seen))
	}

	// The change feed has the tool's creation and update.
	if got := e.feedTypes("tool", tl.ID, 2); strings.Join(got, ",") != "tool.created,tool.updated" {
		t.Errorf("feed for the tool: %v", got)
	}
}

// feedTypes returns the change types recorded for resource id, waiting up
// to five seconds for at least want of them: the feed serves only changes
// below the cluster's oldest running transaction, and other sessions on a
// shared test server can hold that back for a moment.
func (e *env) feedTypes(resource string, id uuid.UUID, want int) []string {
	e.t.Helper()
	deadline := time.Now().Add(5 * time.Second)
	for {
		var feed struct {
			Changes []struct {
				Type string    `json:"type"`
				ID   uuid.UUID `json:"id"`
			} `json:"changes"`
		}
		e.want(e.do("GET", "/v1/changes?limit=1000&types="+resource, e.keyA[service.RoleRead], nil), 200).json(e.t, &feed)
		var types []string
		for _, c := range feed.Changes {
			if c.ID == id {
				types = append(types, c.Type)
			}
		}
		if len(types) >= want || time.Now().After(deadline) {
			return types
		}
		time.Sleep(50 * time.Millisecond)
	}
}

func wantPointer(t *testing.T, p api.Problem, pointer string) {
	t.Helper()
	for _, f := range p.Errors {
		if f.Pointer == pointer {
			return
		}
	}
	t.Errorf("errors %+v do not name %s", p.Errors, pointer)
}
