package api

import (
	"bytes"
	"encoding/json"
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

func (s *Server) computeSpokeLengths(c echo.Context) error {
	var w geometry.Wheel
	if err := decode(c, &w); err != nil {
		return err
	}
	res, err := s.svc.SpokeLengths(w)
	if err != nil {
		return err
	}
	return c.JSON(http.StatusOK, res)
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

// batchRequest keeps each wheel raw: the spec validation checks only the
// envelope, and each wheel is decoded strictly on its own so that one bad
// wheel costs only its slot.
type batchRequest struct {
	Wheels []json.RawMessage `json:"wheels"`
}

// computeSpokeLengthsBatch answers {"results": [...], "succeeded", "failed"}.
// Decoding, computing and encoding are each shared out over the CPUs; the
// slots are written in request order.
func (s *Server) computeSpokeLengthsBatch(c echo.Context) error {
	var req batchRequest
	if err := decode(c, &req); err != nil {
		return err
	}
	if len(req.Wheels) > service.MaxBatchWheels {
		// The spec's maxItems says the same; this is the second line.
		return &validationError{status: http.StatusBadRequest, detail: "Too many wheels in one batch.",
			fields: []FieldProblem{{Pointer: "/wheels", Message: "at most " + strconv.Itoa(service.MaxBatchWheels) + " wheels"}}}
	}
	n := len(req.Wheels)
	wheels := make([]geometry.Wheel, n)
	decodeErr := make([]error, n)
	parts := split(n)
	inParallel(parts, func(_ int, lo, hi int) {
		for i := lo; i < hi; i++ {
			decodeErr[i] = decodeBytes(req.Wheels[i], &wheels[i])
		}
	})
	items := s.svc.SpokeLengthsBatch(wheels)

	// Each part encodes its slots into its own buffer; the buffers are
	// joined in order.
	instance := c.Request().URL.Path
	bufs := make([]bytes.Buffer, len(parts))
	oks := make([]int, len(parts))
	errs := make([]error, len(parts))
	inParallel(parts, func(k int, lo, hi int) {
		b := &bufs[k]
		b.Grow((hi - lo) * 1024)
		enc := json.NewEncoder(b)
		for i := lo; i < hi; i++ {
			if i > 0 {
				b.WriteByte(',')
			}
			var v any
			switch {
			case decodeErr[i] != nil:
				v = slotProblem(decodeErr[i], i, instance)
			case items[i].Err != nil:
				v = slotProblem(items[i].Err, i, instance)
			default:
				v = &items[i].Result
				oks[k]++
			}
			if err := enc.Encode(v); err != nil {
				errs[k] = err
				return
			}
			b.Truncate(b.Len() - 1) // Encode's newline
		}
	})
	size, ok := 64, 0
	for k := range parts {
		if errs[k] != nil {
			return errs[k]
		}
		size += bufs[k].Len()
		ok += oks[k]
	}
	body := make([]byte, 0, size)
	body = append(body, `{"results":[`...)
	for k := range parts {
		body = append(body, bufs[k].Bytes()...)
	}
	body = append(body, `],"succeeded":`...)
	body = strconv.AppendInt(body, int64(ok), 10)
	body = append(body, `,"failed":`...)
	body = strconv.AppendInt(body, int64(n-ok), 10)
	body = append(body, "}\n"...)
	return c.Blob(http.StatusOK, echo.MIMEApplicationJSON, body)
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
func slotProblem(err error, i int, instance string) Problem {
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
	return p
}
