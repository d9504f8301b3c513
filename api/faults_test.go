package api

import (
	"context"
	"errors"
	"net"
	"runtime"
	"strings"
	"testing"
	"time"

	"google.golang.org/grpc"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/credentials/insecure"
	"google.golang.org/grpc/status"

	pb "termgrove/proto/termgrove/v1"
)

// settle waits until the process has at most limit goroutines, or fails.
func settle(t *testing.T, limit int) {
	t.Helper()
	deadline := time.Now().Add(10 * time.Second)
	for runtime.NumGoroutine() > limit {
		if time.Now().After(deadline) {
			buf := make([]byte, 1<<20)
			t.Fatalf("%d goroutines, want at most %d:\n%s", runtime.NumGoroutine(), limit, buf[:runtime.Stack(buf, true)])
		}
		time.Sleep(20 * time.Millisecond)
	}
}

// heapInUse is the live heap after a collection.
func heapInUse() uint64 {
	runtime.GC()
	runtime.GC() // a second cycle empties the sync.Pools of message buffers
	var ms runtime.MemStats
	runtime.ReadMemStats(&ms)
	return ms.HeapInuse
}

// stillServes fails unless the server answers a fresh client.
func stillServes(t *testing.T, ts *testServer) {
	t.Helper()
	conn := dial(t, ts.s.Addr().String())
	defer conn.Close()
	if _, err := pb.NewAnnotationServiceClient(conn).Annotate(ctxT(t), &pb.AnnotateRequest{Text: "cat"}); err != nil {
		t.Fatalf("server no longer serves: %v", err)
	}
}

func TestClientDisconnectsMidStream(t *testing.T) {
	ts := startServer(t, Config{}, func(text string) {
		if text == "slow" {
			time.Sleep(50 * time.Millisecond)
		}
	})
	stillServes(t, ts)
	base := runtime.NumGoroutine()
	for range 5 {
		conn := dial(t, ts.s.Addr().String())
		ctx, cancel := context.WithCancel(context.Background())
		st, err := pb.NewAnnotationServiceClient(conn).AnnotateStream(ctx)
		if err != nil {
			t.Fatal(err)
		}
		for range 3 {
			st.Send(&pb.AnnotateStreamRequest{Records: []*pb.AnnotateRequest{{Id: "a", Text: "cat"}, {Id: "b", Text: "slow"}}})
		}
		if _, err := st.Recv(); err != nil {
			t.Fatal(err)
		}
		// Gone mid-stream: the second and third batches are in flight.
		cancel()
		conn.Close()
	}
	stillServes(t, ts)
	settle(t, base+4)
	waitCalls(t, ts)
	for deadline := time.Now().Add(5 * time.Second); ts.s.metrics.inFlightValue() != 0; {
		if time.Now().After(deadline) {
			t.Fatalf("%d annotations still in flight", ts.s.metrics.inFlightValue())
		}
		time.Sleep(10 * time.Millisecond)
	}
}

func TestClientSends100MB(t *testing.T) {
	ts := startServer(t, Config{}, nil)
	before := heapInUse()
	sendBig(t, ts.s.Addr().String())
	// 100 MB of junk on a raw TCP connection: the server drops it early.
	raw, err := net.Dial("tcp", ts.s.Addr().String())
	if err != nil {
		t.Fatal(err)
	}
	junk := make([]byte, 1<<20)
	for i := range junk {
		junk[i] = byte(i * 7)
	}
	raw.SetDeadline(time.Now().Add(20 * time.Second))
	sent := 0
	for sent < 100<<20 {
		n, err := raw.Write(junk)
		sent += n
		if err != nil {
			break
		}
	}
	raw.Close()
	if sent >= 100<<20 {
		t.Fatalf("server read all %d junk bytes instead of closing the connection", sent)
	}
	stillServes(t, ts)
	// The server kept none of it: the live heap is back near where it was.
	if after := heapInUse(); after > before+32<<20 {
		t.Fatalf("heap in use %d MB before, %d MB after", before>>20, after>>20)
	}
}

func TestClientNeverReads(t *testing.T) {
	ts := startServer(t, Config{}, nil)
	stillServes(t, ts)
	base := runtime.NumGoroutine()
	before := heapInUse()
	conn := dial(t, ts.s.Addr().String())
	ctx, cancel := context.WithCancel(context.Background())
	st, err := pb.NewAnnotationServiceClient(conn).AnnotateStream(ctx)
	if err != nil {
		t.Fatal(err)
	}
	// Send batches and never read: flow control must stop the client's sends
	// soon, with the server holding a bounded amount of data.
	batch := &pb.AnnotateStreamRequest{}
	for i := range 64 {
		batch.Records = append(batch.Records, &pb.AnnotateRequest{Id: strings.Repeat("i", 100) + string(rune('a'+i%26)), Text: "cat purr dog bark weather rain animal", IncludeWords: true})
	}
	sends := make(chan int, 1)
	go func() {
		n := 0
		for n < 100000 {
			if err := st.Send(batch); err != nil {
				break
			}
			n++
		}
		sends <- n
	}()
	time.Sleep(2 * time.Second)
	select {
	case n := <-sends:
		t.Fatalf("all %d sends went through a client that never reads", n)
	default:
	}
	// Other clients are served meanwhile, and memory stays bounded.
	stillServes(t, ts)
	if after := heapInUse(); after > before+64<<20 {
		t.Fatalf("heap in use grew from %d MB to %d MB", before>>20, after>>20)
	}
	cancel()
	conn.Close()
	<-sends
	settle(t, base+4)
	stillServes(t, ts)
	waitCalls(t, ts)
}

// waitCalls fails unless the server's count of Annotate calls in progress
// drops back to zero: every admitted call's end was seen.
func waitCalls(t *testing.T, ts *testServer) {
	t.Helper()
	for deadline := time.Now().Add(5 * time.Second); ts.s.calls.Load() != 0; {
		if time.Now().After(deadline) {
			t.Fatalf("%d Annotate calls still counted in progress", ts.s.calls.Load())
		}
		time.Sleep(10 * time.Millisecond)
	}
}

var _ = errors.Is

// sendBig sends a 100 MiB text as a unary call and as a stream message; both
// must be refused with RESOURCE_EXHAUSTED.
func sendBig(t *testing.T, addr string) {
	conn := dial(t, addr, grpc.WithTransportCredentials(insecure.NewCredentials()),
		grpc.WithDefaultCallOptions(grpc.MaxCallSendMsgSize(200<<20)))
	defer conn.Close()
	c := pb.NewAnnotationServiceClient(conn)
	big := strings.Repeat("cat ", 25<<20) // 100 MiB
	_, err := c.Annotate(ctxT(t), &pb.AnnotateRequest{Text: big})
	// Source: grpc-go rejects a message above MaxRecvMsgSize with
	// RESOURCE_EXHAUSTED (grpc-go rpc_util.go, recvAndDecompress).
	if status.Code(err) != codes.ResourceExhausted {
		t.Fatalf("100 MB unary: %v", err)
	}
	st, err := c.AnnotateStream(ctxT(t))
	if err != nil {
		t.Fatal(err)
	}
	st.Send(&pb.AnnotateStreamRequest{Records: []*pb.AnnotateRequest{{Text: big}}})
	if _, err := st.Recv(); status.Code(err) != codes.ResourceExhausted {
		t.Fatalf("100 MB stream message: %v", err)
	}
}
