package api

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"log/slog"
	"maps"
	"net/http"
	"net/url"
	"os"
	"slices"
	"strings"
	"time"
	"unicode/utf8"

	"github.com/getkin/kin-openapi/openapi3"
	"github.com/getkin/kin-openapi/openapi3filter"
	"github.com/getkin/kin-openapi/routers"
	"github.com/google/uuid"
	"github.com/labstack/echo/v4"

	"wheelbench/api/strictjson"
	"wheelbench/service"
	"wheelbench/service/field"
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
		if r, ok := s.routeFor(c.Request().Method, c.Path()); ok {
			if !p.Role.AtLeast(r.Role) {
				return &httpProblem{status: http.StatusForbidden, detail: "This operation needs a key with role " + string(r.Role) + " or higher."}
			}
			if r.OrgWide && p.Bound() {
				return &httpProblem{status: http.StatusForbidden, detail: "This API key is held to one location; this operation needs a key of the whole organisation."}
			}
		}
		return next(c)
	}
}

func unauthorized(detail string) error {
	return &httpProblem{status: http.StatusUnauthorized, detail: detail}
}

// validateRequest checks every /v1 request before a handler runs: query
// strings are valid UTF-8 without U+0000; a route that takes a body takes
// only application/json (415 otherwise); a body the spec validates is
// first read under the strict JSON policy (strictjson.Check: syntax,
// UTF-8, duplicate names, U+0000, numbers in range), so that what the spec
// validator sees is what the handler will decode; then the OpenAPI
// document judges the request.
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
		if err == nil && slices.Contains(slices.Collect(maps.Values(params)), "") {
			// The router matches /v1/builds to /v1/builds/{id} with an
			// empty id; that path was not asked for.
			err = errors.New("empty path parameter")
		}
		if err != nil {
			if allow := s.allowedMethods(req); len(allow) > 0 {
				c.Response().Header().Set("Allow", strings.Join(allow, ", "))
				return &httpProblem{status: http.StatusMethodNotAllowed,
					detail: "This path does not take " + req.Method + "; it takes " + strings.Join(allow, ", ") + "."}
			}
			return echo.ErrNotFound
		}
		if err := checkQuery(req, route); err != nil {
			return err
		}
		r, _ := s.routeFor(req.Method, c.Path())
		o, vreq := opts, req
		if route.Operation.RequestBody != nil {
			if !isJSON(req.Header.Get(echo.HeaderContentType)) {
				return &httpProblem{status: http.StatusUnsupportedMediaType, detail: "Send the body as application/json."}
			}
			if ce := req.Header.Get("Content-Encoding"); ce != "" && !strings.EqualFold(strings.TrimSpace(ce), "identity") {
				// Not decoded here: read as is, a compressed body would be
				// judged as garbled JSON.
				return &httpProblem{status: http.StatusUnsupportedMediaType, detail: "Send the body without a Content-Encoding: compressed request bodies are not accepted."}
			}
			if !r.OwnBodyCheck && !r.SpecCheckOnError {
				body, err := io.ReadAll(req.Body)
				if err != nil {
					return err
				}
				if err := strictjson.Check(body); err != nil {
					return err
				}
				req.Body = io.NopCloser(bytes.NewReader(body))
			}
		}
		if r.OwnBodyCheck || r.SpecCheckOnError {
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
		if raw, ok := params["id"]; ok {
			// A malformed id is treated as unknown (404), so that ids
			// never leak which form exists.
			id, err := uuid.Parse(raw)
			if err != nil {
				return fmt.Errorf("no such resource: %w", service.ErrNotFound)
			}
			c.Set("id", id) // pathID
		}
		return next(c)
	}
}

// allowedMethods lists the methods the spec has for req's path, none when
// the path is not the spec's.
func (s *Server) allowedMethods(req *http.Request) []string {
	var out []string
	for _, m := range []string{http.MethodGet, http.MethodPost, http.MethodPut, http.MethodPatch, http.MethodDelete} {
		try := req.Clone(req.Context())
		try.Method = m
		// Not a match with an empty path parameter (see validateRequest).
		if _, params, err := s.router.FindRoute(try); err == nil && !slices.Contains(slices.Collect(maps.Values(params)), "") {
			out = append(out, m)
		}
	}
	return out
}

