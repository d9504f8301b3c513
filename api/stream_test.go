package api

import (
	"fmt"
	"runtime"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"google.golang.org/grpc/codes"

	pb "termgrove/proto/termgrove/v1"
)

// TestStreamBatchParallel checks that the records of one stream message are
// annotated on several cores at once, within the annotation slots, and
// come back in order.
func TestStreamBatchParallel(t *testing.T) {
	if runtime.GOMAXPROCS(0) < 2 {
		t.Skip("needs GOMAXPROCS >= 2")
	}
	var inside, most atomic.Int64
	var together sync.Once
	met := make(chan struct{})
	ts := startServer(t, Config{MaxConcurrent: 2}, func(text string) {
		if text != "cat pair" {
			return
		}
		n := inside.Add(1)
		defer inside.Add(-1)
		for {
			m := most.Load()
			if n <= m || most.CompareAndSwap(m, n) {
				break
			}
		}
		if n >= 2 {
			together.Do(func() { close(met) })
		}
		// Each record waits (a bounded time) until two are inside together:
		// annotated one after the other, they would take 20 × 200 ms.
		select {
		case <-met:
		case <-time.After(200 * time.Millisecond):
		}
	})
	recs := make([]*pb.AnnotateRequest, 20)
	for i := range recs {
		recs[i] = &pb.AnnotateRequest{Id: fmt.Sprint("r", i), Text: "cat pair"}
	}
	recs[7] = &pb.AnnotateRequest{Id: "bad", Text: "cat pair", Top: -1} // fails validation, keeps its place
	st, err := ts.c.AnnotateStream(ctxT(t))
	if err != nil {
		t.Fatal(err)
	}
	start := time.Now()
	if err := st.Send(&pb.AnnotateStreamRequest{Records: recs}); err != nil {
		t.Fatal(err)
	}
	r, err := st.Recv()
	if err != nil {
		t.Fatal(err)
	}
	if d := time.Since(start); d > 2*time.Second {
		t.Fatalf("batch took %v: records not annotated in parallel", d)
	}
	if m := most.Load(); m != 2 {
		t.Fatalf("at most %d records annotated at once, want 2 (the slots)", m)
	}
	for i, res := range r.GetResults() {
		if res.GetId() != recs[i].GetId() {
			t.Fatalf("result %d has id %q, want %q", i, res.GetId(), recs[i].GetId())
		}
		if i == 7 {
			if res.GetError().GetCode() != int32(codes.InvalidArgument) {
				t.Fatalf("bad record: %v", res)
			}
			continue
		}
		if res.GetAnnotation().GetId() != recs[i].GetId() {
			t.Fatalf("result %d: %v", i, res)
		}
	}
	st.CloseSend()
	waitCalls(t, ts)
	if n := len(ts.s.sem); n != 0 {
		t.Fatalf("%d slots still taken after the batch", n)
	}
}

// TestStreamBatchSlots checks that a batch takes only the slots that are
// free, never fails a record for want of one once it has one, and, when it
// may not wait, fails every record with RESOURCE_EXHAUSTED when none is
// free.
func TestStreamBatchSlots(t *testing.T) {
	release := make(chan struct{})
	entered := make(chan struct{}, 4)
	var inside, most atomic.Int64
	ts := startServer(t, Config{MaxConcurrent: 2, MaxWaiting: -1}, func(text string) {
		switch text {
		case "block":
			entered <- struct{}{}
			<-release
		case "cat":
			n := inside.Add(1)
			if n > most.Load() {
				most.Store(n)
			}
			time.Sleep(time.Millisecond)
			inside.Add(-1)
		}
	})
	// One slot held by a unary call: the batch gets the other one only.
	done := make(chan error, 2)
	go func() {
		_, err := ts.c.Annotate(ctxT(t), &pb.AnnotateRequest{Text: "block"})
		done <- err
	}()
	<-entered
	recs := make([]*pb.AnnotateRequest, 10)
	for i := range recs {
		recs[i] = &pb.AnnotateRequest{Id: fmt.Sprint(i), Text: "cat"}
	}
	st, err := ts.c.AnnotateStream(ctxT(t))
	if err != nil {
		t.Fatal(err)
	}
	st.Send(&pb.AnnotateStreamRequest{Records: recs})
	r, err := st.Recv()
	if err != nil {
		t.Fatal(err)
	}
	for i, res := range r.GetResults() {
		if res.GetAnnotation() == nil {
			t.Fatalf("record %d with a slot free: %v", i, res)
		}
	}
	if m := most.Load(); m != 1 {
		t.Fatalf("%d records annotated at once with one slot free", m)
	}
	// Both slots held: every record of the next batch is refused at once.
	go func() {
		_, err := ts.c.Annotate(ctxT(t), &pb.AnnotateRequest{Text: "block"})
		done <- err
	}()
	<-entered
	st.Send(&pb.AnnotateStreamRequest{Records: recs[:3]})
	r, err = st.Recv()
	if err != nil {
		t.Fatal(err)
	}
	for i, res := range r.GetResults() {
		if res.GetError().GetCode() != int32(codes.ResourceExhausted) {
			t.Fatalf("record %d with no slot free: %v", i, res)
		}
	}
	close(release)
	for range 2 {
		if err := <-done; err != nil {
			t.Fatal(err)
		}
	}
	st.CloseSend()
	waitCalls(t, ts)
}

