package store

import (
	"context"
	"encoding/json"

	"github.com/google/uuid"
	"github.com/jackc/pgx/v5"

	"wheelbench/service"
)

// CreateBuildAudit implements service.Store.
func (s *Store) CreateBuildAudit(ctx context.Context, a service.BuildTensionAudit, locationID uuid.UUID) (err error) {
	defer wrap(&err, "create build tension audit")
	readings, err := json.Marshal(a.Readings)
	if err != nil {
		return err
	}
	result, err := json.Marshal(a.Result)
	if err != nil {
		return err
	}
	return s.inTx(ctx, func(tx pgx.Tx) error {
		// Lock the build row so two audits of one build supersede in order.
		if _, err := tx.Exec(ctx, `SELECT 1 FROM builds WHERE org_id = $1 AND id = $2 FOR UPDATE`, a.OrgID, a.BuildID); err != nil {
			return err
		}
		if _, err := tx.Exec(ctx, `UPDATE build_tension_audits SET superseded_by = $3
		    WHERE org_id = $1 AND build_id = $2 AND superseded_by IS NULL`, a.OrgID, a.BuildID, a.ID); err != nil {
			return err
		}
		const q = `INSERT INTO build_tension_audits (org_id, id, build_id, tool_id, calibration_id, readings, result, notes, created_at)
		  VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9)`
		if _, err := tx.Exec(ctx, q, a.OrgID, a.ID, a.BuildID, a.ToolID, a.CalibrationID, readings, result, a.Notes, a.CreatedAt); err != nil {
			return err
		}
		return recordChange(ctx, tx, a.OrgID, service.Change{Type: "build.tension_audited", ResourceID: a.BuildID, LocationID: &locationID,
			Data: map[string]any{"build_id": a.BuildID, "audit_id": a.ID, "calibration_id": a.CalibrationID}})
	})
}

// ListBuildAudits lists a build's audits by id (oldest first).
func (s *Store) ListBuildAudits(ctx context.Context, orgID, buildID uuid.UUID, p service.Page) (as []service.BuildTensionAudit, err error) {
	defer wrap(&err, "list build tension audits")
	const q = `SELECT org_id, id, build_id, tool_id, calibration_id, readings, result, notes, superseded_by, created_at
	  FROM build_tension_audits WHERE org_id = $1 AND build_id = $2 AND id > $3 ORDER BY id LIMIT $4`
	rows, _ := s.db(ctx).Query(ctx, q, orgID, buildID, p.After, p.Limit)
	return pgx.CollectRows(rows, func(row pgx.CollectableRow) (service.BuildTensionAudit, error) {
		var a service.BuildTensionAudit
		var readings, result []byte
		if err := row.Scan(&a.OrgID, &a.ID, &a.BuildID, &a.ToolID, &a.CalibrationID, &readings, &result, &a.Notes, &a.SupersededBy, &a.CreatedAt); err != nil {
			return a, err
		}
		if err := json.Unmarshal(readings, &a.Readings); err != nil {
			return a, err
		}
		return a, json.Unmarshal(result, &a.Result)
	})
}
