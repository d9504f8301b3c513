package api

import (
	"errors"
	"fmt"
	"log/slog"
	"runtime"
	"strings"
	"time"

	"termgrove/annotate"
	"termgrove/model"
)

// Defaults of Config's zero fields.
const (
	DefaultListen           = "127.0.0.1:7400"
	DefaultMetricsListen    = "127.0.0.1:7401"
	DefaultMaxMessageBytes  = 4 << 20 // gRPC's own default receive limit
	DefaultMaxTextBytes     = 1 << 20
	DefaultMaxStreamRecords = 256
	DefaultDefaultDeadline  = 30 * time.Second
	DefaultGrace            = 20 * time.Second
)

// DefaultMaxConcurrent is the default limit of annotations in progress: one
// per core. Annotation is CPU-bound, so more only share the cores and make
// every call slower; calls beyond wait in a short queue instead
// (DefaultMaxWaiting). bench/serve.md compares 2 per core without a queue
// (the default before): one per core with a queue of 2 per core took more
// calls per second at concurrency 8 and 64 and under 3x overload, with a
// lower accepted p50 and p99 under overload.
func DefaultMaxConcurrent() int { return runtime.GOMAXPROCS(0) }

// DefaultMaxWaiting is the default number of Annotate calls that may wait
// for an annotation slot: two per slot, so a waiting call waits for at most
// two annotations per core, and a core never idles between calls.
func DefaultMaxWaiting(maxConcurrent int) int { return 2 * maxConcurrent }

// ModelSpec names one model file. Requests choose a model by Name.
type ModelSpec struct {
	Name string
	Path string
}

