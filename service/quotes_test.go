package service

import (
	"errors"
	"strings"
	"testing"
	"time"
)

// TestQuoteAcceptable: the rule the store applies to a quote it has
// locked. An open quote may be accepted up to and at the end of its
// validity; an accepted, a superseded or an expired one is a conflict
// that says which.
func TestQuoteAcceptable(t *testing.T) {
	until := time.Date(2026, 12, 21, 0, 0, 0, 0, time.UTC)
	for _, c := range []struct {
		status QuoteStatus
		now    time.Time
		want   string // "" accepted, else words of the refusal
	}{
		{QuoteOpen, until.Add(-time.Hour), ""},
		{QuoteOpen, until, ""},
		{QuoteOpen, until.Add(time.Second), "expired on 2026-12-21"},
		{QuoteAccepted, until.Add(-time.Hour), "already accepted"},
		{QuoteSuperseded, until.Add(-time.Hour), "superseded"},
	} {
		err := Quote{Status: c.status, ValidUntil: until}.acceptable(c.now)
		switch {
		case c.want == "" && err != nil:
			t.Errorf("%s at %v: %v", c.status, c.now, err)
		case c.want != "" && (!errors.Is(err, ErrConflict) || !strings.Contains(err.Error(), c.want)):
			t.Errorf("%s at %v: %v, want a conflict saying %q", c.status, c.now, err, c.want)
		}
	}
}
