package store

import (
	"errors"

	"context"

	"github.com/google/uuid"
	"github.com/jackc/pgx/v5"

	"wheelbench/service"
)

// CreateOrganisation inserts o.
func (s *Store) CreateOrganisation(ctx context.Context, o service.Organisation) (err error) {
	defer wrap(&err, "create organisation")
	const q = `INSERT INTO organisations (id, name, created_at) VALUES ($1, $2, $3)`
	_, err = s.db(ctx).Exec(ctx, q, o.ID, o.Name, o.CreatedAt)
	return err
}

// GetOrganisation reads one organisation.
func (s *Store) GetOrganisation(ctx context.Context, id uuid.UUID) (o service.Organisation, err error) {
	defer wrap(&err, "get organisation")
	const q = `SELECT id, name, created_at FROM organisations WHERE id = $1`
	err = s.db(ctx).QueryRow(ctx, q, id).Scan(&o.ID, &o.Name, &o.CreatedAt)
	return o, err
}

const locationColumns = `org_id, id, name, code, timezone, address, tax_rate_ppm, version, created_at, updated_at`

func scanLocation(row pgx.CollectableRow) (service.Location, error) {
	var l service.Location
	err := row.Scan(&l.OrgID, &l.ID, &l.Name, &l.Code, &l.Timezone, &l.Address, &l.TaxRatePPM, &l.Version, &l.CreatedAt, &l.UpdatedAt)
	return l, err
}

// CreateLocation inserts l.
func (s *Store) CreateLocation(ctx context.Context, l service.Location) (err error) {
	defer wrap(&err, "create location")
	const q = `INSERT INTO locations (` + locationColumns + `) VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10)`
	return s.inTx(ctx, func(tx pgx.Tx) error {
		if _, err := tx.Exec(ctx, q, l.OrgID, l.ID, l.Name, l.Code, l.Timezone, l.Address, l.TaxRatePPM, l.Version, l.CreatedAt, l.UpdatedAt); err != nil {
			return err
		}
		return recordChange(ctx, tx, l.OrgID, service.Change{Type: "location.created", ResourceID: l.ID, LocationID: &l.ID, Data: l})
	})
}

// GetLocation reads one of orgID's locations.
func (s *Store) GetLocation(ctx context.Context, orgID, id uuid.UUID) (l service.Location, err error) {
	defer wrap(&err, "get location")
	const q = `SELECT ` + locationColumns + ` FROM locations WHERE org_id = $1 AND id = $2`
	rows, _ := s.db(ctx).Query(ctx, q, orgID, id)
	return pgx.CollectExactlyOneRow(rows, scanLocation)
}

// ListLocations lists orgID's locations by id (creation order: ids are UUIDv7).
func (s *Store) ListLocations(ctx context.Context, orgID uuid.UUID, p service.Page) (ls []service.Location, err error) {
	defer wrap(&err, "list locations")
	const q = `SELECT ` + locationColumns + ` FROM locations WHERE org_id = $1 AND id > $2 ORDER BY id LIMIT $3`
	rows, _ := s.db(ctx).Query(ctx, q, orgID, p.After, p.Limit)
	return pgx.CollectRows(rows, scanLocation)
}

// UpdateLocation applies p when the row is still at version.
func (s *Store) UpdateLocation(ctx context.Context, orgID, id uuid.UUID, version int64, p service.LocationPatch) (l service.Location, err error) {
	defer wrap(&err, "update location")
	const q = `UPDATE locations SET
	    name = COALESCE($4, name), code = COALESCE($5, code),
	    timezone = COALESCE($6, timezone), address = COALESCE($7, address),
	    tax_rate_ppm = COALESCE($8, tax_rate_ppm),
	    version = version + 1, updated_at = now()
	  WHERE org_id = $1 AND id = $2 AND version = $3
	  RETURNING ` + locationColumns
	err = s.inTx(ctx, func(tx pgx.Tx) error {
		rows, _ := tx.Query(ctx, q, orgID, id, version, p.Name, p.Code, p.Timezone, p.Address, p.TaxRatePPM)
		l, err = pgx.CollectExactlyOneRow(rows, scanLocation)
		if errors.Is(err, pgx.ErrNoRows) {
			return service.ErrPreconditionFailed
		}
		if err != nil {
			return err
		}
		return recordChange(ctx, tx, orgID, service.Change{Type: "location.updated", ResourceID: l.ID, LocationID: &l.ID, Data: l})
	})
	return l, err
}
