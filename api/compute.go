package api

import (
	"encoding/json"
	"io"
	"mime"
	"net/http"
	"runtime"
	"strconv"
	"sync"

	"github.com/labstack/echo/v4"

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
	if !isJSON(c.Request().Header.Get(echo.HeaderContentType)) {
		return &httpProblem{status: http.StatusUnsupportedMediaType, detail: "Send the body as application/json."}
	}
	body, err := readBody(c.Request())
	if err != nil {
		return err // *http.MaxBytesError → 413
	}
	var w geometry.Wheel
	if !parseWheel(body, &w, nil) {
		w = geometry.Wheel{}
		if err := decodeBytes(body, &w); err != nil {
			return err
		}
	}
	res, err := s.svc.SpokeLengths(w)
	if err != nil {
		return err
	}
	out, err := appendResult(make([]byte, 0, 1024), &res)
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

// batchRequest keeps each wheel raw: each is decoded strictly on its own
// so that one bad wheel costs only its slot.
type batchRequest struct {
	Wheels []json.RawMessage `json:"wheels"`
}

// computeSpokeLengthsBatch answers {"results": [...], "succeeded", "failed"}.
//
// The route skips the spec's body validation (Route.OwnBodyCheck): building
// a generic tree of 10,000 wheels to validate them costs more than the whole
// budget. Instead this handler checks the envelope itself — JSON, only
// "wheels", 1 to 10,000 items — and decodes each wheel strictly (unknown
// members and wrong types are a 400 problem in its slot), by the fast path
// in wheeljson.go or by encoding/json. Decoding, computing and encoding are
// each shared out over the CPUs; the slots are written in request order.
func (s *Server) computeSpokeLengthsBatch(c echo.Context) error {
	if !isJSON(c.Request().Header.Get(echo.HeaderContentType)) {
		return &httpProblem{status: http.StatusUnsupportedMediaType, detail: "Send the body as application/json."}
	}
	body, err := readBody(c.Request())
	if err != nil {
		return err // *http.MaxBytesError → 413
	}
	raws, ok := splitWheels(body)
	if !ok {
		var req batchRequest
		if err := decodeBytes(body, &req); err != nil {
			return err
		}
		raws = make([][]byte, len(req.Wheels))
		for i, r := range req.Wheels {
			raws[i] = r
		}
	}
	if len(raws) == 0 || len(raws) > service.MaxBatchWheels {
		return &validationError{status: http.StatusBadRequest, detail: "The body does not match the API description: see errors.",
			fields: []FieldProblem{{Pointer: "/wheels", Message: "must hold 1 to " + strconv.Itoa(service.MaxBatchWheels) + " wheels"}}}
	}
	n := len(raws)
	wheels := make([]geometry.Wheel, n)
	decodeErr := make([]error, n)
	notJSON := make([]bool, n)
	parts := split(n)
	inParallel(parts, func(_ int, lo, hi int) {
		a := new(arena)
		for i := lo; i < hi; i++ {
			if parseWheel(raws[i], &wheels[i], a) {
				continue
			}
			if !json.Valid(raws[i]) {
				notJSON[i] = true
				continue
			}
			wheels[i] = geometry.Wheel{}
			decodeErr[i] = decodeBytes(raws[i], &wheels[i])
		}
	})
	for i, bad := range notJSON {
		if bad { // the body as a whole is not JSON: no batch at all
			return &validationError{status: http.StatusBadRequest, detail: "The body could not be read: see errors.",
				fields: []FieldProblem{{Pointer: "/wheels/" + strconv.Itoa(i), Message: "is not valid JSON"}}}
		}
	}
	items := s.svc.SpokeLengthsBatch(wheels)

	// Each part encodes its slots into its own buffer; the buffers are
	// joined in order.
	instance := c.Request().URL.Path
	bufs := make([][]byte, len(parts))
	oks := make([]int, len(parts))
	errs := make([]error, len(parts))
	inParallel(parts, func(k int, lo, hi int) {
		b := make([]byte, 0, (hi-lo)*800)
		for i := lo; i < hi; i++ {
			if i > 0 {
				b = append(b, ',')
			}
			var p *Problem
			switch {
			case decodeErr[i] != nil:
				p = slotProblem(decodeErr[i], i, instance)
			case items[i].Err != nil:
				p = slotProblem(items[i].Err, i, instance)
			}
			var err error
			if p == nil {
				b, err = appendResult(b, &items[i].Result)
				oks[k]++
			} else {
				var j []byte
				j, err = json.Marshal(p)
				b = append(b, j...)
			}
			if err != nil {
				errs[k] = err
				return
			}
		}
		bufs[k] = b
	})
	good, size := 0, 0
	for k := range parts {
		if errs[k] != nil {
			return errs[k]
		}
		good += oks[k]
		size += len(bufs[k])
	}
	// The parts go out one after the other, never joined into one copy.
	head := []byte(`{"results":[`)
	tail := []byte(`],"succeeded":` + strconv.Itoa(good) + `,"failed":` + strconv.Itoa(n-good) + "}\n")
	h := c.Response().Header()
	h.Set(echo.HeaderContentType, echo.MIMEApplicationJSON)
	h.Set(echo.HeaderContentLength, strconv.Itoa(len(head)+size+len(tail)))
	c.Response().WriteHeader(http.StatusOK)
	if _, err := c.Response().Write(head); err != nil {
		return nil // the client has gone; nothing more to say
	}
	for k := range parts {
		if _, err := c.Response().Write(bufs[k]); err != nil {
			return nil
		}
	}
	_, _ = c.Response().Write(tail)
	return nil
}

// readBody reads a request body in one allocation when its length is
// declared (the body limit has already capped it).
func readBody(r *http.Request) ([]byte, error) {
	if r.ContentLength <= 0 {
		return io.ReadAll(r.Body)
	}
	b := make([]byte, r.ContentLength)
	n, err := io.ReadFull(r.Body, b)
	if err == io.ErrUnexpectedEOF {
		return b[:n], nil
	}
	if err != nil {
		return nil, err
	}
	// Anything past the declared length is not read: net/http stops there.
	return b, nil
}

// split cuts [0, n) into one contiguous part per CPU, or a single part when
// n is too small for goroutines to pay.
func split(n int) [][2]int {
	const minPart = 256
	k := max(1, min(runtime.GOMAXPROCS(0), n/minPart))
	size := (n + k - 1) / k
	parts := make([][2]int, 0, k)
	for lo := 0; lo < n || len(parts) == 0; lo += size {
		parts = append(parts, [2]int{lo, min(lo+size, n)})
	}
	return parts
}

// inParallel runs f on every part at once and waits.
func inParallel(parts [][2]int, f func(k, lo, hi int)) {
	if len(parts) == 1 {
		f(0, parts[0][0], parts[0][1])
		return
	}
	var wg sync.WaitGroup
	for k, p := range parts {
		wg.Go(func() { f(k, p[0], p[1]) })
	}
	wg.Wait()
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
