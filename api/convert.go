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

// ResultToProto converts an annotation result to its response message. The
// concepts, path nodes, supports and words are each allocated as one array
// (a response to a 150-word record holds about a hundred such messages).
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
	var nPath, nSupport int
	for i := range res.Concepts {
		nPath += len(res.Concepts[i].Path)
		nSupport += len(res.Concepts[i].Support)
	}
	concepts := make([]pb.AnnotatedConcept, len(res.Concepts))
	nodes := make([]pb.PathNode, nPath)
	nodePtrs := make([]*pb.PathNode, nPath)
	supports := make([]pb.Support, nSupport)
	supportPtrs := make([]*pb.Support, nSupport)
	for i := range res.Concepts {
		c := &res.Concepts[i]
		pc := &concepts[i]
		pc.Iri, pc.Label, pc.Score = c.IRI, c.Label, c.Score
		pc.Path = nodePtrs[:len(c.Path):len(c.Path)]
		nodePtrs = nodePtrs[len(c.Path):]
		for j, n := range c.Path {
			pn := &nodes[j]
			pn.Iri, pn.Label, pn.Score = n.IRI, n.Label, n.Score
			pc.Path[j] = pn
		}
		nodes = nodes[len(c.Path):]
		if len(c.Support) > 0 {
			pc.Support = supportPtrs[:len(c.Support):len(c.Support)]
			supportPtrs = supportPtrs[len(c.Support):]
			for j, sp := range c.Support {
				ps := &supports[j]
				ps.Term, ps.Weight = sp.Term, sp.Weight
				pc.Support[j] = ps
			}
			supports = supports[len(c.Support):]
		}
		out.Concepts[i] = pc
	}
	if len(res.Words) > 0 {
		words := make([]pb.Word, len(res.Words))
		out.Words = make([]*pb.Word, len(res.Words))
		for i, w := range res.Words {
			pw := &words[i]
			pw.Start, pw.End, pw.Text, pw.Term, pw.Concept, pw.P = int32(w.Start), int32(w.End), w.Text, w.Term, w.Concept, w.P
			out.Words[i] = pw
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
