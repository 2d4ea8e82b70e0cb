package service

import (
	"context"
	"fmt"
	"strings"
	"time"
	"unicode/utf8"

	"wheelbench/service/field"
)

// IdempotencyTTL is how long a key's first response is kept for replay.
const IdempotencyTTL = 24 * time.Hour

// StoredResponse is a response kept for replay under an Idempotency-Key.
type StoredResponse struct {
	Status  int
	Headers map[string]string
	Body    []byte
}

// IdempotentRequest identifies a creating request by its key and a
// fingerprint of its method, path and body.
type IdempotentRequest struct {
	Key         string
	Fingerprint []byte
}

// Idempotency outcomes the HTTP layer maps to statuses.
var (
	// ErrIdempotencyMismatch: the key was used with another request body (422).
	ErrIdempotencyMismatch = fmt.Errorf("%w: this Idempotency-Key was used with a different request", ErrUnprocessable)
	// ErrIdempotencyInFlight: the first request with the key is still running (409).
	ErrIdempotencyInFlight = fmt.Errorf("%w: a request with this Idempotency-Key is still in progress; retry shortly", ErrConflict)
)

// ValidateIdempotencyKey checks a client's key: 1 to 255 printable ASCII
// characters.
func ValidateIdempotencyKey(k string) error {
	if k == "" || len(k) > 255 || !utf8.ValidString(k) || strings.IndexFunc(k, func(r rune) bool { return r < 0x21 || r > 0x7e }) >= 0 {
		return field.Invalid("header:Idempotency-Key", "must be 1 to 255 printable ASCII characters without spaces")
	}
	return nil
}

// RunIdempotent runs fn at most once per (organisation, key): the first
// time, fn's writes and its response are committed together; later with
// the same fingerprint the stored response is returned and fn is not run;
// with another fingerprint ErrIdempotencyMismatch; while the first is still
// running ErrIdempotencyInFlight. Responses of 5xx are not kept: fn's
// writes roll back and the client may retry.
func (s *Service) RunIdempotent(ctx context.Context, p Principal, req IdempotentRequest,
	fn func(ctx context.Context) (StoredResponse, error)) (StoredResponse, bool, error) {
	if err := ValidateIdempotencyKey(req.Key); err != nil {
		return StoredResponse{}, false, err
	}
	return s.store.RunIdempotent(ctx, p.OrgID, req, s.now().Add(IdempotencyTTL), fn)
}
