package api_test

import (
	"context"
	"regexp"
	"strings"
	"testing"

	"wheelbench/service"
)

// endpointJSON is the API's view of an endpoint.
type endpointJSON struct {
	ID             string
	URL            string
	Events         []string
	Active         bool
	Description    string
	DisabledReason string `json:"disabled_reason"`
	Secret         string
}

// secretRE is the documented secret form: whsec_ and the padded standard
// base64 of 32 bytes (44 characters).
var secretRE = regexp.MustCompile(`^whsec_[A-Za-z0-9+/]{43}=$`)

// TestWebhookEndpointLifecycle: create, read, list, patch with If-Match
// (missing 428, stale 412), delete; admin only; bad event patterns named.
func TestWebhookEndpointLifecycle(t *testing.T) {
	e := newEnv(t)
	e.svc.ConfigureWebhooks(service.WebhookSettings{AllowPrivate: false})
	admin := e.keyA[service.RoleAdmin]
	body := map[string]any{"url": "https://receiver.example/hooks", "events": []string{"build.*", "quote.accepted"}}

	e.want(e.do("POST", "/v1/webhook-endpoints", e.keyA[service.RoleWrite], body), 403).problem(t)
	e.want(e.do("GET", "/v1/webhook-endpoints", e.keyA[service.RoleWrite], nil), 403).problem(t)

	var created endpointJSON
	r := e.want(e.do("POST", "/v1/webhook-endpoints", admin, body), 201)
	r.json(t, &created)
	if !created.Active || created.URL != body["url"] || strings.Join(created.Events, ",") != "build.*,quote.accepted" {
		t.Errorf("created %+v", created)
	}
	if r.Header.Get("Location") != "/v1/webhook-endpoints/"+created.ID || r.Header.Get("ETag") == "" {
		t.Errorf("headers %v", r.Header)
	}
	path := "/v1/webhook-endpoints/" + created.ID
	etag := e.want(e.do("GET", path, admin, nil), 200).Header.Get("ETag")
	if etag != r.Header.Get("ETag") {
		t.Errorf("GET ETag %s, POST ETag %s", etag, r.Header.Get("ETag"))
	}

	patch := map[string]any{"description": "order system", "active": false}
	e.want(e.do("PATCH", path, admin, patch), 428).problem(t)
	e.want(e.do("PATCH", path, admin, patch, "If-Match", `"stale"`), 412).problem(t)
	r = e.want(e.do("PATCH", path, admin, patch, "If-Match", etag), 200)
	var patched endpointJSON
	r.json(t, &patched)
	if patched.Active || patched.Description != "order system" || r.Header.Get("ETag") == etag {
		t.Errorf("patched %+v, ETag %s (was %s)", patched, r.Header.Get("ETag"), etag)
	}
	e.want(e.do("PATCH", path, admin, patch, "If-Match", etag), 412).problem(t)

	var list struct{ Items []endpointJSON }
	e.want(e.do("GET", "/v1/webhook-endpoints", admin, nil), 200).json(t, &list)
	if len(list.Items) != 1 || list.Items[0].ID != created.ID {
		t.Errorf("list %+v", list)
	}
	// Organisation B sees none of it.
	e.want(e.do("GET", "/v1/webhook-endpoints", e.keyB, nil), 200).json(t, &list)
	if len(list.Items) != 0 {
		t.Errorf("organisation B lists %+v", list.Items)
	}

	e.want(e.do("DELETE", path, admin, nil), 204)
	e.want(e.do("GET", path, admin, nil), 404).problem(t)
	e.want(e.do("DELETE", path, admin, nil), 404).problem(t)

	bad := []struct {
		name    string
		body    map[string]any
		status  int
		pointer string
	}{
		{"unknown resource", map[string]any{"url": "https://receiver.example/", "events": []string{"invoice.created"}}, 400, "/events/0"},
		{"upper case", map[string]any{"url": "https://receiver.example/", "events": []string{"part.Created"}}, 400, "/events/0"},
		{"no events", map[string]any{"url": "https://receiver.example/", "events": []string{}}, 400, "/events"},
		{"repeated", map[string]any{"url": "https://receiver.example/", "events": []string{"part.*", "part.*"}}, 400, "/events"},
		{"missing events", map[string]any{"url": "https://receiver.example/"}, 400, ""},
		{"ftp", map[string]any{"url": "ftp://receiver.example/", "events": []string{"*"}}, 400, "/url"},
		{"user info", map[string]any{"url": "https://u:p@receiver.example/", "events": []string{"*"}}, 400, "/url"},
		// 10.12.3. after IDNA's mapping: IPv4 shorthand, no DNS name.
		{"numeric host in halfwidth stops", map[string]any{"url": "http://10\uff6112\uff613\uff61/", "events": []string{"*"}}, 400, "/url"},
		{"unknown field", map[string]any{"url": "https://receiver.example/", "events": []string{"*"}, "secret": "x"}, 400, "/secret"},
	}
	for _, c := range bad {
		t.Run(c.name, func(t *testing.T) {
			p := e.want(e.do("POST", "/v1/webhook-endpoints", admin, c.body), c.status).problem(t)
			if c.pointer == "" {
				return
			}
			found := false
			for _, f := range p.Errors {
				found = found || f.Pointer == c.pointer
			}
			if !found {
				t.Errorf("errors %+v do not name %s", p.Errors, c.pointer)
			}
		})
	}
}

