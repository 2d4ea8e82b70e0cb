package api_test

import (
	"bytes"
	"encoding/xml"
	"fmt"
	"image/png"
	"io"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/getkin/kin-openapi/openapi3filter"
	"github.com/google/go-cmp/cmp"
	"github.com/google/uuid"

	"wheelbench/api/browsertest"
	"wheelbench/service"
	"wheelbench/service/demo"
)

func init() {
	// The bench sheet answers text/html, specified as a string.
	openapi3filter.RegisterBodyDecoder("text/html", openapi3filter.PlainBodyDecoder)
}

// sheetBuild is what the sheet tests read back of a build through
// GET /v1/builds/{id}: the figures the sheet must carry.
type sheetBuild struct {
	ID          uuid.UUID `json:"id"`
	ExternalRef string    `json:"external_ref"`
	Snapshot    struct {
		Compatibility struct {
			Geometry struct {
				Left   sheetSide `json:"left"`
				Right  sheetSide `json:"right"`
				Lacing []struct {
					Spoke      int     `json:"spoke"`
					Side       string  `json:"side"`
					RimHoleDeg float64 `json:"rim_hole_deg"`
					HubHoleDeg float64 `json:"hub_hole_deg"`
					Head       string  `json:"head"`
					Direction  string  `json:"direction"`
				} `json:"lacing"`
				KeySpoke int `json:"key_spoke"`
			} `json:"geometry"`
		} `json:"compatibility"`
		TargetReadings *struct {
			Left  sheetAim `json:"left"`
			Right sheetAim `json:"right"`
		} `json:"target_readings"`
	} `json:"snapshot"`
}

type sheetSide struct {
	LengthGroups []struct {
		Count         int      `json:"count"`
		StockLengthMM *float64 `json:"stock_length_mm"`
		OrderLengthMM *float64 `json:"order_length_mm"`
	} `json:"length_groups"`
}

type sheetAim struct {
	Reading         *float64   `json:"reading"`
	ReadingInterval []float64  `json:"reading_interval"`
	Reliable        bool       `json:"reliable"`
	Refused         string     `json:"refused"`
	Status          string     `json:"status"`
	Warnings        []struct{} `json:"warnings"`
}

// loadDemo loads the demo shop into the test's database through package
// demo, as `wheelbench demo` does, and returns a read key of the demo
// organisation and its builds by external reference, read through HTTP.
func (e *env) loadDemo(t *testing.T) (string, map[string]sheetBuild) {
	t.Helper()
	if _, err := demo.Load(t.Context(), e.svc); err != nil {
		t.Fatal(err)
	}
	k, err := e.svc.CreateAPIKey(t.Context(), demo.OrgID, service.NewKeyInput{Name: "sheet test", Role: service.RoleRead})
	if err != nil {
		t.Fatal(err)
	}
	builds := map[string]sheetBuild{}
	for _, ref := range demo.BuildRefs {
		var list struct{ Items []struct{ ID uuid.UUID } }
		e.want(e.do("GET", "/v1/builds?external_ref="+ref, k.Secret, nil), 200).json(t, &list)
		if len(list.Items) != 1 {
			t.Fatalf("%d demo builds %s", len(list.Items), ref)
		}
		var b sheetBuild
		e.want(e.do("GET", "/v1/builds/"+list.Items[0].ID.String(), k.Secret, nil), 200).json(t, &b)
		builds[ref] = b
	}
	return k.Secret, builds
}

