package api_test

import (
	"bytes"
	"compress/gzip"
	"encoding/json"
	"fmt"
	"slices"
	"strings"
	"testing"

	"github.com/google/uuid"

	"wheelbench/api"
	"wheelbench/service"
)

// bodyCase is a request to one route with a body that the route accepts
// (answering ok): the base every hostile variant below is made from.
type bodyCase struct {
	path string
	key  string
	body map[string]any
	hdr  []string
	ok   int
}

// bodyCases makes, for every route with a request body, a request it
// accepts, creating what it needs in organisation A. TestBodyCasesCoverEveryRoute
// fails for a route that has none.
func bodyCases(e *env) map[string]func() bodyCase {
	admin, w, r := e.keyA[service.RoleAdmin], e.keyA[service.RoleWrite], e.keyA[service.RoleRead]
	var s *shop
	theShop := func() shop {
		if s == nil {
			sh := e.newShop(10)
			s = &sh
		}
		return *s
	}
	etag := func(path string) []string {
		return []string{"If-Match", e.want(e.do("GET", path, admin, nil), 200).Header.Get("ETag")}
	}
	build := func() uuid.UUID {
		id, _ := buildFixture(nil)(e)
		return id
	}
	wheel := func() map[string]any {
		var m map[string]any
		if err := json.Unmarshal([]byte(contractBody), &m); err != nil {
			e.t.Fatal(err)
		}
		return m
	}
	compat := func() map[string]any {
		var m map[string]any
		if err := json.Unmarshal([]byte(roadFrontBody), &m); err != nil {
			e.t.Fatal(err)
		}
		return m
	}
	return map[string]func() bodyCase{
		"POST /v1/locations": func() bodyCase {
			return bodyCase{path: "/v1/locations", key: admin, ok: 201,
				body: map[string]any{"name": "Side bench", "code": "SB", "timezone": "UTC", "address": "1 Any Street", "tax_rate_ppm": 0}}
		},
		"PATCH /v1/locations/{id}": func() bodyCase {
			p := "/v1/locations/" + e.newLocation().String()
			return bodyCase{path: p, key: admin, ok: 200, hdr: etag(p), body: map[string]any{"name": "renamed", "code": "SB2", "timezone": "UTC", "address": "2 Any Street"}}
		},
		"POST /v1/api-keys": func() bodyCase {
			return bodyCase{path: "/v1/api-keys", key: admin, ok: 201, body: map[string]any{"role": "read", "name": "till", "location_id": e.newLocation()}}
		},
		"POST /v1/parts": func() bodyCase {
			return bodyCase{path: "/v1/parts", key: w, ok: 201, body: map[string]any{"kind": "spoke", "sku": "SPK-" + uuid.NewString()[:8],
				"name": "a spoke", "price_minor": 60, "currency": "EUR", "dimensions": spokeDims}}
		},
		"PATCH /v1/parts/{id}": func() bodyCase {
			p := "/v1/parts/" + e.createPart("tyre", "TYR-"+uuid.NewString()[:8], 100, tyreDims).String()
			return bodyCase{path: p, key: w, ok: 200, hdr: etag(p), body: map[string]any{"sku": "TYR-" + uuid.NewString()[:8], "name": "renamed", "price_minor": 120, "currency": "EUR"}}
		},
		"PUT /v1/parts/{id}/stock": func() bodyCase {
			sh := theShop()
			p := "/v1/parts/" + sh.tyre.String() + "/stock"
			return bodyCase{path: p, key: w, ok: 200, hdr: etag(p),
				body: map[string]any{"levels": []any{map[string]any{"location_id": sh.loc, "quantity": 5}}}}
		},
		"POST /v1/builds": func() bodyCase {
			sh := theShop()
			spec := inlineSpec()
			spec["spoke"] = map[string]any{"diameter_mm": 2.0, "material": "stainless_steel"}
			return bodyCase{path: "/v1/builds", key: w, ok: 201,
				body: map[string]any{"location_id": sh.loc, "external_ref": "ORDER-1", "spec": spec}}
		},
		"PATCH /v1/builds/{id}": func() bodyCase {
			p := "/v1/builds/" + build().String()
			return bodyCase{path: p, key: w, ok: 200, hdr: etag(p), body: map[string]any{"status": "cancelled", "notes": "true the rim first"}}
		},
		"POST /v1/builds/{id}/tension-audits": func() bodyCase {
			cal, _ := calibrationFixture(e)
			return bodyCase{path: "/v1/builds/" + build().String() + "/tension-audits", key: w, ok: 201,
				body: map[string]any{"calibration_id": cal, "notes": "after stress relief",
					"readings": []any{map[string]any{"side": "left", "spoke": 0, "reading": 300}, map[string]any{"side": "right", "spoke": 0, "reading": 310}}}}
		},
		"PUT /v1/price-list": func() bodyCase {
			return bodyCase{path: "/v1/price-list", key: admin, ok: 200, hdr: etag("/v1/price-list"),
				body: map[string]any{"currency": "EUR", "base_build_minor": 4000, "per_spoke_minor": 50, "per_drilled_hole_minor": 150,
					"per_washer_minor": 20, "per_cut_spoke_minor": 80, "validity_days": 14}}
		},
		"POST /v1/quotes": func() bodyCase {
			theShop()
			return bodyCase{path: "/v1/quotes", key: w, ok: 201, body: map[string]any{"build_id": build()}}
		},
		"POST /v1/tools": func() bodyCase {
			return bodyCase{path: "/v1/tools", key: w, ok: 201, body: map[string]any{"label": "spare tensiometer", "serial": "S-1",
				"notes": "kept in the drawer", "location_id": e.newLocation(), "unit_mm": 0.01}}
		},
		"PATCH /v1/tools/{id}": func() bodyCase {
			p := "/v1/tools/" + e.newTool().String()
			return bodyCase{path: p, key: w, ok: 200, hdr: etag(p), body: map[string]any{"label": "renamed", "serial": "S-2", "location_id": e.newLocation(), "notes": "checked", "unit_mm": 0.01}}
		},
		"POST /v1/tools/{id}/calibrations": func() bodyCase {
			return bodyCase{path: "/v1/tools/" + e.newTool().String() + "/calibrations", key: w, ok: 201,
				body: map[string]any{"source": "maker_table", "notes": "from the box", "columns": e.synthColumns(1.8, 2.0)}}
		},
		"POST /v1/tension-conversions": func() bodyCase {
			cal, _ := calibrationFixture(e)
			return bodyCase{path: "/v1/tension-conversions", key: r, ok: 200,
				body: map[string]any{"calibration_id": cal, "spoke": steel(2.0), "readings": []float64{300, 301}}}
		},
		"POST /v1/tension-audits": func() bodyCase {
			cal, _ := calibrationFixture(e)
			return bodyCase{path: "/v1/tension-audits", key: r, ok: 200,
				body: map[string]any{"calibration_id": cal, "spoke": steel(2.0), "target_tension_n": 1100, "target_side": "right",
					"readings": []any{map[string]any{"side": "right", "spoke": 0, "reading": 300}, map[string]any{"side": "right", "spoke": 1, "reading": 301}}}}
		},
		"POST /v1/webhook-endpoints": func() bodyCase {
			return bodyCase{path: "/v1/webhook-endpoints", key: admin, ok: 201,
				body: map[string]any{"url": "https://receiver.example/hooks", "events": []any{"build.*"}, "description": "order system"}}
		},
		"PATCH /v1/webhook-endpoints/{id}": func() bodyCase {
			id, _ := webhookEndpointFixture(nil)(e)
			p := "/v1/webhook-endpoints/" + id.String()
			return bodyCase{path: p, key: admin, ok: 200, hdr: etag(p), body: map[string]any{"url": "https://receiver.example/other", "events": []any{"part.*"}, "description": "renamed"}}
		},
		"POST /v1/spoke-lengths": func() bodyCase {
			return bodyCase{path: "/v1/spoke-lengths", key: r, ok: 200, body: wheel()}
		},
		"POST /v1/spoke-lengths/batch": func() bodyCase {
			return bodyCase{path: "/v1/spoke-lengths/batch", key: r, ok: 200, body: map[string]any{"wheels": []any{wheel(), wheel()}}}
		},
		"POST /v1/compatibility-checks": func() bodyCase {
			return bodyCase{path: "/v1/compatibility-checks", key: r, ok: 200, body: compat()}
		},
	}
}

