-- +goose Up
-- Tenants, their locations and their API keys. Every tenant row carries the
-- organisation id; composite keys (org_id, id) let child rows reference a
-- parent of the same organisation only.
CREATE TABLE organisations (
    id         uuid PRIMARY KEY,
    name       text NOT NULL,
    created_at timestamptz NOT NULL DEFAULT now()
);

CREATE TABLE locations (
    org_id     uuid NOT NULL REFERENCES organisations (id),
    id         uuid NOT NULL,
    name       text NOT NULL,
    code       text NOT NULL DEFAULT '',
    timezone   text NOT NULL DEFAULT 'UTC',
    address    text NOT NULL DEFAULT '',
    version    bigint NOT NULL DEFAULT 1,
    created_at timestamptz NOT NULL DEFAULT now(),
    updated_at timestamptz NOT NULL DEFAULT now(),
    PRIMARY KEY (id),
    UNIQUE (org_id, id)
);

CREATE TABLE api_keys (
    org_id      uuid NOT NULL REFERENCES organisations (id),
    id          uuid NOT NULL PRIMARY KEY,
    location_id uuid,
    role        text NOT NULL CHECK (role IN ('read', 'write', 'admin')),
    name        text NOT NULL DEFAULT '',
    prefix      text NOT NULL UNIQUE,
    hash        bytea NOT NULL,
    created_at  timestamptz NOT NULL DEFAULT now(),
    revoked_at  timestamptz,
    FOREIGN KEY (org_id, location_id) REFERENCES locations (org_id, id)
);

CREATE INDEX api_keys_org ON api_keys (org_id, id);

-- +goose Down
DROP TABLE api_keys;
DROP TABLE locations;
DROP TABLE organisations;
