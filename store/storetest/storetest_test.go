package storetest

import (
	"context"
	"strings"
	"testing"
)

// TestUnreachableURLIsNoFallback: a TEST_DATABASE_URL whose server does
// not answer is an error naming it, even when a local server would.
func TestUnreachableURLIsNoFallback(t *testing.T) {
	env := map[string]string{
		"TEST_DATABASE_URL":            "postgres://postgres@127.0.0.1:1/postgres?sslmode=disable&connect_timeout=2",
		"WHEELBENCH_TEST_NO_CONTAINER": "1",
	}
	cfg, err := chooseServer(context.Background(), func(k string) string { return env[k] })
	if err == nil {
		t.Fatalf("an unreachable TEST_DATABASE_URL chose %s:%d", cfg.Host, cfg.Port)
	}
	if !strings.Contains(err.Error(), "TEST_DATABASE_URL is set but its server cannot be used") {
		t.Errorf("error does not say the URL failed: %v", err)
	}
	env["TEST_DATABASE_URL"] = "not a url at all ::"
	if _, err := chooseServer(context.Background(), func(k string) string { return env[k] }); err == nil {
		t.Error("a malformed TEST_DATABASE_URL was accepted")
	}
}
