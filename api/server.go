package api

import (
	"context"
	"crypto/tls"
	"crypto/x509"
	"errors"
	"fmt"
	"log/slog"
	"net"
	"net/http"
	"net/http/pprof"
	"os"
	"runtime/debug"
	"sync"
	"sync/atomic"
	"time"

	"github.com/prometheus/client_golang/prometheus/promhttp"
	"google.golang.org/grpc"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/credentials"
	"google.golang.org/grpc/health"
	healthpb "google.golang.org/grpc/health/grpc_health_v1"
	"google.golang.org/grpc/keepalive"
	"google.golang.org/grpc/reflection"
	"google.golang.org/grpc/status"
	"google.golang.org/grpc/tap"

	pb "termgrove/proto/termgrove/v1"
)

// ServiceName is the full name of the annotation service, also its health
// service name; a model's health service name is ServiceName + "/" + name.
const ServiceName = "termgrove.v1.AnnotationService"

// ErrReload marks a reload in which some model files failed to load.
var ErrReload = errors.New("model reload failed")

// Server is the gRPC annotation server. Build it with NewServer.
type Server struct {
	pb.UnimplementedAnnotationServiceServer

	cfg     Config
	log     *slog.Logger
	models  *models
	metrics *metrics
	health  *health.Server
	grpc    *grpc.Server
	sem     chan struct{} // annotation slots; a full channel means overload
	calls   atomic.Int64  // Annotate calls admitted by shed and not yet ended
	// batchWaiting counts stream messages waiting for an annotation slot.
	batchWaiting atomic.Int64
	cert         atomic.Pointer[tls.Certificate]

	mu          sync.Mutex
	lis         net.Listener
	metricsLis  net.Listener
	metricsHTTP *http.Server
	stopOnce    sync.Once
	watchQuit   chan struct{} // closed on shutdown: ends health Watch streams
}

// NewServer loads every model of cfg and builds the server; it does not
// listen yet. A model file that fails to load is an error.
func NewServer(cfg Config) (*Server, error) {
	cfg, err := cfg.withDefaults()
	if err != nil {
		return nil, err
	}
	s := &Server{
		cfg:       cfg,
		log:       cfg.Logger,
		models:    newModels(cfg.Models),
		metrics:   newMetrics(),
		health:    health.NewServer(),
		sem:       make(chan struct{}, cfg.MaxConcurrent),
		watchQuit: make(chan struct{}),
	}
	for _, name := range s.models.names {
		sv := s.models.byName[name]
		if err := sv.load(&s.cfg); err != nil {
			return nil, fmt.Errorf("model %s: %w", name, err)
		}
		s.metrics.setModelInfo(name, sv.spec.Path, sv.cur.Load())
	}
	opts := []grpc.ServerOption{
		grpc.MaxRecvMsgSize(cfg.MaxMessageBytes),
		grpc.MaxSendMsgSize(cfg.MaxMessageBytes),
		grpc.ChainUnaryInterceptor(s.unaryInterceptor),
		grpc.ChainStreamInterceptor(s.streamInterceptor),
		grpc.InTapHandle(s.shed),
		// Calls run on a pool of goroutines whose stacks have already grown,
		// rather than one new goroutine each (whose stack grows by copying
		// on every call): as many as Annotate calls the shed lets in, within
		// 4..256. Calls beyond, and long streams, get a goroutine of their
		// own as before.
		grpc.NumStreamWorkers(uint32(min(max(4, cfg.MaxConcurrent+max(cfg.MaxWaiting, 0)), 256))),
		// Bounds the streams (and so goroutines and buffers) one connection
		// can hold; calls are short, so only a misbehaving client meets it.
		grpc.MaxConcurrentStreams(uint32(max(1024, 8*cfg.MaxConcurrent))),
		// Clients may ping every 10 s while idle (load balancers and
		// long-lived ingest streams do); faster pings close the connection.
		grpc.KeepaliveEnforcementPolicy(keepalive.EnforcementPolicy{MinTime: 10 * time.Second, PermitWithoutStream: true}),
	}
	if cfg.MaxConnectionAge > 0 {
		opts = append(opts, grpc.KeepaliveParams(keepalive.ServerParameters{
			MaxConnectionAge: cfg.MaxConnectionAge, MaxConnectionAgeGrace: cfg.Grace}))
	}
	if cfg.TLSCert != "" {
		tc, err := s.tlsConfig()
		if err != nil {
			return nil, err
		}
		opts = append(opts, grpc.Creds(credentials.NewTLS(tc)))
	}
	s.grpc = grpc.NewServer(opts...)
	pb.RegisterAnnotationServiceServer(s.grpc, s)
	healthpb.RegisterHealthServer(s.grpc, healthService{Server: s.health, quit: s.watchQuit})
	reflection.Register(s.grpc)
	s.health.SetServingStatus("", healthpb.HealthCheckResponse_SERVING)
	s.health.SetServingStatus(ServiceName, healthpb.HealthCheckResponse_SERVING)
	for _, name := range s.models.names {
		s.health.SetServingStatus(ServiceName+"/"+name, healthpb.HealthCheckResponse_SERVING)
	}
	return s, nil
}

