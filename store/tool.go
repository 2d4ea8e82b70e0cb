package store

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"time"

	"github.com/google/uuid"
	"github.com/jackc/pgx/v5"

	"wheelbench/service"
	"wheelbench/service/tension"
)

const toolColumns = `org_id, id, location_id, label, serial, unit_mm, measured_span_mm, notes, version, created_at, updated_at`

func scanTool(row pgx.CollectableRow) (service.Tool, error) {
	var t service.Tool
	err := row.Scan(&t.OrgID, &t.ID, &t.LocationID, &t.Label, &t.Serial, &t.UnitMM, &t.MeasuredSpanMM, &t.Notes,
		&t.Version, &t.CreatedAt, &t.UpdatedAt)
	return t, err
}

// CreateTool inserts t and its tool.created change.
func (s *Store) CreateTool(ctx context.Context, t service.Tool) (err error) {
	defer wrap(&err, "create tool")
	const q = `INSERT INTO tools (` + toolColumns + `) VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11)`
	return s.inTx(ctx, func(tx pgx.Tx) error {
		if _, err := tx.Exec(ctx, q, t.OrgID, t.ID, t.LocationID, t.Label, t.Serial, t.UnitMM, t.MeasuredSpanMM, t.Notes,
			t.Version, t.CreatedAt, t.UpdatedAt); err != nil {
			return err
		}
		return recordChange(ctx, tx, t.OrgID, service.Change{Type: "tool.created", ResourceID: t.ID, LocationID: &t.LocationID, Data: t})
	})
}

// GetTool reads one of orgID's tools.
func (s *Store) GetTool(ctx context.Context, orgID, id uuid.UUID) (t service.Tool, err error) {
	defer wrap(&err, "get tool")
	const q = `SELECT ` + toolColumns + ` FROM tools WHERE org_id = $1 AND id = $2`
	rows, _ := s.db(ctx).Query(ctx, q, orgID, id)
	return pgx.CollectExactlyOneRow(rows, scanTool)
}

// ListTools lists orgID's tools by id (creation order: ids are UUIDv7).
func (s *Store) ListTools(ctx context.Context, orgID uuid.UUID, p service.Page) (ts []service.Tool, err error) {
	defer wrap(&err, "list tools")
	const q = `SELECT ` + toolColumns + ` FROM tools WHERE org_id = $1 AND id > $2 ORDER BY id LIMIT $3`
	rows, _ := s.db(ctx).Query(ctx, q, orgID, p.After, p.Limit)
	return pgx.CollectRows(rows, scanTool)
}

// UpdateTool applies p when the row is still at version, with its
// tool.updated change.
func (s *Store) UpdateTool(ctx context.Context, orgID, id uuid.UUID, version int64, p service.ToolPatch) (t service.Tool, err error) {
	defer wrap(&err, "update tool")
	const q = `UPDATE tools SET
	    location_id = COALESCE($4, location_id), label = COALESCE($5, label), serial = COALESCE($6, serial),
	    unit_mm = COALESCE($7, unit_mm),
	    measured_span_mm = CASE WHEN $9 THEN NULL ELSE COALESCE($8, measured_span_mm) END,
	    notes = COALESCE($10, notes),
	    version = version + 1, updated_at = now()
	  WHERE org_id = $1 AND id = $2 AND version = $3
	  RETURNING ` + toolColumns
	err = s.inTx(ctx, func(tx pgx.Tx) error {
		rows, _ := tx.Query(ctx, q, orgID, id, version, p.LocationID, p.Label, p.Serial, p.UnitMM, p.MeasuredSpanMM,
			p.ClearMeasuredSpan, p.Notes)
		t, err = pgx.CollectExactlyOneRow(rows, scanTool)
		if errors.Is(err, pgx.ErrNoRows) {
			return service.ErrPreconditionFailed
		}
		if err != nil {
			return err
		}
		return recordChange(ctx, tx, orgID, service.Change{Type: "tool.updated", ResourceID: t.ID, LocationID: &t.LocationID, Data: t})
	})
	return t, err
}

const calibrationColumns = `org_id, id, tool_id, version, source, notes, unit_mm, measured_span_mm, columns, model_version, model, created_at`

// calibrationColumnsC is calibrationColumns qualified by the alias c.
var calibrationColumnsC = "org_id, c.id, c.tool_id, c.version, c.source, c.notes, c.unit_mm, c.measured_span_mm, c.columns, c.model_version, c.model, c.created_at"

func scanCalibration(row pgx.CollectableRow) (service.Calibration, error) {
	var c service.Calibration
	var cols, model []byte
	var modelVersion int
	if err := row.Scan(&c.OrgID, &c.ID, &c.ToolID, &c.Version, &c.Source, &c.Notes, &c.Tool.UnitMM, &c.Tool.MeasuredSpanMM,
		&cols, &modelVersion, &model, &c.CreatedAt); err != nil {
		return c, err
	}
	if err := json.Unmarshal(cols, &c.Columns); err != nil {
		return c, fmt.Errorf("calibration %s columns: %w", c.ID, err)
	}
	c.Model = new(tension.Model)
	if err := json.Unmarshal(model, c.Model); err != nil {
		return c, fmt.Errorf("calibration %s model (layout %d): %w", c.ID, modelVersion, err)
	}
	return c, nil
}