// TestWebhookEndpointRefusesPrivateDestinations: with private destinations
// not allowed (the default), URLs naming loopback, link-local (the cloud
// metadata address) or private addresses are 422 at /url, on create and on
// patch, and nothing is stored. Nothing is ever connected to: the check
// reads the URL only.
func TestWebhookEndpointRefusesPrivateDestinations(t *testing.T) {
	e := newEnv(t) // not configured: AllowPrivate false
	admin := e.keyA[service.RoleAdmin]
	for _, u := range []string{
		"http://127.0.0.1/hook",
		"http://127.0.0.1:8080/hook",
		"http://169.254.169.254/latest/meta-data/",
		"http://10.1.2.3/",
		"http://[::1]/",
		"http://[::ffff:127.0.0.1]/",
		"http://localhost/hook",
		// The same hosts with non-ASCII full stops and fullwidth forms.
		"http://127\u30020\u30020\u30021/hook",
		"http://169\uff0e254\uff0e169\uff0e254/latest/meta-data/",
		"http://10\uff611\uff612\uff613/",
		"http://localhost\u3002/hook",
		"http://\uff4c\uff4f\uff43\uff41\uff4c\uff48\uff4f\uff53\uff54/hook",
	} {
		p := e.want(e.do("POST", "/v1/webhook-endpoints", admin, map[string]any{"url": u, "events": []string{"*"}}), 422).problem(t)
		if len(p.Errors) != 1 || p.Errors[0].Pointer != "/url" {
			t.Errorf("%s: errors %+v, want one at /url", u, p.Errors)
		}
	}
	var list struct{ Items []endpointJSON }
	e.want(e.do("GET", "/v1/webhook-endpoints", admin, nil), 200).json(t, &list)
	if len(list.Items) != 0 {
		t.Fatalf("refused URLs were stored: %+v", list.Items)
	}
	var ep endpointJSON
	r := e.want(e.do("POST", "/v1/webhook-endpoints", admin, map[string]any{"url": "https://receiver.example/", "events": []string{"*"}}), 201)
	r.json(t, &ep)
	p := e.want(e.do("PATCH", "/v1/webhook-endpoints/"+ep.ID, admin, map[string]any{"url": "http://169.254.169.254/"},
		"If-Match", r.Header.Get("ETag")), 422).problem(t)
	if len(p.Errors) != 1 || p.Errors[0].Pointer != "/url" {
		t.Errorf("patch errors %+v", p.Errors)
	}

	// The same URLs are accepted when private destinations are allowed.
	e.svc.ConfigureWebhooks(service.WebhookSettings{AllowPrivate: true})
	e.want(e.do("POST", "/v1/webhook-endpoints", admin, map[string]any{"url": "http://127.0.0.1:9/hook", "events": []string{"*"}}), 201)
}

// TestWebhookSecretShownOnce: the secret is in the creation response only —
// never in a read, a list or a patch — and it is not kept for replay: the
// same Idempotency-Key creates a second endpoint with another secret.
func TestWebhookSecretShownOnce(t *testing.T) {
	e := newEnv(t)
	admin := e.keyA[service.RoleAdmin]
	body := map[string]any{"url": "https://receiver.example/hooks", "events": []string{"*"}}
	r1 := e.want(e.do("POST", "/v1/webhook-endpoints", admin, body, "Idempotency-Key", "same-key"), 201)
	r2 := e.want(e.do("POST", "/v1/webhook-endpoints", admin, body, "Idempotency-Key", "same-key"), 201)
	var a, b endpointJSON
	r1.json(t, &a)
	r2.json(t, &b)
	if !secretRE.MatchString(a.Secret) || !secretRE.MatchString(b.Secret) {
		t.Fatalf("secrets %q, %q do not have the documented form", a.Secret, b.Secret)
	}
	if a.ID == b.ID || a.Secret == b.Secret || r2.Header.Get("Idempotent-Replayed") != "" {
		t.Errorf("the second POST with the same key was replayed: %s/%s", a.ID, b.ID)
	}
	if r1.Header.Get("Cache-Control") != "no-store" {
		t.Errorf("Cache-Control %q, want no-store", r1.Header.Get("Cache-Control"))
	}
	path := "/v1/webhook-endpoints/" + a.ID
	g := e.want(e.do("GET", path, admin, nil), 200)
	reads := []response{
		g,
		e.want(e.do("GET", "/v1/webhook-endpoints", admin, nil), 200),
		e.want(e.do("PATCH", path, admin, map[string]any{"description": "x"}, "If-Match", g.Header.Get("ETag")), 200),
	}
	for _, r := range reads {
		s := string(r.body)
		if strings.Contains(s, a.Secret) || strings.Contains(s, b.Secret) || strings.Contains(s, `"secret"`) || strings.Contains(s, "whsec_") {
			t.Errorf("%s %s shows a secret: %s", r.Request.Method, r.Request.URL.Path, s)
		}
	}
	var kept int
	if err := e.st.Pool().QueryRow(context.Background(), `SELECT count(*) FROM idempotency_keys WHERE position($1::bytea IN body) > 0`,
		[]byte(a.Secret)).Scan(&kept); err != nil || kept != 0 {
		t.Errorf("%d idempotency records hold the secret (%v)", kept, err)
	}
}
