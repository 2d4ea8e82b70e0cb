package api

import (
	"github.com/prometheus/client_golang/prometheus"

	"wheelbench/service"
)

// WebhookMetrics counts webhook delivery attempts by outcome (delivered,
// retried, failed, gone) for /metrics. It implements
// service.DeliveryObserver.
type WebhookMetrics struct {
	attempts *prometheus.CounterVec
}

// NewWebhookMetrics registers the counter wheelbench_webhook_attempts_total
// with reg (when not nil).
func NewWebhookMetrics(reg prometheus.Registerer) *WebhookMetrics {
	m := &WebhookMetrics{attempts: prometheus.NewCounterVec(prometheus.CounterOpts{
		Name: "wheelbench_webhook_attempts_total",
		Help: "Webhook delivery attempts by outcome: delivered (2xx), retried, failed (retry window used up), gone (410, endpoint disabled).",
	}, []string{"outcome"})}
	for _, o := range []service.DeliveryOutcome{service.OutcomeDelivered, service.OutcomeRetry, service.OutcomeFailed, service.OutcomeGone} {
		m.attempts.WithLabelValues(string(o)) // export zeros from the start
	}
	if reg != nil {
		reg.MustRegister(m.attempts)
	}
	return m
}

// WebhookOutcome implements service.DeliveryObserver.
func (m *WebhookMetrics) WebhookOutcome(o service.DeliveryOutcome) {
	m.attempts.WithLabelValues(string(o)).Inc()
}

var _ service.DeliveryObserver = (*WebhookMetrics)(nil)
var _ service.WebhookSender = (*WebhookSender)(nil)
