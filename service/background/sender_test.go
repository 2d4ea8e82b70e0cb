package background

import (
	"bytes"
	"context"
	"errors"
	"io"
	"net"
	"net/http"
	"net/http/httptest"
	"net/netip"
	"strconv"
	"sync/atomic"
	"testing"
	"time"

	"wheelbench/service/field"
	"wheelbench/service/webhook"
)

// Safety: every test here talks only to loopback servers it starts itself.
// guard is installed on every sender under test: it runs in the dialer's
// Control after webhook.CheckAddr, before connect, and refuses (and fails
// the test) for any non-loopback address, so a bug in CheckAddr can never
// make a test connect elsewhere.
func guard(t *testing.T, s *HTTPSender) *atomic.Int64 {
	t.Helper()
	var calls atomic.Int64
	s.afterCheck = func(ap netip.AddrPort) error {
		calls.Add(1)
		if !ap.Addr().Unmap().IsLoopback() {
			t.Errorf("dialer was about to connect to %s, which is not loopback", ap)
			return errors.New("test guard: not loopback")
		}
		return nil
	}
	return &calls
}

// loopbackServer starts an httptest server (it listens on 127.0.0.1) and
// counts the connections it accepts.
func loopbackServer(t *testing.T, h http.Handler) (*httptest.Server, *atomic.Int64) {
	t.Helper()
	var conns atomic.Int64
	srv := httptest.NewUnstartedServer(h)
	srv.Config.ConnState = func(_ net.Conn, st http.ConnState) {
		if st == http.StateNew {
			conns.Add(1)
		}
	}
	srv.Start()
	t.Cleanup(srv.Close)
	if ap := netip.MustParseAddrPort(srv.Listener.Addr().String()); !ap.Addr().IsLoopback() {
		t.Fatalf("test server listens on %s, not loopback", ap)
	}
	return srv, &conns
}

func signed(t *testing.T, body []byte) ([]byte, webhook.HeaderSet) {
	t.Helper()
	s, err := webhook.NewSecret()
	if err != nil {
		t.Fatal(err)
	}
	key, err := webhook.ParseSecret(s)
	if err != nil {
		t.Fatal(err)
	}
	return key, webhook.Headers(key, "msg_test1", time.Now(), body)
}

func TestWebhookSenderDeliversWhenPrivateAllowed(t *testing.T) {
	body := []byte(`{"type":"build.created","data":{"id":"b1"}}`)
	key, h := signed(t, body)
	type seen struct {
		method, path, contentType, userAgent string
		headers                              webhook.HeaderSet
		body                                 []byte
	}
	got := make(chan seen, 1)
	srv, _ := loopbackServer(t, http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		b, _ := io.ReadAll(r.Body)
		got <- seen{r.Method, r.URL.Path, r.Header.Get("Content-Type"), r.Header.Get("User-Agent"),
			webhook.HeaderSetFrom(r.Header.Get), b}
		w.WriteHeader(http.StatusNoContent)
	}))
	s := NewHTTPSender(true, 5*time.Second)
	calls := guard(t, s)
	status, err := s.Send(context.Background(), srv.URL+"/hooks/in", h, body)
	if err != nil || status != http.StatusNoContent {
		t.Fatalf("Send = %d, %v; want 204, nil", status, err)
	}
	r := <-got
	if r.method != http.MethodPost || r.path != "/hooks/in" || r.contentType != "application/json" ||
		r.userAgent != webhookUserAgent || !bytes.Equal(r.body, body) {
		t.Errorf("receiver saw %s %s, Content-Type %q, User-Agent %q, body %q", r.method, r.path, r.contentType, r.userAgent, r.body)
	}
	// The receiver's side of the Standard Webhooks scheme accepts what arrived.
	if err := webhook.Verify(key, r.headers, r.body, time.Now(), 0); err != nil {
		t.Errorf("Verify at the receiver: %v (headers %+v)", err, r.headers)
	}
	if calls.Load() == 0 {
		t.Error("the dialer's Control was never consulted")
	}
}