// checkQuery refuses a query string that does not parse (a malformed
// %-escape would otherwise drop its pair unseen), names and values that
// are not valid UTF-8 or hold U+0000 (no parameter of ours takes them, and
// the database cannot compare text with them), a name the operation does
// not declare, and a declared one given twice (only one would be used).
func checkQuery(req *http.Request, route *routers.Route) error {
	bad := func(name, msg string) error {
		if !utf8.ValidString(name) {
			name = strings.ToValidUTF8(name, "\ufffd")
		}
		return field.Invalid("query:"+strings.ReplaceAll(name, "\x00", ""), "%s", msg)
	}
	if req.URL.RawQuery == "" {
		return nil
	}
	q, err := url.ParseQuery(req.URL.RawQuery)
	if err != nil {
		for _, pair := range strings.Split(req.URL.RawQuery, "&") {
			name, value, _ := strings.Cut(pair, "=")
			if _, err := url.QueryUnescape(name); err != nil {
				return bad(name, "is not a valid %-escaped query name")
			}
			if _, err := url.QueryUnescape(value); err != nil {
				n, _ := url.QueryUnescape(name)
				return bad(n, "is not a valid %-escaped query value")
			}
		}
		return bad("", "the query string does not parse")
	}
	// pretty: echo indents a JSON answer when it is present; every
	// operation takes it (the API description says so).
	declared := map[string]bool{"pretty": true}
	for _, ps := range []openapi3.Parameters{route.PathItem.Parameters, route.Operation.Parameters} {
		for _, p := range ps {
			if p.Value != nil && p.Value.In == openapi3.ParameterInQuery {
				declared[p.Value.Name] = true
			}
		}
	}
	names := make([]string, 0, len(q))
	for name := range q {
		names = append(names, name)
	}
	slices.Sort(names) // the first bad one by name, the same every time
	for _, name := range names {
		vals := q[name]
		invalid := !utf8.ValidString(name) || strings.IndexByte(name, 0) >= 0
		for _, v := range vals {
			invalid = invalid || !utf8.ValidString(v) || strings.IndexByte(v, 0) >= 0
		}
		switch {
		case invalid:
			return bad(name, "must be valid UTF-8 without the character U+0000")
		case !declared[name]:
			known := make([]string, 0, len(declared))
			for k := range declared {
				known = append(known, k)
			}
			slices.Sort(known)
			return bad(name, "is not a parameter of this operation (it takes "+strings.Join(known, ", ")+")")
		case len(vals) > 1:
			return bad(name, "is given more than once")
		}
	}
	return nil
}

// limitBody caps each request body at its route's limit — 413 when the
// declared length is over it, and a reader that fails past it otherwise —
// and bounds how long the body may take to arrive: reading it past the
// request timeout fails with a 408, and a body that ends before its
// declared Content-Length with a 400 (bodyReader). Neither is a fault of
// ours, so neither is logged as one.
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
		if req.Body != nil && req.Body != http.NoBody {
			// The deadline covers the connection's reads of this request;
			// net/http sets the next request's own. A writer that cannot
			// take it (a test recorder) leaves the body unbounded in time.
			_ = http.NewResponseController(c.Response()).SetReadDeadline(time.Now().Add(s.timeout))
		}
		req.Body = &bodyReader{r: http.MaxBytesReader(c.Response(), req.Body, limit)}
		return next(c)
	}
}

// bodyReader turns the errors of reading a request body that are the
// client's doing into problems with their status.
type bodyReader struct{ r io.ReadCloser }

func (b *bodyReader) Read(p []byte) (int, error) {
	n, err := b.r.Read(p)
	switch {
	case err == nil, err == io.EOF:
	case errors.Is(err, os.ErrDeadlineExceeded):
		err = &httpProblem{status: http.StatusRequestTimeout, detail: "The body did not arrive within the request timeout; send it whole and promptly."}
	case errors.Is(err, io.ErrUnexpectedEOF):
		err = &httpProblem{status: http.StatusBadRequest, detail: "The body ended before its declared Content-Length."}
	}
	return n, err
}

func (b *bodyReader) Close() error { return b.r.Close() }

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
		// As on every other route, the JSON policy speaks before the spec.
		if err := strictjson.Check(body); err != nil {
			return err
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
