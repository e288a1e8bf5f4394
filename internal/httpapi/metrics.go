package httpapi

import (
	"strconv"
	"time"

	"github.com/gin-gonic/gin"
	"github.com/prometheus/client_golang/prometheus"
	"github.com/prometheus/client_golang/prometheus/collectors"
)

// metrics holds the HTTP collectors, registered on a registry of the server's
// own so that several servers (tests) never clash on the global one.
type metrics struct {
	requests *prometheus.CounterVec
	latency  *prometheus.HistogramVec
	inflight prometheus.Gauge
}

func newMetrics(reg prometheus.Registerer) *metrics {
	m := &metrics{
		requests: prometheus.NewCounterVec(prometheus.CounterOpts{
			Name: "corvane_http_requests_total",
			Help: "HTTP requests served, by method, route template and status code.",
		}, []string{"method", "route", "status"}),
		latency: prometheus.NewHistogramVec(prometheus.HistogramOpts{
			Name:    "corvane_http_request_duration_seconds",
			Help:    "HTTP request latency in seconds, by method, route template and status code.",
			Buckets: []float64{.001, .0025, .005, .01, .025, .05, .1, .25, .5, 1, 2.5, 5, 10, 30},
		}, []string{"method", "route", "status"}),
		inflight: prometheus.NewGauge(prometheus.GaugeOpts{
			Name: "corvane_http_requests_in_flight",
			Help: "HTTP requests being served now.",
		}),
	}
	reg.MustRegister(m.requests, m.latency, m.inflight,
		collectors.NewGoCollector(), collectors.NewProcessCollector(collectors.ProcessCollectorOpts{}))
	return m
}

// routeLabel is the route template ("/v1/projects/:project"), never the raw
// path, so label cardinality stays bounded.
func routeLabel(c *gin.Context) string {
	if r := c.FullPath(); r != "" {
		return r
	}
	return "unmatched"
}

// knownMethods are the request methods given their own metric label; any
// other (a made-up method is a client's choice) is counted as "other", so the
// label set stays closed.
var knownMethods = map[string]bool{
	"GET": true, "HEAD": true, "POST": true, "PUT": true, "PATCH": true,
	"DELETE": true, "OPTIONS": true, "CONNECT": true, "TRACE": true,
}

// methodLabel is the request method for the metric labels: one of
// knownMethods or "other".
func methodLabel(m string) string {
	if knownMethods[m] {
		return m
	}
	return "other"
}

// middleware counts and times every request, including one a handler aborts
// with a panic (a stream cut part-way), hence the defer.
func (m *metrics) middleware(c *gin.Context) {
	start := time.Now()
	m.inflight.Inc()
	defer func() {
		m.inflight.Dec()
		status := strconv.Itoa(c.Writer.Status())
		route := routeLabel(c)
		method := methodLabel(c.Request.Method)
		m.requests.WithLabelValues(method, route, status).Inc()
		m.latency.WithLabelValues(method, route, status).Observe(time.Since(start).Seconds())
	}()
	c.Next()
}
