package geometry

import (
	"math"

	"wheelbench/service/spoke"
)

// wire is a spoke's axial stiffness data at one tension.
type wire struct {
	// kNom is the strain T/(E·A) of the nominal diameter.
	kNom float64
	// butt is Σ Lᵢ·(kᵢ − kNom) over the butted sections: the stretch they
	// add beyond a plain spoke of the nominal diameter.
	butt float64
	// buttLen is Σ Lᵢ, the unloaded length the sections take.
	buttLen float64
	// minArea is the smallest cross-section, mm², for the stress check.
	minArea float64
}

// newWire prepares Hooke's law, ΔL = T·Σ Lᵢ/(E·Aᵢ), for tension t (N) and
// modulus e (N/mm²) over a spoke of nominal diameter d with butted sections.
func newWire(t, e, d float64, sections []Section) wire {
	aNom := spoke.Section{DiameterMM: d}.AreaMM2()
	w := wire{kNom: t / (e * aNom), minArea: aNom}
	for _, s := range sections {
		a := spoke.Section{DiameterMM: s.DiameterMM}.AreaMM2()
		w.butt += s.LengthMM * (t/(e*a) - w.kNom)
		w.buttLen += s.LengthMM
		w.minArea = math.Min(w.minArea, a)
	}
	return w
}

// stretchMM is the elastic elongation of a spoke whose unloaded length is l0:
// the sections stretch by Lᵢ·kᵢ and the remainder, l0 − Σ Lᵢ, by kNom.
func (w wire) stretchMM(l0 float64) float64 { return l0*w.kNom + w.butt }

// unloadedMM inverts stretchMM: the unloaded length that reaches loaded
// length l under tension, l0 = (l − butt)/(1 + kNom).
func (w wire) unloadedMM(l float64) float64 { return (l - w.butt) / (1 + w.kNom) }
