// Package chart draws a tensiometer calibration as an SVG for screen and
// print: a view of tension.Chart, the curves the tension package computes.
// It does no conversion of its own and reads no database or JSON.
package chart

import (
	"bytes"
	"encoding/xml"
	"fmt"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"
	"time"

	"wheelbench/service/tension"
)

// Heading is what a chart's title names: the tool and the calibration
// version drawn.
type Heading struct {
	ToolLabel          string
	ToolSerial         string
	CalibrationVersion int
	Source             string    // the calibration's source: maker_table or known_tension
	Published          time.Time // when the version was published; zero leaves it out
}

// Chart geometry, in SVG user units (CSS pixels: 1000 wide is 265 mm
// printed at 96 per inch, inside an A4 or Letter landscape sheet).
const (
	chartW             = 1000.0
	plotL, plotR       = 84.0, 640.0 // plot area, left and right
	plotT, plotB       = 100.0, 392.0
	panelT, panelB     = 408.0, 500.0 // the band panel, under the plot
	legendX            = 728.0
	legendWrap         = 38  // characters per legend line
	cautionWrap        = 160 // characters per caution line
	lineGap            = 13.0
	directLabelMinGapY = 12.0
	// panelSpan is the band panel's half-height as a multiple of the
	// widest half-band drawn, so the band fills most of it.
	panelSpan = 1.6
)

// Series styles: colour (a palette that stays apart for colour-blind
// readers), dash pattern and marker, so that a black-and-white print tells
// the series apart too. Dotted is kept for extrapolated parts.
var (
	seriesColours = []string{"#0072b2", "#d55e00", "#009e73", "#aa4499", "#a06f00", "#4d4d4d", "#3a9fd8"}
	seriesDashes  = []string{"", "10 3", "10 3 2 3", "5 2.5", "14 3 2 3 2 3", "16 4", "7 2 2 2 2 2"}
	seriesMarkers = []string{"circle", "square", "triangle", "diamond", "triangle-down", "cross", "plus"}
)

// dotted is the dash pattern of every extrapolated part of a curve.
const dotted = "0.1 4"

// halo keeps a label legible over lines and hatching: a white outline
// painted under the glyphs.
const halo = ` stroke="#ffffff" stroke-width="3" stroke-linejoin="round" paint-order="stroke"`

type chartSeries struct {
	label     string // legend text
	short     string // label beside the curve's end
	colour    string
	dash      string
	marker    string
	pieces    [][]tension.ChartSample // contiguous runs; gaps where no value exists
	dots      []tension.Point
	requested bool
}

