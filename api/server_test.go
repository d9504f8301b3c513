package api

import (
	"context"
	"errors"
	"io"
	"net"
	"net/http"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	dto "github.com/prometheus/client_model/go"
	"google.golang.org/genproto/googleapis/rpc/errdetails"
	"google.golang.org/grpc"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/credentials/insecure"
	healthpb "google.golang.org/grpc/health/grpc_health_v1"
	rpb "google.golang.org/grpc/reflection/grpc_reflection_v1"
	"google.golang.org/grpc/status"

	"termgrove/model"
	pb "termgrove/proto/termgrove/v1"
)

// wantCode fails unless err has code c; with fields, the BadRequest detail
// must name exactly those fields.
func wantCode(t *testing.T, err error, c codes.Code, fields ...string) {
	t.Helper()
	st := status.Convert(err)
	if st.Code() != c {
		t.Fatalf("code %v (%q), want %v", st.Code(), st.Message(), c)
	}
	if len(fields) == 0 {
		return
	}
	var got []string
	for _, d := range st.Details() {
		if br, ok := d.(*errdetails.BadRequest); ok {
			for _, fv := range br.GetFieldViolations() {
				got = append(got, fv.GetField())
			}
		}
	}
	if strings.Join(got, ",") != strings.Join(fields, ",") {
		t.Fatalf("field violations %v, want %v", got, fields)
	}
}

func TestAnnotateUnary(t *testing.T) {
	ts := startServer(t, Config{}, nil)
	resp, err := ts.c.Annotate(ctxT(t), &pb.AnnotateRequest{Id: "r1", Text: "cat purr cat dog weather", IncludeWords: true})
	if err != nil {
		t.Fatal(err)
	}
	if resp.GetId() != "r1" || resp.GetModel() != "tiny" || resp.GetTokens() != 5 {
		t.Fatalf("id %q model %q tokens %d", resp.GetId(), resp.GetModel(), resp.GetTokens())
	}
	cs := resp.GetConcepts()
	if len(cs) != 2 || cs[0].GetIri() != "http://ex.org/c/cats" || cs[1].GetIri() != "http://ex.org/c/dogs" {
		t.Fatalf("concepts %v", cs)
	}
	if p := cs[0].GetPath(); len(p) != 2 || p[0].GetIri() != "http://ex.org/c/animals" || p[1].GetIri() != "http://ex.org/c/cats" {
		t.Fatalf("path %v", p)
	}
	if w := resp.GetWords(); len(w) != 5 || w[2].GetStart() != 9 || w[2].GetEnd() != 12 || w[4].GetConcept() != "" {
		t.Fatalf("words %v", w)
	}
	if resp.GetUncovered() != 0.2 {
		t.Fatalf("uncovered %v", resp.GetUncovered())
	}
	// Round trip to the CLI's result type keeps every field.
	back := ResultFromProto(resp)
	again := ResultToProto(&back)
	again.Model = resp.GetModel()
	if again.String() != resp.String() {
		t.Fatalf("round trip:\n%v\n%v", again, resp)
	}
	// top and min_score reach the annotator.
	resp, err = ts.c.Annotate(ctxT(t), &pb.AnnotateRequest{Model: "tiny", Id: "r2", Text: "cat purr cat dog weather", Top: 1, MinScore: 0.1})
	if err != nil || len(resp.GetConcepts()) != 1 || len(resp.GetWords()) != 0 {
		t.Fatalf("top 1: %v %v", resp, err)
	}
}

