package tension

import (
	"math"
	"strconv"
	"testing"
	"wheelbench/service/reftest"
)

func num(t *testing.T, s string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

func relErr(got, want float64) float64 {
	if want == 0 {
		return math.Abs(got)
	}
	return math.Abs(got-want) / math.Abs(want)
}

// steel2mm is E·I of a 2.0 mm round wire at E = 193 GPa, N·mm²
// (I = πd⁴/64 = 0.785398163397 mm⁴, REFERENCE.md §9).
var steel2mm = 193000 * math.Pi * 16 / 64

// TestBeamWorkedValues checks the worked values of REFERENCE.md §9
// (testdata/reference/beam.tsv): d = 2.0 mm, L = 300 mm, P = 10 N, E = 193 GPa.
func TestBeamWorkedValues(t *testing.T) {
	for _, r := range reftest.Rows(t, "beam.tsv") {
		tn, want := num(t, r[0]), num(t, r[1])
		got := midspanDeflectionMM(10, tn, 300, steel2mm)
		// The file gives 10–12 significant digits; agree to 1e-9 relative.
		if e := relErr(got, want); e > 1e-9 {
			t.Errorf("T = %v N: δ = %.12g mm, reference %.12g (rel. err %.2g)", tn, got, want, e)
		}
	}
}

// TestBeamLimits checks the handbook limits: the untensioned simply supported
// beam with a central load, δ = P S³/(48 E I) (Mott, Machine Elements in
// Mechanical Design, Table A14-1 case (a)), and the taut string δ = P S/(4T)
// (equilibrium of a string: 2T·(δ/(S/2)) = P).
func TestBeamLimits(t *testing.T) {
	const p, s = 10.0, 40.0
	if got, want := midspanDeflectionMM(p, 0, s, steel2mm), p*s*s*s/(48*steel2mm); relErr(got, want) > 1e-15 {
		t.Errorf("T = 0: %v, handbook %v", got, want)
	}
	// Tiny tension, T = 1e-3 N: u = (S/2)√(T/EI) ≈ 1.6e-3, and δ = handbook·(1 − 2u²/5)
	// with the next series term (17u⁴/105 ≈ 1e-12) below the tolerance.
	u := 0.5 * s * math.Sqrt(1e-3/steel2mm)
	if got, want := midspanDeflectionMM(p, 1e-3, s, steel2mm), p*s*s*s/(48*steel2mm)*(1-0.4*u*u); relErr(got, want) > 1e-11 {
		t.Errorf("T → 0: %v, handbook·(1 − 2u²/5) %v", got, want)
	}
	// String limit: EI → 0 with T = 1000 N gives u ≫ 1 and δ → PS/(4T)·(1 − 1/u).
	for _, ei := range []float64{1e-2, 1e-4, 1e-6} {
		tn := 1000.0
		u := 0.5 * s * math.Sqrt(tn/ei)
		got := midspanDeflectionMM(p, tn, s, ei)
		want := p * s / (4 * tn) * (1 - 1/u) // exact for tanh u = 1
		if relErr(got, want) > 1e-12 {
			t.Errorf("EI = %v: %v, string %v", ei, got, want)
		}
	}
}

// fdBeam solves EI w”” − T w” = P δ(x − S/2), simply supported
// (w = w” = 0 at both ends), by finite differences written independently
// of the closed form: with v = w” it splits into EI v” − T v = P δ and
// w” = v, each a tridiagonal system on n intervals (n even, the load on the
// middle node as P/h). It returns the nodal deflections.
func fdBeam(p, tn, s, ei float64, n int) []float64 {
	h := s / float64(n)
	m := n - 1 // interior nodes 1..n-1
	solve := func(diag float64, off float64, rhs []float64) []float64 {
		// Thomas algorithm for a constant tridiagonal matrix.
		c := make([]float64, m)
		d := make([]float64, m)
		c[0] = off / diag
		d[0] = rhs[0] / diag
		for i := 1; i < m; i++ {
			den := diag - off*c[i-1]
			c[i] = off / den
			d[i] = (rhs[i] - off*d[i-1]) / den
		}
		x := make([]float64, m)
		x[m-1] = d[m-1]
		for i := m - 2; i >= 0; i-- {
			x[i] = d[i] - c[i]*x[i+1]
		}
		return x
	}
	rhs := make([]float64, m)
	rhs[n/2-1] = p / h
	// EI (v[i-1] − 2v[i] + v[i+1])/h² − T v[i] = rhs
	v := solve(-2*ei/(h*h)-tn, ei/(h*h), rhs)
	// (w[i-1] − 2w[i] + w[i+1])/h² = v[i]
	w := solve(-2/(h*h), 1/(h*h), v)
	out := make([]float64, n+1)
	copy(out[1:], w)
	return out
}

// TestBeamAgainstFiniteDifferences compares the closed form with the
// independent finite-difference solution above, Richardson-extrapolated
// from n and 2n intervals (the scheme is second order).
func TestBeamAgainstFiniteDifferences(t *testing.T) {
	const p, s = 80.0, 45.0
	for _, ei := range []float64{steel2mm, steel2mm * 6.55, steel2mm * 0.1} {
		for _, tn := range []float64{0, 10, 200, 1000, 2500} {
			w1 := fdBeam(p, tn, s, ei, 1000)
			w2 := fdBeam(p, tn, s, ei, 2000)
			fd := (4*w2[1000] - w1[500]) / 3
			got := midspanDeflectionMM(p, tn, s, ei)
			if e := relErr(got, fd); e > 1e-8 {
				t.Errorf("EI %.4g T %v: closed %.12g, FD %.12g (rel %.2g)", ei, tn, got, fd, e)
			}
			// Path lengthening ΔL = ½∫w'² dx from the FD shape against G·δ².
			dl := func(w []float64) float64 {
				h := s / float64(len(w)-1)
				var sum float64
				for i := 0; i+1 < len(w); i++ {
					d := (w[i+1] - w[i]) / h
					sum += 0.5 * d * d * h
				}
				return sum
			}
			dlFD := (4*dl(w2) - dl(w1)) / 3
			b := beamAt(tn, s, ei)
			if e := relErr(b.G*got*got, dlFD); e > 1e-6 {
				t.Errorf("EI %.4g T %v: G·δ² = %.10g, FD ½∫w'² = %.10g (rel %.2g)", ei, tn, b.G*got*got, dlFD, e)
			}
		}
	}
}

// TestBeamSeriesContinuity: the series and the closed forms agree where they
// meet (both are exact expansions of the same functions).
func TestBeamSeriesContinuity(t *testing.T) {
	below, dBelow := phi(seriesU * (1 - 1e-9))
	th := math.Tanh(seriesU)
	closed := 3 * (seriesU - th) / (seriesU * seriesU * seriesU)
	if relErr(below, closed) > 1e-9 {
		t.Errorf("φ series %v, closed %v", below, closed)
	}
	_, dAbove := phi(seriesU)
	if relErr(dBelow, dAbove) > 1e-7 {
		t.Errorf("φ' series %v, closed %v", dBelow, dAbove)
	}
	if g1, g2 := gammaFn(seriesU*(1-1e-9)), gammaFn(seriesU); relErr(g1, g2) > 1e-8 {
		t.Errorf("γ series %v, closed %v", g1, g2)
	}
	// Limits stated in the model note: G → 2.4/S for a beam, 2/S for a string.
	if g := gammaFn(0); g != 1.2 {
		t.Errorf("γ(0) = %v, want 1.2", g)
	}
	if g := gammaFn(1e6); relErr(g, 1) > 1e-5 {
		t.Errorf("γ(∞) = %v, want 1", g)
	}
}

// TestBeamDerivatives checks the analytic partials against central differences.
func TestBeamDerivatives(t *testing.T) {
	for _, tn := range []float64{0.5, 50, 400, 1600, 1e5} {
		for _, s := range []float64{25, 60} {
			for _, ei := range []float64{1.5e4, steel2mm, 1e6} {
				b := beamAt(tn, s, ei)
				fd := func(f func(d float64) beam, h float64) beam {
					p, m := f(h), f(-h)
					return beam{C: (p.C - m.C) / (2 * h), G: (p.G - m.G) / (2 * h)}
				}
				dt := fd(func(d float64) beam { return beamAt(tn+d, s, ei) }, 1e-5*tn)
				ds := fd(func(d float64) beam { return beamAt(tn, s+d, ei) }, 1e-5*s)
				de := fd(func(d float64) beam { return beamAt(tn, s, ei+d) }, 1e-5*ei)
				checks := []struct {
					name      string
					got, want float64
					scale     float64
				}{
					{"C_T", b.CT, dt.C, b.C / tn}, {"C_S", b.CS, ds.C, b.C / s}, {"C_EI", b.CEI, de.C, b.C / ei},
					{"G_T", b.GT, dt.G, b.G / tn}, {"G_S", b.GS, ds.G, b.G / s}, {"G_EI", b.GEI, de.G, b.G / ei},
				}
				for _, c := range checks {
					if math.Abs(c.got-c.want) > 1e-6*math.Abs(c.scale) {
						t.Errorf("T %v S %v EI %v: %s = %.8g, difference quotient %.8g", tn, s, ei, c.name, c.got, c.want)
					}
				}
			}
		}
	}
}

// TestInvertCompliance: the inverse returns the tension (property).
func TestInvertCompliance(t *testing.T) {
	for _, tn := range []float64{0, 1e-4, 1, 37, 400, 1000, 2500, 1e6} {
		for _, ei := range []float64{1.5e4, steel2mm, 1e6} {
			c := beamAt(tn, 50, ei).C
			got, ok := invertCompliance(c, 50, ei)
			if !ok || math.Abs(got-tn) > 1e-8*math.Max(1, tn) {
				t.Errorf("T %v EI %v: inverse %v, %v", tn, ei, got, ok)
			}
		}
	}
	if _, ok := invertCompliance(50*50*50/(48*steel2mm)*1.01, 50, steel2mm); ok {
		t.Error("compliance above the untensioned beam inverted")
	}
}

// TestBeamSharedTanhIdentical: phiGamma (one tanh for φ and γ) and beamG
// (γ only) give exactly the values of phi and gammaFn evaluated apart, on
// both sides of the series switch and of the u > 40 branch; the speed
// path must not move any result by even one bit.
func TestBeamSharedTanhIdentical(t *testing.T) {
	us := []float64{0, 1e-300, 1e-6, 0.05, seriesU * (1 - 1e-16), seriesU, 0.1000000001, 0.3, 0.625, 1, 2.1, 5, 17.3, 39.999, 40, 40.0000001, 41, 1e3, 1e8}
	for u := 1e-4; u < 200; u *= 1.0137 {
		us = append(us, u)
	}
	for _, u := range us {
		f, df, g := phiGamma(u)
		wf, wdf := phi(u)
		if wg := gammaFn(u); f != wf || df != wdf || g != wg {
			t.Errorf("u %v: phiGamma (%v, %v, %v), phi/gammaFn (%v, %v, %v)", u, f, df, g, wf, wdf, wg)
		}
	}
	for _, tn := range []float64{0, 1e-9, 0.5, 50, 400, 1000, 1600, 2500, 1e5} {
		for _, s := range []float64{25, 50, 60} {
			for _, ei := range []float64{1.5e4, steel2mm, 1e6} {
				if g, want := beamG(tn, s, ei), beamAt(tn, s, ei).G; g != want {
					t.Errorf("T %v S %v EI %v: beamG %v, beamAt G %v", tn, s, ei, g, want)
				}
			}
		}
	}
}
