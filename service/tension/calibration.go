package tension

import (
	"errors"
	"math"
	"sort"

	"wheelbench/service/field"
	"wheelbench/service/spoke"
)

// Calibration sources.
const (
	// SourceMakerTable marks points copied from the tool maker's table.
	SourceMakerTable = "maker_table"
	// SourceKnownTension marks points measured in the shop against a known load.
	SourceKnownTension = "known_tension"
)

// Calibration is one immutable version of a tool's calibration: its columns,
// one per spoke section. Source applies to every column that does not set
// its own; empty means "maker_table".
type Calibration struct {
	Columns []Column `json:"columns"`
	Source  string   `json:"source,omitempty"`
}

// Column is one spoke section's points. Source, when set, overrides the
// calibration's (a shop may add known-tension points for a new section to
// a maker's table). A maker_table column needs at least two points; a
// known_tension column may have a single point. Readings must not decrease
// as tension rises (equal readings at neighbouring tensions are allowed:
// thick spokes move the dial little).
type Column struct {
	Spoke  SpokeSpec `json:"spoke"`
	Points []Point   `json:"points"`
	Source string    `json:"source,omitempty"`
}

// Point is one calibration point: a spoke tension and the dial reading.
type Point struct {
	TensionN float64 `json:"tension_n"`
	Reading  float64 `json:"reading"`
}

// SpokeSpec is a spoke section as the client sends it. Profile defaults to
// "round" (diameter_mm); "bladed", "oval" and "rectangular" use width_mm
// and thickness_mm (thickness along the plunger). Give a material name
// (stainless_steel, titanium, aluminium, brass) or an explicit e_gpa; e_gpa
// wins when both are set.
type SpokeSpec struct {
	Profile     string   `json:"profile,omitempty"`
	DiameterMM  float64  `json:"diameter_mm,omitempty"`
	WidthMM     float64  `json:"width_mm,omitempty"`
	ThicknessMM float64  `json:"thickness_mm,omitempty"`
	Material    string   `json:"material,omitempty"`
	EGPa        *float64 `json:"e_gpa,omitempty"`
}

// Tool is what the model needs to know about the physical tensiometer.
// UnitMM is the dial's millimetres per unit (0 means 0.01). MeasuredSpanMM,
// the anvil span measured with calipers, is compared with the fitted span.
type Tool struct {
	UnitMM         float64  `json:"unit_mm,omitempty"`
	MeasuredSpanMM *float64 `json:"measured_span_mm,omitempty"`
}

// Limits on inputs, beyond which a value is treated as a typing error.
const (
	maxTensionN  = 20000 // far above any spoke's breaking load
	maxSectionMM = 20
	maxReading   = 1e6
)

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// section is a resolved spoke section: stiffness, axial stiffness, the
// extent along the plunger, and the normalised spec it came from.
type section struct {
	Spec SpokeSpec
	EI   float64 // N·mm²
	EA   float64 // N
	T    float64 // mm
	E    float64 // GPa
}

