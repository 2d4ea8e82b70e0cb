package api

import (
	"encoding/json"
	"net/http"
	"strconv"
	"strings"
	"time"

	"github.com/google/uuid"
	"github.com/labstack/echo/v4"

	"wheelbench/service"
	"wheelbench/service/field"
)

type changeJSON struct {
	Cursor     string          `json:"cursor"`
	Type       string          `json:"type"`
	ID         uuid.UUID       `json:"id"`
	LocationID *uuid.UUID      `json:"location_id,omitempty"`
	OccurredAt time.Time       `json:"occurred_at"`
	Data       json.RawMessage `json:"data"`
}

func (s *Server) listChanges(c echo.Context) error {
	after, err := service.ParseCursor(c.QueryParam("after"))
	if err != nil {
		return err
	}
	q := service.ChangeQuery{After: after, Limit: service.DefaultPageSize}
	if v := c.QueryParam("limit"); v != "" {
		n, err := strconv.Atoi(v)
		if err != nil || n < 1 || n > 1000 {
			return field.Invalid("query:limit", "limit must be an integer from 1 to 1000")
		}
		q.Limit = n
	}
	if v := c.QueryParam("types"); v != "" {
		q.Resources = strings.Split(v, ",")
	}
	cs, next, err := s.svc.ListChanges(c.Request().Context(), principal(c), q)
	if err != nil {
		return err
	}
	out := struct {
		Changes    []changeJSON `json:"changes"`
		NextCursor string       `json:"next_cursor"`
	}{Changes: make([]changeJSON, 0, len(cs)), NextCursor: next.String()}
	for _, ch := range cs {
		raw, _ := ch.Data.(json.RawMessage)
		out.Changes = append(out.Changes, changeJSON{Cursor: ch.Cursor.String(), Type: ch.Type, ID: ch.ResourceID,
			LocationID: ch.LocationID, OccurredAt: ch.OccurredAt.UTC(), Data: raw})
	}
	return c.JSON(http.StatusOK, out)
}
