package modeltest

import (
	"math"
	"math/rand/v2"
	"slices"

	"termgrove/model"
	"termgrove/prior"
)

// FromPrior builds a model over a real scheme and its label prior with
// synthetic counts: each concept topic holds its prior terms (20 tokens
// each) plus about o.WordsPerConcept words drawn half from a Zipf law over
// all words, half uniformly; free topics draw 20× as many. Words are the
// prior analyzer's dictionary, padded with "x<i>" terms up to o.Words.
// Until a real fit of a large vocabulary exists, this stands in for one.
func FromPrior(p *prior.Prior, o Options) *model.Model {
	if o.Free == 0 {
		o.Free = 10
	}
	if o.WordsPerConcept == 0 {
		o.WordsPerConcept = 60
	}
	words := slices.Clone(p.Analyzer.Dict().Terms())
	for i := len(words); i < o.Words; i++ {
		words = append(words, "x"+itoa(i))
	}
	W := len(words)
	C, F := len(p.Scheme.Concepts), o.Free
	K := C + F
	r := rand.New(rand.NewPCG(o.Seed, 0x9e3779b97f4a7c15))
	zipf := rand.NewZipf(rand.New(rand.NewPCG(o.Seed, 1)), 1.07, 10, uint64(W-1))
	m := &model.Model{
		Scheme: p.Scheme, Analyzer: p.Analyzer.Options(), Words: words,
		C: C, F: F, Beta0: p.Beta0, Lambda: p.Lambda,
		Prior:  make([][]model.WordWeight, C),
		Counts: make([][]model.WordCount, K), Totals: make([]int64, K),
		Alpha: make([]float64, K), DocCounts: make([]int32, K),
	}
	seen := map[int32]int32{}
	for k := 0; k < K; k++ {
		clear(seen)
		if k < C {
			for _, e := range p.Rows[k] {
				m.Prior[k] = append(m.Prior[k], model.WordWeight{Word: e.Word, Weight: e.Weight})
				seen[e.Word] = 20
			}
		}
		n := o.WordsPerConcept
		if k >= C {
			n *= 20
		}
		n = 1 + int(float64(n)*r.ExpFloat64())
		for added := 0; added < n && len(seen) < W/2; added++ {
			w := int32(zipf.Uint64())
			if r.IntN(2) == 0 {
				w = int32(r.IntN(W))
			}
			seen[w] += int32(1 + math.Floor(3*r.ExpFloat64()*r.ExpFloat64()))
		}
		row := make([]model.WordCount, 0, len(seen))
		for w, c := range seen {
			row = append(row, model.WordCount{Word: w, Count: c})
		}
		slices.SortFunc(row, func(a, b model.WordCount) int { return int(a.Word - b.Word) })
		var tot int64
		for _, e := range row {
			tot += int64(e.Count)
		}
		m.Counts[k], m.Totals[k] = row, tot
		m.DocCounts[k] = int32(1 + tot/50)
	}
	var all int64
	for _, t := range m.Totals {
		all += t
	}
	for k, t := range m.Totals {
		m.Alpha[k] = 1e-4 + 10*float64(t)/float64(all)
	}
	m.Provenance = model.Provenance{TermgroveVersion: "test", Created: "2026-12-01T00:00:00Z", Seed: int64(o.Seed),
		Options: map[string]string{"synthetic-counts": "true"}}
	return m
}

func itoa(i int) string {
	if i == 0 {
		return "0"
	}
	var b [20]byte
	n := len(b)
	for i > 0 {
		n--
		b[n] = byte('0' + i%10)
		i /= 10
	}
	return string(b[n:])
}
