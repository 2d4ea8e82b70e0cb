package tension

import (
	"errors"
	"fmt"
	"strconv"
	"strings"
)

// FieldError is an input the package refuses. Pointer is an RFC 6901 JSON
// pointer into the request body as the client sent it. Unprocessable false
// means a malformed or absurd value (HTTP 400); true means well-formed but
// impossible (HTTP 422): the model cannot be identified, a column is not
// monotone, a reading is beyond what the tool can produce.
type FieldError struct {
	Pointer       string
	Message       string
	Unprocessable bool
}

func (e *FieldError) Error() string {
	if e.Pointer == "" {
		return e.Message
	}
	return e.Pointer + ": " + e.Message
}

// FieldPointer returns the JSON pointer of the offending field.
func (e *FieldError) FieldPointer() string { return e.Pointer }

// IsUnprocessable reports whether the input is well-formed but impossible.
func (e *FieldError) IsUnprocessable() bool { return e.Unprocessable }

func badField(pointer, format string, args ...any) *FieldError {
	return &FieldError{Pointer: pointer, Message: fmt.Sprintf(format, args...)}
}

func impossible(pointer, format string, args ...any) *FieldError {
	return &FieldError{Pointer: pointer, Message: fmt.Sprintf(format, args...), Unprocessable: true}
}

// WithPointerPrefix returns err with prefix (an RFC 6901 pointer such as
// "/calibration") prepended to the pointer of every *FieldError in its tree,
// for callers that embed a calibration or tool inside a larger body. Other
// errors pass through unchanged; nil stays nil.
func WithPointerPrefix(err error, prefix string) error {
	if err == nil || prefix == "" {
		return err
	}
	var fe *FieldError
	if multi, ok := err.(interface{ Unwrap() []error }); ok {
		var out []error
		for _, e := range multi.Unwrap() {
			out = append(out, WithPointerPrefix(e, prefix))
		}
		return errors.Join(out...)
	}
	if errors.As(err, &fe) {
		c := *fe
		c.Pointer = prefix + fe.Pointer
		return &c
	}
	return err
}

var pointerEscaper = strings.NewReplacer("~", "~0", "/", "~1")

// ptr builds a JSON pointer from path segments, escaping ~ and / per RFC 6901.
func ptr(segs ...any) string {
	var b strings.Builder
	for _, s := range segs {
		b.WriteByte('/')
		switch v := s.(type) {
		case int:
			b.WriteString(strconv.Itoa(v))
		case string:
			if strings.ContainsAny(v, "~/") {
				v = pointerEscaper.Replace(v)
			}
			b.WriteString(v)
		default:
			fmt.Fprint(&b, v)
		}
	}
	return b.String()
}
