package service

import (
	"runtime"
	"sync"

	"wheelbench/service/fit"
	"wheelbench/service/geometry"
)

// MaxBatchWheels is the most wheels one batch may hold.
const MaxBatchWheels = 10000

// SpokeLengths computes one wheel: both sides' lengths, angles, tensions,
// and the rule set's findings and cautions on them. Bad or impossible input
// comes back as *field.Error values (400 or 422), never as NaN or
// Inf.
func (s *Service) SpokeLengths(w geometry.Wheel) (SpokeLengthResult, error) {
	res, err := geometry.Compute(w)
	if err != nil {
		return SpokeLengthResult{}, err
	}
	out := SpokeLengthResult{Result: res}
	out.Findings, out.Cautions = fit.AssessWheel(w, &out.Result, wheelOptions)
	return out, nil
}

var wheelOptions = fit.DefaultOptions()

// BatchItem is one wheel's outcome in a batch: a Result, or the error that
// wheel alone has (the other wheels are unaffected).
type BatchItem struct {
	Result SpokeLengthResult
	Err    error
}

// SpokeLengthsBatch computes every wheel independently and returns the
// outcomes in the order of ws. Wheels are shared out over the available
// CPUs; the answer does not depend on how.
func (s *Service) SpokeLengthsBatch(ws []geometry.Wheel) []BatchItem {
	out := make([]BatchItem, len(ws))
	eachChunk(len(ws), func(lo, hi int) {
		for i := lo; i < hi; i++ {
			out[i].Result, out[i].Err = s.SpokeLengths(ws[i])
		}
	})
	return out
}

// eachChunk runs f over [0, n) split into one contiguous chunk per CPU (a
// single call when n is small) and waits for all of them.
func eachChunk(n int, f func(lo, hi int)) {
	const minChunk = 256 // below this, starting goroutines costs more than it saves
	workers := min(runtime.GOMAXPROCS(0), (n+minChunk-1)/minChunk)
	if workers <= 1 {
		f(0, n)
		return
	}
	var wg sync.WaitGroup
	size := (n + workers - 1) / workers
	for lo := 0; lo < n; lo += size {
		hi := min(lo+size, n)
		wg.Go(func() { f(lo, hi) })
	}
	wg.Wait()
}
