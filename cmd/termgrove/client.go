package main

import (
	"context"
	"crypto/tls"
	"crypto/x509"
	"errors"
	"flag"
	"fmt"
	"os"
	"time"
	"unicode/utf8"

	"google.golang.org/grpc"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/credentials"
	"google.golang.org/grpc/credentials/insecure"
	"google.golang.org/grpc/status"

	"termgrove/annotate"
	"termgrove/api"
	pb "termgrove/proto/termgrove/v1"
)

// remoteConfig are the connection settings of `termgrove annotate --server`.
// The zero value is a plaintext connection to the server's only model.
type remoteConfig struct {
	Model      string        // model name on the server; "" = its only model
	TLS        bool          // use TLS (implied by CAFile or CertFile)
	CAFile     string        // CA bundle (PEM) to verify the server; "" = system roots
	CertFile   string        // client certificate (PEM) for mutual TLS
	KeyFile    string        // its private key (PEM)
	ServerName string        // TLS server name, when it differs from the address
	Timeout    time.Duration // deadline of each call (default 60s)
	Retries    int           // retries of a call refused as busy or unavailable (default 5)
}

// addRemoteFlags registers the client flags of `annotate --server` on fs:
// --server-model, --server-tls, --server-ca, --server-cert, --server-key,
// --server-name, --server-timeout.
func addRemoteFlags(fs *flag.FlagSet) *remoteConfig {
	rc := &remoteConfig{}
	fs.StringVar(&rc.Model, "server-model", "", "with --server: model name on the server (default: its only model)")
	fs.BoolVar(&rc.TLS, "server-tls", false, "with --server: connect with TLS (implied by --server-ca and --server-cert)")
	fs.StringVar(&rc.CAFile, "server-ca", "", "with --server: CA bundle (PEM) that the server's certificate must chain to")
	fs.StringVar(&rc.CertFile, "server-cert", "", "with --server: client certificate (PEM) for mutual TLS")
	fs.StringVar(&rc.KeyFile, "server-key", "", "with --server: client private key (PEM)")
	fs.StringVar(&rc.ServerName, "server-name", "", "with --server: TLS server name to verify (default: the host of --server)")
	fs.DurationVar(&rc.Timeout, "server-timeout", 60*time.Second, "with --server: deadline of each call")
	return rc
}

// annotateRemote connects to the termgrove gRPC service at addr (host:port)
// and returns a function with the shape of (*annotate.Annotator).Annotate
// that annotates through it, so the annotate command's formatters work
// unchanged on its results. The function is safe for concurrent use (one
// connection, many calls); a call refused with RESOURCE_EXHAUSTED or
// UNAVAILABLE is retried with exponential backoff. Errors carry the record
// id and the gRPC status. Call closeFn when done.
func annotateRemote(addr string, rc remoteConfig) (annotateFunc func(id, text string, opt annotate.Options) (*annotate.Result, error), closeFn func() error, err error) {
	creds := insecure.NewCredentials()
	if rc.TLS || rc.CAFile != "" || rc.CertFile != "" {
		tc := &tls.Config{MinVersion: tls.VersionTLS12, ServerName: rc.ServerName}
		if rc.CAFile != "" {
			b, err := os.ReadFile(rc.CAFile)
			if err != nil {
				return nil, nil, err
			}
			pool := x509.NewCertPool()
			if !pool.AppendCertsFromPEM(b) {
				return nil, nil, fmt.Errorf("%s: no PEM certificate", rc.CAFile)
			}
			tc.RootCAs = pool
		}
		if (rc.CertFile == "") != (rc.KeyFile == "") {
			return nil, nil, errors.New("--server-cert and --server-key go together")
		}
		if rc.CertFile != "" {
			c, err := tls.LoadX509KeyPair(rc.CertFile, rc.KeyFile)
			if err != nil {
				return nil, nil, err
			}
			tc.Certificates = []tls.Certificate{c}
		}
		creds = credentials.NewTLS(tc)
	}
	conn, err := grpc.NewClient(addr, grpc.WithTransportCredentials(creds),
		grpc.WithDefaultCallOptions(grpc.MaxCallRecvMsgSize(64<<20), grpc.MaxCallSendMsgSize(64<<20)))
	if err != nil {
		return nil, nil, fmt.Errorf("--server %s: %w", addr, err)
	}
	c := pb.NewAnnotationServiceClient(conn)
	timeout := rc.Timeout
	if timeout <= 0 {
		timeout = 60 * time.Second
	}
	retries := rc.Retries
	if retries == 0 {
		retries = 5
	}
	annotateFunc = func(id, text string, opt annotate.Options) (*annotate.Result, error) {
		clean, invalid := spaceInvalidUTF8(text)
		req := api.RequestFromOptions(rc.Model, id, clean, opt)
		backoff := 50 * time.Millisecond
		for try := 0; ; try++ {
			ctx, cancel := context.WithTimeout(context.Background(), timeout)
			resp, err := c.Annotate(ctx, req)
			cancel()
			if err == nil {
				res := api.ResultFromProto(resp)
				res.Invalid += invalid
				return &res, nil
			}
			code := status.Code(err)
			if (code == codes.ResourceExhausted || code == codes.Unavailable) && try < retries {
				time.Sleep(backoff)
				backoff *= 2
				continue
			}
			return nil, fmt.Errorf("record %q: server %s: %s: %s", id, addr, code, status.Convert(err).Message())
		}
	}
	return annotateFunc, conn.Close, nil
}

// spaceInvalidUTF8 replaces each byte of an invalid UTF-8 sequence by a
// space, which keeps every byte offset of the text (so the result's word
// spans still index the caller's text) and splits words there, as the local
// analyzer's U+FFFD does. The wire format needs valid UTF-8: protobuf
// refuses to encode a string field holding anything else.
func spaceInvalidUTF8(s string) (string, int) {
	if utf8.ValidString(s) {
		return s, 0
	}
	b := []byte(s)
	n := 0
	for i := 0; i < len(b); {
		r, size := utf8.DecodeRune(b[i:])
		if r == utf8.RuneError && size == 1 {
			b[i] = ' '
			n++
		}
		i += size
	}
	return string(b), n
}
