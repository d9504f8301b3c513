package api

import (
	"context"
	"errors"
	"fmt"
	"io"
	"log/slog"
	"runtime"
	"runtime/debug"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"time"

	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/status"
	"google.golang.org/protobuf/types/known/timestamppb"

	"termgrove/annotate"
	"termgrove/model"
	pb "termgrove/proto/termgrove/v1"
)

// GapReporter builds the gap report of a model; the report package provides
// one. It returns a gRPC status error or a plain error (then INTERNAL).
type GapReporter interface {
	GapReport(ctx context.Context, name string, m *model.Model, limit int) (*pb.GetGapReportResponse, error)
}

// errBusy is the answer to a call beyond Config.MaxConcurrent.
var errBusy = status.Error(codes.ResourceExhausted, "server busy: all annotation slots taken; retry with backoff")

// pick returns the served model named name ("" = the only one), or the
// status error for the call. field is the request field path for errors.
func (s *Server) pick(name, field string) (*served, error) {
	if name == "" {
		if len(s.models.names) == 1 {
			return s.models.byName[s.models.names[0]], nil
		}
		var v violations
		v.add(field, "required: this server serves several models (%s)", strings.Join(s.models.names, ", "))
		return nil, v.err()
	}
	sv, ok := s.models.byName[name]
	if !ok {
		return nil, status.Errorf(codes.NotFound, "%s: no model named %q (served: %s)", field, name, strings.Join(s.models.names, ", "))
	}
	return sv, nil
}

// Annotate implements the unary annotation call.
func (s *Server) Annotate(ctx context.Context, r *pb.AnnotateRequest) (*pb.AnnotateResponse, error) {
	var v violations
	validateAnnotate(r, "", s.cfg.MaxTextBytes, &v)
	if err := v.err(); err != nil {
		return nil, err
	}
	resp, err := s.annotateOne(ctx, r, "")
	if err != nil {
		return nil, err
	}
	return resp, nil
}

// annotateOne annotates a validated unary request: picks the model, checks
// the subjects against it, takes an annotation slot, and runs the annotator
// with panics turned into INTERNAL. With Config.MaxWaiting it waits for a
// slot until the call's deadline (shed bounds how many calls wait);
// without, it fails at once with RESOURCE_EXHAUSTED when none is free.
func (s *Server) annotateOne(ctx context.Context, r *pb.AnnotateRequest, prefix string) (*pb.AnnotateResponse, error) {
	sv, cur, err := s.prepare(ctx, r, prefix)
	if err != nil {
		return nil, err
	}
	select {
	case s.sem <- struct{}{}:
	default:
		if s.cfg.MaxWaiting <= 0 {
			s.metrics.annotations.WithLabelValues(sv.spec.Name, codes.ResourceExhausted.String()).Inc()
			return nil, errBusy
		}
		select {
		case s.sem <- struct{}{}:
		case <-ctx.Done():
			return nil, status.FromContextError(ctx.Err()).Err()
		}
	}
	res, err := s.run(sv, cur, r)
	<-s.sem
	return s.finish(ctx, sv, res, err)
}

// prepare picks the model of a validated request and checks its subjects
// against it.
func (s *Server) prepare(ctx context.Context, r *pb.AnnotateRequest, prefix string) (*served, *loaded, error) {
	sv, err := s.pick(r.GetModel(), join(prefix, "model"))
	if err != nil {
		return nil, nil, err
	}
	cur := sv.cur.Load()
	if sc := cur.m.Scheme; sc != nil {
		var v violations
		for i, iri := range r.GetSubjects() {
			if _, ok := sc.Lookup(iri); !ok {
				v.add(join(prefix, "subjects["+strconv.Itoa(i)+"]"), "%q is not a concept of model %q", iri, sv.spec.Name)
			}
		}
		if err := v.err(); err != nil {
			return nil, nil, err
		}
	}
	if err := ctx.Err(); err != nil {
		return nil, nil, status.FromContextError(err).Err()
	}
	return sv, cur, nil
}