func TestAnnotateErrors(t *testing.T) {
	ts := startServer(t, Config{MaxTextBytes: 100}, nil)
	for _, tc := range []struct {
		name   string
		req    *pb.AnnotateRequest
		code   codes.Code
		fields []string
	}{
		{"text too long", &pb.AnnotateRequest{Text: strings.Repeat("x", 101)}, codes.InvalidArgument, []string{"text"}},
		{"negative top", &pb.AnnotateRequest{Text: "cat", Top: -1}, codes.InvalidArgument, []string{"top"}},
		{"min score above 1", &pb.AnnotateRequest{Text: "cat", MinScore: 1.5}, codes.InvalidArgument, []string{"min_score"}},
		{"bad language", &pb.AnnotateRequest{Text: "cat", Language: "en_US!"}, codes.InvalidArgument, []string{"language"}},
		{"bad subject mode", &pb.AnnotateRequest{Text: "cat", SubjectMode: 9}, codes.InvalidArgument, []string{"subject_mode"}},
		{"several at once", &pb.AnnotateRequest{Top: -2, MinScore: -1, Language: "en_US!"}, codes.InvalidArgument, []string{"top", "min_score", "language"}},
		{"unknown subject", &pb.AnnotateRequest{Text: "cat", Subjects: []string{"http://ex.org/c/cats", "http://ex.org/c/none"}}, codes.InvalidArgument, []string{"subjects[1]"}},
		{"empty subject", &pb.AnnotateRequest{Text: "cat", Subjects: []string{""}}, codes.InvalidArgument, []string{"subjects[0]"}},
		{"unknown model", &pb.AnnotateRequest{Model: "nope", Text: "cat"}, codes.NotFound, nil},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := ts.c.Annotate(ctxT(t), tc.req)
			wantCode(t, err, tc.code, tc.fields...)
		})
	}
	// A valid language tag and known subjects pass.
	if _, err := ts.c.Annotate(ctxT(t), &pb.AnnotateRequest{Text: "cat", Language: "en-GB", Subjects: []string{"http://ex.org/c/cats"}, SubjectMode: pb.SubjectMode_SUBJECT_MODE_BOOST}); err != nil {
		t.Fatal(err)
	}
	// An empty text is an empty result, not an error, as in the annotate
	// package and the command line (issue 5: "empty text (an empty
	// result, not an error)").
	res, err := ts.c.Annotate(ctxT(t), &pb.AnnotateRequest{Id: "a"})
	if err != nil {
		t.Fatalf("empty text: %v", err)
	}
	if res.GetId() != "a" || len(res.GetConcepts()) != 0 || res.GetTokens() != 0 || res.GetUncovered() != 0 {
		t.Errorf("empty text: %v, want id a, no concepts, 0 tokens, uncovered 0", res)
	}
}

func TestSeveralModels(t *testing.T) {
	ts := startServer(t, Config{Models: []ModelSpec{{Name: "a", Path: "a.grove"}, {Name: "b", Path: "b.grove"}}}, nil)
	ts.mem.set("b.grove", tinyModel("gen-b"))
	for _, name := range []string{"a", "b"} {
		resp, err := ts.c.Annotate(ctxT(t), &pb.AnnotateRequest{Model: name, Text: "dog"})
		if err != nil || resp.GetModel() != name {
			t.Fatalf("model %s: %v %v", name, resp, err)
		}
	}
	// No default when there are several.
	_, err := ts.c.Annotate(ctxT(t), &pb.AnnotateRequest{Text: "dog"})
	wantCode(t, err, codes.InvalidArgument, "model")
	_, err = ts.c.GetModel(ctxT(t), &pb.GetModelRequest{})
	wantCode(t, err, codes.InvalidArgument, "model")
	_, err = ts.c.GetModel(ctxT(t), &pb.GetModelRequest{Model: "c"})
	wantCode(t, err, codes.NotFound)
	m, err := ts.c.GetModel(ctxT(t), &pb.GetModelRequest{Model: "b"})
	if err != nil || m.GetName() != "b" || strings.Join(m.GetServedModels(), ",") != "a,b" {
		t.Fatalf("%v %v", m, err)
	}
	// Health per model.
	h := healthpb.NewHealthClient(ts.conn)
	for _, svc := range []string{"", ServiceName, ServiceName + "/a", ServiceName + "/b"} {
		r, err := h.Check(ctxT(t), &healthpb.HealthCheckRequest{Service: svc})
		if err != nil || r.GetStatus() != healthpb.HealthCheckResponse_SERVING {
			t.Fatalf("health %q: %v %v", svc, r, err)
		}
	}
	_, err = h.Check(ctxT(t), &healthpb.HealthCheckRequest{Service: ServiceName + "/c"})
	wantCode(t, err, codes.NotFound)
}

