package service

import (
	"context"
	"crypto/rand"
	"crypto/sha256"
	"crypto/subtle"
	"encoding/base32"
	"encoding/base64"
	"errors"
	"fmt"
	"strings"
	"sync"
	"time"

	"github.com/google/uuid"

	"wheelbench/service/field"
)

// Key format: "wbk_" + 10 lower-case base32 characters (the display prefix,
// unique) + "_" + 43 base64url characters (32 random bytes). Only the SHA-256
// of the whole key and the prefix are stored.
const keyScheme = "wbk_"

var prefixEncoding = base32.StdEncoding.WithPadding(base32.NoPadding)

// NewKeyInput is what creating a key takes.
type NewKeyInput struct {
	Name       string     `json:"name"`
	Role       Role       `json:"role"`
	LocationID *uuid.UUID `json:"location_id"`
}

// CreatedKey is a new key with its secret, shown once.
type CreatedKey struct {
	APIKey
	Secret string
}

func hashKey(secret string) []byte {
	h := sha256.Sum256([]byte(secret))
	return h[:]
}

func generateKey() (prefix, secret string, err error) {
	var p [6]byte
	var s [32]byte
	if _, err := rand.Read(p[:]); err != nil {
		return "", "", err
	}
	if _, err := rand.Read(s[:]); err != nil {
		return "", "", err
	}
	prefix = keyScheme + strings.ToLower(prefixEncoding.EncodeToString(p[:]))[:10]
	return prefix, prefix + "_" + base64.RawURLEncoding.EncodeToString(s[:]), nil
}

// splitKey returns the prefix of a well-formed key.
func splitKey(secret string) (string, bool) {
	if !strings.HasPrefix(secret, keyScheme) || len(secret) != len(keyScheme)+10+1+43 {
		return "", false
	}
	prefix := secret[:len(keyScheme)+10]
	if secret[len(prefix)] != '_' {
		return "", false
	}
	if _, err := base64.RawURLEncoding.DecodeString(secret[len(prefix)+1:]); err != nil {
		return "", false
	}
	return prefix, true
}

// CreateAPIKey mints a key in orgID. Only an admin may call it through the API;
// the admin command calls it directly.
func (s *Service) CreateAPIKey(ctx context.Context, orgID uuid.UUID, in NewKeyInput) (CreatedKey, error) {
	if !in.Role.Valid() {
		return CreatedKey{}, fmt.Errorf("%w", field.Invalid("/role", "role must be read, write or admin"))
	}
	if len(in.Name) > 200 {
		return CreatedKey{}, field.Invalid("/name", "name must be at most 200 characters")
	}
	if in.LocationID != nil {
		if _, err := s.store.GetLocation(ctx, orgID, *in.LocationID); err != nil {
			if errors.Is(err, ErrNotFound) {
				return CreatedKey{}, field.Unprocessable("/location_id", "no such location in this organisation")
			}
			return CreatedKey{}, err
		}
	}
	prefix, secret, err := generateKey()
	if err != nil {
		return CreatedKey{}, err
	}
	id, err := uuid.NewV7()
	if err != nil {
		return CreatedKey{}, err
	}
	k := APIKey{
		ID: id, OrgID: orgID, LocationID: in.LocationID, Role: in.Role, Name: in.Name,
		Prefix: prefix, Hash: hashKey(secret), CreatedAt: s.now().UTC(),
	}
	if err := s.store.CreateAPIKey(ctx, k); err != nil {
		return CreatedKey{}, fmt.Errorf("create api key: %w", err)
	}
	return CreatedKey{APIKey: k, Secret: secret}, nil
}

// ListAPIKeys lists the organisation's keys, newest last.
func (s *Service) ListAPIKeys(ctx context.Context, p Principal, page Page) ([]APIKey, error) {
	return s.store.ListAPIKeys(ctx, p.OrgID, page)
}

// RevokeAPIKey revokes one of the organisation's keys at once.
func (s *Service) RevokeAPIKey(ctx context.Context, p Principal, id uuid.UUID) (APIKey, error) {
	k, err := s.store.RevokeAPIKey(ctx, p.OrgID, id)
	if err != nil {
		return APIKey{}, err
	}
	s.keys.forget(k.Prefix)
	return k, nil
}

// RevokeAPIKeyByPrefix revokes the key with the display prefix, in any
// organisation (the admin command).
func (s *Service) RevokeAPIKeyByPrefix(ctx context.Context, prefix string) (APIKey, error) {
	k, err := s.store.RevokeAPIKeyByPrefix(ctx, prefix)
	if err != nil {
		return APIKey{}, err
	}
	s.keys.forget(k.Prefix)
	return k, nil
}

// Authenticate resolves a bearer secret to its principal. Unknown, malformed
// and revoked keys are ErrUnauthenticated. Successful look-ups are cached
// for a few seconds so that a request costs no database round trip; a key
// revoked through this process is dropped from the cache at once, one
// revoked through another replica stops working within the cache's TTL.
func (s *Service) Authenticate(ctx context.Context, secret string) (Principal, error) {
	prefix, ok := splitKey(secret)
	if !ok {
		return Principal{}, fmt.Errorf("%w: malformed API key", ErrUnauthenticated)
	}
	hash := hashKey(secret)
	if p, ok := s.keys.get(prefix, hash, s.now()); ok {
		return p, nil
	}
	k, org, err := s.store.APIKeyByPrefix(ctx, prefix)
	if errors.Is(err, ErrNotFound) {
		return Principal{}, fmt.Errorf("%w: unknown API key", ErrUnauthenticated)
	}
	if err != nil {
		return Principal{}, err
	}
	if subtle.ConstantTimeCompare(k.Hash, hash) != 1 {
		return Principal{}, fmt.Errorf("%w: unknown API key", ErrUnauthenticated)
	}
	if k.RevokedAt != nil {
		return Principal{}, fmt.Errorf("%w: API key revoked", ErrUnauthenticated)
	}
	p := Principal{OrgID: k.OrgID, OrgName: org.Name, KeyID: k.ID, LocationID: k.LocationID, Role: k.Role}
	s.keys.put(prefix, hash, p, s.now())
	return p, nil
}

// keyCache remembers authenticated keys for a short time.
type keyCache struct {
	ttl time.Duration
	mu  sync.Mutex
	m   map[string]cachedKey
}

type cachedKey struct {
	hash    []byte
	p       Principal
	expires time.Time
}

func newKeyCache(ttl time.Duration) *keyCache {
	return &keyCache{ttl: ttl, m: make(map[string]cachedKey)}
}

func (c *keyCache) get(prefix string, hash []byte, now time.Time) (Principal, bool) {
	c.mu.Lock()
	e, ok := c.m[prefix]
	c.mu.Unlock()
	if !ok || now.After(e.expires) || subtle.ConstantTimeCompare(e.hash, hash) != 1 {
		return Principal{}, false
	}
	return e.p, true
}

func (c *keyCache) put(prefix string, hash []byte, p Principal, now time.Time) {
	c.mu.Lock()
	defer c.mu.Unlock()
	if len(c.m) > 10000 {
		for k, e := range c.m {
			if now.After(e.expires) {
				delete(c.m, k)
			}
		}
	}
	c.m[prefix] = cachedKey{hash: hash, p: p, expires: now.Add(c.ttl)}
}

func (c *keyCache) forget(prefix string) {
	c.mu.Lock()
	delete(c.m, prefix)
	c.mu.Unlock()
}
