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
	"wheelbench/service/quote"
)

// GetPriceList reads orgID's price list.
func (s *Store) GetPriceList(ctx context.Context, orgID uuid.UUID) (pl service.PriceList, err error) {
	defer wrap(&err, "get price list")
	const q = `SELECT currency, base_build_minor, per_spoke_minor, per_drilled_hole_minor, per_washer_minor,
	    per_cut_spoke_minor, validity_days, version, updated_at FROM price_lists WHERE org_id = $1`
	err = s.db(ctx).QueryRow(ctx, q, orgID).Scan(&pl.Currency, &pl.BaseBuildMinor, &pl.PerSpokeMinor, &pl.PerDrilledHoleMinor,
		&pl.PerWasherMinor, &pl.PerCutSpokeMinor, &pl.ValidityDays, &pl.Version, &pl.UpdatedAt)
	return pl, err
}

// PutPriceList inserts or replaces orgID's price list at version.
func (s *Store) PutPriceList(ctx context.Context, orgID uuid.UUID, version int64, pl quote.PriceList) (out service.PriceList, err error) {
	defer wrap(&err, "put price list")
	const q = `INSERT INTO price_lists AS p (org_id, currency, base_build_minor, per_spoke_minor, per_drilled_hole_minor,
	    per_washer_minor, per_cut_spoke_minor, validity_days)
	  VALUES ($1, $2, $3, $4, $5, $6, $7, $8)
	  ON CONFLICT (org_id) DO UPDATE SET currency = EXCLUDED.currency, base_build_minor = EXCLUDED.base_build_minor,
	    per_spoke_minor = EXCLUDED.per_spoke_minor, per_drilled_hole_minor = EXCLUDED.per_drilled_hole_minor,
	    per_washer_minor = EXCLUDED.per_washer_minor, per_cut_spoke_minor = EXCLUDED.per_cut_spoke_minor,
	    validity_days = EXCLUDED.validity_days, version = p.version + 1, updated_at = now()
	  WHERE p.version = $9
	  RETURNING version, updated_at`
	out.PriceList = pl
	err = s.db(ctx).QueryRow(ctx, q, orgID, pl.Currency, pl.BaseBuildMinor, pl.PerSpokeMinor, pl.PerDrilledHoleMinor,
		pl.PerWasherMinor, pl.PerCutSpokeMinor, pl.ValidityDays, version).Scan(&out.Version, &out.UpdatedAt)
	if errors.Is(err, pgx.ErrNoRows) {
		return out, service.ErrPreconditionFailed
	}
	if err == nil && version == 0 && out.Version != 1 {
		return out, service.ErrPreconditionFailed
	}
	return out, err
}

const quoteColumns = `org_id, id, build_id, location_id, status, currency, lines, subtotal_minor, tax_minor, total_minor,
  tax_rate_ppm, stock_needs, valid_until, created_at, accepted_at`

func scanQuote(row pgx.CollectableRow) (service.Quote, error) {
	var q service.Quote
	var status string
	var lines, needs []byte
	err := row.Scan(&q.OrgID, &q.ID, &q.BuildID, &q.LocationID, &status, &q.Currency, &lines, &q.SubtotalMinor, &q.TaxMinor,
		&q.TotalMinor, &q.TaxRatePPM, &needs, &q.ValidUntil, &q.CreatedAt, &q.AcceptedAt)
	if err != nil {
		return q, err
	}
	q.Status = service.QuoteStatus(status)
	if err := json.Unmarshal(lines, &q.Lines); err != nil {
		return q, err
	}
	return q, json.Unmarshal(needs, &q.StockNeeds)
}

