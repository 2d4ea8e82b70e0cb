package tension

import (
	"errors"

	"wheelbench/service/field"
	"wheelbench/service/spoke"
)

// maxReadings bounds one conversion request.
const maxReadings = 1000

// ConversionRequest is the body of a conversion: a calibration (by id,
// which the caller resolves to a stored Model, or inline), the spoke (the
// same description as everywhere; its measured section is converted), and
// either readings or exactly one target tension in N, kgf or lbf.
type ConversionRequest struct {
	// CalibrationID is resolved by the caller; this package ignores it.
	CalibrationID    string       `json:"calibration_id,omitempty"`
	Calibration      *Calibration `json:"calibration,omitempty"`
	Spoke            spoke.Spec   `json:"spoke"`
	Readings         []float64    `json:"readings,omitempty"`
	TargetTensionN   *float64     `json:"target_tension_n,omitempty"`
	TargetTensionKgf *float64     `json:"target_tension_kgf,omitempty"`
	TargetTensionLbf *float64     `json:"target_tension_lbf,omitempty"`
}

// ConversionResponse carries results for readings, or the target.
type ConversionResponse struct {
	Results []Result `json:"results,omitempty"`
	Target  *Target  `json:"target,omitempty"`
}

// FitInline fits the request's inline calibration (tool facts as given),
// with error pointers under "/calibration".
func (req ConversionRequest) FitInline(tool Tool) (*Model, error) {
	if req.Calibration == nil {
		return nil, field.Invalid("/calibration", "give calibration_id or an inline calibration")
	}
	m, err := Fit(*req.Calibration, tool)
	return m, field.Under("/calibration", err)
}

// ConvertRequest answers a conversion request against a fitted model. Pointers
// are into the request body ("/readings/3", "/spoke/diameter_mm",
// "/target_tension_kgf").
func (m *Model) ConvertRequest(req ConversionRequest) (ConversionResponse, error) {
	type tgt struct {
		at string
		n  float64
	}
	var targets []tgt
	if req.TargetTensionN != nil {
		targets = append(targets, tgt{"/target_tension_n", *req.TargetTensionN})
	}
	if req.TargetTensionKgf != nil {
		targets = append(targets, tgt{"/target_tension_kgf", NFromKgf(*req.TargetTensionKgf)})
	}
	if req.TargetTensionLbf != nil {
		targets = append(targets, tgt{"/target_tension_lbf", NFromLbf(*req.TargetTensionLbf)})
	}
	switch {
	case len(targets) > 1:
		return ConversionResponse{}, field.Invalid(targets[1].at, "give one target tension only (N, kgf or lbf)")
	case len(targets) == 1 && len(req.Readings) > 0:
		return ConversionResponse{}, field.Invalid("/readings", "give readings or a target tension, not both")
	case len(targets) == 0 && len(req.Readings) == 0:
		return ConversionResponse{}, field.Invalid("/readings", "give readings or a target tension")
	case len(req.Readings) > maxReadings:
		return ConversionResponse{}, field.Invalid("/readings", "at most %d readings per request", maxReadings)
	}
	p, err := m.prepareSpoke(req.Spoke, "/spoke")
	if err != nil {
		return ConversionResponse{}, err
	}
	if len(targets) == 1 {
		tg, err := p.target(targets[0].n, targets[0].at)
		if err != nil {
			return ConversionResponse{}, err
		}
		return ConversionResponse{Target: &tg}, nil
	}
	out := ConversionResponse{Results: make([]Result, 0, len(req.Readings))}
	var errs []error
	for i, r := range req.Readings {
		res, err := p.convert(r, func() string { return ptr("readings", i) })
		if err != nil {
			errs = append(errs, err)
			continue
		}
		out.Results = append(out.Results, res)
	}
	if err := errors.Join(errs...); err != nil {
		return ConversionResponse{}, err
	}
	return out, nil
}
