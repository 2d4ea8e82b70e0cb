package service

import (
	"context"
	"errors"
	"fmt"
	"strings"
	"sync"
	"time"

	"github.com/google/uuid"

	"wheelbench/service/webhook"
)

// WebhookSender POSTs one signed delivery. It returns the response status
// whenever a response arrived (err nil), and an error when none did.
// api.WebhookSender implements it; service never touches HTTP itself.
type WebhookSender interface {
	Send(ctx context.Context, url string, h webhook.HeaderSet, body []byte) (status int, err error)
}

// DeliveryObserver counts outcomes (metrics). Its methods must be cheap and
// safe for concurrent use.
type DeliveryObserver interface {
	// WebhookOutcome is called once per finished attempt with its outcome.
	WebhookOutcome(o DeliveryOutcome)
}

// DeliveryOutcome is how one delivery attempt ended.
type DeliveryOutcome string

// Outcomes of an attempt.
const (
	OutcomeDelivered DeliveryOutcome = "delivered" // 2xx
	OutcomeRetry     DeliveryOutcome = "retried"   // failed, tried again later
	OutcomeFailed    DeliveryOutcome = "failed"    // failed, retry window used up
	OutcomeGone      DeliveryOutcome = "gone"      // 410: endpoint disabled
)

// WebhookDelivery is one claimed outbox row with what sending it needs.
type WebhookDelivery struct {
	ID         int64
	OrgID      uuid.UUID
	EndpointID uuid.UUID
	EventID    string // msg_…: the webhook-id header, the same on every attempt
	Type       string
	Body       []byte
	// Attempt is this attempt's number (1 for the first); the outcome is
	// recorded only while the row still carries it.
	Attempt int
	URL     string
	Secret  string
}

// WebhookResult is the outcome of an attempt, for the store to record.
type WebhookResult struct {
	Delivery WebhookDelivery
	Outcome  DeliveryOutcome
	Status   int    // the receiver's status; 0 when no response came
	Error    string // why no response came, short
	// RetryIn is the delay before the next attempt (OutcomeRetry).
	RetryIn time.Duration
}

// DispatcherConfig shapes a dispatcher; zero fields take their defaults.
type DispatcherConfig struct {
	Sender WebhookSender // required
	// Poll is the pause between rounds that found nothing due (default 1 s).
	// A round that claimed a full batch is followed at once by another.
	Poll time.Duration
	// Batch is how many deliveries one round claims (default 20).
	Batch int
	// Workers is how many sends run at once (default 4).
	Workers int
	// Lease is how long a claim keeps other dispatchers off a delivery; it
	// must outlast a send (default 2 min). A dispatcher that dies mid-send
	// leaves the delivery to be claimed again when the lease runs out.
	Lease time.Duration
	// Retry is the backoff schedule (webhook.RetryConfig defaults: 5 s
	// growing fivefold to 8 h, within a 72 h window).
	Retry webhook.RetryConfig
	// Rand returns values in [0, 1) for the retry jitter (nil: math/rand/v2).
	Rand     func() float64
	Observer DeliveryObserver
	// Now is the clock for webhook-timestamp (nil: time.Now).
	Now func() time.Time
}

// Dispatcher delivers the outbox. Any number of dispatchers, in one process
// or many, may run on one database: each claims due deliveries with FOR
// UPDATE SKIP LOCKED in a short transaction that moves them past a lease
// and counts the attempt, commits, sends outside any transaction, and
// records the outcome only if no one else has claimed the delivery since.
// Delivery is at least once: a dispatcher that dies after sending and
// before recording leaves the delivery to be sent again, with the same
// webhook-id, once its lease runs out.
type Dispatcher struct {
	s   *Service
	cfg DispatcherConfig
}

// NewDispatcher returns a dispatcher over s's store.
func (s *Service) NewDispatcher(cfg DispatcherConfig) (*Dispatcher, error) {
	if cfg.Sender == nil {
		return nil, errors.New("webhook dispatcher: no sender")
	}
	if cfg.Poll <= 0 {
		cfg.Poll = time.Second
	}
	if cfg.Batch <= 0 {
		cfg.Batch = 20
	}
	if cfg.Workers <= 0 {
		cfg.Workers = 4
	}
	if cfg.Lease <= 0 {
		cfg.Lease = 2 * time.Minute
	}
	if cfg.Now == nil {
		cfg.Now = time.Now
	}
	if err := cfg.Retry.Validate(); err != nil {
		return nil, fmt.Errorf("webhook dispatcher: %w", err)
	}
	return &Dispatcher{s: s, cfg: cfg}, nil
}

