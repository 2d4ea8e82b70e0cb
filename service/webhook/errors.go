package webhook

// FieldError is one bad field of a webhook-endpoint request. Pointer is an
// RFC 6901 JSON pointer into the request body ("/url", "/secret").
// Unprocessable is false for malformed input (HTTP 400) and true for
// well-formed input that cannot be accepted, such as a URL naming a private
// address (HTTP 422).
type FieldError struct {
	Pointer       string
	Message       string
	Unprocessable bool
}

// Error returns "pointer: message".
func (e *FieldError) Error() string { return e.Pointer + ": " + e.Message }

// FieldPointer returns the JSON pointer of the bad field.
func (e *FieldError) FieldPointer() string { return e.Pointer }

// IsUnprocessable reports whether the field is well-formed but not acceptable.
func (e *FieldError) IsUnprocessable() bool { return e.Unprocessable }

func invalid(pointer, message string) *FieldError {
	return &FieldError{Pointer: pointer, Message: message}
}

func unprocessable(pointer, message string) *FieldError {
	return &FieldError{Pointer: pointer, Message: message, Unprocessable: true}
}
