package api

import (
	"strconv"
	"time"

	"github.com/labstack/echo/v4"
	"github.com/prometheus/client_golang/prometheus"
)

// metrics counts requests and their latency by route and status.
type metrics struct {
	requests *prometheus.CounterVec
	latency  *prometheus.HistogramVec
}

func newMetrics(reg prometheus.Registerer) *metrics {
	m := &metrics{
		requests: prometheus.NewCounterVec(prometheus.CounterOpts{
			Name: "wheelbench_http_requests_total", Help: "HTTP requests by route, method and status.",
		}, []string{"route", "method", "status"}),
		latency: prometheus.NewHistogramVec(prometheus.HistogramOpts{
			Name: "wheelbench_http_request_duration_seconds", Help: "HTTP request latency by route, method and status.",
			Buckets: []float64{0.0005, 0.001, 0.0025, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5, 5, 10},
		}, []string{"route", "method", "status"}),
	}
	if reg != nil {
		reg.MustRegister(m.requests, m.latency)
	}
	return m
}

func (m *metrics) middleware(next echo.HandlerFunc) echo.HandlerFunc {
	return func(c echo.Context) error {
		start := time.Now()
		err := next(c)
		if err != nil {
			c.Error(err)
		}
		route := c.Path()
		if route == "" {
			route = "unmatched"
		}
		status := strconv.Itoa(c.Response().Status)
		m.requests.WithLabelValues(route, c.Request().Method, status).Inc()
		m.latency.WithLabelValues(route, c.Request().Method, status).Observe(time.Since(start).Seconds())
		return nil
	}
}