// resolve validates the spec and computes its properties. at is the JSON
// pointer of the spec itself.
func (s SpokeSpec) resolve(at string) (section, error) {
	sec := spoke.Section{Profile: spoke.Profile(s.Profile), DiameterMM: s.DiameterMM, WidthMM: s.WidthMM, ThicknessMM: s.ThicknessMM}
	if member, err := sec.Validate(); err != nil {
		return section{}, field.Invalid(at+"/"+member, "%v", err)
	}
	for _, f := range []struct {
		name string
		v    float64
	}{{"diameter_mm", s.DiameterMM}, {"width_mm", s.WidthMM}, {"thickness_mm", s.ThicknessMM}} {
		if f.v > maxSectionMM {
			return section{}, field.Invalid(at+"/"+f.name, "%s %g is not a spoke dimension (at most %d mm)", f.name, f.v, maxSectionMM)
		}
	}
	var e float64
	switch {
	case s.EGPa != nil:
		e = *s.EGPa
		if !finite(e) || e < 1 || e > 1000 {
			return section{}, field.Invalid(at+"/e_gpa", "e_gpa must be a Young's modulus between 1 and 1000 GPa")
		}
	case s.Material != "":
		m, ok := spoke.LookupMaterial(s.Material)
		if !ok {
			return section{}, field.Invalid(at+"/material", "unknown material %q; known: %v, or give e_gpa", s.Material, spoke.MaterialNames())
		}
		e = m.EGPa
	default:
		return section{}, field.Invalid(at+"/material", "give the spoke's material or its e_gpa: steel and titanium read very differently")
	}
	norm := s
	if norm.Profile == "" {
		norm.Profile = string(spoke.Round)
	}
	if norm.Profile == string(spoke.Round) {
		norm.WidthMM, norm.ThicknessMM = 0, 0
	} else {
		norm.DiameterMM = 0
	}
	return section{
		Spec: norm,
		EI:   e * 1000 * sec.SecondMomentMM4(),
		EA:   e * 1000 * sec.AreaMM2(),
		T:    sec.Thickness(),
		E:    e,
	}, nil
}

// sameSection reports whether two resolved sections are the same spoke.
func sameSection(a, b section) bool {
	eq := func(x, y float64) bool { return math.Abs(x-y) <= 1e-9*math.Max(1, math.Abs(y)) }
	return a.Spec.Profile == b.Spec.Profile && eq(a.Spec.DiameterMM, b.Spec.DiameterMM) &&
		eq(a.Spec.WidthMM, b.Spec.WidthMM) && eq(a.Spec.ThicknessMM, b.Spec.ThicknessMM) && eq(a.E, b.E)
}

// describe: "round %g mm, E %g GPa", or "%s %g × %g mm, E %g GPa" for
// other profiles.
func (s section) describe() string {
	var buf [96]byte
	b := buf[:0]
	if s.Spec.Profile == string(spoke.Round) {
		b = append(b, "round "...)
		b = short(b, s.Spec.DiameterMM)
	} else {
		b = append(b, s.Spec.Profile...)
		b = append(b, ' ')
		b = short(b, s.Spec.WidthMM)
		b = append(b, " × "...)
		b = short(b, s.Spec.ThicknessMM)
	}
	b = append(b, " mm, E "...)
	b = short(b, s.E)
	b = append(b, " GPa"...)
	return string(b)
}

// checkedColumn is a validated column.
type checkedColumn struct {
	sec    section
	source string
	points []Point // as given
	// curve is the column's T(reading) interpolant; nil with fewer than two
	// distinct readings.
	curve    *monotoneCubic
	distinct int // distinct tensions
	plateau  bool
}

// validateTool checks the tool facts and returns the dial unit.
func validateTool(tool Tool) (unit float64, err error) {
	unit = tool.UnitMM
	if unit == 0 {
		unit = 0.01
	}
	var errs []error
	if !finite(unit) || unit <= 0 || unit > 1 {
		errs = append(errs, field.Invalid("/unit_mm", "unit_mm must be the dial's millimetres per unit, above 0 and at most 1"))
	}
	if s := tool.MeasuredSpanMM; s != nil && (!finite(*s) || *s <= 0 || *s > 500) {
		errs = append(errs, field.Invalid("/measured_span_mm", "measured_span_mm must be a positive span in mm (at most 500)"))
	}
	return unit, errors.Join(errs...)
}

