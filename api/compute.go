package api

import (
	"encoding/json"
	"io"
	"mime"
	"net/http"
	"runtime"
	"strconv"
	"sync"

	"github.com/go-json-experiment/json/jsontext"
	"github.com/labstack/echo/v4"

	"wheelbench/api/strictjson"
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
	Wheels []rawWheel `json:"wheels"`
}

// rawWheel is one element of wheels as written. It takes null too, so that
// a null wheel is refused in its slot, as the splitter of the plain body
// shape leaves it to be, not as the whole body.
type rawWheel []byte

// UnmarshalJSON keeps the element's bytes.
func (r *rawWheel) UnmarshalJSON(b []byte) error {
	*r = append((*r)[:0], b...)
	return nil
}

// JSONNullable lets null through the strict decoder to UnmarshalJSON.
func (*rawWheel) JSONNullable() {}

// computeSpokeLengthsBatch answers {"results": [...], "succeeded", "failed"}.
//
// The route skips the spec's body validation (Route.OwnBodyCheck): building
// a generic tree of 10,000 wheels to validate them costs more than the whole
// budget. Instead this handler checks the envelope itself — JSON, only
// "wheels", 1 to 10,000 items — and decodes each wheel strictly (unknown
// members and wrong types are a 400 problem in its slot), by the fast path
// in wheeljson.go or by the strict decoder every route uses (strictjson).
//
// The body is cut into one stretch of wheels per CPU and each stretch is
// split, decoded, computed and encoded by its own goroutine into its own
// buffer (see batchPart); the buffers are then joined into one answer,
// written once. What comes out is what splitting the whole body in one
// pass, decoding, computing and encoding each wheel in order would give.
func (s *Server) computeSpokeLengthsBatch(c echo.Context) error {
	body, err := readBatchBody(c.Request())
	if err != nil {
		return err // *http.MaxBytesError → 413
	}
	defer putBuf(bodyPool, body)
	out, err := s.batchAnswer(body, c.Request().URL.Path, runtime.GOMAXPROCS(0), minCutPart)
	if err != nil {
		return err
	}
	defer putBuf(answerPool, out)
	h := c.Response().Header()
	h.Set(echo.HeaderContentType, echo.MIMEApplicationJSON)
	h.Set(echo.HeaderContentLength, strconv.Itoa(len(out)))
	c.Response().WriteHeader(http.StatusOK)
	_, _ = c.Response().Write(out) // an error: the client has gone
	return nil
}

// batchAnswer is the whole 200 answer to a batch body, or the error that
// refuses it. The answer's buffer comes from answerPool: the caller gives it
// back. cpus is how many parts to cut a body into at most, minPart the
// fewest bytes of wheels in each.
func (s *Server) batchAnswer(body []byte, instance string, cpus, minPart int) ([]byte, error) {
	parts, ok := s.batchFromBody(body, instance, cpus, minPart)
	if !ok {
		var req batchRequest
		if err := decodeBytes(body, &req); err != nil {
			return nil, err
		}
		parts = s.batchFromRaws(req.Wheels, instance)
	}
	defer func() {
		for _, pt := range parts {
			pt.release()
		}
	}()

	n := 0
	for _, pt := range parts {
		n += pt.n
	}
	if n == 0 || n > service.MaxBatchWheels {
		return nil, &validationError{status: http.StatusBadRequest, detail: "The body does not match the API description: see errors.",
			fields: []FieldProblem{{Pointer: "/wheels", Message: "must hold 1 to " + strconv.Itoa(service.MaxBatchWheels) + " wheels"}}}
	}
	base := 0
	for _, pt := range parts {
		if pt.notJSON >= 0 { // the body as a whole is not JSON: no batch at all
			if err := strictjson.Check(body); err != nil {
				return nil, err // where exactly, and why
			}
			return nil, &validationError{status: http.StatusBadRequest, detail: "The body could not be read: see errors.",
				fields: []FieldProblem{{Pointer: "/wheels/" + strconv.Itoa(base+pt.notJSON), Message: "is not valid JSON"}}}
		}
		base += pt.n
	}
	for _, pt := range parts {
		if pt.err != nil {
			return nil, pt.err
		}
	}

	// The first part wrote its slots after the head; the others' slots
	// follow it, with the problems of their failed wheels put in now that
	// their indices are known.
	out := parts[0].out
	parts[0].out = nil
	good, base := parts[0].good, parts[0].n
	for _, pt := range parts[1:] {
		at := 0
		for _, h := range pt.holes {
			out = append(out, pt.out[at:h.at]...)
			j, err := json.Marshal(slotProblem(h.err, base+h.i, instance))
			if err != nil {
				putBuf(answerPool, out)
				return nil, err
			}
			out = append(out, j...)
			at = h.at
		}
		out = append(out, pt.out[at:]...)
		good += pt.good
		base += pt.n
	}
	out = append(out, `],"succeeded":`...)
	out = strconv.AppendInt(out, int64(good), 10)
	out = append(out, `,"failed":`...)
	out = strconv.AppendInt(out, int64(n-good), 10)
	return append(out, "}\n"...), nil
}