// SVG draws c: each column's points and curve and — when c has a requested
// section — that section's curve with its 95 % band, reading against
// tension (N, with a kgf scale). Parts that a conversion would call
// extrapolated are dotted, the band is hatched there and labelled, and
// tensions outside the calibrated range are hatched. On the plot's reading
// scale the band is only a few pixels high, so a panel under it draws the
// band again, magnified, about the aim reading, with the tension interval
// printed under each tension tick; the cautions are printed under
// everything. Without a tool model only the columns' own tables are drawn.
func SVG(c tension.Chart, h Heading) []byte {
	lo, hi := c.CalibratedN[0], c.CalibratedN[1]
	tMin, tMax := c.FromN, c.ToN
	var all []chartSeries
	for i, col := range c.Columns {
		k := i % len(seriesColours)
		all = append(all, chartSeries{
			label:  fmt.Sprintf("%s; %s", col.Section, sourceWords(col.Source)),
			short:  col.Short,
			colour: seriesColours[k], dash: seriesDashes[k], marker: seriesMarkers[k],
			pieces: col.Pieces, dots: col.Points,
		})
	}
	var reqSeries *chartSeries
	halfMax, halfMin := 0.0, math.Inf(1) // the requested band's half-widths, dial units
	var halves []float64
	if req := c.Requested; req != nil {
		s := chartSeries{short: req.Short, colour: "#000000", pieces: req.Pieces, requested: true}
		for _, pc := range s.pieces {
			for _, q := range pc {
				halfMax = math.Max(halfMax, math.Max(q.High-q.Reading, q.Reading-q.Low))
				halfMin = math.Min(halfMin, math.Min(q.High-q.Reading, q.Reading-q.Low))
				halves = append(halves, math.Max(q.High-q.Reading, q.Reading-q.Low))
			}
		}
		slices.Sort(halves)
		s.label = "requested: " + req.Section + ", with its 95 % band"
		if a, z := fmtNum(halfMin, 1), fmtNum(halfMax, 1); a == z {
			s.label += fmt.Sprintf(" (±%s dial units; magnified below)", z)
		} else if halfMax > 0 {
			s.label += fmt.Sprintf(" (±%s to ±%s dial units; magnified below)", a, z)
		}
		all = append(all, s)
		reqSeries = &all[len(all)-1]
	}

	// Reading range over every curve and point, and each band where it is
	// no wider than three typical bands: an extrapolated end's very wide
	// band is clipped by the plot rather than squeezing every curve (its
	// figures are in the label and the band panel).
	rMin, rMax := math.Inf(1), math.Inf(-1)
	capHalf := math.Inf(1)
	if len(halves) > 0 {
		capHalf = 3 * halves[len(halves)/2]
	}
	for _, s := range all {
		for _, pc := range s.pieces {
			for _, q := range pc {
				lo, hi := q.Low, q.High
				if q.High-q.Low > 2*capHalf {
					lo, hi = q.Reading, q.Reading
				}
				rMin, rMax = math.Min(rMin, lo), math.Max(rMax, hi)
			}
		}
		for _, d := range s.dots {
			rMin, rMax = math.Min(rMin, d.Reading), math.Max(rMax, d.Reading)
		}
	}
	if !finite(rMin) || !finite(rMax) {
		rMin, rMax = 0, 1
	}
	if !(rMax > rMin) {
		rMin, rMax = rMin-1, rMin+1
	}
	pad := 0.04 * (rMax - rMin)
	rMin, rMax = rMin-pad, rMax+pad
	sx := func(t float64) float64 { return plotL + (t-tMin)/(tMax-tMin)*(plotR-plotL) }
	sy := func(r float64) float64 { return plotB + (r-rMin)/(rMax-rMin)*(plotT-plotB) }
	panel := reqSeries != nil && halfMax > 0
	// The panel's scale: the widest band, unless it is far wider than the
	// typical one (an extrapolated end can be); then three times the median,
	// so the typical band stays a readable height and the widest is clipped
	// (its figures are in the label and the interval row).
	dMax := panelSpan * halfMax
	if len(halves) > 0 {
		dMax = panelSpan * math.Min(halfMax, 3*halves[len(halves)/2])
	}
	sd := func(d float64) float64 { return (panelT+panelB)/2 - d/dMax*(panelB-panelT)/2 }
	axisB := plotB
	if panel {
		axisB = panelB
	}

	type cautionLine struct {
		text  string
		first bool
	}
	var cautionLines []cautionLine
	for _, caution := range c.Cautions {
		for i, l := range wrapWords(caution, cautionWrap) {
			cautionLines = append(cautionLines, cautionLine{l, i == 0})
		}
	}
	cautionsY := axisB + 66
	if panel {
		cautionsY += 14
	}

	// Legend first into its own buffer: its height decides the picture's.
	var lg bytes.Buffer
	legendBottom := drawLegend(&lg, all, lo, hi)
	height := axisB + 58
	if len(cautionLines) > 0 {
		height = cautionsY + 6 + float64(len(cautionLines))*13.5
	}
	height = math.Ceil(math.Max(height, legendBottom) + 12)

	var b bytes.Buffer
	fmt.Fprintf(&b, `<svg xmlns="http://www.w3.org/2000/svg" width="%.0f" height="%.0f" viewBox="0 0 %.0f %.0f" font-family="DejaVu Sans, Liberation Sans, Arial, sans-serif">`+"\n", chartW, height, chartW, height)
	b.WriteString(chartDefs)
	fmt.Fprintf(&b, `<rect x="0" y="0" width="%.0f" height="%.0f" fill="#ffffff"/>`+"\n", chartW, height)
	text(&b, 24, 26, "start", 17, h.title(), `class="title" font-weight="bold"`)
	text(&b, 24, 46, "start", 12, subtitle(c, h), `class="subtitle"`)

	xl, xh := sx(lo), sx(hi)
	// background draws, for a panel from top to bottom, the tensions
	// outside the calibrated range hatched, the grid at the tension ticks
	// and the calibrated range's ends.
	background := func(top, bottom float64) {
		for _, z := range [][2]float64{{plotL, xl}, {xh, plotR}} {
			if z[1]-z[0] < 0.5 {
				continue
			}
			fmt.Fprintf(&b, `<rect class="outside-range" x="%.1f" y="%.1f" width="%.1f" height="%.1f" fill="url(#zone-hatch)"/>`+"\n", z[0], top, z[1]-z[0], bottom-top)
		}
		for _, v := range ticks(tMin, tMax) {
			line(&b, sx(v), bottom, sx(v), top, `stroke="#dddddd" stroke-width="0.8"`)
		}
		for _, x := range []float64{xl, xh} {
			line(&b, x, bottom, x, top, `class="calibrated-range" stroke="#333333" stroke-width="1" stroke-dasharray="5 3"`)
		}
	}
	background(plotT, plotB)
	for _, v := range ticks(rMin, rMax) {
		line(&b, plotL, sy(v), plotR, sy(v), `stroke="#dddddd" stroke-width="0.8"`)
	}

	// band draws the requested section's band with its edges; y maps a
	// sample and one of its values to a y.
	band := func(class string, edges bool, y func(q tension.ChartSample, v float64) float64) {
		for _, pc := range reqSeries.pieces {
			for _, seg := range segments(pc) {
				cls, fill := class, `fill="#bdbdbd" fill-opacity="0.8"`
				if seg.extrapolated {
					cls, fill = class+" extrapolated", `fill="url(#band-hatch)"`
				}
				fmt.Fprintf(&b, `<polygon class="%s" %s stroke="none" points="`, cls, fill)
				for _, q := range seg.pts {
					fmt.Fprintf(&b, "%.1f,%.1f ", sx(q.TensionN), y(q, q.High))
				}
				for k := len(seg.pts) - 1; k >= 0; k-- {
					fmt.Fprintf(&b, "%.1f,%.1f ", sx(seg.pts[k].TensionN), y(seg.pts[k], seg.pts[k].Low))
				}
				b.WriteString("\"/>\n")
				if !edges {
					continue
				}
				for _, edge := range []func(tension.ChartSample) float64{func(q tension.ChartSample) float64 { return q.High }, func(q tension.ChartSample) float64 { return q.Low }} {
					b.WriteString(`<polyline class="band-edge" fill="none" stroke="#000000" stroke-width="0.8" points="`)
					for _, q := range seg.pts {
						fmt.Fprintf(&b, "%.1f,%.1f ", sx(q.TensionN), y(q, edge(q)))
					}
					b.WriteString("\"/>\n")
				}
			}
		}
	}
	// curve draws one series' segments, solid or its own dashes where
	// calibrated or interpolated, dotted where extrapolated.
	curve := func(s chartSeries, width float64, y func(q tension.ChartSample) float64) {
		for _, pc := range s.pieces {
			for _, seg := range segments(pc) {
				cls, dash, w := "segment", s.dash, width
				if seg.extrapolated {
					cls, dash, w = "segment extrapolated", dotted, width+0.8
				}
				fmt.Fprintf(&b, `<polyline class="%s" fill="none" stroke="%s" stroke-width="%.1f" stroke-linecap="round" stroke-linejoin="round"`, cls, s.colour, w)
				if dash != "" {
					fmt.Fprintf(&b, ` stroke-dasharray="%s"`, dash)
				}
				b.WriteString(` points="`)
				for _, q := range seg.pts {
					fmt.Fprintf(&b, "%.1f,%.1f ", sx(q.TensionN), y(q))
				}
				b.WriteString("\"/>\n")
			}
		}
	}
	// extrapolatedLabels writes "extrapolated" over the middle of each long
	// extrapolated part of the requested curve, on a white halo; y gives
	// the label's position for a sample.
	extrapolatedLabels := func(y func(q tension.ChartSample) float64) {
		for _, pc := range reqSeries.pieces {
			for _, seg := range segments(pc) {
				if !seg.extrapolated || sx(seg.pts[len(seg.pts)-1].TensionN)-sx(seg.pts[0].TensionN) < 70 {
					continue
				}
				q := seg.pts[len(seg.pts)/2]
				label := "extrapolated"
				for _, p := range seg.pts {
					if p.Unreliable {
						label = "extrapolated, unreliable"
						break
					}
				}
				text(&b, sx(q.TensionN), y(q), "middle", 12, label, `class="series-label extrapolated" font-style="italic" font-weight="bold"`+halo)
			}
		}
	}

	fmt.Fprintf(&b, `<clipPath id="plot"><rect x="%.1f" y="%.1f" width="%.1f" height="%.1f"/></clipPath>`+"\n", plotL, plotT, plotR-plotL, plotB-plotT)
	b.WriteString(`<g clip-path="url(#plot)">` + "\n")
	if reqSeries != nil {
		// No edges here: on the plot's scale the band is a few pixels
		// high and edges would hide the dotted curve; the panel has them.
		band("band", false, func(_ tension.ChartSample, v float64) float64 { return sy(v) })
	}
	for _, s := range all {
		fmt.Fprintf(&b, `<g class="curve" data-series="%s">`+"\n", map[bool]string{false: "column", true: "requested"}[s.requested])
		width := 1.8
		if s.requested {
			width = 1.6
		}
		curve(s, width, func(q tension.ChartSample) float64 { return sy(q.Reading) })
		for _, d := range s.dots {
			marker(&b, s.marker, sx(d.TensionN), sy(d.Reading), s.colour, `class="point"`)
		}
		b.WriteString("</g>\n")
	}
	if reqSeries != nil {
		extrapolatedLabels(func(q tension.ChartSample) float64 {
			if y := sy(q.High) - 8; y > plotT+30 {
				return y
			}
			return sy(q.Low) + 16
		})
	}
	// The range and zone labels, each where the curves leave room.
	rangeText := fmt.Sprintf("calibrated tensions %s–%s N (%s–%s kgf)",
		fmtNum(lo, 0), fmtNum(hi, 0), fmtNum(tension.KgfFromN(lo), 0), fmtNum(tension.KgfFromN(hi), 0))
	half := textWidth(rangeText, 10.5)/2 + 4
	if top, bottom := freeGap(all, sx, sy, (xl+xh)/2-half, (xl+xh)/2+half); bottom-top >= 16 {
		text(&b, (xl+xh)/2, (top+bottom)/2+4, "middle", 10.5, rangeText, `class="range-label" fill="#333333"`+halo)
	} else {
		text(&b, (xl+xh)/2, plotT+14, "middle", 10.5, rangeText, `class="range-label" fill="#333333"`+halo)
	}
	zoneWord := "extrapolated"
	if !c.ToolModel {
		zoneWord = "not calibrated" // nothing is drawn there
	}
	for _, z := range [][2]float64{{plotL, xl}, {xh, plotR}} {
		if z[1]-z[0] < 16 {
			continue
		}
		cx := (z[0] + z[1]) / 2
		top, bottom := freeGap(all, sx, sy, cx-8, cx+8)
		cy := (top + bottom) / 2
		text(&b, cx+4, cy, "middle", 10.5, zoneWord, fmt.Sprintf(`class="zone-label" font-style="italic" fill="#333333" transform="rotate(-90 %.1f %.1f)"`, cx+4, cy)+halo)
	}
	b.WriteString("</g>\n")
	fmt.Fprintf(&b, `<rect x="%.1f" y="%.1f" width="%.1f" height="%.1f" fill="none" stroke="#000000" stroke-width="1"/>`+"\n", plotL, plotT, plotR-plotL, plotB-plotT)

	// Axes: tension in N at the bottom, kgf above the plot, reading on the
	// left.
	for _, v := range ticks(tMin, tMax) {
		x := sx(v)
		line(&b, x, axisB, x, axisB+5, `stroke="#000000"`)
		text(&b, x, axisB+18, "middle", 11, fmtNum(v, -1), `class="tick-n"`)
	}
	text(&b, (plotL+plotR)/2, axisB+38, "middle", 13, "spoke tension (N)", `class="axis-label"`)
	for _, v := range ticks(tension.KgfFromN(tMin), tension.KgfFromN(tMax)) {
		x := sx(tension.NFromKgf(v))
		if x < plotL-0.5 || x > plotR+0.5 {
			continue
		}
		line(&b, x, plotT, x, plotT-5, `stroke="#000000"`)
		text(&b, x, plotT-9, "middle", 11, fmtNum(v, -1), `class="tick-kgf"`)
	}
	text(&b, (plotL+plotR)/2, plotT-27, "middle", 13, "spoke tension (kgf)", `class="axis-label"`)
	for _, v := range ticks(rMin, rMax) {
		y := sy(v)
		line(&b, plotL-5, y, plotL, y, `stroke="#000000"`)
		text(&b, plotL-8, y+4, "end", 11, fmtNum(v, -1), `class="tick-r"`)
	}
	ry := (plotT + plotB) / 2
	text(&b, 22, ry, "middle", 13, fmt.Sprintf("dial reading (units of %s mm)", fmtNum(c.UnitMM, -1)),
		fmt.Sprintf(`class="axis-label" transform="rotate(-90 22 %.1f)"`, ry))

	// The band panel: the requested band about its aim reading, magnified.
	if panel {
		background(panelT, panelB)
		for _, v := range ticksN(-dMax, dMax, 4) {
			line(&b, plotL, sd(v), plotR, sd(v), `stroke="#dddddd" stroke-width="0.8"`)
			line(&b, plotL-5, sd(v), plotL, sd(v), `stroke="#000000"`)
			text(&b, plotL-8, sd(v)+4, "end", 11, fmtNum(v, -1), `class="tick-d"`)
		}
		fmt.Fprintf(&b, `<clipPath id="panel"><rect x="%.1f" y="%.1f" width="%.1f" height="%.1f"/></clipPath>`+"\n", plotL, panelT, plotR-plotL, panelB-panelT)
		b.WriteString(`<g clip-path="url(#panel)">` + "\n")
		band("band-detail", true, func(q tension.ChartSample, v float64) float64 { return sd(v - q.Reading) })
		b.WriteString(`<g class="aim-line">` + "\n")
		curve(*reqSeries, 1.6, func(tension.ChartSample) float64 { return sd(0) })
		b.WriteString("</g>\n")
		extrapolatedLabels(func(tension.ChartSample) float64 { return sd(0) + 4 })
		b.WriteString("</g>\n")
		fmt.Fprintf(&b, `<rect x="%.1f" y="%.1f" width="%.1f" height="%.1f" fill="none" stroke="#000000" stroke-width="1"/>`+"\n", plotL, panelT, plotR-plotL, panelB-panelT)
		text(&b, plotL+6, panelT+13, "start", 10.5, fmt.Sprintf("%s: 95 %% band magnified, in dial units above and below the reading to aim for", reqSeries.short),
			`class="panel-title"`+halo)
		py := (panelT + panelB) / 2
		text(&b, 22, py, "middle", 11, "± dial units", fmt.Sprintf(`class="axis-label" transform="rotate(-90 22 %.1f)"`, py))
		// The tension interval at each tension tick, as a conversion of the
		// aim reading gives it.
		iy := axisB + 56
		text(&b, plotR+8, iy, "start", 10.5, "95 % interval of the tension (N)", `class="interval-label"`)
		for _, v := range ticks(tMin, tMax) {
			text(&b, sx(v), iy, "middle", 10.5, tensionInterval(c, v), `class="interval-n"`)
		}
	}

	// Labels beside the curves' right ends, kept apart.
	type endLabel struct {
		y      float64
		text   string
		colour string
		bold   bool
	}
	var ends []endLabel
	for _, s := range all {
		if n := len(s.pieces); n > 0 {
			pc := s.pieces[n-1]
			q := pc[len(pc)-1]
			ends = append(ends, endLabel{sy(q.Reading), s.short, s.colour, s.requested})
		}
	}
	sort.Slice(ends, func(i, j int) bool { return ends[i].y < ends[j].y })
	for i := 1; i < len(ends); i++ {
		ends[i].y = math.Max(ends[i].y, ends[i-1].y+directLabelMinGapY)
	}
	if n := len(ends); n > 0 && ends[n-1].y > plotB {
		ends[n-1].y = plotB
		for i := n - 2; i >= 0; i-- {
			ends[i].y = math.Min(ends[i].y, ends[i+1].y-directLabelMinGapY)
		}
	}
	for _, e := range ends {
		extra := fmt.Sprintf(`class="end-label" fill="%s"`, e.colour)
		if e.bold {
			extra += ` font-weight="bold"`
		}
		text(&b, plotR+5, e.y+4, "start", 10.5, e.text, extra)
	}

	b.Write(lg.Bytes())

	if len(cautionLines) > 0 {
		text(&b, 24, cautionsY, "start", 13, "Cautions", `class="cautions-title" font-weight="bold"`)
		for i, l := range cautionLines {
			yl := cautionsY + 17 + float64(i)*13.5
			if l.first {
				text(&b, 26, yl, "start", 11, "•", "")
			}
			text(&b, 38, yl, "start", 11, l.text, `class="caution"`)
		}
	}
	b.WriteString("</svg>\n")
	return b.Bytes()
}

