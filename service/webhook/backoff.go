package webhook

import (
	"errors"
	"fmt"
	"math/rand/v2"
	"time"
)

// RetryConfig shapes the retry schedule of a delivery. The zero value of
// each field means its default.
//
// The nominal delay after the n-th failed attempt (n = 1, 2, …) is
// Base × Factor^(n−1), capped at MaxDelay. With the defaults that is
//
//	after attempt  1   2    3      4       5       6          7 … 14
//	nominal delay  5s  25s  2m05s  10m25s  52m05s  4h20m25s   8h each
//	cumulative     5s  30s  2m35s  13m00s  1h05m05s  5h25m30s  … 2d21h25m30s
//
// and a 15th failed attempt gives up: 8 more 8 h steps would pass the 72 h
// Window. So a message is tried 15 times over at most three days.
//
// Jitter spreads retries of many messages that failed together (a receiver
// outage) so they do not return in lockstep: each actual delay is drawn
// uniformly from [nominal × (1 − Jitter), nominal]. Jitter 1 is full jitter
// (uniform from zero to the nominal delay); the default 0.5 keeps the
// retry span closer to Window. Jitter only shortens delays, so the last
// retry comes at most Window after the first attempt (plus the time the
// attempts themselves took). Jitter cannot be switched off here, as zero
// means the default: for a deterministic schedule pass an rnd returning 0.
type RetryConfig struct {
	Base     time.Duration // first delay; default 5 s
	Factor   float64       // growth per attempt, >= 1; default 5
	MaxDelay time.Duration // cap on one nominal delay; default 8 h
	Window   time.Duration // give up once the nominal delays add up past this; default 72 h
	Jitter   float64       // fraction in [0, 1] a delay may be shortened by; default 0.5
}

// Retry defaults; see RetryConfig.
const (
	DefaultRetryBase     = 5 * time.Second
	DefaultRetryFactor   = 5
	DefaultRetryMaxDelay = 8 * time.Hour
	DefaultRetryWindow   = 72 * time.Hour
	DefaultRetryJitter   = 0.5
)

// WithDefaults returns c with every zero field set to its default.
func (c RetryConfig) WithDefaults() RetryConfig {
	if c.Base == 0 {
		c.Base = DefaultRetryBase
	}
	if c.Factor == 0 {
		c.Factor = DefaultRetryFactor
	}
	if c.MaxDelay == 0 {
		c.MaxDelay = DefaultRetryMaxDelay
	}
	if c.Window == 0 {
		c.Window = DefaultRetryWindow
	}
	if c.Jitter == 0 {
		c.Jitter = DefaultRetryJitter
	}
	return c
}

// Validate reports a configuration that cannot make a schedule (after
// WithDefaults): non-positive durations, Factor below 1, MaxDelay below Base,
// Jitter outside [0, 1].
func (c RetryConfig) Validate() error {
	c = c.WithDefaults()
	var errs []error
	if c.Base <= 0 {
		errs = append(errs, fmt.Errorf("retry base %v must be positive", c.Base))
	}
	if !(c.Factor >= 1) { // also catches NaN
		errs = append(errs, fmt.Errorf("retry factor %v must be at least 1", c.Factor))
	}
	if c.MaxDelay < c.Base {
		errs = append(errs, fmt.Errorf("retry max delay %v must be at least the base %v", c.MaxDelay, c.Base))
	}
	if c.Window <= 0 {
		errs = append(errs, fmt.Errorf("retry window %v must be positive", c.Window))
	}
	if !(c.Jitter >= 0 && c.Jitter <= 1) {
		errs = append(errs, fmt.Errorf("retry jitter %v must be within [0, 1]", c.Jitter))
	}
	return errors.Join(errs...)
}

// Schedule returns the nominal (un-jittered) delay after each failed
// attempt that NextAttempt would retry: element n−1 follows attempt n. Its
// sum is at most Window. It panics if c is not valid.
func (c RetryConfig) Schedule() []time.Duration {
	c = c.mustValid()
	var out []time.Duration
	var total time.Duration
	for d := range c.nominal() {
		total += d
		if total > c.Window {
			return out
		}
		out = append(out, d)
	}
	return out
}

// NextAttempt returns when to try a message again after its attempt-th
// delivery attempt (1 for the first) failed at now, and false once the
// schedule is exhausted (the nominal delays through this one would pass
// cfg.Window): then the message is given up. rnd returns values in [0, 1)
// (nil means math/rand/v2); cfg is as in RetryConfig, zero fields taking
// their defaults. An attempt below 1 counts as 1. It panics if cfg is not
// valid; check configuration once with Validate.
func NextAttempt(attempt int, now time.Time, rnd func() float64, cfg RetryConfig) (time.Time, bool) {
	cfg = cfg.mustValid()
	if attempt < 1 {
		attempt = 1
	}
	var total time.Duration
	n := 0
	for d := range cfg.nominal() {
		n++
		total += d
		if total > cfg.Window {
			return time.Time{}, false
		}
		if n == attempt {
			return now.Add(cfg.jitter(d, rnd)), true
		}
	}
	return time.Time{}, false // unreachable: every nominal delay is positive
}

func (c RetryConfig) mustValid() RetryConfig {
	if err := c.Validate(); err != nil {
		panic(err)
	}
	return c.WithDefaults()
}

// nominal yields Base × Factor^(n−1) capped at MaxDelay for n = 1, 2, …
// without overflow; the caller stops it.
func (c RetryConfig) nominal() func(yield func(time.Duration) bool) {
	return func(yield func(time.Duration) bool) {
		d := float64(c.Base)
		for {
			step := c.MaxDelay
			if d < float64(c.MaxDelay) {
				step = time.Duration(d)
			}
			if !yield(step) {
				return
			}
			d *= c.Factor
		}
	}
}

// jitter draws a delay uniformly from [d × (1 − Jitter), d].
func (c RetryConfig) jitter(d time.Duration, rnd func() float64) time.Duration {
	if rnd == nil {
		rnd = rand.Float64
	}
	u := rnd()
	if !(u >= 0) { // NaN or negative
		u = 0
	}
	if u > 1 {
		u = 1
	}
	return d - time.Duration(float64(d)*c.Jitter*u)
}