// bodyRoutes lists "METHOD path" of every operation in the spec that takes
// a request body.
func bodyRoutes(e *env) []string {
	var out []string
	for path, item := range e.srv.Doc().Paths.Map() {
		for method, op := range item.Operations() {
			if op.RequestBody != nil {
				out = append(out, method+" "+path)
			}
		}
	}
	slices.Sort(out)
	return out
}

// TestBodyCasesCoverEveryRoute: every route with a body has a base case,
// and the spec lists the problems any body can earn it: 400, 408 (a body
// that arrives too slowly), 413, 415 and 503.
func TestBodyCasesCoverEveryRoute(t *testing.T) {
	e := newEnv(t)
	cases := bodyCases(e)
	for _, k := range bodyRoutes(e) {
		if _, ok := cases[k]; !ok {
			t.Errorf("no base body for %s: add one to bodyCases", k)
		}
		method, path, _ := strings.Cut(k, " ")
		op := e.srv.Doc().Paths.Find(path).GetOperation(method)
		for _, code := range []string{"400", "408", "413", "415", "503"} {
			if op.Responses.Value(code) == nil {
				t.Errorf("%s does not list %s", k, code)
			}
		}
	}
}

// render writes v as JSON with object members in sorted order, renaming
// the member at pointer rename to newName, and writing the member at
// pointer dup twice. Pointers are into v ("/spec/hub").
func render(v any, at, rename, newName, dup string) []byte {
	var b bytes.Buffer
	var walk func(v any, at string)
	walk = func(v any, at string) {
		switch x := v.(type) {
		case map[string]any:
			keys := make([]string, 0, len(x))
			for k := range x {
				keys = append(keys, k)
			}
			slices.Sort(keys)
			b.WriteByte('{')
			first := true
			member := func(name string, val any, p string) {
				if !first {
					b.WriteByte(',')
				}
				first = false
				j, _ := json.Marshal(name)
				b.Write(j)
				b.WriteByte(':')
				walk(val, p)
			}
			for _, k := range keys {
				p := at + "/" + k
				name := k
				if p == rename {
					name = newName
				}
				member(name, x[k], p)
				if p == dup {
					member(name, x[k], p)
				}
			}
			b.WriteByte('}')
		case []any:
			b.WriteByte('[')
			for i, e := range x {
				if i > 0 {
					b.WriteByte(',')
				}
				walk(e, fmt.Sprintf("%s/%d", at, i))
			}
			b.WriteByte(']')
		default:
			j, err := json.Marshal(x)
			if err != nil {
				panic(err)
			}
			b.Write(j)
		}
	}
	walk(v, at)
	return b.Bytes()
}

