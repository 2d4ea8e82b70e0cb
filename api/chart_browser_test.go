package api_test

import (
	"bytes"
	"encoding/xml"
	"image"
	"image/png"
	"math"
	"strconv"
	"strings"
	"testing"

	"github.com/google/uuid"

	"wheelbench/api/browsertest"
	"wheelbench/service"
)

// printDPI is the resolution the chart is looked at: a 1000-unit-wide SVG
// is 1000 CSS pixels, 10.4 in at CSS's 96 per inch; at 150 dots per inch
// that is a scale of 150/96.
const printDPI = 150.0

// chartGeometry is what the test reads from the served SVG: its size and,
// in the band panel, where the band is at one tension.
type chartGeometry struct {
	width, height float64
	bandX         float64 // x of the sample tension
	bandTop       float64 // the band's top and bottom there
	bandBottom    float64
}

// readChartGeometry finds the band panel's band at tensionN from the
// served SVG: x from the tension axis's labels, the band's top and bottom
// from its polygon's crossings with that x.
func readChartGeometry(t *testing.T, svg []byte, tensionN float64) chartGeometry {
	t.Helper()
	var g chartGeometry
	var ticks [][2]float64 // (value, x)
	var polys [][][2]float64
	dec := xml.NewDecoder(bytes.NewReader(svg))
	var tickX float64
	inTick := false
	for {
		tok, err := dec.Token()
		if err != nil {
			break
		}
		switch el := tok.(type) {
		case xml.StartElement:
			attr := map[string]string{}
			for _, a := range el.Attr {
				attr[a.Name.Local] = a.Value
			}
			switch {
			case el.Name.Local == "svg":
				g.width, _ = strconv.ParseFloat(attr["width"], 64)
				g.height, _ = strconv.ParseFloat(attr["height"], 64)
			case attr["class"] == "tick-n":
				tickX, _ = strconv.ParseFloat(attr["x"], 64)
				inTick = true
			case el.Name.Local == "polygon" && strings.HasPrefix(attr["class"], "band-detail"):
				var pts [][2]float64
				for _, f := range strings.Fields(attr["points"]) {
					xs, ys, _ := strings.Cut(f, ",")
					x, _ := strconv.ParseFloat(xs, 64)
					y, _ := strconv.ParseFloat(ys, 64)
					pts = append(pts, [2]float64{x, y})
				}
				polys = append(polys, pts)
			}
		case xml.CharData:
			if inTick {
				v, err := strconv.ParseFloat(string(el), 64)
				if err == nil {
					ticks = append(ticks, [2]float64{v, tickX})
				}
			}
		case xml.EndElement:
			inTick = false
		}
	}
	if len(ticks) < 2 || len(polys) == 0 || g.width == 0 {
		t.Fatalf("chart without tension ticks (%d), band panel (%d polygons) or size", len(ticks), len(polys))
	}
	a, z := ticks[0], ticks[len(ticks)-1]
	g.bandX = a[1] + (tensionN-a[0])*(z[1]-a[1])/(z[0]-a[0])
	g.bandTop, g.bandBottom = math.Inf(1), math.Inf(-1)
	for _, pts := range polys {
		for i := range pts {
			p, q := pts[i], pts[(i+1)%len(pts)]
			if p[0] == q[0] || g.bandX < math.Min(p[0], q[0]) || g.bandX > math.Max(p[0], q[0]) {
				continue
			}
			y := p[1] + (g.bandX-p[0])/(q[0]-p[0])*(q[1]-p[1])
			g.bandTop, g.bandBottom = math.Min(g.bandTop, y), math.Max(g.bandBottom, y)
		}
	}
	if !(g.bandBottom > g.bandTop) {
		t.Fatalf("no band at %g N", tensionN)
	}
	return g
}

