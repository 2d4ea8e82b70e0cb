// Package service holds wheelbench's use cases and domain types: what a shop
// can ask and store, independent of HTTP and SQL. It owns the Store interface
// it needs and the sentinel errors the HTTP layer maps to statuses.
//
// It must not import echo, pgx, net/http, api, store or cmd; its pure
// subpackages (spoke, geometry, tension, fit, quote) import only the
// standard library and gonum.
package service

import (
	"log/slog"
	"time"
)

// Service carries the dependencies of every use case.
type Service struct {
	store Store
	log   *slog.Logger
	now   func() time.Time
	keys  *keyCache
	// locations caches build creation's location reads (loccache.go).
	locations *locationCache
	// webhooks are the process's webhook settings (ConfigureWebhooks).
	webhooks WebhookSettings
}

// New returns a Service over st.
func New(st Store, log *slog.Logger) *Service {
	if log == nil {
		log = slog.New(slog.DiscardHandler)
	}
	return &Service{store: st, log: log, now: time.Now, keys: newKeyCache(5 * time.Second), locations: newLocationCache(2 * time.Second)}
}
