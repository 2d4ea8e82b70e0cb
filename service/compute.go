package service

import (
	"wheelbench/service/fit"
	"wheelbench/service/geometry"
)

// MaxBatchWheels is the most wheels one batch may hold.
const MaxBatchWheels = 10000

// SpokeLengths computes one wheel: both sides' lengths, angles, tensions,
// and the rule set's findings and cautions on them. Bad or impossible input
// comes back as *field.Error values (400 or 422), never as NaN or Inf. A
// batch is this, wheel by wheel: the HTTP layer's codec shares the wheels
// out over the CPUs (api/spokejson).
func (s *Service) SpokeLengths(w geometry.Wheel) (fit.WheelResult, error) {
	return fit.ComputeWheel(w, wheelOptions)
}

var wheelOptions = fit.DefaultOptions()
