package service

import (
	"context"
	"errors"
	"fmt"
	"time"
	"unicode/utf8"

	"github.com/google/uuid"

	"wheelbench/service/field"
	"wheelbench/service/tension"
)

// BuildTensionAudit is a stored tension audit of a built wheel: the
// readings, the calibration version they were converted with, the
// converted tensions and the verdict. Kept for warranty: never edited; a
// later audit of the same build supersedes it.
type BuildTensionAudit struct {
	ID            uuid.UUID              `json:"id"`
	OrgID         uuid.UUID              `json:"-"`
	BuildID       uuid.UUID              `json:"build_id"`
	ToolID        uuid.UUID              `json:"tool_id"`
	CalibrationID uuid.UUID              `json:"calibration_id"`
	Readings      []tension.AuditReading `json:"readings"`
	Result        tension.AuditResult    `json:"result"`
	Notes         string                 `json:"notes"`
	SupersededBy  *uuid.UUID             `json:"superseded_by,omitempty"`
	CreatedAt     time.Time              `json:"created_at"`
}

// BuildAuditInput records an audit of a build.
type BuildAuditInput struct {
	CalibrationID uuid.UUID              `json:"calibration_id"`
	Readings      []tension.AuditReading `json:"readings"`
	TolerancePct  *float64               `json:"tolerance_pct"`
	Notes         string                 `json:"notes"`
}

// RecordBuildAudit converts the readings with a stored calibration version,
// judges them against the build's own targets and geometric left/right
// ratio, and keeps the result with the build, superseding its last audit.
func (s *Service) RecordBuildAudit(ctx context.Context, p Principal, buildID uuid.UUID, in BuildAuditInput) (BuildTensionAudit, error) {
	if utf8.RuneCountInString(in.Notes) > 10000 {
		return BuildTensionAudit{}, field.Invalid("/notes", "notes must be at most 10000 characters")
	}
	b, err := s.reachableBuild(ctx, p, buildID)
	if err != nil {
		return BuildTensionAudit{}, err
	}
	cal, err := s.store.GetCalibration(ctx, p.OrgID, in.CalibrationID)
	if errors.Is(err, ErrNotFound) {
		return BuildTensionAudit{}, field.Unprocessable("/calibration_id", "no such calibration in this organisation")
	}
	if err != nil {
		return BuildTensionAudit{}, err
	}
	if cal.Model == nil {
		return BuildTensionAudit{}, field.Unprocessable("/calibration_id", "the calibration has no fitted model")
	}
	res := b.Snapshot.Resolved
	// The same rule as POST /v1/tension-audits: the target is the tighter
	// side's tension and the ratio (T_left/T_right, from the snapshot's
	// geometry, else from its two target tensions) decides which side that
	// is and aims the other; no target_side is sent.
	t := b.Snapshot.TargetTensionsN
	req := tension.AuditRequest{Spoke: res.Spoke, Readings: in.Readings, TolerancePct: in.TolerancePct}
	if target := max(t.Left, t.Right); target > 0 {
		req.TargetTensionN = &target
	}
	r := b.Snapshot.Compatibility.Geometry.Ratio
	if !(r > 0) && t.Left > 0 && t.Right > 0 {
		r = t.Left / t.Right
	}
	if r > 0 {
		req.GeometricLeftRightRatio = &r
	}
	result, err := cal.Model.Audit(req)
	if err != nil {
		return BuildTensionAudit{}, err
	}
	a := BuildTensionAudit{ID: uuid.Must(uuid.NewV7()), OrgID: p.OrgID, BuildID: b.ID, ToolID: cal.ToolID, CalibrationID: cal.ID,
		Readings: in.Readings, Result: result, Notes: in.Notes, CreatedAt: s.now().UTC()}
	if err := s.store.CreateBuildAudit(ctx, a, b.LocationID); err != nil {
		return BuildTensionAudit{}, fmt.Errorf("record tension audit: %w", err)
	}
	return a, nil
}

// ListBuildAudits lists a build's audits, oldest first.
func (s *Service) ListBuildAudits(ctx context.Context, p Principal, buildID uuid.UUID, page Page) ([]BuildTensionAudit, error) {
	if _, err := s.reachableBuild(ctx, p, buildID); err != nil {
		return nil, err
	}
	return s.store.ListBuildAudits(ctx, p.OrgID, buildID, page)
}
