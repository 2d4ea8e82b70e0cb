package service

import (
	"context"
	"errors"
	"fmt"
	"strings"

	"github.com/google/uuid"

	"wheelbench/service/field"
	"wheelbench/service/tension"
)

// The tension types that cross the service boundary. The HTTP layer reads
// and writes them through these names and does not import service/tension.
type (
	SpokeSpec          = tension.SpokeSpec
	CalibrationColumn  = tension.Column
	CalibrationPoint   = tension.Point
	ToolFacts          = tension.Tool
	TensionModel       = tension.Model
	TensionWarning     = tension.Warning
	ConversionRequest  = tension.ConversionRequest
	ConversionResponse = tension.ConversionResponse
	AuditRequest       = tension.AuditRequest
	AuditReading       = tension.AuditReading
	AuditResult        = tension.AuditResult
	ToolParams         = tension.ToolParams
	SpokeVerdict       = tension.SpokeVerdict
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
	Source  string
	Columns []CalibrationColumn
	Tool    ToolFacts
}

// modelFor resolves ref to a fitted model; cal is the stored version used,
// nil for an inline calibration.
func (s *Service) modelFor(ctx context.Context, p Principal, ref CalibrationRef) (m *TensionModel, cal *Calibration, err error) {
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
	ConversionResponse
}

// ConvertTension converts readings to tensions, or a target tension to the
// reading to aim for. It stores nothing.
func (s *Service) ConvertTension(ctx context.Context, p Principal, ref CalibrationRef, req ConversionRequest) (ConversionOutput, error) {
	m, cal, err := s.modelFor(ctx, p, ref)
	if err != nil {
		return ConversionOutput{}, err
	}
	req.Calibration, req.CalibrationID = nil, ""
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
	AuditResult
}

// AuditTension judges one wheel's readings. It stores nothing.
func (s *Service) AuditTension(ctx context.Context, p Principal, ref CalibrationRef, req AuditRequest) (AuditOutput, error) {
	m, cal, err := s.modelFor(ctx, p, ref)
	if err != nil {
		return AuditOutput{}, err
	}
	req.Calibration, req.CalibrationID = nil, ""
	out, err := m.Audit(req)
	if err != nil {
		return AuditOutput{}, err
	}
	return AuditOutput{Calibration: cal, AuditResult: out}, nil
}

// CalibrationChart draws a stored calibration version as SVG, titled with
// its tool's label and serial and the version, with the requested
// section's curve and 95 % band when spec is not nil. Field
// errors name the query parameters.
func (s *Service) CalibrationChart(ctx context.Context, p Principal, id uuid.UUID, spec *SpokeSpec) ([]byte, error) {
	m, cal, err := s.modelFor(ctx, p, CalibrationRef{ID: &id})
	if err != nil {
		return nil, err
	}
	tool, err := s.store.GetTool(ctx, p.OrgID, cal.ToolID)
	if err != nil {
		return nil, fmt.Errorf("calibration %s: tool %s: %w", cal.ID, cal.ToolID, err)
	}
	svg, err := m.Chart(spec, tension.ChartHeading{ToolLabel: tool.Label, ToolSerial: tool.Serial,
		CalibrationVersion: cal.Version, Source: cal.Source, Published: cal.CreatedAt})
	return svg, field.Map(err, queryPointer)
}

// queryPointer turns the chart's "/spoke/NAME" pointers into "query:NAME".
func queryPointer(p string) string {
	name := strings.TrimPrefix(strings.TrimPrefix(p, "/spoke"), "/")
	if name == "" {
		name = "diameter_mm"
	}
	return "query:" + name
}