// tensionInterval is the 95 % tension interval, as "−a/+b" newtons about
// the tension a conversion of the aim reading at tensionN gives; "–" when
// there is none.
func tensionInterval(c tension.Chart, tensionN float64) string {
	t, iv, ok := c.TensionInterval(tensionN)
	if !ok {
		return "–"
	}
	return fmt.Sprintf("−%s/+%s", fmtNum(t-iv[0], 0), fmtNum(iv[1]-t, 0))
}

// chartDefs are the hatch patterns: light diagonals for tensions outside
// the calibrated range, dark diagonals on grey for the band where it is
// extrapolated.
const chartDefs = `<defs>
<pattern id="zone-hatch" width="8" height="8" patternUnits="userSpaceOnUse" patternTransform="rotate(45)"><line x1="0" y1="0" x2="0" y2="8" stroke="#c8c8c8" stroke-width="2"/></pattern>
<pattern id="band-hatch" width="5" height="5" patternUnits="userSpaceOnUse" patternTransform="rotate(-45)"><rect width="5" height="5" fill="#d4d4d4"/><line x1="0" y1="0" x2="0" y2="5" stroke="#000000" stroke-width="1"/></pattern>
</defs>
`

type chartSegment struct {
	pts          []tension.ChartSample
	extrapolated bool
}

