package api_test

import (
	"bytes"
	"encoding/json"
	"slices"
	"strings"
	"testing"

	"github.com/google/uuid"

	"wheelbench/service"
)

// held is organisation A with two locations, home and other, keys held to
// home (one per role), and at each location a build, a quote, a tool with a
// calibration, and stock of one part.
type held struct {
	*env
	home, other uuid.UUID
	key         map[service.Role]string // held to home
	admin       string                  // organisation A's, held to none
	shop        shop                    // catalog parts; its location is other
	build       map[uuid.UUID]uuid.UUID // by location
	quote       map[uuid.UUID]uuid.UUID
	tool        map[uuid.UUID]uuid.UUID
	cal         map[uuid.UUID]uuid.UUID
}

func newHeld(t *testing.T) *held {
	e := newEnv(t)
	h := &held{env: e, admin: e.keyA[service.RoleAdmin], key: map[service.Role]string{},
		build: map[uuid.UUID]uuid.UUID{}, quote: map[uuid.UUID]uuid.UUID{}, tool: map[uuid.UUID]uuid.UUID{}, cal: map[uuid.UUID]uuid.UUID{}}
	h.shop = e.newShop(10)
	h.other = h.shop.loc
	h.home = e.newLocation()
	for _, r := range []service.Role{service.RoleRead, service.RoleWrite, service.RoleAdmin} {
		var k struct{ Key string }
		e.want(e.do("POST", "/v1/api-keys", h.admin, map[string]any{"role": r, "name": "held " + string(r), "location_id": h.home}), 201).json(t, &k)
		h.key[r] = k.Key
	}
	// Stock of every part at both locations, set by the organisation's key.
	var levels []map[string]any
	for _, loc := range []uuid.UUID{h.home, h.other} {
		for l := 280; l <= 310; l += 2 {
			levels = append(levels, map[string]any{"location_id": loc, "length_mm": l, "quantity": 1000})
		}
	}
	e.putStock(h.shop.spoke, levels)
	for _, part := range []uuid.UUID{h.shop.hub, h.shop.rim, h.shop.nipple, h.shop.tyre} {
		e.putStock(part, []map[string]any{{"location_id": h.home, "quantity": 1000}, {"location_id": h.other, "quantity": 1000}})
	}
	for _, loc := range []uuid.UUID{h.home, h.other} {
		h.build[loc] = h.createBuild(h.admin, loc)
		var q struct{ ID uuid.UUID }
		e.want(e.do("POST", "/v1/quotes", h.admin, map[string]any{"build_id": h.createBuild(h.admin, loc)}), 201).json(t, &q)
		h.quote[loc] = q.ID
		var tl struct{ ID uuid.UUID }
		e.want(e.do("POST", "/v1/tools", h.admin, map[string]any{"label": "tensiometer", "location_id": loc}), 201).json(t, &tl)
		h.tool[loc] = tl.ID
		h.cal[loc] = e.publish(tl.ID, e.synthColumns(1.8, 2.0)).ID
	}
	return h
}

func (h *held) createBuild(key string, loc uuid.UUID) uuid.UUID {
	var b struct{ ID uuid.UUID }
	h.want(h.do("POST", "/v1/builds", key, map[string]any{"spec": h.shop.spec(), "location_id": loc}), 201).json(h.t, &b)
	return b.ID
}

// read is what the organisation's own admin key reads at path: a view to
// compare before and after a refused request.
func (h *held) read(path string) []byte {
	return h.want(h.do("GET", path, h.admin, nil), 200).body
}

// unchanged runs fn and fails if any of paths reads otherwise afterwards
// (as the organisation's key sees them) or the change feed grew.
func (h *held) unchanged(t *testing.T, fn func(), paths ...string) {
	t.Helper()
	before := make([][]byte, len(paths))
	for i, p := range paths {
		before[i] = h.read(p)
	}
	changes := h.changeCount()
	fn()
	for i, p := range paths {
		if after := h.read(p); !bytes.Equal(after, before[i]) {
			t.Errorf("%s changed:\n%s\n%s", p, before[i], after)
		}
	}
	if n := h.changeCount(); n != changes {
		t.Errorf("a refused request wrote %d changes", n-changes)
	}
}

