package main

import (
	"bufio"
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"net"
	"net/http"
	"os"
	"os/exec"
	"strings"
	"sync"
	"sync/atomic"
	"syscall"
	"testing"
	"time"

	"github.com/jackc/pgx/v5/pgxpool"

	"wheelbench/store/storetest"
)

// TestMain lets the test binary act as the wheelbench command, so that the
// crash test runs the real program (serve, admin) in child processes.
func TestMain(m *testing.M) {
	if os.Getenv("WHEELBENCH_TEST_AS_MAIN") == "1" {
		main()
		os.Exit(0)
	}
	os.Exit(m.Run())
}

// server is a child wheelbench serve process.
type server struct {
	cmd  *exec.Cmd
	addr string
	logs bytes.Buffer
}

func command(t *testing.T, dbURL string, extraEnv []string, args ...string) *exec.Cmd {
	t.Helper()
	exe, err := os.Executable()
	if err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command(exe, args...)
	cmd.Env = append(os.Environ(), "WHEELBENCH_TEST_AS_MAIN=1", "WHEELBENCH_DATABASE_URL="+dbURL, "WHEELBENCH_LOG_LEVEL=warn")
	cmd.Env = append(cmd.Env, extraEnv...)
	return cmd
}

func startServer(t *testing.T, dbURL, addr string) *server {
	t.Helper()
	s := &server{addr: addr}
	s.cmd = command(t, dbURL, []string{"WHEELBENCH_ADDR=" + addr}, "serve")
	s.cmd.Stdout, s.cmd.Stderr = &s.logs, &s.logs
	if err := s.cmd.Start(); err != nil {
		t.Fatal(err)
	}
	deadline := time.Now().Add(30 * time.Second)
	for {
		res, err := http.Get("http://" + addr + "/readyz")
		if err == nil {
			res.Body.Close()
			if res.StatusCode == 200 {
				return s
			}
		}
		if time.Now().After(deadline) {
			t.Fatalf("server did not become ready: %v\n%s", err, s.logs.String())
		}
		time.Sleep(50 * time.Millisecond)
	}
}

func freeAddr(t *testing.T) string {
	t.Helper()
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	defer ln.Close()
	return ln.Addr().String()
}

// buildBody is an invented 32-hole front wheel given inline.
func buildBody(location string, i int) []byte {
	b, _ := json.Marshal(map[string]any{
		"location_id":  location,
		"external_ref": fmt.Sprintf("ORDER-%04d", i),
		"spec": map[string]any{
			"spoke_count": 32,
			"hub": map[string]any{"holes": 32, "kind": "bicycle",
				"left":  map[string]any{"pcd_mm": 45, "center_to_flange_mm": 35, "hole_diameter_mm": 2.6, "thickness_mm": 3},
				"right": map[string]any{"pcd_mm": 45, "center_to_flange_mm": 35, "hole_diameter_mm": 2.6, "thickness_mm": 3}},
			"rim":     map[string]any{"holes": 32, "erd_mm": 601, "bsd_mm": 622, "inner_width_mm": 19, "hole_diameter_mm": 4.2, "spoke_hole_offset_mm": 0},
			"spoke":   map[string]any{"diameter_mm": 2.0, "head_diameter_mm": 4.0, "elbow_length_mm": 2.8, "thread": map[string]any{"diameter_mm": 2.0, "tpi": 56}},
			"nipple":  map[string]any{"thread": map[string]any{"diameter_mm": 2.0, "tpi": 56}, "shank_diameter_mm": 3.9, "head_diameter_mm": 5.6, "length_mm": 12},
			"crosses": map[string]any{"left": 3, "right": 3}, "target_tension_n": 1000,
			"stock": map[string]any{"increment_mm": 2},
		},
	})
	return b
}

