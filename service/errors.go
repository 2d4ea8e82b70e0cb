package service

import (
	"errors"
	"fmt"
)

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

// FieldError names one bad field of a request by its RFC 6901 JSON pointer.
// Unprocessable marks input that is well-formed but impossible (HTTP 422);
// otherwise it is malformed (HTTP 400). The pure packages (geometry, tension,
// fit) return their own types with the same methods; the HTTP layer accepts
// any error with FieldPointer and IsUnprocessable.
type FieldError struct {
	Pointer       string
	Message       string
	Unprocessable bool
}

func (e *FieldError) Error() string {
	return fmt.Sprintf("%s: %s", e.Pointer, e.Message)
}

// FieldPointer returns the JSON pointer of the offending field.
func (e *FieldError) FieldPointer() string { return e.Pointer }

// IsUnprocessable reports whether the input is well-formed but impossible.
func (e *FieldError) IsUnprocessable() bool { return e.Unprocessable }

// Invalid returns a 400-class FieldError.
func Invalid(pointer, format string, args ...any) *FieldError {
	return &FieldError{Pointer: pointer, Message: fmt.Sprintf(format, args...)}
}

// Unprocessable returns a 422-class FieldError.
func Unprocessable(pointer, format string, args ...any) *FieldError {
	return &FieldError{Pointer: pointer, Message: fmt.Sprintf(format, args...), Unprocessable: true}
}