// ids reads the ids of a list's items.
func ids(t *testing.T, r response) []uuid.UUID {
	t.Helper()
	var l struct {
		Items []struct{ ID uuid.UUID }
	}
	r.json(t, &l)
	out := []uuid.UUID{}
	for _, it := range l.Items {
		out = append(out, it.ID)
	}
	return out
}

func (h *held) forbidden(t *testing.T, method, path string, key string, body any, hdr ...string) {
	t.Helper()
	p := h.want(h.do(method, path, key, body, hdr...), 403).problem(t)
	if !strings.Contains(p.Detail, "location") {
		t.Errorf("%s %s: 403 detail %q does not say the key is held to a location", method, path, p.Detail)
	}
}

// heldChecks says, for every /v1 route, what a key held to home may do
// there: TestHeldKeysOnEveryRoute fails for a route that has no entry.
var heldChecks = map[string]func(t *testing.T, h *held){
	"GET /v1/me": func(t *testing.T, h *held) {
		var me struct {
			Location *struct{ ID uuid.UUID } `json:"location"`
		}
		h.want(h.do("GET", "/v1/me", h.key[service.RoleRead], nil), 200).json(t, &me)
		if me.Location == nil || me.Location.ID != h.home {
			t.Errorf("me.location %+v, want home %s", me.Location, h.home)
		}
	},

	// Locations: its own only.
	"GET /v1/locations": func(t *testing.T, h *held) {
		got := ids(t, h.want(h.do("GET", "/v1/locations", h.key[service.RoleRead], nil), 200))
		if !slices.Equal(got, []uuid.UUID{h.home}) {
			t.Errorf("held key lists locations %v, want only home %s", got, h.home)
		}
		// Paged from its own id, nothing follows.
		var page struct{ NextCursor string }
		r := h.want(h.do("GET", "/v1/locations?limit=1", h.key[service.RoleRead], nil), 200)
		r.json(t, &page)
		if page.NextCursor != "" {
			if got := ids(t, h.want(h.do("GET", "/v1/locations?cursor="+page.NextCursor, h.key[service.RoleRead], nil), 200)); len(got) != 0 {
				t.Errorf("second page %v, want none", got)
			}
		}
	},
	"POST /v1/locations": func(t *testing.T, h *held) {
		h.unchanged(t, func() {
			h.forbidden(t, "POST", "/v1/locations", h.key[service.RoleAdmin], map[string]any{"name": "annex"})
		}, "/v1/locations")
	},
	"GET /v1/locations/{id}": func(t *testing.T, h *held) {
		h.want(h.do("GET", "/v1/locations/"+h.other.String(), h.key[service.RoleRead], nil), 404).problem(t)
		h.want(h.do("GET", "/v1/locations/"+h.home.String(), h.key[service.RoleRead], nil), 200)
	},
	"PATCH /v1/locations/{id}": func(t *testing.T, h *held) {
		p := "/v1/locations/" + h.other.String()
		h.unchanged(t, func() {
			h.want(h.do("PATCH", p, h.key[service.RoleAdmin], map[string]any{"name": "taken over"}, "If-Match", "*"), 404).problem(t)
		}, p)
		h.want(h.do("PATCH", "/v1/locations/"+h.home.String(), h.key[service.RoleAdmin], map[string]any{"address": "1 Any Lane"}, "If-Match", "*"), 200)
	},

	// API keys and webhooks are the organisation's.
	"GET /v1/api-keys": func(t *testing.T, h *held) {
		h.forbidden(t, "GET", "/v1/api-keys", h.key[service.RoleAdmin], nil)
	},
	"POST /v1/api-keys": func(t *testing.T, h *held) {
		h.unchanged(t, func() {
			h.forbidden(t, "POST", "/v1/api-keys", h.key[service.RoleAdmin], map[string]any{"role": "admin"})
			h.forbidden(t, "POST", "/v1/api-keys", h.key[service.RoleAdmin], map[string]any{"role": "read", "location_id": h.home})
		}, "/v1/api-keys")
	},
	"DELETE /v1/api-keys/{id}": func(t *testing.T, h *held) {
		k, err := h.svc.CreateAPIKey(t.Context(), h.orgA, service.NewKeyInput{Role: service.RoleRead})
		if err != nil {
			t.Fatal(err)
		}
		h.unchanged(t, func() {
			h.forbidden(t, "DELETE", "/v1/api-keys/"+k.ID.String(), h.key[service.RoleAdmin], nil)
		}, "/v1/api-keys")
		h.want(h.do("GET", "/v1/me", k.Secret, nil), 200)
	},
	"GET /v1/webhook-endpoints": func(t *testing.T, h *held) {
		h.forbidden(t, "GET", "/v1/webhook-endpoints", h.key[service.RoleAdmin], nil)
	},
	"POST /v1/webhook-endpoints": func(t *testing.T, h *held) {
		h.unchanged(t, func() {
			h.forbidden(t, "POST", "/v1/webhook-endpoints", h.key[service.RoleAdmin], map[string]any{"url": "https://receiver.example/", "events": []string{"*"}})
		}, "/v1/webhook-endpoints")
	},
	"GET /v1/webhook-endpoints/{id}": func(t *testing.T, h *held) {
		id, _ := webhookEndpointFixture(nil)(h.env)
		h.forbidden(t, "GET", "/v1/webhook-endpoints/"+id.String(), h.key[service.RoleAdmin], nil)
	},
	"PATCH /v1/webhook-endpoints/{id}": func(t *testing.T, h *held) {
		id, _ := webhookEndpointFixture(nil)(h.env)
		p := "/v1/webhook-endpoints/" + id.String()
		h.unchanged(t, func() {
			h.forbidden(t, "PATCH", p, h.key[service.RoleAdmin], map[string]any{"url": "https://elsewhere.example/"}, "If-Match", "*")
		}, p)
	},
	"DELETE /v1/webhook-endpoints/{id}": func(t *testing.T, h *held) {
		id, _ := webhookEndpointFixture(nil)(h.env)
		p := "/v1/webhook-endpoints/" + id.String()
		h.unchanged(t, func() { h.forbidden(t, "DELETE", p, h.key[service.RoleAdmin], nil) }, p)
	},

	// The catalog and price list: read by every key, changed by the
	// organisation's.
	"GET /v1/parts": func(t *testing.T, h *held) {
		got := ids(t, h.want(h.do("GET", "/v1/parts", h.key[service.RoleRead], nil), 200))
		for _, id := range []uuid.UUID{h.shop.hub, h.shop.rim, h.shop.spoke, h.shop.nipple, h.shop.tyre} {
			if !slices.Contains(got, id) {
				t.Errorf("held key's catalog lacks %s", id)
			}
		}
	},
	"POST /v1/parts": func(t *testing.T, h *held) {
		h.unchanged(t, func() {
			h.forbidden(t, "POST", "/v1/parts", h.key[service.RoleWrite], map[string]any{"kind": "tyre", "sku": "TYR-HELD", "name": "t",
				"price_minor": 1, "currency": "EUR", "dimensions": tyreDims})
		}, "/v1/parts")
	},
	"GET /v1/parts/{id}": func(t *testing.T, h *held) {
		h.want(h.do("GET", "/v1/parts/"+h.shop.tyre.String(), h.key[service.RoleRead], nil), 200)
	},
	"PATCH /v1/parts/{id}": func(t *testing.T, h *held) {
		p := "/v1/parts/" + h.shop.tyre.String()
		h.unchanged(t, func() {
			h.forbidden(t, "PATCH", p, h.key[service.RoleWrite], map[string]any{"price_minor": 1}, "If-Match", "*")
		}, p)
	},
	"GET /v1/price-list": func(t *testing.T, h *held) {
		h.want(h.do("GET", "/v1/price-list", h.key[service.RoleRead], nil), 200)
	},
	"PUT /v1/price-list": func(t *testing.T, h *held) {
		h.unchanged(t, func() {
			h.forbidden(t, "PUT", "/v1/price-list", h.key[service.RoleAdmin], map[string]any{"currency": "EUR", "base_build_minor": 1, "per_spoke_minor": 1,
				"per_drilled_hole_minor": 1, "per_washer_minor": 1, "per_cut_spoke_minor": 1, "validity_days": 1}, "If-Match", "*")
		}, "/v1/price-list")
	},

	// Stock: its location's levels only.
	"GET /v1/parts/{id}/stock": func(t *testing.T, h *held) {
		var st struct {
			Levels []struct {
				LocationID uuid.UUID `json:"location_id"`
			}
		}
		h.want(h.do("GET", "/v1/parts/"+h.shop.spoke.String()+"/stock", h.key[service.RoleRead], nil), 200).json(t, &st)
		if len(st.Levels) == 0 {
			t.Fatal("held key sees no stock at its own location")
		}
		for _, l := range st.Levels {
			if l.LocationID != h.home {
				t.Errorf("held key sees a level at %s", l.LocationID)
			}
		}
	},
	"PUT /v1/parts/{id}/stock": func(t *testing.T, h *held) {
		p := "/v1/parts/" + h.shop.tyre.String() + "/stock"
		w := h.key[service.RoleWrite]
		h.unchanged(t, func() {
			r := h.do("PUT", p, w, map[string]any{"levels": []any{map[string]any{"location_id": h.other, "quantity": 1}}}, "If-Match", "*")
			wantProblemAt(t, r, 422, "/levels/0/location_id")
			r = h.do("PUT", p, w, map[string]any{"levels": []any{map[string]any{"location_id": h.home, "quantity": 1},
				map[string]any{"location_id": h.other, "quantity": 1}}}, "If-Match", "*")
			wantProblemAt(t, r, 422, "/levels/1/location_id")
		}, p)
		// Its own level replaced; the other location's kept as it was.
		h.want(h.do("PUT", p, w, map[string]any{"levels": []any{map[string]any{"location_id": h.home, "quantity": 7}}}, "If-Match", "*"), 200)
		var after struct {
			Levels []struct {
				LocationID uuid.UUID `json:"location_id"`
				Quantity   int64     `json:"quantity"`
			}
		}
		if err := json.Unmarshal(h.read(p), &after); err != nil {
			t.Fatal(err)
		}
		got := map[uuid.UUID]int64{}
		for _, l := range after.Levels {
			got[l.LocationID] = l.Quantity
		}
		if len(got) != 2 || got[h.home] != 7 || got[h.other] != 1000 {
			t.Errorf("after a held PUT the levels are %v, want home 7 and other 1000 as before", got)
		}
	},

	// Builds, their audits and quotes: its location's only; another's is
	// absent (404), and naming another location in a body is a 422.
	"GET /v1/builds": func(t *testing.T, h *held) {
		r := h.key[service.RoleRead]
		got := ids(t, h.want(h.do("GET", "/v1/builds", r, nil), 200))
		if len(got) == 0 || slices.Contains(got, h.build[h.other]) || !slices.Contains(got, h.build[h.home]) {
			t.Errorf("held key lists builds %v: want home's %s, not other's %s", got, h.build[h.home], h.build[h.other])
		}
		if got := ids(t, h.want(h.do("GET", "/v1/builds?location_id="+h.other.String(), r, nil), 200)); len(got) != 0 {
			t.Errorf("held key lists builds at other: %v", got)
		}
		if got := ids(t, h.want(h.do("GET", "/v1/builds?location_id="+h.home.String(), r, nil), 200)); !slices.Contains(got, h.build[h.home]) {
			t.Errorf("held key's filter on home lists %v", got)
		}
	},
	"POST /v1/builds": func(t *testing.T, h *held) {
		h.unchanged(t, func() {
			r := h.do("POST", "/v1/builds", h.key[service.RoleWrite], map[string]any{"spec": h.shop.spec(), "location_id": h.other})
			wantProblemAt(t, r, 422, "/location_id")
		}, "/v1/builds")
		h.createBuild(h.key[service.RoleWrite], h.home)
	},
	"GET /v1/builds/{id}": func(t *testing.T, h *held) {
		h.want(h.do("GET", "/v1/builds/"+h.build[h.other].String(), h.key[service.RoleRead], nil), 404).problem(t)
		h.want(h.do("GET", "/v1/builds/"+h.build[h.home].String(), h.key[service.RoleRead], nil), 200)
	},
	"PATCH /v1/builds/{id}": func(t *testing.T, h *held) {
		p := "/v1/builds/" + h.build[h.other].String()
		h.unchanged(t, func() {
			h.want(h.do("PATCH", p, h.key[service.RoleWrite], map[string]any{"notes": "x"}, "If-Match", "*"), 404).problem(t)
		}, p)
		h.want(h.do("PATCH", "/v1/builds/"+h.build[h.home].String(), h.key[service.RoleWrite], map[string]any{"notes": "x"}, "If-Match", "*"), 200)
	},
	"GET /v1/builds/{id}/sheet": func(t *testing.T, h *held) {
		h.want(h.do("GET", "/v1/builds/"+h.build[h.other].String()+"/sheet", h.key[service.RoleRead], nil), 404).problem(t)
		h.want(h.do("GET", "/v1/builds/"+h.build[h.home].String()+"/sheet", h.key[service.RoleRead], nil), 200)
	},
	"GET /v1/builds/{id}/lacing.svg": func(t *testing.T, h *held) {
		h.want(h.do("GET", "/v1/builds/"+h.build[h.other].String()+"/lacing.svg", h.key[service.RoleRead], nil), 404).problem(t)
		h.want(h.do("GET", "/v1/builds/"+h.build[h.home].String()+"/lacing.svg", h.key[service.RoleRead], nil), 200)
	},
	"GET /v1/builds/{id}/tension-audits": func(t *testing.T, h *held) {
		h.want(h.do("GET", "/v1/builds/"+h.build[h.other].String()+"/tension-audits", h.key[service.RoleRead], nil), 404).problem(t)
		h.want(h.do("GET", "/v1/builds/"+h.build[h.home].String()+"/tension-audits", h.key[service.RoleRead], nil), 200)
	},
	"POST /v1/builds/{id}/tension-audits": func(t *testing.T, h *held) {
		body := map[string]any{"calibration_id": h.cal[h.home], "readings": []any{map[string]any{"side": "left", "spoke": 0, "reading": 300}}}
		p := "/v1/builds/" + h.build[h.other].String() + "/tension-audits"
		h.unchanged(t, func() {
			h.want(h.do("POST", p, h.key[service.RoleWrite], body), 404).problem(t)
		}, p)
		// Its own build, with the other location's calibration (readable).
		body["calibration_id"] = h.cal[h.other]
		h.want(h.do("POST", "/v1/builds/"+h.build[h.home].String()+"/tension-audits", h.key[service.RoleWrite], body), 201)
	},
	"POST /v1/quotes": func(t *testing.T, h *held) {
		b := h.createBuild(h.admin, h.other)
		h.unchanged(t, func() {
			wantProblemAt(t, h.do("POST", "/v1/quotes", h.key[service.RoleWrite], map[string]any{"build_id": b}), 422, "/build_id")
		}, "/v1/builds/"+b.String())
		h.want(h.do("POST", "/v1/quotes", h.key[service.RoleWrite], map[string]any{"build_id": h.createBuild(h.admin, h.home)}), 201)
	},
	"GET /v1/quotes/{id}": func(t *testing.T, h *held) {
		h.want(h.do("GET", "/v1/quotes/"+h.quote[h.other].String(), h.key[service.RoleRead], nil), 404).problem(t)
		h.want(h.do("GET", "/v1/quotes/"+h.quote[h.home].String(), h.key[service.RoleRead], nil), 200)
	},
	"POST /v1/quotes/{id}/accept": func(t *testing.T, h *held) {
		q := "/v1/quotes/" + h.quote[h.other].String()
		h.unchanged(t, func() {
			h.want(h.do("POST", q+"/accept", h.key[service.RoleWrite], nil), 404).problem(t)
		}, q, "/v1/parts/"+h.shop.spoke.String()+"/stock")
		h.want(h.do("POST", "/v1/quotes/"+h.quote[h.home].String()+"/accept", h.key[service.RoleWrite], nil), 200)
	},

	// Tools and calibrations: every location's are read (calibrations are
	// shared); only its own location's are changed.
	"GET /v1/tools": func(t *testing.T, h *held) {
		got := ids(t, h.want(h.do("GET", "/v1/tools", h.key[service.RoleRead], nil), 200))
		if !slices.Contains(got, h.tool[h.other]) || !slices.Contains(got, h.tool[h.home]) {
			t.Errorf("held key lists tools %v, want both locations'", got)
		}
	},
	"POST /v1/tools": func(t *testing.T, h *held) {
		h.unchanged(t, func() {
			wantProblemAt(t, h.do("POST", "/v1/tools", h.key[service.RoleWrite], map[string]any{"label": "t", "location_id": h.other}), 422, "/location_id")
		}, "/v1/tools")
		h.want(h.do("POST", "/v1/tools", h.key[service.RoleWrite], map[string]any{"label": "t", "location_id": h.home}), 201)
	},
	"GET /v1/tools/{id}": func(t *testing.T, h *held) {
		h.want(h.do("GET", "/v1/tools/"+h.tool[h.other].String(), h.key[service.RoleRead], nil), 200)
	},
	"PATCH /v1/tools/{id}": func(t *testing.T, h *held) {
		other, home := "/v1/tools/"+h.tool[h.other].String(), "/v1/tools/"+h.tool[h.home].String()
		w := h.key[service.RoleWrite]
		h.unchanged(t, func() {
			h.forbidden(t, "PATCH", other, w, map[string]any{"label": "taken"}, "If-Match", "*")
			// Its own tool cannot be moved to another location.
			wantProblemAt(t, h.do("PATCH", home, w, map[string]any{"location_id": h.other}, "If-Match", "*"), 422, "/location_id")
		}, other, home)
		h.want(h.do("PATCH", home, w, map[string]any{"label": "renamed"}, "If-Match", "*"), 200)
	},
	"GET /v1/tools/{id}/calibrations": func(t *testing.T, h *held) {
		h.want(h.do("GET", "/v1/tools/"+h.tool[h.other].String()+"/calibrations", h.key[service.RoleRead], nil), 200)
	},
	"POST /v1/tools/{id}/calibrations": func(t *testing.T, h *held) {
		p := "/v1/tools/" + h.tool[h.other].String() + "/calibrations"
		h.unchanged(t, func() {
			h.forbidden(t, "POST", p, h.key[service.RoleWrite], map[string]any{"source": "maker_table", "columns": h.synthColumns(1.8, 2.0)})
		}, p)
		h.want(h.do("POST", "/v1/tools/"+h.tool[h.home].String()+"/calibrations", h.key[service.RoleWrite],
			map[string]any{"source": "maker_table", "columns": h.synthColumns(1.8, 2.0)}), 201)
	},
	"GET /v1/calibrations/{id}": func(t *testing.T, h *held) {
		h.want(h.do("GET", "/v1/calibrations/"+h.cal[h.other].String(), h.key[service.RoleRead], nil), 200)
	},
	"GET /v1/calibrations/{id}/chart.svg": func(t *testing.T, h *held) {
		h.want(h.do("GET", "/v1/calibrations/"+h.cal[h.other].String()+"/chart.svg", h.key[service.RoleRead], nil), 200)
	},
	"POST /v1/tension-conversions": func(t *testing.T, h *held) {
		h.want(h.do("POST", "/v1/tension-conversions", h.key[service.RoleRead],
			map[string]any{"calibration_id": h.cal[h.other], "spoke": steel(2.0), "readings": []float64{300}}), 200)
	},
	"POST /v1/tension-audits": func(t *testing.T, h *held) {
		h.want(h.do("POST", "/v1/tension-audits", h.key[service.RoleRead], map[string]any{"calibration_id": h.cal[h.other], "spoke": steel(2.0),
			"target_tension_n": 1100, "readings": []any{map[string]any{"side": "right", "spoke": 0, "reading": 300}}}), 200)
	},

	// Computations store nothing and name no location.
	"POST /v1/spoke-lengths": func(t *testing.T, h *held) {
		h.want(h.do("POST", "/v1/spoke-lengths", h.key[service.RoleRead], contractBody), 200)
	},
	"POST /v1/spoke-lengths/batch": func(t *testing.T, h *held) {
		h.want(h.do("POST", "/v1/spoke-lengths/batch", h.key[service.RoleRead], `{"wheels": [`+contractBody+`]}`), 200)
	},
	"POST /v1/compatibility-checks": func(t *testing.T, h *held) {
		h.want(h.do("POST", "/v1/compatibility-checks", h.key[service.RoleRead], roadFrontBody), 200)
	},

	"GET /v1/changes": func(t *testing.T, h *held) { heldFeed(t, h) },
}

