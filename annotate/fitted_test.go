package annotate

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"termgrove/fit"
)

// TestFittedBars (outside check a, on a fitted model): termgrove's fitter
// learns ten free topics from 1,000 synthetic "bars" documents of 100 words
// (θ ~ Dirichlet(1)); each fitted topic is matched to its bar by Hellinger
// distance; 100 new documents of 150 words with known θ are then
// annotated. The mean L1 distance between inferred and true proportions
// (over the ten bars) is within 0.33 (measured 0.27): the exact posterior
// mean of a perfectly known model stays about 0.26 from θ on bars
// (TestKnownProportions), the fit adds a little. For scale, the flat 0.1
// guess is 0.70 from θ.
// Source: Griffiths & Steyvers 2004, PNAS 101, synthetic "bars" data.
func TestFittedBars(t *testing.T) {
	if testing.Short() {
		t.Skip("fits a model: a few seconds")
	}
	r := rand.New(rand.NewPCG(2004, 5))
	var bars [][]float64
	for i := 0; i < 5; i++ {
		h, v := make([]float64, 25), make([]float64, 25)
		for j := 0; j < 5; j++ {
			h[i*5+j] = 0.2
			v[j*5+i] = 0.2
		}
		bars = append(bars, h, v)
	}
	dir1 := func() []float64 { // Dirichlet(1) by normalised Exp(1)
		th := make([]float64, len(bars))
		s := 0.0
		for k := range th {
			th[k] = r.ExpFloat64()
			s += th[k]
		}
		for k := range th {
			th[k] /= s
		}
		return th
	}
	c := &fit.Corpus{W: 25}
	for d := 0; d < 1000; d++ {
		th := dir1()
		doc := fit.Doc{ID: fmt.Sprint(d)}
		for i := 0; i < 100; i++ {
			doc.Words = append(doc.Words, int32(pick(r, bars[pick(r, th)])))
		}
		c.Docs = append(c.Docs, doc)
	}
	res, err := fit.RunContext(t.Context(), nil, c, fit.Options{FreeTopics: 10, Sweeps: 200, Alpha: 1, FixedAlpha: true, Beta0: 0.1, Seed: 1, Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	m := res.Model
	if len(m.Words) == 0 {
		for w := 0; w < 25; w++ {
			m.Words = append(m.Words, fmt.Sprintf("w%d", w))
		}
	}
	// Match fitted topics to bars.
	match := make([]int, len(bars)) // bar → topic
	used := map[int]bool{}
	for b, bar := range bars {
		best, bd := -1, 2.0
		for k := 0; k < m.K(); k++ {
			bc := 0.0
			for w := range bar {
				bc += math.Sqrt(bar[w] * m.Phi(k, w))
			}
			if d := math.Sqrt(math.Max(0, 1-bc)); d < bd && !used[k] {
				best, bd = k, d
			}
		}
		if bd > 0.2 {
			t.Fatalf("bar %d: no fitted topic within Hellinger 0.2 (best %.3f); the fit failed", b, bd)
		}
		used[best] = true
		match[b] = best
	}
	a, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	var l1, flat float64
	const docs = 100
	for d := 0; d < docs; d++ {
		th := dir1()
		ids := make([]int32, 150)
		for i := range ids {
			ids[i] = int32(pick(r, bars[pick(r, th)]))
		}
		text, toks := tokens(ids, m.Words)
		st := a.get()
		if _, err := a.infer(&Result{Concepts: []Concept{}}, text, toks, Options{}, st); err != nil {
			t.Fatal(err)
		}
		start, _ := a.startDense(st)
		got := a.thetaDense(st, float64(st.samples), start)
		a.put(st)
		for b := range bars {
			l1 += math.Abs(got[match[b]]-th[b]) / docs
			flat += math.Abs(0.1-th[b]) / docs
		}
	}
	t.Logf("mean L1 %.3f (flat guess %.3f)", l1, flat)
	if l1 > 0.33 {
		t.Errorf("mean L1 %.3f > 0.33 (flat guess %.3f)", l1, flat)
	}
}

// thetaDense returns θ over all K topics from a finished state, from the
// word types' posteriors (post): Σ_u n_u·p_u(k) + α_k, normalised. start,
// when not nil, holds the start's distributions per word type
// (startDense): they count as one more sample beside the sweeps', as
// theta counts them after startExpected.
func (a *Annotator) thetaDense(st *state, samples float64, start [][]float64) []float64 {
	th := make([]float64, a.K)
	alpha := func(k int) float64 { // α as the options changed it
		if st.allow {
			return st.ext[k]
		}
		return a.alpha[k] + st.ext[k]
	}
	sumA := 0.0
	for k := range th {
		sumA += alpha(k)
	}
	N := float64(len(st.tu))
	for k := range th {
		e := 0.0
		for u := range st.uw {
			e += float64(st.ucnt[u]) * a.post(st, int32(u), int32(k), samples)
		}
		if start != nil {
			s := 0.0
			for u := range st.uw {
				s += float64(st.ucnt[u]) * start[u][k]
			}
			e = (e*samples + s) / (samples + 1)
		}
		th[k] = (alpha(k) + e) / (N + sumA)
	}
	return th
}

// startDense returns the start's distribution over all K topics for each
// word type of a state that startExpected began (the package comment's
// formula, "Start", computed densely: E⁰, v¹ and E¹, then v² and Z²),
// with the α_k·φ⁰_k part q spread over all topics. It also returns E⁰ by
// topic.
func (a *Annotator) startDense(st *state) (start [][]float64, e0 []float64) {
	m := a.m
	K, U := a.K, len(st.uw)
	s := make([][]float64, U)
	e0 = make([]float64, K)
	for u, w := range st.uw {
		s[u] = make([]float64, K)
		for k := 0; k < K; k++ {
			s[u][k] = m.Phi(k, int(w)) - a.phi0[k]
			if s[u][k] < 1e-15 {
				s[u][k] = 0
			}
			e0[k] += float64(st.ucnt[u]) * m.Alpha[k] * s[u][k] / a.wh[w].aw
		}
	}
	v1 := make([][]float64, U)
	z1 := make([]float64, U)
	e1 := make([]float64, K)
	for u, w := range st.uw {
		v1[u] = make([]float64, K)
		z1[u] = a.q
		for k := 0; k < K; k++ {
			if s[u][k] > 0 {
				v1[u][k] = (e0[k] - m.Alpha[k]*s[u][k]/a.wh[w].aw + m.Alpha[k]) * m.Phi(k, int(w))
				z1[u] += v1[u][k]
			}
		}
		for k := 0; k < K; k++ {
			e1[k] += float64(st.ucnt[u]) * v1[u][k] / z1[u]
		}
	}
	start = make([][]float64, U)
	for u, w := range st.uw {
		start[u] = make([]float64, K)
		z2 := a.q
		for k := 0; k < K; k++ {
			if s[u][k] > 0 {
				start[u][k] = max(0, (e1[k]-v1[u][k]/z1[u]+m.Alpha[k])*m.Phi(k, int(w)))
				z2 += start[u][k]
			}
		}
		for k := 0; k < K; k++ {
			start[u][k] = (start[u][k] + m.Alpha[k]*a.phi0[k]) / z2
		}
	}
	return start, e0
}
