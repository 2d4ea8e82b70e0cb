package webhook

import (
	"bufio"
	"encoding/base64"
	"errors"
	"os"
	"strconv"
	"strings"
	"testing"
	"time"

	"wheelbench/service/field"
)

// readVector reads testdata/reference/standard_webhooks_vector.txt: "key: value"
// lines, the value byte for byte after ": ".
func readVector(t *testing.T) map[string]string {
	t.Helper()
	f, err := os.Open("../../testdata/reference/standard_webhooks_vector.txt")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	v := map[string]string{}
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		line := sc.Text()
		if line == "" || strings.HasPrefix(line, "#") {
			continue
		}
		k, val, ok := strings.Cut(line, ": ")
		if !ok {
			t.Fatalf("vector line %q has no \": \"", line)
		}
		v[k] = val
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"secret", HeaderID, HeaderTimestamp, "body", HeaderSignature} {
		if v[k] == "" {
			t.Fatalf("vector has no %q", k)
		}
	}
	return v
}

// Source: the Standard Webhooks specification's published known-answer
// vector (also recomputed independently with another HMAC implementation
// when it was copied into testdata).
func TestSignStandardWebhooksVector(t *testing.T) {
	v := readVector(t)
	key, err := ParseSecret(v["secret"])
	if err != nil {
		t.Fatal(err)
	}
	sec, err := strconv.ParseInt(v[HeaderTimestamp], 10, 64)
	if err != nil {
		t.Fatal(err)
	}
	ts := time.Unix(sec, 0)
	if got := Sign(key, v[HeaderID], ts, []byte(v["body"])); got != v[HeaderSignature] {
		t.Errorf("Sign = %s, published vector %s", got, v[HeaderSignature])
	}
	// Sub-second parts of the timestamp are dropped, as the header carries seconds.
	if got := Sign(key, v[HeaderID], ts.Add(999*time.Millisecond), []byte(v["body"])); got != v[HeaderSignature] {
		t.Errorf("Sign with 0.999 s more = %s, want the vector's %s", got, v[HeaderSignature])
	}
	h := Headers(key, v[HeaderID], ts, []byte(v["body"]))
	want := HeaderSet{ID: v[HeaderID], Timestamp: v[HeaderTimestamp], Signature: v[HeaderSignature]}
	if h != want {
		t.Errorf("Headers = %+v, published vector %+v", h, want)
	}
	if err := Verify(key, want, []byte(v["body"]), ts, 0); err != nil {
		t.Errorf("Verify(published vector) = %v", err)
	}
}

func TestHeaderSetMapAndFrom(t *testing.T) {
	h := HeaderSet{ID: "msg_1", Timestamp: "1700000000", Signature: "v1,abc="}
	m := h.Map()
	// The names are fixed by the Standard Webhooks specification.
	want := map[string]string{"webhook-id": "msg_1", "webhook-timestamp": "1700000000", "webhook-signature": "v1,abc="}
	if len(m) != len(want) {
		t.Fatalf("Map() = %v, want %v", m, want)
	}
	for k, v := range want {
		if m[k] != v {
			t.Errorf("Map()[%q] = %q, want %q", k, m[k], v)
		}
	}
	if got := HeaderSetFrom(func(k string) string { return m[k] }); got != h {
		t.Errorf("HeaderSetFrom(Map()) = %+v, want %+v", got, h)
	}
}

