package geometry

import (
	"errors"
	"strconv"
)

// FieldError is one bad input field. Pointer is an RFC 6901 JSON pointer into
// the request body as the client sent it (for example "/crosses/left").
// Unprocessable is false for malformed or absurd values (HTTP 400: a
// non-positive size, NaN, an unknown enum value) and true for well-formed
// input that describes a wheel that cannot be built (HTTP 422).
type FieldError struct {
	Pointer       string
	Message       string
	Unprocessable bool
}

// Error returns the pointer and the message.
func (e *FieldError) Error() string { return e.Pointer + ": " + e.Message }

// FieldPointer returns the RFC 6901 pointer of the offending field.
func (e *FieldError) FieldPointer() string { return e.Pointer }

// IsUnprocessable reports whether the input is well-formed but impossible.
func (e *FieldError) IsUnprocessable() bool { return e.Unprocessable }

// errList collects field errors; it allocates only when an error is added.
type errList []error

func (l *errList) bad(pointer, msg string) {
	*l = append(*l, &FieldError{Pointer: pointer, Message: msg})
}

// at joins a pointer prefix and leaf. Callers on the success path pass the
// parts instead of a joined pointer so that nothing is built unless an
// error is reported.
func at(prefix, leaf string) string { return prefix + leaf }

func (l *errList) impossible(pointer, msg string) {
	*l = append(*l, &FieldError{Pointer: pointer, Message: msg, Unprocessable: true})
}

func (l errList) err() error {
	switch len(l) {
	case 0:
		return nil
	case 1:
		return l[0]
	}
	return errors.Join(l...)
}

// fmtMM formats a length for a message, to 0.01 mm.
func fmtMM(v float64) string { return strconv.FormatFloat(v, 'f', 2, 64) + " mm" }

// fmtNum formats a plain number for a message.
func fmtNum(v float64) string { return strconv.FormatFloat(v, 'g', 6, 64) }
