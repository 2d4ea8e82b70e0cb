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
// and, in the same statement, to the webhook outbox of every endpoint
// subscribed to it.
func recordChange(ctx context.Context, q querier, orgID uuid.UUID, c service.Change) error {
	args, err := changeArgs(orgID, c)
	if err != nil {
		return err
	}
	_, err = q.Exec(ctx, changeStatement, args[:]...)
	return err
}

// changeInsert appends a change to the feed and, for every active endpoint
// of the organisation subscribed to its type (service.MatchesEvent's rule),
// queues a webhook delivery (the outbox), so that both commit with the
// change. Its parameters are changeArgs': $1 organisation, $2 type, $3
// resource, $4 location, $5 data, $6 occurred_at, $7 event id, $8 webhook
// body. A statement that writes something else too puts its own insert in
// front as another common table expression (createBuildStatement).
const changeInsert = `change AS (
	    INSERT INTO changes (org_id, type, resource_id, location_id, data, occurred_at) VALUES ($1, $2, $3, $4, $5, $6))
	  INSERT INTO webhook_deliveries (org_id, endpoint_id, event_id, type, body)
	  SELECT org_id, id, $7, $2, $8 FROM webhook_endpoints
	  WHERE org_id = $1 AND active
	    AND ($2 = ANY (events) OR split_part($2, '.', 1) || '.*' = ANY (events) OR '*' = ANY (events))`

// changeStatement is recordChange's statement.
const changeStatement = `WITH ` + changeInsert

// changeArgs are change c's parameters, in changeInsert's order.
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
// next is the cursor of the last row read, shown or left out.
func (s *Store) ListChanges(ctx context.Context, orgID uuid.UUID, q service.ChangeQuery) (cs []service.Change, next service.Cursor, err error) {
	defer wrap(&err, "list changes")
	next = q.After
	if q.After != (service.Cursor{}) {
		var expired bool
		const qh = `SELECT EXISTS (SELECT 1 FROM change_horizons WHERE org_id = $1 AND (txid, seq) > ($2::xid8, $3))`
		if err := s.db(ctx).QueryRow(ctx, qh, orgID, q.After.TxID, q.After.Seq).Scan(&expired); err != nil {
			return nil, next, err
		}
		if expired {
			return nil, next, service.ErrCursorExpired
		}
	}
	var resources []string
	if len(q.Resources) > 0 {
		resources = q.Resources
	}
	scan := q.Limit // every row read is shown
	if resources != nil || q.Location != nil {
		scan = max(q.Limit, FilteredFeedScan)
	}
	rows, _ := s.db(ctx).Query(ctx, listChangesQuery, orgID, q.After.TxID, q.After.Seq, resources, q.Limit, q.Location, scan)
	defer rows.Close()
	for rows.Next() {
		var c service.Change
		var shown bool
		var data json.RawMessage
		if err := rows.Scan(&c.Cursor.TxID, &c.Cursor.Seq, &shown, &c.Type, &c.ResourceID, &c.LocationID, &c.OccurredAt, &data); err != nil {
			return nil, next, err
		}
		next = c.Cursor
		if !shown {
			continue
		}
		if q.Location != nil && c.Type == "part.stock_changed" {
			if data, err = stockAt(data, *q.Location); err != nil {
				return nil, next, err
			}
		}
		c.Data = data
		cs = append(cs, c)
	}
	return cs, next, rows.Err()
}

// FilteredFeedScan bounds the rows one page of a filtered feed reads (a
// types filter, or a key held to one location): a page holds what those
// rows show, so its cost is set by the page, not by how far away the next
// change the filter lets through is.
const FilteredFeedScan = 1000

// stockAt is a stock change's data (a service.PartStock as recorded) with
// only the levels at location: what a key held to it may read.
func stockAt(data json.RawMessage, location uuid.UUID) (json.RawMessage, error) {
	var st service.PartStock
	if err := json.Unmarshal(data, &st); err != nil {
		return nil, fmt.Errorf("stored stock change: %w", err)
	}
	levels := make([]service.StockLevel, 0, len(st.Levels))
	for _, l := range st.Levels {
		if l.LocationID == location {
			levels = append(levels, l)
		}
	}
	st.Levels = levels
	return json.Marshal(st)
}

// listChangesQuery is ListChanges' statement. It selects, compares and
// orders by the xid8 column itself, qualified, so the order is the
// transaction counter's and the primary key (org_id, txid, seq) gives it
// without a sort. pgx decodes xid8 into a uint64 and encodes one back, so
// no text round trip is needed. (It once selected txid::text under the
// name txid: a bare ORDER BY txid then sorted the text, so 10000 came
// before 9999 and a page boundary there skipped changes for good.)
//
// The inner query reads at most $7 rows in key order and judges each
// (shown): $4 filters by resource; $6, when set, is the location a key is
// held to, which leaves out the changes of the organisation's other
// locations (their builds, quotes, audits, stock taken by their quotes,
// the location records themselves) and keeps changes of no location (the
// catalog, stock set for several locations, calibrations) and of tools
// (every key reads every tool). The window counts the shown rows; its run
// condition (n <= $5) stops the scan at the first shown row past the
// page, so an unfiltered or dense page reads $5 rows and a sparse one at
// most $7. Rows left out come back with shown false and no data: their
// cursors still move the page's next_cursor past them.
const listChangesQuery = `SELECT p.txid, p.seq, p.shown, p.type, p.resource_id, p.location_id, p.occurred_at,
	    CASE WHEN p.shown THEN p.data END
	  FROM (SELECT r.*, count(*) FILTER (WHERE r.shown) OVER (ORDER BY r.txid, r.seq ROWS UNBOUNDED PRECEDING) AS n
	        FROM (SELECT c.txid, c.seq, c.type, c.resource_id, c.location_id, c.occurred_at, c.data,
	                     ($4::text[] IS NULL OR split_part(c.type, '.', 1) = ANY ($4))
	                     AND ($6::uuid IS NULL OR c.location_id IS NULL OR c.location_id = $6
	                          OR split_part(c.type, '.', 1) IN ('tool', 'calibration')) AS shown
	              FROM changes c
	              WHERE c.org_id = $1 AND (c.txid, c.seq) > ($2::xid8, $3)
	                AND c.txid < pg_snapshot_xmin(pg_current_snapshot())
	              ORDER BY c.txid, c.seq LIMIT $7) r) p
	  WHERE p.n <= $5
	  ORDER BY p.txid, p.seq`

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
