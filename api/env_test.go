package api_test

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"io"
	"log/slog"
	"maps"
	"net/http"
	"net/http/httptest"
	"slices"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/getkin/kin-openapi/openapi3filter"
	"github.com/getkin/kin-openapi/routers"
	"github.com/getkin/kin-openapi/routers/legacy"
	"github.com/google/uuid"
	"github.com/jackc/pgx/v5/pgxpool"

	"wheelbench/api"
	"wheelbench/service"
	"wheelbench/store"
	"wheelbench/store/storetest"
)

// env is the real stack over a fresh database, served by httptest.
type env struct {
	t      testing.TB
	srv    *api.Server
	http   *httptest.Server
	svc    *service.Service
	st     *store.Store
	pool   *pgxpool.Pool
	router routers.Router
	// keys of organisation A by role, and an admin key of organisation B
	keyA map[service.Role]string
	keyB string
	orgA uuid.UUID
	orgB uuid.UUID
	// errLog holds the server's error-level log lines.
	errLog *lockedBuffer
}

// lockedBuffer is a bytes.Buffer safe for the server's goroutines.
type lockedBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (l *lockedBuffer) Write(p []byte) (int, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.Write(p)
}

func (l *lockedBuffer) String() string {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.String()
}

func newEnv(t *testing.T) *env {
	t.Helper()
	return newEnvPool(t, storetest.Pool(t))
}

// newEnvB is newEnv for benchmarks.
func newEnvB(b *testing.B) *env {
	b.Helper()
	return newEnvPool(b, storetest.Pool(b))
}

func newEnvPool(t testing.TB, pool *pgxpool.Pool, opts ...func(*api.Config)) *env {
	t.Helper()
	st := store.New(pool)
	svc := service.New(st, nil)
	errLog := &lockedBuffer{}
	cfg := api.Config{Service: svc, Logger: slog.New(slog.NewTextHandler(io.MultiWriter(tlog{t}, errLog), &slog.HandlerOptions{Level: slog.LevelError}))}
	for _, o := range opts {
		o(&cfg)
	}
	srv, err := api.New(cfg)
	if err != nil {
		t.Fatal(err)
	}
	router, err := legacy.NewRouter(srv.Doc())
	if err != nil {
		t.Fatal(err)
	}
	e := &env{t: t, srv: srv, svc: svc, st: st, pool: pool, router: router, keyA: map[service.Role]string{}, errLog: errLog}
	e.http = httptest.NewServer(srv.Handler())
	t.Cleanup(e.http.Close)
	ctx := context.Background()
	oa, ka, err := svc.CreateOrganisation(ctx, "Organisation A (test)")
	if err != nil {
		t.Fatal(err)
	}
	e.orgA, e.keyA[service.RoleAdmin] = oa.ID, ka.Secret
	for _, r := range []service.Role{service.RoleRead, service.RoleWrite} {
		k, err := svc.CreateAPIKey(ctx, oa.ID, service.NewKeyInput{Role: r, Name: string(r)})
		if err != nil {
			t.Fatal(err)
		}
		e.keyA[r] = k.Secret
	}
	ob, kb, err := svc.CreateOrganisation(ctx, "Organisation B (test)")
	if err != nil {
		t.Fatal(err)
	}
	e.orgB, e.keyB = ob.ID, kb.Secret
	return e
}

// tlog sends the server's error log lines to the test log.
type tlog struct{ t testing.TB }

func (w tlog) Write(b []byte) (int, error) { w.t.Log(strings.TrimSpace(string(b))); return len(b), nil }

// response is a finished exchange, already validated against the spec.
type response struct {
	*http.Response
	body []byte
}

func (r response) json(t testing.TB, v any) {
	t.Helper()
	if err := json.Unmarshal(r.body, v); err != nil {
		t.Fatalf("decode %s: %v\n%s", r.Request.URL.Path, err, r.body)
	}
}

// problem decodes a problem+json body.
func (r response) problem(t testing.TB) api.Problem {
	t.Helper()
	if ct := r.Header.Get("Content-Type"); ct != "application/problem+json" {
		t.Fatalf("%s %s: content type %q, want application/problem+json\n%s", r.Request.Method, r.Request.URL.Path, ct, r.body)
	}
	var p api.Problem
	r.json(t, &p)
	if p.Status != r.StatusCode {
		t.Fatalf("problem status %d, response %d", p.Status, r.StatusCode)
	}
	return p
}

