package fit

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"termgrove/model"
	"termgrove/prior"
)

// dirichlet draws from Dir(a, ..., a) of size n (gamma variates by
// Marsaglia & Tsang for a ≥ 1, boosted for a < 1).
func dirichlet(r *rand.Rand, n int, a float64) []float64 {
	p := make([]float64, n)
	var s float64
	for i := range p {
		p[i] = gammaVariate(r, a)
		s += p[i]
	}
	for i := range p {
		p[i] /= s
	}
	return p
}

func gammaVariate(r *rand.Rand, a float64) float64 {
	if a < 1 {
		return gammaVariate(r, a+1) * math.Pow(r.Float64(), 1/a)
	}
	d := a - 1.0/3
	c := 1 / math.Sqrt(9*d)
	for {
		x := r.NormFloat64()
		v := 1 + c*x
		if v <= 0 {
			continue
		}
		v = v * v * v
		u := r.Float64()
		if math.Log(u) < 0.5*x*x+d-d*v+d*math.Log(v) {
			return d * v
		}
	}
}

func hellinger(p, q []float64) float64 {
	var bc float64
	for i := range p {
		bc += math.Sqrt(p[i] * q[i])
	}
	return math.Sqrt(math.Max(0, 1-bc))
}

// phiRows returns φ as K rows over W words.
func phiRows(m *model.Model, W int) [][]float64 {
	ph := ModelPhi(m)
	K := ph.Topics()
	rows := make([][]float64, K)
	for k := range rows {
		rows[k] = make([]float64, W)
	}
	col := make([]float64, K)
	for w := 0; w < W; w++ {
		ph.Column(int32(w), col)
		for k := range rows {
			rows[k][w] = col[k]
		}
	}
	return rows
}

// generate draws records of n tokens from topics with θ ~ Dir(alpha).
func generate(r *rand.Rand, topics [][]float64, docs, n int, alpha float64) *Corpus {
	c := &Corpus{W: len(topics[0])}
	for d := 0; d < docs; d++ {
		theta := dirichlet(r, len(topics), alpha)
		doc := Doc{ID: fmt.Sprintf("doc%05d", d)}
		for i := 0; i < n; i++ {
			k := drawFrom(r, theta)
			doc.Words = append(doc.Words, int32(drawFrom(r, topics[k])))
		}
		c.Docs = append(c.Docs, doc)
	}
	return c
}

// TestBars fits the synthetic "bars" data with free topics only and checks
// that every bar is recovered.
// Source: Griffiths & Steyvers 2004, PNAS 101 suppl. 1, "Finding scientific
// topics", Fig. 1: 10 bar topics on a 5×5 grid, 2,000 documents of 100
// words, α = 1.
func TestBars(t *testing.T) {
	if testing.Short() {
		t.Skip("bars: a few seconds of sampling")
	}
	r := rand.New(rand.NewPCG(2004, 101))
	var bars [][]float64
	for i := 0; i < 5; i++ {
		h, v := make([]float64, 25), make([]float64, 25)
		for j := 0; j < 5; j++ {
			h[i*5+j] = 0.2
			v[j*5+i] = 0.2
		}
		bars = append(bars, h, v)
	}
	c := generate(r, bars, 2000, 100, 1)
	res, err := RunContext(t.Context(), nil, c, Options{FreeTopics: 10, Sweeps: 300, Alpha: 1, FixedAlpha: true, Beta0: 0.1, Seed: 1, Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	fitted := phiRows(res.Model, 25)
	used := map[int]bool{}
	for b, bar := range bars {
		best, bestD := -1, 2.0
		for k, f := range fitted {
			if d := hellinger(bar, f); d < bestD {
				best, bestD = k, d
			}
		}
		if bestD > 0.15 || used[best] {
			t.Errorf("bar %d: closest fitted topic %d at Hellinger distance %.3f (already matched: %v)", b, best, bestD, used[best])
		}
		used[best] = true
	}
	if n := len(res.LogLik); n < 2 || res.LogLik[n-1].LogLik <= res.LogLik[0].LogLik {
		t.Errorf("training log-likelihood did not rise: %+v", res.LogLik)
	}
}

// TestConceptAlignment generates records from known concept word
// distributions whose labels name only 2 of their 10 words (plus two
// background themes no concept covers) and checks that each fitted concept
// topic lies closest to its own true distribution, for every seed 1–10 with
// one worker and 1–3 with two, with Options.Anchor off, and on with
// Options.AnchorRelease. (Before the label-seeded start of initAssign, seeds
// 1, 6, 8 and 9 failed without Anchor: a free topic took a concept's
// unlabelled words, or another concept's topic took them. With Anchor alone,
// the CLI's default, 5 of the 13 cases still fail: see releaseAnchors and
// bench/fit.md.)
func TestConceptAlignment(t *testing.T) {
	for _, anchor := range []bool{false, true} {
		for _, c := range []struct{ seed, workers int }{
			{1, 1}, {2, 1}, {3, 1}, {4, 1}, {5, 1}, {6, 1}, {7, 1}, {8, 1}, {9, 1}, {10, 1},
			{1, 2}, {2, 2}, {3, 2},
		} {
			t.Run(fmt.Sprintf("release%v/seed%d/workers%d", anchor, c.seed, c.workers), func(t *testing.T) {
				conceptAlignment(t, int64(c.seed), c.workers, anchor)
			})
		}
	}
}

func conceptAlignment(t *testing.T, seed int64, workers int, anchor bool) {
	const C, per, W = 8, 10, 100
	r := rand.New(rand.NewPCG(8, 8))
	truth := make([][]float64, C+2)
	p := &prior.Prior{Rows: make([][]prior.Entry, C), Lambda: 300, Beta0: 0.01}
	for k := 0; k < C; k++ {
		truth[k] = make([]float64, W)
		for j := 0; j < per; j++ {
			truth[k][k*per+j] = float64(per-j) / 55 // Zipf-like within the concept
		}
		// The label names the concept's 4th and 7th most frequent words only.
		p.Rows[k] = []prior.Entry{{Word: int32(k*per + 3), Weight: 0.6}, {Word: int32(k*per + 6), Weight: 0.4}}
	}
	for b := 0; b < 2; b++ { // background themes over words 80..99
		truth[C+b] = make([]float64, W)
		for j := 0; j < 10; j++ {
			truth[C+b][80+b*10+j] = 0.1
		}
	}
	c := generate(r, truth, 1500, 60, 0.2)
	res, err := RunContext(t.Context(), p, c, Options{FreeTopics: 2, Sweeps: 100, Seed: seed, Workers: workers, Anchor: anchor, AnchorRelease: anchor})
	if err != nil {
		t.Fatal(err)
	}
	fitted := phiRows(res.Model, W)
	for k := 0; k < C; k++ {
		own := hellinger(fitted[k], truth[k])
		for j := 0; j < C+2; j++ {
			if j != k && hellinger(fitted[k], truth[j]) <= own {
				t.Errorf("concept %d: closer to true distribution %d (%.3f) than to its own (%.3f)", k, j, hellinger(fitted[k], truth[j]), own)
			}
		}
		if own > 0.2 {
			t.Errorf("concept %d: Hellinger distance to its own distribution %.3f", k, own)
		}
	}
	if res.FreeShare < 0.1 {
		t.Errorf("free topics took %.2f of the tokens; the background themes alone are ~0.2", res.FreeShare)
	}
}