func TestVerify(t *testing.T) {
	key, err := ParseSecret(mustSecret(t))
	if err != nil {
		t.Fatal(err)
	}
	other, err := ParseSecret(mustSecret(t))
	if err != nil {
		t.Fatal(err)
	}
	sent := time.Unix(1_700_000_000, 0)
	body := []byte(`{"type":"build.created","data":{"id":"b1"}}`)
	good := Headers(key, "msg_abc", sent, body)
	wrongSig := Sign(other, "msg_abc", sent, body)

	with := func(f func(*HeaderSet)) HeaderSet { h := good; f(&h); return h }
	tests := []struct {
		name string
		h    HeaderSet
		body []byte
		now  time.Time
		tol  time.Duration
		want error
	}{
		{"round trip", good, body, sent, 0, nil},
		{"receiver clock 5 min ahead: at the limit", good, body, sent.Add(5 * time.Minute), 0, nil},
		{"receiver clock 5 min behind: at the limit", good, body, sent.Add(-5 * time.Minute), 0, nil},
		{"5 min 1 s old: replay window passed", good, body, sent.Add(5*time.Minute + time.Second), 0, ErrTimestampTooOld},
		{"5 min 1 s in the future", good, body, sent.Add(-5*time.Minute - time.Second), 0, ErrTimestampTooNew},
		{"an hour old but a 2 h tolerance", good, body, sent.Add(time.Hour), 2 * time.Hour, nil},
		{"tampered body", good, []byte(`{"type":"build.created","data":{"id":"b2"}}`), sent, 0, ErrNoMatchingSignature},
		{"body with one more byte", good, append(append([]byte{}, body...), ' '), sent, 0, ErrNoMatchingSignature},
		{"tampered timestamp (one second later, still in window)",
			with(func(h *HeaderSet) { h.Timestamp = strconv.FormatInt(sent.Unix()+1, 10) }), body, sent, 0, ErrNoMatchingSignature},
		{"tampered id", with(func(h *HeaderSet) { h.ID = "msg_abd" }), body, sent, 0, ErrNoMatchingSignature},
		{"signed with another secret", with(func(h *HeaderSet) { h.Signature = wrongSig }), body, sent, 0, ErrNoMatchingSignature},
		{"rotation: a wrong then the right signature",
			with(func(h *HeaderSet) { h.Signature = wrongSig + " " + good.Signature }), body, sent, 0, nil},
		{"rotation: the right one under an unknown version only",
			with(func(h *HeaderSet) { h.Signature = "v1a," + strings.TrimPrefix(good.Signature, "v1,") }), body, sent, 0, ErrNoMatchingSignature},
		{"signature without a version", with(func(h *HeaderSet) { h.Signature = strings.TrimPrefix(good.Signature, "v1,") }), body, sent, 0, ErrNoMatchingSignature},
		{"signature not base64", with(func(h *HeaderSet) { h.Signature = "v1,***" }), body, sent, 0, ErrNoMatchingSignature},
		{"truncated MAC", with(func(h *HeaderSet) { h.Signature = good.Signature[:len(good.Signature)-4] }), body, sent, 0, ErrNoMatchingSignature},
		{"missing id", with(func(h *HeaderSet) { h.ID = "" }), body, sent, 0, ErrMissingHeader},
		{"missing timestamp", with(func(h *HeaderSet) { h.Timestamp = "" }), body, sent, 0, ErrMissingHeader},
		{"missing signature", with(func(h *HeaderSet) { h.Signature = "" }), body, sent, 0, ErrMissingHeader},
		{"timestamp in milliseconds reads as far future", with(func(h *HeaderSet) { h.Timestamp = "1700000000000" }), body, sent, 0, ErrTimestampTooNew},
		{"timestamp not a number", with(func(h *HeaderSet) { h.Timestamp = "2023-11-14T22:13:20Z" }), body, sent, 0, ErrInvalidTimestamp},
		{"timestamp with a plus sign", with(func(h *HeaderSet) { h.Timestamp = "+1700000000" }), body, sent, 0, ErrInvalidTimestamp},
		{"timestamp with leading zero", with(func(h *HeaderSet) { h.Timestamp = "01700000000" }), body, sent, 0, ErrInvalidTimestamp},
		{"timestamp beyond int64", with(func(h *HeaderSet) { h.Timestamp = "99999999999999999999" }), body, sent, 0, ErrInvalidTimestamp},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if got := Verify(key, tt.h, tt.body, tt.now, tt.tol); !errors.Is(got, tt.want) || (tt.want == nil) != (got == nil) {
				t.Errorf("Verify = %v, want %v", got, tt.want)
			}
		})
	}
}

func mustSecret(t *testing.T) string {
	t.Helper()
	s, err := NewSecret()
	if err != nil {
		t.Fatal(err)
	}
	return s
}

func TestNewSecret(t *testing.T) {
	seen := map[string]bool{}
	for range 100 {
		s := mustSecret(t)
		rest, ok := strings.CutPrefix(s, "whsec_")
		if !ok {
			t.Fatalf("NewSecret() = %q, want the whsec_ prefix", s)
		}
		// Decoded with the stdlib independently of ParseSecret.
		raw, err := base64.StdEncoding.DecodeString(rest)
		if err != nil || len(raw) != 32 {
			t.Fatalf("NewSecret() = %q: decodes to %d bytes (err %v), want 32", s, len(raw), err)
		}
		key, err := ParseSecret(s)
		if err != nil || string(key) != string(raw) {
			t.Fatalf("ParseSecret(NewSecret()) = %x, %v; want %x", key, err, raw)
		}
		if seen[s] {
			t.Fatalf("NewSecret() repeated %q", s)
		}
		seen[s] = true
	}
}

func TestParseSecretRejects(t *testing.T) {
	b := func(n int) string { return base64.StdEncoding.EncodeToString(make([]byte, n)) }
	tests := []struct{ name, in string }{
		{"empty", ""},
		{"no prefix", b(32)},
		{"other prefix", "whsk_" + b(32)},
		{"not base64", "whsec_***"},
		{"URL-safe base64 alphabet", "whsec_" + strings.Repeat("-_", 16)},
		{"23 bytes: below the 24-byte minimum", "whsec_" + b(23)},
		{"65 bytes: above the 64-byte maximum", "whsec_" + b(65)},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := ParseSecret(tt.in)
			var fe *field.Error
			if !errors.As(err, &fe) || fe.Pointer != "/secret" || fe.Unprocessable {
				t.Errorf("ParseSecret(%q) = %v, want a 400-class field error at /secret", tt.in, err)
			}
		})
	}
	for _, n := range []int{24, 64} {
		if _, err := ParseSecret("whsec_" + b(n)); err != nil {
			t.Errorf("ParseSecret of %d bytes = %v, want accepted", n, err)
		}
	}
}
