package api_test

import (
	"bufio"
	"fmt"
	"io"
	"net"
	"net/http"
	"strings"
	"testing"
	"time"

	"wheelbench/api"
	"wheelbench/service"
	"wheelbench/store/storetest"
)

// rawExchange sends a request's head and then feeds its body by hand
// (send), declaring length bytes, and reads the answer, which is checked
// against the spec like every other.
func (e *env) rawExchange(path string, length int, send func(c *net.TCPConn)) response {
	e.t.Helper()
	conn, err := net.Dial("tcp", e.http.Listener.Addr().String())
	if err != nil {
		e.t.Fatal(err)
	}
	defer conn.Close()
	fmt.Fprintf(conn, "POST %s HTTP/1.1\r\nHost: test\r\nAuthorization: Bearer %s\r\nContent-Type: application/json\r\nContent-Length: %d\r\n\r\n",
		path, e.keyA[service.RoleAdmin], length)
	done := make(chan struct{})
	go func() { defer close(done); send(conn.(*net.TCPConn)) }()
	req, _ := http.NewRequest("POST", e.http.URL+path, nil)
	_ = conn.SetReadDeadline(time.Now().Add(20 * time.Second))
	res, err := http.ReadResponse(bufio.NewReader(conn), req)
	if err != nil {
		e.t.Fatalf("%s: no answer: %v", path, err)
	}
	defer res.Body.Close()
	b, _ := io.ReadAll(res.Body)
	_ = conn.Close()
	<-done
	e.validate(req, res, b)
	return response{Response: res, body: b}
}

// TestShortAndSlowBodies: a body shorter than its Content-Length (the
// client then stops sending, or closes its side) and one trickled a byte
// at a time end in a 408 or 400 problem — never a 500 — on a route the
// spec validates, the build route that judges its own body first, and the
// spoke-length routes that read theirs themselves; none is logged as an
// internal error.
func TestShortAndSlowBodies(t *testing.T) {
	e := newEnvPool(t, storetest.Pool(t), func(c *api.Config) { c.RequestTimeout = 800 * time.Millisecond })
	body := `{"name": "Side bench", "timezone": "UTC"}`
	for _, path := range []string{"/v1/locations", "/v1/builds", "/v1/spoke-lengths", "/v1/spoke-lengths/batch", "/v1/compatibility-checks"} {
		t.Run(path, func(t *testing.T) {
			start := time.Now()
			// Part of the body, then silence: the request timeout ends it.
			r := e.rawExchange(path, len(body)+100, func(c *net.TCPConn) { io.WriteString(c, body) })
			e.want(r, http.StatusRequestTimeout).problem(t)
			if d := time.Since(start); d > 10*time.Second {
				t.Errorf("the answer took %v", d)
			}
			// A byte every 150 ms, never finishing in time.
			r = e.rawExchange(path, len(body), func(c *net.TCPConn) {
				for i := 0; i < len(body); i++ {
					if _, err := c.Write([]byte{body[i]}); err != nil {
						return
					}
					time.Sleep(150 * time.Millisecond)
				}
			})
			e.want(r, http.StatusRequestTimeout).problem(t)
			// Part of the body, then the client closes its side.
			r = e.rawExchange(path, len(body)+100, func(c *net.TCPConn) {
				io.WriteString(c, body)
				_ = c.CloseWrite()
			})
			p := e.want(r, http.StatusBadRequest).problem(t)
			if !strings.Contains(p.Detail, "Content-Length") {
				t.Errorf("detail %q does not say the body was short", p.Detail)
			}
		})
	}
	if l := e.errLog.String(); l != "" {
		t.Errorf("logged as internal errors:\n%s", l)
	}
}
