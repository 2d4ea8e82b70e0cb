-- pgbench script: the statement a build creation runs (store.createBuildQuery:
-- the build row, its change-feed row and its webhook outbox rows in one
-- statement), with a stored build's spec, snapshot and change payload as
-- variables. Run by build_statement_vs_insert.sh with -M prepared, as the
-- service's pgx connections run it.
WITH build AS (
    INSERT INTO builds (org_id, id, location_id, external_ref, status, spec, snapshot, notes, version, created_at, updated_at)
    VALUES (:org, gen_random_uuid(), :loc, 'LOAD', 'draft', :spec, :snap, '', 1, now(), now())),
  change AS (
    INSERT INTO changes (org_id, type, resource_id, location_id, data, occurred_at)
    VALUES (:org, 'build.created', gen_random_uuid(), :loc, :cdata, now()))
  INSERT INTO webhook_deliveries (org_id, endpoint_id, event_id, type, body)
  SELECT org_id, id, 'evt_load', 'build.created', convert_to(:cdata, 'UTF8') FROM webhook_endpoints
  WHERE org_id = :org AND active
    AND ('build.created' = ANY (events) OR split_part('build.created', '.', 1) || '.*' = ANY (events) OR '*' = ANY (events));
