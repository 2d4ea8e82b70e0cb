package api_test

import (
	"context"
	"encoding/json"
	"errors"
	"io"
	"net/http"
	"net/http/httptest"
	"net/netip"
	"net/url"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"wheelbench/service"
	"wheelbench/service/background"
	"wheelbench/service/webhook"
)

// Safety: every webhook test sends only to receivers it starts itself on
// 127.0.0.1 (httptest.NewServer listens on loopback), through
// loopbackSender, which refuses — and fails the test for — any URL that is
// not one of them.

// received is one request a receiver got.
type received struct {
	id     string // webhook-id
	body   []byte
	status int // what the receiver answered
	event  service.WebhookEvent
}

// receiver is a webhook receiver on 127.0.0.1 that checks every request's
// signature with webhook.Verify (the package's own check of the Standard
// Webhooks scheme) and answers with answer(n), n counting requests from 1.
type receiver struct {
	t      *testing.T
	srv    *httptest.Server
	mu     sync.Mutex
	key    []byte
	got    []received
	bad    []string // signature or body failures
	n      atomic.Int64
	answer func(n int64) int
	// hold, when set (under mu), is waited on before answering.
	hold chan struct{}
	// arrived is signalled (non-blocking) on every request.
	arrived chan struct{}
}

func newReceiver(t *testing.T, answer func(n int64) int) *receiver {
	t.Helper()
	rv := &receiver{t: t, answer: answer, arrived: make(chan struct{}, 1)}
	rv.srv = httptest.NewServer(http.HandlerFunc(rv.serve))
	t.Cleanup(rv.srv.Close)
	if ap := netip.MustParseAddrPort(rv.srv.Listener.Addr().String()); !ap.Addr().IsLoopback() {
		t.Fatalf("receiver listens on %s, not loopback", ap)
	}
	return rv
}

// URL is where endpoints should point.
func (rv *receiver) URL() string { return rv.srv.URL + "/hooks" }

// setSecret gives the receiver the endpoint's secret (known only after the
// endpoint is created).
func (rv *receiver) setSecret(secret string) {
	key, err := webhook.ParseSecret(secret)
	if err != nil {
		rv.t.Fatal(err)
	}
	rv.mu.Lock()
	rv.key = key
	rv.mu.Unlock()
}

func (rv *receiver) serve(w http.ResponseWriter, r *http.Request) {
	body, err := io.ReadAll(r.Body)
	n := rv.n.Add(1)
	rv.mu.Lock()
	hold := rv.hold
	rv.mu.Unlock()
	if hold != nil {
		select {
		case rv.arrived <- struct{}{}:
		default:
		}
		<-hold
	}
	status := rv.answer(n)
	rv.mu.Lock()
	rec := received{id: r.Header.Get(webhook.HeaderID), body: body, status: status}
	switch {
	case err != nil:
		rv.bad = append(rv.bad, "read body: "+err.Error())
	case r.Method != http.MethodPost || r.URL.Path != "/hooks" || r.Header.Get("Content-Type") != "application/json":
		rv.bad = append(rv.bad, r.Method+" "+r.URL.Path+" "+r.Header.Get("Content-Type"))
	case rv.key == nil:
		rv.bad = append(rv.bad, "request before the secret was known")
	default:
		if err := webhook.Verify(rv.key, webhook.HeaderSetFrom(r.Header.Get), body, time.Now(), 0); err != nil {
			rv.bad = append(rv.bad, "signature: "+err.Error())
		}
		if err := json.Unmarshal(body, &rec.event); err != nil {
			rv.bad = append(rv.bad, "body: "+err.Error())
		} else if rec.event.ID != rec.id {
			rv.bad = append(rv.bad, "webhook-id "+rec.id+" differs from the body's id "+rec.event.ID)
		}
	}
	rv.got = append(rv.got, rec)
	rv.mu.Unlock()
	if hold == nil {
		select {
		case rv.arrived <- struct{}{}:
		default:
		}
	}
	w.WriteHeader(status)
}

// setHold makes requests wait for ch before they are answered (nil: answer at once).
func (rv *receiver) setHold(ch chan struct{}) {
	rv.mu.Lock()
	rv.hold = ch
	rv.mu.Unlock()
}