func TestAnnotateStream(t *testing.T) {
	ts := startServer(t, Config{MaxStreamRecords: 4}, nil)
	st, err := ts.c.AnnotateStream(ctxT(t))
	if err != nil {
		t.Fatal(err)
	}
	batches := [][]*pb.AnnotateRequest{
		{{Id: "a", Text: "cat"}, {Id: "b", Text: "cat", Top: -1}, {Id: "c", Text: "dog bark"}, {Id: "d", Model: "zzz", Text: "dog"}},
		{{Id: "e", Text: "rain weather"}},
		{},
	}
	for _, b := range batches {
		if err := st.Send(&pb.AnnotateStreamRequest{Records: b}); err != nil {
			t.Fatal(err)
		}
	}
	var ids []string
	var codesGot []codes.Code
	for range batches {
		r, err := st.Recv()
		if err != nil {
			t.Fatal(err)
		}
		for _, res := range r.GetResults() {
			ids = append(ids, res.GetId())
			if e := res.GetError(); e != nil {
				codesGot = append(codesGot, codes.Code(e.GetCode()))
				if e.GetCode() == int32(codes.InvalidArgument) && (len(e.GetFieldViolations()) != 1 || e.GetFieldViolations()[0].GetField() != "records[1].top") {
					t.Fatalf("violations %v", e.GetFieldViolations())
				}
			} else {
				codesGot = append(codesGot, codes.OK)
				if res.GetAnnotation().GetId() != res.GetId() {
					t.Fatalf("annotation id %q in result %q", res.GetAnnotation().GetId(), res.GetId())
				}
			}
		}
	}
	if strings.Join(ids, "") != "abcde" {
		t.Fatalf("ids %v", ids)
	}
	want := []codes.Code{codes.OK, codes.InvalidArgument, codes.OK, codes.NotFound, codes.OK}
	for i := range want {
		if codesGot[i] != want[i] {
			t.Fatalf("codes %v, want %v", codesGot, want)
		}
	}
	// A batch over the limit ends the stream with INVALID_ARGUMENT.
	big := make([]*pb.AnnotateRequest, 5)
	for i := range big {
		big[i] = &pb.AnnotateRequest{Text: "cat"}
	}
	if err := st.Send(&pb.AnnotateStreamRequest{Records: big}); err != nil {
		t.Fatal(err)
	}
	_, err = st.Recv()
	wantCode(t, err, codes.InvalidArgument, "records")
}

func TestGetModel(t *testing.T) {
	ts := startServer(t, Config{}, nil)
	m, err := ts.c.GetModel(ctxT(t), &pb.GetModelRequest{})
	if err != nil {
		t.Fatal(err)
	}
	if m.GetName() != "tiny" || m.GetSchemeIri() != "http://ex.org/scheme" || m.GetConcepts() != 3 || m.GetFreeTopics() != 1 || m.GetWordTypes() != 7 {
		t.Fatalf("%v", m)
	}
	if len(m.GetTopConcepts()) != 1 || m.GetTopConcepts()[0].GetLabel() != "Animals" {
		t.Fatalf("top concepts %v", m.GetTopConcepts())
	}
	if m.GetConceptTokens() != 107 || m.GetFreeTokens() != 65 || m.GetUsedConcepts() != 3 || m.GetAlphaSum() != 1.0 {
		t.Fatalf("counts %v", m)
	}
	if p := m.GetProvenance(); p.GetTokens() != 172 || p.GetSweeps() != 100 || p.GetOptions()["free-topics"] != "1" {
		t.Fatalf("provenance %v", p)
	}
	if r := m.GetReload(); r.GetGeneration() != 1 || r.GetLastError() != "" || r.GetLoadedAt() == nil {
		t.Fatalf("reload %v", r)
	}
}