// tlsConfig builds the server's TLS settings. The certificate is read
// through GetCertificate so that Reload can replace it.
func (s *Server) tlsConfig() (*tls.Config, error) {
	if err := s.loadCert(); err != nil {
		return nil, err
	}
	tc := &tls.Config{
		MinVersion: tls.VersionTLS12,
		GetCertificate: func(*tls.ClientHelloInfo) (*tls.Certificate, error) {
			return s.cert.Load(), nil
		},
	}
	if s.cfg.TLSClientCA != "" {
		pem, err := os.ReadFile(s.cfg.TLSClientCA)
		if err != nil {
			return nil, fmt.Errorf("%w: client CA: %v", ErrConfig, err)
		}
		pool := x509.NewCertPool()
		if !pool.AppendCertsFromPEM(pem) {
			return nil, fmt.Errorf("%w: client CA %s: no PEM certificate", ErrConfig, s.cfg.TLSClientCA)
		}
		tc.ClientCAs = pool
		tc.ClientAuth = tls.RequireAndVerifyClientCert
	}
	return tc, nil
}

func (s *Server) loadCert() error {
	c, err := tls.LoadX509KeyPair(s.cfg.TLSCert, s.cfg.TLSKey)
	if err != nil {
		return fmt.Errorf("%w: TLS key pair: %v", ErrConfig, err)
	}
	s.cert.Store(&c)
	return nil
}

// ReloadTLS re-reads the server certificate and key (the client CA bundle
// is fixed at start); on error the old certificate stays in use.
func (s *Server) ReloadTLS() error {
	if s.cfg.TLSCert == "" {
		return nil
	}
	return s.loadCert()
}

// Listen opens the gRPC listener on Config.Listen and the metrics listener
// on Config.MetricsListen (unless "off"). Addr and MetricsAddr then report
// the bound addresses (useful with port 0).
func (s *Server) Listen() error {
	lis, err := net.Listen("tcp", s.cfg.Listen)
	if err != nil {
		return err
	}
	var mlis net.Listener
	if s.cfg.MetricsListen != "off" {
		mlis, err = net.Listen("tcp", s.cfg.MetricsListen)
		if err != nil {
			lis.Close()
			return err
		}
	}
	s.mu.Lock()
	s.lis, s.metricsLis = lis, mlis
	s.mu.Unlock()
	return nil
}

// Addr is the bound gRPC address after Listen.
func (s *Server) Addr() net.Addr {
	s.mu.Lock()
	defer s.mu.Unlock()
	if s.lis == nil {
		return nil
	}
	return s.lis.Addr()
}