// snapshot returns a copy of what arrived so far.
func (rv *receiver) snapshot() []received {
	rv.mu.Lock()
	defer rv.mu.Unlock()
	return append([]received(nil), rv.got...)
}

// checkSignatures fails the test if any request was malformed or badly signed.
func (rv *receiver) checkSignatures() {
	rv.t.Helper()
	rv.mu.Lock()
	defer rv.mu.Unlock()
	for _, b := range rv.bad {
		rv.t.Errorf("receiver: %s", b)
	}
}

// loopbackSender delivers through the real api.WebhookSender (private
// destinations allowed, as tests need) but only to the test's receivers.
type loopbackSender struct {
	t       *testing.T
	allowed map[string]bool // scheme://host:port of receivers started by the test
	inner   *background.HTTPSender
}

func newLoopbackSender(t *testing.T, rvs ...*receiver) *loopbackSender {
	s := &loopbackSender{t: t, allowed: map[string]bool{}, inner: background.NewHTTPSender(true, 2*time.Second)}
	for _, rv := range rvs {
		s.allowed[rv.srv.URL] = true
	}
	return s
}

func (s *loopbackSender) Send(ctx context.Context, raw string, h webhook.HeaderSet, body []byte) (int, error) {
	u, err := url.Parse(raw)
	if err != nil || !s.allowed[u.Scheme+"://"+u.Host] || !strings.HasPrefix(u.Host, "127.0.0.1:") {
		s.t.Errorf("the dispatcher tried to send to %q, which is not a receiver this test started", raw)
		return 0, errors.New("test guard: not a test receiver")
	}
	return s.inner.Send(ctx, raw, h, body)
}

// outcomes counts a dispatcher's recorded outcomes.
type outcomes struct {
	mu sync.Mutex
	n  map[background.Outcome]int
}

func (o *outcomes) WebhookOutcome(x background.Outcome) {
	o.mu.Lock()
	defer o.mu.Unlock()
	if o.n == nil {
		o.n = map[background.Outcome]int{}
	}
	o.n[x]++
}

func (o *outcomes) get(x background.Outcome) int {
	o.mu.Lock()
	defer o.mu.Unlock()
	return o.n[x]
}

// fastRetry retries after milliseconds, never real backoffs.
var fastRetry = webhook.RetryConfig{Base: 5 * time.Millisecond, Factor: 2, MaxDelay: 40 * time.Millisecond, Window: time.Minute}

// createEndpoint creates an endpoint through the API and tells rv its secret.
func (e *env) createEndpoint(rv *receiver, events ...string) (id, etag string) {
	e.t.Helper()
	var out struct {
		ID     string
		Secret string
	}
	r := e.want(e.do("POST", "/v1/webhook-endpoints", e.keyA[service.RoleAdmin],
		map[string]any{"url": rv.URL(), "events": events, "description": "test receiver"}), 201)
	r.json(e.t, &out)
	rv.setSecret(out.Secret)
	return out.ID, r.Header.Get("ETag")
}

// createLocations makes n location.created changes through the API and
// returns their ids.
func (e *env) createLocations(n int, name string) []string {
	e.t.Helper()
	ids := make([]string, 0, n)
	for range n {
		var l struct{ ID string }
		e.want(e.do("POST", "/v1/locations", e.keyA[service.RoleAdmin], map[string]any{"name": name}), 201).json(e.t, &l)
		ids = append(ids, l.ID)
	}
	return ids
}

// deliveryCounts returns the organisation's outbox rows by status.
func (e *env) deliveryCounts() map[string]int {
	e.t.Helper()
	rows, err := e.st.Pool().Query(context.Background(), `SELECT status, count(*) FROM webhook_deliveries GROUP BY status`)
	if err != nil {
		e.t.Fatal(err)
	}
	defer rows.Close()
	out := map[string]int{}
	for rows.Next() {
		var s string
		var n int
		if err := rows.Scan(&s, &n); err != nil {
			e.t.Fatal(err)
		}
		out[s] = n
	}
	return out
}

// until polls cond every few milliseconds for at most d.
func until(t *testing.T, d time.Duration, what string, cond func() bool) {
	t.Helper()
	deadline := time.Now().Add(d)
	for !cond() {
		if time.Now().After(deadline) {
			t.Fatalf("gave up after %v waiting for %s", d, what)
		}
		time.Sleep(5 * time.Millisecond)
	}
}
