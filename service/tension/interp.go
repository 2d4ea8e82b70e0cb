package tension

import "math"

// monotoneCubic is a monotone piecewise-cubic Hermite interpolant y(x)
// through strictly increasing knots X with values Y and knot slopes D.
//
// The slopes follow the Fritsch–Carlson construction (1980): a cubic Hermite
// piece is monotone when its end slopes lie in the region the method
// identifies; here they are chosen by the weighted harmonic mean of the
// neighbouring secants (the Fritsch–Butland 1984 choice, which always lies in
// that region), zero where the data turn, and a shape-preserving three-point
// formula at the ends. Between knots the curve never overshoots the data.
type monotoneCubic struct {
	X []float64 `json:"x"`
	Y []float64 `json:"y"`
	D []float64 `json:"d"`
}

// newMonotoneCubic builds the interpolant. xs must be strictly increasing,
// len(xs) == len(ys) >= 2; callers validate that first.
func newMonotoneCubic(xs, ys []float64) monotoneCubic {
	n := len(xs)
	x := append([]float64(nil), xs...)
	y := append([]float64(nil), ys...)
	d := make([]float64, n)
	sec := make([]float64, n-1)
	for i := 0; i < n-1; i++ {
		sec[i] = (y[i+1] - y[i]) / (x[i+1] - x[i])
	}
	if n == 2 {
		d[0], d[1] = sec[0], sec[0]
		return monotoneCubic{X: x, Y: y, D: d}
	}
	for i := 1; i < n-1; i++ {
		if sec[i-1]*sec[i] <= 0 {
			continue // a turning point or a flat piece: zero slope keeps it monotone
		}
		h0, h1 := x[i]-x[i-1], x[i+1]-x[i]
		w0, w1 := 2*h1+h0, h1+2*h0 // weights of the harmonic mean
		d[i] = (w0 + w1) / (w0/sec[i-1] + w1/sec[i])
	}
	d[0] = endSlope(x[1]-x[0], x[2]-x[1], sec[0], sec[1])
	d[n-1] = endSlope(x[n-1]-x[n-2], x[n-2]-x[n-3], sec[n-2], sec[n-3])
	return monotoneCubic{X: x, Y: y, D: d}
}

// endSlope is the three-point end slope limited to keep the end piece
// monotone: hE, sE are the width and secant of the end interval, hI, sI of
// the next one in.
func endSlope(hE, hI, sE, sI float64) float64 {
	g := ((2*hE+hI)*sE - hE*sI) / (hE + hI)
	if g*sE <= 0 {
		return 0
	}
	if sE*sI <= 0 && math.Abs(g) > 3*math.Abs(sE) {
		return 3 * sE
	}
	return g
}

// segment returns the index i with X[i] <= x <= X[i+1], clamped to the ends.
func (m monotoneCubic) segment(x float64) int {
	lo, hi := 0, len(m.X)-2
	for lo < hi {
		mid := (lo + hi + 1) / 2
		if m.X[mid] <= x {
			lo = mid
		} else {
			hi = mid - 1
		}
	}
	return lo
}

// at returns y(x) and dy/dx. Outside [X[0], X[n-1]] it continues the end
// piece's tangent line; callers decide whether that is allowed.
func (m monotoneCubic) at(x float64) (y, dydx float64) {
	n := len(m.X)
	if x <= m.X[0] {
		return m.Y[0] + m.D[0]*(x-m.X[0]), m.D[0]
	}
	if x >= m.X[n-1] {
		return m.Y[n-1] + m.D[n-1]*(x-m.X[n-1]), m.D[n-1]
	}
	return m.piece(m.segment(x), x)
}

// piece evaluates y(x) and dy/dx on the piece [X[i], X[i+1]].
func (m monotoneCubic) piece(i int, x float64) (y, dydx float64) {
	h := m.X[i+1] - m.X[i]
	s := (x - m.X[i]) / h
	s2, s3 := s*s, s*s*s
	h00 := 2*s3 - 3*s2 + 1
	h10 := s3 - 2*s2 + s
	h01 := -2*s3 + 3*s2
	h11 := s3 - s2
	y = h00*m.Y[i] + h10*h*m.D[i] + h01*m.Y[i+1] + h11*h*m.D[i+1]
	dh00 := (6*s2 - 6*s) / h
	dh10 := 3*s2 - 4*s + 1
	dh01 := (-6*s2 + 6*s) / h
	dh11 := 3*s2 - 2*s
	dydx = dh00*m.Y[i] + dh10*m.D[i] + dh01*m.Y[i+1] + dh11*m.D[i+1]
	return y, dydx
}

// invert returns x with y(x) = y for an increasing interpolant: Newton's
// method on the bracketing piece, falling back to bisection whenever a step
// would leave the bracket (the piece is monotone, so the bracket always
// holds the root). ok is false when y lies outside [Y[0], Y[n-1]].
func (m monotoneCubic) invert(y float64) (x float64, ok bool) {
	n := len(m.Y)
	if !(y >= m.Y[0] && y <= m.Y[n-1]) {
		return 0, false
	}
	i := 0
	for i < n-2 && m.Y[i+1] < y {
		i++
	}
	lo, hi := m.X[i], m.X[i+1]
	x = lo
	if dy := m.Y[i+1] - m.Y[i]; dy > 0 {
		x = lo + (hi-lo)*(y-m.Y[i])/dy // the secant's root
	}
	for k := 0; k < 100; k++ {
		v, d := m.piece(i, x)
		f := v - y
		if f == 0 {
			return x, true
		}
		if f < 0 {
			lo = x
		} else {
			hi = x
		}
		next := x - f/d
		if !(d > 0) || !(next > lo && next < hi) {
			next = 0.5 * (lo + hi)
		}
		if math.Abs(next-x) <= 1e-13*math.Max(1, math.Abs(x)) || hi-lo <= 1e-13*math.Max(1, math.Abs(hi)) {
			return next, true
		}
		x = next
	}
	return x, true
}