// pageText is a page's text as a reader sees it: the character data
// outside <style>, <title> and inline SVG, one line per block element and
// " | " before each table cell.
func pageText(t *testing.T, page []byte) string {
	t.Helper()
	dec := xml.NewDecoder(bytes.NewReader(page))
	dec.Strict, dec.AutoClose, dec.Entity = false, xml.HTMLAutoClose, xml.HTMLEntity
	var b strings.Builder
	skip := 0
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("the page does not parse: %v", err)
		}
		switch el := tok.(type) {
		case xml.StartElement:
			switch el.Name.Local {
			case "style", "title", "svg":
				skip++
			case "p", "div", "li", "tr", "h1", "h2", "h3", "footer", "section", "table":
				b.WriteString("\n")
			case "td", "th":
				b.WriteString(" | ")
			}
		case xml.EndElement:
			if n := el.Name.Local; n == "style" || n == "title" || n == "svg" {
				skip--
			}
		case xml.CharData:
			if skip == 0 {
				b.Write(el)
			}
		}
	}
	var lines []string
	for _, l := range strings.Split(b.String(), "\n") {
		if l = strings.TrimSpace(wsRun.ReplaceAllString(l, " ")); l != "" {
			lines = append(lines, l)
		}
	}
	return strings.Join(lines, "\n") + "\n"
}

var (
	wsRun      = regexp.MustCompile(`[ \t\r]+`)
	uuidRE     = regexp.MustCompile(`[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}`)
	dateTimeRE = regexp.MustCompile(`\d{4}-\d{2}-\d{2}( \d{2}:\d{2})?`)
)

// goldenText compares a sheet's text with testdata/golden/name, ids and
// dates masked (they differ on every run), or rewrites it under -update.
func goldenText(t *testing.T, name, text string) {
	t.Helper()
	text = uuidRE.ReplaceAllString(text, "<id>")
	text = dateTimeRE.ReplaceAllStringFunc(text, func(s string) string {
		if len(s) > 10 {
			return "<date> <time>"
		}
		return "<date>"
	})
	path := filepath.Join("..", "testdata", "golden", name)
	if *update {
		if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test ./api -run TestBenchSheets -update to create it)", err)
	}
	if diff := cmp.Diff(string(want), text); diff != "" {
		t.Errorf("%s differs (-golden +got):\n%s", name, diff)
	}
}

// mmText is a length as the sheet prints it: to 0.1 mm, no trailing zeros.
func mmText(v float64) string {
	return strconv.FormatFloat(math.Round(v*10)/10, 'f', -1, 64) + " mm"
}

// dialText is a reading as the sheet prints it: to the whole dial unit.
func dialText(v float64) string { return strconv.FormatFloat(math.Round(v), 'f', 0, 64) }

// wantOnSheet are the patterns the printed sheet must hold for b, from its
// snapshot: per side and length group the count, the stock length to pull
// and the length to cut to, in one table row; per side the aim reading
// (rounded to the dial unit) and its interval heading that side's table,
// as an aim when reliable, as an estimate when not.
func wantOnSheet(t *testing.T, b sheetBuild) []*regexp.Regexp {
	t.Helper()
	geo := b.Snapshot.Compatibility.Geometry
	var out []*regexp.Regexp
	multi := len(geo.Left.LengthGroups) > 1 || len(geo.Right.LengthGroups) > 1
	for _, s := range []struct {
		name string
		side sheetSide
		aim  func() *sheetAim
	}{
		{"Right", geo.Right, func() *sheetAim { return &b.Snapshot.TargetReadings.Right }},
		{"Left", geo.Left, func() *sheetAim { return &b.Snapshot.TargetReadings.Left }},
	} {
		if len(s.side.LengthGroups) == 0 {
			t.Fatalf("%s: the %s side has no length groups", b.ExternalRef, s.name)
		}
		for i, g := range s.side.LengthGroups {
			if g.StockLengthMM == nil || g.OrderLengthMM == nil {
				t.Fatalf("%s: a demo build without a stock or order length (%s group %d)", b.ExternalRef, s.name, i)
			}
			group := ""
			if multi {
				group = string(rune('A'+i)) + `\s+`
			}
			out = append(out, regexp.MustCompile(s.name+`\s+`+group+strconv.Itoa(g.Count)+`\s+`+regexp.QuoteMeta(mmText(*g.StockLengthMM))+`\s+`+regexp.QuoteMeta(mmText(*g.OrderLengthMM))))
		}
		if b.Snapshot.TargetReadings == nil {
			t.Fatalf("%s: the demo build has no aim readings", b.ExternalRef)
		}
		a := s.aim()
		if a.Reading == nil || len(a.ReadingInterval) != 2 {
			t.Fatalf("%s: the %s side's aim was refused (%s)", b.ExternalRef, s.name, a.Refused)
		}
		word := "aim"
		if !a.Reliable || a.Status == "extrapolated" {
			word = "estimate"
		}
		iv := dialText(a.ReadingInterval[0]) + "–" + dialText(a.ReadingInterval[1])
		out = append(out, regexp.MustCompile(s.name+` spokes: `+word+` `+dialText(*a.Reading)+` \(`+iv+`\)`),
			regexp.MustCompile(word+`\s+`+dialText(*a.Reading)+`\s+dial units`), regexp.MustCompile(`expect `+iv+` \(95 % interval\)`))
	}
	return out
}

