// Package browsertest renders the service's pages in a real headless
// Chromium for tests: print a URL to PDF on A4 or Letter, take a PNG
// screenshot at a given size, read a PDF's page count, page size and text,
// and prove that a page made no request except to the test server.
//
// The browser is Debian's chromium package at /usr/bin/chromium (or the
// binary WHEELBENCH_TEST_CHROMIUM names). A missing browser fails the test
// with a message saying how to get one: browser tests never skip. Each
// New starts its own browser process with a fresh, empty profile, driven
// through the DevTools protocol over a pipe (no debugging port is opened),
// and sends every request it makes, loopback included, through a recording
// HTTP proxy that forwards only to the hosts the test allowed.
//
// This package is for tests only; nothing outside _test.go files imports it.
package browsertest

import (
	"context"
	"errors"
	"fmt"
	"net"
	"net/http"
	"net/url"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"
)

// EnvChromium names the variable that points the tests at another Chromium
// binary than /usr/bin/chromium.
const EnvChromium = "WHEELBENCH_TEST_CHROMIUM"

// DefaultChromium is Debian's chromium package's launcher.
const DefaultChromium = "/usr/bin/chromium"

const howTo = `no Chromium for the browser tests. Install Debian's package
(apt-get install -y chromium), or set ` + EnvChromium + ` to a Chromium or
Chrome binary; bash .ci/run installs it when it is missing`

// Timeout bounds each operation (start, load, print, screenshot): generous,
// since CI machines are shared and the race detector slows the test side.
var Timeout = 90 * time.Second

// Browser is one running headless Chromium with its recording proxy.
type Browser struct {
	cmd    *exec.Cmd
	c      *cdp
	rec    *recorder // the pages' requests
	bg     *recorder // the browser's own background requests, all refused
	stderr *tail
	// pageProxy is the address of the proxy the pages use.
	pageProxy string
	exited    chan struct{}

	mu      sync.Mutex
	headers map[string]string
}

// locate finds the browser binary: getenv(EnvChromium), else
// DefaultChromium, else chromium on PATH. The error says how to get one.
func locate(getenv func(string) string) (string, error) {
	if p := getenv(EnvChromium); p != "" {
		if _, err := exec.LookPath(p); err != nil {
			return "", fmt.Errorf("%s=%s is not an executable: %v\n%s", EnvChromium, p, err, howTo)
		}
		return p, nil
	}
	if _, err := exec.LookPath(DefaultChromium); err == nil {
		return DefaultChromium, nil
	}
	if p, err := exec.LookPath("chromium"); err == nil {
		return p, nil
	}
	return "", errors.New(howTo)
}

// Flags are the command-line switches every test browser starts with,
// before the per-instance ones (profile directory, pipe, proxy).
var Flags = []string{
	"--headless",
	"--no-sandbox",
	"--disable-gpu",
	"--no-first-run",
	"--disable-background-networking",
	"--disable-component-update",
	"--disable-sync",
	"--disable-quic",
	"--no-default-browser-check",
	"--disable-extensions",
	"--disable-default-apps",
	"--disable-breakpad",
	"--disable-domain-reliability",
	"--disable-client-side-phishing-detection",
	"--metrics-recording-only",
	"--mute-audio",
	"--hide-scrollbars",
	"--force-color-profile=srgb",
	"--font-render-hinting=none",
	"--disable-features=NetworkTimeServiceQuerying,OptimizationHints,OptimizationHintsFetching,OptimizationGuideModelDownloading,Translate,MediaRouter,AutofillServerCommunication",
}

