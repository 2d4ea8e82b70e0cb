#!/usr/bin/env bash
# POST /v1/spoke-lengths on the real server (auth, validation, geometry,
# metrics, logging at warn) against cmd/wheelbench-bare (decode the same JSON,
# write a small reply), alternating ROUNDS times in one run. Loopback only.
# SERVICE_GOMAXPROCS sets the real server's GOMAXPROCS alone (default: all CPUs).
set -euo pipefail
cd "$(dirname "$0")/../.."
DB=${DB:-wbload}
CONNS=${CONNS:-32}
DUR=${DUR:-10}
ROUNDS=${ROUNDS:-2}
psql -h 127.0.0.1 -U postgres -qc "DROP DATABASE IF EXISTS $DB" -c "CREATE DATABASE $DB"
export WHEELBENCH_DATABASE_URL="host=127.0.0.1 user=postgres dbname=$DB"
go build -o /tmp/wheelbench-load ./cmd/wheelbench
go build -o /tmp/wheelbench-bare ./cmd/wheelbench-bare
KEY=$(/tmp/wheelbench-load admin create-org --name "Load test shop" | sed -n 's/^API key: //p')
GOMAXPROCS=${SERVICE_GOMAXPROCS:-} WHEELBENCH_ADDR=127.0.0.1:18090 WHEELBENCH_LOG_LEVEL=warn /tmp/wheelbench-load serve & P1=$!
/tmp/wheelbench-bare -addr 127.0.0.1:18091 & P2=$!
trap 'kill $P1 $P2 2>/dev/null || true' EXIT
sleep 1
for r in $(seq 1 "$ROUNDS"); do
  out=$(KEY=$KEY wrk -t2 -c"$CONNS" -d"${DUR}s" -s testdata/load/spoke_lengths.lua http://127.0.0.1:18090/v1/spoke-lengths)
  real=$(echo "$out" | sed -n 's/^Requests\/sec: *//p')
  bad=$(echo "$out" | sed -n 's/.*Non-2xx or 3xx responses: *//p')
  bare=$(wrk -t2 -c"$CONNS" -d"${DUR}s" -s testdata/load/spoke_lengths.lua http://127.0.0.1:18091/v1/spoke-lengths | sed -n 's/^Requests\/sec: *//p')
  awk -v r="$r" -v a="$real" -v b="$bare" -v bad="${bad:-0}" 'BEGIN { printf "round %s: real %.0f req/s (%s non-2xx), bare %.0f req/s, ratio %.2f\n", r, a, bad, b, a / b }'
done