// generic turns a body into plain maps, slices and values (what render takes).
func generic(t testing.TB, body map[string]any) map[string]any {
	j, err := json.Marshal(body)
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(j, &m); err != nil {
		t.Fatal(err)
	}
	return m
}

// setAt returns a copy of m with the value at pointer p replaced by raw
// JSON text (so that it can hold bytes json.Marshal would mend).
func setAt(t testing.TB, m map[string]any, p string, raw string) []byte {
	const mark = "\u2603mark\u2603"
	c := generic(t, m)
	var cur any = c
	parts := strings.Split(strings.TrimPrefix(p, "/"), "/")
	for i, k := range parts {
		last := i == len(parts)-1
		switch x := cur.(type) {
		case map[string]any:
			if last {
				x[k] = mark
			} else {
				cur = x[k]
			}
		case []any:
			var n int
			fmt.Sscan(k, &n)
			if last {
				x[n] = mark
			} else {
				cur = x[n]
			}
		default:
			t.Fatalf("no %s in the body", p)
		}
	}
	return bytes.Replace(render(c, "", "", "", ""), []byte(`"`+mark+`"`), []byte(raw), 1)
}

func wantProblemAt(t *testing.T, r response, status int, pointer string) {
	t.Helper()
	if r.StatusCode != status {
		t.Fatalf("%s %s: status %d, want %d\n%s", r.Request.Method, r.Request.URL.Path, r.StatusCode, status, r.body)
	}
	p := r.problem(t)
	for _, f := range p.Errors {
		if f.Pointer == pointer {
			if strings.Contains(f.Message, "json") || strings.Contains(f.Message, "Go ") {
				t.Errorf("message for %s speaks of the decoder: %q", pointer, f.Message)
			}
			return
		}
	}
	t.Errorf("%s %s: errors %+v do not name %s", r.Request.Method, r.Request.URL.Path, p.Errors, pointer)
}

