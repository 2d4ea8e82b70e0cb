package browsertest

import (
	"io"
	"net"
	"net/http"
	"strings"
	"sync"
	"time"
)

// Request is one request the browser made.
type Request struct {
	// Method is the HTTP method (CONNECT for a tunnel the browser asked for).
	Method string
	// URL is the absolute URL, or host:port for a CONNECT.
	URL string
	// Host is host:port, the port filled in from the scheme when absent.
	Host string
	// Allowed tells whether Host was one the test allowed; a request that
	// was not allowed got a 403 from the proxy and never left the machine.
	Allowed bool
	// Seen says which witness recorded it: "proxy" (every connection the
	// browser opened goes through the recording proxy) or "page" (the
	// page's own DevTools network log, which also lists schemes that never
	// reach a proxy, such as file:).
	Seen string
}

// recorder keeps the requests and the allowed hosts.
type recorder struct {
	mu      sync.Mutex
	allowed map[string]bool
	reqs    []Request
}

func (r *recorder) allow(hostport string) {
	r.mu.Lock()
	defer r.mu.Unlock()
	r.allowed[strings.ToLower(hostport)] = true
}

func (r *recorder) isAllowed(hostport string) bool {
	r.mu.Lock()
	defer r.mu.Unlock()
	return r.allowed[strings.ToLower(hostport)]
}

func (r *recorder) add(q Request) {
	r.mu.Lock()
	defer r.mu.Unlock()
	r.reqs = append(r.reqs, q)
}

func (r *recorder) all() []Request {
	r.mu.Lock()
	defer r.mu.Unlock()
	return append([]Request(nil), r.reqs...)
}

// hostPort is host:port with the scheme's default port when none is given.
func hostPort(host, scheme string) string {
	if _, _, err := net.SplitHostPort(host); err == nil {
		return strings.ToLower(host)
	}
	port := "80"
	switch scheme {
	case "https", "wss":
		port = "443"
	case "ftp":
		port = "21"
	}
	return strings.ToLower(net.JoinHostPort(strings.Trim(host, "[]"), port))
}

// proxy is the HTTP proxy the browser is told to use for everything,
// loopback included. It records every request, forwards those to allowed
// hosts and answers 403 to the rest without resolving or dialling them.
type proxy struct {
	rec       *recorder
	transport *http.Transport
}

func newProxy(rec *recorder) *proxy {
	return &proxy{rec: rec, transport: &http.Transport{
		Proxy:                 nil, // never chain to an environment proxy
		DialContext:           (&net.Dialer{Timeout: 10 * time.Second}).DialContext,
		ResponseHeaderTimeout: time.Minute,
		DisableCompression:    true,
	}}
}

func (p *proxy) ServeHTTP(w http.ResponseWriter, r *http.Request) {
	if r.Method == http.MethodConnect {
		p.connect(w, r)
		return
	}
	if !r.URL.IsAbs() {
		// A request for the proxy itself, not through it.
		http.Error(w, "browsertest proxy: not a proxy request", http.StatusBadRequest)
		return
	}
	hp := hostPort(r.URL.Host, r.URL.Scheme)
	ok := r.URL.Scheme == "http" && p.rec.isAllowed(hp)
	p.rec.add(Request{Method: r.Method, URL: r.URL.String(), Host: hp, Allowed: ok, Seen: "proxy"})
	if !ok {
		http.Error(w, "browsertest proxy: request outside the test server refused", http.StatusForbidden)
		return
	}
	out := r.Clone(r.Context())
	out.RequestURI = ""
	out.Header.Del("Proxy-Connection")
	out.Header.Del("Proxy-Authorization")
	resp, err := p.transport.RoundTrip(out)
	if err != nil {
		http.Error(w, "browsertest proxy: "+err.Error(), http.StatusBadGateway)
		return
	}
	defer resp.Body.Close()
	for k, vs := range resp.Header {
		for _, v := range vs {
			w.Header().Add(k, v)
		}
	}
	w.WriteHeader(resp.StatusCode)
	_, _ = io.Copy(w, resp.Body)
}

// connect tunnels to an allowed host (an https test server) and refuses
// any other.
func (p *proxy) connect(w http.ResponseWriter, r *http.Request) {
	hp := hostPort(r.Host, "https")
	ok := p.rec.isAllowed(hp)
	p.rec.add(Request{Method: r.Method, URL: r.Host, Host: hp, Allowed: ok, Seen: "proxy"})
	if !ok {
		http.Error(w, "browsertest proxy: tunnel outside the test server refused", http.StatusForbidden)
		return
	}
	hj, isHJ := w.(http.Hijacker)
	if !isHJ {
		http.Error(w, "browsertest proxy: cannot tunnel", http.StatusInternalServerError)
		return
	}
	upstream, err := net.DialTimeout("tcp", hp, 10*time.Second)
	if err != nil {
		http.Error(w, "browsertest proxy: "+err.Error(), http.StatusBadGateway)
		return
	}
	conn, buf, err := hj.Hijack()
	if err != nil {
		upstream.Close()
		return
	}
	_, _ = conn.Write([]byte("HTTP/1.1 200 Connection established\r\n\r\n"))
	go func() {
		_, _ = io.Copy(upstream, buf)
		upstream.Close()
	}()
	_, _ = io.Copy(conn, upstream)
	conn.Close()
}
