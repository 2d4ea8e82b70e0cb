package store_test

import (
	"context"
	"encoding/json"
	"fmt"
	"slices"
	"testing"

	"github.com/google/uuid"
	"github.com/jackc/pgx/v5/pgxpool"

	"wheelbench/service"
	"wheelbench/store"
	"wheelbench/store/storetest"
)

// TestChangeFeedAcrossDigitBoundaries guards the feed's order against
// transaction ids that gain a digit. The feed once selected txid::text and
// ordered by that text, so 10000 sorted before 9999: a page that ended at
// 10001 moved the cursor past 9998 and 9999, which were never served. Rows
// here carry explicit old txids straddling 9,999/10,000 and 99,999/100,000
// (old, so every snapshot sees them), written in an order unlike their
// txids so that seq alone would also be wrong; paging with limits 1, 2 and
// 3 must serve each change exactly once, in (txid, seq) order.
func TestChangeFeedAcrossDigitBoundaries(t *testing.T) {
	ctx := context.Background()
	pool := storetest.Pool(t)
	st := store.New(pool)
	org := newOrg(t, st, "feed")
	other := newOrg(t, st, "other")
	advanceXIDPast(t, pool, 100_001)

	// Written in this order; seq follows it, txid does not.
	txids := []uint64{100_001, 9_999, 99_999, 10_000, 9_998, 100_000, 10_001, 99_998, 10_000, 9_999}
	type row struct {
		tx   uint64
		seq  int64
		data string
	}
	var want []row
	for i, tx := range txids {
		data := fmt.Sprintf(`"%d#%d"`, tx, i)
		var seq int64
		err := pool.QueryRow(ctx, `INSERT INTO changes (org_id, txid, type, resource_id, data)
		    VALUES ($1, $2::xid8, 'build.created', $3, $4::json) RETURNING seq`, org, tx, uuid.New(), data).Scan(&seq)
		if err != nil {
			t.Fatal(err)
		}
		want = append(want, row{tx, seq, data})
		// Another organisation's change at the same ids must never show.
		if _, err := pool.Exec(ctx, `INSERT INTO changes (org_id, txid, type, resource_id, data)
		    VALUES ($1, $2::xid8, 'build.created', $3, '"theirs"')`, other, tx, uuid.New()); err != nil {
			t.Fatal(err)
		}
	}
	slices.SortFunc(want, func(a, b row) int {
		if a.tx != b.tx {
			return cmpUint(a.tx, b.tx)
		}
		return cmpUint(uint64(a.seq), uint64(b.seq))
	})

	for _, limit := range []int{1, 2, 3} {
		t.Run(fmt.Sprintf("limit=%d", limit), func(t *testing.T) {
			var got []row
			var cur service.Cursor
			for pages := 0; ; pages++ {
				if pages > len(want)+1 {
					t.Fatalf("paging did not end after %d pages", pages)
				}
				// Through the cursor's wire form, as a client pages.
				after, err := service.ParseCursor(cur.String())
				if err != nil {
					t.Fatal(err)
				}
				cs, _, err := st.ListChanges(ctx, org, service.ChangeQuery{After: after, Limit: limit})
				if err != nil {
					t.Fatal(err)
				}
				if len(cs) == 0 {
					break
				}
				if len(cs) > limit {
					t.Fatalf("page of %d rows for limit %d", len(cs), limit)
				}
				for _, c := range cs {
					got = append(got, row{c.Cursor.TxID, c.Cursor.Seq, string(c.Data.(json.RawMessage))})
				}
				cur = cs[len(cs)-1].Cursor
			}
			if !slices.Equal(got, want) {
				t.Fatalf("served\n%v\nwant (every change once, in (txid, seq) order)\n%v", got, want)
			}
		})
	}
}

func cmpUint(a, b uint64) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// advanceXIDPast makes the server's transaction counter exceed x, so rows
// written with txid ≤ x belong to transactions that have ended. A fresh
// cluster starts near 1,000; each subtransaction that writes takes one id,
// so a loop of them moves the counter once per server (it never goes back).
func advanceXIDPast(t *testing.T, pool *pgxpool.Pool, x uint64) {
	t.Helper()
	ctx := context.Background()
	var next uint64
	if err := pool.QueryRow(ctx, `SELECT pg_current_xact_id()`).Scan(&next); err != nil {
		t.Fatal(err)
	}
	if next > x+10 {
		return
	}
	conn, err := pool.Acquire(ctx)
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Release()
	n := x + 10 - next
	_, err = conn.Exec(ctx, fmt.Sprintf(`CREATE TEMP TABLE xid_burn (x int);
	  DO $$ BEGIN
	    FOR i IN 1..%d LOOP
	      BEGIN INSERT INTO xid_burn VALUES (i); RAISE EXCEPTION 'undo'; EXCEPTION WHEN raise_exception THEN NULL; END;
	    END LOOP;
	  END $$;
	  DROP TABLE xid_burn`, n))
	if err != nil {
		t.Fatal(err)
	}
	if err := pool.QueryRow(ctx, `SELECT pg_current_xact_id()`).Scan(&next); err != nil || next <= x {
		t.Fatalf("transaction counter at %d (err %v), want past %d", next, err, x)
	}
}