// minCutPart is the fewest bytes of wheels worth a goroutine of their own.
const minCutPart = 64 << 10

// batchHead opens every batch answer; the first part's buffer starts with it.
const batchHead = `{"results":[`

// batchPart is one stretch of a batch's wheels, handled by one goroutine:
// it counts them, decodes, computes and encodes each into out (slots
// joined by commas, a comma before its first slot unless the stretch
// starts the batch).
//
// A part that knows the index of its first wheel (base ≥ 0) writes a
// failed wheel's problem in its place; one that does not yet know it
// leaves a hole there for the join. After the first wheel that is not
// JSON (the whole body is then refused) and past MaxBatchWheels wheels
// (the batch is then refused as too big) it only counts.
type batchPart struct {
	s        *Server
	instance string
	base     int
	first    bool
	n, good  int
	out      []byte
	holes    []batchHole
	notJSON  int // the part's first wheel that is not JSON, or -1
	err      error
	a        arena
	w        geometry.Wheel
}

// batchHole is where the problem of the part's i-th wheel goes in out.
type batchHole struct {
	at, i int
	err   error
}

func newBatchPart(s *Server, instance string, base int, first bool, size int) *batchPart {
	pool := partPool
	if first {
		pool = answerPool
	}
	pt := &batchPart{s: s, instance: instance, base: base, first: first, notJSON: -1, out: getBuf(pool, size)}
	if first {
		pt.out = append(pt.out, batchHead...)
	}
	return pt
}

// add takes the part's next wheel, raw; decoded says that pt.w already
// holds it, decoded by the fast path.
func (pt *batchPart) add(raw []byte, decoded bool) {
	i := pt.n
	pt.n++
	if i >= service.MaxBatchWheels || pt.notJSON >= 0 {
		return
	}
	if !decoded && !jsontext.Value(raw).IsValid() { // strict: UTF-8, no duplicate names
		pt.notJSON = i
		return
	}
	if pt.err != nil { // the answer is a fault unless a later wheel is not JSON
		return
	}
	var err error
	if !decoded {
		pt.w = geometry.Wheel{}
		err = decodeBytes(raw, &pt.w)
	}
	var res service.SpokeLengthResult
	if err == nil {
		res, err = pt.s.svc.SpokeLengths(pt.w)
	}
	if i > 0 || !pt.first {
		pt.out = append(pt.out, ',')
	}
	switch {
	case err == nil:
		var eerr error
		if pt.out, eerr = appendResult(pt.out, &res); eerr != nil {
			pt.err = eerr
			return
		}
		pt.good++
	case pt.base >= 0:
		j, jerr := json.Marshal(slotProblem(err, pt.base+i, pt.instance))
		if jerr != nil {
			pt.err = jerr
			return
		}
		pt.out = append(pt.out, j...)
	default:
		pt.holes = append(pt.holes, batchHole{at: len(pt.out), i: i, err: err})
		pt.a.drop() // the error may refer to the wheel
		return
	}
	pt.a.reuse() // the wheel and its result are written out
}

