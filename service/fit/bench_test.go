package fit

import (
	"testing"

	"wheelbench/service/geometry"
)

var sinkFindings []Finding

// BenchmarkGeometryAndRules: what the spoke-length endpoint does per wheel —
// the geometry and the rule set on it — for the contract rear wheel.
func BenchmarkGeometryAndRules(b *testing.B) {
	w := rearWheel()
	opt := DefaultOptions()
	b.ReportAllocs()
	for b.Loop() {
		r, err := geometry.Compute(w)
		if err != nil {
			b.Fatal(err)
		}
		sinkFindings, _ = AssessWheel(w, &r, opt)
	}
}