// TestChartInBrowser renders the served chart of a 2.6 mm spoke (outside
// the 1.5–2.3 mm table) in headless Chromium: at print resolution the PNG
// has the SVG's size, and the magnified band is really painted (a band of
// non-white pixels where the SVG puts it); printed on A4 and Letter
// landscape it fits one sheet and its text carries the tool's label and
// serial, the calibration version, the kgf scale and "extrapolated"; and
// the page asked for nothing but the test server.
func TestChartInBrowser(t *testing.T) {
	e := newEnv(t)
	var tool struct{ ID uuid.UUID }
	e.want(e.do("POST", "/v1/tools", e.keyA[service.RoleWrite], map[string]any{
		"label": "Back bench tensiometer", "serial": "TT-0042", "location_id": e.newLocation()}), 201).json(t, &tool)
	cal := e.publish(tool.ID, e.synthColumns(1.5, 1.8, 2.0, 2.3))
	url := e.http.URL + "/v1/calibrations/" + cal.ID.String() + "/chart.svg?diameter_mm=2.6"
	svg := e.want(e.do("GET", "/v1/calibrations/"+cal.ID.String()+"/chart.svg?diameter_mm=2.6", e.keyA[service.RoleRead], nil), 200).body
	// Between tension ticks (no grid line) and clear of the band's label.
	const sampleN = 700
	geo := readChartGeometry(t, svg, sampleN)

	b := browsertest.New(t)
	b.Allow(e.http.URL)
	b.SetHeader("Authorization", "Bearer "+e.keyA[service.RoleRead])

	scale := printDPI / 96
	shot, err := b.Screenshot(url, browsertest.Viewport{Width: int(geo.width), Height: int(geo.height), Scale: scale})
	if err != nil {
		t.Fatal(err)
	}
	browsertest.Keep(t, "chart-150dpi.png", shot)
	img, err := png.Decode(bytes.NewReader(shot))
	if err != nil {
		t.Fatalf("screenshot is not a PNG: %v", err)
	}
	want := image.Point{int(math.Round(geo.width * scale)), int(math.Round(geo.height * scale))}
	if got := img.Bounds().Size(); got != want {
		t.Errorf("PNG %v, want %v (the SVG's %g × %g at %g dpi)", got, want, geo.width, geo.height, printDPI)
	}
	// The band's inside, a pixel in from each edge: hatched grey with
	// black lines, so no pixel there is white.
	x := int(math.Round(geo.bandX * scale))
	y0, y1 := int(math.Ceil((geo.bandTop+1)*scale)), int(math.Floor((geo.bandBottom-1)*scale))
	if y1-y0 < 20 {
		t.Errorf("the magnified band is %d device pixels high at %g N; too thin to see", y1-y0, float64(sampleN))
	}
	white := 0
	for y := y0; y <= y1; y++ {
		r, g, bl, _ := img.At(x, y).RGBA()
		if r>>8 > 0xf0 && g>>8 > 0xf0 && bl>>8 > 0xf0 {
			white++
		}
	}
	if white > 0 {
		t.Errorf("%d of %d pixels inside the band at %g N (x %d, y %d–%d) are white: the band is not painted", white, y1-y0+1, float64(sampleN), x, y0, y1)
	}

	for _, paper := range []browsertest.Paper{browsertest.A4.Rotated(), browsertest.Letter.Rotated()} {
		pdf, err := b.PrintPDF(url, paper)
		if err != nil {
			t.Fatal(err)
		}
		browsertest.Keep(t, "chart-"+paper.Name+".pdf", pdf)
		info, err := browsertest.ReadPDFInfo(pdf)
		if err != nil {
			t.Fatal(err)
		}
		if info.Pages != 1 {
			t.Errorf("%s landscape: %d pages, want the chart on one", paper.Name, info.Pages)
		}
		text, err := browsertest.PDFText(pdf)
		if err != nil {
			t.Fatal(err)
		}
		for _, s := range []string{"Back bench tensiometer", "TT-0042", "calibration version 1", "spoke tension (kgf)", "extrapolated", "Cautions"} {
			if !strings.Contains(text, s) {
				t.Errorf("%s: the printed chart's text lacks %q", paper.Name, s)
			}
		}
	}
	b.CheckSelfContained(t)
}