// New starts a browser for t and stops it when t ends. It fails t when no
// browser can be found or started.
func New(t testing.TB) *Browser {
	t.Helper()
	bin, err := locate(os.Getenv)
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	profile := filepath.Join(dir, "profile")
	if err := os.Mkdir(profile, 0o700); err != nil {
		t.Fatal(err)
	}

	// Two proxies: the pages' (each page opens in a browser context of its
	// own that uses it), which records and forwards to the allowed hosts,
	// and the browser's own, which gets the browser's background traffic
	// (time, update and account services that Chromium calls on its own)
	// and refuses all of it. So the pages' record holds exactly what the
	// pages asked for, and nothing leaves the machine either way.
	rec := &recorder{allowed: map[string]bool{}}
	bg := &recorder{allowed: map[string]bool{}}
	pageProxy := serveProxy(t, rec)
	bgProxy := serveProxy(t, bg)

	// The browser reads commands from fd 3 and writes to fd 4.
	cmdR, cmdW, err := os.Pipe()
	if err != nil {
		t.Fatal(err)
	}
	outR, outW, err := os.Pipe()
	if err != nil {
		t.Fatal(err)
	}
	args := append(append([]string{}, Flags...),
		"--user-data-dir="+profile,
		"--remote-debugging-pipe",
		"--proxy-server=http://"+bgProxy,
		"--proxy-bypass-list=<-loopback>",
		// Anything that tried to go around the proxy finds no host names.
		"--host-resolver-rules=MAP * ~NOTFOUND, EXCLUDE 127.0.0.1",
		"about:blank",
	)
	cmd := exec.Command(bin, args...)
	cmd.ExtraFiles = []*os.File{cmdR, outW}
	cmd.Env = append(os.Environ(),
		"HOME="+dir, "XDG_CONFIG_HOME="+filepath.Join(dir, "config"), "XDG_CACHE_HOME="+filepath.Join(dir, "cache"))
	cmd.SysProcAttr = &syscall.SysProcAttr{Setpgid: true}
	stderr := &tail{max: 16 << 10}
	cmd.Stdout, cmd.Stderr = stderr, stderr
	if err := cmd.Start(); err != nil {
		t.Fatalf("browsertest: start %s: %v\n%s", bin, err, howTo)
	}
	// The child holds its own copies of these ends.
	cmdR.Close()
	outW.Close()
	b := &Browser{cmd: cmd, c: newCDP(cmdW, outR), rec: rec, bg: bg, pageProxy: pageProxy, stderr: stderr, exited: make(chan struct{}), headers: map[string]string{}}
	go func() {
		_ = cmd.Wait()
		close(b.exited)
	}()
	t.Cleanup(func() {
		b.stop()
		if n := len(b.bg.all()); n > 0 {
			hosts := map[string]bool{}
			for _, r := range b.bg.all() {
				hosts[r.Host] = true
			}
			t.Logf("browsertest: the browser's own background requests, refused and not the pages': %d, to %v", n, sortedKeys(hosts))
		}
		cmdW.Close()
		outR.Close()
	})

	ctx, cancel := context.WithTimeout(context.Background(), Timeout)
	defer cancel()
	var ver struct {
		Product string `json:"product"`
	}
	if err := b.c.call(ctx, "", "Browser.getVersion", nil, &ver); err != nil {
		t.Fatalf("browsertest: %s did not answer: %v\nbrowser output:\n%s", bin, err, stderr)
	}
	t.Logf("browsertest: %s (%s)", ver.Product, bin)
	return b
}

// stop closes the browser politely, then kills its process group.
func (b *Browser) stop() {
	ctx, cancel := context.WithTimeout(context.Background(), 5*time.Second)
	_ = b.c.call(ctx, "", "Browser.close", nil, nil)
	cancel()
	select {
	case <-b.exited:
	case <-time.After(10 * time.Second):
	}
	// The renderer and helper processes are in the browser's group.
	_ = syscall.Kill(-b.cmd.Process.Pid, syscall.SIGKILL)
	<-b.exited
}

// Allow lets the browser reach the host (and port) of rawURL, e.g. an
// httptest server's URL. Every other destination is refused and recorded.
func (b *Browser) Allow(rawURL string) {
	u, err := url.Parse(rawURL)
	if err != nil || u.Host == "" {
		panic(fmt.Sprintf("browsertest: Allow(%q): not an absolute URL", rawURL))
	}
	b.rec.allow(hostPort(u.Host, u.Scheme))
}

