package chart

import (
	"bytes"
	"encoding/xml"
	"math"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/google/go-cmp/cmp"

	"wheelbench/service/tension"
)

// svgNode is a generic SVG element for the tests.
type svgNode struct {
	XMLName xml.Name
	Attrs   []xml.Attr `xml:",any,attr"`
	Text    string     `xml:",chardata"`
	Kids    []svgNode  `xml:",any"`
}

func (n *svgNode) attr(name string) string {
	for _, a := range n.Attrs {
		if a.Name.Local == name {
			return a.Value
		}
	}
	return ""
}

func (n *svgNode) num(t testing.TB, name string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(n.attr(name), 64)
	if err != nil {
		t.Fatalf("<%s %s=%q>: %v", n.XMLName.Local, name, n.attr(name), err)
	}
	return v
}

func (n *svgNode) hasClass(c string) bool {
	for _, f := range strings.Fields(n.attr("class")) {
		if f == c {
			return true
		}
	}
	return false
}

// all returns the elements under n (n included) for which keep is true.
func (n *svgNode) all(keep func(*svgNode) bool) []*svgNode {
	var out []*svgNode
	var walk func(*svgNode)
	walk = func(x *svgNode) {
		if keep(x) {
			out = append(out, x)
		}
		for i := range x.Kids {
			walk(&x.Kids[i])
		}
	}
	walk(n)
	return out
}

func (n *svgNode) byClass(c string) []*svgNode {
	return n.all(func(x *svgNode) bool { return x.hasClass(c) })
}

// texts joins the text of every <text> element.
func (n *svgNode) texts() string {
	var parts []string
	for _, x := range n.all(func(x *svgNode) bool { return x.XMLName.Local == "text" }) {
		parts = append(parts, x.Text)
	}
	return strings.Join(parts, "|")
}

// parseSVG fails the test unless svg is well-formed XML with an <svg> root.
func parseSVG(t testing.TB, svg []byte) *svgNode {
	t.Helper()
	var root svgNode
	if err := xml.Unmarshal(svg, &root); err != nil {
		t.Fatalf("the SVG is not well-formed XML: %v", err)
	}
	if root.XMLName.Local != "svg" || root.XMLName.Space != "http://www.w3.org/2000/svg" {
		t.Fatalf("root element %v", root.XMLName)
	}
	if bytes.Contains(svg, []byte("NaN")) || bytes.Contains(svg, []byte("Inf")) {
		t.Error("non-finite coordinates in the SVG")
	}
	return &root
}

// scale is the chart's mapping from values to pixels, read back from the
// tick labels it prints as a reader would: the tension axis's labels are
// centred on their ticks; the reading axis's sit 4 units below theirs, an
// offset that cancels in the pixels per dial unit.
type scale struct {
	n0, x0, pxPerN    float64
	r0, y0, pxPerUnit float64
}

func readScale(t testing.TB, root *svgNode) scale {
	t.Helper()
	tick := func(class, coord string) (v0, p0, v1, p1 float64) {
		ts := root.byClass(class)
		if len(ts) < 2 {
			t.Fatalf("%d %s labels", len(ts), class)
		}
		first, last := ts[0], ts[len(ts)-1]
		val := func(n *svgNode) float64 {
			v, err := strconv.ParseFloat(n.Text, 64)
			if err != nil {
				t.Fatalf("%s label %q", class, n.Text)
			}
			return v
		}
		return val(first), first.num(t, coord), val(last), last.num(t, coord)
	}
	n0, x0, n1, x1 := tick("tick-n", "x")
	r0, y0, r1, y1 := tick("tick-r", "y")
	return scale{n0: n0, x0: x0, pxPerN: (x1 - x0) / (n1 - n0), r0: r0, y0: y0, pxPerUnit: (y0 - y1) / (r1 - r0)}
}

func (s scale) x(tensionN float64) float64 { return s.x0 + (tensionN-s.n0)*s.pxPerN }

// points parses a points attribute.
func points(t testing.TB, n *svgNode) [][2]float64 {
	t.Helper()
	var out [][2]float64
	for _, f := range strings.Fields(n.attr("points")) {
		xs, ys, ok := strings.Cut(f, ",")
		x, err1 := strconv.ParseFloat(xs, 64)
		y, err2 := strconv.ParseFloat(ys, 64)
		if !ok || err1 != nil || err2 != nil {
			t.Fatalf("point %q", f)
		}
		out = append(out, [2]float64{x, y})
	}
	return out
}

