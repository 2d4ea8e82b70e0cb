package api

import (
	"bytes"
	"net/http"

	"github.com/go-json-experiment/json/jsontext"
	"github.com/google/uuid"
	"github.com/labstack/echo/v4"

	"wheelbench/api/strictjson"
	"wheelbench/service"
	"wheelbench/service/field"
)

type partCreateJSON struct {
	Kind       service.PartKind `json:"kind"`
	SKU        string           `json:"sku"`
	Name       string           `json:"name"`
	PriceMinor int64            `json:"price_minor"`
	Currency   string           `json:"currency"`
	Dimensions jsontext.Value   `json:"dimensions"`
}

func (s *Server) createPart(c echo.Context) error {
	var in partCreateJSON
	if err := decode(c, &in); err != nil {
		return err
	}
	dims, err := decodeDimensions(in.Kind, in.Dimensions)
	if err != nil {
		return err
	}
	p, err := s.svc.CreatePart(c.Request().Context(), principal(c), service.PartInput{Kind: in.Kind, SKU: in.SKU, Name: in.Name,
		PriceMinor: in.PriceMinor, Currency: in.Currency, Dimensions: dims})
	if err != nil {
		return err
	}
	c.Response().Header().Set("ETag", p.ETag())
	c.Response().Header().Set("Location", "/v1/parts/"+p.ID.String())
	return c.JSON(http.StatusCreated, p)
}

func (s *Server) getPart(c echo.Context) error {
	id := pathID(c)
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
	return writePage(c, ps, pg, func(p service.Part) uuid.UUID { return p.ID }, as)
}

type partPatchJSON struct {
	SKU        *string        `json:"sku"`
	Name       *string        `json:"name"`
	PriceMinor *int64         `json:"price_minor"`
	Currency   *string        `json:"currency"`
	Dimensions jsontext.Value `json:"dimensions"`
}

// decodeDimensions reads a part's dimensions for its kind under the strict
// policy: the object the compatibility check takes for that kind, every
// number in it not negative. None (nil) when absent or the kind is not one
// of ours: the service says what is missing.
func decodeDimensions(kind service.PartKind, raw jsontext.Value) (any, error) {
	dims := kind.NewDimensions()
	if len(raw) == 0 || dims == nil {
		return nil, nil
	}
	if err := strictjson.Unmarshal(raw, dims); err != nil {
		return nil, field.Under("/dimensions", err)
	}
	dec := jsontext.NewDecoder(bytes.NewReader(raw))
	for {
		tok, err := dec.ReadToken()
		if err != nil {
			return dims, nil // read whole already: only its end is left
		}
		if tok.Kind() != '0' {
			continue
		}
		if f, _ := tok.Float(); f < 0 {
			return nil, field.Invalid("/dimensions"+string(dec.StackPointer()), "must be a finite number, not negative")
		}
	}
}

func (s *Server) updatePart(c echo.Context) error {
	id := pathID(c)
	var in partPatchJSON
	if err := decode(c, &in); err != nil {
		return err
	}
	patch := service.PartPatch{SKU: in.SKU, Name: in.Name, PriceMinor: in.PriceMinor, Currency: in.Currency}
	if in.Dimensions != nil {
		patch.Dimensions = func(kind service.PartKind) (any, error) { return decodeDimensions(kind, in.Dimensions) }
	}
	p, err := s.svc.UpdatePart(c.Request().Context(), principal(c), id, c.Request().Header.Get("If-Match"), patch)
	if err != nil {
		return err
	}
	c.Response().Header().Set("ETag", p.ETag())
	return c.JSON(http.StatusOK, p)
}

func (s *Server) getPartStock(c echo.Context) error {
	id := pathID(c)
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
	id := pathID(c)
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