// run annotates r with cur's annotator; the caller holds a slot.
func (s *Server) run(sv *served, cur *loaded, r *pb.AnnotateRequest) (*annotate.Result, error) {
	s.metrics.enter()
	start := time.Now()
	res, err := s.runAnnotator(cur.ann, r)
	s.metrics.leave()
	s.metrics.annotations.WithLabelValues(sv.spec.Name, status.Code(err).String()).Inc()
	if err != nil {
		return nil, err
	}
	s.metrics.annLatency.WithLabelValues(sv.spec.Name).Observe(time.Since(start).Seconds())
	s.metrics.tokens.WithLabelValues(sv.spec.Name).Add(float64(res.Tokens))
	return res, nil
}

// finish turns the outcome of run into the response.
func (s *Server) finish(ctx context.Context, sv *served, res *annotate.Result, err error) (*pb.AnnotateResponse, error) {
	if err != nil {
		return nil, err
	}
	if err := ctx.Err(); err != nil {
		// The caller gave up meanwhile; say so rather than pretend success.
		return nil, status.FromContextError(err).Err()
	}
	out := ResultToProto(res)
	out.Model = sv.spec.Name
	return out, nil
}

// runAnnotator calls the annotator; a panic becomes INTERNAL for this
// record only, an error from the annotator INVALID_ARGUMENT (it is about
// this input, e.g. a language the model cannot analyse).
func (s *Server) runAnnotator(a Annotator, r *pb.AnnotateRequest) (res *annotate.Result, err error) {
	defer func() {
		if p := recover(); p != nil {
			s.log.Error("panic in annotator", slog.String("id", r.GetId()),
				slog.String("panic", fmt.Sprint(p)), slog.String("stack", string(debug.Stack())))
			err = status.Error(codes.Internal, "internal error while annotating; the server logged it")
		}
	}()
	opt := OptionsFromProto(r)
	opt.MaxBytes = s.cfg.MaxTextBytes
	res, err = a.Annotate(r.GetId(), r.GetText(), opt)
	if err == nil && res == nil {
		err = status.Error(codes.Internal, "annotator returned no result")
	}
	if err != nil {
		if _, ok := status.FromError(err); ok && status.Code(err) != codes.Unknown {
			return res, err
		}
		return res, status.Errorf(codes.InvalidArgument, "record %q: %v", r.GetId(), err)
	}
	if res.ID == "" {
		res.ID = r.GetId()
	}
	return res, nil
}

// AnnotateStream implements the streaming call: batches in, one result per
// record out, in order. A record's failure is reported in its result; only a
// batch larger than the limit or a transport failure ends the stream.
func (s *Server) AnnotateStream(stream pb.AnnotationService_AnnotateStreamServer) error {
	ctx := stream.Context()
	for {
		req, err := stream.Recv()
		if errors.Is(err, io.EOF) {
			return nil
		}
		if err != nil {
			return err
		}
		recs := req.GetRecords()
		if len(recs) > s.cfg.MaxStreamRecords {
			var v violations
			v.add("records", "%d records in one message, more than the server's limit of %d", len(recs), s.cfg.MaxStreamRecords)
			return v.err()
		}
		out := &pb.AnnotateStreamResponse{Results: s.annotateBatch(ctx, recs)}
		if err := ctx.Err(); err != nil {
			return status.FromContextError(err).Err()
		}
		if err := stream.Send(out); err != nil {
			return err
		}
	}
}

// batchRecord is one record of a stream message on its way through
// annotateBatch.
type batchRecord struct {
	r   *pb.AnnotateRequest
	sv  *served
	cur *loaded
	res *pb.AnnotateStreamResult
}

