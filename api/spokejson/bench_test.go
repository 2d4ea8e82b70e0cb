package spokejson

import (
	"strings"
	"testing"

	"wheelbench/service/geometry"
)

// benchWheel is the contract example of the spoke-length endpoint (as in
// compute_test.go's contractBody), its whitespace collapsed as in
// BenchmarkBatch10000.
const benchWheel = `{ "spoke_count": 32, "hub": { "type": "j_bend", "left": {"pcd_mm": 45, "center_to_flange_mm": 36, "hole_diameter_mm": 2.6, "thickness_mm": 3.0}, "right": {"pcd_mm": 45, "center_to_flange_mm": 18.5, "hole_diameter_mm": 2.6} }, "rim": { "erd_mm": 599, "spoke_hole_offset_mm": 0 }, "crosses": { "left": 3, "right": 3 }, "spoke": { "diameter_mm": 2.0, "material": "stainless_steel" }, "target_tension_n": 1100, "stock": { "increment_mm": 2 } }`

// BenchmarkParseWheel: the fast path's decoding of one wheel.
func BenchmarkParseWheel(b *testing.B) {
	body := []byte(benchWheel)
	var w geometry.Wheel
	var a arena
	b.ReportAllocs()
	for b.Loop() {
		if !parseWheel(body, &w, &a) {
			b.Fatal("the fast path declined the contract wheel")
		}
		a.reuse()
	}
}

// BenchmarkAppendResult: encoding one wheel's result.
func BenchmarkAppendResult(b *testing.B) {
	var w geometry.Wheel
	if !parseWheel([]byte(benchWheel), &w, nil) {
		b.Fatal("the fast path declined the contract wheel")
	}
	r, err := compute(w)
	if err != nil {
		b.Fatal(err)
	}
	buf := make([]byte, 0, 2048)
	b.ReportAllocs()
	for b.Loop() {
		if buf, err = AppendResult(buf[:0], &r); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkScanWheels: splitting, decoding, computing and encoding 10,000
// wheels in one goroutine (what each CPU does with its share of a batch),
// without HTTP.
func BenchmarkScanWheels(b *testing.B) {
	body := []byte(`{"wheels": [` + strings.TrimSuffix(strings.Repeat(benchWheel+",", 10000), ",") + `]}`)
	bt := testBatch()
	from := len(`{"wheels": [`)
	b.SetBytes(int64(len(body)))
	b.ReportAllocs()
	for b.Loop() {
		pt := newBatchPart(&bt, 0, true, answerSize(len(body)))
		if end := scanWheels(body, from, nil, pt); end != len(body) || pt.good != 10000 {
			b.Fatalf("scanWheels ended at %d of %d with %d good", end, len(body), pt.good)
		}
		pt.release()
	}
}
