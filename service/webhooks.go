package service

import (
	"context"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"regexp"
	"slices"
	"strings"
	"time"
	"unicode/utf8"

	"github.com/google/uuid"

	"wheelbench/service/field"
	"wheelbench/service/webhook"
)

// WebhookEndpoint is an organisation's subscription: where to POST which
// change types, signed with Secret.
type WebhookEndpoint struct {
	ID          uuid.UUID
	OrgID       uuid.UUID
	URL         string
	Events      []string // patterns; see MatchesEvent
	Description string
	Active      bool
	// DisabledReason says why the dispatcher switched the endpoint off
	// ("" when it did not, or after an owner switched it back on).
	DisabledReason string
	// Secret is the signing secret. Reads for the API leave it empty: it is
	// returned once, by CreateWebhookEndpoint.
	Secret    string
	Version   int64
	CreatedAt time.Time
	UpdatedAt time.Time
}

// ETag is the endpoint's entity tag.
func (e WebhookEndpoint) ETag() string { return ETag(e.ID, e.Version) }

// DisabledGone is the DisabledReason of an endpoint whose receiver answered
// 410 Gone.
const DisabledGone = "the receiver answered 410 Gone"

// WebhookEndpointInput creates an endpoint. Active nil means true.
type WebhookEndpointInput struct {
	URL         string   `json:"url"`
	Events      []string `json:"events"`
	Active      *bool    `json:"active"`
	Description string   `json:"description"`
}

// WebhookEndpointPatch changes an endpoint; nil leaves a field. Setting
// Active to false cancels the endpoint's pending deliveries; setting it to
// true clears DisabledReason (only events after that are delivered).
type WebhookEndpointPatch struct {
	URL         *string  `json:"url"`
	Events      []string `json:"events"` // nil leaves the list
	Active      *bool    `json:"active"`
	Description *string  `json:"description"`
}

// WebhookSettings are the process-wide webhook choices of a Service.
type WebhookSettings struct {
	// AllowPrivate lets endpoint URLs name loopback, private and link-local
	// addresses (on-premises receivers, tests). Default false.
	AllowPrivate bool
}

// ConfigureWebhooks sets s's webhook settings; call it while wiring, before
// serving. An unconfigured Service refuses private destinations.
func (s *Service) ConfigureWebhooks(w WebhookSettings) { s.webhooks = w }

func (s *Service) webhookSettings() WebhookSettings { return s.webhooks }

// Event pattern limits.
const (
	MaxWebhookEvents      = 50
	maxWebhookDescription = 500
)

// eventNameRE is the event part of a type: build.status_changed → status_changed.
var eventNameRE = regexp.MustCompile(`^[a-z][a-z0-9_]{0,63}$`)

// validateEvents checks a list of event patterns: 1 to MaxWebhookEvents,
// no repeats, each "*", "<resource>.*" or "<resource>.<event>" with a
// resource of ChangeResources. Event names are checked by form only, so a
// subscription can name an event type before the first change of it.
func validateEvents(events []string) error {
	if len(events) == 0 || len(events) > MaxWebhookEvents {
		return field.Invalid("/events", "events must list 1 to %d patterns", MaxWebhookEvents)
	}
	var errs []error
	seen := map[string]bool{}
	for i, ev := range events {
		ptr := fmt.Sprintf("/events/%d", i)
		if seen[ev] {
			errs = append(errs, field.Invalid(ptr, "%q is listed twice", ev))
			continue
		}
		seen[ev] = true
		if ev == "*" {
			continue
		}
		res, name, ok := strings.Cut(ev, ".")
		if !ok || !slices.Contains(ChangeResources, res) {
			errs = append(errs, field.Invalid(ptr, "%q must be *, <resource>.* or <resource>.<event> with a resource of %s",
				ev, strings.Join(ChangeResources, ", ")))
			continue
		}
		if name != "*" && !eventNameRE.MatchString(name) {
			errs = append(errs, field.Invalid(ptr, "%q: the event after the dot must be * or lower-case letters, digits and _", ev))
		}
	}
	return errors.Join(errs...)
}

// MatchesEvent reports whether a change of type typ is delivered to an
// endpoint subscribed to patterns: "*" matches every type, "part.*" every
// type of the part resource, anything else only itself. The store applies
// the same rule in SQL when it writes the outbox.
func MatchesEvent(patterns []string, typ string) bool {
	res, _, _ := strings.Cut(typ, ".")
	for _, p := range patterns {
		if p == "*" || p == typ || p == res+".*" {
			return true
		}
	}
	return false
}