// bandHeightAt is the drawn band's height at x: the span of the polygon's
// edge crossings with the vertical line through x.
func bandHeightAt(t testing.TB, root *svgNode, x float64) (float64, bool) {
	return classHeightAt(t, root, "band", x)
}

// classHeightAt is the vertical extent at x of the first polygon of class
// cls that spans x.
func classHeightAt(t testing.TB, root *svgNode, cls string, x float64) (float64, bool) {
	t.Helper()
	for _, poly := range root.byClass(cls) {
		pts := points(t, poly)
		var ys []float64
		for i := range pts {
			a, b := pts[i], pts[(i+1)%len(pts)]
			if a[0] == b[0] || x < math.Min(a[0], b[0]) || x > math.Max(a[0], b[0]) {
				continue
			}
			ys = append(ys, a[1]+(x-a[0])/(b[0]-a[0])*(b[1]-a[1]))
		}
		if len(ys) >= 2 {
			lo, hi := ys[0], ys[0]
			for _, y := range ys {
				lo, hi = math.Min(lo, y), math.Max(hi, y)
			}
			return hi - lo, true
		}
	}
	return 0, false
}

var testHeading = Heading{ToolLabel: "Bench tool B", ToolSerial: "TT-0042", CalibrationVersion: 3,
	Source: tension.SourceMakerTable, Published: time.Date(2026, 3, 14, 9, 0, 0, 0, time.UTC)}

// TestChartHeadingAndAxes: the SVG is well-formed XML titled with the
// tool's label and serial and the calibration version; it labels its axes
// with units, and its kgf scale sits where the same tension in newtons
// does (1 kgf = 9.80665 N, standard gravity as defined by the 3rd CGPM,
// 1901). One marker per calibration point, a curve per column plus the
// requested section, and a legend entry naming each column.
func TestChartHeadingAndAxes(t *testing.T) {
	m := synthModel(t)
	spec := steelRound(2.6)
	root := parseSVG(t, must(draw(m, &spec, testHeading)))
	title := root.byClass("title")
	if len(title) != 1 || title[0].Text != "Tensiometer Bench tool B · serial TT-0042 · calibration version 3" {
		t.Errorf("%d titles, first %+v", len(title), title)
	}
	all := root.texts()
	for _, s := range []string{"spoke tension (N)", "spoke tension (kgf)", "dial reading (units of 0.01 mm)",
		"from maker's table", "published 2026-03-14", "calibrated tensions 400–1600 N (41–163 kgf)"} {
		if !strings.Contains(all, s) {
			t.Errorf("missing text %q", s)
		}
	}
	sc := readScale(t, root)
	kgf := root.byClass("tick-kgf")
	if len(kgf) < 4 {
		t.Fatalf("%d kgf tick labels", len(kgf))
	}
	for _, k := range kgf {
		v, err := strconv.ParseFloat(k.Text, 64)
		if err != nil {
			t.Fatalf("kgf label %q", k.Text)
		}
		if want := sc.x(v * 9.80665); math.Abs(k.num(t, "x")-want) > 0.6 {
			t.Errorf("%g kgf drawn at x %.1f, where %g N is at %.1f", v, k.num(t, "x"), v*9.80665, want)
		}
	}
	if n := len(root.byClass("point")); n != 4*13 {
		t.Errorf("%d point markers, want 52 (4 columns × 13 tensions)", n)
	}
	if n := len(root.byClass("curve")); n != 5 {
		t.Errorf("%d curves, want 4 columns and the requested section", n)
	}
	legend := strings.Join(func() []string {
		var s []string
		for _, n := range root.byClass("legend") {
			s = append(s, n.Text)
		}
		return s
	}(), " ")
	for _, s := range []string{"round 1.5 mm", "round 1.8 mm", "round 2 mm", "round 2.3 mm", "requested: round 2.6 mm", "95 % band"} {
		if !strings.Contains(legend, s) {
			t.Errorf("legend lacks %q: %s", s, legend)
		}
	}
}

