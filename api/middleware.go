package api

import (
	"bytes"
	"errors"
	"io"
	"log/slog"
	"net/http"
	"strings"
	"time"

	"github.com/getkin/kin-openapi/openapi3filter"
	"github.com/labstack/echo/v4"

	"wheelbench/service"
)

// principal returns the authenticated caller of c.
func principal(c echo.Context) service.Principal {
	p, _ := c.Get("principal").(service.Principal)
	return p
}

// isV1 reports whether the request is for the authenticated API.
func isV1(path string) bool { return strings.HasPrefix(path, "/v1/") }

// authenticate resolves the Bearer key for every /v1 request and enforces the
// route's role before anything reads the body.
func (s *Server) authenticate(next echo.HandlerFunc) echo.HandlerFunc {
	return func(c echo.Context) error {
		if !isV1(c.Request().URL.Path) {
			return next(c)
		}
		h := c.Request().Header.Get(echo.HeaderAuthorization)
		scheme, secret, ok := strings.Cut(h, " ")
		if h == "" {
			return unauthorized("Send Authorization: Bearer <api key>.")
		}
		if !ok || !strings.EqualFold(scheme, "Bearer") || strings.TrimSpace(secret) == "" {
			return unauthorized("The Authorization header must be Bearer <api key>.")
		}
		p, err := s.svc.Authenticate(c.Request().Context(), strings.TrimSpace(secret))
		if err != nil {
			if errors.Is(err, service.ErrUnauthenticated) {
				return unauthorized("The API key is malformed, unknown or revoked.")
			}
			return err
		}
		c.Set("principal", p)
		if r, ok := s.routeFor(c.Request().Method, c.Path()); ok && !p.Role.AtLeast(r.Role) {
			return &httpProblem{status: http.StatusForbidden, detail: "This operation needs a key with role " + string(r.Role) + " or higher."}
		}
		return next(c)
	}
}

// httpProblem is an error with a fixed status and detail.
type httpProblem struct {
	status int
	detail string
}

func (e *httpProblem) Error() string { return e.detail }

func unauthorized(detail string) error {
	return &httpProblem{status: http.StatusUnauthorized, detail: detail}
}

// validateRequest checks every /v1 request against the OpenAPI document
// before a handler runs.
func (s *Server) validateRequest(next echo.HandlerFunc) echo.HandlerFunc {
	opts := &openapi3filter.Options{
		MultiError:         true,
		AuthenticationFunc: openapi3filter.NoopAuthenticationFunc,
	}
	noBody := *opts
	noBody.ExcludeRequestBody = true
	return func(c echo.Context) error {
		req := c.Request()
		if !isV1(req.URL.Path) {
			return next(c)
		}
		route, params, err := s.router.FindRoute(req)
		if err != nil {
			return echo.ErrNotFound
		}
		o, vreq := opts, req
		if r, ok := s.routeFor(req.Method, c.Path()); ok && (r.OwnBodyCheck || r.SpecCheckOnError) {
			// The body is judged later; hide it, or the validator's security
			// step would read all of it into memory for nothing.
			o = &noBody
			shallow := *req
			shallow.Body = http.NoBody
			vreq = &shallow
		}
		in := &openapi3filter.RequestValidationInput{Request: vreq, PathParams: params, Route: route, Options: o}
		if err := openapi3filter.ValidateRequest(req.Context(), in); err != nil {
			if verr := fromSpecError(err); verr != nil {
				return verr
			}
		}
		return next(c)
	}
}

// limitBody caps each request body at its route's limit: 413 when the
// declared length is over it, and a reader that fails past it otherwise.
func (s *Server) limitBody(next echo.HandlerFunc) echo.HandlerFunc {
	return func(c echo.Context) error {
		limit := int64(DefaultBodyLimit)
		if r, ok := s.routeFor(c.Request().Method, c.Path()); ok && r.BodyLimit > 0 {
			limit = r.BodyLimit
		}
		req := c.Request()
		if req.ContentLength > limit {
			return &http.MaxBytesError{Limit: limit}
		}
		req.Body = http.MaxBytesReader(c.Response(), req.Body, limit)
		return next(c)
	}
}

// logRequests writes one structured line per request.
func (s *Server) logRequests(next echo.HandlerFunc) echo.HandlerFunc {
	return func(c echo.Context) error {
		start := time.Now()
		err := next(c)
		if err != nil {
			c.Error(err)
		}
		status := c.Response().Status
		level := slog.LevelInfo
		switch {
		case status == http.StatusServiceUnavailable:
			level = slog.LevelWarn
		case status >= 500:
			level = slog.LevelError
		}
		s.log.LogAttrs(c.Request().Context(), level, "request",
			slog.String("method", c.Request().Method),
			slog.String("route", c.Path()),
			slog.Int("status", status),
			slog.Duration("duration", time.Since(start)),
			slog.String("request_id", c.Response().Header().Get(echo.HeaderXRequestID)),
		)
		return nil
	}
}

// specCheckOnError serves routes whose valid bodies are too costly to run
// through the generic spec validator on every request (a build's spec is a
// deep document): the handler's strict decoding and the service's
// validation judge the body first, and only when they refuse it is the
// body checked against the spec, so that a malformed request gets the same
// 400 with the same pointers as on every other route. It runs innermost,
// inside the Idempotency-Key wrapper, so a replayed answer is the final one.
func (s *Server) specCheckOnError(next echo.HandlerFunc) echo.HandlerFunc {
	opts := &openapi3filter.Options{MultiError: true, AuthenticationFunc: openapi3filter.NoopAuthenticationFunc}
	return func(c echo.Context) error {
		req := c.Request()
		body, err := io.ReadAll(req.Body)
		if err != nil {
			return err
		}
		req.Body = io.NopCloser(bytes.NewReader(body))
		herr := next(c)
		if herr == nil {
			return nil
		}
		if p, _ := toProblem(herr); p.Status != http.StatusBadRequest && p.Status != http.StatusUnprocessableEntity {
			return herr
		}
		check := req.Clone(req.Context())
		check.Body = io.NopCloser(bytes.NewReader(body))
		route, params, err := s.router.FindRoute(check)
		if err != nil {
			return herr
		}
		in := &openapi3filter.RequestValidationInput{Request: check, PathParams: params, Route: route, Options: opts}
		if err := openapi3filter.ValidateRequest(check.Context(), in); err != nil {
			if verr := fromSpecError(err); verr != nil {
				return verr
			}
		}
		return herr
	}
}
