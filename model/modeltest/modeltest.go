// Package modeltest builds synthetic models for tests and benchmarks of the
// packages that read a model.Model (model, annotate, report, api).
//
//	m := modeltest.Synthetic(modeltest.Options{Concepts: 640, Free: 20, Words: 20000, Seed: 1})
package modeltest

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"termgrove/concepts"
	"termgrove/model"
	"termgrove/terms"
)

// Options shape a synthetic model; zero fields take the defaults in brackets.
type Options struct {
	Concepts int // C [100]
	Free     int // F [10]
	Words    int // W [5000]
	// WordsPerConcept is the mean number of distinct words with counts in a
	// concept topic [60]; free topics get 20× as many.
	WordsPerConcept int
	// PriorTerms is the number of label terms per concept [3].
	PriorTerms int
	Seed       uint64
}

// Synthetic returns a random but realistic-shaped model: a concept tree
// (each concept's broader concept drawn among the earlier ones, about one in
// fifty concepts a top concept, one in ten with a second broader concept),
// Zipf-distributed word frequencies, sparse count rows whose words include
// the concept's label terms, and α (Σα = 10) in proportion to the topics' tokens.
// Word i is the term "w<i>"; concept i has IRI "http://example.org/c/<i>"
// and the English prefLabel "concept <i>".
func Synthetic(o Options) *model.Model {
	if o.Concepts == 0 {
		o.Concepts = 100
	}
	if o.Free == 0 {
		o.Free = 10
	}
	if o.Words == 0 {
		o.Words = 5000
	}
	if o.WordsPerConcept == 0 {
		o.WordsPerConcept = 60
	}
	if o.PriorTerms == 0 {
		o.PriorTerms = 3
	}
	r := rand.New(rand.NewPCG(o.Seed, 0x9e3779b97f4a7c15))
	C, F, W := o.Concepts, o.Free, o.Words
	K := C + F
	m := &model.Model{
		Analyzer: terms.Options{Languages: []string{"en"}},
		C:        C, F: F,
		Beta0:  0.01,
		Lambda: 50,
		Words:  make([]string, W),
	}
	for i := range m.Words {
		m.Words[i] = fmt.Sprintf("w%d", i)
	}
	s := &concepts.Scheme{IRI: "http://example.org/scheme", Title: []concepts.Label{{Lang: "en", Text: "Synthetic"}}}
	s.Concepts = make([]concepts.Concept, C)
	for i := range s.Concepts {
		c := &s.Concepts[i]
		c.IRI = fmt.Sprintf("http://example.org/c/%d", i)
		c.Pref = []concepts.Label{{Lang: "en", Text: fmt.Sprintf("concept %d", i)}}
		c.Alt = []concepts.Label{{Lang: "en", Text: fmt.Sprintf("alt %d", i)}}
		if i == 0 || r.IntN(50) == 0 {
			c.Top = true
			continue
		}
		p := r.IntN(i)
		c.Broader = append(c.Broader, p)
		if r.IntN(10) == 0 {
			if q := r.IntN(i); q != p {
				c.Broader = append(c.Broader, q)
			}
		}
	}
	for i := range s.Concepts {
		for _, p := range s.Concepts[i].Broader {
			s.Concepts[p].Narrower = append(s.Concepts[p].Narrower, i)
		}
	}
	s.Reindex()
	m.Scheme = s

	// Zipf word draw: rank r has probability ∝ 1/(r+10).
	zipf := rand.NewZipf(rand.New(rand.NewPCG(o.Seed, 1)), 1.07, 10, uint64(W-1))
	m.Prior = make([][]model.WordWeight, C)
	m.Counts = make([][]model.WordCount, K)
	m.Totals = make([]int64, K)
	m.Alpha = make([]float64, K)
	m.DocCounts = make([]int32, K)
	seen := map[int32]bool{}
	for k := 0; k < K; k++ {
		clear(seen)
		n := o.WordsPerConcept
		if k >= C {
			n *= 20
		}
		n = 1 + int(float64(n)*r.ExpFloat64())
		if n > W/2 {
			n = W / 2
		}
		var words []int32
		if k < C {
			var pr []model.WordWeight
			for len(pr) < o.PriorTerms {
				w := int32(r.IntN(W))
				if !seen[w] {
					seen[w] = true
					pr = append(pr, model.WordWeight{Word: w, Weight: 1 / float64(o.PriorTerms)})
					words = append(words, w)
				}
			}
			slices.SortFunc(pr, func(a, b model.WordWeight) int { return int(a.Word - b.Word) })
			m.Prior[k] = pr
		}
		for len(words) < n {
			w := int32(zipf.Uint64())
			if r.IntN(2) == 0 {
				w = int32(r.IntN(W))
			}
			if !seen[w] {
				seen[w] = true
				words = append(words, w)
			}
		}
		slices.Sort(words)
		row := make([]model.WordCount, len(words))
		var tot int64
		for i, w := range words {
			c := int32(1 + math.Floor(3*r.ExpFloat64()*r.ExpFloat64()))
			if seen[w] && k < C && isPrior(m.Prior[k], w) {
				c += 20
			}
			row[i] = model.WordCount{Word: w, Count: c}
			tot += int64(c)
		}
		m.Counts[k] = row
		m.Totals[k] = tot
		m.DocCounts[k] = int32(1 + tot/50)
	}
	// From memory, no source at hand: a learned α sums to units or tens
	// whatever K is; here Σα = 10, shared in proportion to the topics' tokens.
	var all int64
	for _, t := range m.Totals {
		all += t
	}
	for k, t := range m.Totals {
		m.Alpha[k] = 1e-4 + 10*float64(t)/float64(all)
	}
	m.Provenance = model.Provenance{TermgroveVersion: "test", Created: "2026-12-01T00:00:00Z", Seed: int64(o.Seed), Options: map[string]string{"synthetic": "true"}}
	return m
}

func isPrior(row []model.WordWeight, w int32) bool {
	for _, e := range row {
		if e.Word == w {
			return true
		}
	}
	return false
}