// TestChartSeriesApartInBlackAndWhite: each column's curve has its own
// dash pattern and its own marker shape, so a grey print tells them apart
// without colour.
func TestChartSeriesApartInBlackAndWhite(t *testing.T) {
	m := synthModel(t)
	root := parseSVG(t, must(draw(m, nil, testHeading)))
	dashes, shapes := map[string]bool{}, map[string]bool{}
	cols := 0
	for _, g := range root.byClass("curve") {
		if g.attr("data-series") != "column" {
			continue
		}
		cols++
		var dash string
		for _, s := range g.byClass("segment") {
			if !s.hasClass("extrapolated") {
				dash = s.attr("stroke-dasharray")
			}
		}
		dashes[dash] = true
		pts := g.byClass("point")
		if len(pts) == 0 {
			t.Fatal("a column without markers")
		}
		shapes[pts[0].attr("data-marker")+" "+pts[0].XMLName.Local] = true
	}
	if cols != 4 || len(dashes) != 4 || len(shapes) != 4 {
		t.Errorf("%d columns with %d dash patterns %v and %d marker shapes %v; want each its own", cols, len(dashes), dashes, len(shapes), shapes)
	}
	if strings.Contains(root.texts(), "requested") {
		t.Error("a chart without a section draws one")
	}
}

func must(b []byte, err error) []byte {
	if err != nil {
		panic(err)
	}
	return b
}

// draw computes the chart of m (for spec when not nil) and draws it.
func draw(m *tension.Model, spec *tension.SpokeSpec, h Heading) ([]byte, error) {
	c, err := m.Chart(spec)
	if err != nil {
		return nil, err
	}
	return SVG(c, h), nil
}

// synthTool is a SYNTHETIC tensiometer made up for the tests, the same as
// service/tension's own test tool: its table is generated from the tool
// model with these known parameters (tension.ToolParams.Reading), so the
// chart is checked against a calibration whose truth is known.
var synthTool = tension.ToolParams{SpanMM: 50, PreloadN: 120, SpringNPerMM: 15, ZeroMM: 2.0, StretchPerMM: 1.5e-3}

func steelRound(d float64) tension.SpokeSpec {
	return tension.SpokeSpec{Profile: "round", DiameterMM: d, Material: "stainless_steel"}
}

// synthCalibration is the synthetic tool's maker table: round steel
// 1.5, 1.8, 2.0, 2.3 mm × 13 tensions 400…1600 N, readings rounded to whole
// dial units as a table prints them.
func synthCalibration(t testing.TB) tension.Calibration {
	t.Helper()
	cal := tension.Calibration{Source: tension.SourceMakerTable}
	for _, d := range []float64{1.5, 1.8, 2.0, 2.3} {
		col := tension.Column{Spoke: steelRound(d)}
		for tn := 400.0; tn <= 1600; tn += 100 {
			r, err := synthTool.Reading(col.Spoke, 0.01, tn)
			if err != nil {
				t.Fatal(err)
			}
			col.Points = append(col.Points, tension.Point{TensionN: tn, Reading: math.Round(r)})
		}
		cal.Columns = append(cal.Columns, col)
	}
	return cal
}

func synthModel(t testing.TB) *tension.Model {
	t.Helper()
	m, err := tension.Fit(synthCalibration(t), tension.Tool{})
	if err != nil {
		t.Fatal(err)
	}
	if m.Physical == nil {
		t.Fatalf("synthetic calibration did not identify the model: %s", m.Unidentified)
	}
	return m
}