// TestBenchSheetsOfTheDemo prints the sheet of each demo build — loaded
// through the same code as `wheelbench demo` — in headless Chromium on A4
// and Letter: the touring wheel fits one page, every other at most two;
// the PDF's text holds each side's spoke count, stock length, cut length
// and aim reading as the snapshot has them; the page's text matches its
// golden file; and neither the sheet nor the lacing diagram asked for
// anything outside the test server. The served lacing.svg of each build
// holds one path per spoke at the plan's angles, and painted at 150 dpi
// its rim is where the SVG puts it.
func TestBenchSheetsOfTheDemo(t *testing.T) {
	e := newEnv(t)
	key, builds := e.loadDemo(t)
	br := browsertest.New(t)
	br.Allow(e.http.URL)
	br.SetHeader("Authorization", "Bearer "+key)

	for _, ref := range demo.BuildRefs {
		b := builds[ref]
		slug := strings.ToLower(strings.TrimPrefix(ref, "DEMO-"))
		t.Run(ref, func(t *testing.T) {
			path := "/v1/builds/" + b.ID.String() + "/sheet"
			r := e.want(e.do("GET", path, key, nil), 200)
			if ct := r.Header.Get("Content-Type"); ct != "text/html; charset=UTF-8" {
				t.Errorf("content type %q", ct)
			}
			if !strings.Contains(r.Header.Get("Content-Security-Policy"), "default-src 'none'") {
				t.Errorf("Content-Security-Policy %q", r.Header.Get("Content-Security-Policy"))
			}
			goldenText(t, "sheet_demo_"+strings.ReplaceAll(slug, "-", "_")+".txt", pageText(t, r.body))
			want := wantOnSheet(t, b)

			for _, paper := range []browsertest.Paper{browsertest.A4, browsertest.Letter} {
				pdf, err := br.PrintPDF(e.http.URL+path+"?paper="+strings.ToLower(paper.Name), paper)
				if err != nil {
					t.Fatal(err)
				}
				browsertest.Keep(t, "sheet-"+paper.Name+".pdf", pdf)
				info, err := browsertest.ReadPDFInfo(pdf)
				if err != nil {
					t.Fatal(err)
				}
				maxPages := 2
				if ref == "DEMO-TOURING-1" {
					maxPages = 1
				}
				if info.Pages < 1 || info.Pages > maxPages {
					t.Errorf("%s: %d pages, want at most %d", paper.Name, info.Pages, maxPages)
				}
				if w, h := paper.WidthIn*72, paper.HeightIn*72; math.Abs(info.WidthPt-w) > 1 || math.Abs(info.HeightPt-h) > 1 {
					t.Errorf("%s: pages of %g × %g pt, want %.1f × %.1f", paper.Name, info.WidthPt, info.HeightPt, w, h)
				}
				text, err := browsertest.PDFText(pdf)
				if err != nil {
					t.Fatal(err)
				}
				for _, re := range want {
					if !re.MatchString(text) {
						t.Errorf("%s: the printed sheet has no %q", paper.Name, re)
					}
				}
				if !strings.Contains(text, ref) {
					t.Errorf("%s: the printed sheet does not name the build %s", paper.Name, ref)
				}
			}

			// The lacing diagram, served on its own.
			svgPath := "/v1/builds/" + b.ID.String() + "/lacing.svg"
			svg := e.want(e.do("GET", svgPath, key, nil), 200).body
			checkServedLacing(t, svg, b)
			g := readSVGSize(t, svg)
			scale := printDPI / 96
			shot, err := br.Screenshot(e.http.URL+svgPath, browsertest.Viewport{Width: int(math.Ceil(g.w)), Height: int(math.Ceil(g.h)), Scale: scale})
			if err != nil {
				t.Fatal(err)
			}
			browsertest.Keep(t, "lacing-150dpi.png", shot)
			img, err := png.Decode(bytes.NewReader(shot))
			if err != nil {
				t.Fatal(err)
			}
			// The rim's rightmost point (90°, clear of labels) is painted
			// black; the wheel's centre ring is painted too (the axle).
			for _, p := range [][2]float64{{g.cx + g.r, g.cy}, {g.cx, g.cy}} {
				x, y := int(math.Round(p[0]*g.pxPerUnit*scale)), int(math.Round(p[1]*g.pxPerUnit*scale))
				cr, cg, cb, _ := img.At(x, y).RGBA()
				if cr>>8 > 0x60 || cg>>8 > 0x60 || cb>>8 > 0x60 {
					t.Errorf("pixel (%d, %d) of the lacing PNG is %02x%02x%02x, not the rim's or axle's black", x, y, cr>>8, cg>>8, cb>>8)
				}
			}
		})
	}
	br.CheckSelfContained(t)
}

