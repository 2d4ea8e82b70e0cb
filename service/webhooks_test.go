package service

import (
	"regexp"
	"strings"
	"testing"
)

func TestMatchesEvent(t *testing.T) {
	cases := []struct {
		patterns []string
		typ      string
		want     bool
	}{
		{[]string{"*"}, "build.created", true},
		{[]string{"build.*"}, "build.status_changed", true},
		{[]string{"build.*"}, "quote.accepted", false},
		{[]string{"quote.accepted"}, "quote.accepted", true},
		{[]string{"quote.accepted"}, "quote.created", false},
		{[]string{"build"}, "build.created", false},
		{[]string{"bui.*"}, "build.created", false},
		{[]string{"part.created", "calibration.*"}, "calibration.published", true},
	}
	for _, c := range cases {
		if got := MatchesEvent(c.patterns, c.typ); got != c.want {
			t.Errorf("MatchesEvent(%v, %s) = %v, want %v", c.patterns, c.typ, got, c.want)
		}
	}
}

func TestValidateEvents(t *testing.T) {
	for _, ok := range [][]string{{"*"}, {"build.*", "quote.accepted"}, {"part.stock_changed"}, {"calibration.published", "tool.*"}} {
		if err := validateEvents(ok); err != nil {
			t.Errorf("%v refused: %v", ok, err)
		}
	}
	for _, bad := range []struct {
		events []string
		ptr    string
	}{
		{nil, "/events"},
		{[]string{"invoice.created"}, "/events/0"},
		{[]string{"build.*", "build"}, "/events/1"},
		{[]string{"build.Created"}, "/events/0"},
		{[]string{"part.*", "part.*"}, "/events/1"},
		{[]string{"*.created"}, "/events/0"},
		{make([]string, MaxWebhookEvents+1), "/events"},
	} {
		err := validateEvents(bad.events)
		if err == nil || !strings.Contains(err.Error(), bad.ptr+":") {
			t.Errorf("%v: %v, want an error at %s", bad.events, err, bad.ptr)
		}
	}
}

// The event id form the spec documents: msg_ and 32 lower-case hex digits.
func TestNewWebhookEventID(t *testing.T) {
	re := regexp.MustCompile(`^msg_[0-9a-f]{32}$`)
	a, err1 := NewWebhookEventID()
	b, err2 := NewWebhookEventID()
	if err1 != nil || err2 != nil || !re.MatchString(a) || !re.MatchString(b) || a == b {
		t.Errorf("ids %q, %q (%v, %v)", a, b, err1, err2)
	}
}
