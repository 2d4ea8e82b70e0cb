package store_test

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"sync"
	"testing"
	"time"

	"github.com/google/uuid"
	"github.com/jackc/pgx/v5"
	"github.com/jackc/pgx/v5/pgconn"

	"wheelbench/service"
	"wheelbench/store"
	"wheelbench/store/storetest"
)

// TestChangeFeedMissesNothing: writers run deliberately slow transactions
// that commit out of the order they started, while a reader follows the
// feed. The reader sees every change exactly once; a naive reader that
// follows the sequence number alone misses the late commits.
func TestChangeFeedMissesNothing(t *testing.T) {
	ctx := context.Background()
	pool := storetest.Pool(t)
	st := store.New(pool)
	org := newOrg(t, st, "feed")
	const writers, perWriter = 6, 8
	var wg sync.WaitGroup
	done := make(chan struct{})
	for w := range writers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range perWriter {
				err := pgx.BeginFunc(ctx, pool, func(tx pgx.Tx) error {
					if err := insertChange(ctx, tx, org, fmt.Sprintf(`"%d/%d"`, w, i)); err != nil {
						return err
					}
					// Even writers hold their transaction open longer, so later
					// transactions (higher seq) commit before them.
					if w%2 == 0 {
						time.Sleep(time.Duration(15+5*i%20) * time.Millisecond)
					}
					return nil
				})
				if err != nil {
					t.Error(err)
					return
				}
			}
		}()
	}
	go func() { wg.Wait(); close(done) }()

	seen := map[string]int{}
	var cur service.Cursor
	var naiveSeq int64
	naiveSeen := map[string]bool{}
	// Follow until the writers are done and everything has arrived (other
	// tests' transactions on the same server may hold xmin back a moment).
	deadline := time.Now().Add(30 * time.Second)
	for {
		finished := false
		select {
		case <-done:
			finished = len(seen) == writers*perWriter
		default:
		}
		if finished || time.Now().After(deadline) {
			break
		}
		for {
			cs, _, err := st.ListChanges(ctx, org, service.ChangeQuery{After: cur, Limit: 7})
			if err != nil {
				t.Fatal(err)
			}
			for _, c := range cs {
				seen[string(c.Data.(json.RawMessage))]++
			}
			if len(cs) == 0 {
				break
			}
			cur = cs[len(cs)-1].Cursor
		}
		// The naive reader: everything with a higher sequence number than the
		// highest it has seen, whatever the transaction.
		rows, _ := pool.Query(ctx, `SELECT seq, data::text FROM changes WHERE org_id = $1 AND seq > $2 ORDER BY seq`, org, naiveSeq)
		type r struct {
			Seq  int64
			Data string
		}
		got, err := pgx.CollectRows(rows, pgx.RowToStructByPos[r])
		if err != nil {
			t.Fatal(err)
		}
		for _, x := range got {
			naiveSeen[x.Data] = true
			naiveSeq = max(naiveSeq, x.Seq)
		}
		time.Sleep(3 * time.Millisecond)
	}
	if len(seen) != writers*perWriter {
		t.Fatalf("feed reader saw %d distinct changes, want %d", len(seen), writers*perWriter)
	}
	for k, n := range seen {
		if n != 1 {
			t.Errorf("change %s seen %d times", k, n)
		}
	}
	t.Logf("naive sequence reader saw %d of %d changes", len(naiveSeen), writers*perWriter)
}

// TestChangeFeedLateCommit shows the gap deterministically: transaction A
// writes first but commits after B. A reader following the sequence number
// sees B, moves past it and never sees A; the feed holds B back until A has
// ended and then serves A before B.
func TestChangeFeedLateCommit(t *testing.T) {
	ctx := context.Background()
	pool := storetest.Pool(t)
	st := store.New(pool)
	org := newOrg(t, st, "feed")
	a, err := pool.Begin(ctx)
	if err != nil {
		t.Fatal(err)
	}
	defer a.Rollback(ctx)
	if err := insertChange(ctx, a, org, `"A"`); err != nil {
		t.Fatal(err)
	}
	if err := insertChange(ctx, pool, org, `"B"`); err != nil { // B commits at once
		t.Fatal(err)
	}
	var naiveLast int64
	var data string
	if err := pool.QueryRow(ctx, `SELECT seq, data::text FROM changes WHERE org_id = $1 ORDER BY seq DESC LIMIT 1`, org).Scan(&naiveLast, &data); err != nil || data != `"B"` {
		t.Fatalf("naive reader: %v %q", err, data)
	}
	cs, _, err := st.ListChanges(ctx, org, service.ChangeQuery{Limit: 10})
	if err != nil || len(cs) != 0 {
		t.Fatalf("feed served %d changes while A was open (err %v), want 0", len(cs), err)
	}
	if err := a.Commit(ctx); err != nil {
		t.Fatal(err)
	}
	var missed int
	if err := pool.QueryRow(ctx, `SELECT count(*) FROM changes WHERE org_id = $1 AND seq > $2`, org, naiveLast).Scan(&missed); err != nil {
		t.Fatal(err)
	}
	if missed != 0 {
		t.Fatalf("naive reader would see %d more", missed)
	}
	var got []string
	for deadline := time.Now().Add(10 * time.Second); len(got) < 2 && time.Now().Before(deadline); time.Sleep(10 * time.Millisecond) {
		got = got[:0]
		cs, _, err := st.ListChanges(ctx, org, service.ChangeQuery{Limit: 10})
		if err != nil {
			t.Fatal(err)
		}
		for _, c := range cs {
			got = append(got, string(c.Data.(json.RawMessage)))
		}
	}
	if len(got) != 2 || got[0] != `"A"` || got[1] != `"B"` {
		t.Fatalf("feed after A committed: %v, want [\"A\" \"B\"]", got)
	}
}

