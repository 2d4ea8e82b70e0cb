package tension

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// Identification thresholds of the tool model fit.
const (
	// condRefuse: above this scaled-Jacobian condition number the parameters
	// are not determined by the data and the model is not offered.
	condRefuse = 1e9
	// condMarginal: above this the model is offered with a warning.
	condMarginal = 1e6
	// spanWarnFrac: fitted vs measured span (DESIGN.md §4.2).
	spanWarnFrac = 0.03
)

// fitPoint is one calibration point in the fit.
type fitPoint struct {
	sec     evalSection
	tN, obs float64
}

// Fit validates a calibration and the tool's facts and builds its Model:
// every column's monotone curve, and the physical tool model fitted by least
// squares over all points of all columns in dial units (a grid over span
// and spring rate with preload and dial zero solved linearly at each node,
// then Levenberg–Marquardt with Marquardt scaling over all parameters).
// Known-tension columns added to a maker's table refine their own section
// with an EI factor and a reading offset.
//
// Errors are *field.Error (joined when several): pointers into the tool body
// ("/unit_mm") and the calibration body ("/columns/2/points/5/reading").
// A calibration that cannot identify the tool model is not an error: the
// Model then has no Physical part and Unidentified says why, and converting
// any section other than its columns is refused.
func Fit(cal Calibration, tool Tool) (*Model, error) {
	unit, terr := validateTool(tool)
	cols, cerr := validateCalibration(cal)
	if err := errors.Join(terr, cerr); err != nil {
		return nil, err
	}
	m := &Model{Version: ModelVersion, UnitMM: unit, Warnings: []Warning{}}
	if tool.MeasuredSpanMM != nil {
		v := *tool.MeasuredSpanMM
		m.MeasuredSpanMM = &v
	}
	m.TensionRangeN = [2]float64{math.Inf(1), 0}
	hasMaker := false
	for _, c := range cols {
		if c.source == SourceMakerTable {
			hasMaker = true
		}
	}
	for i, c := range cols {
		mc := ModelColumn{
			Spoke: c.sec.Spec, Source: c.source, Points: append([]Point(nil), c.points...),
			EINmm2: c.sec.EI, EAN: c.sec.EA, ThicknessMM: c.sec.T, EGPa: c.sec.E,
			EIFactorIndex: -1, OffsetIndex: -1,
		}
		if c.curve != nil {
			mc.Curve = &ColumnCurve{Readings: c.curve.X, TensionsN: c.curve.Y, SlopesNPerUnit: c.curve.D}
		}
		if c.plateau {
			m.Warnings = append(m.Warnings, Warning{WarnColumnPlateau, "info", fmt.Sprintf(
				"column %d (%s) shows the same reading at neighbouring tensions; the tool resolves this section coarsely", i, c.sec.describe())})
		}
		for _, p := range c.points {
			m.TensionRangeN[0] = math.Min(m.TensionRangeN[0], p.TensionN)
			m.TensionRangeN[1] = math.Max(m.TensionRangeN[1], p.TensionN)
		}
		m.Columns = append(m.Columns, mc)
	}
	if phys, reason, warns := fitPhysical(m, cols, hasMaker); phys != nil {
		m.Physical = phys
		m.Warnings = append(m.Warnings, warns...)
	} else {
		m.Unidentified = reason
		m.Warnings = append(m.Warnings, Warning{WarnNoToolModel, "warning", reason})
	}
	return m, nil
}

