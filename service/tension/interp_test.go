package tension

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/interp"
)

// TestMonotoneCubicAgainstGonum compares the interpolant with gonum's
// interp.FritschButland (an independent implementation of the same
// Fritsch–Carlson-class monotone cubic with Fritsch–Butland slopes).
func TestMonotoneCubicAgainstGonum(t *testing.T) {
	cases := []struct {
		name   string
		xs, ys []float64
	}{
		// Invented, table-like: tension (N) against reading, unequal steps.
		{"table", []float64{300, 400, 500, 650, 800, 1000, 1200, 1500}, []float64{12, 20, 27, 36, 44, 53, 60, 68}},
		{"flat piece", []float64{0, 1, 2, 3, 4}, []float64{0, 1, 1, 2, 5}},
		{"three points", []float64{0, 1, 3}, []float64{0, 2, 3}},
		{"two points", []float64{1, 2}, []float64{10, 30}},
	}
	for _, c := range cases {
		var fb interp.FritschButland
		if err := fb.Fit(c.xs, c.ys); err != nil {
			t.Fatal(err)
		}
		m := newMonotoneCubic(c.xs, c.ys)
		lo, hi := c.xs[0], c.xs[len(c.xs)-1]
		for k := 0; k <= 400; k++ {
			x := lo + (hi-lo)*float64(k)/400
			got, dgot := m.at(x)
			want, dwant := fb.Predict(x), fb.PredictDerivative(x)
			if math.Abs(got-want) > 1e-12*math.Max(1, math.Abs(want)) {
				t.Errorf("%s: y(%v) = %v, gonum %v", c.name, x, got, want)
			}
			if math.Abs(dgot-dwant) > 1e-9*math.Max(1, math.Abs(dwant)) {
				t.Errorf("%s: y'(%v) = %v, gonum %v", c.name, x, dgot, dwant)
			}
		}
	}
}

// TestMonotoneCubicByHand checks three points worked by hand.
func TestMonotoneCubicByHand(t *testing.T) {
	// Knots (0,0), (1,2), (3,3): secants 2 and 0.5, widths 1 and 2.
	// Interior slope, weighted harmonic mean: w0 = 2·2+1 = 5, w1 = 2+2·1 = 4,
	// d1 = 9 / (5/2 + 4/0.5) = 9/10.5 = 6/7.
	// Left end: g = ((2·1+2)·2 − 1·0.5)/(1+2) = 7.5/3 = 2.5 (same sign, kept).
	// Right end: g = ((2·2+1)·0.5 − 2·2)/(2+1) = −1.5/3 = −0.5, opposite sign → 0.
	m := newMonotoneCubic([]float64{0, 1, 3}, []float64{0, 2, 3})
	want := []float64{2.5, 6.0 / 7, 0}
	for i, w := range want {
		if math.Abs(m.D[i]-w) > 1e-15 {
			t.Errorf("slope %d = %v, hand computation %v", i, m.D[i], w)
		}
	}
	// Midpoint of the first piece, Hermite basis at s = ½:
	// y = ½·0 + ⅛·1·2.5 + ½·2 − ⅛·1·(6/7) = 1 + (2.5 − 6/7)/8 = 1.205357142857…
	if y, _ := m.at(0.5); math.Abs(y-(1+(2.5-6.0/7)/8)) > 1e-15 {
		t.Errorf("y(0.5) = %v", y)
	}
}

// TestMonotoneCubicProperties: through the knots, monotone between them,
// invert is the inverse (property tests).
func TestMonotoneCubicProperties(t *testing.T) {
	xs := []float64{400, 500, 600, 700, 800, 900, 1000, 1100, 1200, 1300, 1400, 1500, 1600}
	ys := []float64{41, 52, 61, 68, 75, 80, 85, 89, 93, 96, 99, 102, 104}
	m := newMonotoneCubic(xs, ys)
	for i := range xs {
		if y, _ := m.at(xs[i]); y != ys[i] {
			t.Errorf("knot %d: %v, want %v", i, y, ys[i])
		}
	}
	prev := math.Inf(-1)
	for x := 400.0; x <= 1600; x += 0.5 {
		y, d := m.at(x)
		if y < prev || d < 0 {
			t.Fatalf("not monotone at %v: %v after %v (slope %v)", x, y, prev, d)
		}
		prev = y
		back, ok := m.invert(y)
		if !ok || math.Abs(back-x) > 1e-7 {
			t.Fatalf("invert(%v) = %v, %v; want %v", y, back, ok, x)
		}
	}
	if _, ok := m.invert(40); ok {
		t.Error("invert below the table succeeded")
	}
}