// TestChangeFeedFirstPageUsesPrimaryKey: the feed's pages come from the
// primary key (org_id, txid, seq) in its own order, with no sort, so a
// page costs the same whatever the table holds; a filtered page (types, a
// held key's location) reads its page when the filter lets most rows
// through and at most store.FilteredFeedScan rows when it lets none. The statement is the
// store's own; the data is 20,000 changes of one organisation among three,
// analysed so the planner knows the table's size. A text-ordered feed
// cannot use the index and shows a Sort here.
func TestChangeFeedFirstPageUsesPrimaryKey(t *testing.T) {
	ctx := context.Background()
	pool := storetest.Pool(t)
	st := store.New(pool)
	orgs := []uuid.UUID{newOrg(t, st, "a"), newOrg(t, st, "b"), newOrg(t, st, "c")}
	buildsAt := uuid.New()
	for i, org := range orgs {
		n := 2000
		if i == 1 {
			n = 20_000
		}
		// Every build at one location (a key held to another sees none).
		if _, err := pool.Exec(ctx, `INSERT INTO changes (org_id, txid, type, resource_id, location_id, data)
		    SELECT $1, (1000 + g)::text::xid8, 'build.created', gen_random_uuid(), $3, '{}' FROM generate_series(1, $2) g`, org, n, buildsAt); err != nil {
			t.Fatal(err)
		}
	}
	if _, err := pool.Exec(ctx, `ANALYZE changes`); err != nil {
		t.Fatal(err)
	}
	held := uuid.New()
	const limit = 100
	for _, tc := range []struct {
		name      string
		after     service.Cursor
		resources []string
		location  *uuid.UUID
		// most rows a page may read: the page and the two rows the window
		// looks at past it, or the filtered scan
		most int
	}{
		{"first page", service.Cursor{}, nil, nil, limit},
		{"middle", service.Cursor{TxID: 11_000, Seq: 0}, nil, nil, limit},
		{"types, none match", service.Cursor{}, []string{"part"}, nil, store.FilteredFeedScan},
		{"types, all match", service.Cursor{TxID: 11_000, Seq: 0}, []string{"build"}, nil, limit + 2},
		{"held key, none of its location", service.Cursor{}, nil, &held, store.FilteredFeedScan},
		{"held key at the builds' location", service.Cursor{TxID: 11_000, Seq: 0}, []string{"build"}, &buildsAt, limit + 2},
	} {
		scan := limit
		if tc.resources != nil || tc.location != nil {
			scan = max(limit, store.FilteredFeedScan)
		}
		var plan []map[string]any
		err := pool.QueryRow(ctx, `EXPLAIN (ANALYZE, FORMAT JSON) `+store.ListChangesQuery,
			orgs[1], tc.after.TxID, tc.after.Seq, tc.resources, limit, tc.location, scan).Scan(&plan)
		if err != nil {
			t.Fatal(err)
		}
		nodes := planNodes(plan[0]["Plan"].(map[string]any))
		var usesPK bool
		for _, n := range nodes {
			switch n["Node Type"] {
			case "Sort", "Incremental Sort":
				t.Errorf("%s: plan sorts (%v): the order is not the primary key's\n%v", tc.name, n["Sort Key"], plan)
			case "Index Scan", "Index Only Scan":
				usesPK = usesPK || n["Index Name"] == "changes_pkey"
				if read := int(n["Actual Rows"].(float64)); read > tc.most {
					t.Errorf("%s: the page read %d rows, want at most %d", tc.name, read, tc.most)
				}
			}
		}
		if !usesPK {
			t.Errorf("%s: plan does not read changes_pkey\n%v", tc.name, plan)
		}
	}
}

// planNodes flattens an EXPLAIN (FORMAT JSON) plan tree.
func planNodes(n map[string]any) []map[string]any {
	out := []map[string]any{n}
	if kids, ok := n["Plans"].([]any); ok {
		for _, k := range kids {
			out = append(out, planNodes(k.(map[string]any))...)
		}
	}
	return out
}
