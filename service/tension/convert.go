package tension

import (
	"math"

	"wheelbench/service/field"
)

// Result thresholds (DESIGN.md §4.2).
const (
	ratioVerify     = 1.3  // stiffness ratio: verify with one known tension
	ratioCalibrate  = 1.6  // calibrate this size
	ratioUnreliable = 2.2  // unreliable: no bare number
	halfWidthMax    = 0.05 // interval half-width as a share of the tension
	resolutionMax   = 0.03 // N per dial unit as a share of the tension
	// modelFormUnits is the model-form term m of the interval, in dial units.
	modelFormUnits = 0.5
	// sensitivityStepMM is the diameter (thickness) error the sensitivity
	// figure refers to.
	sensitivityStepMM = 0.01
)

// Result is one converted reading. When Reliable is false the tension is
// still given, with its interval, but must not be used on its own: a
// warning result_unreliable and a caution say why.
type Result struct {
	Reading    float64    `json:"reading"`
	TensionN   float64    `json:"tension_n"`
	TensionKgf float64    `json:"tension_kgf"`
	TensionLbf float64    `json:"tension_lbf"`
	IntervalN  [2]float64 `json:"interval_n"`
	Reliable   bool       `json:"reliable"`
	Status     string     `json:"status"`
	Method     string     `json:"method"`
	// DeltaDiameterMM is how far the section lies outside the calibrated
	// ones, as the round diameter of equal bending stiffness in the nearest
	// column's material minus that column's (0 inside, negative below).
	DeltaDiameterMM float64 `json:"delta_diameter_mm"`
	// StiffnessRatio is EI / EI of the nearest calibrated column.
	StiffnessRatio     float64 `json:"stiffness_ratio"`
	ResolutionNPerUnit float64 `json:"resolution_n_per_unit"`
	// SensitivityNPer001MM is the tension change for a 0.01 mm error in the
	// entered diameter (thickness for blades); absent without a tool model.
	SensitivityNPer001MM *float64  `json:"sensitivity_n_per_0_01_mm,omitempty"`
	Warnings             []Warning `json:"warnings"`
	Cautions             []string  `json:"cautions"`
}

// Target is the reading to aim for at a target tension.
type Target struct {
	TensionN             float64    `json:"tension_n"`
	TensionKgf           float64    `json:"tension_kgf"`
	TensionLbf           float64    `json:"tension_lbf"`
	Reading              float64    `json:"reading"`
	ReadingInterval      [2]float64 `json:"reading_interval"`
	Reliable             bool       `json:"reliable"`
	Status               string     `json:"status"`
	Method               string     `json:"method"`
	DeltaDiameterMM      float64    `json:"delta_diameter_mm"`
	StiffnessRatio       float64    `json:"stiffness_ratio"`
	ResolutionNPerUnit   float64    `json:"resolution_n_per_unit"`
	SensitivityNPer001MM *float64   `json:"sensitivity_n_per_0_01_mm,omitempty"`
	Warnings             []Warning  `json:"warnings"`
	Cautions             []string   `json:"cautions"`
}

// prepared is a section ready for conversion against one model.
type prepared struct {
	m      *Model
	at     string // pointer of the spoke spec
	sec    section
	es     evalSection
	col    int  // matching column, −1 if none
	inside bool // between two columns of its material and profile
	ratio  float64
	deltaD float64
	// floor says how the interval's least width is found (edge.go): edge
	// is the nearest column, grow the stiffness ratio folded to ≥ 1, nbLo
	// and nbHi the neighbouring columns of a section between two.
	floor            int
	edge, nbLo, nbHi int
	grow             float64
	secWarns         []Warning
	secCauts         []string
	unrel            bool
}

func (c ModelColumn) section() section {
	return section{Spec: c.Spoke, EI: c.EINmm2, EA: c.EAN, T: c.ThicknessMM, E: c.EGPa}
}