// svgSize is where the served lacing diagram puts its rim, in CSS pixels.
type svgSize struct {
	w, h, cx, cy, r float64
	pxPerUnit       float64
}

// readSVGSize reads the root's printed size (mm) and the rim circle, and
// converts to CSS pixels (96 per inch).
func readSVGSize(t *testing.T, svg []byte) svgSize {
	t.Helper()
	var root struct {
		Width   string `xml:"width,attr"`
		Height  string `xml:"height,attr"`
		ViewBox string `xml:"viewBox,attr"`
		Circles []struct {
			Class string  `xml:"class,attr"`
			CX    float64 `xml:"cx,attr"`
			CY    float64 `xml:"cy,attr"`
			R     float64 `xml:"r,attr"`
		} `xml:"circle"`
	}
	if err := xml.Unmarshal(svg, &root); err != nil {
		t.Fatalf("the lacing SVG is not XML: %v", err)
	}
	mmAttr := func(s string) float64 {
		v, err := strconv.ParseFloat(strings.TrimSuffix(s, "mm"), 64)
		if err != nil || !strings.HasSuffix(s, "mm") {
			t.Fatalf("size %q is not in mm", s)
		}
		return v / 25.4 * 96
	}
	var g svgSize
	g.w, g.h = mmAttr(root.Width), mmAttr(root.Height)
	vb := strings.Fields(root.ViewBox)
	if len(vb) != 4 {
		t.Fatalf("viewBox %q", root.ViewBox)
	}
	vw, _ := strconv.ParseFloat(vb[2], 64)
	g.pxPerUnit = g.w / vw
	for _, c := range root.Circles {
		if c.Class == "rim" {
			g.cx, g.cy, g.r = c.CX, c.CY, c.R
		}
	}
	if g.r == 0 {
		t.Fatal("no rim circle")
	}
	return g
}

