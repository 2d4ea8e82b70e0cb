package background

import (
	"context"
	"errors"
	"fmt"
	"log/slog"
	"strings"
	"sync"
	"time"

	"github.com/google/uuid"

	"wheelbench/service/webhook"
)

// Sender POSTs one signed delivery. It returns the response status
// whenever a response arrived (err nil), and an error when none did.
// HTTPSender implements it.
type Sender interface {
	Send(ctx context.Context, url string, h webhook.HeaderSet, body []byte) (status int, err error)
}

// Observer counts outcomes (metrics). Its methods must be cheap and safe
// for concurrent use.
type Observer interface {
	// WebhookOutcome is called once per finished attempt with its outcome.
	WebhookOutcome(o Outcome)
}

// Outcome is how one delivery attempt ended.
type Outcome string

// Outcomes of an attempt.
const (
	OutcomeDelivered Outcome = "delivered" // 2xx
	OutcomeRetry     Outcome = "retried"   // failed, tried again later
	OutcomeFailed    Outcome = "failed"    // failed, retry window used up
	OutcomeGone      Outcome = "gone"      // 410: endpoint disabled
)

// Outbox is what the dispatcher needs from the store: the webhook outbox
// that the writes of changes fill (store.Store implements it).
type Outbox interface {
	// ClaimWebhookDeliveries takes up to n pending deliveries that are due,
	// of active endpoints, in any organisation, skipping rows another
	// transaction holds (FOR UPDATE SKIP LOCKED): each gets its attempt
	// counted and its next attempt moved lease ahead, and the claim commits
	// before it returns.
	ClaimWebhookDeliveries(ctx context.Context, n int, lease time.Duration) ([]Delivery, error)
	// FinishDelivery records an attempt's outcome if the delivery is
	// still pending at r.Delivery.Attempt (nobody re-claimed it); recorded
	// reports whether it was. OutcomeGone also switches the endpoint off and
	// cancels its other pending deliveries.
	FinishWebhookDelivery(ctx context.Context, r Result) (recorded bool, err error)
	// ReleaseWebhookDeliveries hands claimed, unsent deliveries back: due
	// now, the attempt uncounted.
	ReleaseWebhookDeliveries(ctx context.Context, ds []Delivery) error
}

// Delivery is one claimed outbox row with what sending it needs.
type Delivery struct {
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

// Result is the outcome of an attempt, for the store to record.
type Result struct {
	Delivery Delivery
	Outcome  Outcome
	Status   int    // the receiver's status; 0 when no response came
	Error    string // why no response came, short
	// RetryIn is the delay before the next attempt (OutcomeRetry).
	RetryIn time.Duration
}

// Config shapes a dispatcher; zero fields take their defaults.
type Config struct {
	Sender Sender // required
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
	Observer Observer
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
	outbox Outbox
	log    *slog.Logger
	cfg    Config
}

// NewDispatcher returns a dispatcher over outbox that logs to log (nil:
// nowhere).
func NewDispatcher(outbox Outbox, log *slog.Logger, cfg Config) (*Dispatcher, error) {
	if log == nil {
		log = slog.New(slog.DiscardHandler)
	}
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
	return &Dispatcher{outbox: outbox, log: log, cfg: cfg}, nil
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
			d.log.Warn("webhook dispatch round failed", "error", err)
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
	ds, err := d.outbox.ClaimWebhookDeliveries(ctx, d.cfg.Batch, d.cfg.Lease)
	if err != nil {
		return 0, err
	}
	if len(ds) == 0 {
		return 0, nil
	}
	// Sends and their records outlive ctx's cancellation, so that shutdown
	// never cuts a send off after the receiver may have acted on it.
	work := context.WithoutCancel(ctx)
	jobs := make(chan Delivery)
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
	var unsent []Delivery
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
		if err := d.outbox.ReleaseWebhookDeliveries(work, unsent); err != nil {
			errs = append(errs, err)
		}
	}
	return len(ds), errors.Join(errs...)
}

// deliver sends one delivery and records its outcome.
func (d *Dispatcher) deliver(ctx context.Context, del Delivery) error {
	res := Result{Delivery: del}
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
	recorded, err := d.outbox.FinishWebhookDelivery(ctx, res)
	if err != nil {
		return fmt.Errorf("record webhook delivery %d: %w", del.ID, err)
	}
	if recorded && d.cfg.Observer != nil {
		d.cfg.Observer.WebhookOutcome(res.Outcome)
	}
	if recorded && res.Outcome == OutcomeGone {
		d.log.Warn("webhook endpoint disabled: the receiver answered 410 Gone",
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