// prepare resolves a section against the model. at is the JSON pointer of
// the spoke spec in the request.
//
// The section is inside the calibration (status interpolated, when the
// tension is too) when two columns of its material and profile bracket its
// bending stiffness and thickness; another material or a profile no column
// has is always extrapolation.
func (m *Model) prepare(spec SpokeSpec, at string) (prepared, error) {
	sec, err := spec.resolve(at)
	if err != nil {
		return prepared{}, err
	}
	if len(m.Columns) == 0 {
		return prepared{}, field.Unprocessable(at, "the model has no calibrated columns")
	}
	p := prepared{m: m, at: at, sec: sec, col: -1, nbLo: -1, nbHi: -1,
		es: evalSection{ei0: sec.EI, ea: sec.EA, t: sec.T, kEI: 1, iK: -1, iC: -1}}
	eiMin, eiMax := math.Inf(1), 0.0
	sameE, sameProfile := false, false
	nearest, best := 0, math.Inf(1)
	for i, c := range m.Columns {
		cs := c.section()
		if sameSection(cs, sec) {
			p.col = i
		}
		eiMin, eiMax = math.Min(eiMin, cs.EI), math.Max(eiMax, cs.EI)
		kin := math.Abs(cs.E-sec.E) <= 1e-9*cs.E
		sameE = sameE || kin
		if cs.Spec.Profile == sec.Spec.Profile {
			sameProfile = true
			if kin {
				// Neighbours of its own material and profile.
				if cs.EI <= sec.EI && (p.nbLo < 0 || cs.EI > m.Columns[p.nbLo].EINmm2) {
					p.nbLo = i
				}
				if cs.EI >= sec.EI && (p.nbHi < 0 || cs.EI < m.Columns[p.nbHi].EINmm2) {
					p.nbHi = i
				}
			}
		}
		if d := math.Abs(math.Log(sec.EI / cs.EI)); d < best {
			nearest, best = i, d
		}
	}
	edge := m.Columns[nearest]
	p.edge = nearest
	p.ratio = sec.EI / edge.EINmm2
	if p.nbLo >= 0 && p.nbHi >= 0 {
		tLo, tHi := m.Columns[p.nbLo].ThicknessMM, m.Columns[p.nbHi].ThicknessMM
		p.inside = sec.T >= math.Min(tLo, tHi) && sec.T <= math.Max(tLo, tHi)
	}
	if sec.EI < eiMin || sec.EI > eiMax {
		// Round diameter of equal EI in the edge column's material.
		dEq := func(ei float64) float64 { return math.Pow(64*ei/(math.Pi*edge.EGPa*1000), 0.25) }
		p.deltaD = dEq(sec.EI) - dEq(edge.EINmm2)
	}
	switch {
	case p.col >= 0:
		p.floor = floorNone
		p.ratio, p.deltaD, p.inside = 1, 0, true
		p.es = m.columnEval(p.col)
	case p.inside:
		p.floor = floorBetween
	default:
		p.floor, p.grow = floorOutside, math.Max(p.ratio, 1/p.ratio)
	}
	rr := math.Max(p.ratio, 1/p.ratio)
	var desc string
	if rr > ratioUnreliable {
		desc = sec.describe()
	}
	switch {
	case rr > ratioUnreliable:
		p.secWarns = make([]Warning, 0, 4)
	case rr > ratioCalibrate:
		p.secWarns = make([]Warning, 0, 3)
	}
	switch {
	case rr > ratioUnreliable:
		p.unrel = true
		p.secWarns = append(p.secWarns, Warning{WarnUnreliable, "warning", msgUnreliableRatio(desc, p.ratio)})
		fallthrough
	case rr > ratioCalibrate:
		p.secWarns = append(p.secWarns, Warning{WarnStiffnessCalibrate, "warning", msgCalibrate(p.ratio)})
		fallthrough
	case rr > ratioVerify:
		p.secWarns = append(p.secWarns, Warning{WarnStiffnessVerify, "warning", msgVerify(p.ratio)})
	}
	if !sameProfile {
		p.secWarns = append(p.secWarns, Warning{WarnProfileNotCalibrated, "warning", msgProfile(sec.Spec.Profile)})
	}
	if !sameE {
		p.secCauts = append(p.secCauts, msgOtherModulus(sec.E))
	}
	return p, nil
}

