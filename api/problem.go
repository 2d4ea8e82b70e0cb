package api

import (
	"context"
	"errors"
	"fmt"
	"maps"
	"net/http"
	"slices"
	"strings"

	"github.com/getkin/kin-openapi/openapi3"
	"github.com/getkin/kin-openapi/openapi3filter"
	"github.com/labstack/echo/v4"

	"wheelbench/service"
	"wheelbench/service/field"
)

// Problem is an RFC 9457 problem details body.
type Problem struct {
	Type      string         `json:"type"`
	Title     string         `json:"title"`
	Status    int            `json:"status"`
	Detail    string         `json:"detail,omitempty"`
	Instance  string         `json:"instance,omitempty"`
	RequestID string         `json:"request_id,omitempty"`
	Errors    []FieldProblem `json:"errors,omitempty"`
}

// FieldProblem names one bad field: an RFC 6901 pointer into the body, or
// "query:NAME", "header:NAME", "path:NAME" for parameters.
type FieldProblem struct {
	Pointer string `json:"pointer"`
	Message string `json:"message"`
}

// httpProblem is an error the HTTP layer answers with a fixed status and
// detail (a body that could not be read, a method or media type the route
// does not take, a role too low).
type httpProblem struct {
	status int
	detail string
}

func (e *httpProblem) Error() string { return e.detail }

// statusOf maps the service's error kinds to HTTP statuses: the one table.
var statusOf = []struct {
	err    error
	status int
}{
	{service.ErrNotFound, http.StatusNotFound},
	{service.ErrConflict, http.StatusConflict},
	{service.ErrInvalid, http.StatusBadRequest},
	{service.ErrUnprocessable, http.StatusUnprocessableEntity},
	{service.ErrUnauthenticated, http.StatusUnauthorized},
	{service.ErrForbidden, http.StatusForbidden},
	{service.ErrPreconditionFailed, http.StatusPreconditionFailed},
	{service.ErrPreconditionRequired, http.StatusPreconditionRequired},
	{service.ErrUnavailable, http.StatusServiceUnavailable},
	{service.ErrGone, http.StatusGone},
}

// toProblem turns any error into a problem; internal reports whether it is a
// server fault (logged, with a generic title).
func toProblem(err error) (p Problem, internal bool) {
	var hp *httpProblem
	if errors.As(err, &hp) {
		return Problem{Status: hp.status, Title: http.StatusText(hp.status), Detail: hp.detail}, false
	}
	if fes := field.All(err); len(fes) > 0 {
		status := http.StatusBadRequest
		for _, fe := range fes {
			if fe.Unprocessable {
				status = http.StatusUnprocessableEntity
			}
		}
		p := Problem{Status: status, Title: http.StatusText(status)}
		for _, fe := range fes {
			// Every field is listed, so that a client can mend them all at once.
			p.Errors = append(p.Errors, FieldProblem{Pointer: fe.Pointer, Message: fe.Message})
		}
		if status == http.StatusUnprocessableEntity {
			p.Detail = "The request is well-formed but cannot be carried out: see errors."
		} else {
			p.Detail = "The request has invalid fields: see errors."
		}
		return p, false
	}
	var mbe *http.MaxBytesError
	if errors.As(err, &mbe) {
		return Problem{Status: http.StatusRequestEntityTooLarge, Title: http.StatusText(http.StatusRequestEntityTooLarge),
			Detail: fmt.Sprintf("The body is larger than this route's limit of %d bytes.", mbe.Limit)}, false
	}
	var he *echo.HTTPError
	if errors.As(err, &he) {
		detail := ""
		if m, ok := he.Message.(string); ok {
			detail = m
		}
		if he.Code == http.StatusRequestEntityTooLarge {
			detail = "The body is larger than this route's limit."
		}
		if he.Code >= 500 {
			return Problem{Status: he.Code, Title: http.StatusText(he.Code)}, true
		}
		return Problem{Status: he.Code, Title: http.StatusText(he.Code), Detail: detail}, false
	}
	for _, m := range statusOf {
		if errors.Is(err, m.err) {
			p := Problem{Status: m.status, Title: http.StatusText(m.status), Detail: detailOf(err, m.err)}
			if m.status == http.StatusServiceUnavailable {
				p.Detail = "The database cannot be reached; retry shortly."
			}
			return p, false
		}
	}
	if errors.Is(err, context.Canceled) {
		// The client went away; nobody reads this answer and it is no fault.
		return Problem{Status: 499, Title: "Client Closed Request"}, false
	}
	if errors.Is(err, context.DeadlineExceeded) {
		return Problem{Status: http.StatusServiceUnavailable, Title: http.StatusText(http.StatusServiceUnavailable),
			Detail: "The request took too long; retry shortly."}, false
	}
	return Problem{Status: http.StatusInternalServerError, Title: http.StatusText(http.StatusInternalServerError)}, true
}

