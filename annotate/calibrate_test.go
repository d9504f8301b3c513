package annotate

import (
	"errors"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"termgrove/model"
	"termgrove/model/modeltest"
)

// TestPlattFit: the penalised logistic regression behind Calibrate.
// Checks: (1) without penalty and with one x value the fit is the
// closed-form maximum-likelihood intercept logit(mean y) (arithmetic);
// (2) on 40,000 cases drawn from σ(1.5·x − 2) it recovers a and b within
// sampling error (consistency of maximum likelihood); (3) its gradient is
// zero at the returned point with a penalty (the optimality condition);
// (4) a huge penalty returns the prior mapping and no cases return it
// exactly.
func TestPlattFit(t *testing.T) {
	var p pairs
	for i := 0; i < 40; i++ {
		p.add(0, i < 10) // mean y 1/4
	}
	if _, b := p.fit(0, 0, 0); math.Abs(b-math.Log(1.0/3)) > 1e-6 {
		t.Errorf("intercept %v, want logit(1/4) = %v", b, math.Log(1.0/3))
	}
	r := rand.New(rand.NewPCG(1, 2))
	p.reset()
	for i := 0; i < 40000; i++ {
		x := r.NormFloat64() * 2
		p.add(x, r.Float64() < sigmoid(1.5*x-2))
	}
	a, b := p.fit(0, 0, 0)
	if math.Abs(a-1.5) > 0.06 || math.Abs(b+2) > 0.06 {
		t.Errorf("fit (%v, %v), want about (1.5, −2)", a, b)
	}
	lam, a0, b0 := 50.0, 0.5, 1.0
	a, b = p.fit(lam, a0, b0)
	var ga, gb float64
	for i, x := range p.x {
		s := sigmoid(a*x + b)
		if p.y[i] {
			s--
		}
		ga += s * x
		gb += s
	}
	ga += 2 * lam * (a - a0)
	gb += 2 * lam * (b - b0)
	if math.Abs(ga) > 1e-3 || math.Abs(gb) > 1e-3 {
		t.Errorf("gradient (%v, %v) at the penalised fit (%v, %v)", ga, gb, a, b)
	}
	if a, b := p.fit(1e12, a0, b0); math.Abs(a-a0) > 1e-6 || math.Abs(b-b0) > 1e-6 {
		t.Errorf("huge penalty gave (%v, %v), want the prior (%v, %v)", a, b, a0, b0)
	}
	p.reset()
	if a, b := p.fit(3, a0, b0); a != a0 || b != b0 {
		t.Errorf("no cases gave (%v, %v)", a, b)
	}
}

