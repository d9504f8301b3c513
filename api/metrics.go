package api

import (
	"strconv"
	"sync/atomic"

	"github.com/prometheus/client_golang/prometheus"
	"github.com/prometheus/client_golang/prometheus/collectors"
)

// metrics are the server's Prometheus collectors, on a registry of their own
// so that several servers can live in one process (tests).
type metrics struct {
	reg         *prometheus.Registry
	requests    *prometheus.CounterVec   // method, code
	latency     *prometheus.HistogramVec // method
	annotations *prometheus.CounterVec   // model, code
	annLatency  *prometheus.HistogramVec // model
	tokens      *prometheus.CounterVec   // model
	inFlight    prometheus.Gauge
	inFlightN   atomic.Int64 // mirrors inFlight, for tests and logs
	shed        prometheus.Counter
	modelInfo   *prometheus.GaugeVec   // model, path, scheme, concepts, free_topics, word_types, generation
	reloads     *prometheus.CounterVec // model, result
	loadedAt    *prometheus.GaugeVec   // model
}

func newMetrics() *metrics {
	// A 1-2-5 series from 0.5 ms to 10 s: an annotation of a short record
	// takes about a millisecond, a long one or a backlog seconds; 50 ms, a
	// common latency objective, is a bound.
	buckets := []float64{.0005, .001, .002, .005, .01, .02, .05, .1, .2, .5, 1, 2, 5, 10}
	m := &metrics{
		reg: prometheus.NewRegistry(),
		requests: prometheus.NewCounterVec(prometheus.CounterOpts{
			Name: "termgrove_grpc_requests_total",
			Help: "gRPC calls handled, by full method and status code.",
		}, []string{"method", "code"}),
		latency: prometheus.NewHistogramVec(prometheus.HistogramOpts{
			Name:    "termgrove_grpc_request_duration_seconds",
			Help:    "gRPC call latency (streams: whole stream), by full method.",
			Buckets: buckets,
		}, []string{"method"}),
		annotations: prometheus.NewCounterVec(prometheus.CounterOpts{
			Name: "termgrove_annotations_total",
			Help: "Records annotated (unary and streamed), by model and status code.",
		}, []string{"model", "code"}),
		annLatency: prometheus.NewHistogramVec(prometheus.HistogramOpts{
			Name:    "termgrove_annotation_duration_seconds",
			Help:    "Time to annotate one record, by model.",
			Buckets: buckets,
		}, []string{"model"}),
		tokens: prometheus.NewCounterVec(prometheus.CounterOpts{
			Name: "termgrove_tokens_annotated_total",
			Help: "Analysed tokens of annotated records, by model.",
		}, []string{"model"}),
		inFlight: prometheus.NewGauge(prometheus.GaugeOpts{
			Name: "termgrove_annotations_in_flight",
			Help: "Annotations in progress.",
		}),
		shed: prometheus.NewCounter(prometheus.CounterOpts{
			Name: "termgrove_calls_shed_total",
			Help: "Annotate calls refused in the transport because every annotation slot and place to wait was taken (also counted in termgrove_grpc_requests_total).",
		}),
		modelInfo: prometheus.NewGaugeVec(prometheus.GaugeOpts{
			Name: "termgrove_model_info",
			Help: "Served model (value 1), with its file, scheme and sizes as labels.",
		}, []string{"model", "path", "scheme", "concepts", "free_topics", "word_types", "generation"}),
		reloads: prometheus.NewCounterVec(prometheus.CounterOpts{
			Name: "termgrove_model_reloads_total",
			Help: "Model file loads after start, by model and result (ok, error).",
		}, []string{"model", "result"}),
		loadedAt: prometheus.NewGaugeVec(prometheus.GaugeOpts{
			Name: "termgrove_model_loaded_timestamp_seconds",
			Help: "Unix time the model in service was loaded.",
		}, []string{"model"}),
	}
	m.reg.MustRegister(m.requests, m.latency, m.annotations, m.annLatency, m.tokens,
		m.inFlight, m.shed, m.modelInfo, m.reloads, m.loadedAt,
		collectors.NewGoCollector(), collectors.NewProcessCollector(collectors.ProcessCollectorOpts{}))
	return m
}

// setModelInfo replaces the info series of model name by the one of cur.
func (m *metrics) setModelInfo(name, path string, cur *loaded) {
	m.modelInfo.DeletePartialMatch(prometheus.Labels{"model": name})
	md := cur.m
	scheme := ""
	if md.Scheme != nil {
		scheme = md.Scheme.IRI
	}
	m.modelInfo.WithLabelValues(name, path, scheme, strconv.Itoa(md.C), strconv.Itoa(md.F),
		strconv.Itoa(len(md.Words)), strconv.FormatInt(cur.gen, 10)).Set(1)
	m.loadedAt.WithLabelValues(name).Set(float64(cur.at.UnixNano()) / 1e9)
}

func (m *metrics) enter() { m.inFlight.Inc(); m.inFlightN.Add(1) }
func (m *metrics) leave() { m.inFlight.Dec(); m.inFlightN.Add(-1) }

// inFlightValue is the number of annotations in progress.
func (m *metrics) inFlightValue() int64 { return m.inFlightN.Load() }