// paramBuf returns a slice of n values backed by buf when buf is long
// enough (the per-reading gradient then stays off the heap).
func paramBuf(buf []float64, n int) []float64 {
	if n <= len(buf) {
		return buf[:n]
	}
	return make([]float64, n)
}

// halfWidthUnits is t₀.₉₇₅·√(s² + gᵀCov g + m²), in dial units.
func (m *Model) halfWidthUnits(g []float64) float64 {
	ph := m.Physical
	v := ph.ResidualSDUnits*ph.ResidualSDUnits + modelFormUnits*modelFormUnits
	for a := range g {
		if g[a] == 0 {
			continue
		}
		row := ph.Covariance[a]
		for b := range g {
			v += g[a] * row[b] * g[b]
		}
	}
	return ph.T975 * math.Sqrt(math.Max(v, 0))
}

// columnHalfWidth is the reading half-width used with a column curve: the
// fitted scatter and model-form term when a tool model exists, otherwise
// the half-unit reading resolution alone.
func (m *Model) columnHalfWidth() (w float64, resolutionOnly bool) {
	if ph := m.Physical; ph != nil {
		s := ph.ResidualSDUnits
		return ph.T975 * math.Sqrt(s*s+modelFormUnits*modelFormUnits), false
	}
	return modelFormUnits, true
}

// withThickness returns the section's evalSection with its diameter (or
// thickness, for blades and bars) changed by dmm, refinements kept: EI
// scales as d⁴ and EA as d² for round wire, as t³ and t for a section of
// fixed width.
func (p *prepared) withThickness(dmm float64) (evalSection, bool) {
	t := p.sec.T
	f := (t + dmm) / t
	if !(f > 0) {
		return evalSection{}, false
	}
	es := p.es
	if p.sec.Spec.Profile == "round" {
		es.ei0, es.ea = es.ei0*f*f*f*f, es.ea*f*f
	} else {
		es.ei0, es.ea = es.ei0*f*f*f, es.ea*f
	}
	es.t = t + dmm
	return es, true
}

// sensitivity is |T(d + 0.01) − T(d − 0.01)|/2 at a fixed reading.
func (p *prepared) sensitivity(reading float64) *float64 { return p.sensitivityFrom(reading, -1) }

// sensitivityFrom is sensitivity with a guessed effective tension.
func (p *prepared) sensitivityFrom(reading, teGuess float64) *float64 {
	ph := p.m.Physical
	if ph == nil {
		return nil
	}
	up, ok1 := p.withThickness(sensitivityStepMM)
	dn, ok2 := p.withThickness(-sensitivityStepMM)
	if !ok1 || !ok2 {
		return nil
	}
	tu, _, ok1 := inverseFrom(ph.Params, up, p.m.UnitMM, reading, teGuess)
	td, _, ok2 := inverseFrom(ph.Params, dn, p.m.UnitMM, reading, teGuess)
	if !ok1 || !ok2 {
		return nil
	}
	v := math.Abs(tu-td) / 2
	return &v
}

// Convert turns one dial reading on the given section into a tension.
// Errors are *field.Error with pointers "/spoke…" and "/reading".
func (m *Model) Convert(spec SpokeSpec, reading float64) (Result, error) {
	p, err := m.prepare(spec, "/spoke")
	if err != nil {
		return Result{}, err
	}
	return p.convert(reading, readingPointer)
}

func readingPointer() string { return "/reading" }