// segments splits a contiguous piece where it changes between calibrated
// or interpolated and extrapolated. Neighbouring segments share the
// boundary sample, which is always the non-extrapolated one, so the curve
// stays joined and no solid segment reaches an extrapolated tension.
func segments(pc []tension.ChartSample) []chartSegment {
	var out []chartSegment
	for i, q := range pc {
		if i == 0 || q.Extrapolated != pc[i-1].Extrapolated {
			if i > 0 && !q.Extrapolated {
				// Extrapolated → not: the boundary sample ends the
				// extrapolated segment too.
				out[len(out)-1].pts = append(out[len(out)-1].pts, q)
			}
			seg := chartSegment{extrapolated: q.Extrapolated}
			if i > 0 && q.Extrapolated {
				seg.pts = append(seg.pts, pc[i-1])
			}
			out = append(out, seg)
		}
		out[len(out)-1].pts = append(out[len(out)-1].pts, q)
	}
	return out
}

// freeGap returns the tallest vertical stretch of the plot that no curve,
// band or marker crosses between x positions xa and xb, for a label.
func freeGap(all []chartSeries, sx, sy func(float64) float64, xa, xb float64) (top, bottom float64) {
	type span struct{ a, b float64 }
	var spans []span
	const pad = 3.0
	for _, s := range all {
		for _, pc := range s.pieces {
			for i, q := range pc {
				x := sx(q.TensionN)
				near := x >= xa && x <= xb
				// A sample just outside the range still draws a line into it.
				if !near && i > 0 {
					px := sx(pc[i-1].TensionN)
					near = (px < xa) != (x < xa) || (px < xb) != (x < xb)
				}
				if !near {
					continue
				}
				y1, y2 := sy(q.Reading), sy(q.Reading)
				if s.requested {
					y1, y2 = sy(q.High), sy(q.Low)
				}
				spans = append(spans, span{math.Min(y1, y2) - pad, math.Max(y1, y2) + pad})
				if i > 0 && !(sx(pc[i-1].TensionN) >= xa && sx(pc[i-1].TensionN) <= xb) {
					p := pc[i-1]
					spans = append(spans, span{math.Min(sy(p.Reading), sy(q.Reading)) - pad, math.Max(sy(p.Reading), sy(q.Reading)) + pad})
				}
			}
		}
		for _, d := range s.dots {
			if x := sx(d.TensionN); x >= xa-6 && x <= xb+6 {
				spans = append(spans, span{sy(d.Reading) - 6, sy(d.Reading) + 6})
			}
		}
	}
	sort.Slice(spans, func(i, j int) bool { return spans[i].a < spans[j].a })
	top, bottom = plotT, plotT
	cur := plotT
	consider := func(a, z float64) {
		if z-a > bottom-top {
			top, bottom = a, z
		}
	}
	for _, sp := range spans {
		if sp.a > cur {
			consider(cur, math.Min(sp.a, plotB))
		}
		cur = math.Max(cur, sp.b)
	}
	if cur < plotB {
		consider(cur, plotB)
	}
	return top, bottom
}

