package api_test

import (
	"context"
	"io"
	"net"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/jackc/pgx/v5/pgxpool"

	"wheelbench/service"
	"wheelbench/store/storetest"
)

// cutProxy forwards TCP to a PostgreSQL server and can cut every
// connection and refuse new ones, as a database that stopped would.
type cutProxy struct {
	target string
	ln     net.Listener
	addr   string
	mu     sync.Mutex
	down   bool
	conns  map[net.Conn]bool
}

func newCutProxy(t *testing.T, target string) *cutProxy {
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	p := &cutProxy{target: target, ln: ln, addr: ln.Addr().String(), conns: map[net.Conn]bool{}}
	t.Cleanup(func() { ln.Close() })
	go p.accept()
	return p
}

func (p *cutProxy) accept() {
	for {
		c, err := p.ln.Accept()
		if err != nil {
			return
		}
		p.mu.Lock()
		down := p.down
		if !down {
			p.conns[c] = true
		}
		p.mu.Unlock()
		if down {
			c.Close()
			continue
		}
		go func() {
			up, err := net.Dial("tcp", p.target)
			if err != nil {
				c.Close()
				return
			}
			p.mu.Lock()
			p.conns[up] = true
			p.mu.Unlock()
			go func() { io.Copy(up, c); up.Close() }()
			io.Copy(c, up)
			c.Close()
		}()
	}
}

func (p *cutProxy) setDown(down bool) {
	p.mu.Lock()
	defer p.mu.Unlock()
	p.down = down
	if down {
		for c := range p.conns {
			c.Close()
		}
		p.conns = map[net.Conn]bool{}
	}
}

// TestReadyzFollowsTheDatabase: /readyz is 503 while the database cannot be
// reached and 200 again once it can, with no restart; /healthz stays 200;
// /v1 requests fail fast with 503 problem+json meanwhile.
func TestReadyzFollowsTheDatabase(t *testing.T) {
	url := storetest.URL(t)
	cfg, err := pgxpool.ParseConfig(url)
	if err != nil {
		t.Fatal(err)
	}
	proxy := newCutProxy(t, net.JoinHostPort(cfg.ConnConfig.Host, strconv.Itoa(int(cfg.ConnConfig.Port))))
	host, port, _ := net.SplitHostPort(proxy.addr)
	proxied := strings.NewReplacer("host="+cfg.ConnConfig.Host, "host="+host, "port="+strconv.Itoa(int(cfg.ConnConfig.Port)), "port="+port).Replace(url)
	pool, err := pgxpool.New(context.Background(), proxied)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(pool.Close)
	e := newEnvPool(t, pool)
	e.want(e.do("GET", "/readyz", "", nil), 200)

	proxy.setDown(true)
	start := time.Now()
	e.want(e.do("GET", "/readyz", "", nil), 503).problem(t)
	e.want(e.do("GET", "/healthz", "", nil), 200)
	// Writes fail while it is cut; a /v1 read with a cached key gets 503.
	if _, err := e.svc.CreateAPIKey(context.Background(), e.orgA, service.NewKeyInput{Role: service.RoleRead}); err == nil {
		t.Fatal("creating a key worked with the database cut")
	}
	e.want(e.do("GET", "/v1/locations", e.keyA[service.RoleRead], nil), 503).problem(t)
	if d := time.Since(start); d > 10*time.Second {
		t.Errorf("failing took %v; it should be fast", d)
	}

	proxy.setDown(false)
	deadline := time.Now().Add(15 * time.Second)
	for {
		r := e.do("GET", "/readyz", "", nil)
		if r.StatusCode == 200 {
			break
		}
		if time.Now().After(deadline) {
			t.Fatalf("/readyz still %d after the database came back", r.StatusCode)
		}
		time.Sleep(100 * time.Millisecond)
	}
	e.want(e.do("GET", "/v1/locations", e.keyA[service.RoleRead], nil), 200)
}