// SetHeader adds a header to every request the browser's pages make from
// now on (an API key's Authorization, say). Requests to hosts that are not
// allowed never leave the machine, so the header goes nowhere else.
func (b *Browser) SetHeader(name, value string) {
	b.mu.Lock()
	defer b.mu.Unlock()
	b.headers[name] = value
}

// Requests returns every request recorded so far, in order, by the proxy
// and by the pages' own network logs.
func (b *Browser) Requests() []Request { return b.rec.all() }

// Outside returns the recorded requests to anything but an allowed host.
func (b *Browser) Outside() []Request {
	var out []Request
	for _, r := range b.rec.all() {
		if !r.Allowed {
			out = append(out, r)
		}
	}
	return out
}

// CheckSelfContained fails t for every request made so far to anything but
// an allowed host, and when no request reached an allowed host through the
// proxy at all (which would mean the proxy was not in the path and proves
// nothing).
func (b *Browser) CheckSelfContained(t testing.TB) {
	t.Helper()
	proxied := false
	for _, r := range b.rec.all() {
		if r.Allowed && r.Seen == "proxy" {
			proxied = true
		}
		if !r.Allowed {
			t.Errorf("the page made a request outside the test server: %s %s (seen by the %s)", r.Method, r.URL, r.Seen)
		}
	}
	if !proxied {
		t.Error("no request reached the test server through the recording proxy, so the check proves nothing")
	}
}

// Background returns the requests the browser made on its own, outside
// any page (all refused); for diagnosis only.
func (b *Browser) Background() []Request { return b.bg.all() }

// serveProxy starts a recording proxy on loopback for the test's life and
// returns its address.
func serveProxy(t testing.TB, rec *recorder) string {
	t.Helper()
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatalf("browsertest: proxy listener: %v", err)
	}
	srv := &http.Server{Handler: newProxy(rec), ReadHeaderTimeout: 10 * time.Second}
	go func() { _ = srv.Serve(ln) }()
	t.Cleanup(func() { _ = srv.Close() })
	return ln.Addr().String()
}

func sortedKeys(m map[string]bool) []string {
	out := make([]string, 0, len(m))
	for k := range m {
		out = append(out, k)
	}
	sort.Strings(out)
	return out
}

// tail keeps the last max bytes written to it.
type tail struct {
	mu  sync.Mutex
	max int
	buf []byte
}

func (w *tail) Write(p []byte) (int, error) {
	w.mu.Lock()
	defer w.mu.Unlock()
	w.buf = append(w.buf, p...)
	if len(w.buf) > w.max {
		w.buf = append([]byte(nil), w.buf[len(w.buf)-w.max:]...)
	}
	return len(p), nil
}

func (w *tail) String() string {
	w.mu.Lock()
	defer w.mu.Unlock()
	return strings.TrimSpace(string(w.buf))
}

// EnvArtifacts names the variable that, when set to a directory, makes Keep
// write the files a test renders there, for a person to look at.
const EnvArtifacts = "WHEELBENCH_TEST_ARTIFACTS"

// Keep writes data as name under $WHEELBENCH_TEST_ARTIFACTS, prefixed with
// the test's name, when that variable is set; otherwise it does nothing.
func Keep(t testing.TB, name string, data []byte) {
	t.Helper()
	dir := os.Getenv(EnvArtifacts)
	if dir == "" {
		return
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Errorf("browsertest: %v", err)
		return
	}
	file := filepath.Join(dir, strings.NewReplacer("/", "_", " ", "_").Replace(t.Name())+"-"+name)
	if err := os.WriteFile(file, data, 0o644); err != nil {
		t.Errorf("browsertest: %v", err)
		return
	}
	t.Logf("browsertest: kept %s", file)
}