// TestChartBandMatchesInterval: the band's drawn height at a tension is the
// 95 % reading interval Target gives there (the second computation the
// chart must agree with), times the pixels per dial unit read off the
// chart's own reading axis, within one pixel; and, since at that scale a
// band is about as high as the curve's line, the band panel draws it at
// least 8 px high, so it shows. Cases: a section outside the table (model),
// and a calibrated column inside its table (its own curve) and beyond it
// (model).
func TestChartBandMatchesInterval(t *testing.T) {
	m := synthModel(t)
	for _, c := range []struct {
		d, tensionN float64
	}{{2.6, 1000}, {2.6, 700}, {2.0, 1000}, {2.0, 1700}} {
		spec := steelRound(c.d)
		root := parseSVG(t, must(draw(m, &spec, testHeading)))
		sc := readScale(t, root)
		tg, err := m.Target(spec, c.tensionN)
		if err != nil {
			t.Fatal(err)
		}
		want := (tg.ReadingInterval[1] - tg.ReadingInterval[0]) * sc.pxPerUnit
		got, ok := bandHeightAt(t, root, sc.x(c.tensionN))
		if !ok {
			t.Fatalf("%g mm: no band at %g N", c.d, c.tensionN)
		}
		t.Logf("%g mm at %g N: interval %.2f–%.2f dial units (%s), %.2f px per unit: want %.2f px, drawn %.2f px",
			c.d, c.tensionN, tg.ReadingInterval[0], tg.ReadingInterval[1], tg.Status, sc.pxPerUnit, want, got)
		if math.Abs(got-want) > 1 {
			t.Errorf("%g mm at %g N: band drawn %.2f px high, the interval is %.2f px", c.d, c.tensionN, got, want)
		}
		if c.d == 2.6 { // the requested section, the one the panel magnifies
			if h, ok := classHeightAt(t, root, "band-detail", sc.x(c.tensionN)); !ok || h < 8 {
				t.Errorf("%g mm at %g N: the panel draws the band %.2f px high (found %v), want at least 8", c.d, c.tensionN, h, ok)
			}
		}
	}
}

// TestChartMarksExtrapolation: a section outside the table is drawn dotted
// over its whole length, its band hatched, labelled "extrapolated", with a
// caution; a calibrated column is solid inside its tensions and dotted
// beyond them, where the hatched zones outside the calibrated range start.
func TestChartMarksExtrapolation(t *testing.T) {
	m := synthModel(t)
	spec := steelRound(2.6)
	root := parseSVG(t, must(draw(m, &spec, testHeading)))
	var req *svgNode
	for _, g := range root.byClass("curve") {
		if g.attr("data-series") == "requested" {
			req = g
		}
	}
	if req == nil {
		t.Fatal("no requested curve")
	}
	segs := req.byClass("segment")
	if len(segs) == 0 {
		t.Fatal("the requested curve has no segments")
	}
	for _, s := range segs {
		if !s.hasClass("extrapolated") || s.attr("stroke-dasharray") != dotted {
			t.Errorf("a 2.6 mm segment is not drawn as extrapolated: class %q dash %q", s.attr("class"), s.attr("stroke-dasharray"))
		}
	}
	for _, b := range root.byClass("band") {
		if !b.hasClass("extrapolated") || b.attr("fill") != "url(#band-hatch)" {
			t.Errorf("a 2.6 mm band part is not hatched: %q %q", b.attr("class"), b.attr("fill"))
		}
	}
	labels := root.byClass("series-label")
	if len(labels) == 0 || !strings.HasPrefix(labels[0].Text, "extrapolated") {
		t.Errorf("the 2.6 mm curve is not labelled extrapolated: %v", labels)
	}
	cautions := strings.Join(func() []string {
		var s []string
		for _, n := range root.byClass("caution") {
			s = append(s, n.Text)
		}
		return s
	}(), " ")
	if !strings.Contains(cautions, "extrapolated") || !strings.Contains(cautions, "known tension") {
		t.Errorf("no caution about the extrapolated curve: %q", cautions)
	}

	// A calibrated column: solid from 400 to 1600 N, dotted outside.
	spec = steelRound(2.0)
	root = parseSVG(t, must(draw(m, &spec, testHeading)))
	sc := readScale(t, root)
	xl, xh := sc.x(400), sc.x(1600)
	solid, dots := 0, 0
	for _, g := range root.byClass("curve") {
		if g.attr("data-series") != "requested" {
			continue
		}
		for _, s := range g.byClass("segment") {
			pts := points(t, s)
			first, last := pts[0][0], pts[len(pts)-1][0]
			if s.hasClass("extrapolated") {
				dots++
				if first < xh-20 && last > xl+20 {
					t.Errorf("an extrapolated segment from x %.1f to %.1f lies inside the calibrated tensions (%.1f–%.1f)", first, last, xl, xh)
				}
			} else {
				solid++
				if first < xl-0.6 || last > xh+0.6 {
					t.Errorf("a solid segment from x %.1f to %.1f reaches outside the calibrated tensions (%.1f–%.1f)", first, last, xl, xh)
				}
			}
		}
	}
	if solid != 1 || dots != 2 {
		t.Errorf("2.0 mm: %d solid and %d dotted segments, want 1 and 2", solid, dots)
	}
	// Hatched zones outside 400–1600 N, in the plot and in the band panel.
	cautions = ""
	for _, n := range root.byClass("caution") {
		cautions += n.Text + " "
	}
	if !strings.Contains(cautions, "220–400 N and 1600–1780 N") {
		t.Errorf("the caution does not name the extrapolated tensions 220–400 N and 1600–1780 N (calibrated range 400–1600 N ± 15 %%): %q", cautions)
	}
	zones := root.byClass("outside-range")
	if len(zones) != 4 {
		t.Fatalf("%d hatched zones, want 2 in the plot and 2 in the band panel", len(zones))
	}
	for _, z := range zones {
		start, end := z.num(t, "x"), z.num(t, "x")+z.num(t, "width")
		if math.Abs(end-xl) > 0.2 && math.Abs(start-xh) > 0.2 {
			t.Errorf("a hatched zone from x %.1f to %.1f neither ends at 400 N (%.1f) nor starts at 1600 N (%.1f)", start, end, xl, xh)
		}
	}
	for _, r := range root.byClass("calibrated-range") {
		if x := r.num(t, "x1"); math.Abs(x-xl) > 0.2 && math.Abs(x-xh) > 0.2 {
			t.Errorf("a calibrated-range line at x %.1f, not at 400 N (%.1f) or 1600 N (%.1f)", x, xl, xh)
		}
	}
}

