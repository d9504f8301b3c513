package main

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"termgrove/fit"
	"termgrove/internal/records"
	"termgrove/model"
)

// completion computes the document-completion log-likelihood of records
// under a fitted model: θ is inferred by fold-in Gibbs sampling (φ fixed)
// from the first half of each record's known tokens, and the second half is
// scored with Σ_k θ_k φ_kw. The unigram baseline scores the same tokens with
// add-one smoothed training word frequencies. Both are per token (nats).
func completion(modelPath, recsPath string) error {
	m, err := model.Load(modelPath)
	if err != nil {
		return err
	}
	an, err := m.NewAnalyzer()
	if err != nil {
		return err
	}
	K, W := m.K(), len(m.Words)
	phi := fit.ModelPhi(m)
	// Unigram from the training counts.
	freq := make([]float64, W)
	var total float64
	for k := range m.Counts {
		for _, e := range m.Counts[k] {
			freq[e.Word] += float64(e.Count)
			total += float64(e.Count)
		}
	}
	var a0 float64
	for _, a := range m.Alpha {
		a0 += a
	}
	r := rand.New(rand.NewPCG(1, 1))
	var llTopic, llUni, llAlpha float64
	var scored, recs int
	cols := map[int32][]float64{}
	nd := make([]float64, K)
	theta := make([]float64, K)
	p := make([]float64, K)
	err = records.Read(recsPath, records.Options{}, func(rec records.Record) error {
		toks, _ := an.Analyze(rec.Join(nil), nil, false)
		var ws []int32
		for _, t := range toks {
			if t.ID >= 0 && int(t.ID) < W {
				ws = append(ws, t.ID)
			}
		}
		if len(ws) < 2 {
			return nil
		}
		half := len(ws) / 2
		first, second := ws[:half], ws[half:]
		clear(cols)
		col := func(w int32) []float64 {
			c, ok := cols[w]
			if !ok {
				c = make([]float64, K)
				phi.Column(w, c)
				cols[w] = c
			}
			return c
		}
		z := make([]int, len(first))
		clear(nd)
		for i := range z {
			z[i] = r.IntN(K)
			nd[z[i]]++
		}
		clear(theta)
		const iters, keep = 30, 15
		for it := 0; it < iters; it++ {
			for i, w := range first {
				nd[z[i]]--
				c := col(w)
				var s float64
				for k := range p {
					s += (nd[k] + m.Alpha[k]) * c[k]
					p[k] = s
				}
				u := r.Float64() * s
				k := 0
				for k < K-1 && p[k] <= u {
					k++
				}
				z[i] = k
				nd[k]++
			}
			if it >= iters-keep {
				for k := range theta {
					theta[k] += (nd[k] + m.Alpha[k]) / (float64(len(first)) + a0) / keep
				}
			}
		}
		for _, w := range second {
			c := col(w)
			var s float64
			for k := range theta {
				s += theta[k] * c[k]
			}
			llTopic += math.Log(s)
			var sa float64
			for k := range theta {
				sa += m.Alpha[k] / a0 * c[k]
			}
			llAlpha += math.Log(sa)
			llUni += math.Log((freq[w] + 1) / (total + float64(W)))
			scored++
		}
		recs++
		return nil
	})
	if err != nil {
		return err
	}
	fmt.Printf("document completion on %s: %d records, %d scored tokens\n", recsPath, recs, scored)
	fmt.Printf("  termgrove model: %.4f nats/token, perplexity %.1f\n", llTopic/float64(scored), math.Exp(-llTopic/float64(scored)))
	fmt.Printf("  α only (no fold-in): %.4f nats/token, perplexity %.1f\n", llAlpha/float64(scored), math.Exp(-llAlpha/float64(scored)))
	fmt.Printf("  α: sum %.3f, largest %.3f, K %d\n", a0, slices.Max(m.Alpha), K)
	fmt.Printf("  unigram:         %.4f nats/token, perplexity %.1f\n", llUni/float64(scored), math.Exp(-llUni/float64(scored)))
	return nil
}
