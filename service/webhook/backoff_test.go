package webhook

import (
	"math/rand/v2"
	"testing"
	"time"

	"github.com/google/go-cmp/cmp"
)

// The default schedule, derived by hand: 5 s × 5^(n−1) capped at 8 h, so
// 5, 25, 125, 625, 3125, 15625 s and then 28800 s. The sum of the first six
// is 19530 s; 19530 + 8 × 28800 = 249930 s ≤ 72 h = 259200 s, and one more
// 8 h step makes 278730 s > 259200 s: 14 retries, given up after the 15th
// failed attempt.
var defaultSchedule = []time.Duration{
	5 * time.Second, 25 * time.Second, 125 * time.Second, 625 * time.Second, 3125 * time.Second, 15625 * time.Second,
	8 * time.Hour, 8 * time.Hour, 8 * time.Hour, 8 * time.Hour, 8 * time.Hour, 8 * time.Hour, 8 * time.Hour, 8 * time.Hour,
}

func TestScheduleDefault(t *testing.T) {
	got := RetryConfig{}.Schedule()
	if diff := cmp.Diff(defaultSchedule, got); diff != "" {
		t.Errorf("Schedule() (-hand-derived +got):\n%s", diff)
	}
	var total time.Duration
	for _, d := range got {
		total += d
	}
	if want := 249930 * time.Second; total != want {
		t.Errorf("sum of Schedule() = %v, want %v (hand-derived above)", total, want)
	}
}

func TestNextAttemptBoundsAndGiveUp(t *testing.T) {
	now := time.Date(2030, 1, 2, 3, 4, 5, 0, time.UTC)
	for i, d := range defaultSchedule {
		attempt := i + 1
		// rnd 0: the nominal delay; rnd just below 1: shortened by almost
		// the default jitter of one half.
		at, ok := NextAttempt(attempt, now, func() float64 { return 0 }, RetryConfig{})
		if !ok || at.Sub(now) != d {
			t.Errorf("attempt %d, rnd 0: %v, %v; want %v, true", attempt, at.Sub(now), ok, d)
		}
		at, ok = NextAttempt(attempt, now, func() float64 { return 0.999999 }, RetryConfig{})
		if lo := d / 2; !ok || at.Sub(now) < lo || at.Sub(now) > d {
			t.Errorf("attempt %d, rnd ~1: %v, %v; want within [%v, %v]", attempt, at.Sub(now), ok, lo, d)
		}
		at, ok = NextAttempt(attempt, now, func() float64 { return 0.5 }, RetryConfig{})
		if want := d - d/4; !ok || at.Sub(now) != want {
			t.Errorf("attempt %d, rnd 0.5: %v, %v; want %v (three quarters of nominal)", attempt, at.Sub(now), ok, want)
		}
	}
	for _, attempt := range []int{15, 16, 100, 1 << 30} {
		if at, ok := NextAttempt(attempt, now, nil, RetryConfig{}); ok {
			t.Errorf("attempt %d: retry at %v, want given up after the 72 h window", attempt, at)
		}
	}
	if at, ok := NextAttempt(0, now, func() float64 { return 0 }, RetryConfig{}); !ok || at.Sub(now) != 5*time.Second {
		t.Errorf("attempt 0: %v, %v; want treated as attempt 1 (5 s)", at.Sub(now), ok)
	}
}