// convert converts one reading; at gives the reading's JSON pointer and is
// called only when there is an error to report (building "/readings/17"
// for every reading of a request cost three allocations each).
func (p *prepared) convert(reading float64, at func() string) (Result, error) {
	m := p.m
	if !finite(reading) || math.Abs(reading) > maxReading {
		return Result{}, field.Invalid(at(), "reading must be a finite dial reading")
	}
	res := Result{Reading: reading, Reliable: true, StiffnessRatio: p.ratio, DeltaDiameterMM: p.deltaD}
	// Warnings and cautions gather on the stack; the result gets one
	// allocation for each (an empty, non-nil slice when there are none).
	var wbuf [8]Warning
	var cbuf [4]string
	warns, cauts := append(wbuf[:0], p.secWarns...), append(cbuf[:0], p.secCauts...)
	if p.col >= 0 && m.Columns[p.col].Curve != nil {
		cv := m.Columns[p.col].Curve.cubic()
		if reading >= cv.X[0] && reading <= cv.X[len(cv.X)-1] {
			t, slope := cv.at(reading)
			w, resOnly := m.columnHalfWidth()
			lo, _ := cv.at(reading - w)
			hi, _ := cv.at(reading + w)
			res.TensionN, res.Method, res.Status = t, MethodColumn, StatusInterpolated
			for _, x := range cv.X {
				if x == reading {
					res.Status = StatusCalibrated
				}
			}
			res.IntervalN = [2]float64{math.Max(lo, 0), hi}
			res.ResolutionNPerUnit = slope
			if resOnly {
				warns = append(warns, Warning{WarnResolutionOnlyInterval, "info",
					"without a fitted tool model the interval covers only the dial's half-unit reading resolution, not the table's own error"})
			}
			res.SensitivityNPer001MM = p.sensitivity(reading)
			warns, cauts = p.finish(&res.Reliable, false, warns, cauts, t, res.IntervalN, res.ResolutionNPerUnit, res.Status)
			res.Warnings, res.Cautions = append([]Warning{}, warns...), append([]string{}, cauts...)
			res.TensionKgf, res.TensionLbf = KgfFromN(t), LbfFromN(t)
			return res, nil
		}
	}
	ph := m.Physical
	if ph == nil {
		if p.col >= 0 {
			return Result{}, field.Unprocessable(at(), "reading %g is outside the calibrated column's table and the calibration cannot identify a tool model to go beyond it: %s", reading, m.Unidentified)
		}
		return Result{}, field.Unprocessable(p.at, "%s", m.Unidentified)
	}
	unit := m.UnitMM
	t, st, ok := inverse(ph.Params, p.es, unit, reading)
	if !ok {
		return Result{}, field.Unprocessable(at(), "reading %g is beyond what the tool model can produce for a %s spoke; check the reading and the section", reading, p.sec.describe())
	}
	var gbuf [16]float64
	g := paramBuf(gbuf[:], len(ph.Params))
	drdT := gradient(ph.Params, p.es, unit, st, g)
	if !(drdT > 0) {
		return Result{}, field.Unprocessable(at(), "the tool model's curve is not monotone at reading %g for this section; no tension is given", reading)
	}
	w := m.halfWidthUnits(g)
	lo, hi, err := p.interval(reading, w, g, st.teff, at)
	if err != nil {
		return Result{}, err
	}
	lo, hi, widened, checked := p.widenTension(t, lo, hi)
	warns = edgeWarnings(warns, widened, checked, t, (hi-lo)/2)
	res.TensionN, res.IntervalN = t, [2]float64{lo, hi}
	res.ResolutionNPerUnit = 1 / drdT
	res.Method = MethodModel
	if p.es.iC >= 0 {
		res.Method = MethodModelRefined
	}
	res.Status = p.modelStatus(t)
	res.SensitivityNPer001MM = p.sensitivityFrom(reading, st.teff)
	warns, cauts = p.finish(&res.Reliable, !checked, warns, cauts, t, res.IntervalN, res.ResolutionNPerUnit, res.Status)
	res.Warnings, res.Cautions = append([]Warning{}, warns...), append([]string{}, cauts...)
	res.TensionKgf, res.TensionLbf = KgfFromN(t), LbfFromN(t)
	return res, nil
}

