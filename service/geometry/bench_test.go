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

// BenchmarkComputeWithPlan: the contract wheel with its full lacing plan
// (one entry per spoke).
func BenchmarkComputeWithPlan(b *testing.B) {
	w := contractWheel()
	w.IncludeLacing = true
	b.ReportAllocs()
	for b.Loop() {
		r, err := Compute(w)
		if err != nil {
			b.Fatal(err)
		}
		sink = r
	}
}

// BenchmarkComputeUneven: a 2:1 wheel, whose plan (and clocking search) is
// always computed.
func BenchmarkComputeUneven(b *testing.B) {
	var w Wheel
	for _, c := range planCases() {
		if c.name == "24h 2:1 rear" {
			w = c.w
		}
	}
	b.ReportAllocs()
	for b.Loop() {
		r, err := Compute(w)
		if err != nil {
			b.Fatal(err)
		}
		sink = r
	}
}
