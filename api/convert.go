package api

import (
	"google.golang.org/genproto/googleapis/rpc/errdetails"
	"google.golang.org/grpc/status"

	"termgrove/annotate"
	"termgrove/concepts"
	pb "termgrove/proto/termgrove/v1"
)

// OptionsFromProto returns the annotation options of a request.
func OptionsFromProto(r *pb.AnnotateRequest) annotate.Options {
	o := annotate.Options{
		Top:          int(r.GetTop()),
		MinScore:     r.GetMinScore(),
		Subjects:     r.GetSubjects(),
		IncludeWords: r.GetIncludeWords(),
		Language:     r.GetLanguage(),
	}
	if r.GetSubjectMode() == pb.SubjectMode_SUBJECT_MODE_BOOST {
		o.SubjectMode = annotate.Boost
	}
	return o
}

// RequestFromOptions builds a request for text with options o (the client
// side of OptionsFromProto).
func RequestFromOptions(modelName, id, text string, o annotate.Options) *pb.AnnotateRequest {
	r := &pb.AnnotateRequest{
		Model:        modelName,
		Id:           id,
		Text:         text,
		Top:          int32(o.Top),
		MinScore:     o.MinScore,
		Subjects:     o.Subjects,
		IncludeWords: o.IncludeWords,
		Language:     o.Language,
	}
	if len(o.Subjects) > 0 {
		r.SubjectMode = pb.SubjectMode_SUBJECT_MODE_RESTRICT
		if o.SubjectMode == annotate.Boost {
			r.SubjectMode = pb.SubjectMode_SUBJECT_MODE_BOOST
		}
	}
	return r
}

// ResultToProto converts an annotation result to its response message.
func ResultToProto(res *annotate.Result) *pb.AnnotateResponse {
	out := &pb.AnnotateResponse{
		Id:              res.ID,
		Uncovered:       res.Uncovered,
		Tokens:          int32(res.Tokens),
		Language:        res.Language,
		Fallback:        res.Fallback,
		InvalidUtf8:     int32(res.Invalid),
		Unknown:         int32(res.Unknown),
		UnknownSubjects: res.UnknownSubjects,
		Concepts:        make([]*pb.AnnotatedConcept, len(res.Concepts)),
	}
	for i := range res.Concepts {
		c := &res.Concepts[i]
		pc := &pb.AnnotatedConcept{Iri: c.IRI, Label: c.Label, Score: c.Score, Path: make([]*pb.PathNode, len(c.Path))}
		for j, n := range c.Path {
			pc.Path[j] = &pb.PathNode{Iri: n.IRI, Label: n.Label, Score: n.Score}
		}
		for _, sp := range c.Support {
			pc.Support = append(pc.Support, &pb.Support{Term: sp.Term, Weight: sp.Weight})
		}
		out.Concepts[i] = pc
	}
	if len(res.Words) > 0 {
		out.Words = make([]*pb.Word, len(res.Words))
		for i, w := range res.Words {
			out.Words[i] = &pb.Word{Start: int32(w.Start), End: int32(w.End), Text: w.Text, Term: w.Term, Concept: w.Concept, P: w.P}
		}
	}
	return out
}

// ResultFromProto converts a response back to an annotation result, so that
// a client formats a remote result exactly like a local one.
func ResultFromProto(r *pb.AnnotateResponse) annotate.Result {
	res := annotate.Result{
		ID:              r.GetId(),
		Uncovered:       r.GetUncovered(),
		Tokens:          int(r.GetTokens()),
		Language:        r.GetLanguage(),
		Fallback:        r.GetFallback(),
		Invalid:         int(r.GetInvalidUtf8()),
		Unknown:         int(r.GetUnknown()),
		UnknownSubjects: r.GetUnknownSubjects(),
		Concepts:        make([]annotate.Concept, len(r.GetConcepts())),
	}
	for i, c := range r.GetConcepts() {
		ac := annotate.Concept{IRI: c.GetIri(), Label: c.GetLabel(), Score: c.GetScore(), Path: make([]annotate.PathNode, len(c.GetPath()))}
		for j, n := range c.GetPath() {
			ac.Path[j] = annotate.PathNode{IRI: n.GetIri(), Label: n.GetLabel(), Score: n.GetScore()}
		}
		for _, sp := range c.GetSupport() {
			ac.Support = append(ac.Support, annotate.Support{Term: sp.GetTerm(), Weight: sp.GetWeight()})
		}
		res.Concepts[i] = ac
	}
	for _, w := range r.GetWords() {
		res.Words = append(res.Words, annotate.Word{Start: int(w.GetStart()), End: int(w.GetEnd()), Text: w.GetText(), Term: w.GetTerm(), Concept: w.GetConcept(), P: w.GetP()})
	}
	return res
}

func labelsToProto(ls []concepts.Label) []*pb.Label {
	if len(ls) == 0 {
		return nil
	}
	out := make([]*pb.Label, len(ls))
	for i, l := range ls {
		out[i] = &pb.Label{Language: l.Lang, Text: l.Text}
	}
	return out
}

// badRequestViolations returns the field violations in st's details.
func badRequestViolations(st *status.Status) []*errdetails.BadRequest_FieldViolation {
	var out []*errdetails.BadRequest_FieldViolation
	for _, d := range st.Details() {
		if br, ok := d.(*errdetails.BadRequest); ok {
			out = append(out, br.GetFieldViolations()...)
		}
	}
	return out
}