// TestChartWithoutToolModel: one column cannot identify the tool model, so
// only its own table is drawn (no extrapolated part) and a caution says so.
func TestChartWithoutToolModel(t *testing.T) {
	cal := synthCalibration(t)
	cal.Columns = cal.Columns[2:3] // 2.0 mm only
	m, err := tension.Fit(cal, tension.Tool{})
	if err != nil {
		t.Fatal(err)
	}
	if m.Physical != nil {
		t.Fatal("one column identified a tool model")
	}
	spec := steelRound(2.0)
	root := parseSVG(t, must(draw(m, &spec, testHeading)))
	if n := len(root.all(func(x *svgNode) bool { return x.hasClass("extrapolated") && x.hasClass("segment") })); n != 0 {
		t.Errorf("%d extrapolated segments without a tool model", n)
	}
	for _, s := range []string{"No tool model", "half-unit reading resolution", "not calibrated"} {
		if !strings.Contains(root.texts(), s) {
			t.Errorf("without a tool model the chart does not say %q", s)
		}
	}
	other := steelRound(2.3)
	if _, err := draw(m, &other, testHeading); err == nil {
		t.Error("a section outside the only column was drawn without a tool model")
	}
}

// TestChartEscapes: the tool's label and serial are text, never markup.
func TestChartEscapes(t *testing.T) {
	m := synthModel(t)
	h := testHeading
	h.ToolLabel, h.ToolSerial = `<b>"shop" & co</b>`, "]]><x/>"
	root := parseSVG(t, must(draw(m, nil, h)))
	if got := root.byClass("title")[0].Text; !strings.Contains(got, h.ToolLabel) || !strings.Contains(got, h.ToolSerial) {
		t.Errorf("title %q", got)
	}
}

// TestTicks: 1-2-5 steps covering the range; 1400/8 = 175 → the next 1-2-5 step is 200.
func TestTicks(t *testing.T) {
	if diff := cmp.Diff([]float64{400, 600, 800, 1000, 1200, 1400, 1600}, ticks(300, 1700)); diff != "" {
		t.Errorf("ticks (-want +got):\n%s", diff)
	}
	if got := ticks(1, 1); got != nil {
		t.Errorf("empty range ticks %v", got)
	}
}

// TestWrapWords: lines stay within the width and keep every word.
func TestWrapWords(t *testing.T) {
	s := "dotted: extrapolated, the fitted tool model beyond the calibrated sections or tensions"
	lines := wrapWords(s, 20)
	for _, l := range lines {
		if len([]rune(l)) > 20 {
			t.Errorf("line %q is longer than 20", l)
		}
	}
	if got := strings.Join(lines, " "); got != s {
		t.Errorf("rewrapped %q", got)
	}
}