// fitPhysical fits the tool model; on failure it returns the reason.
func fitPhysical(m *Model, cols []checkedColumn, hasMaker bool) (*PhysicalFit, string, []Warning) {
	unit := m.UnitMM
	names := append([]string(nil), paramNames[:]...)
	var base, all []fitPoint
	distinctEI := map[float64]bool{}
	for i, c := range cols {
		es := evalSection{ei0: c.sec.EI, ea: c.sec.EA, t: c.sec.T, kEI: 1, iK: -1, iC: -1}
		refined := hasMaker && c.source == SourceKnownTension
		if refined {
			if c.distinct >= 2 {
				es.iK = len(names)
				names = append(names, fmt.Sprintf("ei_factor[%d]", i))
				m.Columns[i].EIFactorIndex = es.iK
			}
			es.iC = len(names)
			names = append(names, fmt.Sprintf("offset_units[%d]", i))
			m.Columns[i].OffsetIndex = es.iC
		} else {
			distinctEI[c.sec.EI] = true
		}
		m.Columns[i].InFit = true
		for _, p := range c.points {
			fp := fitPoint{sec: es, tN: p.TensionN, obs: p.Reading}
			all = append(all, fp)
			if !refined {
				base = append(base, fp)
			}
		}
	}
	np := len(names)
	switch {
	case len(distinctEI) < 2:
		return nil, "the calibration has one section only; one section cannot separate the tool's span from its spring, so other sections cannot be converted (add columns for at least two, better four, sizes)", nil
	case len(all) <= np:
		return nil, fmt.Sprintf("the calibration has %d points for %d model parameters; at least %d are needed", len(all), np, np+1), nil
	}
	th0, ok := gridStart(base, unit)
	if !ok {
		return nil, "no physically possible tool (positive plunger force and deflection) fits the calibration's points", nil
	}
	p := make([]float64, np)
	copy(p, th0[:])
	for _, fp := range all {
		if fp.sec.iK >= 0 {
			p[fp.sec.iK] = 1
		}
	}
	p, it, ok := levenbergMarquardt(all, p, unit)
	if !ok {
		return nil, "the tool model fit did not converge to a physically possible tool", nil
	}
	res, jac, ok := residuals(all, p, unit)
	if !ok {
		return nil, "the fitted tool model is not physical at every calibration point", nil
	}
	zeros := make([]float64, len(res))
	lin, err := weightedLS(jac, zeros, nil)
	if err != nil || lin.Cond > condRefuse {
		return nil, fmt.Sprintf("the calibration cannot identify the tool model (the fit's scaled Jacobian is singular or nearly so, condition number %.3g)", lin.Cond), nil
	}
	var rss float64
	for _, r := range res {
		rss += r * r
	}
	dof := len(all) - np
	s2 := rss / float64(dof)
	phys := &PhysicalFit{
		SpanMM: p[pSpan], PreloadN: p[pPreload], SpringNPerMM: p[pSpring], ZeroMM: p[pZero], StretchPerMM: p[pStretch],
		ParamNames: names, Params: p, ResidualSDUnits: math.Sqrt(s2), Points: len(all), DoF: dof,
		T975: tQuantile975(dof), ConditionNumber: lin.Cond, Iterations: it,
	}
	phys.Covariance = make([][]float64, np)
	phys.SE = make([]float64, np)
	for a := 0; a < np; a++ {
		phys.Covariance[a] = make([]float64, np)
		for b := 0; b < np; b++ {
			phys.Covariance[a][b] = s2 * lin.CovUnscaled.At(a, b)
		}
		phys.SE[a] = math.Sqrt(math.Max(0, phys.Covariance[a][a]))
	}
	var warns []Warning
	if len(distinctEI) == 2 {
		warns = append(warns, Warning{WarnModelMarginal, "warning", "two sections identify the tool model only marginally; four or more columns with three or more tensions each identify it well"})
	} else if lin.Cond > condMarginal {
		warns = append(warns, Warning{WarnModelMarginal, "warning", fmt.Sprintf("the tool model is weakly determined (condition number %.3g); intervals are wide", lin.Cond)})
	}
	if ms := m.MeasuredSpanMM; ms != nil {
		if d := math.Abs(p[pSpan]-*ms) / *ms; d > spanWarnFrac {
			warns = append(warns, Warning{WarnSpanMismatch, "warning", fmt.Sprintf(
				"the fitted anvil span %.1f mm differs from the measured %.1f mm by %.0f %%; check the measurement and the calibration's columns", p[pSpan], *ms, 100*d)})
		}
	}
	return phys, "", warns
}

// residuals returns model − observed readings and the Jacobian.
func residuals(pts []fitPoint, p []float64, unit float64) ([]float64, *mat.Dense, bool) {
	res := make([]float64, len(pts))
	jac := mat.NewDense(len(pts), len(p), nil)
	g := make([]float64, len(p))
	for i, fp := range pts {
		s := fp.sec
		if s.iK >= 0 {
			s.kEI = p[s.iK]
		}
		if s.iC >= 0 {
			s.offset = p[s.iC]
		}
		r, st, ok := forward(p, s, unit, fp.tN)
		if !ok {
			return nil, nil, false
		}
		res[i] = r - fp.obs
		gradient(p, s, unit, st, g)
		jac.SetRow(i, g)
	}
	return res, jac, true
}

func sumSquares(v []float64) float64 {
	var s float64
	for _, x := range v {
		s += x * x
	}
	return s
}

