package service

import "errors"

// Sentinel error kinds. The HTTP layer maps each to one status; everything
// else is an internal error. Wrap them with context using %w.
var (
	// ErrNotFound: the resource does not exist in the caller's organisation.
	ErrNotFound = errors.New("not found")
	// ErrConflict: the request conflicts with the resource's current state.
	ErrConflict = errors.New("conflict")
	// ErrInvalid: the input is malformed or out of range.
	ErrInvalid = errors.New("invalid input")
	// ErrUnprocessable: the input is well-formed but cannot be acted on.
	ErrUnprocessable = errors.New("unprocessable")
	// ErrUnauthenticated: no valid credentials.
	ErrUnauthenticated = errors.New("unauthenticated")
	// ErrForbidden: the credentials' role is too low.
	ErrForbidden = errors.New("forbidden")
	// ErrPreconditionFailed: If-Match names a version that is not current.
	ErrPreconditionFailed = errors.New("precondition failed")
	// ErrPreconditionRequired: an update came without If-Match.
	ErrPreconditionRequired = errors.New("precondition required")
	// ErrUnavailable: a dependency (the database) cannot be reached.
	ErrUnavailable = errors.New("service unavailable")
)
