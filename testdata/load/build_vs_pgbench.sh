#!/usr/bin/env bash
# Measures build creation through HTTP (auth, validation, geometry, fit, one
# transaction with its change-feed row) against pgbench's single-row INSERT
# rate on the same PostgreSQL, one after the other in one run. Loopback only.
# Needs wrk and pgbench (Debian: apt-get install -y wrk postgresql-client).
set -euo pipefail
cd "$(dirname "$0")/../.."
DB=${DB:-wbload}
ADDR=${ADDR:-127.0.0.1:18099}
CONNS=${CONNS:-8}
DUR=${DUR:-10s}
psql -h 127.0.0.1 -U postgres -qc "DROP DATABASE IF EXISTS $DB" -c "CREATE DATABASE $DB"
export WHEELBENCH_DATABASE_URL="host=127.0.0.1 user=postgres dbname=$DB"
go build -o /tmp/wheelbench-load ./cmd/wheelbench
KEY=$(/tmp/wheelbench-load admin create-org --name "Load test shop" | sed -n 's/^API key: //p')
WHEELBENCH_ADDR=$ADDR WHEELBENCH_LOG_LEVEL=warn /tmp/wheelbench-load serve &
PID=$!
trap 'kill $PID 2>/dev/null || true' EXIT
for _ in $(seq 1 50); do curl -fs "http://$ADDR/readyz" >/dev/null && break; sleep 0.2; done
LOCATION=$(curl -fs -H "Authorization: Bearer $KEY" -H 'Content-Type: application/json' \
  -d '{"name":"Load bench"}' "http://$ADDR/v1/locations" | sed -n 's/.*"id":"\([^"]*\)".*/\1/p')
echo "== wrk: POST /v1/builds, $CONNS connections, $DUR"
KEY=$KEY LOCATION=$LOCATION wrk -t2 -c"$CONNS" -d"$DUR" -s testdata/load/build_create.lua "http://$ADDR"
kill $PID; wait $PID 2>/dev/null || true
echo "== pgbench: single-row INSERT, $CONNS clients, $DUR"
psql -h 127.0.0.1 -U postgres -d "$DB" -qc "CREATE TABLE load_rows (id bigserial PRIMARY KEY, payload text NOT NULL, created_at timestamptz NOT NULL DEFAULT now())"
pgbench -h 127.0.0.1 -U postgres -n -f testdata/load/insert.sql -c "$CONNS" -j 2 -T "${DUR%s}" "$DB" | grep -E "tps|latency|transactions"
psql -h 127.0.0.1 -U postgres -d "$DB" -Atc "SELECT 'builds stored: ' || count(*) FROM builds"
