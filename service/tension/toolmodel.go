package tension

import "math"

// The physical model of a three-point tensiometer, in N and mm:
//
//	plunger spring   P = F0 + K·(t − δ)
//	span             δ = C(T_eff, S, EI)·P           (beam-column, beam.go)
//	tool-added load  T_eff = T + β·EA·G(T_eff)·δ²
//	dial             r = (t + Z0 − δ)/unit  (+ a section's reading offset)
//
// θ = (S, F0, K, Z0, β). A section refined by known-tension points also has
// an EI factor k (EI → k·EI) and a reading offset c in dial units.

// Indices of the tool parameters in a parameter vector.
const (
	pSpan = iota
	pPreload
	pSpring
	pZero
	pStretch
	nToolParams
)

// paramNames are the JSON names of the tool parameters, in vector order.
var paramNames = [nToolParams]string{"span_mm", "preload_n", "spring_n_per_mm", "zero_mm", "stretch_per_mm"}

// evalSection is a section as the model sees it: its properties with any
// refinement applied, and the vector indices of its refinement parameters
// (−1 when absent).
type evalSection struct {
	ei0, ea, t float64
	kEI        float64 // EI factor (1 unrefined)
	offset     float64 // reading offset, dial units
	iK, iC     int
}

func (s evalSection) ei() float64 { return s.kEI * s.ei0 }

// state is the solved tool-on-spoke configuration at one tension.
type state struct {
	delta, teff, p float64
	b              beam
}

// forward returns the reading the tool shows at tension tN, solving the
// tool-added tension by fixed-point iteration. ok is false when the
// configuration is not physical (no positive plunger force or deflection,
// or the iteration does not settle).
func forward(th []float64, s evalSection, unit, tN float64) (r float64, st state, ok bool) {
	span, f0, k, z0, beta := th[pSpan], th[pPreload], th[pSpring], th[pZero], th[pStretch]
	if !(span > 0) || !(tN >= 0) {
		return 0, st, false
	}
	ei := s.ei()
	if !(ei > 0) {
		return 0, st, false
	}
	te := tN
	for it := 0; it < 100; it++ {
		b := beamAt(te, span, ei)
		den := 1 + k*b.C
		if !(den > 0) {
			return 0, st, false
		}
		delta := b.C * (f0 + k*s.t) / den
		next := tN + beta*s.ea*b.G*delta*delta
		if !finite(next) || next < 0 {
			return 0, st, false
		}
		if math.Abs(next-te) <= 1e-12*math.Max(1, tN) {
			b = beamAt(next, span, ei)
			delta = b.C * (f0 + k*s.t) / (1 + k*b.C)
			st = state{delta: delta, teff: next, p: f0 + k*(s.t-delta), b: b}
			if !(delta > 0) || !(st.p > 0) {
				return 0, st, false
			}
			return (s.t+z0-delta)/unit + s.offset, st, true
		}
		te = next
	}
	return 0, st, false
}

// inverse returns the tension at which the tool shows reading r, with the
// solved state. It needs no iteration: the reading fixes δ and the plunger
// force, hence the compliance, whose inverse gives T_eff, and T follows.
// ok is false when no positive tension produces the reading.
func inverse(th []float64, s evalSection, unit, r float64) (tN float64, st state, ok bool) {
	return inverseFrom(th, s, unit, r, -1)
}

// inverseFrom is inverse with a guessed effective tension to start from.
func inverseFrom(th []float64, s evalSection, unit, r, guessN float64) (tN float64, st state, ok bool) {
	span, f0, k, z0, beta := th[pSpan], th[pPreload], th[pSpring], th[pZero], th[pStretch]
	ei := s.ei()
	if !(span > 0) || !(ei > 0) {
		return 0, st, false
	}
	delta := s.t + z0 - (r-s.offset)*unit
	p := f0 + k*(s.t-delta)
	if !(delta > 0) || !(p > 0) {
		return 0, st, false
	}
	te, ok := invertComplianceFrom(delta/p, span, ei, guessN)
	if !ok {
		return 0, st, false
	}
	gl := beamG(te, span, ei)
	tN = te - beta*s.ea*gl*delta*delta
	if !(tN > 0) || !finite(tN) {
		return 0, st, false
	}
	// st.b is left empty: gradient evaluates the full beam when it needs it.
	return tN, state{delta: delta, teff: te, p: p}, true
}

// gradient fills g (length of the parameter vector) with ∂r/∂θ at fixed
// tension, and returns ∂r/∂T, by implicit differentiation of
//
//	F1 = δ − C(T_eff)·P = 0,  F2 = T_eff − T − β·EA·G(T_eff)·δ² = 0.
func gradient(th []float64, s evalSection, unit float64, st state, g []float64) (drdT float64) {
	k, beta := th[pSpring], th[pStretch]
	b, p, d := st.b, st.p, st.delta
	if b.C == 0 {
		b = beamAt(st.teff, th[pSpan], s.ei())
	}
	// Jacobian of (F1, F2) in (δ, T_eff).
	a11 := 1 + b.C*k
	a12 := -b.CT * p
	a21 := -2 * beta * s.ea * b.G * d
	a22 := 1 - beta*s.ea*b.GT*d*d
	det := a11*a22 - a12*a21
	// dδ for a right-hand side (e1, e2) = −(∂F1, ∂F2): Cramer's rule.
	ddelta := func(f1, f2 float64) float64 {
		e1, e2 := -f1, -f2
		return (e1*a22 - a12*e2) / det
	}
	for i := range g {
		g[i] = 0
	}
	g[pSpan] = -ddelta(-b.CS*p, -beta*s.ea*b.GS*d*d) / unit
	g[pPreload] = -ddelta(-b.C, 0) / unit
	g[pSpring] = -ddelta(-b.C*(s.t-d), 0) / unit
	g[pZero] = 1 / unit
	g[pStretch] = -ddelta(0, -s.ea*b.G*d*d) / unit
	if s.iK >= 0 {
		g[s.iK] = -ddelta(-b.CEI*s.ei0*p, -beta*s.ea*b.GEI*s.ei0*d*d) / unit
	}
	if s.iC >= 0 {
		g[s.iC] = 1
	}
	return -ddelta(0, -1) / unit
}
