package report

import (
	"errors"
	"strings"
	"testing"
)

// TestBadCutoffs: a cut-off k below 1 is an option error, never a panic
// (score --k -2 crashed with "slice bounds out of range [:-2]").
// Common practice, no source.
func TestBadCutoffs(t *testing.T) {
	cases := []Case{{ID: "a", Predicted: []int{0, 1, 2}, Scores: []float64{.5, .3, .2}, Gold: []int{1}}}
	if got := PerConcept(cases, -2); len(got) == 0 || got[0].Predicted != 0 {
		t.Errorf("PerConcept at k=-2 = %+v, want the gold concept with nothing predicted", got)
	}
	for _, opt := range []ScoreOptions{{PerConceptK: -2}, {Ks: []int{1, 0}}} {
		_, err := Score(nil, nil, nil, opt)
		if !errors.Is(err, ErrOptions) {
			t.Errorf("Score(%+v): err %v, want ErrOptions", opt, err)
		}
	}
}

// TestWriteTextNoControlCharacters: labels, record ids and words come from
// the vocabulary and the records; the terminal view must not pass their
// escape sequences to the terminal. Common practice, no source.
func TestWriteTextNoControlCharacters(t *testing.T) {
	g := &GapReport{Scheme: "https://example.org/s\x1b[2J",
		Unused: []UnusedGroup{{TopLabel: "top\x07", Concepts: []UnusedConcept{{Label: "mills\x1b[31m", IRI: "https://example.org/a"}}}}}
	var b strings.Builder
	if err := WriteText(&b, g); err != nil {
		t.Fatal(err)
	}
	out := b.String()
	if strings.ContainsAny(out, "\x1b\x07") || !strings.Contains(out, "mills␛[31m") {
		t.Errorf("control characters reach the terminal:\n%q", out)
	}
}
