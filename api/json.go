package api

import (
	"bytes"
	"encoding/base64"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"net/http"
	"strconv"
	"strings"

	"github.com/google/uuid"
	"github.com/labstack/echo/v4"

	"wheelbench/service"
)

// decode reads the body into v strictly: unknown fields, wrong types and
// trailing data are 400s naming the field. The spec validation normally
// catches these first; decode is the second line for anything it misses.
func decode(c echo.Context, v any) error {
	body, err := io.ReadAll(c.Request().Body)
	if err != nil {
		return err // *http.MaxBytesError → 413
	}
	return decodeBytes(body, v)
}

func decodeBytes(body []byte, v any) error {
	dec := json.NewDecoder(bytes.NewReader(body))
	dec.DisallowUnknownFields()
	if err := dec.Decode(v); err != nil {
		if strings.HasPrefix(err.Error(), "json: unknown field ") {
			if p := unknownFieldPointer(body, v); p != "" {
				return &validationError{status: http.StatusBadRequest, detail: "The body could not be read: see errors.",
					fields: []FieldProblem{{Pointer: p, Message: "unknown field"}}}
			}
		}
		return jsonProblem(err)
	}
	if dec.More() {
		return &validationError{status: http.StatusBadRequest, detail: "The body has data after its JSON value.",
			fields: []FieldProblem{{Pointer: "", Message: "trailing data after the JSON value"}}}
	}
	return nil
}

// jsonProblem turns encoding/json's errors into field problems.
func jsonProblem(err error) error {
	var syn *json.SyntaxError
	var typ *json.UnmarshalTypeError
	msg, ptr := "the body is not valid JSON", ""
	switch {
	case errors.As(err, &syn):
		msg = fmt.Sprintf("the body is not valid JSON (at byte %d)", syn.Offset)
	case errors.As(err, &typ):
		ptr = "/" + strings.ReplaceAll(typ.Field, ".", "/")
		msg = fmt.Sprintf("must be %s, not %s", jsonKind(typ.Type.Kind().String()), typ.Value)
	case strings.HasPrefix(err.Error(), "json: unknown field "):
		name, _ := strconv.Unquote(strings.TrimPrefix(err.Error(), "json: unknown field "))
		ptr, msg = "/"+name, "unknown field"
	case errors.Is(err, io.EOF), errors.Is(err, io.ErrUnexpectedEOF):
		msg = "the body is empty or cut short"
	default:
		var fe interface{ FieldPointer() string }
		if errors.As(err, &fe) {
			return err
		}
		var mbe *http.MaxBytesError
		if errors.As(err, &mbe) {
			return err
		}
	}
	return &validationError{status: http.StatusBadRequest, detail: "The body could not be read: see errors.",
		fields: []FieldProblem{{Pointer: ptr, Message: msg}}}
}

func jsonKind(k string) string {
	switch {
	case strings.HasPrefix(k, "int"), strings.HasPrefix(k, "uint"):
		return "an integer"
	case strings.HasPrefix(k, "float"):
		return "a number"
	case k == "string":
		return "a string"
	case k == "bool":
		return "true or false"
	case k == "slice", k == "array":
		return "an array"
	}
	return "an object"
}

// pathID parses the {id} path parameter. A malformed id is treated as
// unknown (404) so that ids never leak which form exists.
func pathID(c echo.Context) (uuid.UUID, error) {
	id, err := uuid.Parse(c.Param("id"))
	if err != nil {
		return uuid.Nil, fmt.Errorf("no such resource: %w", service.ErrNotFound)
	}
	return id, nil
}

// page reads limit and cursor. A cursor is the opaque base64url of the last
// id of the previous page.
func page(c echo.Context) (service.Page, error) {
	p := service.Page{Limit: service.DefaultPageSize}
	if s := c.QueryParam("limit"); s != "" {
		n, err := strconv.Atoi(s)
		if err != nil || n < 1 || n > service.MaxPageSize {
			return p, &validationError{status: http.StatusBadRequest, detail: "Bad paging parameters.",
				fields: []FieldProblem{{Pointer: "query:limit", Message: fmt.Sprintf("limit must be an integer from 1 to %d", service.MaxPageSize)}}}
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
			return p, &validationError{status: http.StatusBadRequest, detail: "Bad paging parameters.",
				fields: []FieldProblem{{Pointer: "query:cursor", Message: "cursor must be a next_cursor this API returned"}}}
		}
		p.After = id
	}
	return p, nil
}

// nextCursor returns the cursor after last when the page was full.
func nextCursor(n, limit int, last uuid.UUID) string {
	if n < limit {
		return ""
	}
	return base64.RawURLEncoding.EncodeToString(last[:])
}