// ParseModelSpec parses a --model value: "name=path", or "path" whose file
// name without extension becomes the name.
func ParseModelSpec(v string) (ModelSpec, error) {
	if v == "" {
		return ModelSpec{}, errors.New("empty model")
	}
	if i := strings.IndexByte(v, '='); i >= 0 {
		s := ModelSpec{Name: v[:i], Path: v[i+1:]}
		if s.Name == "" || s.Path == "" {
			return ModelSpec{}, fmt.Errorf("model %q: want name=path", v)
		}
		return s, nil
	}
	name := v
	if i := strings.LastIndexAny(name, `/\`); i >= 0 {
		name = name[i+1:]
	}
	name = strings.TrimSuffix(name, ".grove")
	if name == "" {
		return ModelSpec{}, fmt.Errorf("model %q: no file name", v)
	}
	return ModelSpec{Name: name, Path: v}, nil
}

// Annotator annotates one text; *annotate.Annotator satisfies it.
type Annotator interface {
	Annotate(id, text string, opt annotate.Options) (*annotate.Result, error)
}

// Config configures a Server. Zero fields take the defaults above.
type Config struct {
	Models []ModelSpec

	// Listen is the gRPC address (host:port). The default is on loopback;
	// serving other hosts must be asked for.
	Listen string
	// MetricsListen is the address of the HTTP listener serving /metrics;
	// "off" disables it.
	MetricsListen string
	// Pprof adds the runtime profiles (net/http/pprof, under /debug/pprof/)
	// to the metrics listener, for profiling the server under load. Off by
	// default: profiles reveal internals and cost CPU while taken.
	Pprof bool

	// TLS: certificate and key files of the server (both or neither), and
	// the CA bundle that client certificates must chain to (mutual TLS).
	TLSCert, TLSKey, TLSClientCA string

	MaxMessageBytes  int // largest request or response message
	MaxTextBytes     int // largest text of one record
	MaxStreamRecords int // most records in one stream message
	MaxConcurrent    int // most annotations in progress at once
	// MaxWaiting is how many more Annotate calls than MaxConcurrent may be
	// inside the server (being read, waiting for a slot, being answered);
	// a call beyond is refused with RESOURCE_EXHAUSTED before its message
	// is read. As many stream messages, counted apart, may wait for a
	// slot. 0 takes DefaultMaxWaiting; negative means none: a call is
	// refused at once when every slot is taken.
	MaxWaiting      int
	DefaultDeadline time.Duration // applied to unary calls that carry none
	Grace           time.Duration // drain time on shutdown before forcing
	// MaxConnectionAge, when set, makes clients reconnect after about this
	// long (a GOAWAY, then Grace for calls in progress), so that replicas
	// behind a connection-level (L4) balancer even out; 0 = never.
	MaxConnectionAge time.Duration

	Logger *slog.Logger // default: slog.Default()

	// Load reads a model file (default: model.Load).
	Load func(path string) (*model.Model, error)
	// NewAnnotator builds the annotator of a model (default: annotate.New).
	NewAnnotator func(m *model.Model) (Annotator, error)
	// Gaps builds gap reports; nil makes GetGapReport UNIMPLEMENTED.
	Gaps GapReporter
}

// withDefaults returns c with zero fields filled in, or an error naming the
// first bad field.
func (c Config) withDefaults() (Config, error) {
	if c.Listen == "" {
		c.Listen = DefaultListen
	}
	if c.MetricsListen == "" {
		c.MetricsListen = DefaultMetricsListen
	}
	if c.MaxMessageBytes == 0 {
		c.MaxMessageBytes = DefaultMaxMessageBytes
	}
	if c.MaxTextBytes == 0 {
		c.MaxTextBytes = DefaultMaxTextBytes
	}
	if c.MaxStreamRecords == 0 {
		c.MaxStreamRecords = DefaultMaxStreamRecords
	}
	if c.MaxConcurrent == 0 {
		c.MaxConcurrent = DefaultMaxConcurrent()
	}
	switch {
	case c.MaxWaiting == 0:
		c.MaxWaiting = DefaultMaxWaiting(max(c.MaxConcurrent, 1))
	case c.MaxWaiting < 0:
		c.MaxWaiting = -1
	}
	if c.DefaultDeadline == 0 {
		c.DefaultDeadline = DefaultDefaultDeadline
	}
	if c.Grace == 0 {
		c.Grace = DefaultGrace
	}
	if c.Logger == nil {
		c.Logger = slog.Default()
	}
	if c.Load == nil {
		c.Load = defaultLoad
	}
	if c.NewAnnotator == nil {
		c.NewAnnotator = defaultAnnotator
	}
	switch {
	case len(c.Models) == 0:
		return c, fmt.Errorf("%w: no model given", ErrConfig)
	case c.MaxMessageBytes < 1024:
		return c, fmt.Errorf("%w: max message bytes %d below 1024", ErrConfig, c.MaxMessageBytes)
	case c.MaxTextBytes < 1 || c.MaxTextBytes > c.MaxMessageBytes:
		return c, fmt.Errorf("%w: max text bytes %d not in 1..max message bytes (%d)", ErrConfig, c.MaxTextBytes, c.MaxMessageBytes)
	case c.MaxStreamRecords < 1:
		return c, fmt.Errorf("%w: max stream records %d below 1", ErrConfig, c.MaxStreamRecords)
	case c.MaxConcurrent < 1:
		return c, fmt.Errorf("%w: max concurrent %d below 1", ErrConfig, c.MaxConcurrent)
	case c.DefaultDeadline < 0 || c.Grace < 0 || c.MaxConnectionAge < 0:
		return c, fmt.Errorf("%w: negative deadline or grace", ErrConfig)
	case (c.TLSCert == "") != (c.TLSKey == ""):
		return c, fmt.Errorf("%w: --tls-cert and --tls-key go together", ErrConfig)
	case c.TLSClientCA != "" && c.TLSCert == "":
		return c, fmt.Errorf("%w: --tls-client-ca needs --tls-cert and --tls-key", ErrConfig)
	}
	seen := map[string]bool{}
	for _, m := range c.Models {
		if m.Name == "" || m.Path == "" {
			return c, fmt.Errorf("%w: model %q=%q: name and path are required", ErrConfig, m.Name, m.Path)
		}
		if seen[m.Name] {
			return c, fmt.Errorf("%w: model name %q given twice", ErrConfig, m.Name)
		}
		seen[m.Name] = true
	}
	return c, nil
}

// ErrConfig marks a bad Config.
var ErrConfig = errors.New("bad server configuration")