// annotateBatch annotates the records of one stream message and returns
// their results in order. Records that pass validation are annotated by
// up to GOMAXPROCS workers at once, each holding an annotation slot for the
// whole message: the slots are taken without waiting, as many as are free;
// with none free the message waits for one (takeSlots), and when it may not
// wait every such record gets RESOURCE_EXHAUSTED, as a unary call would.
func (s *Server) annotateBatch(ctx context.Context, recs []*pb.AnnotateRequest) []*pb.AnnotateStreamResult {
	results := make([]*pb.AnnotateStreamResult, len(recs))
	todo := make([]batchRecord, 0, len(recs))
	for i, r := range recs {
		prefix := "records[" + strconv.Itoa(i) + "]"
		res := &pb.AnnotateStreamResult{Id: r.GetId()}
		results[i] = res
		var v violations
		validateAnnotate(r, prefix, s.cfg.MaxTextBytes, &v)
		err := v.err()
		var sv *served
		var cur *loaded
		if err == nil {
			sv, cur, err = s.prepare(ctx, r, prefix)
		}
		if err != nil {
			res.Outcome = &pb.AnnotateStreamResult_Error{Error: recordError(err)}
			continue
		}
		todo = append(todo, batchRecord{r: r, sv: sv, cur: cur, res: res})
	}
	workers := 0
	if len(todo) > 0 {
		workers = s.takeSlots(ctx, min(len(todo), runtime.GOMAXPROCS(0)))
	}
	if workers == 0 {
		for _, b := range todo {
			s.metrics.annotations.WithLabelValues(b.sv.spec.Name, codes.ResourceExhausted.String()).Inc()
			b.res.Outcome = &pb.AnnotateStreamResult_Error{Error: recordError(errBusy)}
		}
		return results
	}
	var next atomic.Int64
	work := func() {
		defer func() { <-s.sem }()
		for {
			i := int(next.Add(1)) - 1
			if i >= len(todo) {
				return
			}
			s.annotateRecord(ctx, &todo[i])
		}
	}
	var wg sync.WaitGroup
	for range workers - 1 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			work()
		}()
	}
	work()
	wg.Wait()
	return results
}

// takeSlots takes up to n free annotation slots without waiting. With none
// free it waits for one, as a queued unary call does, when fewer than
// Config.MaxWaiting stream messages are waiting already and until ctx ends;
// otherwise it takes none. It returns how many it took.
func (s *Server) takeSlots(ctx context.Context, n int) int {
	took := 0
take:
	for took < n {
		select {
		case s.sem <- struct{}{}:
			took++
		default:
			break take
		}
	}
	if took > 0 || s.cfg.MaxWaiting <= 0 {
		return took
	}
	if s.batchWaiting.Add(1) > int64(s.cfg.MaxWaiting) {
		s.batchWaiting.Add(-1)
		return 0
	}
	defer s.batchWaiting.Add(-1)
	select {
	case s.sem <- struct{}{}:
		return 1
	case <-ctx.Done():
		return 0
	}
}

// annotateRecord annotates one record of a batch with a slot held, and sets
// its outcome. A panic (the annotator's own are already turned into
// INTERNAL by runAnnotator) becomes INTERNAL for this record: it may run on
// a goroutine of its own, out of the interceptor's reach.
func (s *Server) annotateRecord(ctx context.Context, b *batchRecord) {
	defer func() {
		if p := recover(); p != nil {
			err := s.panicked(ServiceName+"/AnnotateStream", p)
			b.res.Outcome = &pb.AnnotateStreamResult_Error{Error: recordError(err)}
		}
	}()
	var a *pb.AnnotateResponse
	err := ctx.Err()
	if err != nil {
		err = status.FromContextError(err).Err()
	} else {
		var res *annotate.Result
		res, err = s.run(b.sv, b.cur, b.r)
		a, err = s.finish(ctx, b.sv, res, err)
	}
	if err != nil {
		b.res.Outcome = &pb.AnnotateStreamResult_Error{Error: recordError(err)}
		return
	}
	b.res.Outcome = &pb.AnnotateStreamResult_Annotation{Annotation: a}
}

