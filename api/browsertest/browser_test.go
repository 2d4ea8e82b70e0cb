package browsertest

import (
	"bytes"
	"fmt"
	"image"
	"image/png"
	"math"
	"net/http"
	"net/http/httptest"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
)

// pages is a test server with the pages the helper is tried on; hits
// counts the requests it answered, by path.
type pages struct {
	*httptest.Server
	mu   sync.Mutex
	hits map[string]int
}

func newPages(t *testing.T, extra map[string]string) *pages {
	t.Helper()
	body := map[string]string{
		"/self": `<!doctype html><html><head><meta charset="utf-8"><style>body{font-family:sans-serif}</style></head>
<body><h1>Self-contained</h1><img alt="dot" src="data:image/png;base64,iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAQAAAC1HAwCAAAAC0lEQVR42mNk+A8AAQUBAScY42YAAAAASUVORK5CYII="></body></html>`,
		"/external": `<!doctype html><html><body><p>One outside image:</p><img alt="x" src="http://example.invalid/x.png"></body></html>`,
		"/two-pages": `<!doctype html><html><head><style>.sheet{break-after:page}</style></head>
<body><div class="sheet">first sheet of two</div><div>second sheet of two</div></body></html>`,
		"/colour": `<!doctype html><html><head><style>html,body{margin:0;height:100%;background:#fff}
#left{position:absolute;left:0;top:0;width:50%;height:100%;background:#ff0000}</style></head><body><div id="left"></div></body></html>`,
	}
	for k, v := range extra {
		body[k] = v
	}
	p := &pages{hits: map[string]int{}}
	p.Server = httptest.NewServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		p.mu.Lock()
		p.hits[r.URL.Path]++
		p.mu.Unlock()
		b, ok := body[r.URL.Path]
		if !ok {
			http.NotFound(w, r)
			return
		}
		w.Header().Set("Content-Type", "text/html; charset=utf-8")
		fmt.Fprint(w, b)
	}))
	t.Cleanup(p.Close)
	return p
}

func (p *pages) count(path string) int {
	p.mu.Lock()
	defer p.mu.Unlock()
	return p.hits[path]
}

// errRecorder is a testing.TB whose Errorf is recorded instead of failing.
type errRecorder struct {
	testing.TB
	errs []string
}

func (r *errRecorder) Helper() {}
func (r *errRecorder) Errorf(format string, args ...any) {
	r.errs = append(r.errs, fmt.Sprintf(format, args...))
}
func (r *errRecorder) Error(args ...any) { r.errs = append(r.errs, fmt.Sprint(args...)) }

// TestExternalImageIsFlagged: a page with <img src="http://example.invalid/x.png">
// is caught by the proxy (and the page's network log), refused, and makes
// CheckSelfContained fail.
func TestExternalImageIsFlagged(t *testing.T) {
	srv := newPages(t, nil)
	b := New(t)
	b.Allow(srv.URL)
	if _, err := b.Screenshot(srv.URL+"/external", Viewport{Width: 320, Height: 200}); err != nil {
		t.Fatal(err)
	}
	seen := map[string]bool{}
	for _, r := range b.Outside() {
		if r.URL == "http://example.invalid/x.png" {
			seen[r.Seen] = true
		}
	}
	if !seen["proxy"] || !seen["page"] {
		t.Errorf("the outside image was not flagged by both witnesses (proxy %v, page %v); requests: %+v", seen["proxy"], seen["page"], b.Requests())
	}
	rec := &errRecorder{TB: t}
	b.CheckSelfContained(rec)
	if len(rec.errs) == 0 || !strings.Contains(strings.Join(rec.errs, "\n"), "example.invalid") {
		t.Errorf("CheckSelfContained did not fail on the outside image: %q", rec.errs)
	}
}

// TestOtherLoopbackPortIsFlagged: loopback is not exempt. An image from a
// second local server that the test did not allow is refused by the proxy
// and that server never sees a request.
func TestOtherLoopbackPortIsFlagged(t *testing.T) {
	other := newPages(t, nil)
	srv := newPages(t, map[string]string{
		"/loopback": `<!doctype html><html><body><img alt="y" src="` + other.URL + `/self"></body></html>`,
	})
	b := New(t)
	b.Allow(srv.URL)
	if _, err := b.PrintPDF(srv.URL+"/loopback", A4); err != nil {
		t.Fatal(err)
	}
	flagged := false
	for _, r := range b.Outside() {
		if r.URL == other.URL+"/self" && r.Seen == "proxy" {
			flagged = true
		}
	}
	if !flagged {
		t.Errorf("the request to the other local server was not flagged by the proxy; requests: %+v", b.Requests())
	}
	if n := other.count("/self"); n != 0 {
		t.Errorf("the other local server answered %d requests; the proxy should have refused them", n)
	}
}

