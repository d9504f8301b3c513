package prior

import (
	"errors"
	"math"
	"os"
	"runtime"
	"testing"
	"time"

	"termgrove/concepts"
	"termgrove/terms"
)

func en(s string) concepts.Label { return concepts.Label{Lang: "en", Text: s} }

// testScheme is a small hand-made vocabulary.
func testScheme() *concepts.Scheme {
	return &concepts.Scheme{IRI: "http://ex.org/s", Concepts: []concepts.Concept{
		{IRI: "http://ex.org/c/0", Pref: []concepts.Label{en("Screen reader")}, Alt: []concepts.Label{en("Braille")},
			Narrower: []int{5}},
		{IRI: "http://ex.org/c/1", Pref: []concepts.Label{en("The Who")}}, // only stopwords
		{IRI: "http://ex.org/c/2", Pref: []concepts.Label{{Lang: "fr", Text: "Église"}, en("Churches")},
			Hidden: []concepts.Label{{Text: "kirk"}}},
		{IRI: "http://ex.org/c/3", Pref: []concepts.Label{{Lang: "fr", Text: "Cartes"}}}, // no English label
		{IRI: "http://ex.org/c/4", Pref: []concepts.Label{en("Maps")}, Notation: []string{"QA76"},
			Definition: []concepts.Label{en("QA76 maps of parishes")}},
		{IRI: "http://ex.org/c/5", Pref: []concepts.Label{en("Parish history")}, Broader: []int{0}},
		{IRI: "http://ex.org/c/6", Pref: []concepts.Label{en("Church history")}},
	}}
}

