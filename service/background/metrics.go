package background

import (
	"github.com/prometheus/client_golang/prometheus"
)

// Metrics counts webhook delivery attempts by outcome (delivered, retried,
// failed, gone) for /metrics. It is an Observer.
type Metrics struct {
	attempts *prometheus.CounterVec
}

// NewMetrics registers the counter wheelbench_webhook_attempts_total
// with reg (when not nil).
func NewMetrics(reg prometheus.Registerer) *Metrics {
	m := &Metrics{attempts: prometheus.NewCounterVec(prometheus.CounterOpts{
		Name: "wheelbench_webhook_attempts_total",
		Help: "Webhook delivery attempts by outcome: delivered (2xx), retried, failed (retry window used up), gone (410, endpoint disabled).",
	}, []string{"outcome"})}
	for _, o := range []Outcome{OutcomeDelivered, OutcomeRetry, OutcomeFailed, OutcomeGone} {
		m.attempts.WithLabelValues(string(o)) // export zeros from the start
	}
	if reg != nil {
		reg.MustRegister(m.attempts)
	}
	return m
}

// WebhookOutcome implements Observer.
func (m *Metrics) WebhookOutcome(o Outcome) {
	m.attempts.WithLabelValues(string(o)).Inc()
}

var (
	_ Observer = (*Metrics)(nil)
	_ Sender   = (*HTTPSender)(nil)
)