// textWidth estimates a label's width: about 0.56 em per character in the
// sans-serif faces the chart names.
func textWidth(s string, size float64) float64 { return 0.56 * size * float64(len([]rune(s))) }

// drawLegend writes the legend at the right of the plot and returns its
// lowest y.
func drawLegend(b *bytes.Buffer, all []chartSeries, lo, hi float64) float64 {
	x := legendX
	y := plotT - 4
	text(b, x, y, "start", 13, "Legend", `font-weight="bold"`)
	y += 20
	entry := func(label string, sample func(y float64)) {
		lines := wrapWords(label, legendWrap)
		sample(y)
		for i, l := range lines {
			text(b, x+44, y+4+float64(i)*lineGap, "start", 11, l, `class="legend"`)
		}
		y += float64(len(lines))*lineGap + 9
	}
	for _, s := range all {
		if s.requested {
			// Drawn as the curve mostly is: dotted on a hatched band when
			// extrapolated, solid on grey otherwise.
			ext, n := 0, 0
			for _, pc := range s.pieces {
				for _, q := range pc {
					n++
					if q.Extrapolated {
						ext++
					}
				}
			}
			fill, stroke := `fill="#bdbdbd" fill-opacity="0.8"`, `stroke="#000000" stroke-width="1.6"`
			if 2*ext > n {
				fill, stroke = `fill="url(#band-hatch)"`, `stroke="#000000" stroke-width="2.4" stroke-linecap="round" stroke-dasharray="`+dotted+`"`
			}
			entry(s.label, func(y float64) {
				fmt.Fprintf(b, `<rect x="%.1f" y="%.1f" width="34" height="12" %s stroke="#000000" stroke-width="0.8"/>`+"\n", x, y-6, fill)
				line(b, x, y, x+34, y, stroke)
			})
			continue
		}
		entry(s.label, func(y float64) {
			extra := fmt.Sprintf(`stroke="%s" stroke-width="1.8"`, s.colour)
			if s.dash != "" {
				extra += fmt.Sprintf(` stroke-dasharray="%s"`, s.dash)
			}
			line(b, x, y, x+34, y, extra)
			marker(b, s.marker, x+17, y, s.colour, "")
		})
	}
	anyExt, reqExt := false, false
	for _, s := range all {
		for _, pc := range s.pieces {
			for _, q := range pc {
				anyExt = anyExt || q.Extrapolated
				reqExt = reqExt || (s.requested && q.Extrapolated)
			}
		}
	}
	if anyExt {
		entry("dotted: extrapolated, the fitted tool model beyond the calibrated sections or tensions", func(y float64) {
			line(b, x, y, x+34, y, fmt.Sprintf(`stroke="#000000" stroke-width="2.8" stroke-linecap="round" stroke-dasharray="%s"`, dotted))
		})
	}
	if reqExt {
		entry("hatched band: the 95 % band where it is extrapolated", func(y float64) {
			fmt.Fprintf(b, `<rect x="%.1f" y="%.1f" width="34" height="12" fill="url(#band-hatch)" stroke="#000000" stroke-width="0.8"/>`+"\n", x, y-6)
		})
	}
	entry(fmt.Sprintf("light hatching: tensions outside the calibrated %s–%s N", fmtNum(lo, 0), fmtNum(hi, 0)), func(y float64) {
		fmt.Fprintf(b, `<rect x="%.1f" y="%.1f" width="34" height="12" fill="url(#zone-hatch)" stroke="#333333" stroke-width="0.8"/>`+"\n", x, y-6)
	})
	entry("markers: the calibration's own points", func(y float64) {
		marker(b, "circle", x+17, y, "#000000", "")
	})
	return y
}

