package store

import (
	"context"
	"errors"
	"time"

	"github.com/google/uuid"
	"github.com/jackc/pgx/v5"

	"wheelbench/service"
	"wheelbench/service/background"
)

const endpointColumns = `org_id, id, url, events, description, active, disabled_reason, version, created_at, updated_at`

func scanEndpoint(row pgx.CollectableRow) (service.WebhookEndpoint, error) {
	var e service.WebhookEndpoint
	err := row.Scan(&e.OrgID, &e.ID, &e.URL, &e.Events, &e.Description, &e.Active, &e.DisabledReason, &e.Version, &e.CreatedAt, &e.UpdatedAt)
	return e, err
}

// CreateWebhookEndpoint inserts e with its secret.
func (s *Store) CreateWebhookEndpoint(ctx context.Context, e service.WebhookEndpoint) (err error) {
	defer wrap(&err, "create webhook endpoint")
	const q = `INSERT INTO webhook_endpoints (org_id, id, url, events, description, active, secret, version, created_at, updated_at)
	  VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10)`
	_, err = s.db(ctx).Exec(ctx, q, e.OrgID, e.ID, e.URL, e.Events, e.Description, e.Active, e.Secret, e.Version, e.CreatedAt, e.UpdatedAt)
	return err
}

// GetWebhookEndpoint reads one of orgID's endpoints, without its secret.
func (s *Store) GetWebhookEndpoint(ctx context.Context, orgID, id uuid.UUID) (e service.WebhookEndpoint, err error) {
	defer wrap(&err, "get webhook endpoint")
	rows, _ := s.db(ctx).Query(ctx, `SELECT `+endpointColumns+` FROM webhook_endpoints WHERE org_id = $1 AND id = $2`, orgID, id)
	return pgx.CollectExactlyOneRow(rows, scanEndpoint)
}

// ListWebhookEndpoints lists orgID's endpoints by id (creation order),
// without their secrets.
func (s *Store) ListWebhookEndpoints(ctx context.Context, orgID uuid.UUID, p service.Page) (es []service.WebhookEndpoint, err error) {
	defer wrap(&err, "list webhook endpoints")
	const q = `SELECT ` + endpointColumns + ` FROM webhook_endpoints WHERE org_id = $1 AND id > $2 ORDER BY id LIMIT $3`
	rows, _ := s.db(ctx).Query(ctx, q, orgID, p.After, p.Limit)
	return pgx.CollectRows(rows, scanEndpoint)
}

// UpdateWebhookEndpoint applies p when the endpoint is still at version.
func (s *Store) UpdateWebhookEndpoint(ctx context.Context, orgID, id uuid.UUID, version int64, p service.WebhookEndpointPatch) (e service.WebhookEndpoint, err error) {
	defer wrap(&err, "update webhook endpoint")
	const q = `UPDATE webhook_endpoints SET
	    url = COALESCE($4, url),
	    events = CASE WHEN $5 THEN $6::text[] ELSE events END,
	    description = COALESCE($7, description),
	    active = COALESCE($8, active),
	    disabled_reason = CASE WHEN $8 IS TRUE THEN '' ELSE disabled_reason END,
	    version = version + 1, updated_at = now()
	  WHERE org_id = $1 AND id = $2 AND version = $3
	  RETURNING ` + endpointColumns
	const cancel = `UPDATE webhook_deliveries SET status = 'cancelled', finished_at = now(),
	    last_error = 'the endpoint was switched off'
	  WHERE org_id = $1 AND endpoint_id = $2 AND status = 'pending'`
	err = s.inTx(ctx, func(tx pgx.Tx) error {
		rows, _ := tx.Query(ctx, q, orgID, id, version, p.URL, p.Events != nil, p.Events, p.Description, p.Active)
		e, err = pgx.CollectExactlyOneRow(rows, scanEndpoint)
		if errors.Is(err, pgx.ErrNoRows) {
			return service.ErrPreconditionFailed
		}
		if err != nil {
			return err
		}
		if !e.Active {
			_, err = tx.Exec(ctx, cancel, orgID, id)
		}
		return err
	})
	return e, err
}

// DeleteWebhookEndpoint removes the endpoint; its deliveries go with it
// (ON DELETE CASCADE).
func (s *Store) DeleteWebhookEndpoint(ctx context.Context, orgID, id uuid.UUID) (err error) {
	defer wrap(&err, "delete webhook endpoint")
	tag, err := s.db(ctx).Exec(ctx, `DELETE FROM webhook_endpoints WHERE org_id = $1 AND id = $2`, orgID, id)
	if err == nil && tag.RowsAffected() == 0 {
		err = pgx.ErrNoRows
	}
	return err
}