// TestCaseVariantsAndDuplicatesRefused: on every route with a body, a
// member name in another letter case and a member given twice are 400s
// naming that member, nested ones too (the spec's names are exact); the
// body as it should be is then accepted.
func TestCaseVariantsAndDuplicatesRefused(t *testing.T) {
	e := newEnv(t)
	nested := map[string][]string{
		"POST /v1/builds":               {"/spec/spoke_count", "/spec/hub", "/spec/crosses/left"},
		"POST /v1/spoke-lengths":        {"/spoke_count", "/hub", "/hub/left/pcd_mm"},
		"POST /v1/spoke-lengths/batch":  {"/wheels/1/hub", "/wheels/0/spoke_count"},
		"POST /v1/compatibility-checks": {"/hub", "/rim/erd_mm"},
		"PUT /v1/parts/{id}/stock":      {"/levels/0/quantity"},
		"POST /v1/parts":                {"/dimensions/diameter_mm"},
	}
	cases := bodyCases(e)
	for _, k := range bodyRoutes(e) {
		t.Run(k, func(t *testing.T) {
			c := cases[k]()
			method, _, _ := strings.Cut(k, " ")
			m := generic(t, c.body)
			var members []string
			for name := range m {
				members = append(members, "/"+name)
			}
			slices.Sort(members)
			for _, p := range append(members, nested[k]...) {
				name := p[strings.LastIndex(p, "/")+1:]
				parent := p[:strings.LastIndex(p, "/")]
				for _, variant := range []string{strings.ToUpper(name[:1]) + name[1:], strings.ToUpper(name)} {
					if variant == name {
						continue
					}
					res := e.do(method, c.path, c.key, string(render(m, "", p, variant, "")), c.hdr...)
					if strings.HasSuffix(k, "/batch") && res.StatusCode == 200 {
						// A wheel's fault is its slot's, not the batch's.
						if !bytes.Contains(res.body, []byte(`"pointer":"`+parent+"/"+variant+`"`)) {
							t.Errorf("%s with %s: slot does not name the member: %.300s", k, variant, res.body)
						}
						continue
					}
					wantProblemAt(t, res, 400, parent+"/"+variant)
				}
				wantProblemAt(t, e.do(method, c.path, c.key, string(render(m, "", "", "", p)), c.hdr...), 400, p)
			}
			e.want(e.do(method, c.path, c.key, string(render(m, "", "", "", "")), c.hdr...), c.ok)
		})
	}
}

// TestNullRefused: null for any top-level member is a 400 naming it, on
// every route with a body (the spec marks only the tool PATCH's
// measured_span_mm nullable: there null removes the value).
func TestNullRefused(t *testing.T) {
	e := newEnv(t)
	cases := bodyCases(e)
	for _, k := range bodyRoutes(e) {
		t.Run(k, func(t *testing.T) {
			c := cases[k]()
			method, _, _ := strings.Cut(k, " ")
			m := generic(t, c.body)
			for name := range m {
				wantProblemAt(t, e.do(method, c.path, c.key, string(setAt(t, m, "/"+name, "null")), c.hdr...), 400, "/"+name)
			}
			wantProblemAt(t, e.do(method, c.path, c.key, "null", c.hdr...), 400, "")
		})
	}
	c := cases["PATCH /v1/tools/{id}"]()
	e.want(e.do("PATCH", c.path, c.key, map[string]any{"measured_span_mm": nil}, c.hdr...), 200)
}