// TestCalibrateStructural: a concept people assign to every text although
// no text uses its words (debtags' role/program or implemented-in/c) ranks
// low by fold-in share and first once calibrated; calibrated scores are
// probabilities; a model without calibration ranks as before. Source: the
// purpose of Platt scaling (Platt 1999), on a synthetic model.
func TestCalibrateStructural(t *testing.T) {
	m := modeltest.Synthetic(modeltest.Options{Concepts: 30, Free: 3, Words: 400, WordsPerConcept: 15, Seed: 3})
	const structural = 29
	r := rand.New(rand.NewPCG(5, 6))
	var texts []LabeledText
	for i := 0; i < 120; i++ {
		c := r.IntN(10) // the texts' own concept, among the first ten
		var words []string
		for _, ww := range m.TopWords(c, 8) {
			for n := 0; n < 1+r.IntN(3); n++ {
				words = append(words, m.Words[ww.Word])
			}
		}
		texts = append(texts, LabeledText{ID: "t" + string(rune('a'+i%26)) + string(rune('a'+i/26)), Text: strings.Join(words, " "),
			Subjects: []string{m.Scheme.Concepts[c].IRI, m.Scheme.Concepts[structural].IRI}})
	}
	a, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	rank := func(a *Annotator, text string) (int, []Concept) {
		res, err := a.Annotate("x", text, Options{Top: -1, Samples: 50})
		if err != nil {
			t.Fatal(err)
		}
		for i, c := range res.Concepts {
			if c.IRI == m.Scheme.Concepts[structural].IRI {
				return i, res.Concepts
			}
		}
		return len(res.Concepts), res.Concepts
	}
	before, _ := rank(a, texts[0].Text)
	if before < 3 {
		t.Fatalf("uncalibrated, the structural concept already ranks %d", before)
	}
	cal, err := Calibrate(m, texts[:100], CalibrateOptions{Samples: 50, Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	if cal.Records != 100 || cal.HeldOut || cal.Shrink != DefaultShrink {
		t.Errorf("calibration records %d, held out %v, shrink %v", cal.Records, cal.HeldOut, cal.Shrink)
	}
	if m.Calibration != nil {
		t.Fatal("Calibrate changed the model")
	}
	m.Calibration = cal
	b, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	for _, tx := range texts[100:] {
		after, cs := rank(b, tx.Text)
		if after != 0 {
			t.Errorf("%s: calibrated, the structural concept ranks %d (before: %d)", tx.ID, after, before)
		}
		if p := cs[0].Score; !(p > 0.9 && p < 1) {
			t.Errorf("%s: the structural concept's probability %v, want near 1", tx.ID, p)
		}
		for i := 1; i < len(cs); i++ {
			if cs[i].Score > cs[i-1].Score || cs[i].Score < 0 {
				t.Fatalf("%s: scores not ranked probabilities at %d: %v", tx.ID, i, cs[i].Score)
			}
		}
	}
	// Learning again from the calibrated model learns from raw scores.
	again, err := Calibrate(m, texts[:100], CalibrateOptions{Samples: 50, Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(again.GlobalA-cal.GlobalA) > 0.3 || math.Abs(again.A[structural]-cal.A[structural]) > 0.5 {
		t.Errorf("recalibrating a calibrated model: global a %v then %v", cal.GlobalA, again.GlobalA)
	}
}

// TestCalibrateBadInput: texts without known subjects or known words give
// ErrNoCalibrationData, a bad shrink an error, never a panic.
func TestCalibrateBadInput(t *testing.T) {
	m := modeltest.Synthetic(modeltest.Options{Concepts: 10, Free: 2, Words: 100, Seed: 4})
	for _, texts := range [][]LabeledText{
		nil,
		{{ID: "a", Text: m.Words[1], Subjects: []string{"http://example.org/not-a-concept"}}},
		{{ID: "b", Text: "zzzunknown qqqunknown", Subjects: []string{m.Scheme.Concepts[0].IRI}}},
		{{ID: "c", Text: "", Subjects: []string{m.Scheme.Concepts[0].IRI}}},
	} {
		if _, err := Calibrate(m, texts, CalibrateOptions{}); !errors.Is(err, ErrNoCalibrationData) {
			t.Errorf("%v: err %v, want ErrNoCalibrationData", texts, err)
		}
	}
	ok := []LabeledText{{ID: "d", Text: m.Words[1] + " " + m.Words[2], Subjects: []string{m.Scheme.Concepts[0].IRI}}}
	for _, s := range []float64{-1, math.NaN(), math.Inf(1)} {
		if _, err := Calibrate(m, ok, CalibrateOptions{Shrink: s}); err == nil {
			t.Errorf("shrink %v accepted", s)
		}
	}
	cal, err := Calibrate(m, ok, CalibrateOptions{})
	if err != nil {
		t.Fatal(err)
	}
	m.Calibration = cal
	if err := m.Validate(); err != nil {
		t.Errorf("calibration from one text: %v", err)
	}
}

// TestUncalibratedOption: Options.Uncalibrated gives a calibrated model's
// raw shares, the same as the model without its calibration would (same
// sampler seed: the checksum is that of the calibrated model in both runs,
// so the comparison uses one annotator). Arithmetic of the mapping: the
// calibrated score is Apply of the raw one.
func TestUncalibratedOption(t *testing.T) {
	m := modeltest.Synthetic(modeltest.Options{Concepts: 20, Free: 2, Words: 200, WordsPerConcept: 15, Seed: 9})
	m.Calibration = &model.Calibration{A: make([]float64, m.C), B: make([]float64, m.C)}
	for k := range m.Calibration.A {
		m.Calibration.A[k], m.Calibration.B[k] = 1+float64(k%3)/2, float64(k%5)-2
	}
	a, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	var words []string
	for _, ww := range m.TopWords(4, 10) {
		words = append(words, m.Words[ww.Word])
	}
	text := strings.Join(words, " ")
	raw, err := a.Annotate("t", text, Options{Top: -1, Uncalibrated: true})
	if err != nil {
		t.Fatal(err)
	}
	got, err := a.Annotate("t", text, Options{Top: -1})
	if err != nil {
		t.Fatal(err)
	}
	if len(raw.Concepts) != m.C || len(got.Concepts) != m.C {
		t.Fatalf("%d raw and %d calibrated concepts for C = %d", len(raw.Concepts), len(got.Concepts), m.C)
	}
	sum := 0.0
	rawOf := map[string]float64{}
	for _, c := range raw.Concepts {
		rawOf[c.IRI] = c.Score
		sum += c.Score
	}
	if math.Abs(sum+raw.Uncovered-1) > 1e-9 {
		t.Errorf("raw shares plus uncovered sum to %v", sum+raw.Uncovered)
	}
	// Raw path scores are sums: with Top −1 every concept is in the pool,
	// so a concept's own path node holds its score plus all its
	// descendants' (each once).
	children := make([][]int, m.C)
	for k, c := range m.Scheme.Concepts {
		for _, b := range c.Broader {
			children[b] = append(children[b], k)
		}
	}
	for _, c := range raw.Concepts {
		k, _ := m.ConceptIndex(c.IRI)
		want, seen, stack := 0.0, map[int]bool{k: true}, []int{k}
		for len(stack) > 0 {
			x := stack[len(stack)-1]
			stack = stack[:len(stack)-1]
			want += rawOf[m.Scheme.Concepts[x].IRI]
			for _, ch := range children[x] {
				if !seen[ch] {
					seen[ch] = true
					stack = append(stack, ch)
				}
			}
		}
		if got := c.Path[len(c.Path)-1].Score; math.Abs(got-want) > 1e-9 {
			t.Errorf("raw path score of %s: %v, want the sum %v", c.IRI, got, want)
		}
	}
	for _, c := range got.Concepts {
		k, _ := m.ConceptIndex(c.IRI)
		if want := m.Calibration.Apply(k, rawOf[c.IRI]); math.Abs(c.Score-want) > 1e-12 {
			t.Errorf("%s: calibrated %v, want Apply(raw %v) = %v", c.IRI, c.Score, rawOf[c.IRI], want)
		}
	}
}

// TestCalibratedPruneExact: skipping the untouched concepts whose bound on
// the calibrated log-odds falls below the want-th best candidate gives the
// same concepts, scores and paths as ranking every concept, for texts of
// one, two and many concepts' words, small and large Top, and mappings
// with negative and large A_k and B_k (so that untouched concepts do enter
// the ranking). Source: the bound in calibrated's comment; the test is the
// brute-force comparison.
func TestCalibratedPruneExact(t *testing.T) {
	m := modeltest.Synthetic(modeltest.Options{Concepts: 300, Free: 5, Words: 2000, WordsPerConcept: 20, Seed: 11})
	r := rand.New(rand.NewPCG(7, 8))
	cal := &model.Calibration{A: make([]float64, m.C), B: make([]float64, m.C)}
	for k := range cal.A {
		cal.A[k] = 0.2 + 1.5*r.Float64()
		if k%17 == 0 {
			cal.A[k] = -0.5 * r.Float64()
		}
		cal.B[k] = 4*r.Float64() - 1
		if k%23 == 0 {
			cal.B[k] += 8 // an untouched concept that people assign often
		}
	}
	m.Calibration = cal
	a, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	defer func() { calPrune = true }()
	entered := 0
	for trial := 0; trial < 40; trial++ {
		var words []string
		for c := 0; c < 1+trial%5*3; c++ {
			for _, ww := range m.TopWords(r.IntN(m.C), 6) {
				words = append(words, m.Words[ww.Word])
			}
		}
		text := strings.Join(words, " ")
		top := []int{1, 5, 10, 150, -1}[trial%5]
		calPrune = true
		got, err := a.Annotate("t", text, Options{Top: top, Samples: 5})
		if err != nil {
			t.Fatal(err)
		}
		calPrune = false
		want, err := a.Annotate("t", text, Options{Top: top, Samples: 5})
		if err != nil {
			t.Fatal(err)
		}
		if len(got.Concepts) != len(want.Concepts) {
			t.Fatalf("trial %d: %d concepts pruned, %d in full", trial, len(got.Concepts), len(want.Concepts))
		}
		for i := range got.Concepts {
			g, w := got.Concepts[i], want.Concepts[i]
			if g.IRI != w.IRI || g.Score != w.Score || len(g.Path) != len(w.Path) {
				t.Fatalf("trial %d rank %d: pruned %s %v, full %s %v", trial, i, g.IRI, g.Score, w.IRI, w.Score)
			}
			for j := range g.Path {
				if g.Path[j].IRI != w.Path[j].IRI || math.Abs(g.Path[j].Score-w.Path[j].Score) > 1e-12 {
					t.Fatalf("trial %d rank %d path %d: %+v, full %+v", trial, i, j, g.Path[j], w.Path[j])
				}
			}
			if k, _ := m.ConceptIndex(g.IRI); k%23 == 0 && i < 5 {
				entered++
			}
		}
	}
	if entered == 0 {
		t.Error("no concept with a large B_k ranked among the first five: the test does not exercise the untouched concepts")
	}
}

// TestPathSumsWhenRaw: path scores are noisy-or probabilities only when the
// scores are calibrated; with Uncalibrated they are sums of shares as for a
// model without calibration (a node's score at least its own plus its
// shown child's).
func TestPathSumsWhenRaw(t *testing.T) {
	m := modeltest.Synthetic(modeltest.Options{Concepts: 60, Free: 3, Words: 600, WordsPerConcept: 15, Seed: 12})
	m.Calibration = &model.Calibration{A: make([]float64, m.C), B: make([]float64, m.C)}
	for k := range m.Calibration.A {
		m.Calibration.A[k], m.Calibration.B[k] = 1, 3
	}
	a, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	var words []string
	for _, c := range []int{5, 40, 41} {
		for _, ww := range m.TopWords(c, 8) {
			words = append(words, m.Words[ww.Word])
		}
	}
	text := strings.Join(words, " ")
	for _, raw := range []bool{false, true} {
		res, err := a.Annotate("t", text, Options{Top: 20, Uncalibrated: raw})
		if err != nil {
			t.Fatal(err)
		}
		for _, c := range res.Concepts {
			for _, p := range c.Path {
				if !raw && !(p.Score >= 0 && p.Score <= 1) {
					t.Errorf("calibrated path score %v of %s is not a probability", p.Score, p.IRI)
				}
			}
			if n := len(c.Path); raw && n > 1 && c.Path[n-2].Score < c.Path[n-1].Score {
				t.Errorf("raw: parent %v below child %v", c.Path[n-2].Score, c.Path[n-1].Score)
			}
		}
		if raw {
			sum := res.Uncovered
			for _, c := range res.Concepts {
				sum += c.Score
			}
			if sum > 1+1e-9 {
				t.Errorf("raw shares of the first 20 plus uncovered sum to %v", sum)
			}
		}
	}
}