// TestKillDuringBurstLosesAndDuplicatesNothing runs the real binary: a
// burst of 1,000 creating POSTs with idempotency keys, the server killed
// with SIGKILL midway and started again, every request retried until it
// gets its answer → exactly 1,000 builds, none twice.
func TestKillDuringBurstLosesAndDuplicatesNothing(t *testing.T) {
	dbURL := storetest.URL(t)
	out, err := command(t, dbURL, nil, "admin", "create-org", "--name", "Crash test shop").CombinedOutput()
	if err != nil {
		t.Fatalf("create-org: %v\n%s", err, out)
	}
	var key string
	sc := bufio.NewScanner(bytes.NewReader(out))
	for sc.Scan() {
		if k, ok := strings.CutPrefix(sc.Text(), "API key: "); ok {
			key = k
		}
	}
	if key == "" {
		t.Fatalf("no key in\n%s", out)
	}
	addr := freeAddr(t)
	srv := startServer(t, dbURL, addr)
	client := &http.Client{Timeout: 10 * time.Second}
	post := func(path string, body []byte, idem string) (int, []byte, error) {
		req, _ := http.NewRequest("POST", "http://"+addr+path, bytes.NewReader(body))
		req.Header.Set("Authorization", "Bearer "+key)
		req.Header.Set("Content-Type", "application/json")
		if idem != "" {
			req.Header.Set("Idempotency-Key", idem)
		}
		res, err := client.Do(req)
		if err != nil {
			return 0, nil, err
		}
		defer res.Body.Close()
		b, err := io.ReadAll(res.Body)
		return res.StatusCode, b, err
	}
	code, body, err := post("/v1/locations", []byte(`{"name":"Crash bench"}`), "")
	if err != nil || code != 201 {
		t.Fatalf("location: %d %v %s", code, err, body)
	}
	var loc struct{ ID string }
	_ = json.Unmarshal(body, &loc)

	const n = 1000
	var acked atomic.Int64
	killed := make(chan struct{})
	var killOnce sync.Once
	ids := make([]string, n) // the build id each request was answered with
	var mu sync.Mutex
	send := func(i int) (bool, error) {
		code, body, err := post("/v1/builds", buildBody(loc.ID, i), fmt.Sprintf("crash-%04d", i))
		if err != nil || code >= 500 || code == 409 {
			return false, err // not answered (or still in flight): retry later
		}
		if code != 201 {
			return false, fmt.Errorf("request %d: %d %s", i, code, body)
		}
		var b struct{ ID string }
		if err := json.Unmarshal(body, &b); err != nil {
			return false, err
		}
		mu.Lock()
		defer mu.Unlock()
		if ids[i] != "" && ids[i] != b.ID {
			return false, fmt.Errorf("request %d answered with build %s, earlier with %s", i, b.ID, ids[i])
		}
		ids[i] = b.ID
		return true, nil
	}

	// The burst: 16 clients; the server is killed after about 300 answers.
	work := make(chan int)
	var wg sync.WaitGroup
	failed := make(chan error, n)
	for range 16 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range work {
				if ok, err := send(i); ok {
					if acked.Add(1) == 300 {
						killOnce.Do(func() {
							_ = srv.cmd.Process.Signal(syscall.SIGKILL)
							close(killed)
						})
					}
				} else if err != nil && !isTransport(err) {
					failed <- err
				}
			}
		}()
	}
	for i := range n {
		work <- i
	}
	close(work)
	wg.Wait()
	select {
	case <-killed:
	default:
		t.Fatal("the burst finished before the server was killed")
	}
	_ = srv.cmd.Wait()
	close(failed)
	for err := range failed {
		t.Fatal(err)
	}
	before := acked.Load()
	t.Logf("answered before and around the kill: %d of %d", before, n)

	// Start again and retry every request, acknowledged or not.
	srv = startServer(t, dbURL, addr)
	defer func() { _ = srv.cmd.Process.Signal(syscall.SIGTERM); _ = srv.cmd.Wait() }()
	for i := range n {
		for attempt := 0; ; attempt++ {
			ok, err := send(i)
			if ok {
				break
			}
			if (err != nil && !isTransport(err)) || attempt > 50 {
				t.Fatalf("retry %d: %v", i, err)
			}
			time.Sleep(20 * time.Millisecond)
		}
	}

	pool, err := pgxpool.New(context.Background(), dbURL)
	if err != nil {
		t.Fatal(err)
	}
	defer pool.Close()
	var builds, refs int
	if err := pool.QueryRow(context.Background(), `SELECT count(*), count(DISTINCT external_ref) FROM builds`).Scan(&builds, &refs); err != nil {
		t.Fatal(err)
	}
	if builds != n || refs != n {
		t.Fatalf("%d builds with %d distinct refs after the crash and retries, want %d", builds, refs, n)
	}
	distinct := map[string]bool{}
	for _, id := range ids {
		distinct[id] = true
	}
	if len(distinct) != n {
		t.Fatalf("%d distinct build ids answered, want %d", len(distinct), n)
	}
}

