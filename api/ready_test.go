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

	"github.com/google/uuid"
	"github.com/jackc/pgx/v5"
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

// newProxiedEnv is newEnv with the database reached through a cutProxy.
func newProxiedEnv(t *testing.T) (*env, *cutProxy) {
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
	return e, proxy
}

// TestReadyzFollowsTheDatabase: /readyz is 503 while the database cannot be
// reached and 200 again once it can, with no restart; /healthz stays 200;
// /v1 requests fail fast with 503 problem+json meanwhile.
func TestReadyzFollowsTheDatabase(t *testing.T) {
	e, proxy := newProxiedEnv(t)
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

// TestDatabaseOutageUnderLoad: clients keep creating builds while the
// database goes away and comes back. While it is away requests fail fast
// with 503 problem+json and /readyz is 503; afterwards the same process
// serves again, and every build that was acknowledged (201) is stored.
func TestDatabaseOutageUnderLoad(t *testing.T) {
	e, proxy := newProxiedEnv(t)
	s := e.newShop(1000)
	w := e.keyA[service.RoleWrite]

	var mu sync.Mutex
	acked := map[uuid.UUID]bool{}
	var slowest time.Duration
	statuses := map[int]int{}
	stop := make(chan struct{})
	var wg sync.WaitGroup
	for range 4 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for {
				select {
				case <-stop:
					return
				default:
				}
				start := time.Now()
				r := e.do("POST", "/v1/builds", w, map[string]any{"spec": s.spec(), "location_id": s.loc})
				d := time.Since(start)
				mu.Lock()
				statuses[r.StatusCode]++
				if r.StatusCode == 201 {
					var b struct{ ID uuid.UUID }
					r.json(t, &b)
					acked[b.ID] = true
				} else if r.StatusCode == 503 {
					r.problem(t)
					slowest = max(slowest, d)
				} else {
					t.Errorf("status %d during the outage test: %s", r.StatusCode, r.body)
				}
				mu.Unlock()
			}
		}()
	}
	time.Sleep(300 * time.Millisecond)
	proxy.setDown(true)
	time.Sleep(200 * time.Millisecond)
	e.want(e.do("GET", "/readyz", "", nil), 503)
	time.Sleep(500 * time.Millisecond)
	proxy.setDown(false)
	deadline := time.Now().Add(15 * time.Second)
	for e.do("GET", "/readyz", "", nil).StatusCode != 200 {
		if time.Now().After(deadline) {
			t.Fatal("/readyz did not come back")
		}
		time.Sleep(50 * time.Millisecond)
	}
	time.Sleep(300 * time.Millisecond)
	close(stop)
	wg.Wait()
	t.Logf("statuses %v; slowest 503 took %v", statuses, slowest)
	if statuses[503] == 0 || statuses[201] == 0 {
		t.Fatalf("the outage was not seen: %v", statuses)
	}
	if slowest > 3*time.Second {
		t.Errorf("a 503 took %v: failing should be fast", slowest)
	}
	var stored int
	ids := make([]uuid.UUID, 0, len(acked))
	for id := range acked {
		ids = append(ids, id)
	}
	if err := e.st.Pool().QueryRow(context.Background(), `SELECT count(*) FROM builds WHERE id = ANY($1)`, ids).Scan(&stored); err != nil {
		t.Fatal(err)
	}
	if stored != len(acked) {
		t.Fatalf("%d of %d acknowledged builds are stored", stored, len(acked))
	}
}

// TestDatabaseGoneIs503: when the service's database is dropped under it
// (connections cut, then new ones refused with "database does not
// exist"), and when it refuses connections, every route that needs it
// answers 503 with Retry-After — never 500 — and nothing is logged as an
// internal error. A computation whose key is cached still answers.
func TestDatabaseGoneIs503(t *testing.T) {
	for _, how := range []string{"dropped", "not accepting connections"} {
		t.Run(how, func(t *testing.T) {
			pool := storetest.Pool(t)
			e := newEnvPool(t, pool)
			s := e.newShop(10)
			admin := pool.Config().ConnConfig.Copy()
			name := admin.Database
			admin.Database = "postgres"
			conn, err := pgx.ConnectConfig(context.Background(), admin)
			if err != nil {
				t.Fatal(err)
			}
			defer conn.Close(context.Background())
			ident := pgx.Identifier{name}.Sanitize()
			switch how {
			case "dropped":
				_, err = conn.Exec(context.Background(), "DROP DATABASE "+ident+" WITH (FORCE)")
			default:
				_, err = conn.Exec(context.Background(), "ALTER DATABASE "+ident+" ALLOW_CONNECTIONS false")
				if err == nil {
					_, err = conn.Exec(context.Background(), "SELECT pg_terminate_backend(pid) FROM pg_stat_activity WHERE datname = $1", name)
				}
				t.Cleanup(func() {
					_, _ = conn.Exec(context.Background(), "ALTER DATABASE "+ident+" ALLOW_CONNECTIONS true")
				})
			}
			if err != nil {
				t.Fatal(err)
			}
			w := e.keyA[service.RoleWrite]
			for _, r := range []struct {
				method, path, key string
				body              any
			}{
				{"GET", "/readyz", "", nil},
				{"GET", "/v1/me", w, nil},
				{"GET", "/v1/locations", w, nil},
				{"GET", "/v1/builds", w, nil},
				{"GET", "/v1/changes", w, nil},
				{"POST", "/v1/builds", w, map[string]any{"spec": s.spec(), "location_id": s.loc}},
				{"POST", "/v1/locations", e.keyA[service.RoleAdmin], map[string]any{"name": "late bench"}},
				{"GET", "/v1/parts/" + s.hub.String(), w, nil},
				{"GET", "/v1/me", e.keyB, nil}, // a key not yet in the cache: authenticating needs the database
			} {
				res := e.want(e.do(r.method, r.path, r.key, r.body), 503)
				res.problem(t)
				if res.Header.Get("Retry-After") == "" {
					t.Errorf("%s %s: 503 without Retry-After", r.method, r.path)
				}
			}
			e.want(e.do("POST", "/v1/spoke-lengths", w, contractBody), 200)
			if l := e.errLog.String(); l != "" {
				t.Errorf("logged as internal errors:\n%s", l)
			}
		})
	}
}
