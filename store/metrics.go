package store

import (
	"github.com/jackc/pgx/v5/pgxpool"
	"github.com/prometheus/client_golang/prometheus"
)

// PoolCollector exports a pgx pool's statistics to Prometheus.
type PoolCollector struct {
	pool  *pgxpool.Pool
	descs map[string]*prometheus.Desc
}

// NewPoolCollector returns a collector for pool.
func NewPoolCollector(pool *pgxpool.Pool) *PoolCollector {
	d := func(name, help string) *prometheus.Desc {
		return prometheus.NewDesc("wheelbench_db_pool_"+name, help, nil, nil)
	}
	return &PoolCollector{pool: pool, descs: map[string]*prometheus.Desc{
		"acquired":      d("acquired_conns", "Connections in use."),
		"idle":          d("idle_conns", "Idle connections."),
		"total":         d("total_conns", "All open connections."),
		"max":           d("max_conns", "The pool's maximum size."),
		"acquire_count": d("acquires_total", "Connections acquired from the pool."),
		"empty_acquire": d("empty_acquires_total", "Acquires that had to wait for a connection."),
		"acquire_secs":  d("acquire_wait_seconds_total", "Time spent waiting for connections."),
	}}
}

// Describe implements prometheus.Collector.
func (c *PoolCollector) Describe(ch chan<- *prometheus.Desc) {
	for _, d := range c.descs {
		ch <- d
	}
}

// Collect implements prometheus.Collector.
func (c *PoolCollector) Collect(ch chan<- prometheus.Metric) {
	s := c.pool.Stat()
	g := func(k string, v float64) { ch <- prometheus.MustNewConstMetric(c.descs[k], prometheus.GaugeValue, v) }
	cn := func(k string, v float64) { ch <- prometheus.MustNewConstMetric(c.descs[k], prometheus.CounterValue, v) }
	g("acquired", float64(s.AcquiredConns()))
	g("idle", float64(s.IdleConns()))
	g("total", float64(s.TotalConns()))
	g("max", float64(s.MaxConns()))
	cn("acquire_count", float64(s.AcquireCount()))
	cn("empty_acquire", float64(s.EmptyAcquireCount()))
	cn("acquire_secs", s.AcquireDuration().Seconds())
}