// validateCalibration checks every field and the monotonicity of each
// column. Pointers are relative to the calibration body.
func validateCalibration(cal Calibration) ([]checkedColumn, error) {
	var errs []error
	calSource := cal.Source
	switch calSource {
	case "":
		calSource = SourceMakerTable
	case SourceMakerTable, SourceKnownTension:
	default:
		errs = append(errs, field.Invalid("/source", "source must be maker_table or known_tension"))
	}
	if len(cal.Columns) == 0 {
		return nil, errors.Join(append(errs, field.Invalid("/columns", "a calibration needs at least one column"))...)
	}
	var cols []checkedColumn
	for i, c := range cal.Columns {
		at := ptr("columns", i)
		sec, err := c.Spoke.resolve(at + "/spoke")
		if err != nil {
			errs = append(errs, err)
			continue
		}
		src := c.Source
		switch src {
		case "":
			src = calSource
		case SourceMakerTable, SourceKnownTension:
		default:
			errs = append(errs, field.Invalid(at+"/source", "source must be maker_table or known_tension"))
			continue
		}
		minPoints := 2
		if src == SourceKnownTension {
			minPoints = 1
		}
		if len(c.Points) < minPoints {
			errs = append(errs, field.Unprocessable(at+"/points", "column %d (%s) has %d point(s); a %s column needs at least %d", i, sec.describe(), len(c.Points), src, minPoints))
			continue
		}
		bad := false
		for j, p := range c.Points {
			if !finite(p.TensionN) || p.TensionN <= 0 || p.TensionN > maxTensionN {
				errs = append(errs, field.Invalid(ptr("columns", i, "points", j, "tension_n"), "tension_n must be positive and at most %d N", maxTensionN))
				bad = true
			}
			if !finite(p.Reading) || math.Abs(p.Reading) > maxReading {
				errs = append(errs, field.Invalid(ptr("columns", i, "points", j, "reading"), "reading must be a finite dial reading"))
				bad = true
			}
		}
		if bad {
			continue
		}
		cc, err := buildColumn(i, sec, src, c.Points)
		if err != nil {
			errs = append(errs, err)
			continue
		}
		for k, prev := range cols {
			if sameSection(prev.sec, sec) {
				errs = append(errs, field.Unprocessable(at+"/spoke", "column %d repeats the section of column %d (%s); put all points of one section in one column", i, k, sec.describe()))
			}
		}
		cols = append(cols, cc)
	}
	if err := errors.Join(errs...); err != nil {
		return nil, err
	}
	return cols, nil
}

// buildColumn checks that readings do not fall as tension rises and builds
// the column's interpolant of tension against reading: repeated tensions are
// averaged, equal readings at neighbouring tensions collapse to their mean
// tension.
func buildColumn(i int, sec section, src string, pts []Point) (checkedColumn, error) {
	idx := make([]int, len(pts))
	for k := range idx {
		idx[k] = k
	}
	sort.SliceStable(idx, func(a, b int) bool { return pts[idx[a]].TensionN < pts[idx[b]].TensionN })
	// Mean reading per distinct tension.
	type level struct{ t, r float64 }
	var levels []level
	var levelPoint []int // a point index of each level, for error pointers
	for k := 0; k < len(idx); {
		t := pts[idx[k]].TensionN
		var sum float64
		n := 0
		last := idx[k]
		for k < len(idx) && pts[idx[k]].TensionN == t {
			sum += pts[idx[k]].Reading
			last = idx[k]
			n++
			k++
		}
		levels = append(levels, level{t, sum / float64(n)})
		levelPoint = append(levelPoint, last)
	}
	cc := checkedColumn{sec: sec, source: src, points: pts, distinct: len(levels)}
	for k := 1; k < len(levels); k++ {
		if levels[k].r < levels[k-1].r {
			return cc, field.Unprocessable(ptr("columns", i, "points", levelPoint[k], "reading"),
				"column %d (%s) is not monotone: reading %g at %g N is below %g at %g N; readings must rise with tension",
				i, sec.describe(), levels[k].r, levels[k].t, levels[k-1].r, levels[k-1].t)
		}
	}
	// Collapse equal readings to one knot at their mean tension.
	var xs, ys []float64
	for k := 0; k < len(levels); {
		r := levels[k].r
		var sum float64
		n := 0
		for k < len(levels) && levels[k].r == r {
			sum += levels[k].t
			n++
			k++
		}
		if n > 1 {
			cc.plateau = true
		}
		xs = append(xs, r)
		ys = append(ys, sum/float64(n))
	}
	if len(xs) >= 2 {
		m := newMonotoneCubic(xs, ys)
		cc.curve = &m
	}
	return cc, nil
}