// title is the chart's first line: the tool and the calibration version.
func (h Heading) title() string {
	label := h.ToolLabel
	if label == "" {
		label = "unnamed tool"
	}
	serial := h.ToolSerial
	if serial == "" {
		serial = "not recorded"
	}
	return fmt.Sprintf("Tensiometer %s · serial %s · calibration version %d", label, serial, h.CalibrationVersion)
}

// subtitle says what is drawn and from what.
func subtitle(c tension.Chart, h Heading) string {
	parts := []string{"Dial reading to aim for against spoke tension"}
	if h.Source != "" {
		parts = append(parts, "from "+sourceWords(h.Source))
	}
	if !h.Published.IsZero() {
		parts = append(parts, "published "+h.Published.UTC().Format("2006-01-02"))
	}
	if len(c.Columns) == 1 {
		parts = append(parts, "1 calibrated section")
	} else {
		parts = append(parts, fmt.Sprintf("%d calibrated sections", len(c.Columns)))
	}
	if c.ToolModel {
		parts = append(parts, "fitted tool model beyond them")
	} else {
		parts = append(parts, "no tool model")
	}
	return strings.Join(parts, " · ")
}

func sourceWords(source string) string {
	switch source {
	case tension.SourceMakerTable:
		return "maker's table"
	case tension.SourceKnownTension:
		return "known tensions measured in the shop"
	}
	return source
}

