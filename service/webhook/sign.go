package webhook

import (
	"crypto/hmac"
	"crypto/sha256"
	"encoding/base64"
	"errors"
	"strconv"
	"strings"
	"time"
)

// The Standard Webhooks header names (lowercase; HTTP header names are
// case-insensitive).
const (
	HeaderID        = "webhook-id"
	HeaderTimestamp = "webhook-timestamp"
	HeaderSignature = "webhook-signature"
)

// DefaultTolerance is how far a receiver lets webhook-timestamp stray from
// its own clock, either way, before refusing the message as a replay.
const DefaultTolerance = 5 * time.Minute

// signatureVersion tags the HMAC-SHA256 scheme in webhook-signature.
const signatureVersion = "v1"

// Verification failures. Verify wraps none of them; compare with errors.Is.
var (
	ErrMissingHeader       = errors.New("webhook: missing webhook-id, webhook-timestamp or webhook-signature")
	ErrInvalidTimestamp    = errors.New("webhook: webhook-timestamp is not Unix seconds")
	ErrTimestampTooOld     = errors.New("webhook: webhook-timestamp is too old")
	ErrTimestampTooNew     = errors.New("webhook: webhook-timestamp is in the future")
	ErrNoMatchingSignature = errors.New("webhook: no matching signature")
)

// HeaderSet is the three Standard Webhooks headers of one delivery. ID is
// the same on every retry of a message, so receivers can drop duplicates.
type HeaderSet struct {
	ID        string // webhook-id
	Timestamp string // webhook-timestamp: Unix seconds, decimal
	Signature string // webhook-signature: one or more "v1,<base64>", space-separated
}

// Map returns the headers keyed by their names.
func (h HeaderSet) Map() map[string]string {
	return map[string]string{HeaderID: h.ID, HeaderTimestamp: h.Timestamp, HeaderSignature: h.Signature}
}

// HeaderSetFrom reads the three headers with get, such as an
// http.Header's Get method.
func HeaderSetFrom(get func(name string) string) HeaderSet {
	return HeaderSet{ID: get(HeaderID), Timestamp: get(HeaderTimestamp), Signature: get(HeaderSignature)}
}

// Sign returns "v1,<standard base64 of HMAC-SHA256(secret, id.ts.body)>"
// where ts is timestamp in Unix seconds (sub-second parts dropped) and the
// dots are literal. secret is the key from ParseSecret.
func Sign(secret []byte, id string, timestamp time.Time, body []byte) string {
	return signatureVersion + "," + base64.StdEncoding.EncodeToString(mac(secret, id, unixSeconds(timestamp), body))
}

// Headers returns the headers for delivering body as message id at
// timestamp, signed with secret.
func Headers(secret []byte, id string, timestamp time.Time, body []byte) HeaderSet {
	return HeaderSet{ID: id, Timestamp: unixSeconds(timestamp), Signature: Sign(secret, id, timestamp, body)}
}

// Verify checks a received message: all three headers present, the
// timestamp within tolerance of now either way (DefaultTolerance when
// tolerance <= 0), and at least one "v1," signature in h.Signature equal to
// the expected one, compared in constant time. Signatures of other versions
// are ignored. It returns nil or one of the Err* values above.
func Verify(secret []byte, h HeaderSet, body []byte, now time.Time, tolerance time.Duration) error {
	if h.ID == "" || h.Timestamp == "" || h.Signature == "" {
		return ErrMissingHeader
	}
	sec, err := strconv.ParseInt(h.Timestamp, 10, 64)
	if err != nil || h.Timestamp != strconv.FormatInt(sec, 10) {
		return ErrInvalidTimestamp
	}
	if tolerance <= 0 {
		tolerance = DefaultTolerance
	}
	// Compare in whole seconds so huge timestamps cannot overflow a Duration.
	tol := int64(tolerance / time.Second)
	switch nowSec := now.Unix(); {
	case sec < nowSec-tol:
		return ErrTimestampTooOld
	case sec > nowSec+tol:
		return ErrTimestampTooNew
	}
	want := mac(secret, h.ID, h.Timestamp, body)
	for _, sig := range strings.Fields(h.Signature) {
		version, encoded, ok := strings.Cut(sig, ",")
		if !ok || version != signatureVersion {
			continue
		}
		got, err := base64.StdEncoding.DecodeString(encoded)
		if err != nil {
			continue
		}
		if hmac.Equal(got, want) {
			return nil
		}
	}
	return ErrNoMatchingSignature
}

func mac(secret []byte, id, ts string, body []byte) []byte {
	m := hmac.New(sha256.New, secret)
	m.Write([]byte(id))
	m.Write([]byte{'.'})
	m.Write([]byte(ts))
	m.Write([]byte{'.'})
	m.Write(body)
	return m.Sum(nil)
}

func unixSeconds(t time.Time) string { return strconv.FormatInt(t.Unix(), 10) }