// With allowPrivate false, URLs naming refused destinations fail CheckURL
// before any request: no dial, no connection. The 10.x and 169.254.x
// addresses are never dialled (the guard would fail the test).
func TestWebhookSenderRefusesPrivateURLs(t *testing.T) {
	srv, conns := loopbackServer(t, http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		t.Errorf("request reached the loopback server: %s", r.URL)
	}))
	port := netip.MustParseAddrPort(srv.Listener.Addr().String()).Port()
	p := ":" + strconv.Itoa(int(port))
	s := NewHTTPSender(false, 2*time.Second)
	calls := guard(t, s)
	_, h := signed(t, []byte(`{}`))
	for _, url := range []string{
		"http://127.0.0.1" + p + "/",  // loopback (RFC 1122)
		"http://[::1]" + p + "/",      // loopback (RFC 4291)
		"http://10.0.0.1/",            // private-use (RFC 1918)
		"http://169.254.169.254/",     // link-local (RFC 3927)
		"http://localhost" + p + "/",  // localhost name (RFC 6761)
		"http://[::ffff:127.0.0.1]/",  // IPv4-mapped loopback (RFC 4291)
		"http://2130706433" + p + "/", // 127.0.0.1 as one number
	} {
		status, err := s.Send(context.Background(), url, h, []byte(`{}`))
		var fe *field.Error
		if !errors.As(err, &fe) || fe.Pointer != "/url" || status != 0 {
			t.Errorf("Send(%s) = %d, %v; want 0 and a field error at /url", url, status, err)
		}
	}
	if n := calls.Load(); n != 0 {
		t.Errorf("the dialer was reached %d times, want 0", n)
	}
	if n := conns.Load(); n != 0 {
		t.Errorf("the loopback server accepted %d connections, want 0", n)
	}
}

// With the URL check bypassed, the dialer's Control alone refuses the
// resolved address at connect time (what stops DNS rebinding): a name that
// resolves to loopback ("localhost"), and IP literals, even with a server
// listening there.
func TestWebhookSenderDialerRefusesResolvedAddresses(t *testing.T) {
	srv, conns := loopbackServer(t, http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		t.Errorf("request reached the loopback server: %s", r.URL)
	}))
	p := ":" + strconv.Itoa(int(netip.MustParseAddrPort(srv.Listener.Addr().String()).Port()))
	s := NewHTTPSender(false, 2*time.Second)
	s.skipURLCheck = true
	calls := guard(t, s)
	_, h := signed(t, []byte(`{}`))
	for _, url := range []string{
		"http://localhost" + p + "/", // resolves to 127.0.0.1 and/or ::1 (loopback, RFC 1122 / RFC 4291)
		"http://127.0.0.1" + p + "/", // loopback (RFC 1122)
		"http://[::1]" + p + "/",     // loopback (RFC 4291)
		"http://10.0.0.1:80/",        // private-use (RFC 1918): refused before connect
		"http://169.254.169.254:80/", // link-local (RFC 3927): refused before connect
		"http://[fd00::1]:80/",       // unique local (RFC 4193): refused before connect
		"http://[::ffff:10.0.0.1]/",  // IPv4-mapped private-use: refused before connect
	} {
		status, err := s.Send(context.Background(), url, h, []byte(`{}`))
		var ae *webhook.AddrError
		if !errors.As(err, &ae) || status != 0 {
			t.Errorf("Send(%s) = %d, %v; want 0 and an error wrapping *webhook.AddrError", url, status, err)
		}
	}
	if n := calls.Load(); n != 0 {
		t.Errorf("the guard after CheckAddr ran %d times, want 0 (CheckAddr refused first)", n)
	}
	if n := conns.Load(); n != 0 {
		t.Errorf("the loopback server accepted %d connections, want 0", n)
	}
}