// TestContentTypeRefused: every route with a body answers 415 to XML,
// text, a form or no Content-Type at all, and to a Content-Encoding other
// than identity, and stores nothing.
func TestContentTypeRefused(t *testing.T) {
	e := newEnv(t)
	cases := bodyCases(e)
	before := e.changeCount()
	for _, k := range bodyRoutes(e) {
		c := cases[k]()
		method, _, _ := strings.Cut(k, " ")
		body := string(render(generic(t, c.body), "", "", "", ""))
		before = e.changeCount()
		for _, ct := range []string{"application/xml", "text/plain", "application/x-www-form-urlencoded", "multipart/form-data; boundary=x", ""} {
			hdr := append(slices.Clone(c.hdr), "Content-Type", ct)
			e.want(e.do(method, c.path, c.key, body, hdr...), 415).problem(t)
		}
		if n := e.changeCount(); n != before {
			t.Errorf("%s: refused bodies wrote %d changes", k, n-before)
		}
		// A Content-Encoding other than identity: not decoded, so refused
		// (gzip here is the body's real gzip, and a label on plain bytes).
		var gz bytes.Buffer
		zw := gzip.NewWriter(&gz)
		zw.Write([]byte(body))
		zw.Close()
		for _, b := range []string{gz.String(), body} {
			for _, ce := range []string{"gzip", "deflate", "br"} {
				e.want(e.do(method, c.path, c.key, b, append(slices.Clone(c.hdr), "Content-Encoding", ce)...), 415).problem(t)
			}
		}
		if n := e.changeCount(); n != before {
			t.Errorf("%s: encoded bodies wrote %d changes", k, n-before)
		}
		// The same with a JSON type, a charset parameter allowed, and the
		// identity coding named.
		e.want(e.do(method, c.path, c.key, body, append(slices.Clone(c.hdr), "Content-Type", "application/json; charset=utf-8", "Content-Encoding", "identity")...), c.ok)
	}
}

// changeCount is the number of changes in organisation A's feed, once
// every transaction begun before the call has ended (settle).
func (e *env) changeCount() int {
	e.t.Helper()
	e.settle()
	n, after := 0, ""
	for {
		var page struct {
			Changes    []json.RawMessage `json:"changes"`
			NextCursor string            `json:"next_cursor"`
		}
		e.want(e.do("GET", "/v1/changes?limit=1000&after="+after, e.keyA[service.RoleRead], nil), 200).json(e.t, &page)
		n += len(page.Changes)
		if page.NextCursor == after || len(page.Changes) == 0 {
			return n // caught up (an unfiltered page is full until then)
		}
		after = page.NextCursor
	}
}

// stringPointers lists the pointer of every string value in v (a body as
// generic maps and slices), in a stable order.
func stringPointers(v any, at string) []string {
	var out []string
	switch x := v.(type) {
	case string:
		out = append(out, at)
	case map[string]any:
		keys := make([]string, 0, len(x))
		for k := range x {
			keys = append(keys, k)
		}
		slices.Sort(keys)
		for _, k := range keys {
			out = append(out, stringPointers(x[k], at+"/"+k)...)
		}
	case []any:
		for i, el := range x {
			out = append(out, stringPointers(el, fmt.Sprintf("%s/%d", at, i))...)
		}
	}
	return out
}

// schemaStrings lists the top-level members of an operation's request
// body schema that hold a string or an array of strings.
func schemaStrings(e *env, method, path string) []string {
	op := e.srv.Doc().Paths.Find(path).GetOperation(method)
	sch := op.RequestBody.Value.Content.Get("application/json").Schema.Value
	var out []string
	for name, p := range sch.Properties {
		v := p.Value
		if v.Type.Is("array") && v.Items != nil {
			v = v.Items.Value
		}
		if v.Type.Is("string") {
			out = append(out, name)
		}
	}
	slices.Sort(out)
	return out
}

