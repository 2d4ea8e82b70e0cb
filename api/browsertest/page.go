package browsertest

import (
	"context"
	"encoding/json"
	"fmt"
	"net/url"
	"sync"
	"time"
)

// Paper is a sheet size for PrintPDF, in inches as the DevTools protocol
// takes it.
type Paper struct {
	Name              string
	WidthIn, HeightIn float64
	Landscape         bool
}

// The two sheet sizes shops print on: ISO 216 A4 (210 × 297 mm) and US
// Letter (8.5 × 11 in).
var (
	A4     = Paper{Name: "A4", WidthIn: 210 / 25.4, HeightIn: 297 / 25.4}
	Letter = Paper{Name: "Letter", WidthIn: 8.5, HeightIn: 11}
)

// Rotated returns the paper turned to landscape.
func (p Paper) Rotated() Paper { p.Landscape = true; return p }

// MarginIn is the blank margin PrintPDF leaves on every side (10 mm).
const MarginIn = 10 / 25.4

// Viewport is the window a screenshot is taken of: Width × Height CSS
// pixels, Scale device pixels per CSS pixel (0 means 1). The PNG is
// Width·Scale × Height·Scale pixels.
type Viewport struct {
	Width, Height int
	Scale         float64
}

// PrintPDF loads rawURL and prints it to PDF on paper, backgrounds
// included, with MarginIn margins and no header or footer.
func (b *Browser) PrintPDF(rawURL string, paper Paper) ([]byte, error) {
	var out struct {
		Data []byte `json:"data"`
	}
	err := b.withPage(rawURL, nil, func(ctx context.Context, session string) error {
		return b.c.call(ctx, session, "Page.printToPDF", map[string]any{
			"paperWidth": paper.WidthIn, "paperHeight": paper.HeightIn, "landscape": paper.Landscape,
			"marginTop": MarginIn, "marginBottom": MarginIn, "marginLeft": MarginIn, "marginRight": MarginIn,
			"printBackground": true, "displayHeaderFooter": false, "preferCSSPageSize": false,
		}, &out)
	})
	if err != nil {
		return nil, err
	}
	return out.Data, nil
}

// Screenshot loads rawURL in a window of the viewport's size and returns a
// PNG of what it shows.
func (b *Browser) Screenshot(rawURL string, vp Viewport) ([]byte, error) {
	if vp.Width <= 0 || vp.Height <= 0 {
		return nil, fmt.Errorf("browsertest: viewport %d × %d", vp.Width, vp.Height)
	}
	if vp.Scale == 0 {
		vp.Scale = 1
	}
	var out struct {
		Data []byte `json:"data"`
	}
	err := b.withPage(rawURL, &vp, func(ctx context.Context, session string) error {
		return b.c.call(ctx, session, "Page.captureScreenshot", map[string]any{"format": "png", "fromSurface": true}, &out)
	})
	if err != nil {
		return nil, err
	}
	return out.Data, nil
}

// pageState follows one page's network while it loads.
type pageState struct {
	mu        sync.Mutex
	inflight  map[string]bool
	lastEvent time.Time
	docStatus map[string]int // frame id → status of its document
	loaded    chan struct{}
	loadOnce  sync.Once
}

// withPage opens a new tab, sets the viewport and headers, loads rawURL,
// waits for the load event, a quiet network and the fonts, runs fn and
// closes the tab.
func (b *Browser) withPage(rawURL string, vp *Viewport, fn func(ctx context.Context, session string) error) error {
	ctx, cancel := context.WithTimeout(context.Background(), Timeout)
	defer cancel()
	err := b.page(ctx, rawURL, vp, fn)
	if err != nil {
		select {
		case <-b.exited:
			return fmt.Errorf("browsertest: %s: %w\nthe browser exited; its output:\n%s", rawURL, err, b.stderr)
		default:
		}
		return fmt.Errorf("browsertest: %s: %w", rawURL, err)
	}
	return nil
}

