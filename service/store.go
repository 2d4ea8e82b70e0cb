package service

import (
	"context"
	"time"

	"github.com/google/uuid"
)

// Store is the persistence the service needs. store.Store implements it on
// PostgreSQL; every method is scoped to one organisation where it takes one.
type Store interface {
	// Ping reports whether the database answers.
	Ping(ctx context.Context) error

	CreateOrganisation(ctx context.Context, o Organisation) error
	GetOrganisation(ctx context.Context, id uuid.UUID) (Organisation, error)

	CreateLocation(ctx context.Context, l Location) error
	GetLocation(ctx context.Context, orgID, id uuid.UUID) (Location, error)
	ListLocations(ctx context.Context, orgID uuid.UUID, p Page) ([]Location, error)
	// UpdateLocation applies the patch when the stored version equals
	// version; ErrPreconditionFailed otherwise.
	UpdateLocation(ctx context.Context, orgID, id uuid.UUID, version int64, p LocationPatch) (Location, error)

	CreateAPIKey(ctx context.Context, k APIKey) error
	// APIKeyByPrefix returns the key (revoked or not) with the prefix, in any
	// organisation: it is how a request is authenticated.
	APIKeyByPrefix(ctx context.Context, prefix string) (APIKey, Organisation, error)
	ListAPIKeys(ctx context.Context, orgID uuid.UUID, p Page) ([]APIKey, error)
	RevokeAPIKey(ctx context.Context, orgID, id uuid.UUID) (APIKey, error)
	RevokeAPIKeyByPrefix(ctx context.Context, prefix string) (APIKey, error)

	// ListChanges returns committed changes after q.After, only from
	// transactions below the current snapshot's xmin; ErrCursorExpired when
	// q.After is older than the retained feed.
	ListChanges(ctx context.Context, orgID uuid.UUID, q ChangeQuery) ([]Change, error)

	CreatePart(ctx context.Context, p Part) error
	GetPart(ctx context.Context, orgID, id uuid.UUID) (Part, error)
	ListParts(ctx context.Context, orgID uuid.UUID, f PartFilter, p Page) ([]Part, error)
	UpdatePart(ctx context.Context, orgID, id uuid.UUID, version int64, p PartPatch) (Part, error)
	GetPartStock(ctx context.Context, orgID, partID uuid.UUID) (PartStock, error)
	// PutPartStock replaces the levels when the stock is still at version.
	PutPartStock(ctx context.Context, orgID, partID uuid.UUID, version int64, levels []StockLevel) (PartStock, error)

	// RunIdempotent runs fn in one transaction with the key's record; see
	// Service.RunIdempotent. replayed is true when the stored response is
	// returned without running fn.
	RunIdempotent(ctx context.Context, orgID uuid.UUID, req IdempotentRequest, expires time.Time,
		fn func(ctx context.Context) (StoredResponse, error)) (resp StoredResponse, replayed bool, err error)

	// Webhooks. Writing a change also writes one outbox row per active
	// endpoint of the organisation subscribed to its type (see MatchesEvent),
	// in the change's transaction.
	CreateWebhookEndpoint(ctx context.Context, e WebhookEndpoint) error
	// GetWebhookEndpoint and ListWebhookEndpoints leave Secret empty.
	GetWebhookEndpoint(ctx context.Context, orgID, id uuid.UUID) (WebhookEndpoint, error)
	ListWebhookEndpoints(ctx context.Context, orgID uuid.UUID, p Page) ([]WebhookEndpoint, error)
	// UpdateWebhookEndpoint applies p when the stored version equals version
	// (ErrPreconditionFailed otherwise); switching Active off cancels the
	// endpoint's pending deliveries, switching it on clears DisabledReason.
	UpdateWebhookEndpoint(ctx context.Context, orgID, id uuid.UUID, version int64, p WebhookEndpointPatch) (WebhookEndpoint, error)
	// DeleteWebhookEndpoint removes the endpoint and its deliveries.
	DeleteWebhookEndpoint(ctx context.Context, orgID, id uuid.UUID) error
	// ClaimWebhookDeliveries takes up to n pending deliveries that are due,
	// of active endpoints, in any organisation, skipping rows another
	// transaction holds (FOR UPDATE SKIP LOCKED): each gets its attempt
	// counted and its next attempt moved lease ahead, and the claim commits
	// before it returns.
	ClaimWebhookDeliveries(ctx context.Context, n int, lease time.Duration) ([]WebhookDelivery, error)
	// FinishWebhookDelivery records an attempt's outcome if the delivery is
	// still pending at r.Delivery.Attempt (nobody re-claimed it); recorded
	// reports whether it was. OutcomeGone also switches the endpoint off and
	// cancels its other pending deliveries.
	FinishWebhookDelivery(ctx context.Context, r WebhookResult) (recorded bool, err error)
	// ReleaseWebhookDeliveries hands claimed, unsent deliveries back: due
	// now, the attempt uncounted.
	ReleaseWebhookDeliveries(ctx context.Context, ds []WebhookDelivery) error
}
