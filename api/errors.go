package api

import (
	"encoding/json"
	"log/slog"
	"net/http"
	"strconv"

	"github.com/labstack/echo/v4"

	"wheelbench/service"
)

// handleError is echo's HTTPErrorHandler: every error becomes problem+json;
// 5xx get a generic title and are logged once, here.
func (s *Server) handleError(err error, c echo.Context) {
	if c.Response().Committed {
		return
	}
	p, internal := toProblem(err)
	if internal {
		s.log.ErrorContext(c.Request().Context(), "internal error",
			slog.String("route", c.Path()), slog.String("error", err.Error()),
			slog.String("request_id", c.Response().Header().Get(echo.HeaderXRequestID)))
	}
	if p.Status == http.StatusNotFound && p.Detail == defaultDetail[service.ErrNotFound] {
		if noun := resourceNoun(c.Path()); noun != "" {
			p.Detail = "No " + noun + " with this id is visible to this API key."
		}
	}
	if p.Type == "" {
		p.Type = "about:blank"
	}
	p.Instance = c.Request().URL.Path
	p.RequestID = c.Response().Header().Get(echo.HeaderXRequestID)
	h := c.Response().Header()
	switch p.Status {
	case http.StatusUnauthorized:
		h.Set("WWW-Authenticate", `Bearer realm="wheelbench"`)
	case http.StatusServiceUnavailable:
		h.Set("Retry-After", "2")
	}
	body, _ := json.Marshal(p)
	h.Set(echo.HeaderContentType, "application/problem+json")
	h.Set("Content-Length", strconv.Itoa(len(body)))
	c.Response().WriteHeader(p.Status)
	if c.Request().Method != http.MethodHead {
		_, _ = c.Response().Write(body)
	}
}
