package service

import (
	"context"
	"errors"
	"fmt"
	"math"
	"strings"
	"time"
	"unicode/utf8"

	"github.com/google/uuid"

	"wheelbench/service/field"
	"wheelbench/service/tension"
)

// DefaultUnitMM is a tensiometer dial's usual millimetres per unit.
const DefaultUnitMM = 0.01

// Tool is one physical three-point tensiometer at one location.
type Tool struct {
	ID             uuid.UUID `json:"id"`
	OrgID          uuid.UUID `json:"-"`
	LocationID     uuid.UUID `json:"location_id"`
	Label          string    `json:"label"`
	Serial         string    `json:"serial"`
	UnitMM         float64   `json:"unit_mm"`
	MeasuredSpanMM *float64  `json:"measured_span_mm,omitempty"`
	Notes          string    `json:"notes"`
	Version        int64     `json:"-"`
	CreatedAt      time.Time `json:"created_at"`
	UpdatedAt      time.Time `json:"updated_at"`
}

// ETag is the tool's entity tag for optimistic concurrency.
func (t Tool) ETag() string { return ETag(t.ID, t.Version) }

// Facts are what the tool model needs to know about the tool.
func (t Tool) Facts() tension.Tool {
	return tension.Tool{UnitMM: t.UnitMM, MeasuredSpanMM: t.MeasuredSpanMM}
}

// ToolInput is what creating a tool takes. UnitMM nil means DefaultUnitMM.
type ToolInput struct {
	ID             uuid.UUID `json:"-"` // optional: zero means a new id
	LocationID     uuid.UUID `json:"location_id"`
	Label          string    `json:"label"`
	Serial         string    `json:"serial"`
	UnitMM         *float64  `json:"unit_mm"`
	MeasuredSpanMM *float64  `json:"measured_span_mm"`
	Notes          string    `json:"notes"`
}

// ToolPatch holds the fields a PATCH may change; nil leaves a field.
// ClearMeasuredSpan removes the measured span (the client sent null).
type ToolPatch struct {
	LocationID        *uuid.UUID
	Label             *string
	Serial            *string
	UnitMM            *float64
	MeasuredSpanMM    *float64
	ClearMeasuredSpan bool
	Notes             *string
}

func validateToolFields(label, serial, notes *string, unit, span *float64) error {
	var errs []error
	if label != nil {
		if n := strings.TrimSpace(*label); n == "" || utf8.RuneCountInString(n) > 200 {
			errs = append(errs, field.Invalid("/label", "label must be 1 to 200 characters"))
		}
	}
	if serial != nil && utf8.RuneCountInString(*serial) > 100 {
		errs = append(errs, field.Invalid("/serial", "serial must be at most 100 characters"))
	}
	if notes != nil && utf8.RuneCountInString(*notes) > 2000 {
		errs = append(errs, field.Invalid("/notes", "notes must be at most 2000 characters"))
	}
	// The same bounds as the tool model's own (tension.Fit), so that a
	// stored tool's facts always fit.
	if unit != nil && (math.IsNaN(*unit) || *unit <= 0 || *unit > 1) {
		errs = append(errs, field.Invalid("/unit_mm", "unit_mm must be the dial's millimetres per unit, above 0 and at most 1 (usually 0.01)"))
	}
	if span != nil && (math.IsNaN(*span) || *span <= 0 || *span > 500) {
		errs = append(errs, field.Invalid("/measured_span_mm", "measured_span_mm must be the anvil span in mm, above 0 and at most 500"))
	}
	return errors.Join(errs...)
}

// errOtherLocationsTool refuses a held key's change to a tool it may read
// but that belongs to another location.
var errOtherLocationsTool = fmt.Errorf("%w: this tool belongs to another location than the one this API key is held to", ErrForbidden)

// checkLocation reports a location of another organisation, or none, as a
// 422 naming the field.
func (s *Service) checkLocation(ctx context.Context, p Principal, id uuid.UUID) error {
	if _, err := s.store.GetLocation(ctx, p.OrgID, id); errors.Is(err, ErrNotFound) || (err == nil && !p.Reaches(id)) {
		return field.Unprocessable("/location_id", "no location %s in this organisation", id)
	} else if err != nil {
		return err
	}
	return nil
}

// CreateTool adds a tensiometer to one of the caller's locations.
func (s *Service) CreateTool(ctx context.Context, p Principal, in ToolInput) (Tool, error) {
	defer s.locations.forgetOrganisation(p.OrgID)
	if err := validateToolFields(&in.Label, &in.Serial, &in.Notes, in.UnitMM, in.MeasuredSpanMM); err != nil {
		return Tool{}, err
	}
	if err := s.checkLocation(ctx, p, in.LocationID); err != nil {
		return Tool{}, err
	}
	id := in.ID
	if id == uuid.Nil {
		var err error
		if id, err = uuid.NewV7(); err != nil {
			return Tool{}, err
		}
	}
	unit := DefaultUnitMM
	if in.UnitMM != nil {
		unit = *in.UnitMM
	}
	now := s.now().UTC()
	t := Tool{ID: id, OrgID: p.OrgID, LocationID: in.LocationID, Label: strings.TrimSpace(in.Label), Serial: in.Serial,
		UnitMM: unit, MeasuredSpanMM: in.MeasuredSpanMM, Notes: in.Notes, Version: 1, CreatedAt: now, UpdatedAt: now}
	if err := s.store.CreateTool(ctx, t); err != nil {
		return Tool{}, fmt.Errorf("create tool: %w", err)
	}
	return t, nil
}

