package spokejson

import (
	"runtime"
	"strconv"
	"sync"

	"github.com/go-json-experiment/json/jsontext"

	"wheelbench/api/strictjson"
	"wheelbench/service/field"
	"wheelbench/service/fit"
	"wheelbench/service/geometry"
)

// Compute computes one wheel: the service's spoke-length use case.
type Compute func(geometry.Wheel) (fit.WheelResult, error)

// Batch answers batch bodies. Its fields are set once and read by every
// goroutine of every batch.
type Batch struct {
	// Compute computes each wheel.
	Compute Compute
	// Problem appends the JSON problem object of wheel i, which failed with
	// err, to b: the HTTP layer's wording of the error, with its pointers
	// under /wheels/i.
	Problem func(b []byte, err error, i int) ([]byte, error)
	// MaxWheels is the most wheels a body may hold.
	MaxWheels int
	// CPUs is how many parts a body is cut into at most (0: GOMAXPROCS);
	// MinPart the fewest bytes of wheels in each (0: 64 KiB). Tests set
	// them to cut small bodies.
	CPUs, MinPart int
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

// Answer is the whole 200 answer to a batch body {"wheels": [...]} —
// {"results": [...], "succeeded": n, "failed": m}, a result or a problem in
// each wheel's slot, in order — or the error that refuses the body: a
// *field.Error when it is not JSON under the strict policy, not that shape
// or holds no wheels or too many, else the error of a fault. The answer's
// buffer is pooled: give it back with PutAnswer.
//
// The body is cut into one stretch of wheels per CPU and each stretch is
// split, decoded, computed and encoded by its own goroutine into its own
// buffer (see batchPart); the buffers are then joined into one answer.
// What comes out is what splitting the whole body in one pass, decoding,
// computing and encoding each wheel in order would give.
func (bt Batch) Answer(body []byte) ([]byte, error) {
	cpus, minPart := bt.CPUs, bt.MinPart
	if cpus <= 0 {
		cpus = runtime.GOMAXPROCS(0)
	}
	if minPart <= 0 {
		minPart = minCutPart
	}
	parts, ok := bt.fromBody(body, cpus, minPart)
	if !ok {
		var req batchRequest
		if err := strictjson.Unmarshal(body, &req); err != nil {
			return nil, err
		}
		parts = bt.fromRaws(req.Wheels)
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
	if n == 0 || n > bt.MaxWheels {
		return nil, field.Invalid("/wheels", "must hold 1 to %d wheels", bt.MaxWheels)
	}
	base := 0
	for _, pt := range parts {
		if pt.notJSON >= 0 { // the body as a whole is not JSON: no batch at all
			if err := strictjson.Check(body); err != nil {
				return nil, err // where exactly, and why
			}
			return nil, field.Invalid("/wheels/"+strconv.Itoa(base+pt.notJSON), "is not valid JSON")
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
			var err error
			if out, err = bt.Problem(out, h.err, base+h.i); err != nil {
				putBuf(answerPool, out)
				return nil, err
			}
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
	bt      *Batch
	base    int
	first   bool
	n, good int
	out     []byte
	holes   []batchHole
	notJSON int // the part's first wheel that is not JSON, or -1
	err     error
	a       arena
	w       geometry.Wheel
}

// batchHole is where the problem of the part's i-th wheel goes in out.
type batchHole struct {
	at, i int
	err   error
}

func newBatchPart(bt *Batch, base int, first bool, size int) *batchPart {
	pool := partPool
	if first {
		pool = answerPool
	}
	pt := &batchPart{bt: bt, base: base, first: first, notJSON: -1, out: getBuf(pool, size)}
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
	if i >= pt.bt.MaxWheels || pt.notJSON >= 0 {
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
		err = strictjson.Unmarshal(raw, &pt.w)
	}
	var res fit.WheelResult
	if err == nil {
		res, err = pt.bt.Compute(pt.w)
	}
	if i > 0 || !pt.first {
		pt.out = append(pt.out, ',')
	}
	switch {
	case err == nil:
		var eerr error
		if pt.out, eerr = AppendResult(pt.out, &res); eerr != nil {
			pt.err = eerr
			return
		}
		pt.good++
	case pt.base >= 0:
		var perr error
		if pt.out, perr = pt.bt.Problem(pt.out, err, pt.base+i); perr != nil {
			pt.err = perr
			return
		}
	default:
		pt.holes = append(pt.holes, batchHole{at: len(pt.out), i: i, err: err})
		pt.a.drop() // the error may refer to the wheel
		return
	}
	pt.a.reuse() // the wheel and its result are written out
}

// fromBody handles a body of the plain shape {"wheels": [...]}; ok is
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
func (bt *Batch) fromBody(b []byte, cpus, minPart int) (parts []*batchPart, ok bool) {
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
		all[k] = newBatchPart(bt, base, k == 0, answerSize(size))
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

// fromRaws handles wheels that the strict decoder split out of a body of
// another shape; each part knows its first index.
func (bt *Batch) fromRaws(raws []rawWheel) []*batchPart {
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
		parts[k] = newBatchPart(bt, r[0], k == 0, answerSize(size))
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

// BodyBuffer returns an empty buffer of capacity at least n for reading a
// batch body into, kept from an earlier batch when one is free.
func BodyBuffer(n int) []byte { return getBuf(bodyPool, n) }

// PutBody gives a body's buffer back once nothing refers to it any more.
func PutBody(b []byte) { putBuf(bodyPool, b) }

// PutAnswer gives Answer's buffer back once it has been written.
func PutAnswer(b []byte) { putBuf(answerPool, b) }

// release gives the part's buffer back.
func (pt *batchPart) release() {
	pool := partPool
	if pt.first {
		pool = answerPool
	}
	putBuf(pool, pt.out)
	pt.out = nil
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
