-- +goose Up
-- Tax per location, in parts per million of the subtotal (200000 = 20 %).
ALTER TABLE locations ADD COLUMN tax_rate_ppm bigint NOT NULL DEFAULT 0
    CHECK (tax_rate_ppm BETWEEN 0 AND 1000000);

-- The catalog: parts with the measured dimensions the fit check takes.
CREATE TABLE parts (
    org_id        uuid NOT NULL REFERENCES organisations (id),
    id            uuid NOT NULL PRIMARY KEY,
    kind          text NOT NULL CHECK (kind IN ('hub', 'rim', 'spoke', 'nipple', 'washer', 'tyre')),
    sku           text NOT NULL,
    name          text NOT NULL,
    price_minor   bigint NOT NULL CHECK (price_minor >= 0),
    currency      text NOT NULL CHECK (currency ~ '^[A-Z]{3}$'),
    dimensions    jsonb NOT NULL,
    version       bigint NOT NULL DEFAULT 1,
    stock_version bigint NOT NULL DEFAULT 1,
    created_at    timestamptz NOT NULL DEFAULT now(),
    updated_at    timestamptz NOT NULL DEFAULT now(),
    UNIQUE (org_id, id),
    UNIQUE (org_id, sku)
);

-- Stock on hand per part, location and (for spokes) length; never negative.
CREATE TABLE part_stock (
    org_id      uuid NOT NULL,
    part_id     uuid NOT NULL,
    location_id uuid NOT NULL,
    length_mm   numeric(7, 1) NOT NULL DEFAULT 0 CHECK (length_mm >= 0),
    quantity    bigint NOT NULL CHECK (quantity >= 0),
    PRIMARY KEY (org_id, part_id, location_id, length_mm),
    FOREIGN KEY (org_id, part_id) REFERENCES parts (org_id, id),
    FOREIGN KEY (org_id, location_id) REFERENCES locations (org_id, id)
);

-- One labour price list per organisation.
CREATE TABLE price_lists (
    org_id                 uuid PRIMARY KEY REFERENCES organisations (id),
    currency               text NOT NULL CHECK (currency ~ '^[A-Z]{3}$'),
    base_build_minor       bigint NOT NULL CHECK (base_build_minor >= 0),
    per_spoke_minor        bigint NOT NULL CHECK (per_spoke_minor >= 0),
    per_drilled_hole_minor bigint NOT NULL CHECK (per_drilled_hole_minor >= 0),
    per_washer_minor       bigint NOT NULL CHECK (per_washer_minor >= 0),
    per_cut_spoke_minor    bigint NOT NULL CHECK (per_cut_spoke_minor >= 0),
    validity_days          int NOT NULL CHECK (validity_days BETWEEN 1 AND 365),
    version                bigint NOT NULL DEFAULT 1,
    updated_at             timestamptz NOT NULL DEFAULT now()
);

-- A build's organisation is held to by its (org_id, location_id) reference
-- to locations, whose org_id references organisations: no second key on
-- org_id, which would lock the organisation's row once more on every
-- insert. Its spec and snapshot are written once and read back whole,
-- never queried inside: json (checked, stored as sent), not jsonb (parsed
-- into a tree on every insert).
CREATE TABLE builds (
    org_id       uuid NOT NULL,
    id           uuid NOT NULL PRIMARY KEY,
    location_id  uuid NOT NULL,
    external_ref text NOT NULL DEFAULT '',
    status       text NOT NULL CHECK (status IN ('draft', 'quoted', 'ordered', 'in_progress', 'done', 'cancelled')),
    spec         json NOT NULL,
    snapshot     json NOT NULL,
    notes        text NOT NULL DEFAULT '',
    version      bigint NOT NULL DEFAULT 1,
    created_at   timestamptz NOT NULL DEFAULT now(),
    updated_at   timestamptz NOT NULL DEFAULT now(),
    UNIQUE (org_id, id),
    FOREIGN KEY (org_id, location_id) REFERENCES locations (org_id, id)
);
CREATE INDEX builds_by_ref ON builds (org_id, external_ref);
CREATE INDEX builds_by_updated ON builds (org_id, updated_at);
-- A build row (spec and snapshot, a few kilobytes) fits a page: keep it
-- there uncompressed rather than compressing it on every insert (the
-- toaster starts at about 2 kB by default).
ALTER TABLE builds SET (toast_tuple_target = 8160);

CREATE TABLE quotes (
    org_id         uuid NOT NULL REFERENCES organisations (id),
    id             uuid NOT NULL PRIMARY KEY,
    build_id       uuid NOT NULL,
    location_id    uuid NOT NULL,
    status         text NOT NULL CHECK (status IN ('open', 'accepted', 'superseded')),
    currency       text NOT NULL,
    lines          jsonb NOT NULL,
    subtotal_minor bigint NOT NULL,
    tax_minor      bigint NOT NULL,
    total_minor    bigint NOT NULL,
    tax_rate_ppm   bigint NOT NULL,
    stock_needs    jsonb NOT NULL,
    valid_until    timestamptz NOT NULL,
    created_at     timestamptz NOT NULL DEFAULT now(),
    accepted_at    timestamptz,
    UNIQUE (org_id, id),
    FOREIGN KEY (org_id, build_id) REFERENCES builds (org_id, id),
    FOREIGN KEY (org_id, location_id) REFERENCES locations (org_id, id)
);
CREATE INDEX quotes_by_build ON quotes (org_id, build_id);

-- +goose Down
DROP TABLE quotes;
DROP TABLE builds;
DROP TABLE price_lists;
DROP TABLE part_stock;
DROP TABLE parts;
ALTER TABLE locations DROP COLUMN tax_rate_ppm;