// TestBaseBodiesHoldEveryString: every base body sets every string member
// its schema has at the top level, so that the hostile tests below reach
// each one (nested strings are reached through the bodies that set them).
func TestBaseBodiesHoldEveryString(t *testing.T) {
	e := newEnv(t)
	cases := bodyCases(e)
	for _, k := range bodyRoutes(e) {
		method, path, _ := strings.Cut(k, " ")
		body := generic(t, cases[k]().body)
		for _, name := range schemaStrings(e, method, path) {
			if _, ok := body[name]; !ok {
				t.Errorf("%s: the base body has no %q", k, name)
			}
		}
	}
}

// TestUnstorableStringsRefused: U+0000 (which PostgreSQL's text cannot
// hold) and invalid UTF-8 in any string of any body — every string of
// every route's base body, stored or not, nested ones too — are 400s
// naming the field, on create and update, and nothing is half-written:
// the change feed, the keys, the webhook endpoints and (where the path
// can be read) the resource or list at the path are byte for byte as
// before, and each base body is accepted afterwards.
func TestUnstorableStringsRefused(t *testing.T) {
	e := newEnv(t)
	cases := bodyCases(e)
	admin := e.keyA[service.RoleAdmin]
	count := func(path string) int {
		var l struct{ Items []any }
		e.want(e.do("GET", path, admin, nil), 200).json(t, &l)
		return len(l.Items)
	}
	read := func(path string) (int, []byte) {
		r := e.do("GET", path, admin, nil)
		return r.StatusCode, r.body
	}
	for _, k := range bodyRoutes(e) {
		t.Run(k, func(t *testing.T) {
			c := cases[k]()
			method, _, _ := strings.Cut(k, " ")
			m := generic(t, c.body)
			ptrs := stringPointers(m, "")
			if len(ptrs) == 0 {
				t.Skipf("%s: the base body has no strings", k) // stock levels, quotes by id only
			}
			changes, keys, hooks := e.changeCount(), count("/v1/api-keys"), count("/v1/webhook-endpoints")
			status, before := read(c.path)
			for _, p := range ptrs {
				for _, bad := range []string{`"a\u0000b"`, `"\u0000"`, "\"a\xffb\"", "\"\xc3\"", "\"\xed\xa0\x80\""} {
					res := e.do(method, c.path, c.key, string(setAt(t, m, p, bad)), c.hdr...)
					if strings.HasSuffix(k, "/batch") && res.StatusCode == 200 {
						refusedAt(t, res, p) // a wheel's fault is its slot's
						continue
					}
					wantProblemAt(t, res, 400, p)
				}
			}
			if n := e.changeCount(); n != changes {
				t.Errorf("refused bodies wrote %d changes", n-changes)
			}
			if count("/v1/api-keys") != keys || count("/v1/webhook-endpoints") != hooks {
				t.Errorf("refused bodies wrote keys or endpoints")
			}
			if status == 200 {
				if _, after := read(c.path); !bytes.Equal(after, before) {
					t.Errorf("GET %s changed:\n%s\n%s", c.path, before, after)
				}
			}
			e.want(e.do(method, c.path, c.key, string(render(m, "", "", "", "")), c.hdr...), c.ok)
		})
	}
	for _, bad := range []string{"%00", "a%00b", "%FF", "%C3"} {
		wantProblemAt(t, e.do("GET", "/v1/builds?external_ref="+bad, admin, nil), 400, "query:external_ref")
		wantProblemAt(t, e.do("GET", "/v1/parts?sku="+bad, admin, nil), 400, "query:sku")
	}
}

