package main

import (
	"testing"
	"time"
)

func env(m map[string]string) func(string) string {
	return func(k string) string { return m[k] }
}

func TestWebhookConfig(t *testing.T) {
	c, err := loadConfig(env(nil))
	if err != nil {
		t.Fatal(err)
	}
	if c.WebhookAllowPrivate || c.WebhookRetryWindow != 72*time.Hour || c.WebhookPoll != time.Second {
		t.Errorf("defaults: allow private %v, window %v, poll %v; want false, 72h, 1s", c.WebhookAllowPrivate, c.WebhookRetryWindow, c.WebhookPoll)
	}
	c, err = loadConfig(env(map[string]string{"WHEELBENCH_WEBHOOK_ALLOW_PRIVATE": "true",
		"WHEELBENCH_WEBHOOK_RETRY_WINDOW": "6h", "WHEELBENCH_WEBHOOK_POLL": "250ms"}))
	if err != nil || !c.WebhookAllowPrivate || c.WebhookRetryWindow != 6*time.Hour || c.WebhookPoll != 250*time.Millisecond {
		t.Errorf("set: %+v %v", c, err)
	}
	for k, v := range map[string]string{"WHEELBENCH_WEBHOOK_ALLOW_PRIVATE": "perhaps",
		"WHEELBENCH_WEBHOOK_RETRY_WINDOW": "0s", "WHEELBENCH_WEBHOOK_POLL": "soon"} {
		if _, err := loadConfig(env(map[string]string{k: v})); err == nil {
			t.Errorf("%s=%q accepted", k, v)
		}
	}
}