func TestChangeCursorExpires(t *testing.T) {
	ctx := context.Background()
	pool := storetest.Pool(t)
	st := store.New(pool)
	org := newOrg(t, st, "feed")
	for range 3 {
		if err := insertChange(ctx, pool, org, "1"); err != nil {
			t.Fatal(err)
		}
	}
	cs := waitChanges(t, st, org, 3)
	first := cs[0].Cursor
	if _, err := pool.Exec(ctx, `UPDATE changes SET occurred_at = now() - interval '40 days'`); err != nil {
		t.Fatal(err)
	}
	if n, err := st.PruneChanges(ctx, 30*24*3600); err != nil || n != 3 {
		t.Fatalf("pruned %d %v", n, err)
	}
	if _, _, err := st.ListChanges(ctx, org, service.ChangeQuery{After: first, Limit: 10}); err == nil || !errors.Is(err, service.ErrCursorExpired) {
		t.Fatalf("expired cursor: %v", err)
	}
	// The cursor of the last pruned change is still good: nothing after it was lost.
	if _, _, err := st.ListChanges(ctx, org, service.ChangeQuery{After: cs[2].Cursor, Limit: 10}); err != nil {
		t.Fatalf("cursor at the horizon: %v", err)
	}
}

// insertChange writes a feed row as the store's writers do, on q.
func insertChange(ctx context.Context, q interface {
	Exec(context.Context, string, ...any) (pgconn.CommandTag, error)
}, org uuid.UUID, data string) error {
	_, err := q.Exec(ctx, `INSERT INTO changes (org_id, type, resource_id, data) VALUES ($1, 'build.created', $2, $3::jsonb)`, org, uuid.New(), data)
	return err
}

// waitChanges polls the feed until it serves n changes: transactions of
// other tests on the same server may hold the snapshot's xmin back briefly.
func waitChanges(t *testing.T, st *store.Store, org uuid.UUID, n int) []service.Change {
	t.Helper()
	deadline := time.Now().Add(20 * time.Second)
	for {
		cs, _, err := st.ListChanges(context.Background(), org, service.ChangeQuery{Limit: 100})
		if err != nil {
			t.Fatal(err)
		}
		if len(cs) >= n {
			return cs
		}
		if time.Now().After(deadline) {
			t.Fatalf("feed served %d changes, want %d", len(cs), n)
		}
		time.Sleep(20 * time.Millisecond)
	}
}

// TestFilteredFeedWalksPastWhatItLeavesOut: a filter (a resource type, a
// key held to one location) that lets through a few changes among many
// more than one page may read still yields each of them exactly once, in
// order, when the reader follows the returned cursor until it stops
// moving; pages in between may be empty, with the cursor moved past what
// they read, and at the end the cursor stays where it is.
func TestFilteredFeedWalksPastWhatItLeavesOut(t *testing.T) {
	ctx := context.Background()
	pool := storetest.Pool(t)
	st := store.New(pool)
	org := newOrg(t, st, "sparse")
	here, there := uuid.New(), uuid.New()
	n := 3*store.FilteredFeedScan + 500
	// One transaction per change is not needed: rows of one transaction
	// are ordered by seq. Builds happen "there"; every 1111th change is a
	// part (no location) and every 1300th a build "here".
	if _, err := pool.Exec(ctx, `INSERT INTO changes (org_id, type, resource_id, location_id, data)
	    SELECT $1,
	           CASE WHEN g % 1111 = 0 THEN 'part.created' ELSE 'build.created' END,
	           gen_random_uuid(),
	           CASE WHEN g % 1111 = 0 THEN NULL WHEN g % 1300 = 0 THEN $3::uuid ELSE $4::uuid END,
	           json_build_object('g', g)
	    FROM generate_series(1, $2) g`, org, n, here, there); err != nil {
		t.Fatal(err)
	}
	walk := func(q service.ChangeQuery) (gs []int, empty int) {
		for {
			cs, next, err := st.ListChanges(ctx, org, q)
			if err != nil {
				t.Fatal(err)
			}
			if len(cs) == 0 {
				empty++
			}
			for _, c := range cs {
				var d struct{ G int }
				if err := json.Unmarshal(c.Data.(json.RawMessage), &d); err != nil {
					t.Fatal(err)
				}
				gs = append(gs, d.G)
			}
			if next == q.After {
				if len(cs) != 0 {
					t.Fatalf("changes came with an unmoved cursor")
				}
				return gs, empty
			}
			q.After = next
		}
	}
	var wantParts, wantHeld []int
	for g := 1; g <= n; g++ {
		if g%1111 == 0 {
			wantParts = append(wantParts, g)
		}
		if g%1111 == 0 || g%1300 == 0 {
			wantHeld = append(wantHeld, g)
		}
	}
	parts, empty := walk(service.ChangeQuery{Limit: 2, Resources: []string{"part"}})
	if want := wantParts; fmt.Sprint(parts) != fmt.Sprint(want) {
		t.Errorf("parts %v, want %v", parts, want)
	}
	if empty < 2 {
		t.Errorf("%d empty pages: the scan was not bounded", empty)
	}
	// Held "here": its builds and the parts, nothing "there".
	held, _ := walk(service.ChangeQuery{Limit: 2, Location: &here})
	if want := wantHeld; fmt.Sprint(held) != fmt.Sprint(want) || len(want) < 5 {
		t.Errorf("held key saw %v, want %v", held, want)
	}
	// Unfiltered pages are full until the end.
	all, _ := walk(service.ChangeQuery{Limit: 500})
	if len(all) != n {
		t.Errorf("the whole feed has %d changes, want %d", len(all), n)
	}
}
