package api

import (
	"net/http"

	"github.com/labstack/echo/v4"
	"github.com/prometheus/client_golang/prometheus"
	"github.com/prometheus/client_golang/prometheus/promhttp"

	"wheelbench/openapi"
	"wheelbench/service"
)

// routeTable lists every operation of the spec with its handler, role and
// body limit. The parity test checks it against openapi.yaml both ways.
func (s *Server) routeTable(g prometheus.Gatherer) []Route {
	if g == nil {
		g = prometheus.NewRegistry()
	}
	metricsHandler := echo.WrapHandler(promhttp.HandlerFor(g, promhttp.HandlerOpts{}))
	return []Route{
		{Method: http.MethodGet, Path: "/healthz", handler: s.healthz},
		{Method: http.MethodGet, Path: "/readyz", handler: s.readyz},
		{Method: http.MethodGet, Path: "/metrics", handler: metricsHandler},
		{Method: http.MethodGet, Path: "/openapi.yaml", handler: serveOpenAPI},

		{Method: http.MethodGet, Path: "/v1/me", Role: service.RoleRead, handler: s.getMe},

		{Method: http.MethodGet, Path: "/v1/locations", Role: service.RoleRead, handler: s.listLocations},
		{Method: http.MethodPost, Path: "/v1/locations", Role: service.RoleAdmin, Idempotent: true, handler: s.createLocation},
		{Method: http.MethodGet, Path: "/v1/locations/{id}", Role: service.RoleRead, handler: s.getLocation},
		{Method: http.MethodPatch, Path: "/v1/locations/{id}", Role: service.RoleAdmin, handler: s.updateLocation},

		{Method: http.MethodGet, Path: "/v1/api-keys", Role: service.RoleAdmin, handler: s.listAPIKeys},
		// Not idempotent by key: a replay would have to keep the secret.
		{Method: http.MethodPost, Path: "/v1/api-keys", Role: service.RoleAdmin, handler: s.createAPIKey},
		{Method: http.MethodDelete, Path: "/v1/api-keys/{id}", Role: service.RoleAdmin, handler: s.revokeAPIKey},

		{Method: http.MethodGet, Path: "/v1/parts", Role: service.RoleRead, handler: s.listParts},
		{Method: http.MethodPost, Path: "/v1/parts", Role: service.RoleWrite, Idempotent: true, handler: s.createPart},
		{Method: http.MethodGet, Path: "/v1/parts/{id}", Role: service.RoleRead, handler: s.getPart},
		{Method: http.MethodPatch, Path: "/v1/parts/{id}", Role: service.RoleWrite, handler: s.updatePart},
		{Method: http.MethodGet, Path: "/v1/parts/{id}/stock", Role: service.RoleRead, handler: s.getPartStock},
		{Method: http.MethodPut, Path: "/v1/parts/{id}/stock", Role: service.RoleWrite, handler: s.putPartStock},

		{Method: http.MethodGet, Path: "/v1/changes", Role: service.RoleRead, handler: s.listChanges},

		{Method: http.MethodGet, Path: "/v1/webhook-endpoints", Role: service.RoleAdmin, handler: s.listWebhookEndpoints},
		// Not idempotent by key: a replay would have to keep the signing secret.
		{Method: http.MethodPost, Path: "/v1/webhook-endpoints", Role: service.RoleAdmin, handler: s.createWebhookEndpoint},
		{Method: http.MethodGet, Path: "/v1/webhook-endpoints/{id}", Role: service.RoleAdmin, handler: s.getWebhookEndpoint},
		{Method: http.MethodPatch, Path: "/v1/webhook-endpoints/{id}", Role: service.RoleAdmin, handler: s.updateWebhookEndpoint},
		{Method: http.MethodDelete, Path: "/v1/webhook-endpoints/{id}", Role: service.RoleAdmin, handler: s.deleteWebhookEndpoint},
	}
}

func (s *Server) healthz(c echo.Context) error {
	return c.JSON(http.StatusOK, map[string]string{"status": "ok"})
}

func (s *Server) readyz(c echo.Context) error {
	if err := s.svc.Ready(c.Request().Context()); err != nil {
		return &httpProblem{status: http.StatusServiceUnavailable, detail: "The database does not answer."}
	}
	return c.JSON(http.StatusOK, map[string]string{"status": "ok"})
}

func serveOpenAPI(c echo.Context) error {
	return c.Blob(http.StatusOK, "application/yaml", openapi.YAML())
}
