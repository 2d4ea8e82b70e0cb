// Package store is the PostgreSQL implementation of service.Store: SQL on a
// pgx v5 pool, embedded migrations run by goose. It imports service for its
// types and errors only; nothing in it decides business rules.
package store

import (
	"context"
	"errors"
	"fmt"
	"io"
	"net"
	"strings"
	"syscall"
	"time"

	"github.com/jackc/pgx/v5"
	"github.com/jackc/pgx/v5/pgconn"
	"github.com/jackc/pgx/v5/pgxpool"

	"wheelbench/service"
	"wheelbench/service/background"
)

// querier is what both *pgxpool.Pool and pgx.Tx offer.
type querier interface {
	Exec(ctx context.Context, sql string, args ...any) (pgconn.CommandTag, error)
	Query(ctx context.Context, sql string, args ...any) (pgx.Rows, error)
	QueryRow(ctx context.Context, sql string, args ...any) pgx.Row
}

// Store implements service.Store on a pgx pool.
type Store struct {
	pool *pgxpool.Pool
}

var (
	_ service.Store     = (*Store)(nil)
	_ background.Outbox = (*Store)(nil)
	_ background.Pruner = (*Store)(nil)
)

// New returns a Store over pool.
func New(pool *pgxpool.Pool) *Store { return &Store{pool: pool} }

// Pool returns the underlying pool (for metrics).
func (s *Store) Pool() *pgxpool.Pool { return s.pool }

// wrap translates driver errors to the service's sentinels: no rows →
// ErrNotFound, unique or foreign-key violation → ErrConflict, a connection
// failure → ErrUnavailable. Call it once, deferred, per exported method.
func wrap(err *error, what string) {
	if *err == nil {
		return
	}
	e := *err
	var pgErr *pgconn.PgError
	switch {
	case errors.Is(e, pgx.ErrNoRows):
		*err = fmt.Errorf("%s: %w", what, service.ErrNotFound)
	case errors.As(e, &pgErr) && (pgErr.Code == "23505" || pgErr.Code == "23503"):
		// No constraint name: the text may reach a client.
		*err = fmt.Errorf("%s: %w", what, service.ErrConflict)
	case errors.As(e, &pgErr) && pgErr.Code == "22P02":
		*err = fmt.Errorf("%s: %w", what, service.ErrNotFound) // malformed id text
	case errors.As(e, &pgErr) && pgErr.Code[:2] == "22" && pgErr.Code != "22P02":
		// A data exception (a character the database cannot store, a
		// number out of its range) the API's checks let through: the
		// request's fault, never a server error.
		*err = fmt.Errorf("%s: %w: a value in the request cannot be stored", what, service.ErrInvalid)
	case isUnavailable(e):
		*err = fmt.Errorf("%s: %w: %v", what, service.ErrUnavailable, e)
	case errors.Is(e, service.ErrNotFound), errors.Is(e, service.ErrConflict),
		errors.Is(e, service.ErrPreconditionFailed), errors.Is(e, service.ErrInvalid):
		*err = fmt.Errorf("%s: %w", what, e)
	default:
		*err = fmt.Errorf("%s: %w", what, e)
	}
}

// isUnavailable reports errors that mean the database cannot be reached,
// is not there or will not take the work now, as opposed to a bad
// statement: any failure to connect (refused, the database does not
// exist, too many connections, authentication, the server starting or
// stopping), a connection cut mid-statement, and the SQLSTATE classes of
// those conditions on an open connection.
func isUnavailable(err error) bool {
	var connErr *pgconn.ConnectError
	if errors.As(err, &connErr) {
		return true
	}
	var pgErr *pgconn.PgError
	if errors.As(err, &pgErr) {
		switch pgErr.Code[:2] {
		case "08", // connection exception
			"53", // insufficient resources: too many connections, disk full, out of memory
			"57", // operator intervention: admin or crash shutdown, cannot connect now, database dropped
			"58": // system error: I/O error
			return true
		}
		return pgErr.Code == "3D000" // the database does not exist (dropped under us)
	}
	if pgconn.SafeToRetry(err) || pgconn.Timeout(err) {
		return true
	}
	var netErr interface{ Timeout() bool }
	if errors.As(err, &netErr) {
		return true
	}
	// A connection that died mid-query or mid-commit: the outcome of a write
	// is unknown, so the client must retry (with its Idempotency-Key).
	if errors.Is(err, io.EOF) || errors.Is(err, io.ErrUnexpectedEOF) || errors.Is(err, net.ErrClosed) ||
		errors.Is(err, syscall.ECONNRESET) || errors.Is(err, syscall.EPIPE) || errors.Is(err, syscall.ECONNREFUSED) {
		return true
	}
	if strings.Contains(err.Error(), "conn closed") {
		return true
	}
	return errors.Is(err, context.DeadlineExceeded) && !errors.Is(err, context.Canceled)
}

// txKey carries the transaction of RunIdempotent to the store methods the
// request calls, so that their writes commit or roll back with its record.
type txKey struct{}

// db returns the transaction carried by ctx, else the pool.
func (s *Store) db(ctx context.Context) querier {
	if tx, ok := ctx.Value(txKey{}).(pgx.Tx); ok {
		return tx
	}
	return s.pool
}

// inTx runs fn in a transaction — a savepoint inside the one ctx carries —
// retrying a bounded number of times on serialization failures and
// deadlocks (40001, 40P01) when it owns the transaction.
func (s *Store) inTx(ctx context.Context, fn func(tx pgx.Tx) error) error {
	if tx, ok := ctx.Value(txKey{}).(pgx.Tx); ok {
		return pgx.BeginFunc(ctx, tx, fn)
	}
	var err error
	for attempt := 0; attempt < 4; attempt++ {
		err = pgx.BeginFunc(ctx, s.pool, fn)
		var pgErr *pgconn.PgError
		if errors.As(err, &pgErr) && (pgErr.Code == "40001" || pgErr.Code == "40P01") {
			time.Sleep(time.Duration(attempt+1) * 5 * time.Millisecond)
			continue
		}
		return err
	}
	return err
}

// Ping reports whether the database answers within a second.
func (s *Store) Ping(ctx context.Context) (err error) {
	defer wrap(&err, "ping")
	ctx, cancel := context.WithTimeout(ctx, time.Second)
	defer cancel()
	var one int
	return s.pool.QueryRow(ctx, "SELECT 1").Scan(&one)
}
