package api_test

import (
	"strings"
	"testing"

	"github.com/google/uuid"

	"wheelbench/service"
)

// fixture creates a resource of organisation A for a route with {id} and
// returns its id and a valid body for the route's method (nil for none).
type fixture func(e *env) (id uuid.UUID, body any)

// fixtures is keyed by "METHOD path". Every route with an {id} must have
// one: TestOtherOrganisationsIDs fails for a route that lacks it.
var fixtures = map[string]fixture{
	"GET /v1/locations/{id}":              locationFixture(nil),
	"PATCH /v1/locations/{id}":            locationFixture(map[string]any{"name": "renamed"}),
	"GET /v1/parts/{id}":                  partFixture(nil),
	"PATCH /v1/parts/{id}":                partFixture(map[string]any{"price_minor": 1}),
	"GET /v1/parts/{id}/stock":            partFixture(nil),
	"PUT /v1/parts/{id}/stock":            partFixture(map[string]any{"levels": []any{}}),
	"GET /v1/builds/{id}":                 buildFixture(nil),
	"PATCH /v1/builds/{id}":               buildFixture(map[string]any{"notes": "x"}),
	"GET /v1/builds/{id}/sheet":           buildFixture(nil),
	"GET /v1/builds/{id}/lacing.svg":      buildFixture(nil),
	"GET /v1/builds/{id}/tension-audits":  buildFixture(nil),
	"POST /v1/builds/{id}/tension-audits": buildFixture(map[string]any{"calibration_id": uuid.New(), "readings": []map[string]any{{"side": "left", "spoke": 0, "reading": 300}}}),
	"GET /v1/quotes/{id}":                 quoteFixture(),
	"POST /v1/quotes/{id}/accept":         quoteFixture(),
	"DELETE /v1/api-keys/{id}": func(e *env) (uuid.UUID, any) {
		k, err := e.svc.CreateAPIKey(e.t.Context(), e.orgA, service.NewKeyInput{Role: service.RoleRead})
		if err != nil {
			e.t.Fatal(err)
		}
		return k.ID, nil
	},
	"GET /v1/tools/{id}":                  toolFixture(nil),
	"PATCH /v1/tools/{id}":                toolFixture(map[string]any{"label": "renamed"}),
	"GET /v1/tools/{id}/calibrations":     toolFixture(nil),
	"POST /v1/tools/{id}/calibrations":    toolFixture(map[string]any{"columns": []any{map[string]any{"spoke": map[string]any{"diameter_mm": 2.0, "material": "stainless_steel"}, "points": []any{map[string]any{"tension_n": 800, "reading": 60}, map[string]any{"tension_n": 1200, "reading": 75}}}}}),
	"GET /v1/calibrations/{id}":           calibrationFixture,
	"GET /v1/calibrations/{id}/chart.svg": calibrationFixture,
	"GET /v1/webhook-endpoints/{id}":      webhookEndpointFixture(nil),
	"PATCH /v1/webhook-endpoints/{id}":    webhookEndpointFixture(map[string]any{"description": "renamed"}),
	"DELETE /v1/webhook-endpoints/{id}":   webhookEndpointFixture(nil),
}

func partFixture(body any) fixture {
	return func(e *env) (uuid.UUID, any) {
		return e.createPart("tyre", "TYRE-"+uuid.NewString()[:8], 2500, tyreDims), body
	}
}

func buildFixture(body any) fixture {
	return func(e *env) (uuid.UUID, any) {
		s := e.newShop(1)
		var b struct{ ID uuid.UUID }
		e.want(e.do("POST", "/v1/builds", e.keyA[service.RoleWrite], map[string]any{"spec": s.spec(), "location_id": s.loc}), 201).json(e.t, &b)
		return b.ID, body
	}
}

func quoteFixture() fixture {
	return func(e *env) (uuid.UUID, any) {
		id, _ := buildFixture(nil)(e)
		var q struct{ ID uuid.UUID }
		e.want(e.do("POST", "/v1/quotes", e.keyA[service.RoleWrite], map[string]any{"build_id": id}), 201).json(e.t, &q)
		return q.ID, nil
	}
}

// webhookEndpointFixture makes an endpoint of organisation A; its URL is
// never sent to (no dispatcher runs in the tenant test).
func webhookEndpointFixture(body any) fixture {
	return func(e *env) (uuid.UUID, any) {
		ep, err := e.svc.CreateWebhookEndpoint(e.t.Context(), service.Principal{OrgID: e.orgA, Role: service.RoleAdmin},
			service.WebhookEndpointInput{URL: "https://receiver.example/hooks", Events: []string{"*"}})
		if err != nil {
			e.t.Fatal(err)
		}
		return ep.ID, body
	}
}

func locationFixture(body any) fixture {
	return func(e *env) (uuid.UUID, any) {
		var l struct{ ID uuid.UUID }
		e.want(e.do("POST", "/v1/locations", e.keyA[service.RoleAdmin], map[string]any{"name": "A's bench"}), 201).json(e.t, &l)
		return l.ID, body
	}
}

// TestOtherOrganisationsIDs: for every route that takes an id, organisation
// B's admin key gets 404 for organisation A's resource — reads and writes —
// and the resource is unchanged afterwards.
func TestOtherOrganisationsIDs(t *testing.T) {
	e := newEnv(t)
	for _, r := range e.srv.Routes() {
		if !strings.Contains(r.Path, "{id}") {
			continue
		}
		key := r.Method + " " + r.Path
		t.Run(key, func(t *testing.T) {
			f, ok := fixtures[key]
			if !ok {
				t.Fatalf("no tenant-isolation fixture for %s: add one to fixtures", key)
			}
			id, body := f(e)
			path := strings.Replace(r.Path, "{id}", id.String(), 1)
			res := e.do(r.Method, path, e.keyB, body, "If-Match", "*")
			e.want(res, 404).problem(t)
			// And a random id is 404 for A as well.
			res = e.do(r.Method, strings.Replace(r.Path, "{id}", uuid.NewString(), 1), e.keyA[service.RoleAdmin], body, "If-Match", "*")
			e.want(res, 404)
			// The resource still works for its owner.
			if r.Method == "GET" {
				e.want(e.do("GET", path, e.keyA[service.RoleAdmin], nil), 200)
			}
		})
	}
}