// gridStart searches span S and spring rate K with β = 0; at each node the
// model is linear in preload F0 and dial zero Z0 (r·unit − t + a·K·t =
// Z0 − a·F0 with a = C/(1 + K·C)), solved in closed form.
func gridStart(pts []fitPoint, unit float64) ([nToolParams]float64, bool) {
	var best [nToolParams]float64
	bestRSS := math.Inf(1)
	n := len(pts)
	cs := make([]float64, n)
	as := make([]float64, n)
	ys := make([]float64, n)
	ks := []float64{0}
	for i := 0; i <= 40; i++ {
		ks = append(ks, math.Pow(10, -2+5*float64(i)/40))
	}
	for si := 0; si <= 48; si++ {
		span := 5 * math.Pow(60, float64(si)/48) // 5 … 300 mm
		for i, fp := range pts {
			cs[i] = beamAt(fp.tN, span, fp.sec.ei()).C
		}
		for _, k := range ks {
			var ma, my float64
			for i, fp := range pts {
				a := cs[i] / (1 + k*cs[i])
				as[i] = a
				ys[i] = fp.obs*unit - fp.sec.t + a*k*fp.sec.t
				ma += a
				my += ys[i]
			}
			ma /= float64(n)
			my /= float64(n)
			var sxx, sxy float64
			for i := range pts {
				sxx += (as[i] - ma) * (as[i] - ma)
				sxy += (as[i] - ma) * (ys[i] - my)
			}
			if !(sxx > 0) {
				continue
			}
			f0 := -sxy / sxx
			z0 := my + f0*ma
			var rss float64
			physical := true
			for i, fp := range pts {
				delta := as[i] * (f0 + k*fp.sec.t)
				if !(delta > 0) || !(f0+k*(fp.sec.t-delta) > 0) {
					physical = false
					break
				}
				e := ys[i] - z0 + f0*as[i]
				rss += e * e
			}
			if physical && rss < bestRSS {
				bestRSS = rss
				best = [nToolParams]float64{span, f0, k, z0, 0}
			}
		}
	}
	return best, !math.IsInf(bestRSS, 1)
}

// levenbergMarquardt minimises the sum of squared residuals from p, with
// Marquardt's scaling (the damping acts on diag(JᵀJ), kept at its running
// maximum). Each step solves the damped problem [J; √λ·D] Δ = [−r; 0] with
// weightedLS. It returns the solution, the iterations used and whether a
// physical solution was reached.
func levenbergMarquardt(pts []fitPoint, p []float64, unit float64) ([]float64, int, bool) {
	np := len(p)
	res, jac, ok := residuals(pts, p, unit)
	if !ok {
		return p, 0, false
	}
	rss := sumSquares(res)
	d := make([]float64, np)
	lambda := 1e-3
	n := len(pts)
	aug := mat.NewDense(n+np, np, nil)
	rhs := make([]float64, n+np)
	it := 0
	for it = 1; it <= 500; it++ {
		for j := 0; j < np; j++ {
			var s float64
			for i := 0; i < n; i++ {
				v := jac.At(i, j)
				s += v * v
			}
			d[j] = math.Max(d[j], math.Sqrt(s))
			if d[j] == 0 {
				d[j] = 1
			}
		}
		improved := false
		for tries := 0; tries < 40; tries++ {
			aug.Zero()
			aug.Slice(0, n, 0, np).(*mat.Dense).Copy(jac)
			for j := 0; j < np; j++ {
				aug.Set(n+j, j, math.Sqrt(lambda)*d[j])
			}
			for i := 0; i < n; i++ {
				rhs[i] = -res[i]
			}
			for j := 0; j < np; j++ {
				rhs[n+j] = 0
			}
			step, err := weightedLS(aug, rhs, nil)
			if err != nil {
				lambda *= 10
				continue
			}
			trial := make([]float64, np)
			var dstep, dp float64
			for j := range p {
				trial[j] = p[j] + step.Coef[j]
				dstep += (d[j] * step.Coef[j]) * (d[j] * step.Coef[j])
				dp += (d[j] * p[j]) * (d[j] * p[j])
			}
			tres, tjac, ok := residuals(pts, trial, unit)
			if ok {
				if trss := sumSquares(tres); trss < rss {
					converged := rss-trss <= 1e-14*rss || math.Sqrt(dstep) <= 1e-12*math.Sqrt(dp)
					p, res, jac, rss = trial, tres, tjac, trss
					lambda = math.Max(lambda/10, 1e-15)
					improved = true
					if converged {
						return p, it, true
					}
					break
				}
			}
			if math.Sqrt(dstep) <= 1e-13*math.Sqrt(dp) {
				return p, it, true // no smaller step can improve: at the minimum
			}
			lambda *= 10
		}
		if !improved {
			return p, it, true
		}
	}
	return p, it, true
}
