package tension

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"wheelbench/service/field"
)

// Chart is a calibration as a drawing shows it: for each column, and for a
// requested section when one is asked for, the reading to aim for at a run
// of tensions with its 95 % interval, computed exactly as Target computes
// it, and the cautions a reader of the drawing needs. Drawing it is a
// view's business (api/chart); nothing here knows about pixels.
type Chart struct {
	// UnitMM is the dial's millimetres per unit.
	UnitMM float64
	// CalibratedN is the calibration's tension range; FromN to ToN are the
	// tensions sampled: that range and 15 % of it beyond each end.
	CalibratedN [2]float64
	FromN, ToN  float64
	// ToolModel says whether a tool model was identified; without one only
	// the columns' own tables have curves.
	ToolModel bool
	Columns   []ChartCurve
	// Requested is the requested section's curve, nil when none was asked.
	Requested *ChartCurve
	Cautions  []string
	req       *prepared
}

// ChartCurve is one section's curve.
type ChartCurve struct {
	// Section describes the section ("round 1.8 mm"), Short labels its
	// curve ("1.8 mm").
	Section, Short string
	// Source is a column's source (maker_table, known_tension); empty for
	// the requested section.
	Source string
	// Pieces are the curve's contiguous runs of samples, in tension order;
	// a tension with no answer splits the curve.
	Pieces [][]ChartSample
	// Points are a column's calibration points.
	Points []Point
}

// ChartSample is one point of a curve: the reading to aim for at TensionN,
// its 95 % reading interval, and how a conversion there would be marked.
type ChartSample struct {
	TensionN, Reading        float64
	Low, High                float64
	Extrapolated, Unreliable bool
}

// chartSamples is how many even steps the sampled tensions take.
const chartSamples = 120

// Chart samples every column's curve and, when spec is not nil, that
// section's, over the calibrated tensions and 15 % beyond them. Parts a
// conversion would call extrapolated are marked so. Without a tool model a
// spec that is not a column is refused as a conversion would refuse it
// (pointers under "/spoke").
func (m *Model) Chart(spec *SpokeSpec) (Chart, error) {
	c := Chart{UnitMM: m.UnitMM, CalibratedN: m.TensionRangeN, ToolModel: m.Physical != nil}
	if spec != nil {
		p, err := m.prepare(*spec, "/spoke")
		if err != nil {
			return Chart{}, err
		}
		if m.Physical == nil && p.col < 0 {
			return Chart{}, field.Unprocessable("/spoke", "%s", m.Unidentified)
		}
		c.req = &p
	}
	lo, hi := m.TensionRangeN[0], m.TensionRangeN[1]
	c.FromN, c.ToN = math.Max(0, lo-0.15*(hi-lo)), hi+0.15*(hi-lo)
	if !(c.ToN > c.FromN) {
		c.FromN, c.ToN = 0, math.Max(1, 2*hi)
	}
	ts := chartTensions(m, c.FromN, c.ToN)
	for _, col := range m.Columns {
		p, err := m.prepare(col.Spoke, "")
		if err != nil {
			return Chart{}, err
		}
		c.Columns = append(c.Columns, ChartCurve{Section: col.section().describe(), Short: shortSection(col.section()),
			Source: col.Source, Pieces: p.sampleTargets(ts), Points: col.Points})
	}
	if c.req != nil {
		c.Requested = &ChartCurve{Section: c.req.sec.describe(), Short: shortSection(c.req.sec), Pieces: c.req.sampleTargets(ts)}
	}
	c.Cautions = m.chartCautions(c.req, c.Requested)
	return c, nil
}

// TensionInterval converts the requested section's aim reading at
// tensionN back as a conversion would: the tension it gives and that
// tension's 95 % interval. ok is false without a requested section, or
// where there is no such reading.
func (c Chart) TensionInterval(tensionN float64) (t float64, interval [2]float64, ok bool) {
	if c.req == nil {
		return 0, interval, false
	}
	tg, err := c.req.target(tensionN, "/target_tension_n")
	if err != nil {
		return 0, interval, false
	}
	res, err := c.req.convert(tg.Reading, readingPointer)
	if err != nil {
		return 0, interval, false
	}
	return res.TensionN, res.IntervalN, true
}

// chartTensions are the tensions sampled: an even grid over [tMin, tMax]
// plus the calibrated range's ends and each column's first and last
// tension, where a curve changes from table to model.
func chartTensions(m *Model, tMin, tMax float64) []float64 {
	var ts []float64
	for k := 0; k <= chartSamples; k++ {
		ts = append(ts, tMin+(tMax-tMin)*float64(k)/chartSamples)
	}
	ts = append(ts, m.TensionRangeN[0], m.TensionRangeN[1])
	for _, c := range m.Columns {
		if c.Curve != nil && len(c.Curve.TensionsN) > 0 {
			ts = append(ts, c.Curve.TensionsN[0], c.Curve.TensionsN[len(c.Curve.TensionsN)-1])
		}
	}
	sort.Float64s(ts)
	out := ts[:0]
	for _, t := range ts {
		if t <= 0 || t < tMin || t > tMax || (len(out) > 0 && t-out[len(out)-1] < 1e-6*(tMax-tMin)) {
			continue
		}
		out = append(out, t)
	}
	return out
}

