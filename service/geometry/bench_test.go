package geometry

import "testing"

var sink Result

// BenchmarkCompute: one wheel (the contract example: 32 holes, 3-cross,
// spoke, target tension and stock), both sides. Budget: 1 µs.
func BenchmarkCompute(b *testing.B) {
	w := contractWheel()
	b.ReportAllocs()
	for b.Loop() {
		r, err := Compute(w)
		if err != nil {
			b.Fatal(err)
		}
		sink = r
	}
}

// BenchmarkComputeGeometryOnly: the required inputs only (no optional
// outputs, so nothing to allocate).
func BenchmarkComputeGeometryOnly(b *testing.B) {
	w := contractWheel()
	w.Spoke, w.TargetTensionN, w.Stock = nil, nil, nil
	b.ReportAllocs()
	for b.Loop() {
		r, err := Compute(w)
		if err != nil {
			b.Fatal(err)
		}
		sink = r
	}
}
