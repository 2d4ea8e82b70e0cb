package api

import (
	"net/http"
	"time"

	"github.com/google/uuid"
	"github.com/labstack/echo/v4"

	"wheelbench/service"
)

// utcLocation is a location as answered: its times in UTC.
func utcLocation(l service.Location) service.Location {
	l.CreatedAt, l.UpdatedAt = l.CreatedAt.UTC(), l.UpdatedAt.UTC()
	return l
}

type meJSON struct {
	Organisation struct {
		ID   uuid.UUID `json:"id"`
		Name string    `json:"name"`
	} `json:"organisation"`
	Location *service.Location `json:"location,omitempty"`
	Role     service.Role      `json:"role"`
	KeyID    uuid.UUID         `json:"key_id"`
}

func (s *Server) getMe(c echo.Context) error {
	me, err := s.svc.WhoAmI(c.Request().Context(), principal(c))
	if err != nil {
		return err
	}
	var out meJSON
	out.Organisation.ID, out.Organisation.Name = me.Organisation.ID, me.Organisation.Name
	if me.Location != nil {
		l := utcLocation(*me.Location)
		out.Location = &l
	}
	out.Role, out.KeyID = me.Principal.Role, me.Principal.KeyID
	return c.JSON(http.StatusOK, out)
}

func (s *Server) listLocations(c echo.Context) error {
	p, err := page(c)
	if err != nil {
		return err
	}
	ls, err := s.svc.ListLocations(c.Request().Context(), principal(c), p)
	if err != nil {
		return err
	}
	return writePage(c, ls, p, func(l service.Location) uuid.UUID { return l.ID }, utcLocation)
}

func (s *Server) createLocation(c echo.Context) error {
	var in service.LocationInput
	if err := decode(c, &in); err != nil {
		return err
	}
	l, err := s.svc.CreateLocation(c.Request().Context(), principal(c), in)
	if err != nil {
		return err
	}
	c.Response().Header().Set("ETag", l.ETag())
	c.Response().Header().Set("Location", "/v1/locations/"+l.ID.String())
	return c.JSON(http.StatusCreated, utcLocation(l))
}

func (s *Server) getLocation(c echo.Context) error {
	id := pathID(c)
	l, err := s.svc.GetLocation(c.Request().Context(), principal(c), id)
	if err != nil {
		return err
	}
	c.Response().Header().Set("ETag", l.ETag())
	return c.JSON(http.StatusOK, utcLocation(l))
}

func (s *Server) updateLocation(c echo.Context) error {
	id := pathID(c)
	var in service.LocationPatch
	if err := decode(c, &in); err != nil {
		return err
	}
	l, err := s.svc.UpdateLocation(c.Request().Context(), principal(c), id, c.Request().Header.Get("If-Match"), in)
	if err != nil {
		return err
	}
	c.Response().Header().Set("ETag", l.ETag())
	return c.JSON(http.StatusOK, utcLocation(l))
}

type apiKeyJSON struct {
	ID         uuid.UUID    `json:"id"`
	Prefix     string       `json:"prefix"`
	Role       service.Role `json:"role"`
	Name       string       `json:"name"`
	LocationID *uuid.UUID   `json:"location_id,omitempty"`
	CreatedAt  time.Time    `json:"created_at"`
	RevokedAt  *time.Time   `json:"revoked_at,omitempty"`
	Key        string       `json:"key,omitempty"`
}

func toAPIKeyJSON(k service.APIKey) apiKeyJSON {
	out := apiKeyJSON{ID: k.ID, Prefix: k.Prefix, Role: k.Role, Name: k.Name, LocationID: k.LocationID, CreatedAt: k.CreatedAt.UTC()}
	if k.RevokedAt != nil {
		t := k.RevokedAt.UTC()
		out.RevokedAt = &t
	}
	return out
}

func (s *Server) listAPIKeys(c echo.Context) error {
	p, err := page(c)
	if err != nil {
		return err
	}
	ks, err := s.svc.ListAPIKeys(c.Request().Context(), principal(c), p)
	if err != nil {
		return err
	}
	return writePage(c, ks, p, func(k service.APIKey) uuid.UUID { return k.ID }, toAPIKeyJSON)
}

func (s *Server) createAPIKey(c echo.Context) error {
	var in service.NewKeyInput
	if err := decode(c, &in); err != nil {
		return err
	}
	k, err := s.svc.CreateAPIKey(c.Request().Context(), principal(c).OrgID, in)
	if err != nil {
		return err
	}
	out := toAPIKeyJSON(k.APIKey)
	out.Key = k.Secret
	c.Response().Header().Set("Cache-Control", "no-store")
	return c.JSON(http.StatusCreated, out)
}

func (s *Server) revokeAPIKey(c echo.Context) error {
	id := pathID(c)
	k, err := s.svc.RevokeAPIKey(c.Request().Context(), principal(c), id)
	if err != nil {
		return err
	}
	return c.JSON(http.StatusOK, toAPIKeyJSON(k))
}
