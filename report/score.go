package report

import (
	"fmt"
	"slices"
	"sort"

	"termgrove/annotate"
	"termgrove/internal/records"
	"termgrove/model"
)

// ScoreOptions tune Score; zero values mean the defaults in brackets.
type ScoreOptions struct {
	Ks     []int    // cut-offs [1, 3, 5, 10]
	Fields []string // record fields read [title, text]
	Lang   string   // labels in per-concept figures ["en"]
	// PerConceptK is the k of the per-concept table [5].
	PerConceptK int
	// Annotate holds the fold-in settings (BurnIn, Samples); Top is set to
	// the largest k and Language to each record's own language.
	Annotate annotate.Options
	// Progress, when set, is called after each record.
	Progress func(done int)
}

// ScoreResult is what `termgrove score` reports. JSON names are part of the
// output format (DESIGN.md: {"records", "metrics": {"<name>@<k>": {"micro", "macro"}}}).
type ScoreResult struct {
	Records         int               `json:"records"`          // records scored
	NoSubjects      int               `json:"no_subjects"`      // excluded: no human subjects
	UnknownSubjects int               `json:"unknown_subjects"` // subject IRIs not in the vocabulary (dropped)
	UnknownExamples []string          `json:"unknown_examples,omitempty"`
	Metrics         map[string]Figure `json:"metrics"`
	// Threshold is the min score that maximises micro F1 on this set, with that F1.
	Threshold   float64         `json:"best_min_score"`
	ThresholdF1 float64         `json:"best_min_score_f1"`
	PerConcept  []ConceptFigure `json:"per_concept"`
	PerConceptK int             `json:"per_concept_k"`
}

// Score annotates every record that carries human subjects and compares
// termgrove's ranking with them. Records without subjects are counted and
// left out; subjects that are not concepts of the model's vocabulary are
// counted and dropped (a record left with none is left out too).
func Score(m *model.Model, a Annotator, recs []records.Record, opt ScoreOptions) (*ScoreResult, error) {
	if len(opt.Ks) == 0 {
		opt.Ks = Ks
	}
	if opt.PerConceptK < 0 || slices.Min(opt.Ks) < 1 {
		return nil, fmt.Errorf("%w: cut-offs k must be 1 or more (per-concept k %d, k %v)", ErrOptions, opt.PerConceptK, opt.Ks)
	}
	if opt.Lang == "" {
		opt.Lang = "en"
	}
	if opt.PerConceptK == 0 {
		opt.PerConceptK = 5
	}
	maxK := 0
	for _, k := range opt.Ks {
		if k > maxK {
			maxK = k
		}
	}
	res := &ScoreResult{PerConceptK: opt.PerConceptK}
	seenUnknown := map[string]bool{}
	var cases []Case
	for i := range recs {
		r := &recs[i]
		var gold []int
		for _, iri := range r.Subjects {
			c, ok := m.ConceptIndex(iri)
			if !ok || c >= m.C {
				res.UnknownSubjects++
				if !seenUnknown[iri] && len(res.UnknownExamples) < 10 {
					res.UnknownExamples = append(res.UnknownExamples, iri)
				}
				seenUnknown[iri] = true
				continue
			}
			if !contains(gold, c) {
				gold = append(gold, c)
			}
		}
		if len(gold) == 0 {
			res.NoSubjects++
			continue
		}
		ao := opt.Annotate
		ao.Top = maxK
		if r.Lang != "" {
			ao.Language = r.Lang
		}
		out, err := a.Annotate(r.ID, r.Join(opt.Fields), ao)
		if err != nil {
			return nil, fmt.Errorf("record %s (line %d): %w", r.ID, r.Line, err)
		}
		c := Case{ID: r.ID, Gold: gold}
		for _, ac := range out.Concepts {
			if k, ok := m.ConceptIndex(ac.IRI); ok {
				c.Predicted = append(c.Predicted, k)
				c.Scores = append(c.Scores, ac.Score)
			}
		}
		cases = append(cases, c)
		if opt.Progress != nil {
			opt.Progress(len(cases))
		}
	}
	res.Records = len(cases)
	res.Metrics = Evaluate(cases, opt.Ks, ancestorsOf(m))
	res.Threshold, res.ThresholdF1 = BestThreshold(cases)
	res.PerConcept = PerConcept(cases, opt.PerConceptK)
	for i := range res.PerConcept {
		cf := &res.PerConcept[i]
		cf.IRI = m.Scheme.Concepts[cf.Concept].IRI
		cf.Label = m.Scheme.Concepts[cf.Concept].PrefLabel(opt.Lang)
	}
	return res, nil
}

// ancestorsOf returns a memoised, cycle-safe ancestor lookup over the
// model's scheme.
func ancestorsOf(m *model.Model) func(int) []int {
	memo := map[int][]int{}
	return func(c int) []int {
		if a, ok := memo[c]; ok {
			return a
		}
		seen := map[int]bool{c: true}
		stack := append([]int(nil), m.Scheme.Concepts[c].Broader...)
		var out []int
		for len(stack) > 0 {
			x := stack[len(stack)-1]
			stack = stack[:len(stack)-1]
			if seen[x] {
				continue
			}
			seen[x] = true
			out = append(out, x)
			stack = append(stack, m.Scheme.Concepts[x].Broader...)
		}
		sort.Ints(out)
		memo[c] = out
		return out
	}
}
