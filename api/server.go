// Package api is wheelbench's HTTP layer on echo v4: routes, middleware,
// authentication, OpenAPI request validation and problem+json errors. A
// handler binds, converts to a service input, calls one service method and
// writes the result; it never checks business rules, touches pgx or logs.
//
// It imports service and openapi; nothing imports it but cmd.
package api

import (
	"errors"
	"log/slog"
	"net/http"
	"strings"
	"time"

	"github.com/getkin/kin-openapi/openapi3"
	"github.com/getkin/kin-openapi/openapi3filter"
	"github.com/getkin/kin-openapi/routers"
	"github.com/getkin/kin-openapi/routers/legacy"
	"github.com/google/uuid"
	"github.com/labstack/echo/v4"
	"github.com/labstack/echo/v4/middleware"
	"github.com/prometheus/client_golang/prometheus"

	"wheelbench/openapi"
	"wheelbench/service"
)

// DefaultBodyLimit applies to every route that does not set its own.
const DefaultBodyLimit = 1 << 20

// Config is what the HTTP layer needs.
type Config struct {
	Service *service.Service
	Logger  *slog.Logger
	// Registry receives the HTTP metrics; /metrics serves Gatherer. When both
	// are nil the server keeps a registry of its own.
	Registry prometheus.Registerer
	Gatherer prometheus.Gatherer
	// RequestTimeout bounds each request's work (default 30 s).
	RequestTimeout time.Duration
}

// Server is the HTTP API.
type Server struct {
	svc    *service.Service
	log    *slog.Logger
	doc    *openapi3.T
	router routers.Router
	routes []Route
	byKey  map[string]Route // "METHOD echo-path"
	m      *metrics
	echo   *echo.Echo
	// timeout is RequestTimeout: each request's work, and its body's arrival.
	timeout time.Duration
}

// Route is one operation: the spec's method and path, the role it needs,
// and its body limit.
type Route struct {
	Method    string
	Path      string // OpenAPI form, /v1/locations/{id}
	Role      service.Role
	BodyLimit int64
	// OrgWide routes change or reveal the whole organisation (locations,
	// keys, webhooks, the catalog and price list): a key held to one
	// location gets 403.
	OrgWide bool
	// Idempotent routes honour Idempotency-Key (every creating POST).
	Idempotent bool
	// OwnBodyCheck skips the spec's request-body validation: the handler
	// checks the body against the spec itself (the spoke-length routes; with
	// the spec's check a request took 2.3-2.8 times the CPU, a batch 1.9).
	OwnBodyCheck bool
	// SpecCheckOnError skips the spec's body validation for bodies the
	// handler accepts and applies it to those it refuses (specCheckOnError;
	// POST /v1/builds, where it saves a fifth of the service's CPU).
	SpecCheckOnError bool
	handler          echo.HandlerFunc
}

func init() {
	openapi3.DefineStringFormatValidator("uuid", openapi3.NewCallbackValidator(func(s string) error {
		_, err := uuid.Parse(s)
		if err != nil || len(s) != 36 {
			return errInvalidUUID
		}
		return nil
	}))
	openapi3filter.RegisterBodyDecoder("application/problem+json", openapi3filter.JSONBodyDecoder)
}

var errInvalidUUID = errors.New("must be a UUID such as 0192f5e2-7c1a-7b3e-9d4f-2a6b8c0d1e2f")

// New builds the server. It fails when the embedded OpenAPI document does
// not load or validate.
func New(cfg Config) (*Server, error) {
	doc, err := openapi.Load()
	if err != nil {
		return nil, err
	}
	router, err := legacy.NewRouter(doc)
	if err != nil {
		return nil, err
	}
	if cfg.Logger == nil {
		cfg.Logger = slog.New(slog.DiscardHandler)
	}
	if cfg.RequestTimeout == 0 {
		cfg.RequestTimeout = 30 * time.Second
	}
	if cfg.Registry == nil && cfg.Gatherer == nil {
		reg := prometheus.NewRegistry()
		cfg.Registry, cfg.Gatherer = reg, reg
	}
	s := &Server{svc: cfg.Service, log: cfg.Logger, doc: doc, router: router, timeout: cfg.RequestTimeout}
	s.m = newMetrics(cfg.Registry)

	e := echo.New()
	e.HideBanner, e.HidePort = true, true
	e.HTTPErrorHandler = s.handleError
	e.Use(middleware.Recover())
	e.Use(middleware.RequestID())
	e.Use(s.logRequests)
	e.Use(s.m.middleware)
	e.Use(s.limitBody)
	e.Use(middleware.ContextTimeout(cfg.RequestTimeout))
	e.Use(s.authenticate)
	e.Use(s.validateRequest)

	s.routes = s.routeTable(cfg.Gatherer)
	s.byKey = make(map[string]Route, len(s.routes))
	for _, r := range s.routes {
		var mw []echo.MiddlewareFunc
		if r.Idempotent {
			mw = append(mw, s.idempotent)
		}
		if r.SpecCheckOnError {
			mw = append(mw, s.specCheckOnError)
		}
		e.Add(r.Method, echoPath(r.Path), r.handler, mw...)
		s.byKey[r.Method+" "+echoPath(r.Path)] = r
	}
	s.echo = e
	return s, nil
}

// Handler returns the server as an http.Handler.
func (s *Server) Handler() http.Handler { return s.echo }

// Routes lists every registered operation (for the route↔spec parity test).
func (s *Server) Routes() []Route { return s.routes }

// Doc returns the loaded OpenAPI document.
func (s *Server) Doc() *openapi3.T { return s.doc }

// echoPath turns /v1/locations/{id} into /v1/locations/:id.
func echoPath(p string) string {
	parts := strings.Split(p, "/")
	for i, part := range parts {
		if strings.HasPrefix(part, "{") && strings.HasSuffix(part, "}") {
			parts[i] = ":" + part[1:len(part)-1]
		}
	}
	return strings.Join(parts, "/")
}

// routeFor finds the route table entry for an echo route path.
func (s *Server) routeFor(method, echoRoute string) (Route, bool) {
	r, ok := s.byKey[method+" "+echoRoute]
	return r, ok
}
