package background

import (
	"context"
	"log/slog"
	"time"
)

// Retention says how long kept records live. Idempotency keys live
// IdempotencyTTL (24 h) and are ignored once expired; the janitor deletes
// them later.
type Retention struct {
	// Changes: change-feed rows older than this are pruned; a cursor from
	// before the pruned horizon gets 410 (resync from the resources).
	Changes time.Duration
	// Deliveries: finished webhook deliveries older than this are pruned.
	Deliveries time.Duration
	// Every is how often the janitor runs.
	Every time.Duration
}

// DefaultRetention keeps the feed 30 days and finished deliveries 7.
var DefaultRetention = Retention{Changes: 30 * 24 * time.Hour, Deliveries: 7 * 24 * time.Hour, Every: 10 * time.Minute}

// Pruner is what the janitor needs from the store.
type Pruner interface {
	PruneIdempotencyKeys(ctx context.Context) (int64, error)
	PruneChanges(ctx context.Context, olderThanSeconds int64) (int64, error)
	PruneWebhookDeliveries(ctx context.Context, olderThanSeconds int64) (int64, error)
}

// RunJanitor prunes expired records every r.Every until ctx ends. Every
// replica may run it: each prune is one idempotent statement.
func RunJanitor(ctx context.Context, p Pruner, r Retention, log *slog.Logger) {
	if r.Every <= 0 {
		r.Every = DefaultRetention.Every
	}
	t := time.NewTicker(r.Every)
	defer t.Stop()
	for {
		PruneOnce(ctx, p, r, log)
		select {
		case <-ctx.Done():
			return
		case <-t.C:
		}
	}
}

// PruneOnce runs each prune once, logging what it removed.
func PruneOnce(ctx context.Context, p Pruner, r Retention, log *slog.Logger) {
	if log == nil {
		log = slog.New(slog.DiscardHandler)
	}
	for _, job := range []struct {
		name string
		run  func() (int64, error)
	}{
		{"idempotency_keys", func() (int64, error) { return p.PruneIdempotencyKeys(ctx) }},
		{"changes", func() (int64, error) { return p.PruneChanges(ctx, int64(r.Changes.Seconds())) }},
		{"webhook_deliveries", func() (int64, error) { return p.PruneWebhookDeliveries(ctx, int64(r.Deliveries.Seconds())) }},
	} {
		n, err := job.run()
		if err != nil {
			if ctx.Err() == nil {
				log.Warn("prune failed", slog.String("what", job.name), slog.String("error", err.Error()))
			}
			continue
		}
		if n > 0 {
			log.Info("pruned", slog.String("what", job.name), slog.Int64("rows", n))
		}
	}
}