// checkServedLacing holds the served SVG to the build's plan: it parses as
// XML, has exactly one spoke path per spoke, and each path's end points,
// turned back into angles about the rim's centre (atan2, a second
// computation from the drawn coordinates), sit at the plan's hub-hole and
// rim-hole angles within 0.5°.
func checkServedLacing(t *testing.T, svg []byte, b sheetBuild) {
	t.Helper()
	plan := b.Snapshot.Compatibility.Geometry.Lacing
	if len(plan) == 0 {
		t.Fatal("the demo build keeps no lacing plan")
	}
	g := readSVGSize(t, svg)
	dec := xml.NewDecoder(bytes.NewReader(svg))
	paths := map[int]int{}
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("the lacing SVG is not XML: %v", err)
		}
		el, ok := tok.(xml.StartElement)
		if !ok || el.Name.Local != "path" {
			continue
		}
		attr := map[string]string{}
		for _, a := range el.Attr {
			attr[a.Name.Local] = a.Value
		}
		if attr["class"] != "spoke" {
			continue
		}
		n, _ := strconv.Atoi(attr["data-spoke"])
		paths[n]++
		var x1, y1, x2, y2 float64
		if _, err := fmt.Sscanf(attr["d"], "M%g %g L%g %g", &x1, &y1, &x2, &y2); err != nil {
			t.Fatalf("spoke %d: path %q", n, attr["d"])
		}
		angle := func(x, y float64) float64 {
			return math.Mod(math.Atan2(x-g.cx, -(y-g.cy))*180/math.Pi+360, 360)
		}
		if n < 1 || n > len(plan) || plan[n-1].Spoke != n {
			t.Fatalf("a path for spoke %d; the plan has %d spokes in order", n, len(plan))
		}
		p := plan[n-1]
		for _, c := range []struct {
			end       string
			got, want float64
		}{{"hub", angle(x1, y1), p.HubHoleDeg}, {"rim", angle(x2, y2), p.RimHoleDeg}} {
			d := math.Mod(math.Abs(c.got-c.want), 360)
			if d = math.Min(d, 360-d); d > 0.5 {
				t.Errorf("spoke %d: %s end drawn at %.3f°, plan %.3f°", n, c.end, c.got, c.want)
			}
		}
		if attr["data-side"] != p.Side || attr["data-head"] != p.Head || attr["data-direction"] != p.Direction {
			t.Errorf("spoke %d drawn %s/%s/%s, plan %s/%s/%s", n, attr["data-side"], attr["data-head"], attr["data-direction"], p.Side, p.Head, p.Direction)
		}
	}
	if len(paths) != len(plan) {
		t.Errorf("%d spokes drawn, the plan has %d", len(paths), len(plan))
	}
	for n, c := range paths {
		if c != 1 {
			t.Errorf("spoke %d drawn %d times", n, c)
		}
	}
}

// TestBenchSheetRequests: the sheet and the diagram need a key, answer 404
// for a build that is not there, refuse an unknown paper, and take the
// paper from the location's time zone unless ?paper= says otherwise.
func TestBenchSheetRequests(t *testing.T) {
	e := newEnv(t)
	read := e.keyA[service.RoleRead]
	missing := uuid.NewString()
	for _, p := range []string{"/v1/builds/" + missing + "/sheet", "/v1/builds/" + missing + "/lacing.svg"} {
		e.want(e.do("GET", p, read, nil), 404).problem(t)
		e.want(e.do("GET", p, "", nil), 401).problem(t)
	}

	var loc struct{ ID uuid.UUID }
	e.want(e.do("POST", "/v1/locations", e.keyA[service.RoleAdmin], map[string]any{"name": "Lakeside bench (test)", "timezone": "America/Chicago"}), 201).json(t, &loc)
	var b struct{ ID uuid.UUID }
	e.want(e.do("POST", "/v1/builds", e.keyA[service.RoleWrite], map[string]any{"spec": inlineSpec(), "location_id": loc.ID, "external_ref": "INLINE-1"}), 201).json(t, &b)
	path := "/v1/builds/" + b.ID.String() + "/sheet"
	e.want(e.do("GET", path+"?paper=a5", read, nil), 400).problem(t)
	for q, want := range map[string]string{"": "size: letter portrait", "?paper=a4": "size: A4 portrait", "?paper=letter": "size: letter portrait"} {
		r := e.want(e.do("GET", path+q, read, nil), 200)
		if !bytes.Contains(r.body, []byte(want)) {
			t.Errorf("GET %s%s: the page does not set %q", path, q, want)
		}
	}
	// Inline parts with no tensiometer at the location: the sheet says so
	// in words and prints no aim number.
	text := pageText(t, e.want(e.do("GET", path, read, nil), 200).body)
	for _, want := range []string{"| Hub | — | described inline in the build | customer", "NO AIM READING", "Stock lengths: those the build's spec listed."} {
		if !strings.Contains(text, want) {
			t.Errorf("the sheet lacks %q:\n%s", want, text)
		}
	}
	if regexp.MustCompile(`\baim \d`).MatchString(text) {
		t.Errorf("an aim number without a tensiometer:\n%s", text)
	}
}