// detailOf is the sentence a problem says for err, which wraps sentinel:
// the words the service or store put after the sentinel ("conflict: a
// build cannot move from draft to done" → "A build cannot move from draft
// to done."), else the status's own sentence. What comes before the
// sentinel names internal steps ("get build: not found") and is never
// shown.
func detailOf(err, sentinel error) string {
	s, t := err.Error(), sentinel.Error()
	for i := strings.Index(s, t); i >= 0; {
		rest := s[i+len(t):]
		if strings.HasPrefix(rest, ": ") && len(rest) > 2 {
			return sentence(rest[2:])
		}
		j := strings.Index(rest, t)
		if j < 0 {
			break
		}
		i += len(t) + j
	}
	return defaultDetail[sentinel]
}

// sentence capitalises s and ends it with a full stop.
func sentence(s string) string {
	s = strings.ToUpper(s[:1]) + s[1:]
	if !strings.HasSuffix(s, ".") && !strings.HasSuffix(s, "?") {
		s += "."
	}
	return s
}

// defaultDetail is each sentinel's sentence when the error says no more.
var defaultDetail = map[error]string{
	service.ErrNotFound:             "No such resource is visible to this API key.",
	service.ErrConflict:             "The request conflicts with the resource's current state; read it again and retry.",
	service.ErrInvalid:              "The request is invalid.",
	service.ErrUnprocessable:        "The request cannot be carried out.",
	service.ErrUnauthenticated:      "The API key is malformed, unknown or revoked.",
	service.ErrForbidden:            "This API key may not do this.",
	service.ErrPreconditionFailed:   "If-Match does not name the resource's current version; read it again and retry.",
	service.ErrPreconditionRequired: "Send If-Match with the resource's ETag.",
	service.ErrGone:                 "What was asked for is gone for good.",
}

// resourceNoun names what a route's {id} is, for a 404's sentence.
func resourceNoun(route string) string {
	parts := strings.Split(route, "/")
	for i := len(parts) - 1; i > 0; i-- {
		if parts[i] == ":id" {
			switch n := parts[i-1]; n {
			case "api-keys":
				return "API key"
			case "webhook-endpoints":
				return "webhook endpoint"
			default:
				return strings.TrimSuffix(n, "s")
			}
		}
	}
	return ""
}

// fromSpecError converts a kin-openapi request validation error: field
// errors (400) naming the member or parameter the spec refuses, or the
// error of reading the body (its own status). nil when nothing is left
// once authentication's part (the auth middleware's job) is set aside.
func fromSpecError(err error) error {
	var out []error
	seen := map[string]bool{}
	add := func(ptr, msg string) {
		if !seen[ptr+"\x00"+msg] {
			seen[ptr+"\x00"+msg] = true
			out = append(out, &field.Error{Pointer: ptr, Message: msg})
		}
	}
	var walk func(e error) error
	walk = func(e error) error {
		if me, ok := e.(openapi3.MultiError); ok {
			for _, x := range me {
				if err := walk(x); err != nil {
					return err
				}
			}
			return nil
		}
		var hp *httpProblem
		var mbe *http.MaxBytesError
		var re *openapi3filter.RequestError
		var se *openapi3.SchemaError
		var pe *openapi3filter.ParseError
		var sre *openapi3filter.SecurityRequirementsError
		switch {
		case errors.As(e, &hp):
			return hp
		case errors.As(e, &mbe):
			return mbe
		case errors.As(e, &sre):
		case errors.As(e, &re) && re.Parameter != nil:
			msg := re.Reason
			if errors.As(re.Err, &se) {
				msg = se.Reason
			} else if re.Err != nil && msg == "" {
				msg = re.Err.Error()
			}
			add(re.Parameter.In+":"+re.Parameter.Name, msg)
		case errors.As(e, &re) && re.Err == nil:
			add("", re.Reason)
		case errors.As(e, &pe):
			add("", "the body is not valid JSON")
		case errors.As(e, &re):
			return walk(re.Err)
		case errors.As(e, &se):
			ptr := ""
			for _, s := range se.JSONPointer() {
				ptr += "/" + pointerEscaper.Replace(s)
			}
			obj, isObject := se.Value.(map[string]any)
			if se.SchemaField != "properties" || !isObject || se.Schema == nil {
				add(ptr, se.Reason)
				break
			}
			// A member the object's schema does not have: each by name.
			for _, k := range slices.Sorted(maps.Keys(obj)) {
				if _, known := se.Schema.Properties[k]; !known {
					add(ptr+"/"+pointerEscaper.Replace(k), "unknown field")
				}
			}
		default:
			add("", e.Error())
		}
		return nil
	}
	if err := walk(err); err != nil {
		return err
	}
	return errors.Join(out...)
}

var pointerEscaper = strings.NewReplacer("~", "~0", "/", "~1")
