#!/usr/bin/env bash
# PostgreSQL alone: the build-creation statement (build_statement.sql, with
# a build that build_vs_pgbench.sh stored) against the single-row INSERT,
# alternating ROUNDS times, no HTTP service running. This is how much of
# the INSERT rate PostgreSQL leaves for builds when it has the machine to
# itself. Run build_vs_pgbench.sh first (it leaves the database $DB).
set -euo pipefail
cd "$(dirname "$0")/../.."
DB=${DB:-wbload}
CONNS=${CONNS:-8}
DUR=${DUR:-8}
ROUNDS=${ROUNDS:-2}
export PGSSLMODE=${SSLMODE:-prefer}
q() { psql -h 127.0.0.1 -U postgres -d "$DB" -Atc "$1"; }
row=$(q "SELECT id || ' ' || org_id || ' ' || location_id FROM builds LIMIT 1")
[ -n "$row" ] || { echo "no build in $DB: run testdata/load/build_vs_pgbench.sh first" >&2; exit 1; }
read -r id org loc <<<"$row"
spec=$(q "SELECT spec FROM builds WHERE id = '$id'")
snap=$(q "SELECT snapshot FROM builds WHERE id = '$id'")
cdata=$(q "SELECT data FROM changes WHERE resource_id = '$id' LIMIT 1")
echo "statement payload: spec ${#spec} B, snapshot ${#snap} B, change data ${#cdata} B; concurrency $CONNS, sslmode $PGSSLMODE"
for r in $(seq 1 "$ROUNDS"); do
  b=$(pgbench -h 127.0.0.1 -U postgres -n -M prepared -f testdata/load/build_statement.sql -D org="$org" -D loc="$loc" \
      -D spec="$spec" -D snap="$snap" -D cdata="$cdata" -c "$CONNS" -j 2 -T "$DUR" "$DB" 2>&1 | sed -n 's/^tps = \([0-9.]*\).*/\1/p')
  i=$(pgbench -h 127.0.0.1 -U postgres -n -f testdata/load/insert.sql -c "$CONNS" -j 2 -T "$DUR" "$DB" 2>&1 | sed -n 's/^tps = \([0-9.]*\).*/\1/p')
  awk -v r="$r" -v b="$b" -v i="$i" 'BEGIN { printf "round %s: build statement %.0f tps, pgbench INSERT %.0f tps, ratio %.2f\n", r, b, i, b / i }'
done
