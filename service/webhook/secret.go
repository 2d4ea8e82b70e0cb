package webhook

import (
	"crypto/rand"
	"encoding/base64"
	"fmt"
	"strings"

	"wheelbench/service/field"
)

// SecretPrefix starts every signing secret.
const SecretPrefix = "whsec_"

// Secret sizes in bytes (before base64). NewSecret makes secretBytes;
// ParseSecret accepts MinSecretBytes to MaxSecretBytes.
const (
	secretBytes    = 32
	MinSecretBytes = 24
	MaxSecretBytes = 64
)

// NewSecret returns a fresh signing secret: SecretPrefix followed by the
// standard (padded) base64 of 32 bytes from crypto/rand. It is shown to the
// endpoint's owner once and stored; ParseSecret turns it into the HMAC key.
func NewSecret() (string, error) {
	b := make([]byte, secretBytes)
	if _, err := rand.Read(b); err != nil {
		return "", fmt.Errorf("webhook secret: %w", err)
	}
	return SecretPrefix + base64.StdEncoding.EncodeToString(b), nil
}

// ParseSecret returns the HMAC key of a secret: the standard-base64-decoded
// part after SecretPrefix, which must be present. The key must be
// MinSecretBytes to MaxSecretBytes long. Errors are *field.Error with pointer
// "/secret".
func ParseSecret(s string) ([]byte, error) {
	rest, ok := strings.CutPrefix(s, SecretPrefix)
	if !ok {
		return nil, field.Invalid("/secret", "must start with %q", SecretPrefix)
	}
	key, err := base64.StdEncoding.DecodeString(rest)
	if err != nil {
		return nil, field.Invalid("/secret", "must be %q followed by standard base64", SecretPrefix)
	}
	if len(key) < MinSecretBytes || len(key) > MaxSecretBytes {
		return nil, field.Invalid("/secret", "must encode %d to %d bytes, not %d", MinSecretBytes, MaxSecretBytes, len(key))
	}
	return key, nil
}