// sampleTargets evaluates the reading to aim for, exactly as Target does,
// at each tension; tensions with no answer split the curve.
func (p *prepared) sampleTargets(ts []float64) [][]ChartSample {
	var pieces [][]ChartSample
	var cur []ChartSample
	for _, t := range ts {
		tg, err := p.target(t, "/target_tension_n")
		if err != nil || !finite(tg.Reading) || !finite(tg.ReadingInterval[0]) || !finite(tg.ReadingInterval[1]) {
			if len(cur) > 0 {
				pieces, cur = append(pieces, cur), nil
			}
			continue
		}
		cur = append(cur, ChartSample{TensionN: t, Reading: tg.Reading, Low: tg.ReadingInterval[0], High: tg.ReadingInterval[1],
			Extrapolated: tg.Status == StatusExtrapolated, Unreliable: !tg.Reliable})
	}
	if len(cur) > 0 {
		pieces = append(pieces, cur)
	}
	return pieces
}

// chartCautions are the sentences a drawing prints under its plot: the
// requested section's extrapolation and reliability, its section-level
// warnings and cautions, and the calibration's own warnings.
func (m *Model) chartCautions(req *prepared, s *ChartCurve) []string {
	var out []string
	seen := map[string]bool{}
	add := func(c string) {
		if c != "" && !seen[c] {
			seen[c] = true
			out = append(out, c)
		}
	}
	if req != nil && s != nil {
		ext := tensionRuns(s.Pieces, func(q ChartSample) bool { return q.Extrapolated })
		unrel := tensionRuns(s.Pieces, func(q ChartSample) bool { return q.Unreliable })
		name := req.sec.describe()
		switch {
		case ext != "" && !req.inside:
			add(fmt.Sprintf("The %s curve is extrapolated (dotted, hatched band): this section is not in the calibration, so the fitted tool model gives it. Check it against a known tension before relying on it, since a wrongly tensioned wheel can fail.", name))
		case ext != "":
			add(fmt.Sprintf("The %s curve is extrapolated (dotted, hatched band) at %s, outside the calibrated tensions; check it against a known tension before relying on it there, since a wrongly tensioned wheel can fail.", name, ext))
		}
		if unrel != "" {
			add(fmt.Sprintf("At %s the %s curve is unreliable (its 95 %% interval is wider than ±%s %% of the tension, or the section is too far from the calibration): never use a tension from it without its interval.",
				unrel, shortSection(req.sec), fmtNum(100*halfWidthMax, 0)))
		}
		if m.Physical == nil {
			add("Without a tool model the band covers only the dial's half-unit reading resolution, not the table's own error.")
		}
		// The section's stiffness warnings come strongest first, each
		// implying the weaker ones; the strongest is enough here.
		if len(req.secWarns) > 0 {
			add(upperFirst(req.secWarns[0].Message) + ".")
		}
		for _, c := range req.secCauts {
			add(c)
		}
	}
	for _, w := range m.Warnings {
		if w.Severity == "warning" && w.Code != WarnNoToolModel {
			add(upperFirst(w.Message) + ".")
		}
	}
	if m.Physical == nil {
		add("No tool model: " + m.Unidentified + ". Only each column's own table is drawn, and nothing beyond it can be converted.")
	}
	for i, c := range out {
		out[i] = strings.ReplaceAll(c, "..", ".")
	}
	return out
}

// tensionRuns names the tension ranges where keep holds, as
// "220–400 N and 1600–1780 N": each run reaches out to its neighbouring
// samples, where the curve changes.
func tensionRuns(pieces [][]ChartSample, keep func(ChartSample) bool) string {
	var runs []string
	for _, pc := range pieces {
		for i := 0; i < len(pc); i++ {
			if !keep(pc[i]) {
				continue
			}
			j := i
			for j+1 < len(pc) && keep(pc[j+1]) {
				j++
			}
			a, z := pc[i].TensionN, pc[j].TensionN
			if i > 0 {
				a = pc[i-1].TensionN
			}
			if j+1 < len(pc) {
				z = pc[j+1].TensionN
			}
			runs = append(runs, fmt.Sprintf("%s–%s N", fmtNum(a, 0), fmtNum(z, 0)))
			i = j
		}
	}
	switch len(runs) {
	case 0:
		return ""
	case 1:
		return runs[0]
	}
	return strings.Join(runs[:len(runs)-1], ", ") + " and " + runs[len(runs)-1]
}

// shortSection is the label beside a curve: "1.8 mm", "2.3 × 1.2 mm".
func shortSection(s section) string {
	if s.Spec.Profile == "round" {
		return fmtNum(s.Spec.DiameterMM, -1) + " mm"
	}
	return fmtNum(s.Spec.WidthMM, -1) + " × " + fmtNum(s.Spec.ThicknessMM, -1) + " mm"
}

// fmtNum prints v with prec decimals, or the shortest form when prec < 0.
func fmtNum(v float64, prec int) string {
	if prec < 0 {
		return strconv.FormatFloat(v, 'g', -1, 64)
	}
	return strconv.FormatFloat(v, 'f', prec, 64)
}

func upperFirst(s string) string {
	if s == "" {
		return s
	}
	r := []rune(s)
	return strings.ToUpper(string(r[0])) + string(r[1:])
}
