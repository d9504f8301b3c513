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
	for _, c := range got.Concepts {
		k, _ := m.ConceptIndex(c.IRI)
		if want := m.Calibration.Apply(k, rawOf[c.IRI]); math.Abs(c.Score-want) > 1e-12 {
			t.Errorf("%s: calibrated %v, want Apply(raw %v) = %v", c.IRI, c.Score, rawOf[c.IRI], want)
		}
	}
}
