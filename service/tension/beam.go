package tension

import "math"

// The spoke between the anvils is a simply supported beam-column in tension
// loaded at midspan (EI w'''' − T w'' = P δ(x − S/2)). Its midspan
// compliance is
//
//	C(T) = δ/P = (u − tanh u)/(2Tλ) = S³/(48 EI) · φ(u),
//	λ = √(T/EI),  u = λS/2,  φ(u) = 3(u − tanh u)/u³,
//
// which tends to the handbook beam S³/(48EI) as T → 0 and to the taut string
// S/(4T) as EI → 0. Deflecting the spoke lengthens its path over the span by
// ΔL = G δ², G = (2/S)·γ(u), γ(u) = u(u − 1.5 tanh u + ½u sech²u)/(u − tanh u)²
// (γ → 1.2 for a beam, → 1 for a string). Lengths in mm, forces in N,
// EI in N·mm².

// seriesU is where φ, φ' and γ switch from closed forms to their series:
// below it u − tanh u cancels in float64; at it both agree to ~1e-10.
const seriesU = 0.1

// phi returns φ(u) = 3(u − tanh u)/u³ and its derivative φ'(u).
func phi(u float64) (f, df float64) {
	if u < seriesU {
		u2 := u * u
		// tanh u = u − u³/3 + 2u⁵/15 − 17u⁷/315 + 62u⁹/2835 − 1382u¹¹/155925 …
		f = 1 + u2*(-2.0/5+u2*(17.0/105+u2*(-62.0/945+u2*1382.0/51975)))
		df = u * (-4.0/5 + u2*(68.0/105+u2*(-372.0/945+u2*11056.0/51975)))
		return f, df
	}
	return phiTanh(u, math.Tanh(u))
}

// phiTanh is phi's closed form for u ≥ seriesU, given th = tanh u.
func phiTanh(u, th float64) (f, df float64) {
	f = 3 * (u - th) / (u * u * u)
	df = 3*th*th/(u*u*u) - 3*f/u
	return f, df
}

// gammaFn returns γ(u) = u·N(u)/(u − tanh u)², N = u − 1.5 tanh u + ½u sech²u.
func gammaFn(u float64) float64 {
	if u < seriesU {
		u2 := u * u
		// N = 2u⁵/15 − 34u⁷/315 + 62u⁹/945 − 5528u¹¹/155925 …; (u − tanh u)² = u⁶φ²/9.
		p := 2.0/15 + u2*(-34.0/315+u2*(62.0/945+u2*(-5528.0/155925)))
		f, _ := phi(u)
		return 9 * p / (f * f)
	}
	if u > 40 {
		return gammaTanh(u, 1)
	}
	return gammaTanh(u, math.Tanh(u))
}

// gammaTanh is gammaFn's closed form for u ≥ seriesU, given th = tanh u
// (not needed beyond u = 40).
func gammaTanh(u, th float64) float64 {
	if u > 40 {
		// tanh u = 1 and sech²u < 1e-34 in float64: γ = u(u − 1.5)/(u − 1)².
		return u * (u - 1.5) / ((u - 1) * (u - 1))
	}
	n := u - 1.5*th + 0.5*u*(1-th*th) // sech²u = 1 − tanh²u
	d := u - th
	return u * n / (d * d)
}

// phiGamma returns phi(u) and gammaFn(u), bit for bit, evaluating tanh u
// once for both.
func phiGamma(u float64) (f, df, g float64) {
	if u < seriesU {
		f, df = phi(u)
		return f, df, gammaFn(u)
	}
	th := math.Tanh(u)
	f, df = phiTanh(u, th)
	return f, df, gammaTanh(u, th)
}

// gammaPrimeOverU returns γ'(u)/u, finite as u → 0 (limit −8/175, from
// γ = 1.2 − (4/175)u² + …), by a central difference elsewhere.
func gammaPrimeOverU(u float64) float64 {
	if u < 1e-3 {
		return -8.0 / 175
	}
	h := 1e-5 * math.Max(1, u)
	return (gammaFn(u+h) - gammaFn(u-h)) / (2 * h) / u
}

// beam holds the compliance C and path factor G of a spoke span and their
// partial derivatives with respect to tension T, span S and stiffness EI.
type beam struct {
	C, CT, CS, CEI float64
	G, GT, GS, GEI float64
}

