package api

import (
	"bytes"
	"context"
	"crypto/sha256"
	"io"
	"net/http"

	"github.com/labstack/echo/v4"

	"wheelbench/service"
)

// idempotent makes a creating POST safe to retry: with an Idempotency-Key
// header the request runs at most once per organisation and key, and a
// retry (the same method, path, body and, for a key held to one location,
// that location) gets the first response (status, body, Location and ETag) again,
// marked Idempotent-Replayed: true. Keys are kept 24 hours.
func (s *Server) idempotent(next echo.HandlerFunc) echo.HandlerFunc {
	return func(c echo.Context) error {
		key := c.Request().Header.Get("Idempotency-Key")
		if key == "" {
			return next(c)
		}
		body, err := io.ReadAll(c.Request().Body)
		if err != nil {
			return err
		}
		c.Request().Body = io.NopCloser(bytes.NewReader(body))
		h := sha256.New()
		io.WriteString(h, c.Request().Method+" "+c.Request().URL.Path+"\n")
		// A key held to one location must not be replayed an answer given
		// to a key of the whole organisation (or of another location): the
		// location it is held to is part of what the request is.
		if loc := principal(c).LocationID; loc != nil {
			io.WriteString(h, "held to "+loc.String()+"\n")
		}
		h.Write(body)

		real := c.Response().Writer
		rec := &recorder{header: http.Header{}}
		resp, replayed, err := s.svc.RunIdempotent(c.Request().Context(), principal(c),
			service.IdempotentRequest{Key: key, Fingerprint: h.Sum(nil)},
			func(ctx context.Context) (service.StoredResponse, error) {
				c.SetRequest(c.Request().WithContext(ctx))
				c.Response().Writer = rec
				defer func() { c.Response().Writer = real }()
				if err := next(c); err != nil {
					c.Error(err)
				}
				return service.StoredResponse{Status: rec.status, Headers: keptHeaders(rec.header), Body: rec.body.Bytes()}, nil
			})
		if err != nil {
			if c.Response().Committed && !replayed {
				// The handler ran but its transaction did not commit: the
				// recorded answer must not reach the client.
				c.Response().Committed = false
			}
			return err
		}
		for k, v := range resp.Headers {
			real.Header().Set(k, v)
		}
		if replayed {
			real.Header().Set("Idempotent-Replayed", "true")
		}
		c.Response().Committed = true
		c.Response().Status = resp.Status
		real.WriteHeader(resp.Status)
		_, err = real.Write(resp.Body)
		return err
	}
}

// keptHeaders are the response headers a replay repeats.
func keptHeaders(h http.Header) map[string]string {
	out := map[string]string{}
	for _, k := range []string{"Content-Type", "Location", "ETag", "Cache-Control"} {
		if v := h.Get(k); v != "" {
			out[k] = v
		}
	}
	return out
}

// recorder keeps a response in memory.
type recorder struct {
	header http.Header
	status int
	body   bytes.Buffer
}

func (r *recorder) Header() http.Header { return r.header }
func (r *recorder) Write(b []byte) (int, error) {
	if r.status == 0 {
		r.status = http.StatusOK
	}
	return r.body.Write(b)
}
func (r *recorder) WriteHeader(code int) {
	if r.status == 0 {
		r.status = code
	}
}