// interval solves the inverse-prediction set {T : |r − r̂(T)| ≤ w(T)},
// starting from the half-width at the estimate and re-evaluating it once
// at each end.
func (p *prepared) interval(reading, w0 float64, g []float64, teGuess float64, at func() string) (lo, hi float64, err error) {
	lo, hi, ok := p.m.bandEnds(p.es, reading, w0, g, teGuess)
	if !ok {
		return 0, 0, field.Unprocessable(at(), "reading %g is within the uncertainty band of the highest reading the tool model can produce for this section; the tension has no upper bound", reading)
	}
	return lo, hi, nil
}

// bandEnds is interval for section es; ok is false when the band has no
// upper end. A lower end below what the model reaches is 0 (slack spoke).
func (m *Model) bandEnds(es evalSection, reading, w0 float64, g []float64, teGuess float64) (lo, hi float64, ok bool) {
	ph, unit := m.Physical, m.UnitMM
	end := func(sign float64, w float64) (float64, bool) {
		t, st, ok := inverseFrom(ph.Params, es, unit, reading+sign*w, teGuess)
		if !ok {
			return 0, false
		}
		gradient(ph.Params, es, unit, st, g)
		w2 := m.halfWidthUnits(g)
		if t2, _, ok := inverseFrom(ph.Params, es, unit, reading+sign*w2, st.teff); ok {
			return t2, true
		}
		return t, true
	}
	lo, okLo := end(-1, w0)
	if !okLo {
		lo = 0 // the band reaches slack spoke
	}
	hi, okHi := end(+1, w0)
	if !okHi {
		return 0, 0, false
	}
	return lo, hi, true
}

// modelStatus is interpolated inside the envelope of calibrated sections
// and tensions, extrapolated otherwise.
func (p *prepared) modelStatus(t float64) string {
	r := p.m.TensionRangeN
	if p.inside && p.col < 0 && t >= r[0] && t <= r[1] {
		return StatusInterpolated
	}
	return StatusExtrapolated
}

// finish adds the result-level warnings and cautions. unchecked marks an
// answer whose interval could not be compared with the calibration beside
// it (edge.go): it is not reliable.
func (p *prepared) finish(reliable *bool, unchecked bool, warns []Warning, cauts []string, t float64, iv [2]float64, resolution float64, status string) ([]Warning, []string) {
	rng := p.m.TensionRangeN
	if t < rng[0] || t > rng[1] {
		warns = append(warns, Warning{WarnOutsideTensionRange, "warning", msgOutsideRange(t, rng)})
	}
	if t > 0 && resolution/t > resolutionMax {
		warns = append(warns, Warning{WarnCoarseResolution, "warning", msgCoarse(resolution, t)})
	}
	hw := (iv[1] - iv[0]) / 2
	wide := !(t > 0) || hw/t > halfWidthMax
	if wide {
		warns = append(warns, Warning{WarnUnreliable, "warning", msgWide(hw, 100*hw/math.Max(t, 1e-9))})
	}
	if wide || p.unrel || unchecked {
		*reliable = false
		cauts = append(cauts, msgBareNumber(t, iv))
	}
	if status == StatusExtrapolated {
		cauts = append(cauts, "This conversion is extrapolated beyond the calibration (another section, material or tension range); check it against a known tension before relying on it, since a wrongly tensioned wheel can fail.")
	}
	for _, w := range p.m.Warnings {
		if w.Code == WarnSpanMismatch || w.Code == WarnModelMarginal {
			warns = append(warns, w)
		}
	}
	return warns, cauts
}

// Target returns the reading at which the section reaches tensionN.
// Errors are *field.Error with pointers "/spoke…" and "/target_tension_n".
func (m *Model) Target(spec SpokeSpec, tensionN float64) (Target, error) {
	p, err := m.prepare(spec, "/spoke")
	if err != nil {
		return Target{}, err
	}
	return p.target(tensionN, "/target_tension_n")
}

