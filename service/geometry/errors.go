package geometry

import (
	"errors"
	"strconv"

	"wheelbench/service/field"
)

// errList collects field errors (*field.Error: pointers into the request
// body as the client sent it, such as "/crosses/left"; 400 for malformed or
// absurd values — a non-positive size, NaN, an unknown enum value — and 422
// for well-formed input that describes a wheel that cannot be built). It
// allocates only when an error is added.
type errList []error

func (l *errList) bad(pointer, msg string) {
	*l = append(*l, &field.Error{Pointer: pointer, Message: msg})
}

// at joins a pointer prefix and leaf. Callers on the success path pass the
// parts instead of a joined pointer so that nothing is built unless an
// error is reported.
func at(prefix, leaf string) string { return prefix + leaf }

func (l *errList) impossible(pointer, msg string) {
	*l = append(*l, &field.Error{Pointer: pointer, Message: msg, Unprocessable: true})
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
