package store

import (
	"context"
	"encoding/json"
	"fmt"
	"time"

	"github.com/google/uuid"
	"github.com/jackc/pgx/v5"
	"github.com/jackc/pgx/v5/pgtype"

	"wheelbench/service"
)

// recordChange appends c to the feed on q — the transaction of the change —
// and, in the same transaction, to the webhook outbox of every endpoint
// subscribed to it.
func recordChange(ctx context.Context, q querier, orgID uuid.UUID, c service.Change) error {
	sql, args, err := changeStatement(orgID, c)
	if err != nil {
		return err
	}
	_, err = q.Exec(ctx, sql, args...)
	return err
}

// changeStatement is the one statement that appends change c to the feed
// and, for every active endpoint of the organisation subscribed to its
// type, queues a webhook delivery (the outbox), so that both commit with
// the change. Run it with recordChange, or queue it in a pgx.Batch.
func changeStatement(orgID uuid.UUID, c service.Change) (string, []any, error) {
	args, err := changeArgs(orgID, c)
	if err != nil {
		return "", nil, err
	}
	return changeQuery, args[:], nil
}

// changeParams numbers a change statement's parameters: organisation,
// type, resource, location, data, occurred_at, event id, webhook body (the
// order of changeArgs).
type changeParams [8]int

// changeQuery is changeStatement's statement.
var changeQuery = changeSQL("", changeParams{1, 2, 3, 4, 5, 6, 7, 8})

// changeSQL writes the change statement with its parameters numbered by p,
// after the common table expressions in with (each "name AS (...), "), so
// that another insert can go in the same statement.
func changeSQL(with string, p changeParams) string {
	return fmt.Sprintf(`WITH %schange AS (
	    INSERT INTO changes (org_id, type, resource_id, location_id, data, occurred_at) VALUES ($%[2]d, $%[3]d, $%[4]d, $%[5]d, $%[6]d, $%[7]d))
	  INSERT INTO webhook_deliveries (org_id, endpoint_id, event_id, type, body)
	  SELECT org_id, id, $%[8]d, $%[3]d, $%[9]d FROM webhook_endpoints
	  WHERE org_id = $%[2]d AND active
	    AND ($%[3]d = ANY (events) OR split_part($%[3]d, '.', 1) || '.*' = ANY (events) OR '*' = ANY (events))`,
		with, p[0], p[1], p[2], p[3], p[4], p[5], p[6], p[7])
}

// changeArgs are change c's parameters, in changeParams' order.
func changeArgs(orgID uuid.UUID, c service.Change) ([8]any, error) {
	data, err := json.Marshal(c.Data)
	if err != nil {
		return [8]any{}, err
	}
	// Microseconds: what timestamptz keeps, so feed and webhook agree.
	at := time.Now().UTC().Truncate(time.Microsecond)
	id, err := service.NewWebhookEventID()
	if err != nil {
		return [8]any{}, err
	}
	body, err := json.Marshal(service.WebhookEvent{ID: id, Type: c.Type, OccurredAt: at,
		ResourceID: c.ResourceID, LocationID: c.LocationID, Data: data})
	if err != nil {
		return [8]any{}, err
	}
	// UUIDs as [16]byte and pgtype.UUID: see CreateBuild.
	loc := pgtype.UUID{}
	if c.LocationID != nil {
		loc = pgtype.UUID{Bytes: *c.LocationID, Valid: true}
	}
	return [8]any{[16]byte(orgID), c.Type, [16]byte(c.ResourceID), loc, data, at, id, body}, nil
}

// ListChanges implements service.Store. Rows are served in (txid, seq)
// order and only from transactions below the snapshot's xmin: every such
// transaction has ended, so no row can later appear before the cursor.
func (s *Store) ListChanges(ctx context.Context, orgID uuid.UUID, q service.ChangeQuery) (cs []service.Change, err error) {
	defer wrap(&err, "list changes")
	if q.After != (service.Cursor{}) {
		var expired bool
		const qh = `SELECT EXISTS (SELECT 1 FROM change_horizons WHERE org_id = $1 AND (txid, seq) > ($2::xid8, $3))`
		if err := s.db(ctx).QueryRow(ctx, qh, orgID, q.After.TxID, q.After.Seq).Scan(&expired); err != nil {
			return nil, err
		}
		if expired {
			return nil, service.ErrCursorExpired
		}
	}
	var resources []string
	if len(q.Resources) > 0 {
		resources = q.Resources
	}
	rows, _ := s.db(ctx).Query(ctx, listChangesQuery, orgID, q.After.TxID, q.After.Seq, resources, q.Limit)
	return pgx.CollectRows(rows, func(row pgx.CollectableRow) (service.Change, error) {
		var c service.Change
		var data json.RawMessage
		err := row.Scan(&c.Cursor.TxID, &c.Cursor.Seq, &c.Type, &c.ResourceID, &c.LocationID, &c.OccurredAt, &data)
		c.Data = data
		return c, err
	})
}

// listChangesQuery is ListChanges' statement. It selects, compares and
// orders by the xid8 column itself, qualified, so the order is the
// transaction counter's and the primary key (org_id, txid, seq) gives it
// without a sort. pgx decodes xid8 into a uint64 and encodes one back, so
// no text round trip is needed. (It once selected txid::text under the
// name txid: a bare ORDER BY txid then sorted the text, so 10000 came
// before 9999 and a page boundary there skipped changes for good.)
const listChangesQuery = `SELECT c.txid, c.seq, c.type, c.resource_id, c.location_id, c.occurred_at, c.data FROM changes c
	  WHERE c.org_id = $1 AND (c.txid, c.seq) > ($2::xid8, $3)
	    AND c.txid < pg_snapshot_xmin(pg_current_snapshot())
	    AND ($4::text[] IS NULL OR split_part(c.type, '.', 1) = ANY ($4))
	  ORDER BY c.txid, c.seq LIMIT $5`

// PruneChanges deletes each organisation's changes older than the
// retention and moves its horizon, so older cursors get 410.
func (s *Store) PruneChanges(ctx context.Context, olderThanSeconds int64) (n int64, err error) {
	defer wrap(&err, "prune changes")
	err = s.inTx(ctx, func(tx pgx.Tx) error {
		const q = `WITH gone AS (
		    DELETE FROM changes WHERE occurred_at < now() - make_interval(secs => $1)
		    RETURNING org_id, txid, seq),
		  last AS (SELECT DISTINCT ON (org_id) org_id, txid, seq FROM gone ORDER BY org_id, txid DESC, seq DESC),
		  moved AS (
		    INSERT INTO change_horizons (org_id, txid, seq) SELECT org_id, txid, seq FROM last
		    ON CONFLICT (org_id) DO UPDATE SET txid = EXCLUDED.txid, seq = EXCLUDED.seq
		      WHERE (change_horizons.txid, change_horizons.seq) < (EXCLUDED.txid, EXCLUDED.seq)
		    RETURNING 1)
		  SELECT count(*) FROM gone`
		return tx.QueryRow(ctx, q, olderThanSeconds).Scan(&n)
	})
	return n, err
}