func TestGetConcept(t *testing.T) {
	ts := startServer(t, Config{}, nil)
	c, err := ts.c.GetConcept(ctxT(t), &pb.GetConceptRequest{Iri: "http://ex.org/c/cats", TopWords: 2})
	if err != nil {
		t.Fatal(err)
	}
	if c.GetPrefLabels()[0].GetText() != "Cats" || c.GetAltLabels()[0].GetText() != "Felines" || c.GetNotations()[0] != "A.1" {
		t.Fatalf("labels %v", c)
	}
	if len(c.GetBroader()) != 1 || c.GetBroader()[0].GetLabel() != "Animals" || len(c.GetNarrower()) != 0 {
		t.Fatalf("hierarchy %v %v", c.GetBroader(), c.GetNarrower())
	}
	// φ_kw = (n_kw + β0 + λ·π_kw) / (n_k + W·β0 + λ·Σπ) with n=42, W=7, β0=.01, λ=10:
	// cat (30 + .01 + 10) / 52.07, purr (12 + .01) / 52.07.
	tw := c.GetTopWords()
	if len(tw) != 2 || tw[0].GetTerm() != "cat" || tw[1].GetTerm() != "purr" || tw[0].GetCount() != 30 {
		t.Fatalf("top words %v", tw)
	}
	if d := tw[0].GetProbability() - 40.01/52.07; d > 1e-12 || d < -1e-12 {
		t.Fatalf("phi(cat) %v", tw[0].GetProbability())
	}
	if c.GetTokens() != 42 || c.GetRecords() != 9 || c.GetAlpha() != 0.2 || c.GetModel() != "tiny" {
		t.Fatalf("counts %v", c)
	}
	a, err := ts.c.GetConcept(ctxT(t), &pb.GetConceptRequest{Iri: "http://ex.org/c/animals", Language: "fr"})
	if err != nil || !a.GetTop() || len(a.GetNarrower()) != 2 || a.GetDefinitions()[0].GetText() == "" {
		t.Fatalf("%v %v", a, err)
	}
	_, err = ts.c.GetConcept(ctxT(t), &pb.GetConceptRequest{Iri: "http://ex.org/c/none"})
	wantCode(t, err, codes.NotFound)
	_, err = ts.c.GetConcept(ctxT(t), &pb.GetConceptRequest{TopWords: -1})
	wantCode(t, err, codes.InvalidArgument, "iri", "top_words")
}

func TestGetGapReport(t *testing.T) {
	ts := startServer(t, Config{}, nil)
	_, err := ts.c.GetGapReport(ctxT(t), &pb.GetGapReportRequest{})
	wantCode(t, err, codes.Unimplemented)
	_, err = ts.c.GetGapReport(ctxT(t), &pb.GetGapReportRequest{Limit: -1})
	wantCode(t, err, codes.InvalidArgument, "limit")
	_, err = ts.c.GetGapReport(ctxT(t), &pb.GetGapReportRequest{Model: "x"})
	wantCode(t, err, codes.NotFound)

	// With the report package wired in.
	ts = startServer(t, Config{Gaps: ReportGaps{}}, nil)
	g, err := ts.c.GetGapReport(ctxT(t), &pb.GetGapReportRequest{Limit: 1})
	if err != nil {
		t.Fatal(err)
	}
	// The tiny model's free topic is about weather and rain.
	if g.GetModel() != "tiny" || len(g.GetUncoveredThemes()) != 1 || len(g.GetUncoveredThemes()[0].GetTopWords()) == 0 ||
		g.GetUncoveredThemes()[0].GetTopWords()[0].GetTerm() != "weather" {
		t.Fatalf("gap report %v", g)
	}
	if len(g.GetUnusedConcepts()) > 1 || len(g.GetCandidateLabels()) > 1 {
		t.Fatalf("limit 1 not applied: %v", g)
	}
}