// heldFeed: the held key's feed has its location's changes, the catalog's,
// and every tool's and calibration's, and nothing else of the other
// location: not its record, builds, quotes, audits or the stock its quotes
// took; stock changes show only home's levels.
func heldFeed(t *testing.T, h *held) {
	// Something at each location after the fixtures: an audit and an
	// accepted quote (which takes stock there).
	for _, loc := range []uuid.UUID{h.home, h.other} {
		h.want(h.do("POST", "/v1/builds/"+h.build[loc].String()+"/tension-audits", h.admin,
			map[string]any{"calibration_id": h.cal[loc], "readings": []any{map[string]any{"side": "left", "spoke": 0, "reading": 300}}}), 201)
		var q struct{ ID uuid.UUID }
		h.want(h.do("POST", "/v1/quotes", h.admin, map[string]any{"build_id": h.createBuild(h.admin, loc)}), 201).json(t, &q)
		h.want(h.do("POST", "/v1/quotes/"+q.ID.String()+"/accept", h.admin, nil), 200)
	}
	type change struct {
		Cursor     string          `json:"cursor"`
		Type       string          `json:"type"`
		ID         uuid.UUID       `json:"id"`
		LocationID *uuid.UUID      `json:"location_id"`
		Data       json.RawMessage `json:"data"`
	}
	feed := func(key string) []change {
		var all []change
		after := ""
		for {
			var page struct {
				Changes    []change `json:"changes"`
				NextCursor string   `json:"next_cursor"`
			}
			h.want(h.do("GET", "/v1/changes?limit=7&after="+after, key, nil), 200).json(t, &page)
			all = append(all, page.Changes...)
			if page.NextCursor == after {
				return all // caught up: the cursor stays
			}
			after = page.NextCursor
		}
	}
	h.settle() // every change above committed is in the feed
	whole, mine := feed(h.admin), feed(h.key[service.RoleRead])
	seen := map[string]bool{}
	for _, c := range mine {
		seen[c.Cursor] = true
		if c.LocationID != nil && *c.LocationID == h.other && !strings.HasPrefix(c.Type, "tool.") {
			t.Errorf("held key sees %s of %s at the other location", c.Type, c.ID)
		}
		if c.Type == "part.stock_changed" {
			var st struct {
				Levels []struct {
					LocationID uuid.UUID `json:"location_id"`
				} `json:"levels"`
			}
			if err := json.Unmarshal(c.Data, &st); err != nil {
				t.Fatal(err)
			}
			for _, l := range st.Levels {
				if l.LocationID != h.home {
					t.Errorf("held key's stock change of %s shows a level at %s", c.ID, l.LocationID)
				}
			}
		}
	}
	// What it must see, and what the organisation's key sees that it must not.
	for _, c := range whole {
		k := c.Cursor
		mustSee := c.LocationID == nil || *c.LocationID == h.home || strings.HasPrefix(c.Type, "tool.")
		if mustSee && !seen[k] {
			t.Errorf("held key misses %s of %s (location %v)", c.Type, c.ID, c.LocationID)
		}
		if !mustSee && seen[k] {
			t.Errorf("held key sees %s of %s (location %v)", c.Type, c.ID, c.LocationID)
		}
	}
	for _, want := range []string{"build.created", "quote.accepted", "build.tension_audited", "part.stock_changed", "calibration.published", "tool.created", "part.created"} {
		found := false
		for _, c := range mine {
			found = found || c.Type == want
		}
		if !found {
			t.Errorf("held key's feed has no %s", want)
		}
	}
	if len(mine) >= len(whole) {
		t.Errorf("held key sees %d changes of the organisation's %d", len(mine), len(whole))
	}
}

