package tension

import (
	"errors"

	"wheelbench/service/field"
	"wheelbench/service/spoke"
)

// maxReadings bounds one conversion request.
const maxReadings = 1000

// ConversionRequest is what one conversion against a fitted model asks: the
// spoke (the same description as everywhere; its measured section is
// converted), and either readings or exactly one target tension in N, kgf
// or lbf. The calibration it converts with is the caller's to find (the
// request body names it beside these members).
type ConversionRequest struct {
	Spoke            spoke.Spec `json:"spoke"`
	Readings         []float64  `json:"readings"`
	TargetTensionN   *float64   `json:"target_tension_n"`
	TargetTensionKgf *float64   `json:"target_tension_kgf"`
	TargetTensionLbf *float64   `json:"target_tension_lbf"`
}

// ConversionResponse carries results for readings, or the target.
type ConversionResponse struct {
	Results []Result `json:"results,omitempty"`
	Target  *Target  `json:"target,omitempty"`
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
