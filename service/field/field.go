// Package field is wheelbench's one field-error type: a refused member of a
// request, named by its RFC 6901 JSON pointer (or "query:NAME",
// "header:NAME" for a parameter). Every package that judges input returns
// *Error values — the pure math and rule packages, the service, the strict
// JSON policy — several of them joined with errors.Join; the HTTP layer
// turns them into one problem's errors list.
//
// It imports only the standard library, so the pure packages may use it.
package field

import (
	"errors"
	"fmt"
)

// Error is one bad field. Unprocessable marks input that is well-formed
// but describes something that cannot be (HTTP 422): a wheel that cannot
// be laced, a calibration that is not monotone. Otherwise the value is
// malformed or absurd (HTTP 400).
type Error struct {
	Pointer       string
	Message       string
	Unprocessable bool
}

// Error returns "pointer: message", or the message alone for the document
// itself.
func (e *Error) Error() string {
	if e.Pointer == "" {
		return e.Message
	}
	return e.Pointer + ": " + e.Message
}

// Invalid is a malformed field (400).
func Invalid(pointer, format string, a ...any) *Error {
	return &Error{Pointer: pointer, Message: fmt.Sprintf(format, a...)}
}

// Unprocessable is a well-formed field that cannot be acted on (422).
func Unprocessable(pointer, format string, a ...any) *Error {
	return &Error{Pointer: pointer, Message: fmt.Sprintf(format, a...), Unprocessable: true}
}

// All returns the field errors in err's tree (errors.Join and %w wrapping
// followed), in order; none when err holds none.
func All(err error) []*Error {
	var out []*Error
	var walk func(error)
	walk = func(e error) {
		switch u := e.(type) {
		case nil:
		case *Error:
			out = append(out, u)
		case interface{ Unwrap() []error }:
			for _, x := range u.Unwrap() {
				walk(x)
			}
		case interface{ Unwrap() error }:
			walk(u.Unwrap())
		}
	}
	walk(err)
	return out
}

// Map returns err with every field error's pointer replaced by to(pointer),
// for a caller whose body holds the judged value somewhere else (under a
// member, or as query parameters). Field errors are copied, never changed
// in place; errors.Join trees keep their shape; any other error passes
// unchanged, and nil stays nil.
func Map(err error, to func(pointer string) string) error {
	switch e := err.(type) {
	case nil:
		return nil
	case *Error:
		c := *e
		c.Pointer = to(e.Pointer)
		return &c
	case interface{ Unwrap() []error }:
		var out []error
		for _, x := range e.Unwrap() {
			out = append(out, Map(x, to))
		}
		return errors.Join(out...)
	}
	return err
}

// Under returns err with prefix (a pointer such as "/spec") put before
// every field error's pointer: see Map.
func Under(prefix string, err error) error {
	return Map(err, func(p string) string { return prefix + p })
}