func build(t *testing.T, opt Options, langs ...string) *Prior {
	t.Helper()
	a, err := terms.New(terms.Options{Languages: langs}, nil)
	if err != nil {
		t.Fatal(err)
	}
	p, err := Build(testScheme(), a, opt)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// rowMap turns a row into term -> weight.
func rowMap(p *Prior, k int) map[string]float64 {
	m := map[string]float64{}
	for _, e := range p.Rows[k] {
		m[p.Analyzer.Dict().Term(e.Word)] = e.Weight
	}
	return m
}

func checkRows(t *testing.T, p *Prior) {
	t.Helper()
	for k, row := range p.Rows {
		var sum float64
		for i, e := range row {
			if i > 0 && row[i-1].Word >= e.Word {
				t.Errorf("row %d not sorted by word", k)
			}
			sum += e.Weight
		}
		if len(row) > 0 && math.Abs(sum-1) > 1e-12 {
			t.Errorf("row %d sums to %v", k, sum)
		}
	}
}

func near(a, b float64) bool { return math.Abs(a-b) < 1e-12 }

func TestBuildWeights(t *testing.T) {
	p := build(t, Options{}, "en")
	checkRows(t, p)
	if p.Lambda != DefaultLambda || p.Beta0 != DefaultBeta0 {
		t.Errorf("defaults λ=%v β0=%v", p.Lambda, p.Beta0)
	}
	// c/0: "screen reader" 1.0, "screen" 0.5, "reader" 0.5, "braill" 0.6 -> /2.6
	want := map[string]float64{"screen reader": 1 / 2.6, "screen": 0.5 / 2.6, "reader": 0.5 / 2.6, "braill": 0.6 / 2.6}
	got := rowMap(p, 0)
	if len(got) != len(want) {
		t.Fatalf("row 0 %v", got)
	}
	for term, w := range want {
		if !near(got[term], w) {
			t.Errorf("row 0 %q = %v, want %v", term, got[term], w)
		}
	}
	// c/2: the fr label is skipped, the untagged hidden label used.
	got = rowMap(p, 2)
	if !near(got["church"], 1/1.4) || !near(got["kirk"], 0.4/1.4) || len(got) != 2 {
		t.Errorf("row 2 %v", got)
	}
	// c/4: notation "QA76" left out of the definition.
	got = rowMap(p, 4)
	if _, ok := got["qa76"]; ok || !near(got["map"], 1.1/1.2) || !near(got["parish"], 0.1/1.2) {
		t.Errorf("row 4 %v", got)
	}
	// β for a label term and a word outside the row.
	id, _ := p.Analyzer.Dict().ID("map")
	if b := p.Beta(4, id); !near(b, DefaultBeta0+DefaultLambda*1.1/1.2) {
		t.Errorf("Beta = %v", b)
	}
	if b := p.Beta(0, id); b != DefaultBeta0 {
		t.Errorf("Beta outside row = %v", b)
	}
}

func TestBuildReport(t *testing.T) {
	p := build(t, Options{}, "en")
	r := p.Report
	// c/1 ("The Who", stopwords only) and c/3 (French only) have no terms.
	if len(r.NoTerms) != 2 || r.NoTerms[0] != 1 || r.NoTerms[1] != 3 {
		t.Errorf("NoTerms %v", r.NoTerms)
	}
	if len(r.Emptied) != 1 || r.Emptied[0] != "http://ex.org/c/1\tThe Who@en" {
		t.Errorf("Emptied %q", r.Emptied)
	}
	// "church" is in c/2 and c/6, "histori" in c/5 and c/6, "parish" in c/4 and c/5.
	if len(r.SharedTerms) != 3 || r.SharedTerms[0].Concepts != 2 || r.SharedTerms[0].Term != "church" ||
		r.SharedTerms[1].Term != "histori" || r.SharedTerms[2].Term != "parish" {
		t.Errorf("SharedTerms %+v", r.SharedTerms)
	}
	if r.Skipped != 2 {
		t.Errorf("Skipped %d, want 2 (two French labels)", r.Skipped)
	}
	// With French too, c/3 gets its term and the French label of c/2 counts.
	p = build(t, Options{Languages: []string{"en", "fr-FR"}}, "en")
	if len(p.Report.NoTerms) != 1 || p.Report.Skipped != 0 {
		t.Errorf("en+fr: NoTerms %v Skipped %d", p.Report.NoTerms, p.Report.Skipped)
	}
}

func TestBuildPhrasesMeetText(t *testing.T) {
	p := build(t, Options{}, "en")
	a := p.Analyzer
	// "screen-reading" meets "screen reader" through "screen"; "screen
	// readers" is the phrase itself.
	row := rowMap(p, 0)
	for _, c := range []struct{ text, term string }{
		{"Screen readers for the blind", "screen reader"},
		{"screen-reading software", "screen"},
	} {
		toks, _ := a.Analyze(c.text, nil, false)
		if len(toks) == 0 || toks[0].Term != c.term || row[c.term] == 0 {
			t.Errorf("%q: tokens %+v", c.text, toks)
		}
	}
}

func TestBuildInherit(t *testing.T) {
	p := build(t, Options{InheritDecay: 0.5}, "en")
	checkRows(t, p)
	got := rowMap(p, 0)
	// c/0 own raw weights sum 2.6; c/5 ("parish history") own row normalised:
	// phrase 0.5, parish 0.25, histori 0.25; inherited at 0.5 -> total 2.6/2.6 + 0.5.
	// After normalising c/0 (own normalised first = 1) plus 0.5: parish = 0.125/1.5.
	if !near(got["parish"], 0.125/1.5) || !near(got["screen reader"], (1/2.6)/1.5) {
		t.Errorf("inherited row %v", got)
	}
	if _, err := Build(testScheme(), p.Analyzer, Options{InheritDecay: 1.5}); !errors.Is(err, ErrOptions) {
		t.Errorf("decay 1.5: %v", err)
	}
	if _, err := Build(testScheme(), p.Analyzer, Options{Lambda: -1}); !errors.Is(err, ErrOptions) {
		t.Errorf("λ -1: %v", err)
	}
	if _, err := Build(nil, p.Analyzer, Options{}); !errors.Is(err, ErrOptions) {
		t.Errorf("nil scheme: %v", err)
	}
}

func TestBuildUnsupportedLanguage(t *testing.T) {
	s := &concepts.Scheme{Concepts: []concepts.Concept{
		{IRI: "x:1", Pref: []concepts.Label{{Lang: "ja", Text: "図書館"}}},
		{IRI: "x:2", Pref: []concepts.Label{{Lang: "not a tag", Text: "Libraries"}}},
	}}
	a, _ := terms.New(terms.Options{Languages: []string{"ja"}}, nil)
	p, err := Build(s, a, Options{Languages: []string{"ja", "not a tag"}})
	if err != nil {
		t.Fatal(err)
	}
	if len(p.Report.Notices) != 2 || len(p.Report.NoTerms) != 0 {
		t.Errorf("notices %q, no terms %v", p.Report.Notices, p.Report.NoTerms)
	}
	// Language-neutral: no stemming.
	if got := rowMap(p, 1); got["libraries"] != 1 {
		t.Errorf("row %v", got)
	}
}

// BenchmarkBuild builds the prior of the WordNet vocabulary (117,661
// concepts) from a fresh English analyzer. Reports the heap retained by the
// result and the bytes allocated per build.
func BenchmarkBuild(b *testing.B) { benchBuild(b, Options{}) }

// BenchmarkBuildInherit is BenchmarkBuild with narrower concepts' terms
// inherited two levels up at decay 0.5.
func BenchmarkBuildInherit(b *testing.B) { benchBuild(b, Options{InheritDecay: 0.5}) }

func benchBuild(b *testing.B, opt Options) {
	const path = "../.cache/wordnet/vocabulary.nt"
	if _, err := os.Stat(path); err != nil {
		b.Skipf("WordNet vocabulary not built (%v): run bash /work/shared/datasets/wordnet/build.sh .cache/wordnet", err)
	}
	s, err := concepts.Load(path, concepts.LoadOptions{})
	if err != nil {
		b.Fatal(err)
	}
	runtime.GC()
	var before, after runtime.MemStats
	runtime.ReadMemStats(&before)
	b.ResetTimer()
	var p *Prior
	var secs, cpu float64
	for b.Loop() {
		a, _ := terms.New(terms.Options{Languages: []string{"en"}}, nil)
		start, cpu0 := time.Now(), cpuSeconds()
		p, err = Build(s, a, opt)
		secs, cpu = time.Since(start).Seconds(), cpuSeconds()-cpu0
		if err != nil {
			b.Fatal(err)
		}
	}
	b.StopTimer()
	runtime.GC()
	runtime.ReadMemStats(&after)
	b.ReportMetric(secs, "s/build")
	b.ReportMetric(cpu, "cpu-s/build")
	b.ReportMetric(float64(after.HeapAlloc-before.HeapAlloc)/(1<<20), "MiB-retained")
	b.ReportMetric(float64(len(p.Rows)), "concepts")
	b.ReportMetric(float64(p.Report.Terms), "terms")
}
