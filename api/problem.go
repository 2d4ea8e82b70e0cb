package api

import (
	"context"
	"errors"
	"fmt"
	"net/http"
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

// validationError is a set of field problems found by the HTTP layer itself
// (spec validation, JSON decoding).
type validationError struct {
	status int
	detail string
	fields []FieldProblem
}

func (e *validationError) Error() string { return e.detail }

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
	var be *bodyError
	if errors.As(err, &be) {
		return Problem{Status: be.status, Title: http.StatusText(be.status), Detail: be.detail}, false
	}
	var hp *httpProblem
	if errors.As(err, &hp) {
		return Problem{Status: hp.status, Title: http.StatusText(hp.status), Detail: hp.detail}, false
	}
	var ve *validationError
	if errors.As(err, &ve) {
		return Problem{Status: ve.status, Title: http.StatusText(ve.status), Detail: ve.detail, Errors: ve.fields}, false
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

// fromSpecError converts a kin-openapi request validation error.
func fromSpecError(err error) error {
	var fields []FieldProblem
	status := http.StatusBadRequest
	detail := "The request does not match the API description: see errors."
	var bodyErr *bodyError
	var add func(e error)
	add = func(e error) {
		if me, ok := e.(openapi3.MultiError); ok {
			for _, x := range me {
				add(x)
			}
			return
		}
		var re *openapi3filter.RequestError
		if errors.As(e, &re) {
			var be *bodyError
			if errors.As(e, &be) {
				bodyErr = be
				return
			}
			var mbe *http.MaxBytesError
			if errors.As(e, &mbe) {
				status = http.StatusRequestEntityTooLarge
				detail = fmt.Sprintf("The body is larger than this route's limit of %d bytes.", mbe.Limit)
				return
			}
			if re.Parameter != nil {
				msg := re.Reason
				var se *openapi3.SchemaError
				if errors.As(re.Err, &se) {
					msg = se.Reason
				} else if re.Err != nil && msg == "" {
					msg = re.Err.Error()
				}
				fields = append(fields, FieldProblem{Pointer: re.Parameter.In + ":" + re.Parameter.Name, Message: msg})
				return
			}
			if strings.Contains(re.Reason, "Content-Type") {
				status = http.StatusUnsupportedMediaType
				detail = "Send the body as application/json."
				return
			}
			if re.Err == nil {
				fields = append(fields, FieldProblem{Pointer: "", Message: re.Reason})
				return
			}
			var pe *openapi3filter.ParseError
			if errors.As(re.Err, &pe) {
				fields = append(fields, FieldProblem{Pointer: "", Message: "the body is not valid JSON"})
				return
			}
			add(re.Err)
			return
		}
		var se *openapi3.SchemaError
		if errors.As(e, &se) {
			ptr := se.JSONPointer()
			p := ""
			for _, s := range ptr {
				p += "/" + strings.ReplaceAll(strings.ReplaceAll(s, "~", "~0"), "/", "~1")
			}
			if strings.HasPrefix(se.Reason, "property \"") && strings.HasSuffix(se.Reason, "\" is unsupported") {
				// Reason reads: property "name" is unsupported.
				if _, rest, ok := strings.Cut(se.Reason, `"`); ok {
					if name, _, ok := strings.Cut(rest, `"`); ok {
						p += "/" + strings.ReplaceAll(strings.ReplaceAll(name, "~", "~0"), "/", "~1")
						fields = append(fields, FieldProblem{Pointer: p, Message: "unknown field"})
						return
					}
				}
			}
			fields = append(fields, FieldProblem{Pointer: p, Message: se.Reason})
			return
		}
		var sre *openapi3filter.SecurityRequirementsError
		if errors.As(e, &sre) {
			return // authentication is the auth middleware's job
		}
		fields = append(fields, FieldProblem{Pointer: "", Message: e.Error()})
	}
	add(err)
	if bodyErr != nil {
		return bodyErr
	}
	if status == http.StatusBadRequest && len(fields) == 0 {
		return nil
	}
	return &validationError{status: status, detail: detail, fields: fields}
}