// MetricsAddr is the bound metrics address after Listen (nil when off).
func (s *Server) MetricsAddr() net.Addr {
	s.mu.Lock()
	defer s.mu.Unlock()
	if s.metricsLis == nil {
		return nil
	}
	return s.metricsLis.Addr()
}

// Serve serves on the listeners opened by Listen (opening them first when
// Listen was not called) until Shutdown or Stop.
func (s *Server) Serve() error {
	if s.Addr() == nil {
		if err := s.Listen(); err != nil {
			return err
		}
	}
	s.mu.Lock()
	lis, mlis := s.lis, s.metricsLis
	if mlis != nil {
		mux := http.NewServeMux()
		mux.Handle("/metrics", promhttp.HandlerFor(s.metrics.reg, promhttp.HandlerOpts{}))
		mux.HandleFunc("/healthz", func(w http.ResponseWriter, r *http.Request) {
			w.Write([]byte("ok\n"))
		})
		if s.cfg.Pprof {
			mux.HandleFunc("/debug/pprof/", pprof.Index)
			mux.HandleFunc("/debug/pprof/cmdline", pprof.Cmdline)
			mux.HandleFunc("/debug/pprof/profile", pprof.Profile)
			mux.HandleFunc("/debug/pprof/symbol", pprof.Symbol)
			mux.HandleFunc("/debug/pprof/trace", pprof.Trace)
		}
		s.metricsHTTP = &http.Server{Handler: mux, ReadHeaderTimeout: 10 * time.Second}
		go func(h *http.Server) {
			if err := h.Serve(mlis); err != nil && !errors.Is(err, http.ErrServerClosed) {
				s.log.Error("metrics listener", slog.String("error", err.Error()))
			}
		}(s.metricsHTTP)
	}
	s.mu.Unlock()
	s.log.Info("serving", slog.String("addr", lis.Addr().String()),
		slog.Bool("tls", s.cfg.TLSCert != ""), slog.Bool("mtls", s.cfg.TLSClientCA != ""),
		slog.Any("models", s.models.names), slog.Int("max_concurrent", s.cfg.MaxConcurrent),
		slog.Int("max_waiting", max(s.cfg.MaxWaiting, 0)))
	return s.grpc.Serve(lis)
}

// Run listens, serves until ctx ends, then shuts down gracefully within
// Config.Grace. It returns nil after a clean shutdown.
func (s *Server) Run(ctx context.Context) error {
	errc := make(chan error, 1)
	go func() { errc <- s.Serve() }()
	select {
	case err := <-errc:
		return err
	case <-ctx.Done():
	}
	s.Shutdown(s.cfg.Grace)
	return <-errc
}

// Shutdown stops accepting connections and calls, marks every health
// status NOT_SERVING, lets calls in progress finish for up to grace, then
// closes whatever is left. It reports whether everything drained in time.
func (s *Server) Shutdown(grace time.Duration) bool {
	drained := true
	s.stopOnce.Do(func() {
		s.log.Info("shutting down", slog.Duration("grace", grace))
		s.health.Shutdown()
		// Give watchers a moment to receive NOT_SERVING, then end their
		// streams so that they do not hold up the drain.
		time.AfterFunc(100*time.Millisecond, func() { close(s.watchQuit) })
		done := make(chan struct{})
		go func() {
			s.grpc.GracefulStop()
			close(done)
		}()
		t := time.NewTimer(grace)
		select {
		case <-done:
			t.Stop()
		case <-t.C:
			drained = false
			s.log.Warn("grace period over; closing remaining calls")
			// Stop closes every connection; it does not wait for handlers
			// stuck in computation (GracefulStop would, forever).
			s.grpc.Stop()
		}
		s.mu.Lock()
		h := s.metricsHTTP
		s.mu.Unlock()
		if h != nil {
			ctx, cancel := context.WithTimeout(context.Background(), time.Second)
			h.Shutdown(ctx)
			cancel()
		}
		s.log.Info("stopped", slog.Bool("drained", drained))
	})
	return drained
}

