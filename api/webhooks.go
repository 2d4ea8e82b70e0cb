package api

import (
	"net/http"
	"time"

	"github.com/google/uuid"
	"github.com/labstack/echo/v4"

	"wheelbench/service"
)

type webhookEndpointJSON struct {
	ID             uuid.UUID `json:"id"`
	URL            string    `json:"url"`
	Events         []string  `json:"events"`
	Active         bool      `json:"active"`
	Description    string    `json:"description"`
	DisabledReason string    `json:"disabled_reason,omitempty"`
	CreatedAt      time.Time `json:"created_at"`
	UpdatedAt      time.Time `json:"updated_at"`
}

// webhookEndpointCreatedJSON adds the secret: the creation response only.
type webhookEndpointCreatedJSON struct {
	webhookEndpointJSON
	Secret string `json:"secret"`
}

func toWebhookEndpointJSON(e service.WebhookEndpoint) webhookEndpointJSON {
	ev := e.Events
	if ev == nil {
		ev = []string{}
	}
	return webhookEndpointJSON{ID: e.ID, URL: e.URL, Events: ev, Active: e.Active, Description: e.Description,
		DisabledReason: e.DisabledReason, CreatedAt: e.CreatedAt.UTC(), UpdatedAt: e.UpdatedAt.UTC()}
}

func (s *Server) listWebhookEndpoints(c echo.Context) error {
	p, err := page(c)
	if err != nil {
		return err
	}
	es, err := s.svc.ListWebhookEndpoints(c.Request().Context(), principal(c), p)
	if err != nil {
		return err
	}
	return writePage(c, es, p, func(e service.WebhookEndpoint) uuid.UUID { return e.ID }, toWebhookEndpointJSON)
}

func (s *Server) createWebhookEndpoint(c echo.Context) error {
	var in service.WebhookEndpointInput
	if err := decode(c, &in); err != nil {
		return err
	}
	e, err := s.svc.CreateWebhookEndpoint(c.Request().Context(), principal(c), in)
	if err != nil {
		return err
	}
	c.Response().Header().Set("ETag", e.ETag())
	c.Response().Header().Set("Location", "/v1/webhook-endpoints/"+e.ID.String())
	c.Response().Header().Set("Cache-Control", "no-store")
	return c.JSON(http.StatusCreated, webhookEndpointCreatedJSON{toWebhookEndpointJSON(e), e.Secret})
}

func (s *Server) getWebhookEndpoint(c echo.Context) error {
	id := pathID(c)
	e, err := s.svc.GetWebhookEndpoint(c.Request().Context(), principal(c), id)
	if err != nil {
		return err
	}
	c.Response().Header().Set("ETag", e.ETag())
	return c.JSON(http.StatusOK, toWebhookEndpointJSON(e))
}

func (s *Server) updateWebhookEndpoint(c echo.Context) error {
	id := pathID(c)
	var in service.WebhookEndpointPatch
	if err := decode(c, &in); err != nil {
		return err
	}
	e, err := s.svc.UpdateWebhookEndpoint(c.Request().Context(), principal(c), id, c.Request().Header.Get("If-Match"), in)
	if err != nil {
		return err
	}
	c.Response().Header().Set("ETag", e.ETag())
	return c.JSON(http.StatusOK, toWebhookEndpointJSON(e))
}

func (s *Server) deleteWebhookEndpoint(c echo.Context) error {
	id := pathID(c)
	if err := s.svc.DeleteWebhookEndpoint(c.Request().Context(), principal(c), id); err != nil {
		return err
	}
	return c.NoContent(http.StatusNoContent)
}
