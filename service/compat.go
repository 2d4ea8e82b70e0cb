package service

import (
	"wheelbench/service/fit"
	"wheelbench/service/geometry"
)

// CompatibilityInput is the body of a compatibility check: the parts as
// measured (the hub, rim, crosses and spoke described as for spoke lengths)
// and, optionally, the spoke lengths the shop can get.
type CompatibilityInput = fit.Input

// CompatibilityReport is the rule set's verdict, findings, changes and
// cautions with the spoke-length calculation it rests on.
type CompatibilityReport = fit.Report

// CheckCompatibility checks whether the parts make a wheel: the geometry,
// every rule on it (the same as spoke lengths apply) and every rule on the
// parts (see fit.Check).
func (s *Service) CheckCompatibility(in CompatibilityInput) (CompatibilityReport, error) {
	return fit.Check(in, fit.DefaultOptions())
}

// SpokeLengthResult answers POST /v1/spoke-lengths: the geometry and the
// rule set's findings and cautions on it.
type SpokeLengthResult struct {
	geometry.Result `json:",inline"`
	// Findings are never nil (an empty list encodes as []).
	Findings []fit.Finding `json:"findings"`
	// Cautions are plain sentences about results that can hurt a rider when
	// wrong; never nil.
	Cautions []string `json:"cautions"`
}

func ptr(x float64) *float64 { return &x }
