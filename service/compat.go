package service

import "wheelbench/service/fit"

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