// batchFromBody handles a body of the plain shape {"wheels": [...]}; ok is
// false for any other shape (as splitWheels in the tests), which the
// caller then decodes with the strict decoder. A body big enough is cut into up
// to cpus parts at guessed boundaries between two wheels (cutWheels), all
// scanned at once. The first part is scanned from the true start; a part
// counts only when the part before it in the chain, scanning on, reaches
// a comma between two wheels exactly at its start (it then knows that
// start is a true one). A part whose start is never reached so (the guess
// was inside a wheel or a string) is dropped, and the part before it
// scans on in its place: a wrong guess costs time, never a different
// answer.
func (s *Server) batchFromBody(b []byte, instance string, cpus, minPart int) (parts []*batchPart, ok bool) {
	p := wheelParser{b: b}
	if !p.expect('{') || string(p.key()) != "wheels" || !p.expect(':') || !p.expect('[') {
		return nil, false
	}
	starts := append([]int{p.i}, cutWheels(b, p.i, cpus, minPart)...)
	all := make([]*batchPart, len(starts))
	ends := make([]int, len(starts))
	// The buffers are taken here, before the goroutines start.
	for k := range all {
		size := len(b) // the first part's buffer takes the whole answer
		if k > 0 {
			size = len(b) - starts[k]
			if k+1 < len(starts) {
				size = starts[k+1] - starts[k]
			}
		}
		base := -1
		if k == 0 {
			base = 0
		}
		all[k] = newBatchPart(s, instance, base, k == 0, answerSize(size))
	}
	inParallel(len(starts), func(k int) {
		ends[k] = scanWheels(b, starts[k], starts[k+1:], all[k])
	})
	ok = true
	for k := 0; ; {
		if ends[k] < 0 {
			ok = false
			break
		}
		parts = append(parts, all[k])
		all[k] = nil
		if ends[k] == len(b) {
			break
		}
		// ends[k] is one of the later starts: scanWheels stops only there.
		next := k + 1
		for starts[next] != ends[k] {
			next++
		}
		k = next
	}
	for _, pt := range all {
		if pt != nil {
			pt.release()
		}
	}
	if !ok {
		for _, pt := range parts {
			pt.release()
		}
		return nil, false
	}
	return parts, true
}

// scanWheels feeds pt the wheels of b from from, the start of an element
// (just after the array's '[' or after a ','), as splitWheels finds them.
// It returns at the first comma between two wheels whose end is one of
// cuts (ascending), with that position; or reads the rest of the body and
// returns len(b) when the array is closed by "]}" (spaces allowed) and
// nothing follows; or returns -1 for any other shape.
func scanWheels(b []byte, from int, cuts []int, pt *batchPart) int {
	p := wheelParser{b: b, i: from}
	if pt.first && p.peek(']') {
		p.i++
	} else {
		for {
			p.ws()
			start := p.i
			if end, ok := parseWheelAt(b, start, &pt.w, &pt.a); ok {
				p.i = end
				pt.add(b[start:end], true)
			} else {
				p.i = start
				if !p.skip() {
					return -1
				}
				pt.add(b[start:p.i], false)
			}
			p.ws()
			if p.i < len(b) && b[p.i] == ',' {
				p.i++
				for len(cuts) > 0 && cuts[0] < p.i {
					cuts = cuts[1:]
				}
				if len(cuts) > 0 && cuts[0] == p.i {
					return p.i
				}
				continue
			}
			if !p.expect(']') {
				return -1
			}
			break
		}
	}
	if !p.expect('}') {
		return -1
	}
	p.ws()
	if p.i != len(b) {
		return -1
	}
	return p.i
}

// cutWheels guesses where to cut the array of wheels that starts at from
// into parts stretches of at least minPart bytes: each cut is just after a
// comma between '}' and '{' (between two wheels, unless inside one, as
// between two butted sections, or inside a string). None for bodies too
// small for goroutines to pay.
func cutWheels(b []byte, from, parts, minPart int) []int {
	parts = min(parts, (len(b)-from)/max(1, minPart))
	var cuts []int
	last := from
	for k := 1; k < parts; k++ {
		i := max(last, from+(len(b)-from)*k/parts)
		for ; i < len(b); i++ {
			if b[i] != '}' {
				continue
			}
			j := skipSpace(b, i+1)
			if j < len(b) && b[j] == ',' {
				if l := skipSpace(b, j+1); l < len(b) && b[l] == '{' {
					cuts = append(cuts, j+1)
					last = j + 1
					break
				}
			}
		}
	}
	return cuts
}

