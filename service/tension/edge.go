package tension

import "math"

// How wide an answer off the calibrated columns must be.
//
// The tool model's own interval (parameter covariance, residual scatter and
// the half-unit model-form term) does not know how far the section lies
// from the sections that calibrated it: below the table it even narrows,
// because a thinner spoke moves the dial more per newton. Yet the model's
// error grows with that distance (on synthetic tools fitted to a
// 1.5–2.3 mm table like a maker's, a median of about 1 % and a 95th
// percentile near 3 % at 2.6 mm, 10–15 % at 3.2 mm: our own numerical
// experiment, not a published figure). So every answer that is not a
// calibrated column's own gets a floor on its relative half-width, at the
// tension of the answer:
//
//   - Between two calibrated columns of the same material and profile
//     (status interpolated): the narrower of the two neighbours' relative
//     half-widths at that tension, each as a conversion on that column
//     reports it (its curve inside its table, the tool model beyond).
//   - Anything else (beyond the columns, another material, a profile the
//     table lacks): the nearest column's relative half-width at that
//     tension, taken as the wider of what a conversion on the column
//     reports and what the tool model alone gives for that section, times
//     the stiffness ratio folded to at least 1, max(ρ, 1/ρ) with
//     ρ = EI/EI_edge. At the edge the factor is 1 and the floor meets the
//     column; it grows with the distance on either side. On the tests'
//     synthetic tool the floor is about ±15 % at 3.2 mm and 1000 N
//     (ρ = (3.2/2.3)⁴ = 3.75 times the 2.3 mm column's ±3.9 %), the order
//     of that experiment's 95th-percentile error there; the model's own
//     interval, ±20 %, is the wider there and stands.
//
// The floor is a share of the tension, so a wider interval in newtons is
// never narrower in the share that decides reliability (5 %): an answer
// beside a column that is unreliable at that tension is unreliable too.

// Floor kinds of a prepared section.
const (
	floorNone    = iota // a calibrated column itself
	floorBetween        // between two columns of its material and profile
	floorOutside        // beyond the columns, or another material or profile
)

// columnEval is calibrated column i as the tool model sees it, with its
// refinement parameters when known-tension points refined it.
func (m *Model) columnEval(i int) evalSection {
	c := m.Columns[i]
	es := evalSection{ei0: c.EINmm2, ea: c.EAN, t: c.ThicknessMM, kEI: 1, iK: -1, iC: -1}
	if ph := m.Physical; ph != nil {
		if c.EIFactorIndex >= 0 && c.EIFactorIndex < len(ph.Params) {
			es.iK, es.kEI = c.EIFactorIndex, ph.Params[c.EIFactorIndex]
		}
		if c.OffsetIndex >= 0 && c.OffsetIndex < len(ph.Params) {
			es.iC, es.offset = c.OffsetIndex, ph.Params[c.OffsetIndex]
		}
	}
	return es
}

// curveBand is the relative half-width (hi − lo)/2/tn of the interval a
// conversion on column i reports by its curve at the reading that means
// tn; ok is false when the column has no curve or its table does not reach
// tn.
func (m *Model) curveBand(i int, tn float64) (rel float64, ok bool) {
	c := m.Columns[i].Curve
	if c == nil {
		return 0, false
	}
	cv := c.cubic()
	// A tension a solver's rounding away from the table's end is at it.
	y := math.Min(math.Max(tn, cv.Y[0]), cv.Y[len(cv.Y)-1])
	if math.Abs(y-tn) > 1e-9*tn {
		return 0, false
	}
	r, ok := cv.invert(y)
	if !ok {
		return 0, false
	}
	w, _ := m.columnHalfWidth()
	lo, _ := cv.at(r - w)
	hi, _ := cv.at(r + w)
	return (hi - math.Max(lo, 0)) / 2 / tn, true
}

// modelBand is the relative half-width of the tool model's 95 % interval
// for section es at the reading that means tn, as a conversion computes it.
func (m *Model) modelBand(es evalSection, tn float64) (rel float64, ok bool) {
	ph := m.Physical
	if ph == nil {
		return 0, false
	}
	r, st, ok := forward(ph.Params, es, m.UnitMM, tn)
	if !ok {
		return 0, false
	}
	var gbuf [16]float64
	g := paramBuf(gbuf[:], len(ph.Params))
	if drdT := gradient(ph.Params, es, m.UnitMM, st, g); !(drdT > 0) {
		return 0, false
	}
	lo, hi, ok := m.bandEnds(es, r, m.halfWidthUnits(g), g, st.teff)
	if !ok {
		return 0, false
	}
	return (hi - lo) / 2 / tn, true
}

// floorAt is the least relative half-width an answer on this section may
// carry at tension tn (0 for a calibrated column). ok is false when the
// calibration beside the section cannot be evaluated at tn, so the answer
// cannot be checked against it.
func (p *prepared) floorAt(tn float64) (rel float64, ok bool) {
	m := p.m
	reported := func(i int) (float64, bool) {
		if v, ok := m.curveBand(i, tn); ok {
			return v, true
		}
		return m.modelBand(m.columnEval(i), tn)
	}
	switch p.floor {
	case floorBetween:
		a, okA := reported(p.nbLo)
		b, okB := reported(p.nbHi)
		switch {
		case okA && okB:
			return math.Min(a, b), true
		case okA:
			return a, true
		case okB:
			return b, true
		}
		return 0, false
	case floorOutside:
		base, ok := m.curveBand(p.edge, tn)
		if v, okM := m.modelBand(m.columnEval(p.edge), tn); okM {
			base, ok = math.Max(base, v), true
		}
		if !ok {
			return 0, false
		}
		return p.grow * base, true
	}
	return 0, true
}

// widenTension widens the tension interval [lo, hi] around t so that its
// half-width is at least the floor's share of t, by moving both ends out
// by the same amount (the half-width becomes exactly the floor's, and the
// model's asymmetry is kept; an end that would pass 0 N stops there and
// the other end takes the rest). widened reports a change; ok is false
// when the floor cannot be evaluated.
func (p *prepared) widenTension(t, lo, hi float64) (nlo, nhi float64, widened, ok bool) {
	f, ok := p.floorAt(t)
	if !ok {
		return lo, hi, false, false
	}
	add := f*t - (hi-lo)/2
	if !(add > 0) {
		return lo, hi, false, true
	}
	lo, hi = lo-add, hi+add
	if lo < 0 {
		lo, hi = 0, hi-lo
	}
	return lo, hi, true, true
}

// widenUnits is widenTension for a reading half-width w at tension tn,
// where the reading moves drdT dial units per newton.
func (p *prepared) widenUnits(tn, w, drdT float64) (nw float64, widened, ok bool) {
	f, ok := p.floorAt(tn)
	if !ok {
		return w, false, false
	}
	if need := f * tn * drdT; w < need {
		return need, true, true
	}
	return w, false, true
}

// edgeWarnings notes a floor that widened the interval (half-width hw N at
// tension t), or a floor that could not be evaluated.
func edgeWarnings(warns []Warning, widened, checked bool, t, hw float64) []Warning {
	switch {
	case !checked:
		warns = append(warns, Warning{WarnUnreliable, "warning", msgUnchecked(t)})
	case widened:
		warns = append(warns, Warning{WarnIntervalWidened, "info", msgWidened(100 * hw / math.Max(t, 1e-9))})
	}
	return warns
}
