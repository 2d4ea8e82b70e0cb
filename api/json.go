package api

import (
	"encoding/base64"
	"io"
	"net/http"
	"strconv"

	"github.com/google/uuid"
	"github.com/labstack/echo/v4"

	"wheelbench/api/strictjson"
	"wheelbench/service"
	"wheelbench/service/field"
)

// decode reads the body into v under the one strict policy (package
// strictjson): exact-case names, no unknown or duplicate members, valid
// UTF-8, no U+0000, no null where the spec has none, numbers in range and
// nothing after the value; each refusal is a 400 naming the field. The
// spec validation normally catches shape errors first; decode is the
// second line for anything it misses.
func decode(c echo.Context, v any) error {
	body, err := io.ReadAll(c.Request().Body)
	if err != nil {
		return err // an httpProblem or *http.MaxBytesError, with its own status
	}
	return strictjson.Unmarshal(body, v)
}

// pathID is the {id} path parameter, parsed by validateRequest.
func pathID(c echo.Context) uuid.UUID {
	id, _ := c.Get("id").(uuid.UUID)
	return id
}

// page reads limit and cursor. A cursor is the opaque base64url of the last
// id of the previous page.
func page(c echo.Context) (service.Page, error) {
	p := service.Page{Limit: service.DefaultPageSize}
	if s := c.QueryParam("limit"); s != "" {
		n, err := strconv.Atoi(s)
		if err != nil || n < 1 || n > service.MaxPageSize {
			return p, field.Invalid("query:limit", "limit must be an integer from 1 to %d", service.MaxPageSize)
		}
		p.Limit = n
	}
	if s := c.QueryParam("cursor"); s != "" {
		b, err := base64.RawURLEncoding.DecodeString(s)
		var id uuid.UUID
		if err == nil {
			id, err = uuid.FromBytes(b)
		}
		if err != nil {
			return p, field.Invalid("query:cursor", "cursor must be a next_cursor this API returned")
		}
		p.After = id
	}
	return p, nil
}

// listJSON is one page of a list.
type listJSON[T any] struct {
	Items      []T    `json:"items"`
	NextCursor string `json:"next_cursor,omitempty"`
}

// writePage answers one page of items, each as view writes it ([] for
// none), with the cursor after the last item when the page is full.
func writePage[T, V any](c echo.Context, items []T, pg service.Page, id func(T) uuid.UUID, view func(T) V) error {
	out := listJSON[V]{Items: make([]V, 0, len(items))}
	for _, it := range items {
		out.Items = append(out.Items, view(it))
	}
	if n := len(items); n > 0 && n >= pg.Limit {
		last := id(items[n-1])
		out.NextCursor = base64.RawURLEncoding.EncodeToString(last[:])
	}
	return c.JSON(http.StatusOK, out)
}

// as is the view of an item that is written as it is.
func as[T any](t T) T { return t }
