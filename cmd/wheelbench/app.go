package main

import (
	"context"
	"errors"
	"fmt"
	"log/slog"
	"net"
	"net/http"
	"time"

	"github.com/jackc/pgx/v5/pgxpool"
	"github.com/prometheus/client_golang/prometheus"
	"github.com/prometheus/client_golang/prometheus/collectors"

	"wheelbench/api"
	"wheelbench/service"
	"wheelbench/store"
)

// app is the wired service: pool, store, service.
type app struct {
	pool *pgxpool.Pool
	st   *store.Store
	svc  *service.Service
}

// openApp connects to the database (creating it when missing and allowed)
// and runs pending migrations.
func openApp(ctx context.Context, cfg config, getenv func(string) string, log *slog.Logger) (*app, error) {
	url := store.ResolveURL(cfg.DatabaseURL, getenv)
	pool, err := store.Open(ctx, url)
	if err != nil {
		return nil, err
	}
	if err := store.Migrate(ctx, pool); err != nil {
		pool.Close()
		return nil, err
	}
	st := store.New(pool)
	return &app{pool: pool, st: st, svc: service.New(st, log)}, nil
}

func (a *app) close() { a.pool.Close() }

// serve runs the HTTP server until ctx ends, then drains in-flight requests.
func serve(ctx context.Context, cfg config, getenv func(string) string, log *slog.Logger) error {
	a, err := openApp(ctx, cfg, getenv, log)
	if err != nil {
		return err
	}
	defer a.close()

	reg := prometheus.NewRegistry()
	reg.MustRegister(collectors.NewGoCollector(), collectors.NewProcessCollector(collectors.ProcessCollectorOpts{}),
		store.NewPoolCollector(a.pool))
	srv, err := api.New(api.Config{Service: a.svc, Logger: log, Registry: reg, Gatherer: reg, RequestTimeout: cfg.RequestTimeout})
	if err != nil {
		return err
	}
	hs := &http.Server{
		Addr:              cfg.Addr,
		Handler:           srv.Handler(),
		ReadHeaderTimeout: 5 * time.Second,
		ReadTimeout:       30 * time.Second,
		WriteTimeout:      cfg.RequestTimeout + 10*time.Second,
		IdleTimeout:       120 * time.Second,
		MaxHeaderBytes:    64 << 10,
		BaseContext:       func(net.Listener) context.Context { return context.WithoutCancel(ctx) },
	}
	ln, err := net.Listen("tcp", cfg.Addr)
	if err != nil {
		return err
	}
	log.Info("serving", slog.String("addr", ln.Addr().String()))
	errc := make(chan error, 1)
	go func() { errc <- hs.Serve(ln) }()
	select {
	case err := <-errc:
		return err
	case <-ctx.Done():
	}
	log.Info("shutting down: draining in-flight requests", slog.Duration("timeout", cfg.ShutdownTimeout))
	sctx, cancel := context.WithTimeout(context.Background(), cfg.ShutdownTimeout)
	defer cancel()
	if err := hs.Shutdown(sctx); err != nil {
		return fmt.Errorf("shutdown: %w", err)
	}
	if err := <-errc; err != nil && !errors.Is(err, http.ErrServerClosed) {
		return err
	}
	log.Info("stopped")
	return nil
}