// TestNumbersOutOfRange: a number beyond a double's range is a 400 naming
// the member, with its array index, in words for the integrator.
func TestNumbersOutOfRange(t *testing.T) {
	e := newEnv(t)
	cases := bodyCases(e)
	for k, p := range map[string]string{
		"PUT /v1/parts/{id}/stock":      "/levels/0/quantity",
		"POST /v1/tension-conversions":  "/readings/1",
		"POST /v1/spoke-lengths":        "/target_tension_n",
		"POST /v1/builds":               "/spec/target_tension_n",
		"PATCH /v1/tools/{id}":          "/unit_mm",
		"POST /v1/compatibility-checks": "/rim/erd_mm",
	} {
		c := cases[k]()
		method, _, _ := strings.Cut(k, " ")
		m := generic(t, c.body)
		for _, n := range []string{"1e400", "-1e400"} {
			r := e.do(method, c.path, c.key, string(setAt(t, m, p, n)), c.hdr...)
			wantProblemAt(t, r, 400, p)
		}
	}
}

// cleanDetail fails when a problem's detail or messages name an internal
// step, a constraint or the decoder instead of speaking to the integrator.
func cleanDetail(t *testing.T, p api.Problem) {
	t.Helper()
	texts := []string{p.Detail}
	for _, f := range p.Errors {
		texts = append(texts, f.Message)
	}
	for _, s := range texts {
		for _, bad := range []string{"get ", "Get ", "list ", "List ", "update ", "Update ", "create ", "Create ", "put ", "Put ",
			"_key", "_fkey", "json", "JSON value of type", "Go ", "pgx", "SQL", "constraint"} {
			if strings.Contains(s, bad) {
				t.Errorf("%q names an internal step or the decoder (%q)", s, bad)
			}
		}
	}
}

// TestProblemDetailsSpeakToTheIntegrator: not found, stale and missing
// If-Match, conflicts and schema errors inside arrays say what is wrong
// with the request, by field pointer with array indexes.
func TestProblemDetailsSpeakToTheIntegrator(t *testing.T) {
	e := newEnv(t)
	w, admin := e.keyA[service.RoleWrite], e.keyA[service.RoleAdmin]
	s := e.newShop(10)
	for _, path := range []string{"/v1/builds/", "/v1/parts/", "/v1/quotes/", "/v1/tools/", "/v1/calibrations/", "/v1/locations/", "/v1/webhook-endpoints/"} {
		p := e.want(e.do("GET", path+uuid.NewString(), admin, nil), 404).problem(t)
		cleanDetail(t, p)
		if !strings.HasPrefix(p.Detail, "No ") {
			t.Errorf("GET %s…: detail %q", path, p.Detail)
		}
	}
	cleanDetail(t, e.want(e.do("POST", "/v1/tension-conversions", w, map[string]any{"calibration_id": uuid.New(), "spoke": steel(2.0), "readings": []float64{300}}), 404).problem(t))
	p := "/v1/parts/" + s.tyre.String()
	cleanDetail(t, e.want(e.do("PATCH", p, w, map[string]any{"name": "x"}), 428).problem(t))
	cleanDetail(t, e.want(e.do("PATCH", p, w, map[string]any{"name": "x"}, "If-Match", `"stale"`), 412).problem(t))
	// A duplicate SKU is the integrator's to mend: named, no constraint.
	e.want(e.do("PATCH", p, w, map[string]any{"sku": "TYRE-DUP"}, "If-Match", "*"), 200)
	tyre2 := "/v1/parts/" + s.rim.String()
	cleanDetail(t, e.want(e.do("PATCH", tyre2, w, map[string]any{"sku": "TYRE-DUP"}, "If-Match", "*"), 422).problem(t))
	id, _ := buildFixture(nil)(e)
	r := e.want(e.do("PATCH", "/v1/builds/"+id.String(), w, map[string]any{"status": "done"}, "If-Match", "*"), 409).problem(t)
	cleanDetail(t, r)
	if r.Detail != "A build cannot move from draft to done." {
		t.Errorf("conflict detail %q", r.Detail)
	}
	// Schema errors inside arrays carry the element's index.
	st := "/v1/parts/" + s.tyre.String() + "/stock"
	for body, ptr := range map[string]string{
		`{"levels": [{"location_id": "` + s.loc.String() + `", "quantity": 1}, {"location_id": "` + s.loc.String() + `", "quantity": "many"}]}`:               "/levels/1/quantity",
		`{"levels": [{"location_id": "` + s.loc.String() + `", "quantity": 1}, {"location_id": "` + s.loc.String() + `", "quantity": -1}]}`:                   "/levels/1/quantity",
		`{"levels": [{"location_id": "` + s.loc.String() + `", "quantity": 1}, {"location_id": "` + s.loc.String() + `", "quantity": 99999999999999999999}]}`: "/levels/1/quantity",
		`{"levels": [{"location_id": "` + s.loc.String() + `", "quantity": 1}, {"location_id": "nope", "quantity": 1}]}`:                                      "/levels/1/location_id",
		`{"levels": [{"location_id": "` + s.loc.String() + `", "quantity": 1}, {"location_id": "` + s.loc.String() + `", "colour": 1}]}`:                      "/levels/1/colour",
	} {
		res := e.do("PUT", st, w, body, "If-Match", "*")
		wantProblemAt(t, res, 400, ptr)
		cleanDetail(t, res.problem(t))
	}
}