func (s *Service) validateEndpointFields(url *string, events []string, description *string) error {
	var errs []error
	if url != nil {
		if err := webhook.CheckURL(*url, s.webhookSettings().AllowPrivate); err != nil {
			errs = append(errs, err)
		}
	}
	if events != nil {
		if err := validateEvents(events); err != nil {
			errs = append(errs, err)
		}
	}
	if description != nil && utf8.RuneCountInString(*description) > maxWebhookDescription {
		errs = append(errs, field.Invalid("/description", "description must be at most %d characters", maxWebhookDescription))
	}
	return errors.Join(errs...)
}

// CreateWebhookEndpoint subscribes url to events with a fresh signing
// secret, returned in the result's Secret: the only time it is shown. The
// URL must pass webhook.CheckURL under the Service's AllowPrivate setting
// (a refused destination is a 422 at /url).
func (s *Service) CreateWebhookEndpoint(ctx context.Context, p Principal, in WebhookEndpointInput) (WebhookEndpoint, error) {
	if err := s.validateEndpointFields(&in.URL, nonNilEvents(in.Events), &in.Description); err != nil {
		return WebhookEndpoint{}, err
	}
	secret, err := webhook.NewSecret()
	if err != nil {
		return WebhookEndpoint{}, err
	}
	id, err := uuid.NewV7()
	if err != nil {
		return WebhookEndpoint{}, err
	}
	now := s.now().UTC()
	e := WebhookEndpoint{ID: id, OrgID: p.OrgID, URL: in.URL, Events: in.Events, Description: in.Description,
		Active: in.Active == nil || *in.Active, Secret: secret, Version: 1, CreatedAt: now, UpdatedAt: now}
	if err := s.store.CreateWebhookEndpoint(ctx, e); err != nil {
		return WebhookEndpoint{}, fmt.Errorf("create webhook endpoint: %w", err)
	}
	return e, nil
}

// nonNilEvents makes a missing list count as empty, so that creating
// without events is refused.
func nonNilEvents(ev []string) []string {
	if ev == nil {
		return []string{}
	}
	return ev
}

// GetWebhookEndpoint reads one of the caller's endpoints (without its secret).
func (s *Service) GetWebhookEndpoint(ctx context.Context, p Principal, id uuid.UUID) (WebhookEndpoint, error) {
	return s.store.GetWebhookEndpoint(ctx, p.OrgID, id)
}

// ListWebhookEndpoints lists the caller's endpoints in creation order
// (without their secrets).
func (s *Service) ListWebhookEndpoints(ctx context.Context, p Principal, page Page) ([]WebhookEndpoint, error) {
	return s.store.ListWebhookEndpoints(ctx, p.OrgID, page)
}

// UpdateWebhookEndpoint applies patch if ifMatch is the endpoint's current
// ETag ("*" matches any): missing → ErrPreconditionRequired, stale →
// ErrPreconditionFailed.
func (s *Service) UpdateWebhookEndpoint(ctx context.Context, p Principal, id uuid.UUID, ifMatch string, patch WebhookEndpointPatch) (WebhookEndpoint, error) {
	if err := s.validateEndpointFields(patch.URL, patch.Events, patch.Description); err != nil {
		return WebhookEndpoint{}, err
	}
	cur, err := s.store.GetWebhookEndpoint(ctx, p.OrgID, id)
	if err != nil {
		return WebhookEndpoint{}, err
	}
	if ifMatch == "" {
		return WebhookEndpoint{}, fmt.Errorf("%w: send If-Match with the webhook endpoint's ETag", ErrPreconditionRequired)
	}
	if ifMatch != "*" && ifMatch != cur.ETag() {
		return WebhookEndpoint{}, fmt.Errorf("%w: the webhook endpoint has changed since it was read", ErrPreconditionFailed)
	}
	return s.store.UpdateWebhookEndpoint(ctx, p.OrgID, id, cur.Version, patch)
}

// DeleteWebhookEndpoint removes one of the caller's endpoints with its
// deliveries, pending ones included: nothing more is sent to it (a send
// already under way when it is deleted may still arrive).
func (s *Service) DeleteWebhookEndpoint(ctx context.Context, p Principal, id uuid.UUID) error {
	return s.store.DeleteWebhookEndpoint(ctx, p.OrgID, id)
}

// WebhookEvent is the JSON body of every delivery of a change. ID is also
// the webhook-id header and stays the same on every attempt.
type WebhookEvent struct {
	ID         string          `json:"id"` // msg_ and 32 hex digits
	Type       string          `json:"type"`
	OccurredAt time.Time       `json:"occurred_at"`
	ResourceID uuid.UUID       `json:"resource_id"`
	LocationID *uuid.UUID      `json:"location_id,omitempty"`
	Data       json.RawMessage `json:"data"` // as in the change feed
}

// NewWebhookEventID returns a fresh event id: "msg_" and the 32 hex digits
// of a UUIDv7, so ids sort roughly by creation time.
func NewWebhookEventID() (string, error) {
	id, err := uuid.NewV7()
	if err != nil {
		return "", err
	}
	return "msg_" + hex.EncodeToString(id[:]), nil
}
