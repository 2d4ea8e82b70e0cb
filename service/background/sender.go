package background

import (
	"bytes"
	"context"
	"fmt"
	"io"
	"net"
	"net/http"
	"net/netip"
	"syscall"
	"time"

	"wheelbench/service/webhook"
)

// DefaultWebhookTimeout bounds one delivery: connect, TLS, request and
// response headers and the drained body.
const DefaultWebhookTimeout = 10 * time.Second

// webhookUserAgent names us to receivers.
const webhookUserAgent = "wheelbench-webhooks/1"

// webhookDrainLimit is how much of a response body is read (and discarded)
// so the connection can be reused; receivers answer with a status only.
const webhookDrainLimit = 64 << 10

// HTTPSender POSTs signed webhook messages: the outbound HTTP client of the
// dispatcher (the service's own HTTP layer is api/, for requests coming
// in). It never follows redirects,
// ignores proxy settings from the environment, and checks every address it
// connects to (after DNS resolution, at connect time) with
// webhook.CheckAddr, so a host name that resolves, or re-resolves, to a
// private address is refused before any connection is made. Safe for
// concurrent use.
type HTTPSender struct {
	client       *http.Client
	allowPrivate bool
	// Test hooks: skipURLCheck lets a test reach the dialer with a URL
	// CheckURL would refuse; afterCheck sees every address the dialer is
	// about to connect to, after CheckAddr passed it.
	skipURLCheck bool
	afterCheck   func(netip.AddrPort) error
}

// NewHTTPSender returns a sender. allowPrivate lifts the refusal of
// loopback, private and link-local destinations (on-premises receivers,
// tests); timeout <= 0 means DefaultWebhookTimeout.
func NewHTTPSender(allowPrivate bool, timeout time.Duration) *HTTPSender {
	if timeout <= 0 {
		timeout = DefaultWebhookTimeout
	}
	s := &HTTPSender{allowPrivate: allowPrivate}
	dialer := &net.Dialer{Timeout: timeout, KeepAlive: 30 * time.Second, Control: s.control}
	transport := &http.Transport{
		Proxy:                 nil, // a proxy would make the dialer check the proxy, not the receiver
		DialContext:           dialer.DialContext,
		ForceAttemptHTTP2:     true,
		MaxIdleConns:          100,
		MaxIdleConnsPerHost:   4,
		IdleConnTimeout:       90 * time.Second,
		TLSHandshakeTimeout:   timeout,
		ResponseHeaderTimeout: timeout,
		ExpectContinueTimeout: time.Second,
	}
	s.client = &http.Client{
		Transport: transport,
		Timeout:   timeout,
		CheckRedirect: func(*http.Request, []*http.Request) error {
			return http.ErrUseLastResponse
		},
	}
	return s
}

// control runs after DNS resolution, before connect, for every address
// tried: the one check that holds against DNS rebinding.
func (s *HTTPSender) control(network, address string, _ syscall.RawConn) error {
	if network != "tcp4" && network != "tcp6" {
		return fmt.Errorf("webhook: refusing network %q", network)
	}
	ap, err := netip.ParseAddrPort(address)
	if err != nil {
		return fmt.Errorf("webhook: refusing unparsable address %q: %w", address, err)
	}
	if err := webhook.CheckAddr(ap.Addr(), s.allowPrivate); err != nil {
		return err
	}
	if s.afterCheck != nil {
		return s.afterCheck(ap)
	}
	return nil
}

// Send POSTs body to url with the three Standard Webhooks headers of h,
// Content-Type application/json and our User-Agent. It returns the
// response status (a redirect's 3xx included, as redirects are not
// followed) and a nil error whenever a response arrived; the body is read
// up to a small limit and discarded. The error is non-nil when no response
// came: a *field.Error when url fails webhook.CheckURL, an error
// wrapping *webhook.AddrError when a resolved address is refused, a
// timeout, or any other transport failure.
func (s *HTTPSender) Send(ctx context.Context, url string, h webhook.HeaderSet, body []byte) (int, error) {
	if !s.skipURLCheck {
		if err := webhook.CheckURL(url, s.allowPrivate); err != nil {
			return 0, err
		}
	}
	req, err := http.NewRequestWithContext(ctx, http.MethodPost, url, bytes.NewReader(body))
	if err != nil {
		return 0, err
	}
	for k, v := range h.Map() {
		req.Header.Set(k, v)
	}
	req.Header.Set("Content-Type", "application/json")
	req.Header.Set("User-Agent", webhookUserAgent)
	resp, err := s.client.Do(req)
	if err != nil {
		return 0, err
	}
	defer resp.Body.Close()
	_, _ = drain(resp.Body) // the status arrived; a body cut short does not change it
	return resp.StatusCode, nil
}

// drain reads at most webhookDrainLimit bytes of r and discards them.
func drain(r io.Reader) (int64, error) {
	return io.Copy(io.Discard, io.LimitReader(r, webhookDrainLimit))
}
