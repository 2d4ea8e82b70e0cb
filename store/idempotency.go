package store

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/binary"
	"encoding/json"
	"errors"
	"time"

	"github.com/google/uuid"
	"github.com/jackc/pgx/v5"

	"wheelbench/service"
)

// RunIdempotent implements service.Store. One transaction holds a
// transaction-scoped advisory lock on (organisation, key) — a concurrent
// request with the same key finds it taken and gets ErrIdempotencyInFlight —
// then either replays the stored record or runs fn inside a savepoint and
// stores fn's response beside what fn wrote. A 4xx response rolls fn's
// writes back but is stored; a 5xx rolls everything back and stores nothing.
func (s *Store) RunIdempotent(ctx context.Context, orgID uuid.UUID, req service.IdempotentRequest, expires time.Time,
	fn func(ctx context.Context) (service.StoredResponse, error)) (resp service.StoredResponse, replayed bool, err error) {
	defer wrap(&err, "idempotent request")
	h := sha256.Sum256(append(orgID[:], req.Key...))
	lockKey := int64(binary.BigEndian.Uint64(h[:8]))

	tx, err := s.pool.Begin(ctx)
	if err != nil {
		return resp, false, err
	}
	defer tx.Rollback(context.WithoutCancel(ctx)) //nolint:errcheck // after Commit it is a no-op

	var locked bool
	if err := tx.QueryRow(ctx, `SELECT pg_try_advisory_xact_lock($1)`, lockKey).Scan(&locked); err != nil {
		return resp, false, err
	}
	if !locked {
		return resp, false, service.ErrIdempotencyInFlight
	}
	const qGet = `SELECT fingerprint, status, headers, body FROM idempotency_keys
	              WHERE org_id = $1 AND key = $2 AND expires_at > now()`
	var fp, body, hdr []byte
	var status int
	err = tx.QueryRow(ctx, qGet, orgID, req.Key).Scan(&fp, &status, &hdr, &body)
	switch {
	case err == nil:
		if !bytes.Equal(fp, req.Fingerprint) {
			return resp, false, service.ErrIdempotencyMismatch
		}
		resp = service.StoredResponse{Status: status, Body: body}
		if err := json.Unmarshal(hdr, &resp.Headers); err != nil {
			return resp, false, err
		}
		return resp, true, tx.Commit(ctx)
	case !errors.Is(err, pgx.ErrNoRows):
		return resp, false, err
	}
	if _, err := tx.Exec(ctx, `DELETE FROM idempotency_keys WHERE org_id = $1 AND key = $2`, orgID, req.Key); err != nil {
		return resp, false, err
	}

	sp, err := tx.Begin(ctx)
	if err != nil {
		return resp, false, err
	}
	resp, err = fn(context.WithValue(ctx, txKey{}, sp))
	if err != nil {
		return resp, false, err
	}
	if resp.Status >= 500 {
		return resp, false, nil // rolled back by the deferred Rollback
	}
	if resp.Status >= 400 {
		err = sp.Rollback(ctx)
	} else {
		err = sp.Commit(ctx)
	}
	if err != nil {
		return resp, false, err
	}
	hdr, err = json.Marshal(resp.Headers)
	if err != nil {
		return resp, false, err
	}
	const qPut = `INSERT INTO idempotency_keys (org_id, key, fingerprint, status, headers, body, expires_at)
	              VALUES ($1, $2, $3, $4, $5, $6, $7)`
	if _, err := tx.Exec(ctx, qPut, orgID, req.Key, req.Fingerprint, resp.Status, hdr, resp.Body, expires); err != nil {
		return resp, false, err
	}
	return resp, false, tx.Commit(ctx)
}

// PruneIdempotencyKeys deletes expired records.
func (s *Store) PruneIdempotencyKeys(ctx context.Context) (n int64, err error) {
	defer wrap(&err, "prune idempotency keys")
	tag, err := s.pool.Exec(ctx, `DELETE FROM idempotency_keys WHERE expires_at <= now()`)
	return tag.RowsAffected(), err
}