func TestResourceExhausted(t *testing.T) {
	release := make(chan struct{})
	entered := make(chan struct{}, 4)
	// No waiting: a call is refused as soon as every slot is taken.
	ts := startServer(t, Config{MaxConcurrent: 2, MaxWaiting: -1}, func(text string) {
		if text == "block" {
			entered <- struct{}{}
			<-release
		}
	})
	var wg sync.WaitGroup
	errs := make([]error, 2)
	for i := range 2 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			_, errs[i] = ts.c.Annotate(ctxT(t), &pb.AnnotateRequest{Text: "block"})
		}()
	}
	<-entered
	<-entered
	start := time.Now()
	_, err := ts.c.Annotate(ctxT(t), &pb.AnnotateRequest{Text: "cat"})
	wantCode(t, err, codes.ResourceExhausted)
	// "At once": no queueing behind the blocked calls.
	if d := time.Since(start); d > 2*time.Second {
		t.Fatalf("rejection took %v", d)
	}
	// It was refused in the transport, before a handler ran.
	var shed dto.Metric
	ts.s.metrics.shed.Write(&shed)
	if shed.GetCounter().GetValue() != 1 {
		t.Fatalf("shed counter %v, want 1", shed.GetCounter().GetValue())
	}
	// The handler's own slot check refuses too (a call that passed the
	// transport check just before the slots filled).
	_, err = ts.s.Annotate(context.Background(), &pb.AnnotateRequest{Text: "cat"})
	wantCode(t, err, codes.ResourceExhausted)
	// A stream's record gets the same code in its result.
	st, _ := ts.c.AnnotateStream(ctxT(t))
	st.Send(&pb.AnnotateStreamRequest{Records: []*pb.AnnotateRequest{{Id: "x", Text: "cat"}}})
	r, err := st.Recv()
	if err != nil || r.GetResults()[0].GetError().GetCode() != int32(codes.ResourceExhausted) {
		t.Fatalf("stream under overload: %v %v", r, err)
	}
	st.CloseSend()
	close(release)
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			t.Fatal(err)
		}
	}
	if _, err := ts.c.Annotate(ctxT(t), &pb.AnnotateRequest{Text: "cat"}); err != nil {
		t.Fatalf("after release: %v", err)
	}
	waitCalls(t, ts)
}

