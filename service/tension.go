package service

import (
	"context"
	"errors"
	"fmt"

	"github.com/google/uuid"

	"wheelbench/service/field"
	"wheelbench/service/tension"
)

// CalibrationRef names the calibration a computation uses: a stored
// version by id (its stored model is used as it is) or an inline one,
// fitted for the request. Exactly one must be set.
type CalibrationRef struct {
	ID     *uuid.UUID
	Inline *InlineCalibration
}

// InlineCalibration is a calibration sent with a computation.
type InlineCalibration struct {
	Source  string           `json:"source"`
	Columns []tension.Column `json:"columns"`
	Tool    tension.Tool     `json:"tool"`
}

// modelFor resolves ref to a fitted model; cal is the stored version used,
// nil for an inline calibration.
func (s *Service) modelFor(ctx context.Context, p Principal, ref CalibrationRef) (m *tension.Model, cal *Calibration, err error) {
	switch {
	case ref.ID != nil && ref.Inline != nil:
		return nil, nil, field.Invalid("/calibration", "give calibration_id or an inline calibration, not both")
	case ref.ID != nil:
		c, err := s.store.GetCalibration(ctx, p.OrgID, *ref.ID)
		if errors.Is(err, ErrNotFound) {
			return nil, nil, fmt.Errorf("%w: no calibration with id %s is visible to this API key", ErrNotFound, *ref.ID)
		}
		if err != nil {
			return nil, nil, err
		}
		if c.Model == nil || c.Model.Version != tension.ModelVersion {
			return nil, nil, fmt.Errorf("calibration %s: stored model layout is not version %d", c.ID, tension.ModelVersion)
		}
		return c.Model, &c, nil
	case ref.Inline != nil:
		m, err := tension.Fit(tension.Calibration{Source: ref.Inline.Source, Columns: ref.Inline.Columns}, ref.Inline.Tool)
		if err != nil {
			return nil, nil, field.Map(err, inlinePointer)
		}
		return m, nil, nil
	}
	return nil, nil, field.Invalid("/calibration_id", "give calibration_id or an inline calibration")
}

// inlinePointer places a pointer of Fit inside the request body: the tool
// facts under /calibration/tool, everything else under /calibration.
func inlinePointer(p string) string {
	if p == "/unit_mm" || p == "/measured_span_mm" {
		return "/calibration/tool" + p
	}
	return "/calibration" + p
}

// ConversionOutput is a conversion's answer and the stored calibration
// version it used (nil for an inline calibration).
type ConversionOutput struct {
	Calibration *Calibration
	tension.ConversionResponse
}

// ConvertTension converts readings to tensions, or a target tension to the
// reading to aim for. It stores nothing.
func (s *Service) ConvertTension(ctx context.Context, p Principal, ref CalibrationRef, req tension.ConversionRequest) (ConversionOutput, error) {
	m, cal, err := s.modelFor(ctx, p, ref)
	if err != nil {
		return ConversionOutput{}, err
	}
	out, err := m.ConvertRequest(req)
	if err != nil {
		return ConversionOutput{}, err
	}
	return ConversionOutput{Calibration: cal, ConversionResponse: out}, nil
}

// AuditOutput is an audit's answer and the stored calibration version it
// used (nil for an inline calibration).
type AuditOutput struct {
	Calibration *Calibration
	tension.AuditResult
}

// AuditTension judges one wheel's readings. It stores nothing.
func (s *Service) AuditTension(ctx context.Context, p Principal, ref CalibrationRef, req tension.AuditRequest) (AuditOutput, error) {
	m, cal, err := s.modelFor(ctx, p, ref)
	if err != nil {
		return AuditOutput{}, err
	}
	out, err := m.Audit(req)
	if err != nil {
		return AuditOutput{}, err
	}
	return AuditOutput{Calibration: cal, AuditResult: out}, nil
}

// CalibrationChart is what the chart of a calibration version shows: its
// curves (and a requested section's) and the tool and version they belong
// to. Drawing it is a view's business.
type CalibrationChart struct {
	Chart       tension.Chart
	Tool        Tool
	Calibration Calibration
}

// CalibrationChart computes the curves of a stored calibration version,
// with the requested section's curve and 95 % band when spec is not nil
// (field errors point under "/spoke").
func (s *Service) CalibrationChart(ctx context.Context, p Principal, id uuid.UUID, spec *tension.SpokeSpec) (CalibrationChart, error) {
	m, cal, err := s.modelFor(ctx, p, CalibrationRef{ID: &id})
	if err != nil {
		return CalibrationChart{}, err
	}
	tool, err := s.store.GetTool(ctx, p.OrgID, cal.ToolID)
	if err != nil {
		return CalibrationChart{}, fmt.Errorf("calibration %s: tool %s: %w", cal.ID, cal.ToolID, err)
	}
	c, err := m.Chart(spec)
	if err != nil {
		return CalibrationChart{}, err
	}
	return CalibrationChart{Chart: c, Tool: tool, Calibration: *cal}, nil
}
