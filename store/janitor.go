package store

import (
	"context"
)

// PruneWebhookDeliveries deletes finished deliveries (delivered, failed,
// cancelled) older than the given number of seconds.
func (s *Store) PruneWebhookDeliveries(ctx context.Context, olderThanSeconds int64) (n int64, err error) {
	defer wrap(&err, "prune webhook deliveries")
	tag, err := s.pool.Exec(ctx, `DELETE FROM webhook_deliveries
	    WHERE status <> 'pending' AND created_at < now() - make_interval(secs => $1)`, olderThanSeconds)
	return tag.RowsAffected(), err
}
