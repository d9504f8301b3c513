package fit

import (
	"fmt"
	"math/rand/v2"
	"testing"
)

// benchCorpus draws 200k tokens from 100 sparse themes over 20k words.
func benchCorpus() *Corpus {
	r := rand.New(rand.NewPCG(1, 2))
	c := &Corpus{W: 20000}
	themes := make([][]int32, 100)
	for k := range themes {
		for i := 0; i < 200; i++ {
			themes[k] = append(themes[k], int32(r.IntN(c.W)))
		}
	}
	for d := 0; d < 2000; d++ {
		a, b := r.IntN(100), r.IntN(100)
		doc := Doc{ID: fmt.Sprint(d)}
		for i := 0; i < 100; i++ {
			th := themes[a]
			if r.IntN(3) == 0 {
				th = themes[b]
			}
			doc.Words = append(doc.Words, th[r.IntN(len(th))])
		}
		c.Docs = append(c.Docs, doc)
	}
	return c
}

// BenchmarkSweep reports the time per token of one sweep at several K
// (after a few warm-up sweeps); scripts/fitbench does the large runs.
func BenchmarkSweep(b *testing.B) {
	c := benchCorpus()
	for _, K := range []int{100, 1000, 10000} {
		b.Run(fmt.Sprintf("K=%d", K), func(b *testing.B) {
			bn, err := NewBench(nil, c, Options{FreeTopics: K, Workers: 1, Seed: 1, FixedAlpha: true})
			if err != nil {
				b.Fatal(err)
			}
			for i := 0; i < 5; i++ {
				bn.Sweep()
			}
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				bn.Sweep()
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(c.Tokens()), "ns/token")
		})
	}
}
