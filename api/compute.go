package api

import (
	"encoding/json"
	"io"
	"mime"
	"net/http"
	"strconv"

	"github.com/labstack/echo/v4"

	"wheelbench/api/spokejson"
	"wheelbench/service"
	"wheelbench/service/geometry"
)

// BatchBodyLimit is the body limit of POST /v1/spoke-lengths/batch.
const BatchBodyLimit = 16 << 20

// computeSpokeLengths is the hot single-wheel route. Like the batch it sets
// Route.OwnBodyCheck: the wheel is decoded strictly (unknown members and
// wrong types are 400s naming the field) and the geometry validates every
// value, which together enforce the request schema;
// TestOwnBodyCheckAgreesWithSpec holds them to it. The generic validation
// cost more than the rest of the request put together.
func (s *Server) computeSpokeLengths(c echo.Context) error {
	body, err := readBody(c.Request(), nil)
	if err != nil {
		return err // *http.MaxBytesError → 413
	}
	var w geometry.Wheel
	if err := spokejson.DecodeWheel(body, &w); err != nil {
		return err
	}
	res, err := s.svc.SpokeLengths(w)
	if err != nil {
		return err
	}
	out, err := spokejson.AppendResult(make([]byte, 0, 1024), &res)
	if err != nil {
		return err
	}
	return c.Blob(http.StatusOK, echo.MIMEApplicationJSON, append(out, '\n'))
}

func (s *Server) checkCompatibility(c echo.Context) error {
	var in service.CompatibilityInput
	if err := decode(c, &in); err != nil {
		return err
	}
	rep, err := s.svc.CheckCompatibility(in)
	if err != nil {
		return err
	}
	return c.JSON(http.StatusOK, rep)
}

// computeSpokeLengthsBatch answers {"results": [...], "succeeded", "failed"}
// through the batch codec (api/spokejson), which splits the body, decodes,
// computes and encodes the wheels on every CPU.
//
// The route skips the spec's body validation (Route.OwnBodyCheck): building
// a generic tree of 10,000 wheels to validate them costs more than the whole
// budget. Instead the codec checks the envelope itself — JSON, only
// "wheels", 1 to 10,000 items — and decodes each wheel strictly (unknown
// members and wrong types are a 400 problem in its slot).
func (s *Server) computeSpokeLengthsBatch(c echo.Context) error {
	body, err := readBody(c.Request(), spokejson.BodyBuffer)
	if err != nil {
		return err // *http.MaxBytesError → 413
	}
	defer spokejson.PutBody(body)
	instance := c.Request().URL.Path
	out, err := spokejson.Batch{Compute: s.svc.SpokeLengths, MaxWheels: service.MaxBatchWheels,
		Problem: func(b []byte, err error, i int) ([]byte, error) {
			j, jerr := json.Marshal(slotProblem(err, i, instance))
			return append(b, j...), jerr
		}}.Answer(body)
	if err != nil {
		return err
	}
	defer spokejson.PutAnswer(out)
	h := c.Response().Header()
	h.Set(echo.HeaderContentType, echo.MIMEApplicationJSON)
	h.Set(echo.HeaderContentLength, strconv.Itoa(len(out)))
	c.Response().WriteHeader(http.StatusOK)
	_, _ = c.Response().Write(out) // an error: the client has gone
	return nil
}

// readBody reads a request body in one allocation when its length is
// declared (the body limit has already capped it), into a buffer from
// buf when it is not nil.
func readBody(r *http.Request, buf func(n int) []byte) ([]byte, error) {
	if r.ContentLength <= 0 {
		return io.ReadAll(r.Body)
	}
	var b []byte
	if buf != nil {
		b = buf(int(r.ContentLength))[:r.ContentLength]
	} else {
		b = make([]byte, r.ContentLength)
	}
	if _, err := io.ReadFull(r.Body, b); err != nil {
		return nil, shortBody(err) // shorter than declared, or late
	}
	// Anything past the declared length is not read: net/http stops there.
	return b, nil
}

// shortBody is err, or for a reader that ended before the declared length
// the 400 that bodyReader gives when the connection says so.
func shortBody(err error) error {
	if err == io.ErrUnexpectedEOF {
		return &httpProblem{status: http.StatusBadRequest, detail: "The body ended before its declared Content-Length."}
	}
	return err
}

// slotProblem is the problem object of one failed wheel: the problem the
// single endpoint would answer, with every pointer under /wheels/<i>.
func slotProblem(err error, i int, instance string) *Problem {
	p, internal := toProblem(err)
	if internal {
		// Never the error text of a fault; the slot still says it failed.
		p = Problem{Status: http.StatusInternalServerError, Title: http.StatusText(http.StatusInternalServerError)}
	}
	p.Type = "about:blank"
	p.Instance = instance
	prefix := "/wheels/" + strconv.Itoa(i)
	for k := range p.Errors {
		p.Errors[k].Pointer = prefix + p.Errors[k].Pointer
	}
	if len(p.Errors) == 0 {
		p.Errors = []FieldProblem{{Pointer: prefix, Message: p.Detail}}
	}
	return &p
}

// isJSON reports whether a Content-Type is application/json.
func isJSON(ct string) bool {
	mt, _, err := mime.ParseMediaType(ct)
	return err == nil && mt == echo.MIMEApplicationJSON
}
