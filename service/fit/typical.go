package fit

import (
	"math"

	"wheelbench/service/spoke"
)

// typicalSpoke holds the typical dimensions of a J-bend spoke of one BS 3737
// gauge. Every value here is from memory (shop stock as commonly sold), not
// from a standard; a finding that rests on one lists it in Assumed.
type typicalSpoke struct {
	HeadDiameterMM float64
	ElbowLengthMM  float64
	// ThreadTPI is 0 when no typical pitch is known for the gauge.
	ThreadTPI      float64
	ThreadLengthMM float64
}

// typicalByGauge: from memory. The thread diameter is taken equal to the wire
// diameter (rolled threads, from memory); 56 TPI is the usual bicycle spoke
// pitch for 13 to 15 gauge (from memory); thicker gauges have no typical pitch.
var typicalByGauge = map[int]typicalSpoke{
	15: {HeadDiameterMM: 3.7, ElbowLengthMM: 2.5, ThreadTPI: 56, ThreadLengthMM: 9},
	14: {HeadDiameterMM: 4.0, ElbowLengthMM: 2.6, ThreadTPI: 56, ThreadLengthMM: 9.5},
	13: {HeadDiameterMM: 4.5, ElbowLengthMM: 3.0, ThreadTPI: 56, ThreadLengthMM: 10},
	12: {HeadDiameterMM: 5.0, ElbowLengthMM: 3.5, ThreadLengthMM: 11},
	11: {HeadDiameterMM: 5.5, ElbowLengthMM: 4.0, ThreadLengthMM: 12},
	10: {HeadDiameterMM: 6.0, ElbowLengthMM: 4.5, ThreadLengthMM: 13},
}

// nearestGaugeToleranceMM: a spoke given by diameter borrows the typical
// values of a gauge within this distance (2.0 mm spokes are sold as 14 gauge,
// 2.032 mm). Common practice.
const nearestGaugeToleranceMM = 0.05

// Typical nipple internal thread, from memory: the thread starts about 2 mm
// below the head end (driver slot and counterbore) and runs for about half the
// nipple's length.
const (
	typicalNippleThreadStartMM     = 2.0
	typicalNippleThreadLengthRatio = 0.5
)

// parts is the build with every dimension the rules use filled in, and the
// set of request fields (dotted paths, e.g. "spoke.head_diameter_mm") whose
// values were filled with typical values rather than given.
type parts struct {
	spokeDiameterMM  float64
	gauge            int // 0 when the spoke matches no gauge
	headDiameterMM   float64
	elbowLengthMM    float64
	threadDiameterMM float64
	threadTPI        float64
	threadLengthMM   float64
	material         spoke.Material

	nippleThreadLengthMM float64
	nippleThreadStartMM  float64

	assumed map[string]bool
}

// gaugeFor returns the BS 3737 gauge nearest d within the tolerance, or 0.
func gaugeFor(d float64) int {
	best, bestDiff := 0, math.Inf(1)
	for _, g := range spoke.Gauges() {
		gd, _ := spoke.GaugeDiameterMM(g)
		if diff := math.Abs(gd - d); diff <= nearestGaugeToleranceMM && diff < bestDiff {
			best, bestDiff = g, diff
		}
	}
	return best
}

// resolveParts fills the optional spoke and nipple dimensions. It assumes
// Validate passed; it reports (as *FieldError, 422) a dimension that is needed
// and has no typical value for the spoke's size.
func resolveParts(in Input) (parts, error) {
	p := parts{assumed: map[string]bool{}}
	s := in.Spoke
	switch {
	case s.DiameterMM != nil:
		p.spokeDiameterMM = *s.DiameterMM
		p.gauge = gaugeFor(p.spokeDiameterMM)
	case s.Gauge != nil:
		p.gauge = *s.Gauge
		p.spokeDiameterMM, _ = spoke.GaugeDiameterMM(p.gauge)
	}
	typ, haveTyp := typicalByGauge[p.gauge]
	var errs []error
	fill := func(given *float64, typical float64, path, pointer string, needed bool) float64 {
		if given != nil {
			return *given
		}
		if haveTyp && typical > 0 {
			p.assumed[path] = true
			return typical
		}
		if needed {
			errs = append(errs, unprocessable(pointer,
				"needed for this check, and there is no typical value for a %.4g mm spoke", p.spokeDiameterMM))
		}
		return 0
	}
	p.headDiameterMM = fill(s.HeadDiameterMM, typ.HeadDiameterMM, "spoke.head_diameter_mm", "/spoke/head_diameter_mm", true)
	p.elbowLengthMM = fill(s.ElbowLengthMM, typ.ElbowLengthMM, "spoke.elbow_length_mm", "/spoke/elbow_length_mm", hubType(in.Hub) == JBend)
	p.threadLengthMM = fill(s.ThreadLengthMM, typ.ThreadLengthMM, "spoke.thread_length_mm", "/spoke/thread_length_mm", true)
	if s.Thread != nil {
		p.threadDiameterMM, p.threadTPI = s.Thread.DiameterMM, s.Thread.TPI
	} else {
		// From memory: rolled spoke threads have the wire's diameter.
		p.threadDiameterMM = p.spokeDiameterMM
		p.threadTPI = fill(nil, typ.ThreadTPI, "spoke.thread", "/spoke/thread", true)
		p.assumed["spoke.thread"] = true
	}
	name := "stainless_steel"
	if s.Material != nil {
		name = *s.Material
	} else {
		p.assumed["spoke.material"] = true
	}
	p.material, _ = spoke.LookupMaterial(name)

	n := in.Nipple
	if n.ThreadStartMM != nil {
		p.nippleThreadStartMM = *n.ThreadStartMM
	} else {
		p.nippleThreadStartMM = typicalNippleThreadStartMM
		p.assumed["nipple.thread_start_mm"] = true
	}
	if n.ThreadLengthMM != nil {
		p.nippleThreadLengthMM = *n.ThreadLengthMM
	} else {
		p.nippleThreadLengthMM = typicalNippleThreadLengthRatio * n.LengthMM
		p.assumed["nipple.thread_length_mm"] = true
	}
	if p.nippleThreadStartMM+p.nippleThreadLengthMM > n.LengthMM {
		errs = append(errs, unprocessable("/nipple/thread_length_mm",
			"thread start plus thread length (%.4g mm) exceeds the nipple's length (%.4g mm)",
			p.nippleThreadStartMM+p.nippleThreadLengthMM, n.LengthMM))
	}
	if len(errs) > 0 {
		return p, joinErrs(errs)
	}
	return p, nil
}

// assumedOf returns, in the order given, those of paths that were filled
// with typical values.
func (p parts) assumedOf(paths ...string) []string {
	var out []string
	for _, k := range paths {
		if p.assumed[k] {
			out = append(out, k)
		}
	}
	return out
}

func hubType(h Hub) HubType {
	if h.Type == "" {
		return JBend
	}
	return h.Type
}

func hubKind(h Hub) HubKind {
	if h.Kind == "" {
		return Bicycle
	}
	return h.Kind
}
