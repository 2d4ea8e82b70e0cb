package spokejson

import (
	"bytes"
	stdjson "encoding/json"
	"strings"
	"testing"

	jsonv2 "github.com/go-json-experiment/json"
	"github.com/go-json-experiment/json/jsontext"
	jsonv1 "github.com/go-json-experiment/json/v1"

	"wheelbench/api/strictjson"
	"wheelbench/service/geometry"
)

// The benchmarks below are the measurements behind the package: the same
// wheel and the same result through the hand codec and through
// general-purpose JSON libraries, and a whole batch with every wheel on the
// hand path and with every wheel on the strict policy's library path.
// Run them interleaved (-count) and compare; the package doc quotes them.

// BenchmarkDecodeWheelBy: one wheel by the fast path, by the strict policy
// (encoding/json/v2 semantics with its checks), and by encoding/json.
func BenchmarkDecodeWheelBy(b *testing.B) {
	body := []byte(benchWheel)
	b.Run("hand", func(b *testing.B) {
		var w geometry.Wheel
		var a arena
		b.ReportAllocs()
		for b.Loop() {
			if !parseWheel(body, &w, &a) {
				b.Fatal("declined")
			}
			a.reuse()
		}
	})
	b.Run("strictjson", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			var w geometry.Wheel
			if err := strictjson.Unmarshal(body, &w); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("encoding-json", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			var w geometry.Wheel
			dec := stdjson.NewDecoder(bytes.NewReader(body))
			dec.DisallowUnknownFields()
			if err := dec.Decode(&w); err != nil {
				b.Fatal(err)
			}
		}
	})
}

// v1Bytes are the fewest go-json-experiment options under which it writes
// what encoding/json writes for a result: HTML-safe escaping (and of
// U+2028, U+2029), sorted map keys, null for nil slices, legacy omitempty.
var v1Bytes = jsonv2.JoinOptions(jsontext.EscapeForHTML(true), jsontext.EscapeForJS(true), jsonv2.Deterministic(true),
	jsonv2.FormatNilSliceAsNull(true), jsonv1.OmitEmptyWithLegacySemantics(true))

// BenchmarkEncodeResultBy: one result by the hand encoder, by encoding/json,
// and by go-json-experiment into a reused encoder and buffer (its
// append-like use).
func BenchmarkEncodeResultBy(b *testing.B) {
	var w geometry.Wheel
	if !parseWheel([]byte(benchWheel), &w, nil) {
		b.Fatal("declined")
	}
	r, err := compute(w)
	if err != nil {
		b.Fatal(err)
	}
	buf := make([]byte, 0, 2048)
	b.Run("hand", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			if buf, err = AppendResult(buf[:0], &r); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("encoding-json", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			if _, err := stdjson.Marshal(&r); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("json-v2", func(b *testing.B) {
		var out bytes.Buffer
		enc := jsontext.NewEncoder(&out, v1Bytes)
		b.ReportAllocs()
		for b.Loop() {
			out.Reset()
			if err := jsonv2.MarshalEncode(enc, &r, v1Bytes); err != nil {
				b.Fatal(err)
			}
		}
	})
}

// TestLibraryWritesTheSameResult: the library encoder of the comparison
// writes the very bytes the hand encoder does (so the two benchmarks
// compare the same work), for the benchmark's wheel.
func TestLibraryWritesTheSameResult(t *testing.T) {
	var w geometry.Wheel
	if !parseWheel([]byte(benchWheel), &w, nil) {
		t.Fatal("declined")
	}
	r, err := compute(w)
	if err != nil {
		t.Fatal(err)
	}
	hand, err := AppendResult(nil, &r)
	if err != nil {
		t.Fatal(err)
	}
	lib, err := jsonv2.Marshal(&r, v1Bytes)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(hand, lib) {
		t.Errorf("hand %s\nlibrary %s", hand, lib)
	}
}

// BenchmarkBatchBy: 10,000 wheels in one goroutine, split, decoded,
// computed and encoded: every wheel on the fast path ("hand"), and every
// wheel on the strict policy's library path ("library": the same wheel
// with one member name escaped, which the fast path declines).
func BenchmarkBatchBy(b *testing.B) {
	slow := strings.Replace(benchWheel, `"spoke_count"`, `"spoke_co\u0075nt"`, 1)
	for _, c := range []struct{ name, wheel string }{{"hand", benchWheel}, {"library", slow}} {
		b.Run(c.name, func(b *testing.B) {
			body := []byte(`{"wheels": [` + strings.TrimSuffix(strings.Repeat(c.wheel+",", 10000), ",") + `]}`)
			bt := testBatch()
			bt.CPUs = 1
			b.SetBytes(int64(len(body)))
			b.ReportAllocs()
			for b.Loop() {
				out, err := bt.Answer(body)
				if err != nil || !bytes.HasSuffix(out, []byte(`"succeeded":10000,"failed":0}`+"\n")) {
					b.Fatalf("%v %.200s", err, out)
				}
				PutAnswer(out)
			}
		})
	}
}
