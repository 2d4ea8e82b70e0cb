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
	"wheelbench/service/fit"
)

const buildColumns = `org_id, id, location_id, external_ref, status, spec, snapshot, notes, version, created_at, updated_at`

// scanBuild reads a build row. The spec and snapshot columns hold the
// JSON of service.BuildSpec and service.BuildSnapshot (rows written before
// the spec was kept typed hold the spec as it was sent, which reads the
// same).
func scanBuild(row pgx.CollectableRow) (service.Build, error) {
	var b service.Build
	var status string
	var spec, snap []byte
	err := row.Scan(&b.OrgID, &b.ID, &b.LocationID, &b.ExternalRef, &status, &spec, &snap, &b.Notes, &b.Version, &b.CreatedAt, &b.UpdatedAt)
	if err != nil {
		return b, err
	}
	b.Status = service.BuildStatus(status)
	if err := json.Unmarshal(spec, &b.Spec); err != nil {
		return b, fmt.Errorf("build %s spec: %w", b.ID, err)
	}
	if err := json.Unmarshal(snap, &b.Snapshot); err != nil {
		return b, fmt.Errorf("build %s snapshot: %w", b.ID, err)
	}
	return b, nil
}

// CreateBuild inserts b and its build.created change. b's location must be
// one of its organisation's: the service checks that first, to answer with
// the field at fault, and the foreign key (org_id, location_id) →
// locations holds it in the database (migration 00004).
func (s *Store) CreateBuild(ctx context.Context, b service.Build) (err error) {
	defer wrap(&err, "create build")
	spec, err := json.Marshal(b.Spec)
	if err != nil {
		return err
	}
	snap, err := json.Marshal(b.Snapshot)
	if err != nil {
		return err
	}
	args, err := changeArgs(b.OrgID, service.Change{Type: "build.created", ResourceID: b.ID, LocationID: &b.LocationID, Data: buildSummary(b)})
	if err != nil {
		return err
	}
	// UUIDs go as [16]byte (changeArgs does the same): pgx encodes those
	// straight to binary, while uuid.UUID's driver.Valuer (a string) first
	// fails the binary encoding, builds an error, and is parsed back.
	_, err = s.db(ctx).Exec(ctx, createBuildStatement, args[0], args[1], args[2], args[3], args[4], args[5], args[6], args[7],
		b.ExternalRef, string(b.Status), spec, snap, b.Notes, b.Version, b.CreatedAt, b.UpdatedAt)
	return err
}

// createBuildStatement inserts a build and its build.created change (feed
// row and outbox rows) in one statement: one round trip, one transaction
// (the request's, when ctx carries one), and for PostgreSQL one statement
// to run rather than two. $1 to $8 are the change's (changeInsert): its
// organisation, resource and location ($1, $3, $4) are the build's; $9 on
// are the build's other columns.
const createBuildStatement = `WITH build AS (
	    INSERT INTO builds (` + buildColumns + `) VALUES ($1, $3, $4, $9, $10, $11, $12, $13, $14, $15, $16)),
	  ` + changeInsert

// buildSummary is a build's change-feed payload: everything but the
// (large) snapshot, which the resource itself serves. Its fields are in
// the order of their JSON names, the order encoding/json gives a map, so
// the bytes (kept as such in webhook bodies) are those of the map form.
type buildSummaryJSON struct {
	ExternalRef string              `json:"external_ref"`
	ID          uuid.UUID           `json:"id"`
	LocationID  uuid.UUID           `json:"location_id"`
	Notes       string              `json:"notes"`
	Status      service.BuildStatus `json:"status"`
	UpdatedAt   time.Time           `json:"updated_at"`
	Verdict     fit.Verdict         `json:"verdict"`
}

func buildSummary(b service.Build) buildSummaryJSON {
	return buildSummaryJSON{ID: b.ID, LocationID: b.LocationID, ExternalRef: b.ExternalRef, Status: b.Status,
		Verdict: b.Snapshot.Compatibility.Verdict, Notes: b.Notes, UpdatedAt: b.UpdatedAt}
}

// GetBuild reads one of orgID's builds.
func (s *Store) GetBuild(ctx context.Context, orgID, id uuid.UUID) (b service.Build, err error) {
	defer wrap(&err, "get build")
	rows, _ := s.db(ctx).Query(ctx, `SELECT `+buildColumns+` FROM builds WHERE org_id = $1 AND id = $2`, orgID, id)
	return pgx.CollectExactlyOneRow(rows, scanBuild)
}

// ListBuilds lists orgID's builds by id with filters.
func (s *Store) ListBuilds(ctx context.Context, orgID uuid.UUID, f service.BuildFilter, p service.Page) (bs []service.Build, err error) {
	defer wrap(&err, "list builds")
	const q = `SELECT ` + buildColumns + ` FROM builds
	  WHERE org_id = $1 AND id > $2
	    AND ($3 = '' OR status = $3)
	    AND ($4::uuid IS NULL OR location_id = $4)
	    AND ($5::text IS NULL OR external_ref = $5)
	    AND ($6::timestamptz IS NULL OR updated_at > $6)
	  ORDER BY id LIMIT $7`
	rows, _ := s.db(ctx).Query(ctx, q, orgID, p.After, string(f.Status), f.LocationID, f.ExternalRef, f.UpdatedAfter, p.Limit)
	return pgx.CollectRows(rows, scanBuild)
}

// UpdateBuild applies p when the build is still at version.
func (s *Store) UpdateBuild(ctx context.Context, orgID, id uuid.UUID, version int64, from service.BuildStatus, p service.BuildPatch) (b service.Build, err error) {
	defer wrap(&err, "update build")
	var status *string
	if p.Status != nil {
		st := string(*p.Status)
		status = &st
	}
	const q = `UPDATE builds SET status = COALESCE($4, status), notes = COALESCE($5, notes),
	    version = version + 1, updated_at = now()
	  WHERE org_id = $1 AND id = $2 AND version = $3 RETURNING ` + buildColumns
	err = s.inTx(ctx, func(tx pgx.Tx) error {
		rows, _ := tx.Query(ctx, q, orgID, id, version, status, p.Notes)
		b, err = pgx.CollectExactlyOneRow(rows, scanBuild)
		if errors.Is(err, pgx.ErrNoRows) {
			return service.ErrPreconditionFailed
		}
		if err != nil {
			return err
		}
		typ := "build.updated"
		if p.Status != nil && *p.Status != from {
			typ = "build.status_changed"
		}
		return recordChange(ctx, tx, orgID, service.Change{Type: typ, ResourceID: id, LocationID: &b.LocationID, Data: buildSummary(b)})
	})
	return b, err
}

// setBuildStatus moves a build inside tx (quotes use it).
func setBuildStatus(ctx context.Context, tx pgx.Tx, orgID, id uuid.UUID, from, to service.BuildStatus) (service.Build, error) {
	const q = `UPDATE builds SET status = $4, version = version + 1, updated_at = now()
	  WHERE org_id = $1 AND id = $2 AND status = $3 RETURNING ` + buildColumns
	rows, _ := tx.Query(ctx, q, orgID, id, string(from), string(to))
	b, err := pgx.CollectExactlyOneRow(rows, scanBuild)
	if errors.Is(err, pgx.ErrNoRows) {
		return b, service.ErrConflict
	}
	if err != nil {
		return b, err
	}
	return b, recordChange(ctx, tx, orgID, service.Change{Type: "build.status_changed", ResourceID: id, LocationID: &b.LocationID, Data: buildSummary(b)})
}
