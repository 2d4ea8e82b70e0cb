package service

import (
	"context"
	"time"

	"github.com/google/uuid"

	"wheelbench/service/quote"
)

// Store is the persistence the service needs, by the records the use cases
// keep. store.Store implements it on PostgreSQL; every method is scoped to
// one organisation where it takes one. (Background work has its own:
// background.Outbox and background.Pruner.)
type Store interface {
	// Ping reports whether the database answers.
	Ping(ctx context.Context) error
	TenantStore
	CatalogStore
	BuildStore
	ToolStore
	FeedStore
	// RunIdempotent runs fn in one transaction with the key's record; see
	// Service.RunIdempotent. replayed is true when the stored response is
	// returned without running fn.
	RunIdempotent(ctx context.Context, orgID uuid.UUID, req IdempotentRequest, expires time.Time,
		fn func(ctx context.Context) (StoredResponse, error)) (resp StoredResponse, replayed bool, err error)
}

// TenantStore keeps organisations, their locations and API keys.
type TenantStore interface {
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
}

// FeedStore serves the change feed and keeps webhook subscriptions. Writing
// a change (every other store's writes do) also writes one outbox row per
// active endpoint of the organisation subscribed to its type (see
// MatchesEvent), in the change's transaction.
type FeedStore interface {
	// ListChanges returns committed changes after q.After, only from
	// transactions below the current snapshot's xmin, and the cursor of
	// the last change it read (q.After when none): past the changes it
	// returns when a filter left the last ones out. ErrCursorExpired when
	// q.After is older than the retained feed.
	ListChanges(ctx context.Context, orgID uuid.UUID, q ChangeQuery) ([]Change, Cursor, error)

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
}

// CatalogStore keeps the catalog's parts and their stock per location.
type CatalogStore interface {
	CreatePart(ctx context.Context, p Part) error
	GetPart(ctx context.Context, orgID, id uuid.UUID) (Part, error)
	ListParts(ctx context.Context, orgID uuid.UUID, f PartFilter, p Page) ([]Part, error)
	// UpdatePart applies p (its Dimensions aside) and, when not nil, the new
	// dimensions dims, if the part is still at version.
	UpdatePart(ctx context.Context, orgID, id uuid.UUID, version int64, p PartPatch, dims any) (Part, error)
	GetPartStock(ctx context.Context, orgID, partID uuid.UUID) (PartStock, error)
	// PutPartStock replaces the levels when the stock is still at version:
	// every location's, or only location's when it is not nil (levels then
	// all lie there).
	PutPartStock(ctx context.Context, orgID, partID uuid.UUID, version int64, levels []StockLevel, location *uuid.UUID) (PartStock, error)
}

// BuildStore keeps builds, their tension audits, the price list and quotes.
type BuildStore interface {
	// CreateBuild stores b and its change; b's location must be one of
	// its organisation's (a foreign key refuses any other: ErrConflict).
	CreateBuild(ctx context.Context, b Build) error
	GetBuild(ctx context.Context, orgID, id uuid.UUID) (Build, error)
	ListBuilds(ctx context.Context, orgID uuid.UUID, f BuildFilter, p Page) ([]Build, error)
	// UpdateBuild applies the patch when the build is still at version (and
	// so still at status from).
	UpdateBuild(ctx context.Context, orgID, id uuid.UUID, version int64, from BuildStatus, p BuildPatch) (Build, error)

	GetPriceList(ctx context.Context, orgID uuid.UUID) (PriceList, error)
	// PutPriceList stores pl when the stored version is still version (0: none yet).
	PutPriceList(ctx context.Context, orgID uuid.UUID, version int64, pl quote.PriceList) (PriceList, error)
	// CreateQuote stores q, supersedes the build's open quotes and moves the
	// build from status from to quoted.
	CreateQuote(ctx context.Context, q Quote, from BuildStatus) error
	GetQuote(ctx context.Context, orgID, id uuid.UUID) (Quote, error)
	// AcceptQuote locks the quote, lets check refuse it as it now is, then
	// takes its stock needs (ErrStockShort when any is short, nothing
	// changed), marks it accepted at now and moves its quoted build to
	// ordered, in one transaction.
	AcceptQuote(ctx context.Context, orgID, id uuid.UUID, now time.Time, check func(Quote) error) (Quote, error)

	// CreateBuildAudit stores a and marks the build's previous latest audit
	// superseded by it.
	CreateBuildAudit(ctx context.Context, a BuildTensionAudit, locationID uuid.UUID) error
	ListBuildAudits(ctx context.Context, orgID, buildID uuid.UUID, p Page) ([]BuildTensionAudit, error)
}

// ToolStore keeps tensiometers and their calibration versions.
type ToolStore interface {
	// LocationWithCalibration reads a location and the newest calibration of
	// its default tensiometer (the most recently added tool there that has
	// one; nil when none), in one round trip.
	LocationWithCalibration(ctx context.Context, orgID, locationID uuid.UUID) (Location, *Calibration, error)

	CreateTool(ctx context.Context, t Tool) error
	GetTool(ctx context.Context, orgID, id uuid.UUID) (Tool, error)
	ListTools(ctx context.Context, orgID uuid.UUID, p Page) ([]Tool, error)
	// UpdateTool applies the patch when the stored version equals version;
	// ErrPreconditionFailed otherwise.
	UpdateTool(ctx context.Context, orgID, id uuid.UUID, version int64, p ToolPatch) (Tool, error)
	// CreateCalibration stores c as its tool's next version (the store
	// numbers it 1, 2, … per tool and returns it with Version set) when the
	// tool is still at toolVersion, the version whose facts c was fitted
	// with; ErrConflict when the tool changed meanwhile.
	CreateCalibration(ctx context.Context, c Calibration, toolVersion int64) (Calibration, error)
	GetCalibration(ctx context.Context, orgID, id uuid.UUID) (Calibration, error)
	// ListCalibrations lists a tool's versions by version number.
	ListCalibrations(ctx context.Context, orgID, toolID uuid.UUID, p Page) ([]Calibration, error)
}