func TestShedBacklog(t *testing.T) {
	// One slot and no waiting: a second call is refused in the transport at
	// once.
	release := make(chan struct{})
	entered := make(chan struct{}, 1)
	ts := startServer(t, Config{MaxConcurrent: 1, MaxWaiting: -1}, func(text string) {
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
	for range 20 {
		_, err := ts.c.Annotate(ctxT(t), &pb.AnnotateRequest{Text: "cat"})
		wantCode(t, err, codes.ResourceExhausted)
	}
	if n := ts.s.calls.Load(); n != 1 {
		t.Fatalf("%d calls counted in progress, want 1", n)
	}
	close(release)
	if err := <-done; err != nil {
		t.Fatal(err)
	}
	waitCalls(t, ts)
}

func TestWaitingCalls(t *testing.T) {
	// One slot and two places to wait: while the slot is taken two calls
	// wait, the next ones are refused in the transport at once, and the
	// waiting ones are served, in turn, when the slot frees.
	release := make(chan struct{})
	entered := make(chan struct{}, 1)
	var served atomic.Int64
	ts := startServer(t, Config{MaxConcurrent: 1, MaxWaiting: 2}, func(text string) {
		switch text {
		case "block":
			entered <- struct{}{}
			<-release
		case "cat":
			served.Add(1)
		}
	})
	done := make(chan error, 3)
	go func() {
		_, err := ts.c.Annotate(ctxT(t), &pb.AnnotateRequest{Text: "block"})
		done <- err
	}()
	<-entered
	for range 2 {
		go func() {
			_, err := ts.c.Annotate(ctxT(t), &pb.AnnotateRequest{Text: "cat"})
			done <- err
		}()
	}
	for deadline := time.Now().Add(5 * time.Second); ts.s.calls.Load() != 3; {
		if time.Now().After(deadline) {
			t.Fatalf("%d calls in the server, want 3", ts.s.calls.Load())
		}
		time.Sleep(time.Millisecond)
	}
	var shed dto.Metric
	for i := range 5 {
		start := time.Now()
		_, err := ts.c.Annotate(ctxT(t), &pb.AnnotateRequest{Text: "cat"})
		wantCode(t, err, codes.ResourceExhausted)
		if d := time.Since(start); d > 2*time.Second {
			t.Fatalf("refusal took %v", d)
		}
		ts.s.metrics.shed.Write(&shed)
		if got := shed.GetCounter().GetValue(); got != float64(i+1) {
			t.Fatalf("shed counter %v after %d refusals: not refused in the transport", got, i+1)
		}
	}
	if n := served.Load(); n != 0 {
		t.Fatalf("%d waiting calls ran while the slot was taken", n)
	}
	// A waiting call whose deadline passes gives up with DEADLINE_EXCEEDED
	// and leaves its place.
	ctx, cancel := context.WithTimeout(ctxT(t), 50*time.Millisecond)
	defer cancel()
	ts2 := startServer(t, Config{MaxConcurrent: 1, MaxWaiting: 1}, func(text string) {
		if text == "block" {
			entered <- struct{}{}
			<-release
		}
	})
	go func() {
		_, err := ts2.c.Annotate(ctxT(t), &pb.AnnotateRequest{Text: "block"})
		done <- err
	}()
	<-entered
	_, err := ts2.c.Annotate(ctx, &pb.AnnotateRequest{Text: "cat"})
	wantCode(t, err, codes.DeadlineExceeded)
	close(release)
	for range 4 {
		if err := <-done; err != nil {
			t.Fatal(err)
		}
	}
	if n := served.Load(); n != 2 {
		t.Fatalf("%d waiting calls served, want 2", n)
	}
	waitCalls(t, ts)
	waitCalls(t, ts2)
}

func TestDefaultDeadline(t *testing.T) {
	ts := startServer(t, Config{DefaultDeadline: 100 * time.Millisecond}, func(text string) {
		if text == "slow" {
			time.Sleep(400 * time.Millisecond)
		}
	})
	// No client deadline: the server's default applies.
	_, err := ts.c.Annotate(context.Background(), &pb.AnnotateRequest{Text: "slow"})
	wantCode(t, err, codes.DeadlineExceeded)
	// A client's own longer deadline wins over the default.
	ctx, cancel := context.WithTimeout(context.Background(), 5*time.Second)
	defer cancel()
	if _, err := ts.c.Annotate(ctx, &pb.AnnotateRequest{Text: "slow"}); err != nil {
		t.Fatalf("client deadline 5s: %v", err)
	}
}

func TestPanicBecomesInternal(t *testing.T) {
	ts := startServer(t, Config{}, func(text string) {
		if text == "boom" {
			panic("annotator exploded")
		}
	})
	_, err := ts.c.Annotate(ctxT(t), &pb.AnnotateRequest{Text: "boom"})
	wantCode(t, err, codes.Internal)
	st, _ := ts.c.AnnotateStream(ctxT(t))
	st.Send(&pb.AnnotateStreamRequest{Records: []*pb.AnnotateRequest{{Id: "1", Text: "boom"}, {Id: "2", Text: "cat"}}})
	r, err := st.Recv()
	if err != nil || r.GetResults()[0].GetError().GetCode() != int32(codes.Internal) || r.GetResults()[1].GetAnnotation() == nil {
		t.Fatalf("stream: %v %v", r, err)
	}
	st.CloseSend()
	if _, err := ts.c.Annotate(ctxT(t), &pb.AnnotateRequest{Text: "cat"}); err != nil {
		t.Fatalf("after panic: %v", err)
	}
}

func TestHandlerPanicInterceptor(t *testing.T) {
	ts := startServer(t, Config{}, nil)
	// A panic outside the annotator (here: in GetGapReport's reporter) is
	// caught by the interceptor.
	ts.s.cfg.Gaps = panicGaps{}
	_, err := ts.c.GetGapReport(ctxT(t), &pb.GetGapReportRequest{})
	wantCode(t, err, codes.Internal)
	if _, err := ts.c.GetModel(ctxT(t), &pb.GetModelRequest{}); err != nil {
		t.Fatalf("after panic: %v", err)
	}
}

type panicGaps struct{}

func (panicGaps) GapReport(context.Context, string, *model.Model, int) (*pb.GetGapReportResponse, error) {
	panic("reporter exploded")
}

func TestReflection(t *testing.T) {
	ts := startServer(t, Config{}, nil)
	rc, err := rpb.NewServerReflectionClient(ts.conn).ServerReflectionInfo(ctxT(t))
	if err != nil {
		t.Fatal(err)
	}
	rc.Send(&rpb.ServerReflectionRequest{MessageRequest: &rpb.ServerReflectionRequest_ListServices{}})
	r, err := rc.Recv()
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, s := range r.GetListServicesResponse().GetService() {
		names = append(names, s.GetName())
	}
	got := strings.Join(names, " ")
	for _, want := range []string{ServiceName, "grpc.health.v1.Health"} {
		if !strings.Contains(got, want) {
			t.Fatalf("reflection lists %q, missing %s", got, want)
		}
	}
	rc.Send(&rpb.ServerReflectionRequest{MessageRequest: &rpb.ServerReflectionRequest_FileContainingSymbol{FileContainingSymbol: ServiceName}})
	r, err = rc.Recv()
	if err != nil || len(r.GetFileDescriptorResponse().GetFileDescriptorProto()) == 0 {
		t.Fatalf("descriptor: %v %v", r, err)
	}
	rc.CloseSend()
}

func TestMetrics(t *testing.T) {
	ts := startServer(t, Config{}, nil)
	ts.c.Annotate(ctxT(t), &pb.AnnotateRequest{Text: "cat dog"})
	ts.c.Annotate(ctxT(t), &pb.AnnotateRequest{Text: "cat", Top: -1})
	resp, err := http.Get("http://" + ts.s.MetricsAddr().String() + "/metrics")
	if err != nil {
		t.Fatal(err)
	}
	body, _ := io.ReadAll(resp.Body)
	resp.Body.Close()
	for _, want := range []string{
		`termgrove_grpc_requests_total{code="OK",method="/termgrove.v1.AnnotationService/Annotate"} 1`,
		`termgrove_grpc_requests_total{code="InvalidArgument",method="/termgrove.v1.AnnotationService/Annotate"} 1`,
		`termgrove_grpc_request_duration_seconds_count{method="/termgrove.v1.AnnotationService/Annotate"} 2`,
		`termgrove_tokens_annotated_total{model="tiny"} 2`,
		`termgrove_annotations_in_flight 0`,
		`termgrove_model_info{concepts="3",free_topics="1",generation="1",model="tiny",path="tiny.grove",scheme="http://ex.org/scheme",word_types="7"} 1`,
		`go_goroutines`,
	} {
		if !strings.Contains(string(body), want) {
			t.Errorf("metrics lack %s", want)
		}
	}
}

func TestPprof(t *testing.T) {
	get := func(ts *testServer) (int, string) {
		resp, err := http.Get("http://" + ts.s.MetricsAddr().String() + "/debug/pprof/")
		if err != nil {
			t.Fatal(err)
		}
		body, _ := io.ReadAll(resp.Body)
		resp.Body.Close()
		return resp.StatusCode, string(body)
	}
	if code, _ := get(startServer(t, Config{}, nil)); code != http.StatusNotFound {
		t.Fatalf("profiles served by default: HTTP %d", code)
	}
	code, body := get(startServer(t, Config{Pprof: true}, nil))
	if code != http.StatusOK || !strings.Contains(body, "goroutine") {
		t.Fatalf("with Pprof: HTTP %d %.200s", code, body)
	}
}

func TestReloadUnderTraffic(t *testing.T) {
	ts := startServer(t, Config{MaxConcurrent: 16}, nil)
	stop := make(chan struct{})
	var calls, failures atomic.Int64
	var wg sync.WaitGroup
	for range 4 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for {
				select {
				case <-stop:
					return
				default:
				}
				_, err := ts.c.Annotate(ctxT(t), &pb.AnnotateRequest{Text: "cat dog bark"})
				calls.Add(1)
				if err != nil {
					failures.Add(1)
					t.Errorf("call during reload: %v", err)
				}
			}
		}()
	}
	for i := range 20 {
		next := tinyModel("gen" + string(rune('b'+i)))
		ts.mem.set("tiny.grove", next)
		if err := ts.s.Reload(); err != nil {
			t.Fatal(err)
		}
		time.Sleep(5 * time.Millisecond)
	}
	m, _ := ts.c.GetModel(ctxT(t), &pb.GetModelRequest{})
	if m.GetReload().GetGeneration() != 21 || m.GetProvenance().GetTermgroveVersion() != "gen"+string(rune('b'+19)) {
		t.Fatalf("after 20 reloads: %v", m.GetReload())
	}
	// A bad file keeps the old model and is reported.
	ts.mem.set("tiny.grove", nil)
	err := ts.s.Reload()
	if !errors.Is(err, ErrReload) {
		t.Fatalf("bad reload: %v", err)
	}
	m, _ = ts.c.GetModel(ctxT(t), &pb.GetModelRequest{})
	if m.GetReload().GetGeneration() != 21 || !strings.Contains(m.GetReload().GetLastError(), "tiny.grove") {
		t.Fatalf("after bad reload: %v", m.GetReload())
	}
	time.Sleep(20 * time.Millisecond)
	close(stop)
	wg.Wait()
	if calls.Load() < 20 || failures.Load() != 0 {
		t.Fatalf("%d calls, %d failures", calls.Load(), failures.Load())
	}
}