// The Control function itself, without dialling: the addresses a hostile
// DNS answer could name.
func TestWebhookSenderControl(t *testing.T) {
	s := NewHTTPSender(false, 0)
	for _, tt := range []struct {
		network, address string
		ok               bool
	}{
		{"tcp4", "10.1.2.3:443", false},             // private-use (RFC 1918)
		{"tcp4", "169.254.169.254:80", false},       // link-local (RFC 3927)
		{"tcp4", "100.64.1.1:443", false},           // shared address space (RFC 6598)
		{"tcp6", "[fe80::1%eth0]:443", false},       // link-local (RFC 4291)
		{"tcp6", "[::ffff:192.168.0.1]:443", false}, // IPv4-mapped private-use (RFC 4291 + RFC 1918)
		{"tcp4", "0.0.0.0:443", false},              // this network (RFC 1122)
		{"tcp4", "45.77.100.20:443", true},          // public
		{"tcp6", "[2a0c:5a80::1]:443", true},        // public
		{"udp4", "45.77.100.20:443", false},         // not TCP
		{"tcp4", "not-an-address", false},
	} {
		err := s.control(tt.network, tt.address, nil)
		if (err == nil) != tt.ok {
			t.Errorf("control(%s, %s) = %v, want allowed %v", tt.network, tt.address, err, tt.ok)
		}
	}
}

func TestWebhookSenderDoesNotFollowRedirects(t *testing.T) {
	var targetHits atomic.Int64
	mux := http.NewServeMux()
	mux.HandleFunc("/in", func(w http.ResponseWriter, r *http.Request) {
		http.Redirect(w, r, "/elsewhere", http.StatusFound)
	})
	mux.HandleFunc("/elsewhere", func(w http.ResponseWriter, r *http.Request) {
		targetHits.Add(1)
	})
	srv, _ := loopbackServer(t, mux)
	s := NewHTTPSender(true, 5*time.Second)
	guard(t, s)
	_, h := signed(t, []byte(`{}`))
	status, err := s.Send(context.Background(), srv.URL+"/in", h, []byte(`{}`))
	if err != nil || status != http.StatusFound {
		t.Errorf("Send = %d, %v; want 302, nil", status, err)
	}
	if n := targetHits.Load(); n != 0 {
		t.Errorf("the redirect target was hit %d times, want 0", n)
	}
}

func TestWebhookSenderTimeout(t *testing.T) {
	release := make(chan struct{})
	srv, _ := loopbackServer(t, http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		select {
		case <-release:
		case <-r.Context().Done():
		}
	}))
	t.Cleanup(func() { close(release) }) // runs before srv.Close, so Close does not wait on the handler
	const timeout = 300 * time.Millisecond
	s := NewHTTPSender(true, timeout)
	guard(t, s)
	_, h := signed(t, []byte(`{}`))
	start := time.Now()
	status, err := s.Send(context.Background(), srv.URL, h, []byte(`{}`))
	elapsed := time.Since(start)
	var ne net.Error
	if !errors.As(err, &ne) || !ne.Timeout() || status != 0 {
		t.Errorf("Send to a handler that never answers = %d, %v; want 0 and a timeout error", status, err)
	}
	if elapsed < timeout || elapsed > 5*time.Second {
		t.Errorf("Send took %v, want about the %v timeout", elapsed, timeout)
	}
}

func TestWebhookSenderDrainsLargeResponse(t *testing.T) {
	big := bytes.Repeat([]byte("x"), 1<<20)
	srv, _ := loopbackServer(t, http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		_, _ = w.Write(big)
	}))
	s := NewHTTPSender(true, 5*time.Second)
	guard(t, s)
	_, h := signed(t, []byte(`{}`))
	if status, err := s.Send(context.Background(), srv.URL, h, []byte(`{}`)); err != nil || status != http.StatusOK {
		t.Errorf("Send = %d, %v; want 200, nil", status, err)
	}
	n, err := drain(bytes.NewReader(big))
	if err != nil || n != webhookDrainLimit {
		t.Errorf("drain(1 MiB) read %d bytes, %v; want %d", n, err, webhookDrainLimit)
	}
}

func TestWebhookSenderConfiguration(t *testing.T) {
	s := NewHTTPSender(false, 0)
	if s.client.Timeout != DefaultWebhookTimeout || DefaultWebhookTimeout != 10*time.Second {
		t.Errorf("default timeout %v, want 10 s", s.client.Timeout)
	}
	tr, ok := s.client.Transport.(*http.Transport)
	if !ok || tr.Proxy != nil {
		t.Error("the transport must not take a proxy from the environment: the dialer would check the proxy, not the receiver")
	}
}
