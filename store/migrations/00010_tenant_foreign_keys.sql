-- +goose NO TRANSACTION
-- +goose Up
-- Integrity in the schema again: a build names a location of its own
-- organisation and a change names an existing organisation, checked by
-- PostgreSQL on every insert rather than only by the service before it.
-- Migration 00009 had dropped both keys for build throughput; measured
-- again, they cost little (DEVELOPERS.md, Load and speed), and a check that
-- lives only in application code is one code path away from being skipped.
-- The triggers of 00009 stay: they keep organisations and locations from
-- being deleted or re-keyed, which the keys alone would allow for a tenant
-- with no rows yet.
--
-- Each key is added NOT VALID (a brief lock, no scan) and then validated,
-- which scans the table without blocking writes; outside one transaction
-- so the two steps do not share the first one's lock. Re-running after a
-- failure finds the key already there.
-- +goose StatementBegin
DO $$
BEGIN
  IF NOT EXISTS (SELECT 1 FROM pg_constraint WHERE conname = 'builds_org_id_location_id_fkey'
                 AND conrelid = 'builds'::regclass) THEN
    ALTER TABLE builds ADD CONSTRAINT builds_org_id_location_id_fkey
      FOREIGN KEY (org_id, location_id) REFERENCES locations (org_id, id) NOT VALID;
  END IF;
  IF NOT EXISTS (SELECT 1 FROM pg_constraint WHERE conname = 'changes_org_id_fkey'
                 AND conrelid = 'changes'::regclass) THEN
    ALTER TABLE changes ADD CONSTRAINT changes_org_id_fkey
      FOREIGN KEY (org_id) REFERENCES organisations (id) NOT VALID;
  END IF;
END
$$;
-- +goose StatementEnd
ALTER TABLE builds VALIDATE CONSTRAINT builds_org_id_location_id_fkey;
ALTER TABLE changes VALIDATE CONSTRAINT changes_org_id_fkey;

-- +goose Down
ALTER TABLE changes DROP CONSTRAINT IF EXISTS changes_org_id_fkey;
ALTER TABLE builds DROP CONSTRAINT IF EXISTS builds_org_id_location_id_fkey;