// isTransport reports a connection-level failure (server gone), which a
// client answers by retrying.
func isTransport(err error) bool {
	if err == nil {
		return false
	}
	var ne net.Error
	if errors.As(err, &ne) {
		return true
	}
	s := err.Error()
	return strings.Contains(s, "connection refused") || strings.Contains(s, "EOF") || strings.Contains(s, "connection reset")
}

// TestSIGTERMDrainsInFlight: a request whose headers the server has read
// when SIGTERM arrives still gets its full answer; then the process exits 0.
func TestSIGTERMDrainsInFlight(t *testing.T) {
	dbURL := storetest.URL(t)
	out, err := command(t, dbURL, nil, "admin", "create-org", "--name", "Drain test shop").CombinedOutput()
	if err != nil {
		t.Fatalf("create-org: %v\n%s", err, out)
	}
	key := ""
	for _, line := range strings.Split(string(out), "\n") {
		if k, ok := strings.CutPrefix(line, "API key: "); ok {
			key = k
		}
	}
	addr := freeAddr(t)
	srv := startServer(t, dbURL, addr)
	body := []byte(`{"spoke_count": 32, "hub": {"left": {"pcd_mm": 45, "center_to_flange_mm": 36}, "right": {"pcd_mm": 45, "center_to_flange_mm": 18.5}}, "rim": {"erd_mm": 599}, "crosses": {"left": 3, "right": 3}}`)
	conn, err := net.Dial("tcp", addr)
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close()
	// Headers and half the body, then SIGTERM, then the rest.
	fmt.Fprintf(conn, "POST /v1/spoke-lengths HTTP/1.1\r\nHost: %s\r\nAuthorization: Bearer %s\r\nContent-Type: application/json\r\nContent-Length: %d\r\nConnection: close\r\n\r\n", addr, key, len(body))
	half := len(body) / 2
	if _, err := conn.Write(body[:half]); err != nil {
		t.Fatal(err)
	}
	time.Sleep(200 * time.Millisecond) // the server is now reading this request's body
	if err := srv.cmd.Process.Signal(syscall.SIGTERM); err != nil {
		t.Fatal(err)
	}
	time.Sleep(200 * time.Millisecond)
	if _, err := conn.Write(body[half:]); err != nil {
		t.Fatal(err)
	}
	res, err := http.ReadResponse(bufio.NewReader(conn), nil)
	if err != nil {
		t.Fatalf("in-flight request lost: %v\n%s", err, srv.logs.String())
	}
	b, _ := io.ReadAll(res.Body)
	if res.StatusCode != 200 || !strings.Contains(string(b), `"length_mm"`) {
		t.Fatalf("in-flight request: %d %s", res.StatusCode, b)
	}
	if err := srv.cmd.Wait(); err != nil {
		t.Fatalf("serve exited with %v after SIGTERM\n%s", err, srv.logs.String())
	}
}
