package store

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"

	"github.com/google/uuid"
	"github.com/jackc/pgx/v5"

	"wheelbench/service"
)

const partColumns = `org_id, id, kind, sku, name, price_minor, currency, dimensions, version, created_at, updated_at`

// scanPart reads a part row; its dimensions column holds the JSON of the
// value PartKind.NewDimensions makes for its kind.
func scanPart(row pgx.CollectableRow) (service.Part, error) {
	var p service.Part
	var kind string
	var dims []byte
	err := row.Scan(&p.OrgID, &p.ID, &kind, &p.SKU, &p.Name, &p.PriceMinor, &p.Currency, &dims, &p.Version, &p.CreatedAt, &p.UpdatedAt)
	if err != nil {
		return p, err
	}
	p.Kind = service.PartKind(kind)
	if p.Dimensions = p.Kind.NewDimensions(); p.Dimensions == nil {
		return p, fmt.Errorf("part %s: unknown kind %q", p.ID, kind)
	}
	if err := json.Unmarshal(dims, p.Dimensions); err != nil {
		return p, fmt.Errorf("part %s dimensions: %w", p.ID, err)
	}
	return p, nil
}

// CreatePart inserts p and its change-feed row.
func (s *Store) CreatePart(ctx context.Context, p service.Part) (err error) {
	defer wrap(&err, "create part")
	const q = `INSERT INTO parts (` + partColumns + `) VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11)`
	dims, err := json.Marshal(p.Dimensions)
	if err != nil {
		return err
	}
	return s.inTx(ctx, func(tx pgx.Tx) error {
		if _, err := tx.Exec(ctx, q, p.OrgID, p.ID, string(p.Kind), p.SKU, p.Name, p.PriceMinor, p.Currency, dims, p.Version, p.CreatedAt, p.UpdatedAt); err != nil {
			return err
		}
		return recordChange(ctx, tx, p.OrgID, service.Change{Type: "part.created", ResourceID: p.ID, Data: p})
	})
}

// GetPart reads one of orgID's parts.
func (s *Store) GetPart(ctx context.Context, orgID, id uuid.UUID) (p service.Part, err error) {
	defer wrap(&err, "get part")
	rows, _ := s.db(ctx).Query(ctx, `SELECT `+partColumns+` FROM parts WHERE org_id = $1 AND id = $2`, orgID, id)
	return pgx.CollectExactlyOneRow(rows, scanPart)
}

// ListParts lists orgID's parts by id, optionally of one kind or SKU.
func (s *Store) ListParts(ctx context.Context, orgID uuid.UUID, f service.PartFilter, p service.Page) (ps []service.Part, err error) {
	defer wrap(&err, "list parts")
	const q = `SELECT ` + partColumns + ` FROM parts
	  WHERE org_id = $1 AND id > $2 AND ($3 = '' OR kind = $3) AND ($4 = '' OR sku = $4)
	  ORDER BY id LIMIT $5`
	rows, _ := s.db(ctx).Query(ctx, q, orgID, p.After, string(f.Kind), f.SKU, p.Limit)
	return pgx.CollectRows(rows, scanPart)
}

// UpdatePart applies p and, when not nil, the new dimensions when the part
// is still at version.
func (s *Store) UpdatePart(ctx context.Context, orgID, id uuid.UUID, version int64, p service.PartPatch, newDims any) (out service.Part, err error) {
	defer wrap(&err, "update part")
	var dims []byte
	if newDims != nil {
		if dims, err = json.Marshal(newDims); err != nil {
			return out, err
		}
	}
	const q = `UPDATE parts SET sku = COALESCE($4, sku), name = COALESCE($5, name),
	    price_minor = COALESCE($6, price_minor), currency = COALESCE($7, currency),
	    dimensions = COALESCE($8::jsonb, dimensions), version = version + 1, updated_at = now()
	  WHERE org_id = $1 AND id = $2 AND version = $3 RETURNING ` + partColumns
	err = s.inTx(ctx, func(tx pgx.Tx) error {
		rows, _ := tx.Query(ctx, q, orgID, id, version, p.SKU, p.Name, p.PriceMinor, p.Currency, dims)
		out, err = pgx.CollectExactlyOneRow(rows, scanPart)
		if errors.Is(err, pgx.ErrNoRows) {
			return service.ErrPreconditionFailed
		}
		if err != nil {
			return err
		}
		return recordChange(ctx, tx, orgID, service.Change{Type: "part.updated", ResourceID: id, Data: out})
	})
	return out, err
}

// GetPartStock reads a part's stock levels.
func (s *Store) GetPartStock(ctx context.Context, orgID, partID uuid.UUID) (st service.PartStock, err error) {
	defer wrap(&err, "get part stock")
	return s.partStock(ctx, s.db(ctx), orgID, partID)
}

func (s *Store) partStock(ctx context.Context, q querier, orgID, partID uuid.UUID) (service.PartStock, error) {
	st := service.PartStock{PartID: partID}
	if err := q.QueryRow(ctx, `SELECT stock_version FROM parts WHERE org_id = $1 AND id = $2`, orgID, partID).Scan(&st.Version); err != nil {
		return st, err
	}
	// Ordered by the numeric column itself (qualified), not by the float8
	// output that carries its name.
	rows, _ := q.Query(ctx, `SELECT s.location_id, s.length_mm::float8, s.quantity FROM part_stock s
	    WHERE s.org_id = $1 AND s.part_id = $2 ORDER BY s.location_id, s.length_mm`, orgID, partID)
	levels, err := pgx.CollectRows(rows, pgx.RowToStructByPos[service.StockLevel])
	st.Levels = levels
	return st, err
}

// PutPartStock replaces the part's stock levels when still at version:
// all of them, or when location is set only that location's.
func (s *Store) PutPartStock(ctx context.Context, orgID, partID uuid.UUID, version int64, levels []service.StockLevel, location *uuid.UUID) (st service.PartStock, err error) {
	defer wrap(&err, "put part stock")
	err = s.inTx(ctx, func(tx pgx.Tx) error {
		tag, err := tx.Exec(ctx, `UPDATE parts SET stock_version = stock_version + 1 WHERE org_id = $1 AND id = $2 AND stock_version = $3`, orgID, partID, version)
		if err != nil {
			return err
		}
		if tag.RowsAffected() != 1 {
			return service.ErrPreconditionFailed
		}
		const del = `DELETE FROM part_stock WHERE org_id = $1 AND part_id = $2 AND ($3::uuid IS NULL OR location_id = $3)`
		if _, err := tx.Exec(ctx, del, orgID, partID, location); err != nil {
			return err
		}
		for _, l := range levels {
			if _, err := tx.Exec(ctx, `INSERT INTO part_stock (org_id, part_id, location_id, length_mm, quantity) VALUES ($1, $2, $3, $4, $5)`,
				orgID, partID, l.LocationID, l.LengthMM, l.Quantity); err != nil {
				return err
			}
		}
		if st, err = s.partStock(ctx, tx, orgID, partID); err != nil {
			return err
		}
		// Levels set by a key held to one location are that location's
		// change; others may touch every location and name none.
		return recordChange(ctx, tx, orgID, service.Change{Type: "part.stock_changed", ResourceID: partID, LocationID: location, Data: st})
	})
	return st, err
}
