package main

import (
	"context"
	"errors"
	"fmt"
	"log/slog"
	"math"
	"net"
	"net/http"
	"runtime/debug"
	"time"

	"github.com/jackc/pgx/v5/pgxpool"
	"github.com/prometheus/client_golang/prometheus"
	"github.com/prometheus/client_golang/prometheus/collectors"

	"wheelbench/api"
	"wheelbench/service"
	"wheelbench/service/background"
	"wheelbench/service/webhook"
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
	svc := service.New(st, log)
	svc.ConfigureWebhooks(service.WebhookSettings{AllowPrivate: cfg.WebhookAllowPrivate})
	return &app{pool: pool, st: st, svc: svc}, nil
}

func (a *app) close() { a.pool.Close() }

// serveGCPercent is serve's garbage-collection target when GOGC is unset.
// A build request allocates about 50 kB, mostly short-lived encode and
// decode buffers; at Go's default of 100 the collector took about an
// eighth of the service's CPU under load (12 %), at 400 about 3 %, for a
// heap that may grow to five times the live data (tens of megabytes).
const serveGCPercent = 400

// serve runs the HTTP server until ctx ends, then drains in-flight requests.
func serve(ctx context.Context, cfg config, getenv func(string) string, log *slog.Logger) error {
	if getenv("GOGC") == "" {
		debug.SetGCPercent(serveGCPercent)
		log.Info("garbage collection target set (GOGC unset)", slog.Int("gc_percent", serveGCPercent))
	}
	// The heap may grow to (1 + GOGC/100) times the live data; in a
	// container with a memory limit, GOMEMLIMIT below it keeps that growth
	// from reaching the limit (deploy/kubernetes/deployment.yaml). Logged
	// so an operator can see which applies.
	if limit := debug.SetMemoryLimit(-1); limit == math.MaxInt64 {
		log.Info("no Go memory limit (GOMEMLIMIT unset): in a container with a memory limit, set it to about 90 % of that")
	} else {
		log.Info("Go memory limit", slog.Int64("bytes", limit))
	}
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
	dispatcher, err := background.NewDispatcher(a.st, log, background.Config{
		Sender:   background.NewHTTPSender(cfg.WebhookAllowPrivate, 0),
		Poll:     cfg.WebhookPoll,
		Retry:    webhook.RetryConfig{Window: cfg.WebhookRetryWindow},
		Observer: background.NewMetrics(reg),
	})
	if err != nil {
		return err
	}
	ln, err := net.Listen("tcp", cfg.Addr)
	if err != nil {
		return err
	}
	// The webhook dispatcher runs beside the HTTP server; on shutdown it
	// stops claiming, finishes the sends under way and releases the rest.
	dctx, stopDispatch := context.WithCancel(context.WithoutCancel(ctx))
	defer stopDispatch()
	dispatched := make(chan struct{})
	go func() { defer close(dispatched); dispatcher.Run(dctx) }()
	log.Info("webhook dispatcher started", slog.Duration("poll", cfg.WebhookPoll),
		slog.Duration("retry_window", cfg.WebhookRetryWindow), slog.Bool("allow_private", cfg.WebhookAllowPrivate))
	retention := background.DefaultRetention
	retention.Changes = cfg.ChangeRetention
	go background.RunJanitor(dctx, a.st, retention, log)
	log.Info("serving", slog.String("addr", ln.Addr().String()))
	errc := make(chan error, 1)
	go func() { errc <- hs.Serve(ln) }()
	select {
	case err := <-errc:
		stopDispatch()
		<-dispatched
		return err
	case <-ctx.Done():
	}
	log.Info("shutting down: draining in-flight requests and webhook sends", slog.Duration("timeout", cfg.ShutdownTimeout))
	sctx, cancel := context.WithTimeout(context.Background(), cfg.ShutdownTimeout)
	defer cancel()
	stopDispatch()
	if err := hs.Shutdown(sctx); err != nil {
		return fmt.Errorf("shutdown: %w", err)
	}
	if err := <-errc; err != nil && !errors.Is(err, http.ErrServerClosed) {
		return err
	}
	// The pool closes when serve returns: wait for the dispatcher first.
	select {
	case <-dispatched:
	case <-sctx.Done():
		return errors.New("shutdown: webhook sends did not finish in time; their leases will expire and another replica will retry them")
	}
	log.Info("stopped")
	return nil
}