func (b *Browser) page(ctx context.Context, rawURL string, vp *Viewport, fn func(ctx context.Context, session string) error) error {
	// A browser context of its own (no cookies, cache or storage from
	// another page) whose traffic, loopback included, goes through the
	// pages' recording proxy.
	var bctx struct {
		BrowserContextID string `json:"browserContextId"`
	}
	if err := b.c.call(ctx, "", "Target.createBrowserContext", map[string]any{
		"proxyServer": "http://" + b.pageProxy, "proxyBypassList": "<-loopback>",
	}, &bctx); err != nil {
		return err
	}
	defer func() {
		cctx, ccancel := context.WithTimeout(context.Background(), 10*time.Second)
		defer ccancel()
		_ = b.c.call(cctx, "", "Target.disposeBrowserContext", map[string]any{"browserContextId": bctx.BrowserContextID}, nil)
	}()
	var target struct {
		TargetID string `json:"targetId"`
	}
	if err := b.c.call(ctx, "", "Target.createTarget", map[string]any{"url": "about:blank", "browserContextId": bctx.BrowserContextID}, &target); err != nil {
		return err
	}
	var att struct {
		SessionID string `json:"sessionId"`
	}
	if err := b.c.call(ctx, "", "Target.attachToTarget", map[string]any{"targetId": target.TargetID, "flatten": true}, &att); err != nil {
		return err
	}
	s := att.SessionID
	st := &pageState{inflight: map[string]bool{}, docStatus: map[string]int{}, loaded: make(chan struct{}), lastEvent: time.Now()}
	unsubscribe := b.c.subscribe(s, func(ev event) { b.onEvent(st, ev) })
	defer unsubscribe()

	for _, m := range []string{"Page.enable", "Network.enable", "Runtime.enable"} {
		if err := b.c.call(ctx, s, m, nil, nil); err != nil {
			return err
		}
	}
	b.mu.Lock()
	headers := map[string]string{}
	for k, v := range b.headers {
		headers[k] = v
	}
	b.mu.Unlock()
	if len(headers) > 0 {
		if err := b.c.call(ctx, s, "Network.setExtraHTTPHeaders", map[string]any{"headers": headers}, nil); err != nil {
			return err
		}
	}
	if vp != nil {
		if err := b.c.call(ctx, s, "Emulation.setDeviceMetricsOverride", map[string]any{
			"width": vp.Width, "height": vp.Height, "deviceScaleFactor": vp.Scale, "mobile": false,
		}, nil); err != nil {
			return err
		}
	}
	var nav struct {
		FrameID   string `json:"frameId"`
		ErrorText string `json:"errorText"`
	}
	if err := b.c.call(ctx, s, "Page.navigate", map[string]any{"url": rawURL}, &nav); err != nil {
		return err
	}
	if nav.ErrorText != "" {
		return fmt.Errorf("navigation failed: %s", nav.ErrorText)
	}
	select {
	case <-st.loaded:
	case <-ctx.Done():
		return fmt.Errorf("no load event: %w", ctx.Err())
	}
	// Quiet network: nothing in flight and no network event for 300 ms.
	for {
		st.mu.Lock()
		quiet := len(st.inflight) == 0 && time.Since(st.lastEvent) > 300*time.Millisecond
		st.mu.Unlock()
		if quiet {
			break
		}
		select {
		case <-time.After(50 * time.Millisecond):
		case <-ctx.Done():
			return fmt.Errorf("the page's network never went quiet: %w", ctx.Err())
		}
	}
	if err := b.c.call(ctx, s, "Runtime.evaluate", map[string]any{
		"expression": "document.fonts ? document.fonts.ready.then(() => true) : true", "awaitPromise": true,
	}, nil); err != nil {
		return err
	}
	st.mu.Lock()
	status, ok := st.docStatus[nav.FrameID]
	st.mu.Unlock()
	if !ok {
		return fmt.Errorf("no response for the page's document")
	}
	if status < 200 || status > 299 {
		return fmt.Errorf("the page's document answered HTTP %d", status)
	}
	return fn(ctx, s)
}

// onEvent runs on the protocol reader: it records the page's requests and
// follows what is in flight.
func (b *Browser) onEvent(st *pageState, ev event) {
	st.mu.Lock()
	defer st.mu.Unlock()
	st.lastEvent = time.Now()
	switch ev.Method {
	case "Page.loadEventFired":
		// Only a document that came over the network counts: the tab's
		// first about:blank may still report its own load late.
		if len(st.docStatus) > 0 {
			st.loadOnce.Do(func() { close(st.loaded) })
		}
	case "Network.requestWillBeSent":
		var p struct {
			RequestID        string `json:"requestId"`
			Request          struct{ URL, Method string }
			RedirectResponse json.RawMessage `json:"redirectResponse"`
		}
		if json.Unmarshal(ev.Params, &p) != nil {
			return
		}
		st.inflight[p.RequestID] = true
		b.recordPage(p.Request.Method, p.Request.URL)
	case "Network.loadingFinished", "Network.loadingFailed":
		var p struct {
			RequestID string `json:"requestId"`
		}
		if json.Unmarshal(ev.Params, &p) == nil {
			delete(st.inflight, p.RequestID)
		}
	case "Network.responseReceived":
		var p struct {
			Type     string `json:"type"`
			FrameID  string `json:"frameId"`
			Response struct {
				Status int `json:"status"`
			} `json:"response"`
		}
		if json.Unmarshal(ev.Params, &p) == nil && p.Type == "Document" {
			st.docStatus[p.FrameID] = p.Response.Status
		}
	}
}

// recordPage adds a request from the page's network log. data:, blob: and
// about: URLs never leave the browser and are not recorded.
func (b *Browser) recordPage(method, rawURL string) {
	u, err := url.Parse(rawURL)
	if err != nil {
		b.rec.add(Request{Method: method, URL: rawURL, Seen: "page"})
		return
	}
	switch u.Scheme {
	case "data", "blob", "about":
		return
	}
	q := Request{Method: method, URL: rawURL, Seen: "page"}
	if u.Host != "" {
		q.Host = hostPort(u.Host, u.Scheme)
		q.Allowed = (u.Scheme == "http" || u.Scheme == "https") && b.rec.isAllowed(q.Host)
	}
	b.rec.add(q)
}