// ClaimWebhookDeliveries implements service.Store in one statement, so one
// short transaction: due pending rows of active endpoints, oldest due
// first, locked with SKIP LOCKED so concurrent claimers take disjoint rows,
// get their attempt counted and next_attempt_at moved lease ahead (the
// lease). Due-ness and leases use the database's clock, one for every
// replica.
func (s *Store) ClaimWebhookDeliveries(ctx context.Context, n int, lease time.Duration) (ds []background.Delivery, err error) {
	defer wrap(&err, "claim webhook deliveries")
	const q = `WITH due AS (
	    SELECT d.id FROM webhook_deliveries d
	    JOIN webhook_endpoints e ON e.org_id = d.org_id AND e.id = d.endpoint_id
	    WHERE d.status = 'pending' AND d.next_attempt_at <= now() AND e.active
	    ORDER BY d.next_attempt_at, d.id
	    LIMIT $1
	    FOR UPDATE OF d SKIP LOCKED)
	  UPDATE webhook_deliveries d SET attempts = d.attempts + 1, last_attempt_at = now(),
	      next_attempt_at = now() + make_interval(secs => $2)
	  FROM due, webhook_endpoints e
	  WHERE d.id = due.id AND e.org_id = d.org_id AND e.id = d.endpoint_id
	  RETURNING d.id, d.org_id, d.endpoint_id, d.event_id, d.type, d.body, d.attempts, e.url, e.secret`
	rows, _ := s.pool.Query(ctx, q, n, lease.Seconds())
	return pgx.CollectRows(rows, func(row pgx.CollectableRow) (background.Delivery, error) {
		var d background.Delivery
		err := row.Scan(&d.ID, &d.OrgID, &d.EndpointID, &d.EventID, &d.Type, &d.Body, &d.Attempt, &d.URL, &d.Secret)
		return d, err
	})
}

// FinishWebhookDelivery implements service.Store. Every update is fenced
// by (status pending, attempts = the claim's attempt), so the outcome of a
// claim whose lease ran out and was taken over is dropped.
func (s *Store) FinishWebhookDelivery(ctx context.Context, r background.Result) (recorded bool, err error) {
	defer wrap(&err, "finish webhook delivery")
	d := r.Delivery
	const fence = ` WHERE id = $1 AND attempts = $2 AND status = 'pending'`
	switch r.Outcome {
	case background.OutcomeDelivered:
		const q = `UPDATE webhook_deliveries SET status = 'delivered', finished_at = now(), last_status = $3, last_error = ''` + fence
		tag, err := s.pool.Exec(ctx, q, d.ID, d.Attempt, r.Status)
		return tag.RowsAffected() == 1, err
	case background.OutcomeRetry:
		const q = `UPDATE webhook_deliveries SET next_attempt_at = now() + make_interval(secs => $5),
		    last_status = nullif($3, 0), last_error = $4` + fence
		tag, err := s.pool.Exec(ctx, q, d.ID, d.Attempt, r.Status, r.Error, r.RetryIn.Seconds())
		return tag.RowsAffected() == 1, err
	case background.OutcomeFailed:
		const q = `UPDATE webhook_deliveries SET status = 'failed', finished_at = now(),
		    last_status = nullif($3, 0), last_error = $4` + fence
		tag, err := s.pool.Exec(ctx, q, d.ID, d.Attempt, r.Status, r.Error)
		return tag.RowsAffected() == 1, err
	case background.OutcomeGone:
		err = s.inTx(ctx, func(tx pgx.Tx) error {
			const q = `UPDATE webhook_deliveries SET status = 'failed', finished_at = now(), last_status = 410,
			    last_error = 'the receiver answered 410 Gone'` + fence
			tag, err := tx.Exec(ctx, q, d.ID, d.Attempt)
			if err != nil || tag.RowsAffected() != 1 {
				return err
			}
			recorded = true
			const off = `UPDATE webhook_endpoints SET active = false, disabled_reason = $3, version = version + 1, updated_at = now()
			  WHERE org_id = $1 AND id = $2 AND active`
			if _, err := tx.Exec(ctx, off, d.OrgID, d.EndpointID, service.DisabledGone); err != nil {
				return err
			}
			const cancel = `UPDATE webhook_deliveries SET status = 'cancelled', finished_at = now(),
			    last_error = 'the endpoint was disabled: its receiver answered 410 Gone'
			  WHERE org_id = $1 AND endpoint_id = $2 AND status = 'pending'`
			_, err = tx.Exec(ctx, cancel, d.OrgID, d.EndpointID)
			return err
		})
		return recorded, err
	}
	return false, errors.New("unknown outcome " + string(r.Outcome))
}

// ReleaseWebhookDeliveries implements service.Store.
func (s *Store) ReleaseWebhookDeliveries(ctx context.Context, ds []background.Delivery) (err error) {
	defer wrap(&err, "release webhook deliveries")
	ids := make([]int64, len(ds))
	attempts := make([]int32, len(ds))
	for i, d := range ds {
		ids[i], attempts[i] = d.ID, int32(d.Attempt)
	}
	const q = `UPDATE webhook_deliveries d SET attempts = d.attempts - 1, next_attempt_at = now()
	  FROM unnest($1::bigint[], $2::int[]) AS r(id, attempt)
	  WHERE d.id = r.id AND d.attempts = r.attempt AND d.status = 'pending'`
	_, err = s.pool.Exec(ctx, q, ids, attempts)
	return err
}