func skipSpace(b []byte, i int) int {
	for i < len(b) && (b[i] == ' ' || b[i] == '\t' || b[i] == '\n' || b[i] == '\r') {
		i++
	}
	return i
}

// batchFromRaws handles wheels that the strict decoder split out of a body of
// another shape; each part knows its first index.
func (s *Server) batchFromRaws(raws []rawWheel, instance string) []*batchPart {
	ranges := split(len(raws))
	parts := make([]*batchPart, len(ranges))
	for k, r := range ranges {
		size := 0
		for _, raw := range raws[r[0]:r[1]] {
			size += len(raw) + 1
		}
		if k == 0 {
			size *= len(ranges)
		}
		parts[k] = newBatchPart(s, instance, r[0], k == 0, answerSize(size))
	}
	inParallel(len(ranges), func(k int) {
		pt := parts[k]
		for _, r := range raws[ranges[k][0]:ranges[k][1]] {
			pt.add(r, parseWheel(r, &pt.w, &pt.a))
		}
	})
	return parts
}

// answerSize is the buffer to reserve for the slots of n bytes of wheels:
// a computed wheel's answer is a little over twice its request.
func answerSize(n int) int { return n*5/2 + 64 }

// The batch's big buffers (the body, the answer, the other parts' slots)
// are kept from one batch to the next, so that they are neither allocated
// nor cleared anew. Each pool holds one kind, so its buffers are about the
// sizes asked of it. A sync.Pool does not suit buffers this few and this
// big: the one a batch gives back is found again only on the same CPU.
// A pool keeps at most two buffers, of at most maxPooled bytes each.
type bufPool chan []byte

const maxPooled = 24 << 20

var bodyPool, answerPool, partPool = make(bufPool, 2), make(bufPool, 2), make(bufPool, 2)

// getBuf returns an empty buffer of capacity at least n from pool (which
// keeps a buffer that was too small for the next, smaller, batches).
func getBuf(pool bufPool, n int) []byte {
	select {
	case b := <-pool:
		if cap(b) >= n {
			return b[:0]
		}
		putBuf(pool, b)
	default:
	}
	return make([]byte, 0, n)
}

// putBuf gives b back to pool; nothing may refer to it any more. Small
// buffers are left to the garbage collector.
func putBuf(pool bufPool, b []byte) {
	if cap(b) < 64<<10 || cap(b) > maxPooled {
		return
	}
	select {
	case pool <- b:
	default:
	}
}

// release gives the part's buffer back.
func (pt *batchPart) release() {
	pool := partPool
	if pt.first {
		pool = answerPool
	}
	putBuf(pool, pt.out)
	pt.out = nil
}

// readBatchBody is readBody into a pooled buffer.
func readBatchBody(r *http.Request) ([]byte, error) {
	if r.ContentLength <= 0 {
		return io.ReadAll(r.Body)
	}
	b := getBuf(bodyPool, int(r.ContentLength))[:r.ContentLength]
	if _, err := io.ReadFull(r.Body, b); err != nil {
		putBuf(bodyPool, b)
		return nil, shortBody(err)
	}
	return b, nil
}

// readBody reads a request body in one allocation when its length is
// declared (the body limit has already capped it).
func readBody(r *http.Request) ([]byte, error) {
	if r.ContentLength <= 0 {
		return io.ReadAll(r.Body)
	}
	b := make([]byte, r.ContentLength)
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
		return &bodyError{status: http.StatusBadRequest, detail: "The body ended before its declared Content-Length."}
	}
	return err
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

// inParallel runs f(0), …, f(n-1) at once and waits.
func inParallel(n int, f func(k int)) {
	if n == 1 {
		f(0)
		return
	}
	var wg sync.WaitGroup
	for k := range n {
		wg.Go(func() { f(k) })
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