// Every draw lies in [nominal × (1 − Jitter), nominal], the retries of one
// message never pass the window, and the draws actually spread.
func TestNextAttemptJitterWithinBounds(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	now := time.Unix(1_900_000_000, 0)
	for _, jitter := range []float64{DefaultRetryJitter, 1, 0.1} {
		cfg := RetryConfig{Jitter: jitter}
		nominal := cfg.Schedule()
		for run := range 200 {
			at := now
			for attempt := 1; ; attempt++ {
				next, ok := NextAttempt(attempt, at, r.Float64, cfg)
				if !ok {
					if attempt != len(nominal)+1 {
						t.Fatalf("jitter %v run %d: gave up after attempt %d, want %d", jitter, run, attempt, len(nominal)+1)
					}
					break
				}
				d, nom := next.Sub(at), nominal[attempt-1]
				lo := nom - time.Duration(float64(nom)*jitter)
				if d < lo || d > nom {
					t.Fatalf("jitter %v attempt %d: delay %v outside [%v, %v]", jitter, attempt, d, lo, nom)
				}
				at = next
			}
			if span := at.Sub(now); span > DefaultRetryWindow {
				t.Fatalf("jitter %v run %d: last retry %v after the first attempt, beyond the window", jitter, run, span)
			}
		}
	}
	// Spread: 1000 draws of the 8 h step with the default jitter cover most
	// of [4 h, 8 h].
	lo, hi := 8*time.Hour, time.Duration(0)
	for range 1000 {
		next, _ := NextAttempt(7, now, r.Float64, RetryConfig{})
		lo, hi = min(lo, next.Sub(now)), max(hi, next.Sub(now))
	}
	if lo > 4*time.Hour+15*time.Minute || hi < 8*time.Hour-15*time.Minute {
		t.Errorf("1000 jittered 8 h steps span [%v, %v], want close to [4h, 8h]", lo, hi)
	}
}

func TestNextAttemptConfigurable(t *testing.T) {
	now := time.Unix(0, 0)
	zero := func() float64 { return 0 }
	// Window 1 h: 5 + 25 + 125 + 625 = 780 s fit, + 3125 s = 3905 s > 3600 s.
	cfg := RetryConfig{Window: time.Hour}
	if diff := cmp.Diff([]time.Duration{5 * time.Second, 25 * time.Second, 125 * time.Second, 625 * time.Second}, cfg.Schedule()); diff != "" {
		t.Errorf("1 h window schedule (-want +got):\n%s", diff)
	}
	if _, ok := NextAttempt(5, now, zero, cfg); ok {
		t.Error("1 h window: attempt 5 retried, want given up (3905 s > 3600 s)")
	}
	// Base 1 s, factor 2, cap 10 s, window 40 s: 1, 2, 4, 8, 10, 10 (sum 35), +10 = 45 > 40.
	cfg = RetryConfig{Base: time.Second, Factor: 2, MaxDelay: 10 * time.Second, Window: 40 * time.Second}
	want := []time.Duration{1, 2, 4, 8, 10, 10}
	for i := range want {
		want[i] *= time.Second
	}
	if diff := cmp.Diff(want, cfg.Schedule()); diff != "" {
		t.Errorf("base 1 s factor 2 cap 10 s schedule (-hand-derived +got):\n%s", diff)
	}
	for i, d := range want {
		if at, ok := NextAttempt(i+1, now, zero, cfg); !ok || at.Sub(now) != d {
			t.Errorf("attempt %d: %v, %v; want %v", i+1, at.Sub(now), ok, d)
		}
	}
	// Factor 1 is a constant interval: 10 min steps for 1 h give 6 retries.
	if got := len(RetryConfig{Base: 10 * time.Minute, Factor: 1, Window: time.Hour}.Schedule()); got != 6 {
		t.Errorf("constant 10 min for 1 h: %d retries, want 6", got)
	}
}

func TestNextAttemptRndOutOfRange(t *testing.T) {
	now := time.Unix(0, 0)
	for _, u := range []float64{-1, 2} {
		at, ok := NextAttempt(7, now, func() float64 { return u }, RetryConfig{})
		if d := at.Sub(now); !ok || d < 4*time.Hour || d > 8*time.Hour {
			t.Errorf("rnd %v: delay %v, %v; want clamped into [4h, 8h]", u, d, ok)
		}
	}
}

func TestRetryConfigValidate(t *testing.T) {
	bad := []RetryConfig{
		{Base: -time.Second},
		{Factor: 0.5},
		{MaxDelay: time.Second}, // below the 5 s default base
		{Window: -time.Hour},
		{Jitter: 1.5},
		{Jitter: -0.1},
	}
	for _, c := range bad {
		if err := c.Validate(); err == nil {
			t.Errorf("%+v.Validate() = nil, want an error", c)
		}
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("NextAttempt with %+v did not panic", c)
				}
			}()
			NextAttempt(1, time.Unix(0, 0), nil, c)
		}()
	}
	if err := (RetryConfig{}).Validate(); err != nil {
		t.Errorf("zero RetryConfig: %v, want valid (all defaults)", err)
	}
}
