package service

import (
	"net/http"
	"strconv"
	"time"

	"github.com/prometheus/client_golang/prometheus"
	"github.com/prometheus/client_golang/prometheus/collectors"
	"github.com/prometheus/client_golang/prometheus/promhttp"
)

// Metrics is the service's private Prometheus registry and its collectors.
// It implements api.Recorder for the domain counters.
type Metrics struct {
	registry     *prometheus.Registry
	requests     *prometheus.CounterVec
	duration     *prometheus.HistogramVec
	inFlight     prometheus.Gauge
	calculations *prometheus.CounterVec
	rejections   *prometheus.CounterVec
	iterations   *prometheus.HistogramVec
	clients      *prometheus.CounterVec
	shed         *prometheus.CounterVec
}

// NewMetrics builds the registry with Go, process and build-info collectors.
func NewMetrics() *Metrics {
	m := &Metrics{
		registry: prometheus.NewRegistry(),
		requests: prometheus.NewCounterVec(prometheus.CounterOpts{
			Name: "lipidsvc_http_requests_total",
			Help: "HTTP requests answered, by method, route template and status code.",
		}, []string{"method", "route", "code"}),
		duration: prometheus.NewHistogramVec(prometheus.HistogramOpts{
			Name:    "lipidsvc_http_request_duration_seconds",
			Help:    "Time to answer an HTTP request, by method, route template and status code.",
			Buckets: []float64{0.0005, 0.001, 0.0025, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5, 5, 10},
		}, []string{"method", "route", "code"}),
		inFlight: prometheus.NewGauge(prometheus.GaugeOpts{
			Name: "lipidsvc_http_requests_in_flight",
			Help: "HTTP requests being served.",
		}),
		calculations: prometheus.NewCounterVec(prometheus.CounterOpts{
			Name: "lipidsvc_calculations_total",
			Help: "Completed calculations, by kind.",
		}, []string{"kind"}),
		rejections: prometheus.NewCounterVec(prometheus.CounterOpts{
			Name: "lipidsvc_rejected_requests_total",
			Help: "Requests answered with a 4xx problem, by problem type.",
		}, []string{"problem"}),
		iterations: prometheus.NewHistogramVec(prometheus.HistogramOpts{
			Name:    "lipidsvc_solver_iterations",
			Help:    "Iterations (or model evaluations) an iterative solver needed, by solver.",
			Buckets: []float64{1, 2, 5, 10, 20, 50, 100, 200, 500, 1000},
		}, []string{"solver"}),
		clients: prometheus.NewCounterVec(prometheus.CounterOpts{
			Name: "lipidsvc_client_requests_total",
			Help: "Requests by API key name (\"anonymous\" without keys configured, \"unauthenticated\" for refused ones).",
		}, []string{"client"}),
		shed: prometheus.NewCounterVec(prometheus.CounterOpts{
			Name: "lipidsvc_shed_requests_total",
			Help: "Requests answered 503 at once because their cost class was at its in-flight limit, by class.",
		}, []string{"class"}),
	}
	m.registry.MustRegister(
		collectors.NewGoCollector(),
		collectors.NewProcessCollector(collectors.ProcessCollectorOpts{}),
		collectors.NewBuildInfoCollector(),
		m.requests, m.duration, m.inFlight, m.calculations, m.rejections, m.iterations, m.clients, m.shed,
	)
	return m
}

// Calculation implements api.Recorder.
func (m *Metrics) Calculation(kind string) { m.calculations.WithLabelValues(kind).Inc() }

// SolverIterations implements api.Recorder.
func (m *Metrics) SolverIterations(kind string, n int) {
	m.iterations.WithLabelValues(kind).Observe(float64(n))
}

// Rejection implements api.Recorder.
func (m *Metrics) Rejection(slug string) { m.rejections.WithLabelValues(slug).Inc() }

func (m *Metrics) observe(method, route string, code int, elapsed time.Duration) {
	method = methodLabel(method)
	c := strconv.Itoa(code)
	m.requests.WithLabelValues(method, route, c).Inc()
	m.duration.WithLabelValues(method, route, c).Observe(elapsed.Seconds())
}

// methodLabel keeps label cardinality bounded: any method outside the
// standard set is counted as OTHER.
func methodLabel(m string) string {
	switch m {
	case http.MethodGet, http.MethodHead, http.MethodPost, http.MethodPut, http.MethodPatch,
		http.MethodDelete, http.MethodOptions, http.MethodConnect, http.MethodTrace:
		return m
	}
	return "OTHER"
}

// Handler serves the registry in the Prometheus exposition format.
func (m *Metrics) Handler() http.Handler {
	return promhttp.HandlerFor(m.registry, promhttp.HandlerOpts{Registry: m.registry})
}
