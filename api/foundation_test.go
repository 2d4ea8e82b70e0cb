package api_test

import (
	"net/http"
	"sort"
	"strings"
	"testing"

	"github.com/google/uuid"

	"wheelbench/service"
)

// TestRouteSpecParity: every operation in openapi.yaml has a route and every
// route is in openapi.yaml.
func TestRouteSpecParity(t *testing.T) {
	e := newEnv(t)
	spec := map[string]bool{}
	for path, item := range e.srv.Doc().Paths.Map() {
		for method := range item.Operations() {
			spec[method+" "+path] = true
		}
	}
	routes := map[string]bool{}
	for _, r := range e.srv.Routes() {
		routes[r.Method+" "+r.Path] = true
	}
	var missing, extra []string
	for k := range spec {
		if !routes[k] {
			missing = append(missing, k)
		}
	}
	for k := range routes {
		if !spec[k] {
			extra = append(extra, k)
		}
	}
	sort.Strings(missing)
	sort.Strings(extra)
	if len(missing)+len(extra) > 0 {
		t.Fatalf("in the spec without a route: %v\nrouted but not in the spec: %v", missing, extra)
	}
}

func TestHealthReadyAndMe(t *testing.T) {
	e := newEnv(t)
	e.want(e.do("GET", "/healthz", "", nil), 200)
	e.want(e.do("GET", "/readyz", "", nil), 200)
	r := e.want(e.do("GET", "/openapi.yaml", "", nil), 200)
	if !strings.Contains(string(r.body), "openapi: 3.0.3") {
		t.Error("/openapi.yaml does not serve the document")
	}
	var me struct {
		Organisation struct{ ID uuid.UUID } `json:"organisation"`
		Role         string                 `json:"role"`
	}
	e.want(e.do("GET", "/v1/me", e.keyA[service.RoleRead], nil), 200).json(t, &me)
	if me.Organisation.ID != e.orgA || me.Role != "read" {
		t.Errorf("me = %+v", me)
	}
	m := e.want(e.do("GET", "/metrics", "", nil), 200)
	for _, name := range []string{"wheelbench_http_requests_total", "wheelbench_http_request_duration_seconds"} {
		if !strings.Contains(string(m.body), name) {
			t.Errorf("/metrics lacks %s", name)
		}
	}
}

func TestUnauthenticated(t *testing.T) {
	e := newEnv(t)
	ctx := t.Context()
	revoked, err := e.svc.CreateAPIKey(ctx, e.orgA, service.NewKeyInput{Role: service.RoleAdmin})
	if err != nil {
		t.Fatal(err)
	}
	// Use it once so that it is cached, then revoke it through the API.
	e.want(e.do("GET", "/v1/me", revoked.Secret, nil), 200)
	e.want(e.do("DELETE", "/v1/api-keys/"+revoked.ID.String(), e.keyA[service.RoleAdmin], nil), 200)
	good := e.keyA[service.RoleRead]
	cases := map[string]string{
		"missing":        "",
		"not bearer":     "Basic dXNlcjpwYXNz",
		"malformed":      "Bearer nonsense",
		"empty bearer":   "Bearer ",
		"unknown":        "Bearer " + good[:len(good)-4] + "AAAA",
		"unknown prefix": "Bearer wbk_aaaaaaaaaa" + good[len("wbk_aaaaaaaaaa"):],
		"revoked":        "Bearer " + revoked.Secret,
	}
	for name, h := range cases {
		t.Run(name, func(t *testing.T) {
			var r response
			if h == "" {
				r = e.do("GET", "/v1/me", "", nil)
			} else {
				r = e.do("GET", "/v1/me", "", nil, "Authorization", h)
			}
			e.want(r, 401)
			r.problem(t)
			if r.Header.Get("WWW-Authenticate") == "" {
				t.Error("401 without WWW-Authenticate")
			}
		})
	}
}

func TestRoleTooLow(t *testing.T) {
	e := newEnv(t)
	for _, c := range []struct {
		role         service.Role
		method, path string
		body         any
	}{
		{service.RoleRead, "POST", "/v1/locations", map[string]any{"name": "x"}},
		{service.RoleWrite, "POST", "/v1/locations", map[string]any{"name": "x"}},
		{service.RoleWrite, "GET", "/v1/api-keys", nil},
		{service.RoleWrite, "POST", "/v1/api-keys", map[string]any{"role": "admin"}},
	} {
		r := e.want(e.do(c.method, c.path, e.keyA[c.role], c.body), 403)
		r.problem(t)
	}
	// The role check comes before the body is read: garbage still gets 403.
	e.want(e.do("POST", "/v1/locations", e.keyA[service.RoleRead], "{garbage"), 403)
}

