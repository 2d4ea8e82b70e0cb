package strictjson

import (
	"errors"
	"strings"
	"testing"
	"time"

	"github.com/go-json-experiment/json/jsontext"
	"github.com/google/uuid"

	"wheelbench/service/field"
)

type inner struct {
	A float64 `json:"a"`
	N int     `json:"n"`
}

type embedded struct {
	E int `json:"e"`
}

type optional struct {
	Set   bool
	Value *float64
}

func (o *optional) JSONNullable() {}

func (o *optional) UnmarshalJSON(b []byte) error {
	o.Set = true
	if string(b) == "null" {
		return nil
	}
	return Unmarshal(b, &o.Value)
}

type doc struct {
	embedded
	S    string    `json:"s"`
	P    *string   `json:"p"`
	L    []inner   `json:"l"`
	ID   uuid.UUID `json:"id"`
	At   time.Time `json:"at"`
	Opt  optional  `json:"opt"`
	Nest *inner    `json:"nest"`
}

func TestUnmarshalRefuses(t *testing.T) {
	for _, c := range []struct {
		name, body, ptr, msg string
	}{
		{"case variant", `{"S": "x"}`, "/S", "unknown member (names are exact and case-sensitive)"},
		{"unknown nested", `{"l": [{"a": 1}, {"b": 1}]}`, "/l/1/b", "unknown member (names are exact and case-sensitive)"},
		{"duplicate", `{"s": "x", "s": "y"}`, "/s", "duplicate member name"},
		{"duplicate nested", `{"nest": {"a": 1, "a": 2}}`, "/nest/a", "duplicate member name"},
		{"invalid UTF-8", "{\"s\": \"a\xffb\"}", "/s", "is not valid UTF-8"},
		{"invalid UTF-8 in a name", "{\"s\xff\": 1}", "", "is not valid UTF-8"},
		{"NUL", `{"s": "a\u0000b"}`, "/s", "must not contain the character U+0000"},
		{"NUL in an array", `{"l": [{"a": 1}], "p": "\u0000"}`, "/p", "must not contain the character U+0000"},
		{"null string", `{"s": null}`, "/s", "must not be null"},
		{"null pointer", `{"p": null}`, "/p", "must not be null"},
		{"null element", `{"l": [{"a": 1}, null]}`, "/l/1", "must not be null"},
		{"null document", `null`, "", "must not be null"},
		{"float out of range", `{"l": [{"a": 1}, {"a": 1e400}]}`, "/l/1/a", "must be a number within the range of a double (about ±1.8e308)"},
		{"integer with a fraction", `{"e": 1.5}`, "/e", "must be an integer"},
		{"integer out of range", `{"e": 99999999999999999999}`, "/e", "must be an integer within range"},
		{"wrong kind", `{"l": [{"a": "x"}]}`, "/l/0/a", "must be a number, not a string"},
		{"bad UUID", `{"id": "nope"}`, "/id", "must be a UUID such as 0192f5e2-7c1a-7b3e-9d4f-2a6b8c0d1e2f"},
		{"bad time", `{"at": "yesterday"}`, "/at", "must be an RFC 3339 time such as 2026-12-01T10:00:00Z"},
		{"trailing data", `{"s": "x"} {}`, "", "the body has data after its JSON value"},
		{"cut short", `{"s": "x"`, "", "the body is empty or cut short"},
		{"empty", ``, "", "the body is empty or cut short"},
		{"not JSON", `{"s": x}`, "/s", "is not valid JSON (at byte 6)"},
		{"valid UTF-8 out of place", `{"s": é}`, "/s", "is not valid JSON (at byte 6)"},
		{"data after the value, no space", `{"s": "x"}{}`, "", "the body has data after its JSON value"},
		{"bad byte after the value", "{\"s\": \"x\"} \xff", "", "the body has data after its JSON value"},
		{"nullable's own refusal", `{"opt": "x"}`, "/opt", "must be a number, not a string"},
	} {
		t.Run(c.name, func(t *testing.T) {
			var d doc
			err := Unmarshal([]byte(c.body), &d)
			var fe *field.Error
			if !errors.As(err, &fe) {
				t.Fatalf("Unmarshal(%q) = %v, want *field.Error", c.body, err)
			}
			if fe.Pointer != c.ptr || fe.Message != c.msg {
				t.Errorf("Unmarshal(%q): pointer %q message %q, want %q %q", c.body, fe.Pointer, fe.Message, c.ptr, c.msg)
			}
		})
	}
}

