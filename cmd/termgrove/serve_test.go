package main

import (
	"bytes"
	"context"
	"net"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"google.golang.org/grpc"
	"google.golang.org/grpc/credentials/insecure"
	healthpb "google.golang.org/grpc/health/grpc_health_v1"

	"termgrove/model"
	"termgrove/model/modeltest"
	pb "termgrove/proto/termgrove/v1"
)

// TestServeHelperProcess is not a test: TestServeSignals runs the test
// binary again with it to get a `termgrove serve` process.
func TestServeHelperProcess(t *testing.T) {
	args := os.Getenv("TERMGROVE_SERVE_ARGS")
	if args == "" {
		t.Skip("helper process for TestServeSignals")
	}
	os.Exit(run(append([]string{"serve"}, strings.Split(args, "\n")...)))
}

func freePort(t *testing.T) string {
	l, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	defer l.Close()
	return l.Addr().String()
}

func TestServeUsage(t *testing.T) {
	if c := cmdServe([]string{"--help"}); c != 0 {
		t.Errorf("--help: exit %d", c)
	}
	if c := cmdServe(nil); c != 2 {
		t.Errorf("no --model: exit %d", c)
	}
	if c := cmdServe([]string{"--model", "/nonexistent.grove", "--listen", "127.0.0.1:0"}); c != 2 {
		t.Errorf("missing model file: exit %d", c)
	}
	if c := cmdServe([]string{"--model", "=x"}); c != 2 {
		t.Errorf("bad --model: exit %d", c)
	}
}

// lockedBuffer is a bytes.Buffer that a test may read while a process
// writes to it.
type lockedBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (l *lockedBuffer) Write(p []byte) (int, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.Write(p)
}

func (l *lockedBuffer) String() string {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.String()
}

// TestServeSignals runs `termgrove serve` as a process: it serves, reloads
// the model file on SIGHUP and exits cleanly on SIGTERM.
func TestServeSignals(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "syn.grove")
	if err := model.Save(path, modeltest.Synthetic(modeltest.Options{Concepts: 30, Words: 300, Seed: 1})); err != nil {
		t.Fatal(err)
	}
	addr := freePort(t)
	cmd := exec.Command(os.Args[0], "-test.run=^TestServeHelperProcess$")
	cmd.Env = append(os.Environ(), "TERMGROVE_SERVE_ARGS="+strings.Join([]string{
		"--model", "syn=" + path, "--listen", addr, "--metrics-listen", "off", "--log-format", "json", "--grace", "5s"}, "\n"))
	var stderr lockedBuffer
	cmd.Stderr = &stderr
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	defer cmd.Process.Kill()
	conn, err := grpc.NewClient(addr, grpc.WithTransportCredentials(insecure.NewCredentials()))
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close()
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	// WaitForReady: the process needs a moment to listen.
	h, err := healthpb.NewHealthClient(conn).Check(ctx, &healthpb.HealthCheckRequest{Service: "termgrove.v1.AnnotationService/syn"}, grpc.WaitForReady(true))
	if err != nil || h.GetStatus() != healthpb.HealthCheckResponse_SERVING {
		t.Fatalf("health: %v %v\n%s", h, err, stderr.String())
	}
	c := pb.NewAnnotationServiceClient(conn)
	if _, err := c.Annotate(ctx, &pb.AnnotateRequest{Text: "w1 w2 w3"}); err != nil {
		t.Fatal(err)
	}
	if err := model.Save(path, modeltest.Synthetic(modeltest.Options{Concepts: 31, Words: 300, Seed: 2})); err != nil {
		t.Fatal(err)
	}
	cmd.Process.Signal(syscall.SIGHUP)
	for {
		m, err := c.GetModel(ctx, &pb.GetModelRequest{})
		if err != nil {
			t.Fatal(err)
		}
		if m.GetReload().GetGeneration() == 2 {
			if m.GetConcepts() != 31 {
				t.Fatalf("reloaded model has %d concepts", m.GetConcepts())
			}
			break
		}
		if ctx.Err() != nil {
			t.Fatalf("no reload after SIGHUP:\n%s", stderr.String())
		}
		time.Sleep(20 * time.Millisecond)
	}
	// The new generation is served a moment before its log line is written.
	for !strings.Contains(stderr.String(), `"msg":"model reloaded"`) && ctx.Err() == nil {
		time.Sleep(10 * time.Millisecond)
	}
	cmd.Process.Signal(syscall.SIGTERM)
	if err := cmd.Wait(); err != nil {
		t.Fatalf("exit after SIGTERM: %v\n%s", err, stderr.String())
	}
	for _, want := range []string{`"msg":"serving"`, `"msg":"model reloaded"`, `"msg":"stopped","drained":true`} {
		if !strings.Contains(stderr.String(), want) {
			t.Errorf("log lacks %s:\n%s", want, stderr.String())
		}
	}
}
