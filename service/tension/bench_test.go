package tension

import (
	"math"
	"testing"
)

// BenchmarkConvertModel: one reading on a section between the columns,
// through the tool model, with a cached fit (target ≤ 5 µs).
func BenchmarkConvertModel(b *testing.B) {
	benchConvert(b, steelRound(1.9))
}

// BenchmarkConvertModelFar: a 2.6 mm section outside the table, whose
// result carries stiffness warnings and cautions (formatted text).
func BenchmarkConvertModelFar(b *testing.B) {
	benchConvert(b, steelRound(2.6))
}

func benchConvert(b *testing.B, spec SpokeSpec) {
	m := synthModel(b)
	r := math.Round(synthReading(b, spec, 1000))
	b.ReportAllocs()
	for b.Loop() {
		if _, err := m.Convert(spec, r); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkConvertColumn: one reading in a calibrated column.
func BenchmarkConvertColumn(b *testing.B) {
	m := synthModel(b)
	spec := steelRound(2.0)
	r := math.Round(synthReading(b, spec, 1000)) + 0.5
	b.ReportAllocs()
	for b.Loop() {
		if _, err := m.Convert(spec, r); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkFit: fitting a 4 × 13-point calibration (target ≤ 50 ms).
func BenchmarkFit(b *testing.B) {
	cal := synthCalibration(b)
	b.ReportAllocs()
	for b.Loop() {
		m, err := Fit(cal, Tool{})
		if err != nil || m.Physical == nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkConvertRequest36: a 36-spoke wheel's readings in one request
// (the section prepared once); reports the cost per reading.
func BenchmarkConvertRequest36(b *testing.B) {
	m := synthModel(b)
	spec := steelRound(1.9)
	var rs []float64
	for i := 0; i < 36; i++ {
		rs = append(rs, math.Round(synthReading(b, spec, 900+10*float64(i))))
	}
	req := ConversionRequest{Spoke: whole(spec), Readings: rs}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := m.ConvertRequest(req); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/36, "ns/reading")
}