// TestHeldKeysOnEveryRoute: for every /v1 route, what a key held to one
// location may do there (README.md, "Keys held to one location"): another
// location's builds, quotes, audits, stock levels and the location itself
// are absent to it (404, 422 when named in a body, left out of lists and
// the change feed), the organisation-wide routes answer 403, and the
// catalog, price list, tools and calibrations read as for any key. Every
// refusal leaves what the organisation's own key reads unchanged.
func TestHeldKeysOnEveryRoute(t *testing.T) {
	h := newHeld(t)
	for _, r := range h.srv.Routes() {
		if !strings.HasPrefix(r.Path, "/v1/") {
			continue
		}
		key := r.Method + " " + r.Path
		t.Run(key, func(t *testing.T) {
			check, ok := heldChecks[key]
			if !ok {
				t.Fatalf("no held-key check for %s: add one to heldChecks", key)
			}
			// The env's helpers fail this subtest, not the whole test.
			parent := h.env.t
			h.env.t = t
			defer func() { h.env.t = parent }()
			check(t, h)
		})
	}
}

// TestHeldKeyGetsNoReplay: an Idempotency-Key the organisation's key used
// does not replay its answer (a build at another location) to a key held
// to one location sending the same body.
func TestHeldKeyGetsNoReplay(t *testing.T) {
	h := newHeld(t)
	body := map[string]any{"spec": h.shop.spec(), "location_id": h.other}
	first := h.want(h.do("POST", "/v1/builds", h.admin, body, "Idempotency-Key", "order-1"), 201)
	var b struct{ ID uuid.UUID }
	first.json(t, &b)
	r := h.do("POST", "/v1/builds", h.key[service.RoleWrite], body, "Idempotency-Key", "order-1")
	if r.StatusCode < 400 || bytes.Contains(r.body, []byte(b.ID.String())) || r.Header.Get("Idempotent-Replayed") != "" {
		t.Fatalf("held key got %d %s (replayed %q)", r.StatusCode, r.body, r.Header.Get("Idempotent-Replayed"))
	}
	r.problem(t)
	// The organisation's key still gets its replay.
	h.want(h.do("POST", "/v1/builds", h.admin, body, "Idempotency-Key", "order-1"), 201)
}