// beamAt evaluates the span at tension tN ≥ 0, span sMM > 0, stiffness ei > 0.
func beamAt(tN, sMM, ei float64) beam {
	if tN < 0 {
		tN = 0
	}
	u := 0.5 * sMM * math.Sqrt(tN/ei)
	f, df, g := phiGamma(u)
	c0 := sMM * sMM * sMM / (48 * ei) // handbook beam compliance
	var b beam
	b.C = c0 * f
	// ∂u/∂T = u/(2T) = (S²/(8 EI))/u, so ∂C/∂T = c0·(φ'/u)·S²/(8EI).
	var dfOverU float64
	if u < seriesU {
		u2 := u * u
		dfOverU = -4.0/5 + u2*(68.0/105+u2*(-372.0/945+u2*11056.0/51975))
	} else {
		dfOverU = df / u
	}
	b.CT = c0 * dfOverU * sMM * sMM / (8 * ei)
	b.CS = 3*b.C/sMM + c0*df*u/sMM
	b.CEI = -b.C/ei - c0*df*u/(2*ei)
	gpu := gammaPrimeOverU(u)
	b.G = 2 * g / sMM
	b.GT = 2 / sMM * gpu * sMM * sMM / (8 * ei)
	b.GS = -b.G/sMM + 2/sMM*gpu*u*u/sMM
	b.GEI = -2 / sMM * gpu * u * u / (2 * ei)
	return b
}

// beamG evaluates only the path factor G of a span (the value beamAt
// gives, without the compliance and derivatives).
func beamG(tN, sMM, ei float64) float64 {
	if tN < 0 {
		tN = 0
	}
	u := 0.5 * sMM * math.Sqrt(tN/ei)
	return 2 * gammaFn(u) / sMM
}

// midspanDeflectionMM is δ = C·P for a point load pN at midspan.
func midspanDeflectionMM(pN, tN, sMM, ei float64) float64 {
	return beamAt(tN, sMM, ei).C * pN
}

// invertCompliance returns the tension T ≥ 0 at which the span's compliance
// equals c (mm/N). ok is false when c is not in (0, S³/(48EI)], i.e. no
// non-negative tension gives that compliance.
func invertCompliance(c, sMM, ei float64) (tN float64, ok bool) {
	return invertComplianceFrom(c, sMM, ei, -1)
}

// invertComplianceFrom is invertCompliance started from a guessed tension
// (negative: no guess); a close guess saves most Newton steps.
func invertComplianceFrom(c, sMM, ei, guessN float64) (tN float64, ok bool) {
	c0 := sMM * sMM * sMM / (48 * ei)
	q := c / c0
	if !(q > 0 && q <= 1) {
		return 0, false
	}
	if q == 1 {
		return 0, true
	}
	// Solve 1/φ(u) = 1/q for u > 0. As a function of w = u², 1/φ is close
	// to a straight line at both ends (1 + 2w/5 for small u, w/3 for large),
	// so Newton in w converges in a few steps; φ ≤ 3/u² bounds the root by
	// w ≤ 3/q, and bisection in [lo, hi] guards every step.
	target := 1 / q
	lo, hi := 0.0, 3/q+1
	w := 3 / q
	if q > 0.5 {
		w = 2.5 * (target - 1) // small-u series start
	}
	if guessN > 0 {
		if wg := 0.25 * sMM * sMM * guessN / ei; wg > 0 && wg < hi {
			w = wg
		}
	}
	for k := 0; k < 100; k++ {
		u := math.Sqrt(w)
		f, df := phi(u)
		g := 1/f - target
		if g > 0 {
			hi = w
		} else {
			lo = w
		}
		var next float64
		if u > 0 {
			next = w - g/(-df/(f*f)/(2*u))
		}
		if next == w {
			break // Newton's step no longer moves w: converged
		}
		if !(next > lo && next < hi) {
			next = 0.5 * (lo + hi)
		}
		if math.Abs(next-w) <= 1e-12*w || hi-lo <= 1e-14*hi {
			w = next
			break
		}
		w = next
	}
	u := math.Sqrt(w)
	lam := 2 * u / sMM
	return ei * lam * lam, true
}
