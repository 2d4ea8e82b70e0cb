package api

import (
	"net/http"
	"time"

	"github.com/google/uuid"
	"github.com/labstack/echo/v4"

	"wheelbench/service"
	"wheelbench/service/field"
	"wheelbench/service/quote"
)

func (s *Server) createBuild(c echo.Context) error {
	var in service.BuildInput
	if err := decode(c, &in); err != nil {
		return err
	}
	b, err := s.svc.CreateBuild(c.Request().Context(), principal(c), in)
	if err != nil {
		return err
	}
	c.Response().Header().Set("ETag", b.ETag())
	c.Response().Header().Set("Location", "/v1/builds/"+b.ID.String())
	return c.JSON(http.StatusCreated, b)
}

func (s *Server) getBuild(c echo.Context) error {
	id := pathID(c)
	b, err := s.svc.GetBuild(c.Request().Context(), principal(c), id)
	if err != nil {
		return err
	}
	c.Response().Header().Set("ETag", b.ETag())
	return c.JSON(http.StatusOK, b)
}

func (s *Server) listBuilds(c echo.Context) error {
	pg, err := page(c)
	if err != nil {
		return err
	}
	f := service.BuildFilter{Status: service.BuildStatus(c.QueryParam("status"))}
	if v := c.QueryParam("location_id"); v != "" {
		id, err := uuid.Parse(v)
		if err != nil {
			return field.Invalid("query:location_id", "location_id must be a UUID")
		}
		f.LocationID = &id
	}
	if v, ok := c.QueryParams()["external_ref"]; ok && len(v) > 0 {
		f.ExternalRef = &v[0]
	}
	if v := c.QueryParam("updated_after"); v != "" {
		t, err := time.Parse(time.RFC3339Nano, v)
		if err != nil {
			return field.Invalid("query:updated_after", "updated_after must be an RFC 3339 time such as 2026-12-01T10:00:00Z")
		}
		f.UpdatedAfter = &t
	}
	bs, err := s.svc.ListBuilds(c.Request().Context(), principal(c), f, pg)
	if err != nil {
		return err
	}
	return writePage(c, bs, pg, func(b service.Build) uuid.UUID { return b.ID }, as)
}

func (s *Server) updateBuild(c echo.Context) error {
	id := pathID(c)
	var in service.BuildPatch
	if err := decode(c, &in); err != nil {
		return err
	}
	b, err := s.svc.UpdateBuild(c.Request().Context(), principal(c), id, c.Request().Header.Get("If-Match"), in)
	if err != nil {
		return err
	}
	c.Response().Header().Set("ETag", b.ETag())
	return c.JSON(http.StatusOK, b)
}

func (s *Server) getPriceList(c echo.Context) error {
	pl, err := s.svc.GetPriceList(c.Request().Context(), principal(c))
	if err != nil {
		return err
	}
	c.Response().Header().Set("ETag", pl.ETag())
	return c.JSON(http.StatusOK, pl)
}

func (s *Server) putPriceList(c echo.Context) error {
	var in quote.PriceList
	if err := decode(c, &in); err != nil {
		return err
	}
	pl, err := s.svc.PutPriceList(c.Request().Context(), principal(c), c.Request().Header.Get("If-Match"), in)
	if err != nil {
		return err
	}
	c.Response().Header().Set("ETag", pl.ETag())
	return c.JSON(http.StatusOK, pl)
}

func (s *Server) createQuote(c echo.Context) error {
	var in struct {
		BuildID uuid.UUID `json:"build_id"`
	}
	if err := decode(c, &in); err != nil {
		return err
	}
	q, err := s.svc.CreateQuote(c.Request().Context(), principal(c), in.BuildID)
	if err != nil {
		return err
	}
	c.Response().Header().Set("Location", "/v1/quotes/"+q.ID.String())
	return c.JSON(http.StatusCreated, q)
}

func (s *Server) getQuote(c echo.Context) error {
	id := pathID(c)
	q, err := s.svc.GetQuote(c.Request().Context(), principal(c), id)
	if err != nil {
		return err
	}
	return c.JSON(http.StatusOK, q)
}

func (s *Server) acceptQuote(c echo.Context) error {
	id := pathID(c)
	q, err := s.svc.AcceptQuote(c.Request().Context(), principal(c), id)
	if err != nil {
		return err
	}
	return c.JSON(http.StatusOK, q)
}

func (s *Server) createBuildAudit(c echo.Context) error {
	id := pathID(c)
	var in service.BuildAuditInput
	if err := decode(c, &in); err != nil {
		return err
	}
	a, err := s.svc.RecordBuildAudit(c.Request().Context(), principal(c), id, in)
	if err != nil {
		return err
	}
	return c.JSON(http.StatusCreated, a)
}

func (s *Server) listBuildAudits(c echo.Context) error {
	id := pathID(c)
	pg, err := page(c)
	if err != nil {
		return err
	}
	audits, err := s.svc.ListBuildAudits(c.Request().Context(), principal(c), id, pg)
	if err != nil {
		return err
	}
	return writePage(c, audits, pg, func(a service.BuildTensionAudit) uuid.UUID { return a.ID }, as)
}