// annotateMethod is the full name of the unary annotation call.
const annotateMethod = "/" + ServiceName + "/Annotate"

// shed refuses an Annotate call with RESOURCE_EXHAUSTED in the transport,
// before a goroutine is started or the message is read, once
// MaxConcurrent + MaxWaiting Annotate calls are already in the server
// (being read, waiting for a slot, annotating or being answered), or, with
// no waiting allowed, while every annotation slot is taken. Under overload
// this keeps refusals cheap and the queue in front of the slots short: a
// call let in waits for at most MaxWaiting annotations to finish.
func (s *Server) shed(ctx context.Context, info *tap.Info) (context.Context, error) {
	if info.FullMethodName != annotateMethod {
		return ctx, nil
	}
	waiting := max(s.cfg.MaxWaiting, 0)
	if n := s.calls.Add(1); n > int64(s.cfg.MaxConcurrent+waiting) || (waiting == 0 && len(s.sem) == cap(s.sem)) {
		s.calls.Add(-1)
		s.metrics.requests.WithLabelValues(annotateMethod, codes.ResourceExhausted.String()).Inc()
		s.metrics.shed.Inc()
		return ctx, errBusy
	}
	// The transport cancels a stream's context when the stream ends, however
	// it ends, so the count cannot leak.
	context.AfterFunc(ctx, func() { s.calls.Add(-1) })
	return ctx, nil
}

// unaryInterceptor applies the default deadline, turns a panic into
// INTERNAL, and records metrics and a log line per call.
func (s *Server) unaryInterceptor(ctx context.Context, req any, info *grpc.UnaryServerInfo, handler grpc.UnaryHandler) (resp any, err error) {
	start := time.Now()
	if _, ok := ctx.Deadline(); !ok && s.cfg.DefaultDeadline > 0 {
		var cancel context.CancelFunc
		ctx, cancel = context.WithTimeout(ctx, s.cfg.DefaultDeadline)
		defer cancel()
	}
	func() {
		defer func() {
			if p := recover(); p != nil {
				err = s.panicked(info.FullMethod, p)
				resp = nil
			}
		}()
		resp, err = handler(ctx, req)
	}()
	s.observe(info.FullMethod, start, err)
	return resp, err
}

func (s *Server) streamInterceptor(srv any, ss grpc.ServerStream, info *grpc.StreamServerInfo, handler grpc.StreamHandler) (err error) {
	start := time.Now()
	func() {
		defer func() {
			if p := recover(); p != nil {
				err = s.panicked(info.FullMethod, p)
			}
		}()
		err = handler(srv, ss)
	}()
	s.observe(info.FullMethod, start, err)
	return err
}

// panicked logs a recovered panic with its stack and returns INTERNAL.
func (s *Server) panicked(method string, p any) error {
	s.log.Error("panic in handler", slog.String("method", method),
		slog.String("panic", fmt.Sprint(p)), slog.String("stack", string(debug.Stack())))
	return status.Error(codes.Internal, "internal error; the server logged it")
}

func (s *Server) observe(method string, start time.Time, err error) {
	code := status.Code(err)
	d := time.Since(start)
	s.metrics.requests.WithLabelValues(method, code.String()).Inc()
	s.metrics.latency.WithLabelValues(method).Observe(d.Seconds())
	lvl := slog.LevelDebug
	switch code {
	case codes.OK, codes.ResourceExhausted, codes.Canceled:
	case codes.Internal, codes.Unknown, codes.DataLoss:
		lvl = slog.LevelError
	default:
		lvl = slog.LevelInfo
	}
	if s.log.Enabled(context.Background(), lvl) {
		attrs := []slog.Attr{slog.String("method", method), slog.String("code", code.String()), slog.Duration("took", d)}
		if err != nil {
			attrs = append(attrs, slog.String("error", status.Convert(err).Message()))
		}
		s.log.LogAttrs(context.Background(), lvl, "call", attrs...)
	}
}