// TestQueryStringsChecked: on every /v1 route a query parameter the
// operation does not declare, a declared one given twice and a malformed
// %-escape are 400s naming the parameter, before anything else is judged
// (so any id and no body will do); pretty is taken everywhere.
func TestQueryStringsChecked(t *testing.T) {
	e := newEnv(t)
	admin := e.keyA[service.RoleAdmin]
	for _, r := range e.srv.Routes() {
		if !strings.HasPrefix(r.Path, "/v1/") {
			continue
		}
		path := strings.Replace(r.Path, "{id}", uuid.NewString(), 1)
		t.Run(r.Method+" "+r.Path, func(t *testing.T) {
			wantProblemAt(t, e.do(r.Method, path+"?colour=red", admin, nil), 400, "query:colour")
			wantProblemAt(t, e.do(r.Method, path+"?Limit=1", admin, nil), 400, "query:Limit")
			wantProblemAt(t, e.do(r.Method, path+"?colour=%zz", admin, nil), 400, "query:colour")
			wantProblemAt(t, e.do(r.Method, path+"?pretty&pretty", admin, nil), 400, "query:pretty")
			op := e.srv.Doc().Paths.Find(r.Path).GetOperation(r.Method)
			for _, p := range op.Parameters {
				if p.Value.In != "query" {
					continue
				}
				name := p.Value.Name
				wantProblemAt(t, e.do(r.Method, path+"?"+name+"=1&"+name+"=2", admin, nil), 400, "query:"+name)
				wantProblemAt(t, e.do(r.Method, path+"?"+name+"=%zz", admin, nil), 400, "query:"+name)
			}
		})
	}
	e.want(e.do("GET", "/v1/me?pretty", admin, nil), 200)
	e.want(e.do("GET", "/v1/builds?limit=1&pretty=1", admin, nil), 200)
}

// TestWrongMethodIs405: a /v1 path of the spec asked with a method it does
// not take answers 405 with Allow listing the ones it takes; a path that is
// not the spec's stays 404.
func TestWrongMethodIs405(t *testing.T) {
	e := newEnv(t)
	admin := e.keyA[service.RoleAdmin]
	for _, c := range []struct{ method, path, allow string }{
		{"GET", "/v1/spoke-lengths", "POST"},
		{"DELETE", "/v1/builds", "GET, POST"},
		{"PATCH", "/v1/builds", "GET, POST"}, // not /v1/builds/{id} with an empty id
		{"PUT", "/v1/locations/" + uuid.NewString(), "GET, PATCH"},
		{"TRACE", "/v1/me", "GET"},
		{"OPTIONS", "/v1/parts/" + uuid.NewString() + "/stock", "GET, PUT"},
	} {
		r := e.want(e.do(c.method, c.path, admin, nil), 405)
		r.problem(t)
		if got := r.Header.Get("Allow"); got != c.allow {
			t.Errorf("%s %s: Allow %q, want %q", c.method, c.path, got, c.allow)
		}
	}
	e.want(e.do("GET", "/v1/no-such-thing", admin, nil), 404).problem(t)
}