// recordError turns a status error into a streamed record's error.
func recordError(err error) *pb.RecordError {
	st := status.Convert(err)
	re := &pb.RecordError{Code: int32(st.Code()), Message: st.Message()}
	for _, fv := range badRequestViolations(st) {
		re.FieldViolations = append(re.FieldViolations, &pb.FieldViolation{Field: fv.GetField(), Description: fv.GetDescription()})
	}
	return re
}

// GetModel describes a served model.
func (s *Server) GetModel(ctx context.Context, r *pb.GetModelRequest) (*pb.GetModelResponse, error) {
	var v violations
	if len(r.GetModel()) > maxModelBytes {
		v.add("model", "longer than %d bytes", maxModelBytes)
	}
	if err := v.err(); err != nil {
		return nil, err
	}
	sv, err := s.pick(r.GetModel(), "model")
	if err != nil {
		return nil, err
	}
	cur := sv.cur.Load()
	m := cur.m
	out := &pb.GetModelResponse{
		Name:         sv.spec.Name,
		Path:         sv.spec.Path,
		Languages:    m.Analyzer.Languages,
		Concepts:     int32(m.C),
		FreeTopics:   int32(m.F),
		WordTypes:    int32(len(m.Words)),
		Beta0:        m.Beta0,
		Lambda:       m.Lambda,
		ServedModels: append([]string(nil), s.models.names...),
	}
	lang := mainLanguage(m)
	if sc := m.Scheme; sc != nil {
		out.SchemeIri = sc.IRI
		out.SchemeTitle = labelsToProto(sc.Title)
		for i := range sc.Concepts {
			if sc.Concepts[i].Top {
				out.TopConcepts = append(out.TopConcepts, &pb.ConceptRef{Iri: sc.Concepts[i].IRI, Label: sc.Concepts[i].PrefLabel(lang)})
			}
		}
	}
	for _, a := range m.Alpha {
		out.AlphaSum += a
	}
	for k, n := range m.Totals {
		if k < m.C {
			out.ConceptTokens += n
			if n > 0 {
				out.UsedConcepts++
			}
		} else {
			out.FreeTokens += n
		}
	}
	p := m.Provenance
	out.Provenance = &pb.Provenance{
		TermgroveVersion: p.TermgroveVersion, Created: p.Created,
		VocabFile: p.VocabFile, VocabSha256: p.VocabSHA256,
		CorpusFile: p.CorpusFile, CorpusSha256: p.CorpusSHA256,
		Records: int64(p.Records), Tokens: p.Tokens, Sweeps: int32(p.Sweeps), Seed: p.Seed,
		Options: p.Options, HeldOutLlPerWord: p.HeldOutLLPerWord,
	}
	out.Reload = &pb.ReloadStatus{LoadedAt: timestamppb.New(cur.at), Generation: cur.gen}
	if last := sv.last.Load(); last != nil {
		out.Reload.LastAttempt = timestamppb.New(last.at)
		if last.err != nil {
			out.Reload.LastError = last.err.Error()
		}
	}
	return out, nil
}

