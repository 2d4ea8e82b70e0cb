// Package strictjson is wheelbench's one policy for reading JSON that comes
// from outside: every request body the HTTP layer reads, the documents
// nested in them (a build's spec, a part's dimensions) and the batch
// wheels the hot codec (api/spokejson) steps aside on. It decodes with the
// semantics of encoding/json/v2 (github.com/go-json-experiment/json) and
// refuses, with the library's RFC 6901 pointer of the offending value:
//
//   - member names in another letter case, unknown members and duplicate
//     names;
//   - invalid UTF-8, and the character U+0000 in any string (PostgreSQL's
//     text cannot hold it, and no field of ours has a use for it);
//   - null, except into a type that says it takes null (Nullable);
//   - numbers beyond the range of their Go type (1e400 for a float64);
//   - anything after the one JSON value;
//   - nesting deeper than 10000 arrays and objects (the library's bound).
//
// Its errors are *field.Error values (400): the library's pointer and a
// message written for the integrator, never a Go type name. What went wrong
// is told from the library's error values and the input at the error's
// offset, never from the wording of an error. It imports only the JSON
// library and the field-error type.
package strictjson

import (
	"bytes"
	"encoding"
	"errors"
	"fmt"
	"io"
	"math"
	"reflect"
	"strconv"
	"strings"
	"unicode/utf8"

	"github.com/go-json-experiment/json"
	"github.com/go-json-experiment/json/jsontext"

	"wheelbench/service/field"
)

// Nullable is implemented by the few types that give JSON null a meaning
// (a PATCH member whose null removes a value). Every other type refuses null.
type Nullable interface {
	JSONNullable()
}

var nullableType = reflect.TypeFor[Nullable]()

// refuseNull runs before the default decoding of every value: it refuses
// null unless the destination takes it, and otherwise steps aside.
var refuseNull = json.WithUnmarshalers(json.UnmarshalFromFunc(func(dec *jsontext.Decoder, v any) error {
	if dec.PeekKind() != 'n' {
		return errors.ErrUnsupported
	}
	if t := reflect.TypeOf(v); t != nil && (t.Implements(nullableType) || t.Elem().Implements(nullableType)) {
		return errors.ErrUnsupported
	}
	return errNull
}))

var errNull = errors.New("must not be null")

var options = json.JoinOptions(json.RejectUnknownMembers(true), refuseNull)

// Unmarshal decodes the one JSON value in b into v under the policy. v must
// be a non-nil pointer. On error v may be partly filled.
func Unmarshal(b []byte, v any) error {
	if err := json.Unmarshal(b, v, options); err != nil {
		return translate(b, err)
	}
	// The escape \u0000 is the only way to write U+0000 (a raw NUL byte is
	// not valid JSON): a body without that text holds none.
	if bytes.Contains(b, []byte(`\u0000`)) {
		return Check(b)
	}
	return nil
}

// Check reads b as one JSON value under the policy's rules that need no Go
// type: valid JSON, UTF-8, no duplicate names, no U+0000, every number
// within the range of a float64. It decodes nothing.
func Check(b []byte) error {
	dec := jsontext.NewDecoder(bytes.NewReader(b))
	for {
		tok, err := dec.ReadToken()
		if err != nil {
			return translate(b, err)
		}
		switch tok.Kind() {
		case '0':
			if f, err := tok.Float(); err != nil || math.IsInf(f, 0) {
				return &field.Error{Pointer: string(dec.StackPointer()), Message: outOfRangeFloat}
			}
		case '"':
			if strings.IndexByte(tok.String(), 0) >= 0 {
				return &field.Error{Pointer: string(dec.StackPointer()), Message: nulMessage}
			}
		}
		if dec.StackDepth() == 0 {
			break
		}
	}
	if _, err := dec.ReadToken(); err == nil {
		return &field.Error{Message: "the body has data after its JSON value"}
	} else if !errors.Is(err, io.EOF) {
		return translate(b, err)
	}
	return nil
}

const (
	nulMessage      = "must not contain the character U+0000"
	outOfRangeFloat = "must be a number within the range of a double (about ±1.8e308)"
)

// translate turns the JSON library's errors about b into *field.Error. An
// error that is not the library's (one a type's own decoder returned) keeps
// its pointer and text when it already has a pointer of its own.
func translate(b []byte, err error) error {
	var sem *json.SemanticError
	if errors.As(err, &sem) {
		return semantic(sem)
	}
	var fe *field.Error
	if errors.As(err, &fe) {
		return fe
	}
	var syn *jsontext.SyntacticError
	if errors.As(err, &syn) {
		ptr, at := string(syn.JSONPointer), syn.ByteOffset
		switch {
		case errors.Is(syn.Err, jsontext.ErrDuplicateName):
			return &field.Error{Pointer: ptr, Message: "duplicate member name"}
		case errors.Is(syn.Err, io.ErrUnexpectedEOF):
			return &field.Error{Message: "the body is empty or cut short"}
		case afterValue(b, at):
			return &field.Error{Message: "the body has data after its JSON value"}
		case invalidUTF8At(b, at):
			return &field.Error{Pointer: ptr, Message: "is not valid UTF-8"}
		case nestedTooDeep(b, syn):
			// Its pointer would be 10,000 segments long.
			return &field.Error{Message: "the body nests arrays and objects more than 10000 deep"}
		}
		return &field.Error{Pointer: ptr, Message: fmt.Sprintf("is not valid JSON (at byte %d)", at)}
	}
	if errors.Is(err, io.EOF) || errors.Is(err, io.ErrUnexpectedEOF) {
		return &field.Error{Message: "the body is empty or cut short"}
	}
	return &field.Error{Message: "the body could not be read"}
}