// GetTool reads one of the caller's tools.
func (s *Service) GetTool(ctx context.Context, p Principal, id uuid.UUID) (Tool, error) {
	return s.store.GetTool(ctx, p.OrgID, id)
}

// ListTools lists the caller's tools in creation order.
func (s *Service) ListTools(ctx context.Context, p Principal, page Page) ([]Tool, error) {
	return s.store.ListTools(ctx, p.OrgID, page)
}

// UpdateTool applies patch if ifMatch is the tool's current ETag. Published
// calibrations keep the tool facts they were fitted with.
func (s *Service) UpdateTool(ctx context.Context, p Principal, id uuid.UUID, ifMatch string, patch ToolPatch) (Tool, error) {
	defer s.locations.forgetOrganisation(p.OrgID)
	if err := validateToolFields(patch.Label, patch.Serial, patch.Notes, patch.UnitMM, patch.MeasuredSpanMM); err != nil {
		return Tool{}, err
	}
	cur, err := s.store.GetTool(ctx, p.OrgID, id)
	if err != nil {
		return Tool{}, err
	}
	if !p.Reaches(cur.LocationID) {
		return Tool{}, errOtherLocationsTool
	}
	if ifMatch == "" {
		return Tool{}, fmt.Errorf("%w: send If-Match with the tool's ETag", ErrPreconditionRequired)
	}
	if ifMatch != "*" && ifMatch != cur.ETag() {
		return Tool{}, fmt.Errorf("%w: the tool has changed since it was read", ErrPreconditionFailed)
	}
	if patch.LocationID != nil {
		if err := s.checkLocation(ctx, p, *patch.LocationID); err != nil {
			return Tool{}, err
		}
	}
	if patch.Label != nil {
		n := strings.TrimSpace(*patch.Label)
		patch.Label = &n
	}
	return s.store.UpdateTool(ctx, p.OrgID, id, cur.Version, patch)
}

// Calibration is one immutable version of a tool's calibration, with the
// tool model fitted once when it was published (Model, never refitted).
type Calibration struct {
	ID      uuid.UUID        `json:"id"`
	OrgID   uuid.UUID        `json:"-"`
	ToolID  uuid.UUID        `json:"tool_id"`
	Version int              `json:"version"`
	Source  string           `json:"source"`
	Notes   string           `json:"notes"`
	Tool    tension.Tool     `json:"tool"`
	Columns []tension.Column `json:"columns"`
	// Model is the fitted tool model as stored; it is not part of the feed.
	Model     *tension.Model `json:"-"`
	CreatedAt time.Time      `json:"created_at"`
}

// CalibrationInput is what publishing a calibration takes.
type CalibrationInput struct {
	ID      uuid.UUID        `json:"-"`      // optional: zero means a new id
	Source  string           `json:"source"` // maker_table (default) or known_tension
	Notes   string           `json:"notes"`
	Columns []tension.Column `json:"columns"`
}

// PublishCalibration validates the columns, fits the tool model once with
// the tool's current facts, and stores both as the tool's next version. A
// calibration that cannot identify the tool model is still stored (its
// columns convert themselves); one that fails validation is refused with
// pointers under /columns.
func (s *Service) PublishCalibration(ctx context.Context, p Principal, toolID uuid.UUID, in CalibrationInput) (Calibration, error) {
	defer s.locations.forgetOrganisation(p.OrgID)
	if utf8.RuneCountInString(in.Notes) > 2000 {
		return Calibration{}, field.Invalid("/notes", "notes must be at most 2000 characters")
	}
	tool, err := s.store.GetTool(ctx, p.OrgID, toolID)
	if err != nil {
		return Calibration{}, err
	}
	if !p.Reaches(tool.LocationID) {
		return Calibration{}, errOtherLocationsTool
	}
	if in.Source == "" {
		in.Source = tension.SourceMakerTable
	}
	facts := tool.Facts()
	m, err := tension.Fit(tension.Calibration{Columns: in.Columns, Source: in.Source}, facts)
	if err != nil {
		return Calibration{}, err
	}
	id := in.ID
	if id == uuid.Nil {
		if id, err = uuid.NewV7(); err != nil {
			return Calibration{}, err
		}
	}
	c := Calibration{ID: id, OrgID: p.OrgID, ToolID: toolID, Source: in.Source, Notes: in.Notes, Tool: facts,
		Columns: in.Columns, Model: m, CreatedAt: s.now().UTC()}
	c, err = s.store.CreateCalibration(ctx, c, tool.Version)
	if err != nil {
		return Calibration{}, fmt.Errorf("publish calibration: %w", err)
	}
	return c, nil
}

// GetCalibration reads one of the caller's calibration versions.
func (s *Service) GetCalibration(ctx context.Context, p Principal, id uuid.UUID) (Calibration, error) {
	return s.store.GetCalibration(ctx, p.OrgID, id)
}

// ListCalibrations lists a tool's versions, oldest first.
func (s *Service) ListCalibrations(ctx context.Context, p Principal, toolID uuid.UUID, page Page) ([]Calibration, error) {
	if _, err := s.store.GetTool(ctx, p.OrgID, toolID); err != nil {
		return nil, err
	}
	return s.store.ListCalibrations(ctx, p.OrgID, toolID, page)
}