// text writes one escaped text element.
func text(b *bytes.Buffer, x, y float64, anchor string, size float64, s, extra string) {
	fmt.Fprintf(b, `<text x="%.1f" y="%.1f" text-anchor="%s" font-size="%g"`, x, y, anchor, size)
	if extra != "" {
		b.WriteString(" " + extra)
	}
	b.WriteString(">")
	_ = xml.EscapeText(b, []byte(s))
	b.WriteString("</text>\n")
}

func line(b *bytes.Buffer, x1, y1, x2, y2 float64, extra string) {
	fmt.Fprintf(b, `<line x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" %s/>`+"\n", x1, y1, x2, y2, extra)
}

// marker draws a point marker: hollow shapes with the series' colour.
func marker(b *bytes.Buffer, kind string, x, y float64, colour, extra string) {
	style := fmt.Sprintf(`data-marker="%s" fill="#ffffff" stroke="%s" stroke-width="1.4" %s`, kind, colour, extra)
	switch kind {
	case "square":
		fmt.Fprintf(b, `<rect x="%.1f" y="%.1f" width="7" height="7" %s/>`+"\n", x-3.5, y-3.5, style)
	case "triangle":
		fmt.Fprintf(b, `<path d="M%.1f %.1fL%.1f %.1fL%.1f %.1fZ" %s/>`+"\n", x, y-4.8, x+4.4, y+3.2, x-4.4, y+3.2, style)
	case "triangle-down":
		fmt.Fprintf(b, `<path d="M%.1f %.1fL%.1f %.1fL%.1f %.1fZ" %s/>`+"\n", x, y+4.8, x+4.4, y-3.2, x-4.4, y-3.2, style)
	case "diamond":
		fmt.Fprintf(b, `<path d="M%.1f %.1fL%.1f %.1fL%.1f %.1fL%.1f %.1fZ" %s/>`+"\n", x, y-5, x+4.5, y, x, y+5, x-4.5, y, style)
	case "cross":
		fmt.Fprintf(b, `<path d="M%.1f %.1fL%.1f %.1fM%.1f %.1fL%.1f %.1f" %s/>`+"\n", x-3.8, y-3.8, x+3.8, y+3.8, x-3.8, y+3.8, x+3.8, y-3.8, style)
	case "plus":
		fmt.Fprintf(b, `<path d="M%.1f %.1fL%.1f %.1fM%.1f %.1fL%.1f %.1f" %s/>`+"\n", x-4.5, y, x+4.5, y, x, y-4.5, x, y+4.5, style)
	default:
		fmt.Fprintf(b, `<circle cx="%.1f" cy="%.1f" r="3.8" %s/>`+"\n", x, y, style)
	}
}

