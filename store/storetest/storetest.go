// Package storetest gives each test its own PostgreSQL database, cloned from
// a template that holds every migration. The server is TEST_DATABASE_URL
// when that is set — and then only it: an unreachable one fails the tests
// rather than letting them run against another server. Unset, it is the
// local server by libpq defaults (PG* variables, else 127.0.0.1:5432 as
// user postgres), else a PostgreSQL container started with
// testcontainers-go when Docker answers. When none can be had the tests
// fail with a message saying how to get one, given once per test binary:
// database tests never skip.
package storetest

import (
	"context"
	"crypto/rand"
	"encoding/hex"
	"errors"
	"fmt"
	"os"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"github.com/jackc/pgx/v5"
	"github.com/jackc/pgx/v5/pgconn"
	"github.com/jackc/pgx/v5/pgxpool"
	"github.com/testcontainers/testcontainers-go"
	tcpostgres "github.com/testcontainers/testcontainers-go/modules/postgres"
	"github.com/testcontainers/testcontainers-go/wait"

	"wheelbench/store"
)

var (
	once      sync.Once
	serverCfg *pgx.ConnConfig // admin connection to the chosen server
	template  string
	setupErr  error
	told      atomic.Bool // the setup error has been explained once
)

const howTo = `no PostgreSQL for the tests. Set TEST_DATABASE_URL to a server where the
user may CREATE DATABASE (e.g. postgres://postgres@127.0.0.1:5432/postgres), or run
a local server on 127.0.0.1:5432 with user postgres (Debian: apt-get install -y postgresql,
then pg_ctlcluster 15 main start), or start Docker so testcontainers-go can run one`

// URL returns the connection string of a fresh database for t, dropped when
// t ends.
func URL(t testing.TB) string {
	t.Helper()
	once.Do(setup)
	if setupErr != nil {
		// The whole explanation once per test binary; later tests point to it.
		if told.Swap(true) {
			t.Fatal("no test database (see the first failing test of this package for why)")
		}
		t.Fatalf("%s\n(why: %v)", howTo, setupErr)
	}
	ctx, cancel := context.WithTimeout(context.Background(), time.Minute)
	defer cancel()
	name := "wb_test_" + randomHex(6)
	conn, err := pgx.ConnectConfig(ctx, serverCfg)
	if err != nil {
		t.Fatalf("connect to the test server: %v", err)
	}
	defer conn.Close(ctx)
	for attempt := 0; ; attempt++ {
		_, err = conn.Exec(ctx, fmt.Sprintf("CREATE DATABASE %s TEMPLATE %s",
			pgx.Identifier{name}.Sanitize(), pgx.Identifier{template}.Sanitize()))
		var pgErr *pgconn.PgError
		if err != nil && errors.As(err, &pgErr) && pgErr.Code == "55006" && attempt < 50 {
			time.Sleep(100 * time.Millisecond) // the template is briefly in use by a concurrent clone
			continue
		}
		break
	}
	if err != nil {
		t.Fatalf("clone test database: %v", err)
	}
	t.Cleanup(func() {
		ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
		defer cancel()
		c, err := pgx.ConnectConfig(ctx, serverCfg)
		if err != nil {
			t.Logf("drop test database %s: %v", name, err)
			return
		}
		defer c.Close(ctx)
		if _, err := c.Exec(ctx, "DROP DATABASE IF EXISTS "+pgx.Identifier{name}.Sanitize()+" WITH (FORCE)"); err != nil {
			t.Logf("drop test database %s: %v", name, err)
		}
	})
	cfg := serverCfg.Copy()
	cfg.Database = name
	return connString(cfg)
}

// Pool returns a pool on a fresh database for t, closed when t ends.
func Pool(t testing.TB) *pgxpool.Pool {
	t.Helper()
	pool, err := pgxpool.New(context.Background(), URL(t))
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(pool.Close)
	return pool
}

// connString renders a config back to a keyword/value connection string.
func connString(c *pgx.ConnConfig) string {
	kv := []string{
		"host=" + c.Host, fmt.Sprintf("port=%d", c.Port), "user=" + c.User, "dbname=" + c.Database,
	}
	if c.Password != "" {
		kv = append(kv, "password="+c.Password)
	}
	if c.TLSConfig == nil {
		kv = append(kv, "sslmode=disable")
	}
	return strings.Join(kv, " ")
}

func randomHex(n int) string {
	b := make([]byte, n)
	_, _ = rand.Read(b)
	return hex.EncodeToString(b)
}

func setup() {
	ctx, cancel := context.WithTimeout(context.Background(), 3*time.Minute)
	defer cancel()
	cfg, err := chooseServer(ctx, os.Getenv)
	if err != nil {
		setupErr = err
		return
	}
	serverCfg = cfg
	template = "wheelbench_tpl_" + store.MigrationsHash()
	setupErr = buildTemplate(ctx)
}