func TestUnmarshalTakes(t *testing.T) {
	var d doc
	body := `{"e": 3, "s": "ü\t\"x\"", "p": "q", "l": [{"a": 1.5, "n": -2}], "id": "0192f5e2-7c1a-7b3e-9d4f-2a6b8c0d1e2f",
		"at": "2026-12-01T10:00:00Z", "opt": null, "nest": {"a": 0}}`
	if err := Unmarshal([]byte(body), &d); err != nil {
		t.Fatal(err)
	}
	if d.E != 3 || d.S != "ü\t\"x\"" || d.P == nil || *d.P != "q" || len(d.L) != 1 || d.L[0].A != 1.5 || d.L[0].N != -2 ||
		d.ID.String() != "0192f5e2-7c1a-7b3e-9d4f-2a6b8c0d1e2f" || !d.Opt.Set || d.Opt.Value != nil || d.Nest == nil {
		t.Errorf("decoded %+v", d)
	}
	var o struct {
		Opt optional `json:"opt"`
	}
	if err := Unmarshal([]byte(`{"opt": 2.5}`), &o); err != nil || !o.Opt.Set || o.Opt.Value == nil || *o.Opt.Value != 2.5 {
		t.Errorf("optional number: %+v, %v", o, err)
	}
	// A backslash before u0000 is the text \u0000, not the character.
	if err := Unmarshal([]byte(`{"s": "\\u0000"}`), &d); err != nil || d.S != `\u0000` {
		t.Errorf(`escaped backslash: %q, %v`, d.S, err)
	}
}

func TestCheck(t *testing.T) {
	for _, c := range []struct {
		body, ptr, msg string
	}{
		{`{"a": [1, {"b": "\u0000"}]}`, "/a/1/b", nulMessage},
		{`{"a": [1, 1e400]}`, "/a/1", outOfRangeFloat},
		{`{"a": -1e999}`, "/a", outOfRangeFloat},
		{`{"a": 1, "a": 2}`, "/a", "duplicate member name"},
		{"[\"\xc3\"]", "/0", "is not valid UTF-8"},
		{`{"a": 1} 2`, "", "the body has data after its JSON value"},
		{`[1, 2`, "", "the body is empty or cut short"},
		{strings.Repeat("[", 10001) + strings.Repeat("]", 10001), "", "the body nests arrays and objects more than 10000 deep"},
		{strings.Repeat(`{"a":`, 10001) + "1" + strings.Repeat("}", 10001), "", "the body nests arrays and objects more than 10000 deep"},
		// As deep as allowed, but a bad character inside: not a depth error.
		{strings.Repeat("[", 10000) + "x" + strings.Repeat("]", 10000), strings.Repeat("/0", 10000), "is not valid JSON (at byte 10000)"},
	} {
		err := Check([]byte(c.body))
		var fe *field.Error
		if !errors.As(err, &fe) || fe.Pointer != c.ptr || fe.Message != c.msg {
			t.Errorf("Check(%q) = %v, want %q %q", c.body, err, c.ptr, c.msg)
		}
	}
	for _, ok := range []string{`{}`, `[]`, `1`, `"x"`, `null`, `{"a": [1, 2.5e300, "\\u0000", {"b": null}]}`, " {\"ü\": \"ß\"} \n",
		strings.Repeat("[", 10000) + strings.Repeat("]", 10000)} {
		if err := Check([]byte(ok)); err != nil {
			t.Errorf("Check(%q) = %v", ok, err)
		}
	}
}

// FuzzCheck: Check never panics; what it passes is valid JSON by the
// library's own validator (a second, independent reading), and what the
// validator refuses, Check refuses.
func FuzzCheck(f *testing.F) {
	for _, s := range []string{`{"a": [1, {"b": "\u0000"}]}`, `{"a": 1, "a": 2}`, `[1e400]`, `"x"`, "{\"\xff\": 1}", `{"a":{"b":[null,true,false,-0.5e-3]}}`} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, b []byte) {
		err := Check(b)
		valid := jsontext.Value(b).IsValid()
		if err == nil && !valid {
			t.Fatalf("Check passed %q, which is not valid JSON", b)
		}
		if err != nil {
			var fe *field.Error
			if !errors.As(err, &fe) {
				t.Fatalf("Check(%q) = %T %v, want *field.Error", b, err, err)
			}
		}
		var v any
		if uerr := Unmarshal(b, &v); uerr == nil && err != nil {
			t.Fatalf("Unmarshal took %q, Check refused it: %v", b, err)
		}
	})
}