// fmtNum prints v with prec decimals, or the shortest form when prec < 0.
func fmtNum(v float64, prec int) string {
	if prec < 0 {
		return strconv.FormatFloat(v, 'g', -1, 64)
	}
	return strconv.FormatFloat(v, 'f', prec, 64)
}

// wrapWords breaks s into lines of at most n characters at spaces.
func wrapWords(s string, n int) []string {
	var out []string
	cur := ""
	for _, w := range strings.Fields(s) {
		switch {
		case cur == "":
			cur = w
		case len([]rune(cur))+1+len([]rune(w)) <= n:
			cur += " " + w
		default:
			out = append(out, cur)
			cur = w
		}
	}
	if cur != "" {
		out = append(out, cur)
	}
	return out
}

// ticks returns round tick values covering [lo, hi] with a 1-2-5 step,
// about eight intervals.
func ticks(lo, hi float64) []float64 { return ticksN(lo, hi, 8) }

// ticksN is ticks aiming for about n intervals.
func ticksN(lo, hi float64, n int) []float64 {
	if !(hi > lo) || !finite(lo) || !finite(hi) || n < 1 {
		return nil
	}
	raw := (hi - lo) / float64(n)
	mag := math.Pow(10, math.Floor(math.Log10(raw)))
	step := mag
	for _, f := range []float64{1, 2, 5, 10} {
		if f*mag >= raw {
			step = f * mag
			break
		}
	}
	var out []float64
	for v := math.Ceil(lo/step) * step; v <= hi+1e-9*step; v += step {
		out = append(out, math.Round(v/step)*step)
	}
	return out
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