// Run delivers until ctx ends, then returns once the sends under way have
// finished and been recorded; deliveries it had claimed but not started are
// released for any dispatcher to take at once. Database errors are logged
// and retried after Poll.
func (d *Dispatcher) Run(ctx context.Context) {
	timer := time.NewTimer(0)
	defer timer.Stop()
	for {
		select {
		case <-ctx.Done():
			return
		case <-timer.C:
		}
		n, err := d.RunOnce(ctx)
		if err != nil && ctx.Err() == nil {
			d.s.log.Warn("webhook dispatch round failed", "error", err)
		}
		wait := d.cfg.Poll
		if err == nil && n >= d.cfg.Batch {
			wait = 0 // more may be due: go again at once
		}
		timer.Reset(wait)
	}
}

// RunOnce claims one batch of due deliveries, sends them and records each
// outcome. It returns how many it claimed. When ctx ends during the round,
// sends already started finish and are recorded (each is bounded by the
// sender's timeout) and the rest are released.
func (d *Dispatcher) RunOnce(ctx context.Context) (int, error) {
	if ctx.Err() != nil {
		return 0, ctx.Err()
	}
	ds, err := d.s.store.ClaimWebhookDeliveries(ctx, d.cfg.Batch, d.cfg.Lease)
	if err != nil {
		return 0, err
	}
	if len(ds) == 0 {
		return 0, nil
	}
	// Sends and their records outlive ctx's cancellation, so that shutdown
	// never cuts a send off after the receiver may have acted on it.
	work := context.WithoutCancel(ctx)
	jobs := make(chan WebhookDelivery)
	var wg sync.WaitGroup
	var mu sync.Mutex
	var errs []error
	for range min(d.cfg.Workers, len(ds)) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for del := range jobs {
				if err := d.deliver(work, del); err != nil {
					mu.Lock()
					errs = append(errs, err)
					mu.Unlock()
				}
			}
		}()
	}
	var unsent []WebhookDelivery
feed:
	for i, del := range ds {
		if ctx.Err() != nil {
			unsent = ds[i:]
			break
		}
		select {
		case jobs <- del:
		case <-ctx.Done():
			unsent = ds[i:]
			break feed
		}
	}
	close(jobs)
	wg.Wait()
	if len(unsent) > 0 {
		if err := d.s.store.ReleaseWebhookDeliveries(work, unsent); err != nil {
			errs = append(errs, err)
		}
	}
	return len(ds), errors.Join(errs...)
}

// deliver sends one delivery and records its outcome.
func (d *Dispatcher) deliver(ctx context.Context, del WebhookDelivery) error {
	res := WebhookResult{Delivery: del}
	key, err := webhook.ParseSecret(del.Secret)
	if err != nil {
		res.Error = "the endpoint's secret is unusable"
	} else {
		h := webhook.Headers(key, del.EventID, d.cfg.Now(), del.Body)
		res.Status, err = d.cfg.Sender.Send(ctx, del.URL, h, del.Body)
		if err != nil {
			res.Error = shorten(err.Error(), 300)
		}
	}
	switch {
	case err == nil && res.Status >= 200 && res.Status < 300:
		res.Outcome = OutcomeDelivered
	case err == nil && res.Status == 410:
		res.Outcome = OutcomeGone
	default:
		now := time.Now()
		next, ok := webhook.NextAttempt(del.Attempt, now, d.cfg.Rand, d.cfg.Retry)
		if ok {
			res.Outcome, res.RetryIn = OutcomeRetry, next.Sub(now)
		} else {
			res.Outcome = OutcomeFailed
		}
	}
	recorded, err := d.s.store.FinishWebhookDelivery(ctx, res)
	if err != nil {
		return fmt.Errorf("record webhook delivery %d: %w", del.ID, err)
	}
	if recorded && d.cfg.Observer != nil {
		d.cfg.Observer.WebhookOutcome(res.Outcome)
	}
	if recorded && res.Outcome == OutcomeGone {
		d.s.log.Warn("webhook endpoint disabled: the receiver answered 410 Gone",
			"org_id", del.OrgID, "endpoint_id", del.EndpointID)
	}
	return nil
}

func shorten(s string, n int) string {
	if len(s) <= n {
		return s
	}
	return strings.ToValidUTF8(s[:n], "") + "…"
}
