package tension

import (
	"bytes"
	"encoding/xml"
	"fmt"
	"math"
)

// Chart geometry, in SVG user units.
const (
	chartW, chartH                  = 1000.0, 540.0
	marginL, marginR, marginT, marg = 70.0, 330.0, 40.0, 55.0
	chartSamples                    = 60
)

var palette = []string{"#1f77b4", "#d62728", "#2ca02c", "#9467bd", "#8c564b", "#e377c2", "#17becf", "#bcbd22"}

// Chart draws the calibration as an SVG: each column's points, the fitted
// tool model's curve for each column, and — when spec is not nil — that
// section's curve (reading against tension) with its 95 % band, on axes of
// tension (N) and reading with ticks, labels and a legend. Without a tool
// model the columns' own curves are drawn and a spec that is not a column
// is refused like a conversion would be.
func (m *Model) Chart(spec *SpokeSpec) ([]byte, error) {
	var req *prepared
	if spec != nil {
		p, err := m.prepare(*spec, "/spoke")
		if err != nil {
			return nil, err
		}
		if m.Physical == nil && p.col < 0 {
			return nil, impossible("/spoke", "%s", m.Unidentified)
		}
		req = &p
	}
	lo, hi := m.TensionRangeN[0], m.TensionRangeN[1]
	tMin, tMax := math.Max(0, lo-0.15*(hi-lo)), hi+0.15*(hi-lo)
	if !(tMax > tMin) {
		tMin, tMax = 0, math.Max(1, 2*hi)
	}
	type series struct {
		color, label string
		pts          [][2]float64 // (tension, reading)
		band         [][2]float64 // upper then lower
		dots         []Point
		wide         bool
	}
	var all []series
	curveOf := func(p *prepared, withBand bool) (line, band [][2]float64) {
		var upper, lower [][2]float64
		for k := 0; k <= chartSamples; k++ {
			t := tMin + (tMax-tMin)*float64(k)/chartSamples
			if t <= 0 {
				continue
			}
			if m.Physical != nil {
				r, st, ok := forward(m.Physical.Params, p.es, m.UnitMM, t)
				if !ok {
					continue
				}
				line = append(line, [2]float64{t, r})
				if withBand {
					g := make([]float64, len(m.Physical.Params))
					drdT := gradient(m.Physical.Params, p.es, m.UnitMM, st, g)
					w := m.halfWidthUnits(g)
					if drdT > 0 {
						// The band a target at t reports (edge.go floor).
						w, _, _ = p.widenUnits(t, w, drdT)
					}
					upper = append(upper, [2]float64{t, r + w})
					lower = append(lower, [2]float64{t, r - w})
				}
			} else if p.col >= 0 && m.Columns[p.col].Curve != nil {
				cv := m.Columns[p.col].Curve.cubic()
				if r, ok := cv.invert(t); ok {
					line = append(line, [2]float64{t, r})
					if withBand {
						w, _ := m.columnHalfWidth()
						upper = append(upper, [2]float64{t, r + w})
						lower = append(lower, [2]float64{t, r - w})
					}
				}
			}
		}
		for k := len(lower) - 1; k >= 0; k-- {
			upper = append(upper, lower[k])
		}
		return line, upper
	}
	for i, c := range m.Columns {
		p, err := m.prepare(c.Spoke, "")
		if err != nil {
			return nil, err
		}
		line, _ := curveOf(&p, false)
		all = append(all, series{color: palette[i%len(palette)], label: fmt.Sprintf("%s (%s)", c.section().describe(), c.Source), pts: line, dots: c.Points})
	}
	if req != nil {
		line, band := curveOf(req, true)
		all = append(all, series{color: "#000000", label: "requested: " + req.sec.describe() + " with 95 % band", pts: line, band: band, wide: true})
	}
	rMin, rMax := math.Inf(1), math.Inf(-1)
	for _, s := range all {
		for _, q := range append(append([][2]float64{}, s.pts...), s.band...) {
			rMin, rMax = math.Min(rMin, q[1]), math.Max(rMax, q[1])
		}
		for _, d := range s.dots {
			rMin, rMax = math.Min(rMin, d.Reading), math.Max(rMax, d.Reading)
		}
	}
	if !(rMax > rMin) {
		rMin, rMax = rMin-1, rMin+1
	}
	pad := 0.05 * (rMax - rMin)
	rMin, rMax = rMin-pad, rMax+pad
	x0, x1 := marginL, chartW-marginR
	y0, y1 := chartH-marg, marginT
	sx := func(t float64) float64 { return x0 + (t-tMin)/(tMax-tMin)*(x1-x0) }
	sy := func(r float64) float64 { return y0 + (r-rMin)/(rMax-rMin)*(y1-y0) }

	var b bytes.Buffer
	text := func(x, y float64, anchor, size, s string, extra string) {
		fmt.Fprintf(&b, `<text x="%.1f" y="%.1f" text-anchor="%s" font-size="%s" %s>`, x, y, anchor, size, extra)
		_ = xml.EscapeText(&b, []byte(s))
		b.WriteString("</text>\n")
	}
	fmt.Fprintf(&b, `<svg xmlns="http://www.w3.org/2000/svg" width="%.0f" height="%.0f" viewBox="0 0 %.0f %.0f" font-family="sans-serif">`+"\n", chartW, chartH, chartW, chartH)
	fmt.Fprintf(&b, `<rect x="0" y="0" width="%.0f" height="%.0f" fill="#ffffff"/>`+"\n", chartW, chartH)
	text(chartW/2, 22, "middle", "15", "Tensiometer calibration: reading against spoke tension", `font-weight="bold"`)
	// Axes, ticks, grid.
	for _, v := range ticks(tMin, tMax) {
		x := sx(v)
		fmt.Fprintf(&b, `<line x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="#e6e6e6"/>`+"\n", x, y0, x, y1)
		fmt.Fprintf(&b, `<line x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="#000"/>`+"\n", x, y0, x, y0+5)
		text(x, y0+18, "middle", "11", fmt.Sprintf("%g", v), "")
	}
	for _, v := range ticks(rMin, rMax) {
		y := sy(v)
		fmt.Fprintf(&b, `<line x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="#e6e6e6"/>`+"\n", x0, y, x1, y)
		fmt.Fprintf(&b, `<line x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="#000"/>`+"\n", x0-5, y, x0, y)
		text(x0-8, y+4, "end", "11", fmt.Sprintf("%g", v), "")
	}
	fmt.Fprintf(&b, `<rect x="%.1f" y="%.1f" width="%.1f" height="%.1f" fill="none" stroke="#000"/>`+"\n", x0, y1, x1-x0, y0-y1)
	text((x0+x1)/2, chartH-12, "middle", "13", "tension (N)", "")
	text(18, (y0+y1)/2, "middle", "13", "reading (dial units)", fmt.Sprintf(`transform="rotate(-90 18 %.1f)"`, (y0+y1)/2))
	// Clip the data to the plot area.
	fmt.Fprintf(&b, `<clipPath id="plot"><rect x="%.1f" y="%.1f" width="%.1f" height="%.1f"/></clipPath>`+"\n", x0, y1, x1-x0, y0-y1)
	b.WriteString(`<g clip-path="url(#plot)">` + "\n")
	for _, s := range all {
		if len(s.band) > 2 {
			b.WriteString(`<polygon class="band" fill="#000000" fill-opacity="0.12" stroke="none" points="`)
			for _, q := range s.band {
				fmt.Fprintf(&b, "%.1f,%.1f ", sx(q[0]), sy(q[1]))
			}
			b.WriteString("\"/>\n")
		}
		if len(s.pts) > 1 {
			width := "1.5"
			if s.wide {
				width = "2.5"
			}
			fmt.Fprintf(&b, `<polyline class="curve" fill="none" stroke="%s" stroke-width="%s" points="`, s.color, width)
			for _, q := range s.pts {
				fmt.Fprintf(&b, "%.1f,%.1f ", sx(q[0]), sy(q[1]))
			}
			b.WriteString("\"/>\n")
		}
		for _, d := range s.dots {
			fmt.Fprintf(&b, `<circle class="point" cx="%.1f" cy="%.1f" r="3" fill="%s"/>`+"\n", sx(d.TensionN), sy(d.Reading), s.color)
		}
	}
	b.WriteString("</g>\n")
	// Legend.
	lx, ly := x1+12, marginT+8
	text(lx, ly, "start", "12", "legend", `font-weight="bold"`)
	for i, s := range all {
		y := ly + 20 + float64(i)*34
		fmt.Fprintf(&b, `<line x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="%s" stroke-width="2.5"/>`+"\n", lx, y, lx+22, y, s.color)
		if len(s.dots) > 0 {
			fmt.Fprintf(&b, `<circle cx="%.1f" cy="%.1f" r="3" fill="%s"/>`+"\n", lx+11, y, s.color)
		}
		text(lx+28, y+4, "start", "10", s.label, `class="legend"`)
	}
	note := "points: calibration; lines: fitted tool model"
	if m.Physical == nil {
		note = "points and lines: calibrated columns (no tool model)"
	}
	text(lx, ly+20+float64(len(all))*34, "start", "10", note, "")
	b.WriteString("</svg>\n")
	return b.Bytes(), nil
}

// ticks returns round tick values covering [lo, hi] with a 1-2-5 step.
func ticks(lo, hi float64) []float64 {
	if !(hi > lo) || !finite(lo) || !finite(hi) {
		return nil
	}
	raw := (hi - lo) / 8 // aim for about eight intervals
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
