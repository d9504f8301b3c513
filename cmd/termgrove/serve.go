package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"log/slog"
	"os"
	"os/signal"
	"strings"
	"syscall"

	"termgrove/api"
)

// modelFlags collects repeated --model values.
type modelFlags []api.ModelSpec

func (m *modelFlags) String() string {
	var s []string
	for _, x := range *m {
		s = append(s, x.Name+"="+x.Path)
	}
	return strings.Join(s, ",")
}

func (m *modelFlags) Set(v string) error {
	spec, err := api.ParseModelSpec(v)
	if err != nil {
		return err
	}
	*m = append(*m, spec)
	return nil
}

func cmdServe(args []string) int {
	fs := flag.NewFlagSet("serve", flag.ContinueOnError)
	var models modelFlags
	fs.Var(&models, "model", "`[name=]path` of a model file; repeat for several (name defaults to the file name without .grove)")
	listen := fs.String("listen", api.DefaultListen, "gRPC address; loopback by default, give e.g. 0.0.0.0:7400 to serve other hosts")
	metricsListen := fs.String("metrics-listen", api.DefaultMetricsListen, "HTTP address of /metrics (Prometheus) and /healthz; \"off\" disables it")
	pprofOn := fs.Bool("pprof", false, "also serve Go runtime profiles under /debug/pprof/ on --metrics-listen (for profiling; keep that listener private)")
	tlsCert := fs.String("tls-cert", "", "server certificate (PEM); with --tls-key turns TLS on")
	tlsKey := fs.String("tls-key", "", "server private key (PEM)")
	tlsClientCA := fs.String("tls-client-ca", "", "CA bundle (PEM) that client certificates must chain to: turns mutual TLS on")
	maxMsg := fs.Int("max-message-bytes", api.DefaultMaxMessageBytes, "largest request or response message")
	maxText := fs.Int("max-text-bytes", api.DefaultMaxTextBytes, "largest text of one record")
	maxRecords := fs.Int("max-stream-records", api.DefaultMaxStreamRecords, "most records in one AnnotateStream message")
	maxConc := fs.Int("max-concurrent", api.DefaultMaxConcurrent(), "most annotations in progress (default: one per core)")
	maxWait := fs.Int("max-waiting", 0, "Annotate calls (and, counted apart, stream messages) that may wait for a slot beyond --max-concurrent; more get RESOURCE_EXHAUSTED at once (0: 2 × --max-concurrent; -1: none, refuse as soon as every slot is taken)")
	deadline := fs.Duration("default-deadline", api.DefaultDefaultDeadline, "deadline of unary calls whose client sets none")
	grace := fs.Duration("grace", api.DefaultGrace, "on SIGTERM/SIGINT, time for calls in progress to finish before they are cut")
	maxAge := fs.Duration("max-connection-age", 0, "ask clients to reconnect after this long (e.g. 5m) so replicas behind a connection-level balancer even out; 0 = never")
	logFormat := fs.String("log-format", "text", "log format on standard error: text or json")
	logLevel := fs.String("log-level", "info", "log level: debug, info, warn or error")
	fs.Usage = func() {
		fmt.Fprint(os.Stderr, `usage: termgrove serve --model [name=]M.grove [--model ...] [options]

Runs the gRPC annotation service (termgrove.v1.AnnotationService) with the
standard grpc.health.v1 health service and server reflection. Requests pick a
model by name; with one model the name may be left out.

Signals: SIGTERM or SIGINT stops accepting calls, marks health NOT_SERVING and
lets calls in progress finish within --grace; SIGHUP reloads every model file
(and the TLS certificate) without dropping a call; a file that fails to load
keeps the old model, and the failure is logged and shown by GetModel.

Example:
  termgrove serve --model lcsh=lcsh.grove --model debtags=debtags.grove \
    --listen 127.0.0.1:7400 --metrics-listen 127.0.0.1:7401
  termgrove annotate --server 127.0.0.1:7400 record.txt

Options:
`)
		fs.PrintDefaults()
	}
	if err := fs.Parse(args); err != nil {
		if err == flag.ErrHelp {
			return 0
		}
		return 2
	}
	if len(models) == 0 || fs.NArg() > 0 {
		if len(models) == 0 {
			fmt.Fprintln(os.Stderr, "termgrove serve: --model is required (repeat it for several models)")
		} else {
			fmt.Fprintf(os.Stderr, "termgrove serve: unexpected argument %q\n", fs.Arg(0))
		}
		fs.Usage()
		return 2
	}
	log, err := newLogger(*logFormat, *logLevel)
	if err != nil {
		fmt.Fprintf(os.Stderr, "termgrove serve: %v\n", err)
		return 2
	}
	s, err := api.NewServer(api.Config{
		Models:           models,
		Listen:           *listen,
		MetricsListen:    *metricsListen,
		Pprof:            *pprofOn,
		TLSCert:          *tlsCert,
		TLSKey:           *tlsKey,
		TLSClientCA:      *tlsClientCA,
		MaxMessageBytes:  *maxMsg,
		MaxTextBytes:     *maxText,
		MaxStreamRecords: *maxRecords,
		MaxConcurrent:    *maxConc,
		MaxWaiting:       *maxWait,
		DefaultDeadline:  *deadline,
		Grace:            *grace,
		MaxConnectionAge: *maxAge,
		Logger:           log,
		Gaps:             api.ReportGaps{},
	})
	if err != nil {
		fmt.Fprintf(os.Stderr, "termgrove serve: %v\n", err)
		return 2
	}
	if err := s.Listen(); err != nil {
		fmt.Fprintf(os.Stderr, "termgrove serve: %v\n", err)
		return 2
	}

	ctx, stop := signal.NotifyContext(context.Background(), syscall.SIGTERM, syscall.SIGINT)
	defer stop()
	hup := make(chan os.Signal, 1)
	signal.Notify(hup, syscall.SIGHUP)
	defer signal.Stop(hup)
	go func() {
		for range hup {
			log.Info("SIGHUP: reloading model files")
			if err := s.Reload(); err != nil && !errors.Is(err, api.ErrReload) {
				log.Error("reload", slog.String("error", err.Error()))
			}
			if err := s.ReloadTLS(); err != nil {
				log.Error("TLS certificate reload failed; old certificate stays", slog.String("error", err.Error()))
			}
		}
	}()
	if err := s.Run(ctx); err != nil {
		fmt.Fprintf(os.Stderr, "termgrove serve: %v\n", err)
		return 1
	}
	return 0
}

// newLogger builds the slog logger of --log-format and --log-level.
func newLogger(format, level string) (*slog.Logger, error) {
	var lv slog.Level
	if err := lv.UnmarshalText([]byte(level)); err != nil {
		return nil, fmt.Errorf("--log-level %q: want debug, info, warn or error", level)
	}
	opt := &slog.HandlerOptions{Level: lv}
	switch format {
	case "text":
		return slog.New(slog.NewTextHandler(os.Stderr, opt)), nil
	case "json":
		return slog.New(slog.NewJSONHandler(os.Stderr, opt)), nil
	}
	return nil, fmt.Errorf("--log-format %q: want text or json", format)
}