// CreateQuote stores q, supersedes the build's other open quotes and moves
// the build to quoted.
func (s *Store) CreateQuote(ctx context.Context, q service.Quote, from service.BuildStatus) (err error) {
	defer wrap(&err, "create quote")
	lines, err := json.Marshal(q.Lines)
	if err != nil {
		return err
	}
	needs, err := json.Marshal(q.StockNeeds)
	if err != nil {
		return err
	}
	return s.inTx(ctx, func(tx pgx.Tx) error {
		if _, err := tx.Exec(ctx, `UPDATE quotes SET status = 'superseded' WHERE org_id = $1 AND build_id = $2 AND status = 'open'`, q.OrgID, q.BuildID); err != nil {
			return err
		}
		const ins = `INSERT INTO quotes (` + quoteColumns + `) VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, $12, $13, $14, $15)`
		if _, err := tx.Exec(ctx, ins, q.OrgID, q.ID, q.BuildID, q.LocationID, string(q.Status), q.Currency, lines, q.SubtotalMinor,
			q.TaxMinor, q.TotalMinor, q.TaxRatePPM, needs, q.ValidUntil, q.CreatedAt, q.AcceptedAt); err != nil {
			return err
		}
		if from != service.BuildQuoted {
			if _, err := setBuildStatus(ctx, tx, q.OrgID, q.BuildID, from, service.BuildQuoted); err != nil {
				if errors.Is(err, service.ErrConflict) {
					return fmt.Errorf("%w: the build changed meanwhile; read it and quote again", service.ErrConflict)
				}
				return err
			}
		}
		return recordChange(ctx, tx, q.OrgID, service.Change{Type: "quote.created", ResourceID: q.ID, LocationID: &q.LocationID, Data: q})
	})
}

// GetQuote reads one of orgID's quotes.
func (s *Store) GetQuote(ctx context.Context, orgID, id uuid.UUID) (q service.Quote, err error) {
	defer wrap(&err, "get quote")
	rows, _ := s.db(ctx).Query(ctx, `SELECT `+quoteColumns+` FROM quotes WHERE org_id = $1 AND id = $2`, orgID, id)
	return pgx.CollectExactlyOneRow(rows, scanQuote)
}

// AcceptQuote implements service.Store. The quote row is locked first, so
// two accepts of one quote serialise and check judges the quote as it is
// when accepted; each stock row is decremented only where it holds enough
// (the CHECK constraint is a second guard).
func (s *Store) AcceptQuote(ctx context.Context, orgID, id uuid.UUID, now time.Time, check func(service.Quote) error) (q service.Quote, err error) {
	defer wrap(&err, "accept quote")
	err = s.inTx(ctx, func(tx pgx.Tx) error {
		rows, _ := tx.Query(ctx, `SELECT `+quoteColumns+` FROM quotes WHERE org_id = $1 AND id = $2 FOR UPDATE`, orgID, id)
		q, err = pgx.CollectExactlyOneRow(rows, scanQuote)
		if err != nil {
			return err
		}
		if err := check(q); err != nil {
			return err
		}
		for _, n := range q.StockNeeds {
			tag, err := tx.Exec(ctx, `UPDATE part_stock SET quantity = quantity - $5
			    WHERE org_id = $1 AND part_id = $2 AND location_id = $3 AND length_mm = $4 AND quantity >= $5`,
				orgID, n.PartID, n.LocationID, n.LengthMM, n.Quantity)
			if err != nil {
				return err
			}
			if tag.RowsAffected() != 1 {
				return fmt.Errorf("%w: part %s (length %.1f mm) at the build's location has fewer than %d", service.ErrStockShort, n.PartID, n.LengthMM, n.Quantity)
			}
			if _, err := tx.Exec(ctx, `UPDATE parts SET stock_version = stock_version + 1 WHERE org_id = $1 AND id = $2`, orgID, n.PartID); err != nil {
				return err
			}
			st, err := s.partStock(ctx, tx, orgID, n.PartID)
			if err != nil {
				return err
			}
			if err := recordChange(ctx, tx, orgID, service.Change{Type: "part.stock_changed", ResourceID: n.PartID, LocationID: &n.LocationID, Data: st}); err != nil {
				return err
			}
		}
		if _, err := setBuildStatus(ctx, tx, orgID, q.BuildID, service.BuildQuoted, service.BuildOrdered); err != nil {
			return fmt.Errorf("%w: the quote's build is no longer waiting for this quote", service.ErrConflict)
		}
		if err := tx.QueryRow(ctx, `UPDATE quotes SET status = 'accepted', accepted_at = $3 WHERE org_id = $1 AND id = $2 RETURNING accepted_at`,
			orgID, id, now).Scan(&q.AcceptedAt); err != nil {
			return err
		}
		q.Status = service.QuoteAccepted
		return recordChange(ctx, tx, orgID, service.Change{Type: "quote.accepted", ResourceID: q.ID, LocationID: &q.LocationID, Data: q})
	})
	return q, err
}