func TestLocationsLifecycle(t *testing.T) {
	e := newEnv(t)
	admin := e.keyA[service.RoleAdmin]
	r := e.want(e.do("POST", "/v1/locations", admin, map[string]any{"name": "Bench one", "timezone": "Etc/GMT-2"}), 201)
	var l struct {
		ID   uuid.UUID `json:"id"`
		Name string    `json:"name"`
	}
	r.json(t, &l)
	etag := r.Header.Get("ETag")
	if etag == "" || r.Header.Get("Location") != "/v1/locations/"+l.ID.String() {
		t.Fatalf("headers %v", r.Header)
	}
	path := "/v1/locations/" + l.ID.String()
	got := e.want(e.do("GET", path, e.keyA[service.RoleRead], nil), 200)
	if got.Header.Get("ETag") != etag {
		t.Errorf("GET ETag %q, POST gave %q", got.Header.Get("ETag"), etag)
	}
	// Missing If-Match → 428; stale → 412; current → 200, and the ETag moves.
	e.want(e.do("PATCH", path, admin, map[string]any{"name": "Bench two"}), 428).problem(t)
	r2 := e.want(e.do("PATCH", path, admin, map[string]any{"name": "Bench two"}, "If-Match", etag), 200)
	e.want(e.do("PATCH", path, admin, map[string]any{"name": "Bench three"}, "If-Match", etag), 412).problem(t)
	if r2.Header.Get("ETag") == etag {
		t.Error("ETag did not change")
	}
	e.want(e.do("PATCH", path, admin, map[string]any{"timezone": "Mars/Olympus"}, "If-Match", r2.Header.Get("ETag")), 400)
	e.want(e.do("PATCH", path, admin, map[string]any{}, "If-Match", r2.Header.Get("ETag")), 400)
	e.want(e.do("PATCH", path, admin, map[string]any{"id": uuid.New()}, "If-Match", r2.Header.Get("ETag")), 400)

	// Pagination: 5 more locations, pages of 2 see each exactly once.
	for i := range 5 {
		e.want(e.do("POST", "/v1/locations", admin, map[string]any{"name": "L" + string(rune('a'+i))}), 201)
	}
	seen := map[uuid.UUID]bool{}
	cursor := ""
	for pages := 0; ; pages++ {
		if pages > 10 {
			t.Fatal("pagination does not end")
		}
		var pg struct {
			Items      []struct{ ID uuid.UUID } `json:"items"`
			NextCursor string                   `json:"next_cursor"`
		}
		q := "/v1/locations?limit=2"
		if cursor != "" {
			q += "&cursor=" + cursor
		}
		e.want(e.do("GET", q, admin, nil), 200).json(t, &pg)
		for _, it := range pg.Items {
			if seen[it.ID] {
				t.Fatalf("location %s seen twice", it.ID)
			}
			seen[it.ID] = true
		}
		if pg.NextCursor == "" {
			break
		}
		cursor = pg.NextCursor
	}
	if len(seen) != 6 {
		t.Errorf("paged through %d locations, want 6", len(seen))
	}
	e.want(e.do("GET", "/v1/locations?cursor=%21%21", admin, nil), 400)
	e.want(e.do("GET", "/v1/locations?limit=201", admin, nil), 400)
	e.want(e.do("GET", "/v1/locations?limit=abc", admin, nil), 400)
}

func TestAPIKeys(t *testing.T) {
	e := newEnv(t)
	admin := e.keyA[service.RoleAdmin]
	var k struct {
		ID     uuid.UUID `json:"id"`
		Key    string    `json:"key"`
		Prefix string    `json:"prefix"`
	}
	r := e.want(e.do("POST", "/v1/api-keys", admin, map[string]any{"role": "write", "name": "till"}), 201)
	r.json(t, &k)
	if !strings.HasPrefix(k.Key, k.Prefix+"_") {
		t.Fatalf("key %q does not start with its prefix %q", k.Key, k.Prefix)
	}
	e.want(e.do("GET", "/v1/me", k.Key, nil), 200)
	list := e.want(e.do("GET", "/v1/api-keys", admin, nil), 200)
	if strings.Contains(string(list.body), k.Key) || strings.Contains(string(list.body), `"key"`) {
		t.Fatal("the list shows a secret")
	}
	e.want(e.do("POST", "/v1/api-keys", admin, map[string]any{"role": "owner"}), 400)
	e.want(e.do("POST", "/v1/api-keys", admin, map[string]any{"role": "read", "location_id": uuid.New()}), 422)
	e.want(e.do("DELETE", "/v1/api-keys/"+k.ID.String(), admin, nil), 200)
	e.want(e.do("GET", "/v1/me", k.Key, nil), 401)
}

// TestBadBodies: garbage JSON, wrong types, unknown fields, empty and
// oversized bodies, wrong content type: each a 4xx problem naming the field,
// and nothing written.
func TestBadBodies(t *testing.T) {
	e := newEnv(t)
	admin := e.keyA[service.RoleAdmin]
	cases := []struct {
		name    string
		body    any
		status  int
		pointer string
	}{
		{"garbage", "{not json", 400, ""},
		{"array", `[1,2]`, 400, ""},
		{"wrong type", `{"name": 12}`, 400, "/name"},
		{"unknown field", `{"name": "x", "colour": "red"}`, 400, "/colour"},
		{"missing name", `{}`, 400, ""},
		{"empty", "", 400, ""},
		{"null", "null", 400, ""},
		{"trailing", `{"name":"x"} {"name":"y"}`, 400, ""},
		{"huge", `{"name": "` + strings.Repeat("x", 2<<20) + `"}`, 413, ""},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			r := e.want(e.do("POST", "/v1/locations", admin, c.body), c.status)
			p := r.problem(t)
			if c.pointer != "" {
				found := false
				for _, f := range p.Errors {
					found = found || f.Pointer == c.pointer
				}
				if !found {
					t.Errorf("errors %+v do not name %s", p.Errors, c.pointer)
				}
			}
		})
	}
	r := e.do("POST", "/v1/locations", admin, nil, "Content-Type", "text/plain")
	if r.StatusCode != 400 && r.StatusCode != 415 {
		t.Errorf("no body with text/plain: %d", r.StatusCode)
	}
	req := e.do("POST", "/v1/locations", admin, "name=x", "Content-Type", "application/x-www-form-urlencoded")
	e.want(req, http.StatusUnsupportedMediaType)
	var pg struct{ Items []any }
	e.want(e.do("GET", "/v1/locations", admin, nil), 200).json(t, &pg)
	if len(pg.Items) != 0 {
		t.Errorf("bad bodies wrote %d locations", len(pg.Items))
	}
}
