package api

import (
	"net/http"

	"github.com/labstack/echo/v4"
	"github.com/prometheus/client_golang/prometheus"
	"github.com/prometheus/client_golang/prometheus/promhttp"

	"wheelbench/openapi"
	"wheelbench/service"
)

// routeTable lists every operation of the spec with its handler, role,
// whether it is organisation-wide (OrgWide: refused to keys held to one
// location) and body limit. The parity test checks it against openapi.yaml
// both ways.
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
		{Method: http.MethodPost, Path: "/v1/locations", Role: service.RoleAdmin, OrgWide: true, Idempotent: true, handler: s.createLocation},
		{Method: http.MethodGet, Path: "/v1/locations/{id}", Role: service.RoleRead, handler: s.getLocation},
		{Method: http.MethodPatch, Path: "/v1/locations/{id}", Role: service.RoleAdmin, handler: s.updateLocation},

		{Method: http.MethodGet, Path: "/v1/api-keys", Role: service.RoleAdmin, OrgWide: true, handler: s.listAPIKeys},
		// Not idempotent by key: a replay would have to keep the secret.
		{Method: http.MethodPost, Path: "/v1/api-keys", Role: service.RoleAdmin, OrgWide: true, handler: s.createAPIKey},
		{Method: http.MethodDelete, Path: "/v1/api-keys/{id}", Role: service.RoleAdmin, OrgWide: true, handler: s.revokeAPIKey},

		{Method: http.MethodGet, Path: "/v1/parts", Role: service.RoleRead, handler: s.listParts},
		{Method: http.MethodPost, Path: "/v1/parts", Role: service.RoleWrite, OrgWide: true, Idempotent: true, handler: s.createPart},
		{Method: http.MethodGet, Path: "/v1/parts/{id}", Role: service.RoleRead, handler: s.getPart},
		{Method: http.MethodPatch, Path: "/v1/parts/{id}", Role: service.RoleWrite, OrgWide: true, handler: s.updatePart},
		{Method: http.MethodGet, Path: "/v1/parts/{id}/stock", Role: service.RoleRead, handler: s.getPartStock},
		{Method: http.MethodPut, Path: "/v1/parts/{id}/stock", Role: service.RoleWrite, handler: s.putPartStock},

		{Method: http.MethodGet, Path: "/v1/builds", Role: service.RoleRead, handler: s.listBuilds},
		{Method: http.MethodPost, Path: "/v1/builds", Role: service.RoleWrite, Idempotent: true, SpecCheckOnError: true, handler: s.createBuild},
		{Method: http.MethodGet, Path: "/v1/builds/{id}", Role: service.RoleRead, handler: s.getBuild},
		{Method: http.MethodPatch, Path: "/v1/builds/{id}", Role: service.RoleWrite, handler: s.updateBuild},
		{Method: http.MethodGet, Path: "/v1/builds/{id}/sheet", Role: service.RoleRead, handler: s.getBuildSheet},
		{Method: http.MethodGet, Path: "/v1/builds/{id}/lacing.svg", Role: service.RoleRead, handler: s.getBuildLacing},
		{Method: http.MethodGet, Path: "/v1/builds/{id}/tension-audits", Role: service.RoleRead, handler: s.listBuildAudits},
		{Method: http.MethodPost, Path: "/v1/builds/{id}/tension-audits", Role: service.RoleWrite, Idempotent: true, handler: s.createBuildAudit},
		{Method: http.MethodGet, Path: "/v1/price-list", Role: service.RoleRead, handler: s.getPriceList},
		{Method: http.MethodPut, Path: "/v1/price-list", Role: service.RoleAdmin, OrgWide: true, handler: s.putPriceList},
		{Method: http.MethodPost, Path: "/v1/quotes", Role: service.RoleWrite, Idempotent: true, handler: s.createQuote},
		{Method: http.MethodGet, Path: "/v1/quotes/{id}", Role: service.RoleRead, handler: s.getQuote},
		{Method: http.MethodPost, Path: "/v1/quotes/{id}/accept", Role: service.RoleWrite, Idempotent: true, handler: s.acceptQuote},

		{Method: http.MethodGet, Path: "/v1/tools", Role: service.RoleRead, handler: s.listTools},
		{Method: http.MethodPost, Path: "/v1/tools", Role: service.RoleWrite, Idempotent: true, handler: s.createTool},
		{Method: http.MethodGet, Path: "/v1/tools/{id}", Role: service.RoleRead, handler: s.getTool},
		{Method: http.MethodPatch, Path: "/v1/tools/{id}", Role: service.RoleWrite, handler: s.updateTool},
		// Calibration versions are immutable: no PATCH or DELETE.
		{Method: http.MethodGet, Path: "/v1/tools/{id}/calibrations", Role: service.RoleRead, handler: s.listCalibrations},
		{Method: http.MethodPost, Path: "/v1/tools/{id}/calibrations", Role: service.RoleWrite, Idempotent: true, handler: s.publishCalibration},
		{Method: http.MethodGet, Path: "/v1/calibrations/{id}", Role: service.RoleRead, handler: s.getCalibration},
		{Method: http.MethodGet, Path: "/v1/calibrations/{id}/chart.svg", Role: service.RoleRead, handler: s.getCalibrationChart},
		// The computations store nothing: read role, no Idempotency-Key.
		{Method: http.MethodPost, Path: "/v1/tension-conversions", Role: service.RoleRead, handler: s.convertTension},
		{Method: http.MethodPost, Path: "/v1/tension-audits", Role: service.RoleRead, handler: s.auditTension},

		{Method: http.MethodGet, Path: "/v1/changes", Role: service.RoleRead, handler: s.listChanges},

		{Method: http.MethodGet, Path: "/v1/webhook-endpoints", Role: service.RoleAdmin, OrgWide: true, handler: s.listWebhookEndpoints},
		// Not idempotent by key: a replay would have to keep the signing secret.
		{Method: http.MethodPost, Path: "/v1/webhook-endpoints", Role: service.RoleAdmin, OrgWide: true, handler: s.createWebhookEndpoint},
		{Method: http.MethodGet, Path: "/v1/webhook-endpoints/{id}", Role: service.RoleAdmin, OrgWide: true, handler: s.getWebhookEndpoint},
		{Method: http.MethodPatch, Path: "/v1/webhook-endpoints/{id}", Role: service.RoleAdmin, OrgWide: true, handler: s.updateWebhookEndpoint},
		{Method: http.MethodDelete, Path: "/v1/webhook-endpoints/{id}", Role: service.RoleAdmin, OrgWide: true, handler: s.deleteWebhookEndpoint},

		{Method: http.MethodPost, Path: "/v1/spoke-lengths", Role: service.RoleRead, OwnBodyCheck: true, handler: s.computeSpokeLengths},
		{Method: http.MethodPost, Path: "/v1/spoke-lengths/batch", Role: service.RoleRead, BodyLimit: BatchBodyLimit, OwnBodyCheck: true, handler: s.computeSpokeLengthsBatch},
		{Method: http.MethodPost, Path: "/v1/compatibility-checks", Role: service.RoleRead, handler: s.checkCompatibility},
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
