package api

import (
	"context"
	"errors"

	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/status"

	"termgrove/model"
	pb "termgrove/proto/termgrove/v1"
	"termgrove/report"
)

// DefaultGapLimit is the number of entries per gap report section when a
// request sets no limit.
const DefaultGapLimit = 100

// ReportGaps serves gap reports from the model alone with report.Gaps (the
// sections that need the records, examples and trends, are left out: the
// server does not hold the corpus).
type ReportGaps struct {
	Lang string // label language; "" = the model's main language
}

// GapReport implements GapReporter.
func (g ReportGaps) GapReport(ctx context.Context, name string, m *model.Model, limit int) (*pb.GetGapReportResponse, error) {
	if limit <= 0 {
		limit = DefaultGapLimit
	}
	lang := g.Lang
	if lang == "" {
		lang = mainLanguage(m)
	}
	r, err := report.Gaps(m, nil, nil, report.GapOptions{Lang: lang})
	if errors.Is(err, report.ErrNoModel) {
		return nil, status.Errorf(codes.FailedPrecondition, "model %q: %v", name, err)
	}
	if err != nil {
		return nil, err
	}
	out := &pb.GetGapReportResponse{Model: name}
	for _, grp := range r.Unused {
		for _, c := range grp.Concepts {
			if len(out.UnusedConcepts) == limit {
				break
			}
			u := &pb.UnusedConcept{Concept: &pb.ConceptRef{Iri: c.IRI, Label: c.Label}, Records: int64(c.Records)}
			if k, ok := m.ConceptIndex(c.IRI); ok && k < len(m.Totals) {
				u.Tokens = m.Totals[k]
			}
			out.UnusedConcepts = append(out.UnusedConcepts, u)
		}
	}
	for _, th := range r.Themes {
		if len(out.UncoveredThemes) == limit {
			break
		}
		t := &pb.UncoveredTheme{Topic: int32(th.Topic), Share: th.Share}
		if th.Nearest != "" {
			t.Nearest = &pb.ConceptRef{Iri: th.Nearest, Label: th.NearestLabel}
		}
		for _, w := range th.Words {
			t.TopWords = append(t.TopWords, &pb.TopWord{Term: w.Term, Probability: w.P})
		}
		out.UncoveredThemes = append(out.UncoveredThemes, t)
	}
	for _, c := range r.Candidates {
		if len(out.CandidateLabels) == limit {
			break
		}
		out.CandidateLabels = append(out.CandidateLabels, &pb.CandidateLabel{
			Term: c.Term, Concept: &pb.ConceptRef{Iri: c.IRI, Label: c.Label}, Weight: c.Lift, Count: int64(c.Count)})
	}
	return out, nil
}