// invalidUTF8At reports whether the library stopped inside a string (a
// member name or a value) at a byte that starts no valid UTF-8 sequence.
// Outside strings such a byte is just a character JSON does not have.
func invalidUTF8At(b []byte, at int64) bool {
	if at < 0 || at >= int64(len(b)) {
		return false
	}
	if r, size := utf8.DecodeRune(b[at:]); r != utf8.RuneError || size > 1 {
		return false
	}
	in := false // inside a string, scanning from the start
	for i := int64(0); i < at; i++ {
		switch {
		case b[i] == '"':
			in = !in
		case b[i] == '\\' && in:
			i++
		}
	}
	return in
}

// maxDepth is the library's bound on nesting.
const maxDepth = 10000

// nestedTooDeep reports whether the error is the library refusing to open
// an array or object past maxDepth: it stops at that bracket, with a
// pointer maxDepth segments long.
func nestedTooDeep(b []byte, syn *jsontext.SyntacticError) bool {
	at := syn.ByteOffset
	if at < 0 || at >= int64(len(b)) || b[at] != '[' && b[at] != '{' {
		return false
	}
	n := 0
	for range syn.JSONPointer.Tokens() {
		n++
	}
	return n >= maxDepth
}

// afterValue reports whether the error lies past b's first JSON value,
// which reads whole: data after the value.
func afterValue(b []byte, at int64) bool {
	dec := jsontext.NewDecoder(bytes.NewReader(b))
	return dec.SkipValue() == nil && dec.InputOffset() <= at
}

func semantic(e *json.SemanticError) error {
	ptr := string(e.JSONPointer)
	var inner *field.Error
	switch {
	case errors.As(e.Err, &inner):
		// A type's own decoder used this package: its pointer is relative
		// to the value it was given.
		return &field.Error{Pointer: ptr + inner.Pointer, Message: inner.Message}
	case errors.Is(e.Err, json.ErrUnknownName):
		return &field.Error{Pointer: ptr, Message: "unknown member (names are exact and case-sensitive)"}
	case errors.Is(e.Err, errNull):
		return &field.Error{Pointer: ptr, Message: "must not be null"}
	}
	want := wantOf(e.GoType)
	switch {
	case e.JSONKind != 0 && e.Err == nil:
		return &field.Error{Pointer: ptr, Message: fmt.Sprintf("must be %s, not %s", want, kindName(e.JSONKind))}
	case errors.Is(e.Err, strconv.ErrRange) && isFloat(e.GoType):
		return &field.Error{Pointer: ptr, Message: outOfRangeFloat}
	case errors.Is(e.Err, strconv.ErrRange):
		return &field.Error{Pointer: ptr, Message: fmt.Sprintf("must be %s within range", want)}
	}
	return &field.Error{Pointer: ptr, Message: "must be " + want}
}

func isFloat(t reflect.Type) bool {
	for t != nil && t.Kind() == reflect.Pointer {
		t = t.Elem()
	}
	return t != nil && (t.Kind() == reflect.Float64 || t.Kind() == reflect.Float32)
}

var textUnmarshaler = reflect.TypeFor[encoding.TextUnmarshaler]()

// wantOf names what a Go type takes, in JSON's words.
func wantOf(t reflect.Type) string {
	for t != nil && t.Kind() == reflect.Pointer {
		t = t.Elem()
	}
	if t == nil {
		return "a valid value"
	}
	if t.Name() == "UUID" {
		return "a UUID such as 0192f5e2-7c1a-7b3e-9d4f-2a6b8c0d1e2f"
	}
	if t.Name() == "Time" && t.PkgPath() == "time" {
		return "an RFC 3339 time such as 2026-12-01T10:00:00Z"
	}
	if reflect.PointerTo(t).Implements(textUnmarshaler) {
		return "a string"
	}
	switch t.Kind() {
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64,
		reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64:
		return "an integer"
	case reflect.Float32, reflect.Float64:
		return "a number"
	case reflect.String:
		return "a string"
	case reflect.Bool:
		return "true or false"
	case reflect.Slice, reflect.Array:
		return "an array"
	case reflect.Struct, reflect.Map:
		return "an object"
	}
	return "a valid value"
}

func kindName(k jsontext.Kind) string {
	switch k {
	case 'n':
		return "null"
	case 't', 'f':
		return "true or false"
	case '"':
		return "a string"
	case '0':
		return "a number"
	case '{':
		return "an object"
	case '[':
		return "an array"
	}
	return "another kind of value"
}
