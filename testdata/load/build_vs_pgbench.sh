#!/usr/bin/env bash
# Measures build creation through HTTP (auth, spec validation, geometry,
# fit, one transaction with its change-feed and outbox rows) against
# pgbench's single-row INSERT rate on the same PostgreSQL, alternating the
# two ROUNDS times in one run so both see the same machine. Loopback only.
# Needs wrk and pgbench (Debian: apt-get install -y wrk postgresql-client).
# SSLMODE=disable runs both sides without TLS on loopback (default: prefer).
# CONNS sets both sides' concurrency; the service inherits GOGC and
# GOMAXPROCS (GOMAXPROCS=1 leaves PostgreSQL a core on a 2-vCPU host).
# FK_ALTERNATE=1 measures the tenant foreign keys (migrations 00002, 00004)
# (builds → locations, changes → organisations): even rounds run without
# them (dropped before the round, added back NOT VALID after it, which
# PostgreSQL still enforces on every new row), odd rounds with them, so the
# two sides alternate on the same database and machine.
set -euo pipefail
cd "$(dirname "$0")/../.."
DB=${DB:-wbload}
ADDR=${ADDR:-127.0.0.1:18099}
CONNS=${CONNS:-8}
DUR=${DUR:-10}
ROUNDS=${ROUNDS:-2}
BIN=${BIN:-/tmp/wheelbench-load}
psql -h 127.0.0.1 -U postgres -qc "DROP DATABASE IF EXISTS $DB" -c "CREATE DATABASE $DB"
export WHEELBENCH_DATABASE_URL="host=127.0.0.1 user=postgres dbname=$DB${SSLMODE:+ sslmode=$SSLMODE}"
export PGSSLMODE=${SSLMODE:-prefer}
go build -o "$BIN" ./cmd/wheelbench
KEY=$("$BIN" admin create-org --name "Load test shop" | sed -n 's/^API key: //p')
WHEELBENCH_ADDR=$ADDR WHEELBENCH_LOG_LEVEL=warn "$BIN" serve &
PID=$!
trap 'kill $PID 2>/dev/null || true' EXIT
for _ in $(seq 1 50); do curl -fs "http://$ADDR/readyz" >/dev/null && break; sleep 0.2; done
LOCATION=$(curl -fs -H "Authorization: Bearer $KEY" -H 'Content-Type: application/json' \
  -d '{"name":"Load bench"}' "http://$ADDR/v1/locations" | sed -n 's/.*"id":"\([^"]*\)".*/\1/p')
psql -h 127.0.0.1 -U postgres -d "$DB" -qc "CREATE TABLE load_rows (id bigserial PRIMARY KEY, payload text NOT NULL, created_at timestamptz NOT NULL DEFAULT now())"
cpu() { awk '{print $14 + $15}' "/proc/$PID/stat"; }   # server user+system CPU, clock ticks
# PostgreSQL's user+system CPU, clock ticks: every live process named
# postgres, plus what the postmaster has reaped from those that ended
# (cutime+cstime: pgbench's backends, autovacuum workers), so that a process
# ending inside a round does not take its CPU out of the round's total.
# cat fails on processes that end while it reads; what it read still counts.
pgcpu() { { cat /proc/[0-9]*/stat 2>/dev/null || true; } | awk '$2 == "(postgres)" {t += $14 + $15 + $16 + $17} END {print t + 0}'; }
TICK=$(getconf CLK_TCK)
# Whole-machine CPU steal and I/O wait over a round, in % of all CPU time
# (/proc/stat's first line: user nice system idle iowait irq softirq steal).
machine() { awk '/^cpu / {print $2+$3+$4+$5+$6+$7+$8+$9, $6, $9}' /proc/stat; }
echo "$(uptime)"
echo "concurrency $CONNS, service GOMAXPROCS ${GOMAXPROCS:-unset (all CPUs)}, GOGC ${GOGC:-unset (serve: 400)}, sslmode ${SSLMODE:-prefer}"
fks() { # drop | add: the two keys of migration 00010
  if [ "$1" = drop ]; then
    psql -h 127.0.0.1 -U postgres -d "$DB" -qc "ALTER TABLE builds DROP CONSTRAINT builds_org_id_location_id_fkey" \
      -c "ALTER TABLE changes DROP CONSTRAINT changes_org_id_fkey"
  else
    psql -h 127.0.0.1 -U postgres -d "$DB" -qc "ALTER TABLE builds ADD CONSTRAINT builds_org_id_location_id_fkey FOREIGN KEY (org_id, location_id) REFERENCES locations (org_id, id) NOT VALID" \
      -c "ALTER TABLE changes ADD CONSTRAINT changes_org_id_fkey FOREIGN KEY (org_id) REFERENCES organisations (id) NOT VALID"
  fi
}
for r in $(seq 1 "$ROUNDS"); do
  keys=""
  if [ -n "${FK_ALTERNATE:-}" ]; then
    if [ $((r % 2)) -eq 0 ]; then keys="without keys"; fks drop; else keys="with keys"; fi
  fi
  before=$(cpu)
  pg0=$(pgcpu)
  read -r m0 w0 s0 < <(machine)
  out=$(KEY=$KEY LOCATION=$LOCATION wrk -t2 -c"$CONNS" -d"${DUR}s" -s testdata/load/build_create.lua "http://$ADDR")
  after=$(cpu)
  pg1=$(pgcpu)
  rps=$(echo "$out" | sed -n 's/^Requests\/sec: *//p')
  reqs=$(echo "$out" | sed -n 's/^ *\([0-9]*\) requests in.*/\1/p')
  non2xx=$(echo "$out" | sed -n 's/.*Non-2xx or 3xx responses: *//p')
  read -r m1 w1 s1 < <(machine)
  tps=$(pgbench -h 127.0.0.1 -U postgres -n -f testdata/load/insert.sql -c "$CONNS" -j 2 -T "$DUR" "$DB" 2>/dev/null | sed -n 's/^tps = \([0-9.]*\).*/\1/p')
  [ "$keys" = "without keys" ] && fks add
  awk -v r="$r" -v keys="${keys:+ ($keys)}" -v rps="$rps" -v tps="$tps" -v reqs="$reqs" -v ticks=$((after - before)) -v pgticks=$((pg1 - pg0)) -v tick="$TICK" -v bad="${non2xx:-0}" \
    -v steal=$(( (s1 - s0) * 100 / (m1 - m0 + 1) )) -v iowait=$(( (w1 - w0) * 100 / (m1 - m0 + 1) )) 'BEGIN {
    printf "round %s%s: builds %.0f/s (%d requests, %s non-2xx, server CPU %.0f us/build, PostgreSQL CPU %.0f us/build, steal %d%%, iowait %d%%), pgbench INSERT %.0f tps, ratio %.2f\n",
      r, keys, rps, reqs, bad, ticks / tick / reqs * 1e6, pgticks / tick / reqs * 1e6, steal, iowait, tps, rps / tps }'
done
psql -h 127.0.0.1 -U postgres -d "$DB" -Atc "SELECT 'builds stored: ' || count(*) FROM builds"