// do sends a request with the key (none when empty) and a body: a string
// is sent as is, anything else as JSON. hdr are name, value pairs; an
// empty value removes the header (Content-Type included). Every response is validated against
// the OpenAPI document: status, headers and body.
func (e *env) do(method, path, key string, body any, hdr ...string) response {
	e.t.Helper()
	var rd io.Reader
	var sent []byte
	switch b := body.(type) {
	case nil:
	case string:
		sent = []byte(b)
	case []byte:
		sent = b
	default:
		j, err := json.Marshal(b)
		if err != nil {
			e.t.Fatal(err)
		}
		sent = j
	}
	if body != nil {
		rd = bytes.NewReader(sent)
	}
	req, err := http.NewRequest(method, e.http.URL+path, rd)
	if err != nil {
		e.t.Fatal(err)
	}
	if rd != nil {
		req.Header.Set("Content-Type", "application/json")
	}
	if key != "" {
		req.Header.Set("Authorization", "Bearer "+key)
	}
	for i := 0; i+1 < len(hdr); i += 2 {
		if hdr[i+1] == "" {
			req.Header.Del(hdr[i]) // "" sends no such header at all
			continue
		}
		req.Header.Set(hdr[i], hdr[i+1])
	}
	res, err := e.http.Client().Do(req)
	if err != nil {
		e.t.Fatal(err)
	}
	defer res.Body.Close()
	b, err := io.ReadAll(res.Body)
	if err != nil {
		e.t.Fatal(err)
	}
	e.validate(req, res, b)
	if res.StatusCode < 300 && !strings.HasPrefix(path, "/v1/spoke-lengths") {
		e.validateAccepted(req, sent)
	}
	return response{Response: res, body: b}
}

// validate checks one response against the spec. A route the spec lacks
// may only answer 404 or 405.
func (e *env) validate(req *http.Request, res *http.Response, body []byte) {
	e.t.Helper()
	vreq := req.Clone(context.Background())
	vreq.Body = http.NoBody
	route, params, err := e.router.FindRoute(vreq)
	if err == nil && slices.Contains(slices.Collect(maps.Values(params)), "") {
		// The router matches /v1/builds to /v1/builds/{id} with an empty
		// id: not the spec's path (the server says so too).
		err = errors.New("empty path parameter")
	}
	if err != nil {
		if res.StatusCode != http.StatusNotFound && res.StatusCode != http.StatusMethodNotAllowed {
			e.t.Fatalf("%s %s is not in the spec but answered %d", req.Method, req.URL.Path, res.StatusCode)
		}
		if ct := res.Header.Get("Content-Type"); ct != "application/problem+json" {
			e.t.Fatalf("%s %s: %d with content type %q", req.Method, req.URL.Path, res.StatusCode, ct)
		}
		return
	}
	in := &openapi3filter.ResponseValidationInput{
		RequestValidationInput: &openapi3filter.RequestValidationInput{Request: vreq, PathParams: params, Route: route,
			Options: &openapi3filter.Options{AuthenticationFunc: openapi3filter.NoopAuthenticationFunc}},
		Status: res.StatusCode,
		Header: res.Header,
		Options: &openapi3filter.Options{IncludeResponseStatus: true, MultiError: true,
			AuthenticationFunc: openapi3filter.NoopAuthenticationFunc},
	}
	in.SetBodyBytes(body)
	if err := openapi3filter.ValidateResponse(context.Background(), in); err != nil {
		e.t.Fatalf("%s %s → %d does not match the spec: %v\nbody: %.2000s", req.Method, req.URL.Path, res.StatusCode, err, body)
	}
}

// validateAccepted checks that a request the service accepted is one the
// spec accepts too: routes that judge bodies themselves (SpecCheckOnError)
// must never let through what the spec refuses. (The spoke-length routes
// have their own agreement test.)
func (e *env) validateAccepted(req *http.Request, body []byte) {
	e.t.Helper()
	if !strings.HasPrefix(req.URL.Path, "/v1/") {
		return
	}
	check := req.Clone(context.Background())
	check.Body = io.NopCloser(bytes.NewReader(body))
	route, params, err := e.router.FindRoute(check)
	if err != nil {
		e.t.Fatalf("%s %s was accepted but is not in the spec", req.Method, req.URL.Path)
	}
	in := &openapi3filter.RequestValidationInput{Request: check, PathParams: params, Route: route,
		Options: &openapi3filter.Options{AuthenticationFunc: openapi3filter.NoopAuthenticationFunc}}
	if err := openapi3filter.ValidateRequest(context.Background(), in); err != nil {
		e.t.Fatalf("%s %s was accepted, but the spec refuses the request: %v\nbody: %.1000s", req.Method, req.URL.Path, err, body)
	}
}

func (e *env) want(r response, status int) response {
	e.t.Helper()
	if r.StatusCode != status {
		e.t.Fatalf("%s %s: status %d, want %d\n%s", r.Request.Method, r.Request.URL.Path, r.StatusCode, status, r.body)
	}
	return r
}

// settle waits until every transaction of the database server that began
// before it was called has ended. The change feed serves only changes below
// the server's oldest running transaction (its snapshot xmin), and other
// test binaries share the server, so a count of the feed is complete only
// after this.
func (e *env) settle() {
	e.t.Helper()
	ctx := context.Background()
	var now uint64
	if err := e.pool.QueryRow(ctx, `SELECT pg_current_xact_id()::text::numeric::bigint`).Scan(&now); err != nil {
		e.t.Fatal(err)
	}
	deadline := time.Now().Add(30 * time.Second)
	for {
		var xmin uint64
		if err := e.pool.QueryRow(ctx, `SELECT pg_snapshot_xmin(pg_current_snapshot())::text::numeric::bigint`).Scan(&xmin); err != nil {
			e.t.Fatal(err)
		}
		if xmin > now {
			return
		}
		if time.Now().After(deadline) {
			e.t.Fatalf("transactions older than %d still run after 30 s (xmin %d)", now, xmin)
		}
		time.Sleep(10 * time.Millisecond)
	}
}