func TestShutdownUnderTraffic(t *testing.T) {
	ts := startServer(t, Config{MaxConcurrent: 16}, func(text string) {
		if text == "slow" {
			time.Sleep(300 * time.Millisecond)
		}
	})
	const n = 8
	var wg sync.WaitGroup
	errs := make(chan error, n)
	for range n {
		wg.Add(1)
		go func() {
			defer wg.Done()
			_, err := ts.c.Annotate(ctxT(t), &pb.AnnotateRequest{Text: "slow"})
			errs <- err
		}()
	}
	// Let every call reach the server, then shut down mid-call.
	deadline := time.Now().Add(5 * time.Second)
	for ts.s.metrics.inFlightValue() < n && time.Now().Before(deadline) {
		time.Sleep(5 * time.Millisecond)
	}
	// A health watcher must see NOT_SERVING and must not hold up the drain.
	watch, err := healthpb.NewHealthClient(ts.conn).Watch(ctxT(t), &healthpb.HealthCheckRequest{})
	if err != nil {
		t.Fatal(err)
	}
	if r, err := watch.Recv(); err != nil || r.GetStatus() != healthpb.HealthCheckResponse_SERVING {
		t.Fatalf("watch: %v %v", r, err)
	}
	start := time.Now()
	drained := ts.s.Shutdown(5 * time.Second)
	if d := time.Since(start); d > 3*time.Second {
		t.Errorf("drain took %v: a health watcher held it up", d)
	}
	if r, err := watch.Recv(); err != nil || r.GetStatus() != healthpb.HealthCheckResponse_NOT_SERVING {
		t.Errorf("watcher after shutdown: %v %v", r, err)
	}
	wg.Wait()
	close(errs)
	for err := range errs {
		if err != nil {
			t.Errorf("in-flight call cut short: %v", err)
		}
	}
	if !drained {
		t.Fatal("not drained within grace")
	}
	if err := <-ts.done; err != nil {
		t.Fatalf("Serve: %v", err)
	}
	// New calls are refused.
	if _, err := ts.c.Annotate(ctxT(t), &pb.AnnotateRequest{Text: "cat"}); status.Code(err) != codes.Unavailable {
		t.Fatalf("after shutdown: %v", err)
	}
}

