package store

import (
	"context"
	"errors"
	"fmt"
	"strings"
	"time"

	"github.com/jackc/pgx/v5"
	"github.com/jackc/pgx/v5/pgconn"
	"github.com/jackc/pgx/v5/pgxpool"
)

// DefaultDatabase is the database name used when neither a URL nor PGDATABASE
// names one.
const DefaultDatabase = "wheelbench"

// ResolveURL returns the connection string to use: url when set, else the
// local server by libpq conventions — PG* variables where set, else host
// 127.0.0.1, port 5432, user postgres, database wheelbench.
func ResolveURL(url string, getenv func(string) string) string {
	if url != "" {
		return url
	}
	var kv []string
	def := func(env, key, val string) {
		if getenv(env) == "" {
			kv = append(kv, key+"="+val)
		}
	}
	def("PGHOST", "host", "127.0.0.1")
	def("PGPORT", "port", "5432")
	def("PGUSER", "user", "postgres")
	def("PGDATABASE", "dbname", DefaultDatabase)
	return strings.Join(kv, " ")
}

// Open connects a pool to the database at url, creating the database when it
// is missing and the role may (CREATEDB). It does not migrate.
func Open(ctx context.Context, url string) (*pgxpool.Pool, error) {
	cfg, err := pgxpool.ParseConfig(url)
	if err != nil {
		return nil, fmt.Errorf("database URL: %w", err)
	}
	cfg.ConnConfig.ConnectTimeout = 5 * time.Second
	if cfg.MaxConns < 8 {
		cfg.MaxConns = 8
	}
	if err := ensureDatabase(ctx, cfg.ConnConfig); err != nil {
		return nil, err
	}
	pool, err := pgxpool.NewWithConfig(ctx, cfg)
	if err != nil {
		return nil, fmt.Errorf("database pool: %w", err)
	}
	return pool, nil
}

// ensureDatabase creates cfg's database when connecting fails with
// "database does not exist" (SQLSTATE 3D000).
func ensureDatabase(ctx context.Context, cfg *pgx.ConnConfig) error {
	conn, err := pgx.ConnectConfig(ctx, cfg)
	if err == nil {
		return conn.Close(ctx)
	}
	var pgErr *pgconn.PgError
	if !errors.As(err, &pgErr) || pgErr.Code != "3D000" {
		return fmt.Errorf("connect to database %q: %w", cfg.Database, err)
	}
	admin := cfg.Copy()
	admin.Database = "postgres"
	aconn, err := pgx.ConnectConfig(ctx, admin)
	if err != nil {
		return fmt.Errorf("database %q is missing and the server's postgres database cannot be reached to create it: %w", cfg.Database, err)
	}
	defer aconn.Close(ctx)
	_, err = aconn.Exec(ctx, "CREATE DATABASE "+pgx.Identifier{cfg.Database}.Sanitize())
	if err != nil && !(errors.As(err, &pgErr) && pgErr.Code == "42P04") { // 42P04: created meanwhile
		return fmt.Errorf("create database %q: %w", cfg.Database, err)
	}
	return nil
}
