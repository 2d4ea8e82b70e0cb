package api

import (
	"encoding/json"
	"net/http"

	"github.com/labstack/echo/v4"

	"wheelbench/service"
)

type partCreateJSON struct {
	Kind       service.PartKind `json:"kind"`
	SKU        string           `json:"sku"`
	Name       string           `json:"name"`
	PriceMinor int64            `json:"price_minor"`
	Currency   string           `json:"currency"`
	Dimensions json.RawMessage  `json:"dimensions"`
}

func (s *Server) createPart(c echo.Context) error {
	var in partCreateJSON
	if err := decode(c, &in); err != nil {
		return err
	}
	p, err := s.svc.CreatePart(c.Request().Context(), principal(c), service.PartInput(in))
	if err != nil {
		return err
	}
	c.Response().Header().Set("ETag", p.ETag())
	c.Response().Header().Set("Location", "/v1/parts/"+p.ID.String())
	return c.JSON(http.StatusCreated, p)
}

func (s *Server) getPart(c echo.Context) error {
	id, err := pathID(c)
	if err != nil {
		return err
	}
	p, err := s.svc.GetPart(c.Request().Context(), principal(c), id)
	if err != nil {
		return err
	}
	c.Response().Header().Set("ETag", p.ETag())
	return c.JSON(http.StatusOK, p)
}

func (s *Server) listParts(c echo.Context) error {
	pg, err := page(c)
	if err != nil {
		return err
	}
	f := service.PartFilter{Kind: service.PartKind(c.QueryParam("kind")), SKU: c.QueryParam("sku")}
	ps, err := s.svc.ListParts(c.Request().Context(), principal(c), f, pg)
	if err != nil {
		return err
	}
	out := listJSON[service.Part]{Items: ps}
	if out.Items == nil {
		out.Items = []service.Part{}
	}
	if len(ps) > 0 {
		out.NextCursor = nextCursor(len(ps), pg.Limit, ps[len(ps)-1].ID)
	}
	return c.JSON(http.StatusOK, out)
}

type partPatchJSON struct {
	SKU        *string         `json:"sku"`
	Name       *string         `json:"name"`
	PriceMinor *int64          `json:"price_minor"`
	Currency   *string         `json:"currency"`
	Dimensions json.RawMessage `json:"dimensions"`
}

func (s *Server) updatePart(c echo.Context) error {
	id, err := pathID(c)
	if err != nil {
		return err
	}
	var in partPatchJSON
	if err := decode(c, &in); err != nil {
		return err
	}
	p, err := s.svc.UpdatePart(c.Request().Context(), principal(c), id, c.Request().Header.Get("If-Match"), service.PartPatch(in))
	if err != nil {
		return err
	}
	c.Response().Header().Set("ETag", p.ETag())
	return c.JSON(http.StatusOK, p)
}

func (s *Server) getPartStock(c echo.Context) error {
	id, err := pathID(c)
	if err != nil {
		return err
	}
	st, err := s.svc.GetPartStock(c.Request().Context(), principal(c), id)
	if err != nil {
		return err
	}
	return writeStock(c, st)
}

func writeStock(c echo.Context, st service.PartStock) error {
	if st.Levels == nil {
		st.Levels = []service.StockLevel{}
	}
	c.Response().Header().Set("ETag", st.ETag())
	return c.JSON(http.StatusOK, st)
}

func (s *Server) putPartStock(c echo.Context) error {
	id, err := pathID(c)
	if err != nil {
		return err
	}
	var in struct {
		Levels []service.StockLevel `json:"levels"`
	}
	if err := decode(c, &in); err != nil {
		return err
	}
	st, err := s.svc.PutPartStock(c.Request().Context(), principal(c), id, c.Request().Header.Get("If-Match"), in.Levels)
	if err != nil {
		return err
	}
	return writeStock(c, st)
}