func TestShutdownForcesAfterGrace(t *testing.T) {
	release := make(chan struct{})
	defer close(release)
	ts := startServer(t, Config{}, func(text string) {
		if text == "stuck" {
			<-release
		}
	})
	go ts.c.Annotate(context.Background(), &pb.AnnotateRequest{Text: "stuck"})
	for ts.s.metrics.inFlightValue() < 1 {
		time.Sleep(5 * time.Millisecond)
	}
	start := time.Now()
	if ts.s.Shutdown(200 * time.Millisecond) {
		t.Fatal("reported drained with a stuck call")
	}
	if d := time.Since(start); d > 3*time.Second {
		t.Fatalf("forced stop took %v", d)
	}
}

func TestMaxConnectionAge(t *testing.T) {
	ts := startServer(t, Config{MaxConnectionAge: 200 * time.Millisecond, Grace: time.Second}, nil)
	var dials atomic.Int32
	conn := dial(t, ts.s.Addr().String(), grpc.WithTransportCredentials(insecure.NewCredentials()),
		grpc.WithContextDialer(func(ctx context.Context, addr string) (net.Conn, error) {
			dials.Add(1)
			return (&net.Dialer{}).DialContext(ctx, "tcp", addr)
		}))
	defer conn.Close()
	c := pb.NewAnnotationServiceClient(conn)
	// Calls keep working across the server's GOAWAYs: the client reconnects.
	deadline := time.Now().Add(time.Second)
	for n := 0; time.Now().Before(deadline); n++ {
		if _, err := c.Annotate(ctxT(t), &pb.AnnotateRequest{Text: "cat"}); err != nil {
			t.Fatalf("call %d: %v", n, err)
		}
		time.Sleep(10 * time.Millisecond)
	}
	if n := dials.Load(); n < 2 {
		t.Fatalf("%d connections in 1 s with a 200 ms maximum age", n)
	}
}
