package store

import (
	"context"

	"github.com/google/uuid"
	"github.com/jackc/pgx/v5"

	"wheelbench/service"
)

const keyColumns = `k.org_id, k.id, k.location_id, k.role, k.name, k.prefix, k.hash, k.created_at, k.revoked_at`

func scanKey(row pgx.CollectableRow) (service.APIKey, error) {
	var k service.APIKey
	var role string
	err := row.Scan(&k.OrgID, &k.ID, &k.LocationID, &role, &k.Name, &k.Prefix, &k.Hash, &k.CreatedAt, &k.RevokedAt)
	k.Role = service.Role(role)
	return k, err
}

// CreateAPIKey inserts k.
func (s *Store) CreateAPIKey(ctx context.Context, k service.APIKey) (err error) {
	defer wrap(&err, "create api key")
	const q = `INSERT INTO api_keys (org_id, id, location_id, role, name, prefix, hash, created_at)
	           VALUES ($1, $2, $3, $4, $5, $6, $7, $8)`
	_, err = s.db(ctx).Exec(ctx, q, k.OrgID, k.ID, k.LocationID, string(k.Role), k.Name, k.Prefix, k.Hash, k.CreatedAt)
	return err
}

// APIKeyByPrefix finds a key by its display prefix, with its organisation.
func (s *Store) APIKeyByPrefix(ctx context.Context, prefix string) (k service.APIKey, o service.Organisation, err error) {
	defer wrap(&err, "api key by prefix")
	const q = `SELECT ` + keyColumns + `, o.name FROM api_keys k JOIN organisations o ON o.id = k.org_id WHERE k.prefix = $1`
	var role string
	err = s.db(ctx).QueryRow(ctx, q, prefix).Scan(&k.OrgID, &k.ID, &k.LocationID, &role, &k.Name, &k.Prefix, &k.Hash, &k.CreatedAt, &k.RevokedAt, &o.Name)
	k.Role = service.Role(role)
	o.ID = k.OrgID
	return k, o, err
}

// ListAPIKeys lists orgID's keys by id.
func (s *Store) ListAPIKeys(ctx context.Context, orgID uuid.UUID, p service.Page) (ks []service.APIKey, err error) {
	defer wrap(&err, "list api keys")
	const q = `SELECT ` + keyColumns + ` FROM api_keys k WHERE k.org_id = $1 AND k.id > $2 ORDER BY k.id LIMIT $3`
	rows, _ := s.db(ctx).Query(ctx, q, orgID, p.After, p.Limit)
	return pgx.CollectRows(rows, scanKey)
}

// RevokeAPIKey marks one of orgID's keys revoked (idempotent).
func (s *Store) RevokeAPIKey(ctx context.Context, orgID, id uuid.UUID) (k service.APIKey, err error) {
	defer wrap(&err, "revoke api key")
	const q = `UPDATE api_keys k SET revoked_at = COALESCE(revoked_at, now())
	           WHERE k.org_id = $1 AND k.id = $2 RETURNING ` + keyColumns
	rows, _ := s.db(ctx).Query(ctx, q, orgID, id)
	return pgx.CollectExactlyOneRow(rows, scanKey)
}

// RevokeAPIKeyByPrefix marks the key with the prefix revoked.
func (s *Store) RevokeAPIKeyByPrefix(ctx context.Context, prefix string) (k service.APIKey, err error) {
	defer wrap(&err, "revoke api key")
	const q = `UPDATE api_keys k SET revoked_at = COALESCE(revoked_at, now())
	           WHERE k.prefix = $1 RETURNING ` + keyColumns
	rows, _ := s.db(ctx).Query(ctx, q, prefix)
	return pgx.CollectExactlyOneRow(rows, scanKey)
}
