#!/usr/bin/env bash
# The change feed's first page, timed inside PostgreSQL (EXPLAIN ANALYZE of
# the prepared statement, 12 runs, the first two dropped) at 1,000 and at
# 100,000 changes of one organisation in the migrated schema. It times
# the store's statement and, beside it, the statement it replaced, which
# ordered by txid::text: that order cannot come from the primary key, so
# every first page sorted the organisation's whole feed.
set -euo pipefail
cd "$(dirname "$0")/../.."
DB=${DB:-wbfeed}
U=(psql -h 127.0.0.1 -U postgres -q -At)
"${U[@]}" -c "DROP DATABASE IF EXISTS $DB" -c "CREATE DATABASE $DB" 2>/dev/null
WHEELBENCH_DATABASE_URL="postgres://postgres@127.0.0.1:5432/$DB?sslmode=disable" go run ./cmd/wheelbench migrate >/dev/null
D=("${U[@]}" -d "$DB")
org=11111111-1111-1111-1111-111111111111
"${D[@]}" -c "INSERT INTO organisations (id, name) VALUES ('$org', 'feed timing')"
old='SELECT txid::text, seq, type, resource_id, location_id, occurred_at, data FROM changes
  WHERE org_id = $1 AND (txid, seq) > ($2::text::xid8, $3) AND txid < pg_snapshot_xmin(pg_current_snapshot())
    AND ($4::text[] IS NULL OR split_part(type, '"'.'"', 1) = ANY ($4))
  ORDER BY txid, seq LIMIT $5'
new=$(sed -n '/^const listChangesQuery = `/,/`$/p' store/changes.go | sed 's/^const listChangesQuery = `//; s/`$//')
for n in 1000 100000; do
  "${D[@]}" -c "TRUNCATE changes" -c "INSERT INTO changes (org_id, txid, type, resource_id, data)
      SELECT '$org', (1000 + g)::text::xid8, 'build.created', gen_random_uuid(), '{\"id\": \"x\", \"status\": \"draft\"}'
      FROM generate_series(1, $n) g" -c "ANALYZE changes"
  for which in old new; do
    if [ $which = old ]; then sql=$old; else sql=$new; fi
    {
      echo "PREPARE p AS $sql;"
      for _ in $(seq 1 12); do echo "EXPLAIN (ANALYZE, FORMAT JSON) EXECUTE p('$org', '0', 0, NULL, 100);"; done
    } | "${D[@]}" -f - | python3 -c '
import json, sys
txt, dec, i, ts = sys.stdin.read(), json.JSONDecoder(), 0, []
while True:
    while i < len(txt) and txt[i].isspace():
        i += 1
    if i >= len(txt):
        break
    o, i = dec.raw_decode(txt, i)
    ts.append(o[0]["Execution Time"])
ts = sorted(ts[2:])
print("median %.3f ms (min %.3f, max %.3f)" % (ts[len(ts) // 2], ts[0], ts[-1]))' | sed "s/^/$n changes, $which statement: /"
  done
done
"${U[@]}" -c "DROP DATABASE $DB"
