package report

import (
	"math"
	"testing"

	"termgrove/internal/records"
)

func TestScoreCountsBadGold(t *testing.T) {
	m := gapModel()
	recs := []records.Record{
		{ID: "a", Text: "mill", Subjects: []string{"http://ex.org/milling"}},
		{ID: "b", Text: "railway", Subjects: []string{"http://ex.org/transport", "http://ex.org/nowhere"}},
		{ID: "c", Text: "mill railway"},                                   // no subjects: left out
		{ID: "d", Text: "mill", Subjects: []string{"http://ex.org/gone"}}, // none known: left out
	}
	res, err := Score(m, fakeAnnotator{}, recs, ScoreOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if res.Records != 2 || res.NoSubjects != 2 || res.UnknownSubjects != 2 {
		t.Fatalf("records %d, no subjects %d, unknown %d; want 2, 2, 2", res.Records, res.NoSubjects, res.UnknownSubjects)
	}
	// Both records get their one gold concept first.
	if p := res.Metrics["precision@1"].Micro; p != 1 {
		t.Errorf("precision@1 = %v, want 1", p)
	}
	if r := res.Metrics["recall@10"].Micro; r != 1 {
		t.Errorf("recall@10 = %v, want 1", r)
	}
	// Hierarchical: Milling's ancestor Trades joins both sets.
	if h := res.Metrics["hprecision@1"].Micro; math.Abs(h-1) > 1e-12 {
		t.Errorf("hprecision@1 = %v, want 1", h)
	}
	if res.ThresholdF1 != 1 {
		t.Errorf("best threshold F1 = %v, want 1", res.ThresholdF1)
	}
}