// TestBenchSheetUnevenLacing: a 20-spoke wheel laced 3:2 (12 right spokes
// 2-cross, 8 left 1-cross) has three right-side lengths. Built through
// HTTP at a location with a calibrated tensiometer and printed on Letter,
// its sheet has one pull row per length group (side, group letter, count,
// stock length, cut length), each side's aim, at most two pages and no
// outside request; its lacing diagram draws the plan.
func TestBenchSheetUnevenLacing(t *testing.T) {
	e := newEnv(t)
	var loc struct{ ID uuid.UUID }
	e.want(e.do("POST", "/v1/locations", e.keyA[service.RoleAdmin], map[string]any{"name": "Uneven bench (test)", "timezone": "UTC"}), 201).json(t, &loc)
	var tool struct{ ID uuid.UUID }
	e.want(e.do("POST", "/v1/tools", e.keyA[service.RoleWrite], map[string]any{"label": "Uneven bench tensiometer", "serial": "U-1", "location_id": loc.ID}), 201).json(t, &tool)
	e.publish(tool.ID, e.synthColumns(1.8, 2.0, 2.3))
	flange := func(c2f float64, spokes int) map[string]any {
		return map[string]any{"pcd_mm": 42, "center_to_flange_mm": c2f, "hole_diameter_mm": 2.6, "thickness_mm": 3, "spokes": spokes}
	}
	spec := map[string]any{"spoke_count": 20,
		"hub":   map[string]any{"holes": 20, "driven": true, "left": flange(33, 8), "right": flange(21, 12)},
		"rim":   map[string]any{"holes": 20, "erd_mm": 600, "bsd_mm": 622, "inner_width_mm": 19, "hole_diameter_mm": 4.2, "max_tension_n": 1300},
		"spoke": spokeDims, "nipple": nippleDims, "crosses": map[string]any{"left": 1, "right": 2}, "target_tension_n": 1100,
		"stock": map[string]any{"increment_mm": 2}}
	var b sheetBuild
	e.want(e.do("POST", "/v1/builds", e.keyA[service.RoleWrite], map[string]any{"spec": spec, "location_id": loc.ID, "external_ref": "UNEVEN-1"}), 201).json(t, &b)
	if n := len(b.Snapshot.Compatibility.Geometry.Right.LengthGroups); n < 2 {
		t.Fatalf("the right side has %d length group(s); the test needs uneven lengths", n)
	}
	key := e.keyA[service.RoleRead]
	br := browsertest.New(t)
	br.Allow(e.http.URL)
	br.SetHeader("Authorization", "Bearer "+key)
	path := "/v1/builds/" + b.ID.String() + "/sheet?paper=letter"
	e.want(e.do("GET", path, key, nil), 200)
	pdf, err := br.PrintPDF(e.http.URL+path, browsertest.Letter)
	if err != nil {
		t.Fatal(err)
	}
	browsertest.Keep(t, "sheet-Letter.pdf", pdf)
	info, err := browsertest.ReadPDFInfo(pdf)
	if err != nil {
		t.Fatal(err)
	}
	if info.Pages > 2 {
		t.Errorf("%d pages, want at most 2", info.Pages)
	}
	text, err := browsertest.PDFText(pdf)
	if err != nil {
		t.Fatal(err)
	}
	for _, re := range wantOnSheet(t, b) {
		if !re.MatchString(text) {
			t.Errorf("the printed sheet has no %q", re)
		}
	}
	checkServedLacing(t, e.want(e.do("GET", "/v1/builds/"+b.ID.String()+"/lacing.svg", key, nil), 200).body, b)
	br.CheckSelfContained(t)
}