// TestSelfContainedPagePasses: a page with only inline style and a data:
// image makes no request but its own, which went through the proxy.
func TestSelfContainedPagePasses(t *testing.T) {
	srv := newPages(t, nil)
	b := New(t)
	b.Allow(srv.URL)
	if _, err := b.PrintPDF(srv.URL+"/self", Letter); err != nil {
		t.Fatal(err)
	}
	b.CheckSelfContained(t)
	proxied := false
	for _, r := range b.Requests() {
		if r.URL == srv.URL+"/self" && r.Seen == "proxy" && r.Allowed {
			proxied = true
		}
	}
	if !proxied {
		t.Errorf("the page itself did not go through the proxy; requests: %+v", b.Requests())
	}
	if n := srv.count("/self"); n != 1 {
		t.Errorf("the test server answered /self %d times, want 1", n)
	}
}

// TestPrintTwoPages: a document with one forced page break prints on two
// sheets of the size asked for, each with its own text. Sheet sizes in
// points (1/72 in): A4 is 210 × 297 mm = 595.28 × 841.89 pt (ISO 216);
// Letter is 8.5 × 11 in = 612 × 792 pt.
func TestPrintTwoPages(t *testing.T) {
	srv := newPages(t, nil)
	b := New(t)
	b.Allow(srv.URL)
	for _, c := range []struct {
		paper Paper
		w, h  float64
	}{
		{A4, 210 / 25.4 * 72, 297 / 25.4 * 72},
		{Letter, 612, 792},
		{A4.Rotated(), 297 / 25.4 * 72, 210 / 25.4 * 72},
	} {
		pdf, err := b.PrintPDF(srv.URL+"/two-pages", c.paper)
		if err != nil {
			t.Fatal(err)
		}
		info, err := ReadPDFInfo(pdf)
		if err != nil {
			t.Fatal(err)
		}
		if info.Pages != 2 {
			t.Errorf("%s: %d pages, want 2", c.paper.Name, info.Pages)
		}
		if math.Abs(info.WidthPt-c.w) > 1 || math.Abs(info.HeightPt-c.h) > 1 {
			t.Errorf("%s (landscape %v): page %.2f × %.2f pt, want %.2f × %.2f", c.paper.Name, c.paper.Landscape, info.WidthPt, info.HeightPt, c.w, c.h)
		}
		text, err := PDFText(pdf)
		if err != nil {
			t.Fatal(err)
		}
		sheets := strings.Split(strings.TrimRight(text, "\f\n "), "\f")
		if len(sheets) != 2 || !strings.Contains(sheets[0], "first sheet of two") || !strings.Contains(sheets[1], "second sheet of two") {
			t.Errorf("%s: text by page %q", c.paper.Name, sheets)
		}
	}
	b.CheckSelfContained(t)
}

// TestScreenshotSize: the PNG is the viewport times the scale, and shows
// the page: its left half red, its right half white.
func TestScreenshotSize(t *testing.T) {
	srv := newPages(t, nil)
	b := New(t)
	b.Allow(srv.URL)
	data, err := b.Screenshot(srv.URL+"/colour", Viewport{Width: 400, Height: 300, Scale: 2})
	if err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(bytes.NewReader(data))
	if err != nil {
		t.Fatalf("not a PNG: %v", err)
	}
	if got := img.Bounds().Size(); got != (image.Point{800, 600}) {
		t.Fatalf("PNG is %v, want 800 × 600 (400 × 300 at scale 2)", got)
	}
	rgb := func(x, y int) [3]uint32 {
		r, g, b, _ := img.At(x, y).RGBA()
		return [3]uint32{r >> 8, g >> 8, b >> 8}
	}
	if got := rgb(200, 300); got != [3]uint32{255, 0, 0} {
		t.Errorf("left half at (200, 300) is %v, want red", got)
	}
	if got := rgb(600, 300); got != [3]uint32{255, 255, 255} {
		t.Errorf("right half at (600, 300) is %v, want white", got)
	}
	b.CheckSelfContained(t)
}

// TestFailedPageIsAnError: a page that answers 404 is an error, not a
// screenshot of an error page.
func TestFailedPageIsAnError(t *testing.T) {
	srv := newPages(t, nil)
	b := New(t)
	b.Allow(srv.URL)
	_, err := b.Screenshot(srv.URL+"/missing", Viewport{Width: 100, Height: 100})
	if err == nil || !strings.Contains(err.Error(), "HTTP 404") {
		t.Errorf("error %v, want one naming HTTP 404", err)
	}
}

// TestLocate: the variable wins; a missing browser is an error that says
// how to get one (tests fail on it, never skip).
func TestLocate(t *testing.T) {
	dir := t.TempDir()
	fake := filepath.Join(dir, "chromium")
	if err := os.WriteFile(fake, []byte("#!/bin/sh\n"), 0o755); err != nil {
		t.Fatal(err)
	}
	got, err := locate(func(k string) string {
		if k == EnvChromium {
			return fake
		}
		return ""
	})
	if err != nil || got != fake {
		t.Errorf("locate with %s set: %q, %v", EnvChromium, got, err)
	}
	_, err = locate(func(k string) string {
		if k == EnvChromium {
			return filepath.Join(dir, "absent")
		}
		return ""
	})
	if err == nil || !strings.Contains(err.Error(), "apt-get install -y chromium") {
		t.Errorf("a missing browser gives %v, want a message with the install command", err)
	}
}