// CreateCalibration numbers c as its tool's next version and inserts it
// with its calibration.published change. The tool row is locked for the
// transaction, so concurrent publications for one tool get consecutive
// numbers, and a tool changed since c was fitted is a conflict.
func (s *Store) CreateCalibration(ctx context.Context, c service.Calibration, toolVersion int64) (out service.Calibration, err error) {
	defer wrap(&err, "create calibration")
	cols, err := json.Marshal(c.Columns)
	if err != nil {
		return c, err
	}
	model, err := json.Marshal(c.Model)
	if err != nil {
		return c, err
	}
	err = s.inTx(ctx, func(tx pgx.Tx) error {
		var v int64
		const qLock = `SELECT version FROM tools WHERE org_id = $1 AND id = $2 FOR UPDATE`
		if err := tx.QueryRow(ctx, qLock, c.OrgID, c.ToolID).Scan(&v); err != nil {
			return err
		}
		if v != toolVersion {
			return fmt.Errorf("%w: the tool changed while the calibration was being fitted; retry", service.ErrConflict)
		}
		const qNext = `SELECT COALESCE(max(version), 0) + 1 FROM calibrations WHERE org_id = $1 AND tool_id = $2`
		if err := tx.QueryRow(ctx, qNext, c.OrgID, c.ToolID).Scan(&c.Version); err != nil {
			return err
		}
		const q = `INSERT INTO calibrations (` + calibrationColumns + `) VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, $12)`
		if _, err := tx.Exec(ctx, q, c.OrgID, c.ID, c.ToolID, c.Version, c.Source, c.Notes, c.Tool.UnitMM, c.Tool.MeasuredSpanMM,
			cols, c.Model.Version, model, c.CreatedAt); err != nil {
			return err
		}
		// Calibrations are shared by every location: no location id.
		return recordChange(ctx, tx, c.OrgID, service.Change{Type: "calibration.published", ResourceID: c.ID, Data: c})
	})
	return c, err
}

// GetCalibration reads one of orgID's calibration versions.
func (s *Store) GetCalibration(ctx context.Context, orgID, id uuid.UUID) (c service.Calibration, err error) {
	defer wrap(&err, "get calibration")
	const q = `SELECT ` + calibrationColumns + ` FROM calibrations WHERE org_id = $1 AND id = $2`
	rows, _ := s.db(ctx).Query(ctx, q, orgID, id)
	return pgx.CollectExactlyOneRow(rows, scanCalibration)
}

// ListCalibrations lists a tool's versions by number; the page cursor is
// the id of the last version of the previous page.
func (s *Store) ListCalibrations(ctx context.Context, orgID, toolID uuid.UUID, p service.Page) (cs []service.Calibration, err error) {
	defer wrap(&err, "list calibrations")
	const q = `SELECT ` + calibrationColumns + ` FROM calibrations
	  WHERE org_id = $1 AND tool_id = $2
	    AND version > COALESCE((SELECT version FROM calibrations WHERE org_id = $1 AND tool_id = $2 AND id = $3), 0)
	  ORDER BY version LIMIT $4`
	rows, _ := s.db(ctx).Query(ctx, q, orgID, toolID, p.After, p.Limit)
	return pgx.CollectRows(rows, scanCalibration)
}

// LocationWithCalibration reads a location and, in the same round trip,
// the newest calibration of its default tensiometer (nil when none).
func (s *Store) LocationWithCalibration(ctx context.Context, orgID, locationID uuid.UUID) (l service.Location, c *service.Calibration, err error) {
	defer wrap(&err, "location with calibration")
	q := `SELECT l.org_id, l.id, l.name, l.code, l.timezone, l.address, l.tax_rate_ppm, l.version, l.created_at, l.updated_at,
	    cal.* FROM locations l
	  LEFT JOIN LATERAL (SELECT c.` + calibrationColumnsC + ` FROM calibrations c JOIN tools t ON t.org_id = c.org_id AND t.id = c.tool_id
	      WHERE c.org_id = l.org_id AND t.location_id = l.id ORDER BY t.id DESC, c.version DESC LIMIT 1) cal ON true
	  WHERE l.org_id = $1 AND l.id = $2`
	rows, _ := s.db(ctx).Query(ctx, q, orgID, locationID)
	l, err = pgx.CollectExactlyOneRow(rows, func(row pgx.CollectableRow) (service.Location, error) {
		var loc service.Location
		var cOrg, cID, cTool *uuid.UUID
		var cVersion *int
		var cSource, cNotes *string
		var cUnit, cSpan *float64
		var cols, model []byte
		var modelVersion *int
		var created *time.Time
		if err := row.Scan(&loc.OrgID, &loc.ID, &loc.Name, &loc.Code, &loc.Timezone, &loc.Address, &loc.TaxRatePPM, &loc.Version, &loc.CreatedAt, &loc.UpdatedAt,
			&cOrg, &cID, &cTool, &cVersion, &cSource, &cNotes, &cUnit, &cSpan, &cols, &modelVersion, &model, &created); err != nil {
			return loc, err
		}
		if cID == nil {
			return loc, nil
		}
		cal := service.Calibration{OrgID: *cOrg, ID: *cID, ToolID: *cTool, Version: *cVersion, Source: *cSource, Notes: *cNotes, CreatedAt: *created}
		cal.Tool.UnitMM, cal.Tool.MeasuredSpanMM = *cUnit, cSpan
		if err := json.Unmarshal(cols, &cal.Columns); err != nil {
			return loc, err
		}
		cal.Model = new(tension.Model)
		if err := json.Unmarshal(model, cal.Model); err != nil {
			return loc, err
		}
		c = &cal
		return loc, nil
	})
	return l, c, err
}