func TestWaitingDefaults(t *testing.T) {
	for _, tc := range []struct{ conc, wait, wantConc, wantWait int }{
		{0, 0, runtime.GOMAXPROCS(0), 2 * runtime.GOMAXPROCS(0)},
		{3, 0, 3, 6},
		{3, 1, 3, 1},
		{3, -5, 3, -1},
	} {
		c, err := Config{Models: []ModelSpec{{Name: "m", Path: "m.grove"}}, MaxConcurrent: tc.conc, MaxWaiting: tc.wait}.withDefaults()
		if err != nil {
			t.Fatal(err)
		}
		if c.MaxConcurrent != tc.wantConc || c.MaxWaiting != tc.wantWait {
			t.Errorf("MaxConcurrent %d, MaxWaiting %d: got %d, %d; want %d, %d", tc.conc, tc.wait, c.MaxConcurrent, c.MaxWaiting, tc.wantConc, tc.wantWait)
		}
	}
}

// TestStreamBatchWaits checks that a batch that finds every slot taken
// waits for one when it may, and is refused when the waiting places are
// taken too.
func TestStreamBatchWaits(t *testing.T) {
	release := make(chan struct{})
	entered := make(chan struct{}, 1)
	ts := startServer(t, Config{MaxConcurrent: 1, MaxWaiting: 1}, func(text string) {
		if text == "block" {
			entered <- struct{}{}
			<-release
		}
	})
	done := make(chan error, 1)
	go func() {
		_, err := ts.c.Annotate(ctxT(t), &pb.AnnotateRequest{Text: "block"})
		done <- err
	}()
	<-entered
	send := func(id string) pb.AnnotationService_AnnotateStreamClient {
		st, err := ts.c.AnnotateStream(ctxT(t))
		if err != nil {
			t.Fatal(err)
		}
		if err := st.Send(&pb.AnnotateStreamRequest{Records: []*pb.AnnotateRequest{{Id: id, Text: "cat"}, {Id: id + "2", Text: "dog"}}}); err != nil {
			t.Fatal(err)
		}
		return st
	}
	waiter := send("w")
	for deadline := time.Now().Add(5 * time.Second); ts.s.batchWaiting.Load() != 1; {
		if time.Now().After(deadline) {
			t.Fatal("the first batch is not waiting for a slot")
		}
		time.Sleep(time.Millisecond)
	}
	// The one waiting place is taken: the next batch is refused.
	refused := send("x")
	r, err := refused.Recv()
	if err != nil {
		t.Fatal(err)
	}
	for _, res := range r.GetResults() {
		if res.GetError().GetCode() != int32(codes.ResourceExhausted) {
			t.Fatalf("batch beyond the waiting places: %v", res)
		}
	}
	refused.CloseSend()
	close(release)
	if err := <-done; err != nil {
		t.Fatal(err)
	}
	r, err = waiter.Recv()
	if err != nil {
		t.Fatal(err)
	}
	for _, res := range r.GetResults() {
		if res.GetAnnotation() == nil {
			t.Fatalf("waiting batch: %v", res)
		}
	}
	waiter.CloseSend()
	if n := ts.s.batchWaiting.Load(); n != 0 {
		t.Fatalf("%d batches still counted waiting", n)
	}
}