// GetConcept describes one concept of a served model.
func (s *Server) GetConcept(ctx context.Context, r *pb.GetConceptRequest) (*pb.GetConceptResponse, error) {
	var v violations
	if len(r.GetModel()) > maxModelBytes {
		v.add("model", "longer than %d bytes", maxModelBytes)
	}
	if r.GetIri() == "" || len(r.GetIri()) > maxIRIBytes {
		v.add("iri", "must be a concept IRI of 1..%d bytes", maxIRIBytes)
	}
	if n := r.GetTopWords(); n < 0 || n > maxTopWords {
		v.add("top_words", "%d not in 0..%d", n, maxTopWords)
	}
	if l := r.GetLanguage(); l != "" && !validLanguage(l) {
		v.add("language", "%q is not a BCP 47 language tag", l)
	}
	if err := v.err(); err != nil {
		return nil, err
	}
	sv, err := s.pick(r.GetModel(), "model")
	if err != nil {
		return nil, err
	}
	m := sv.cur.Load().m
	if m.Scheme == nil {
		return nil, status.Errorf(codes.NotFound, "model %q has no concept scheme", sv.spec.Name)
	}
	k, ok := m.Scheme.Lookup(r.GetIri())
	if !ok || k >= m.C {
		return nil, status.Errorf(codes.NotFound, "iri: %q is not a concept of model %q", r.GetIri(), sv.spec.Name)
	}
	lang := r.GetLanguage()
	if lang == "" {
		lang = mainLanguage(m)
	}
	c := &m.Scheme.Concepts[k]
	out := &pb.GetConceptResponse{
		Iri:          c.IRI,
		PrefLabels:   labelsToProto(c.Pref),
		AltLabels:    labelsToProto(c.Alt),
		HiddenLabels: labelsToProto(c.Hidden),
		Notations:    c.Notation,
		Definitions:  labelsToProto(c.Definition),
		ScopeNotes:   labelsToProto(c.ScopeNote),
		Top:          c.Top,
		Deprecated:   c.Deprecated,
		Model:        sv.spec.Name,
	}
	ref := func(i int) *pb.ConceptRef {
		cc := &m.Scheme.Concepts[i]
		return &pb.ConceptRef{Iri: cc.IRI, Label: cc.PrefLabel(lang)}
	}
	for _, b := range c.Broader {
		out.Broader = append(out.Broader, ref(b))
	}
	for _, n := range c.Narrower {
		out.Narrower = append(out.Narrower, ref(n))
	}
	if k < len(m.Totals) {
		out.Tokens = m.Totals[k]
	}
	if k < len(m.DocCounts) {
		out.Records = int64(m.DocCounts[k])
	}
	if k < len(m.Alpha) {
		out.Alpha = m.Alpha[k]
	}
	n := int(r.GetTopWords())
	if n == 0 {
		n = 20
	}
	out.TopWords = topWords(m, k, n)
	return out, nil
}

// topWords returns the n most probable words of topic k by φ_kw (prior
// mass included, so a concept fitted to few records still shows its label
// terms), with their fitted counts.
func topWords(m *model.Model, k, n int) []*pb.TopWord {
	ws := m.TopWords(k, n)
	out := make([]*pb.TopWord, 0, len(ws))
	for _, w := range ws {
		if int(w.Word) < 0 || int(w.Word) >= len(m.Words) {
			continue
		}
		out = append(out, &pb.TopWord{Term: m.Words[w.Word], Count: int64(m.Count(k, int(w.Word))), Probability: w.Weight})
	}
	return out
}

// GetGapReport returns the gap report through Config.Gaps, or UNIMPLEMENTED.
func (s *Server) GetGapReport(ctx context.Context, r *pb.GetGapReportRequest) (*pb.GetGapReportResponse, error) {
	var v violations
	if len(r.GetModel()) > maxModelBytes {
		v.add("model", "longer than %d bytes", maxModelBytes)
	}
	if r.GetLimit() < 0 {
		v.add("limit", "%d is negative", r.GetLimit())
	}
	if err := v.err(); err != nil {
		return nil, err
	}
	sv, err := s.pick(r.GetModel(), "model")
	if err != nil {
		return nil, err
	}
	if s.cfg.Gaps == nil {
		return nil, status.Error(codes.Unimplemented, "gap reports are not served by this server yet; run `termgrove report --model FILE --records FILE`")
	}
	out, err := s.cfg.Gaps.GapReport(ctx, sv.spec.Name, sv.cur.Load().m, int(r.GetLimit()))
	if err != nil {
		if _, ok := status.FromError(err); ok {
			return nil, err
		}
		return nil, status.Errorf(codes.Internal, "gap report: %v", err)
	}
	out.Model = sv.spec.Name
	return out, nil
}

// mainLanguage is the model's first analyzer language, "en" by default.
func mainLanguage(m *model.Model) string {
	if len(m.Analyzer.Languages) > 0 {
		return m.Analyzer.Languages[0]
	}
	return "en"
}
