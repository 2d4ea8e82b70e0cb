-- +goose Up
-- Replayable responses of creating POSTs, by organisation and Idempotency-Key.
-- A record is written in the same transaction as what the request created,
-- so a crash leaves either both or neither. Kept 24 hours.
CREATE TABLE idempotency_keys (
    org_id       uuid NOT NULL REFERENCES organisations (id),
    key          text NOT NULL,
    fingerprint  bytea NOT NULL,
    status       int NOT NULL,
    headers      jsonb NOT NULL DEFAULT '{}',
    body         bytea NOT NULL,
    created_at   timestamptz NOT NULL DEFAULT now(),
    expires_at   timestamptz NOT NULL,
    PRIMARY KEY (org_id, key)
);
CREATE INDEX idempotency_keys_expiry ON idempotency_keys (expires_at);

-- The change feed. Each row carries the id of the transaction that wrote it;
-- readers are served only rows below the current snapshot's xmin, where no
-- transaction can still commit, in (txid, seq) order. Its payload is
-- written once and read back whole, never queried inside: json (checked,
-- stored as sent) rather than jsonb (parsed into a tree on every insert).
CREATE TABLE changes (
    org_id      uuid NOT NULL REFERENCES organisations (id),
    txid        xid8 NOT NULL DEFAULT pg_current_xact_id(),
    seq         bigint GENERATED ALWAYS AS IDENTITY,
    type        text NOT NULL,
    resource_id uuid NOT NULL,
    location_id uuid,
    occurred_at timestamptz NOT NULL DEFAULT now(),
    data        json NOT NULL,
    PRIMARY KEY (org_id, txid, seq)
);
CREATE INDEX changes_age ON changes (occurred_at);

-- Where each organisation's feed was last pruned: a cursor below it is gone.
CREATE TABLE change_horizons (
    org_id  uuid PRIMARY KEY REFERENCES organisations (id),
    txid    xid8 NOT NULL,
    seq     bigint NOT NULL
);

-- +goose Down
DROP TABLE change_horizons;
DROP TABLE changes;
DROP TABLE idempotency_keys;
