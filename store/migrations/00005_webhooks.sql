-- +goose Up
-- Webhook subscriptions. The signing secret is kept in full (it is an HMAC
-- key, so it cannot be hashed); the API shows it once, at creation, and
-- never lists it. events holds the patterns a change type is matched
-- against: an exact type (part.created), a resource wildcard (part.*) or *.
CREATE TABLE webhook_endpoints (
    org_id          uuid NOT NULL REFERENCES organisations (id),
    id              uuid NOT NULL PRIMARY KEY,
    url             text NOT NULL,
    events          text[] NOT NULL CHECK (cardinality(events) BETWEEN 1 AND 50),
    description     text NOT NULL DEFAULT '',
    active          boolean NOT NULL DEFAULT true,
    -- Why the dispatcher switched the endpoint off ('' when it did not).
    disabled_reason text NOT NULL DEFAULT '',
    secret          text NOT NULL,
    version         bigint NOT NULL DEFAULT 1,
    created_at      timestamptz NOT NULL DEFAULT now(),
    updated_at      timestamptz NOT NULL DEFAULT now(),
    UNIQUE (org_id, id)
);
CREATE INDEX webhook_endpoints_active ON webhook_endpoints (org_id) WHERE active;

-- The outbox: one row per (change, subscribed endpoint), written in the
-- transaction of the change. body is the exact JSON sent on every attempt;
-- event_id (msg_…) is its webhook-id header. A dispatcher claims due rows
-- with FOR UPDATE SKIP LOCKED, moving next_attempt_at past the send (the
-- lease) and counting the attempt, commits, sends, then records the outcome
-- only if attempts still equals its own count.
CREATE TABLE webhook_deliveries (
    org_id          uuid NOT NULL,
    id              bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
    endpoint_id     uuid NOT NULL,
    event_id        text NOT NULL,
    type            text NOT NULL,
    body            bytea NOT NULL,
    status          text NOT NULL DEFAULT 'pending'
                    CHECK (status IN ('pending', 'delivered', 'failed', 'cancelled')),
    attempts        int NOT NULL DEFAULT 0,
    next_attempt_at timestamptz NOT NULL DEFAULT now(),
    created_at      timestamptz NOT NULL DEFAULT now(),
    last_attempt_at timestamptz,
    last_status     int,
    last_error      text NOT NULL DEFAULT '',
    finished_at     timestamptz,
    UNIQUE (endpoint_id, event_id),
    FOREIGN KEY (org_id, endpoint_id) REFERENCES webhook_endpoints (org_id, id) ON DELETE CASCADE
);
CREATE INDEX webhook_deliveries_due ON webhook_deliveries (next_attempt_at) WHERE status = 'pending';
CREATE INDEX webhook_deliveries_by_endpoint ON webhook_deliveries (endpoint_id) WHERE status = 'pending';

-- +goose Down
DROP TABLE webhook_deliveries;
DROP TABLE webhook_endpoints;
