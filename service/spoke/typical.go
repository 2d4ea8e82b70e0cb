package spoke

import "math"

// Typical is what a J-bend spoke of one BS 3737 gauge usually measures.
// Every value is from memory (shop stock as commonly sold), not from a
// standard: a result that rests on one says so.
type Typical struct {
	HeadDiameterMM float64
	ElbowLengthMM  float64
	// ThreadTPI is 0 when no typical pitch is known for the gauge.
	ThreadTPI      float64
	ThreadLengthMM float64
}

// typicalByGauge: from memory. 56 TPI is the usual bicycle spoke pitch for
// 13 to 15 gauge (from memory); thicker gauges have no typical pitch.
var typicalByGauge = [...]Typical{
	15: {HeadDiameterMM: 3.7, ElbowLengthMM: 2.5, ThreadTPI: 56, ThreadLengthMM: 9},
	14: {HeadDiameterMM: 4.0, ElbowLengthMM: 2.6, ThreadTPI: 56, ThreadLengthMM: 9.5},
	13: {HeadDiameterMM: 4.5, ElbowLengthMM: 3.0, ThreadTPI: 56, ThreadLengthMM: 10},
	12: {HeadDiameterMM: 5.0, ElbowLengthMM: 3.5, ThreadLengthMM: 11},
	11: {HeadDiameterMM: 5.5, ElbowLengthMM: 4.0, ThreadLengthMM: 12},
	10: {HeadDiameterMM: 6.0, ElbowLengthMM: 4.5, ThreadLengthMM: 13},
}

// TypicalFor returns the typical dimensions of a gauge.
func TypicalFor(gauge int) (Typical, bool) {
	if gauge < 0 || gauge >= len(typicalByGauge) || typicalByGauge[gauge].HeadDiameterMM == 0 {
		return Typical{}, false
	}
	return typicalByGauge[gauge], true
}

// isoStressAreaFactor: the tensile stress area of a 60° thread of major
// diameter d and pitch P is π/4·(d − 0.9382·P)² (ISO 898-1 handbook
// formula; 0.9382 = 13√3/24, the mean of the pitch diameter d − 0.6495·P
// and the minor diameter d − 1.2269·P).
const isoStressAreaFactor = 0.9382

// pitchDiameterFactor: the pitch diameter of a 60° thread is d − 0.6495·P
// (ISO 724 basic profile, 3√3/8).
const pitchDiameterFactor = 0.649519

// ThreadStressArea is the tensile stress area, mm², of a 60° thread of
// pitch tpi (threads per inch). With a measured major diameter it is the
// ISO 898-1 formula; without one the thread is taken as rolled on the
// wire of diameter wire, a rolled thread's pitch diameter being close to
// the blank's diameter (from memory), so the major diameter is
// wire + 0.6495·P. ok is false when the pitch is deeper than the thread.
func ThreadStressArea(wire, majorMeasured, tpi float64) (area float64, ok bool) {
	p := MMPerInch / tpi
	d := majorMeasured
	if d <= 0 {
		d = wire + pitchDiameterFactor*p
	}
	ds := d - isoStressAreaFactor*p
	if ds <= 0 || !finite(ds) {
		return 0, false
	}
	return math.Pi * ds * ds / 4, true
}
