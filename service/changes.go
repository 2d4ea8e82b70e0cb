package service

import (
	"context"
	"encoding/base64"
	"fmt"
	"strconv"
	"strings"
	"time"

	"github.com/google/uuid"

	"wheelbench/service/field"
)

// Change is one entry of an organisation's change feed, written in the same
// transaction as the change it describes.
type Change struct {
	Cursor     Cursor
	Type       string // "<resource>.<event>", e.g. build.created
	ResourceID uuid.UUID
	LocationID *uuid.UUID
	OccurredAt time.Time
	Data       any // marshalled to JSON when written; raw JSON when read
}

// Resources that appear in the change feed (the part of Type before the dot).
var ChangeResources = []string{"location", "tool", "calibration", "part", "build", "quote"}

// Cursor is a position in the feed: the writing transaction's id and the
// row's sequence number within the table.
type Cursor struct {
	TxID uint64
	Seq  int64
}

// ErrCursorExpired: the cursor points before what the feed still keeps.
var ErrCursorExpired = fmt.Errorf("%w: the cursor is older than the change feed's retention", ErrGone)

// ErrGone: the thing asked for existed once but is gone for good (410).
var ErrGone = fmt.Errorf("gone")

const cursorVersion = "c1"

// String renders the cursor opaquely.
func (c Cursor) String() string {
	return base64.RawURLEncoding.EncodeToString([]byte(cursorVersion + ":" + strconv.FormatUint(c.TxID, 10) + ":" + strconv.FormatInt(c.Seq, 10)))
}

// ParseCursor reads a cursor made by Cursor.String; "" is the start.
func ParseCursor(s string) (Cursor, error) {
	if s == "" {
		return Cursor{}, nil
	}
	bad := field.Invalid("query:after", "after must be a next_cursor this API returned")
	b, err := base64.RawURLEncoding.DecodeString(s)
	if err != nil {
		return Cursor{}, bad
	}
	parts := strings.Split(string(b), ":")
	if len(parts) != 3 || parts[0] != cursorVersion {
		return Cursor{}, bad
	}
	tx, err1 := strconv.ParseUint(parts[1], 10, 64)
	seq, err2 := strconv.ParseInt(parts[2], 10, 64)
	if err1 != nil || err2 != nil || seq < 0 {
		return Cursor{}, bad
	}
	return Cursor{TxID: tx, Seq: seq}, nil
}

// ChangeQuery asks for one page of the feed.
type ChangeQuery struct {
	After Cursor
	Limit int
	// Resources filters by resource name; empty means all.
	Resources []string
	// Location, when set, is the location the caller's key is held to:
	// the feed then leaves out what happened at the organisation's other
	// locations and shows only that location's levels in stock changes
	// (see README.md, "Keys held to one location").
	Location *uuid.UUID
}

// ListChanges returns the committed changes after q.After in a stable
// order, and the cursor to continue from (q.After again when nothing new
// has committed). With a filter (q.Resources, or a key held to one
// location) a page may hold fewer than q.Limit changes, or none, while
// more follow: the cursor then moves past what the page read.
func (s *Service) ListChanges(ctx context.Context, p Principal, q ChangeQuery) ([]Change, Cursor, error) {
	for i, r := range q.Resources {
		known := false
		for _, k := range ChangeResources {
			known = known || r == k
		}
		if !known {
			return nil, q.After, field.Invalid("query:types", "types[%d] %q is not one of %s", i, r, strings.Join(ChangeResources, ", "))
		}
	}
	if q.Limit <= 0 {
		q.Limit = DefaultPageSize
	}
	q.Location = p.LocationID
	cs, next, err := s.store.ListChanges(ctx, p.OrgID, q)
	if err != nil {
		return nil, q.After, err
	}
	return cs, next, nil
}
