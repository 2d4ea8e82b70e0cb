package geometry

import "wheelbench/service/spoke"

// wire is a spoke's axial stiffness data at one tension.
type wire struct {
	// kBody is the strain T/(E·A) of the body.
	kBody float64
	// butt is Σ Lᵢ·(kᵢ − kBody) over the listed sections: the stretch they
	// add beyond a spoke that is body all along.
	butt float64
	// buttLen is Σ Lᵢ, the unloaded length the sections take.
	buttLen float64
}

// newWire prepares Hooke's law, ΔL = T·Σ Lᵢ/(E·Aᵢ), for tension t (N) and
// modulus e (N/mm²) over a spoke whose body has section body and whose
// listed sections (butted stretches, or a bladed spoke's round ends) have
// the given sections and unloaded lengths.
func newWire(t, e float64, body spoke.Section, sections []spoke.Section, lengths []float64) wire {
	w := wire{kBody: t / (e * body.AreaMM2())}
	for i, s := range sections {
		w.butt += lengths[i] * (t/(e*s.AreaMM2()) - w.kBody)
		w.buttLen += lengths[i]
	}
	return w
}

// stretchMM is the elastic elongation of a spoke whose unloaded length is l0:
// the sections stretch by Lᵢ·kᵢ and the remainder, l0 − Σ Lᵢ, by kBody.
func (w wire) stretchMM(l0 float64) float64 { return l0*w.kBody + w.butt }

// unloadedMM inverts stretchMM: the unloaded length that reaches loaded
// length l under tension, l0 = (l − butt)/(1 + kBody).
func (w wire) unloadedMM(l float64) float64 { return (l - w.butt) / (1 + w.kBody) }

// round is a round section of diameter d.
func round(d float64) spoke.Section { return spoke.Section{Profile: spoke.Round, DiameterMM: d} }