// chooseServer picks the test server. TEST_DATABASE_URL, when set, is the
// only candidate: a run that names its server must use it, so one that
// cannot be reached fails instead of quietly testing another server.
func chooseServer(ctx context.Context, getenv func(string) string) (*pgx.ConnConfig, error) {
	if url := getenv("TEST_DATABASE_URL"); url != "" {
		cfg, err := reach(ctx, url)
		if err != nil {
			return nil, fmt.Errorf("TEST_DATABASE_URL is set but its server cannot be used (the tests do not fall back to another): %w", err)
		}
		return cfg, nil
	}
	var errs []error
	for _, candidate := range []serverSource{fromLocal, fromContainer} {
		cfg, err := candidate(ctx, getenv)
		if err == nil {
			return cfg, nil
		}
		errs = append(errs, err)
	}
	return nil, errors.Join(append([]error{errors.New("TEST_DATABASE_URL is not set")}, errs...)...)
}

type serverSource func(ctx context.Context, getenv func(string) string) (*pgx.ConnConfig, error)

func reach(ctx context.Context, url string) (*pgx.ConnConfig, error) {
	cfg, err := pgx.ParseConfig(url)
	if err != nil {
		return nil, err
	}
	cfg.ConnectTimeout = 3 * time.Second
	conn, err := pgx.ConnectConfig(ctx, cfg)
	if err != nil {
		return nil, err
	}
	return cfg, conn.Close(ctx)
}

func fromLocal(ctx context.Context, getenv func(string) string) (*pgx.ConnConfig, error) {
	url := store.ResolveURL("", getenv)
	// The admin database: PGDATABASE when set, else postgres.
	if getenv("PGDATABASE") == "" {
		url = strings.Replace(url, "dbname="+store.DefaultDatabase, "dbname=postgres", 1)
	}
	cfg, err := reach(ctx, url)
	if err != nil {
		return nil, fmt.Errorf("local server: %w", err)
	}
	return cfg, nil
}

func fromContainer(ctx context.Context, getenv func(string) string) (cfg *pgx.ConnConfig, err error) {
	defer func() {
		if r := recover(); r != nil { // testcontainers panics when no Docker engine answers
			err = fmt.Errorf("testcontainers: %v", r)
		}
	}()
	if getenv("WHEELBENCH_TEST_NO_CONTAINER") != "" {
		return nil, errors.New("testcontainers: disabled by WHEELBENCH_TEST_NO_CONTAINER")
	}
	c, err := tcpostgres.Run(ctx, "postgres:16-alpine",
		tcpostgres.WithDatabase("postgres"), tcpostgres.WithUsername("postgres"), tcpostgres.WithPassword("postgres"),
		testcontainers.WithWaitStrategy(wait.ForLog("database system is ready to accept connections").WithOccurrence(2).WithStartupTimeout(90*time.Second)))
	if err != nil {
		return nil, fmt.Errorf("testcontainers: %w", err)
	}
	url, err := c.ConnectionString(ctx, "sslmode=disable")
	if err != nil {
		return nil, fmt.Errorf("testcontainers: %w", err)
	}
	return reach(ctx, url)
}

// buildTemplate creates the template database once per migration set, under
// an advisory lock so that test binaries running in parallel build it once.
func buildTemplate(ctx context.Context) error {
	conn, err := pgx.ConnectConfig(ctx, serverCfg)
	if err != nil {
		return err
	}
	defer conn.Close(ctx)
	const lockKey = 7361205119
	if _, err := conn.Exec(ctx, "SELECT pg_advisory_lock($1)", lockKey); err != nil {
		return err
	}
	defer conn.Exec(context.Background(), "SELECT pg_advisory_unlock($1)", lockKey) //nolint:errcheck
	var exists bool
	if err := conn.QueryRow(ctx, "SELECT EXISTS (SELECT 1 FROM pg_database WHERE datname = $1)", template).Scan(&exists); err != nil {
		return err
	}
	if exists {
		return nil
	}
	building := template + "_building"
	if _, err := conn.Exec(ctx, "DROP DATABASE IF EXISTS "+pgx.Identifier{building}.Sanitize()+" WITH (FORCE)"); err != nil {
		return err
	}
	if _, err := conn.Exec(ctx, "CREATE DATABASE "+pgx.Identifier{building}.Sanitize()); err != nil {
		return fmt.Errorf("create template database (the user needs CREATEDB): %w", err)
	}
	cfg := serverCfg.Copy()
	cfg.Database = building
	pool, err := pgxpool.New(ctx, connString(cfg))
	if err != nil {
		return err
	}
	err = store.Migrate(ctx, pool)
	pool.Close()
	if err != nil {
		return err
	}
	_, err = conn.Exec(ctx, fmt.Sprintf("ALTER DATABASE %s RENAME TO %s",
		pgx.Identifier{building}.Sanitize(), pgx.Identifier{template}.Sanitize()))
	return err
}