func (p *prepared) target(tn float64, at string) (Target, error) {
	m := p.m
	if !finite(tn) || tn <= 0 || tn > maxTensionN {
		return Target{}, field.Invalid(at, "the target tension must be positive and at most %d N", maxTensionN)
	}
	tg := Target{TensionN: tn, TensionKgf: KgfFromN(tn), TensionLbf: LbfFromN(tn), Reliable: true,
		StiffnessRatio: p.ratio, DeltaDiameterMM: p.deltaD}
	var wbuf [8]Warning
	var cbuf [4]string
	warns, cauts := append(wbuf[:0], p.secWarns...), append(cbuf[:0], p.secCauts...)
	if p.col >= 0 && m.Columns[p.col].Curve != nil {
		cv := m.Columns[p.col].Curve.cubic()
		if r, ok := cv.invert(tn); ok {
			w, resOnly := m.columnHalfWidth()
			tg.Status, tg.Method = StatusInterpolated, MethodColumn
			for i, y := range cv.Y {
				if y == tn {
					tg.Status, r = StatusCalibrated, cv.X[i]
				}
			}
			_, slope := cv.at(r)
			tg.Reading, tg.ReadingInterval, tg.ResolutionNPerUnit = r, [2]float64{r - w, r + w}, slope
			lo, _ := cv.at(r - w)
			hi, _ := cv.at(r + w)
			if resOnly {
				warns = append(warns, Warning{WarnResolutionOnlyInterval, "info",
					"without a fitted tool model the interval covers only the dial's half-unit reading resolution"})
			}
			tg.SensitivityNPer001MM = p.sensitivity(r)
			warns, cauts = p.finish(&tg.Reliable, false, warns, cauts, tn, [2]float64{math.Max(lo, 0), hi}, slope, tg.Status)
			tg.Warnings, tg.Cautions = append([]Warning{}, warns...), append([]string{}, cauts...)
			return tg, nil
		}
	}
	ph := m.Physical
	if ph == nil {
		if p.col >= 0 {
			return Target{}, field.Unprocessable(at, "%g N is outside the calibrated column's table and the calibration cannot identify a tool model to go beyond it: %s", tn, m.Unidentified)
		}
		return Target{}, field.Unprocessable(p.at, "%s", m.Unidentified)
	}
	unit := m.UnitMM
	r, st, ok := forward(ph.Params, p.es, unit, tn)
	if !ok {
		return Target{}, field.Unprocessable(at, "the tool model cannot reach %g N on a %s spoke", tn, p.sec.describe())
	}
	var gbuf [16]float64
	g := paramBuf(gbuf[:], len(ph.Params))
	drdT := gradient(ph.Params, p.es, unit, st, g)
	if !(drdT > 0) {
		return Target{}, field.Unprocessable(at, "the tool model's curve is not monotone at %g N for this section", tn)
	}
	w := m.halfWidthUnits(g)
	w, widened, checked := p.widenUnits(tn, w, drdT)
	warns = edgeWarnings(warns, widened, checked, tn, w/drdT)
	tg.Reading, tg.ReadingInterval = r, [2]float64{r - w, r + w}
	tg.ResolutionNPerUnit = 1 / drdT
	tg.Method = MethodModel
	if p.es.iC >= 0 {
		tg.Method = MethodModelRefined
	}
	tg.Status = p.modelStatus(tn)
	tg.SensitivityNPer001MM = p.sensitivity(r)
	// The tension interval this reading band implies, for the reliability test.
	lo, hi := tn-w/drdT, tn+w/drdT
	warns, cauts = p.finish(&tg.Reliable, !checked, warns, cauts, tn, [2]float64{math.Max(lo, 0), hi}, tg.ResolutionNPerUnit, tg.Status)
	tg.Warnings, tg.Cautions = append([]Warning{}, warns...), append([]string{}, cauts...)
	return tg, nil
}
