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

-- Organisations and locations are never deleted and never change their
-- ids: the API has no way to, and these triggers make it hold in the
-- database too, also for a tenant no row names yet (which a foreign key
-- alone would let go). A row that once named one goes on naming it.
-- (Deliberately removing a tenant is an operator's job: disable the
-- triggers in that transaction.)
-- +goose StatementBegin
CREATE FUNCTION refuse_tenant_removal() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  RAISE EXCEPTION '% rows are never deleted and keep their ids', TG_TABLE_NAME
    USING ERRCODE = 'restrict_violation';
END
$$;
-- +goose StatementEnd
CREATE TRIGGER organisations_kept BEFORE DELETE OR TRUNCATE ON organisations
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_tenant_removal();
CREATE TRIGGER organisations_id_kept BEFORE UPDATE OF id ON organisations
  FOR EACH ROW WHEN (OLD.id IS DISTINCT FROM NEW.id) EXECUTE FUNCTION refuse_tenant_removal();
CREATE TRIGGER locations_kept BEFORE DELETE OR TRUNCATE ON locations
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_tenant_removal();
CREATE TRIGGER locations_id_kept BEFORE UPDATE OF id, org_id ON locations
  FOR EACH ROW WHEN (OLD.id IS DISTINCT FROM NEW.id OR OLD.org_id IS DISTINCT FROM NEW.org_id)
  EXECUTE FUNCTION refuse_tenant_removal();

-- +goose Down
DROP TRIGGER locations_id_kept ON locations;
DROP TRIGGER locations_kept ON locations;
DROP TRIGGER organisations_id_kept ON organisations;
DROP TRIGGER organisations_kept ON organisations;
DROP FUNCTION refuse_tenant_removal();
DROP TABLE api_keys;
DROP TABLE locations;
DROP TABLE organisations;
