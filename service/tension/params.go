package tension

import (
	"fmt"

	"wheelbench/service/field"
)

// ToolParams are the five physical parameters of a three-point tensiometer
// in the package's model: anvil span, plunger preload and spring rate, dial
// zero, and the stretch factor for the tension the tool itself adds. Fit
// estimates them from a calibration; given them, Reading predicts what the
// tool shows. That is how a synthetic or an invented demo table is made
// from known values, so that a fit can be checked against them.
type ToolParams struct {
	SpanMM       float64 `json:"span_mm"`
	PreloadN     float64 `json:"preload_n"`
	SpringNPerMM float64 `json:"spring_n_per_mm"`
	ZeroMM       float64 `json:"zero_mm"`
	StretchPerMM float64 `json:"stretch_per_mm"`
}

// Reading is the exact (unrounded) dial reading the tool with these
// parameters shows on the section at tensionN, for a dial of unitMM
// millimetres per unit (0 means 0.01). Errors are *field.Error: the section
// is invalid ("/spoke…"), or the configuration is not physical at that
// tension (no positive plunger force or deflection).
func (tp ToolParams) Reading(spec SpokeSpec, unitMM, tensionN float64) (float64, error) {
	if unitMM == 0 {
		unitMM = 0.01
	}
	sec, err := spec.resolve("/spoke")
	if err != nil {
		return 0, err
	}
	if !finite(tensionN) || tensionN < 0 || tensionN > maxTensionN {
		return 0, field.Invalid("/tension_n", "tension_n must be from 0 to %d N", maxTensionN)
	}
	th := []float64{pSpan: tp.SpanMM, pPreload: tp.PreloadN, pSpring: tp.SpringNPerMM, pZero: tp.ZeroMM, pStretch: tp.StretchPerMM}
	r, _, ok := forward(th, evalSection{ei0: sec.EI, ea: sec.EA, t: sec.T, kEI: 1, iK: -1, iC: -1}, unitMM, tensionN)
	if !ok {
		return 0, field.Unprocessable("/tension_n", "%s", fmt.Sprintf("a tool with these parameters has no physical configuration on a %s spoke at %g N", sec.describe(), tensionN))
	}
	return r, nil
}
