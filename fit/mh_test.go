package fit

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// TestMHKernelInvariant runs the MH chain of single tokens many times and
// compares the empirical distribution of the token's topic with the exact
// conditional. MH with the correct acceptance ratio leaves the conditional
// invariant whatever the proposal; the test also measures how far the word
// proposal alone is from the target, so that a pass means the correction
// works.
// Source: Metropolis–Hastings detailed balance (Hastings 1970); the test
// design is common practice, no source.
func TestMHKernelInvariant(t *testing.T) {
	p, c := randomSetup(11, 6, 8, 30, 12)
	st, err := newState(p, c, Options{FreeTopics: 3, Seed: 2, Workers: 1, Alpha: 0.3, Sampler: SamplerMH})
	if err != nil {
		t.Fatal(err)
	}
	st.initAssign()
	wk := st.workers[0]
	wk.refresh()
	wk.mhPrepare(0, len(st.docs))
	var targets []int
	for di := range st.docs {
		if st.docs[di].subjects == nil && st.docs[di].end-st.docs[di].start >= 3 {
			targets = append(targets, di)
		}
	}
	if len(targets) < 3 {
		t.Fatalf("setup has %d unrestricted records", len(targets))
	}
	targets = targets[:3]
	// Move the other records' topics on before the chains run.
	for rep := 0; rep < 3; rep++ {
		for di := range st.docs {
			if st.docs[di].subjects == nil && !slices.Contains(targets, di) {
				wk.mhDoc(&st.docs[di])
			}
		}
	}
	const N = 300000
	const tol = 0.015 // total variation; the Monte Carlo error is ~0.003 here
	for _, di := range targets {
		d := &st.docs[di]
		z := st.z[d.start:d.end]
		for _, k := range z {
			wk.mh.top[k].ndk++
		}
		i := 1
		g := d.start + int64(i)
		w := st.words[g]
		mw := &wk.mh.words[w]
		sl := &wk.mh.ring[0]
		hist := make([]float64, st.K)
		for n := 0; n < N; n++ {
			wk.mhDraw(sl, w, g, i, len(z))
			wk.mhFetch(sl, w)
			wk.mhToken(sl, z, w, g, i)
			hist[z[i]]++
		}
		for _, k := range z {
			wk.mh.top[k].ndk = 0
		}
		exact := denseConditional(st, di, g)
		// The word proposal alone: n_kw (without the token) + β_kw.
		q := make([]float64, st.K)
		var qs float64
		for k := range q {
			n := float64(mw.hget(int32(k)))
			if int32(k) == z[i] {
				n--
			}
			q[k] = n + st.beta0 + st.priorMass(int32(k), w)
			qs += q[k]
		}
		var tv, tvq float64
		for k := range hist {
			tv += math.Abs(hist[k]/N-exact[k]) / 2
			tvq += math.Abs(q[k]/qs-exact[k]) / 2
		}
		t.Logf("record %d word %d: TV(chain, exact) = %.4f, TV(word proposal, exact) = %.3f", di, w, tv, tvq)
		if tv > tol {
			t.Errorf("record %d: TV(chain, exact conditional) = %.4f > %.3f\nchain %.4f\nexact %.4f", di, tv, tol, scale(hist, 1.0/N), exact)
		}
		if tvq < 5*tol {
			t.Errorf("record %d: the word proposal is close to the target (TV %.3f): the test would not catch a missing correction", di, tvq)
		}
	}
}

func scale(x []float64, f float64) []float64 {
	out := make([]float64, len(x))
	for i, v := range x {
		out[i] = v * f
	}
	return out
}

// TestMHGeweke is TestGeweke (Geweke 2004) with the MH sampler: records 0
// and 2 of the tiny model go through MH, record 1 (restricted) through the
// exact sampler.
// Source: Geweke 2004, the marginal- vs successive-conditional simulators.
func TestMHGeweke(t *testing.T) {
	const m = 200000
	zs := runGewekeSampler(t, m, nil, SamplerMH)
	for j, z := range zs {
		if math.Abs(z) > 4.5 {
			t.Errorf("test function %d: z = %.2f", j, z)
		}
	}
	t.Logf("z-scores: %.2f", zs)
	bad := runGewekeSampler(t, m, []float64{1.5, 0.8, 0.4}, SamplerMH)
	worst := 0.0
	for _, z := range bad {
		worst = max(worst, math.Abs(z))
	}
	if worst < 6 {
		t.Errorf("an MH sampler given the wrong α went unnoticed (max |z| = %.2f)", worst)
	}
	t.Logf("wrong-α z-scores: %.2f", bad)
}

// TestMHCountsConsistent checks that after MH sweeps (one worker, and
// AD-LDA with three) the counts equal those recomputed from z.
func TestMHCountsConsistent(t *testing.T) {
	for _, cfg := range []struct {
		nw     int
		anchor bool
	}{{1, false}, {3, false}, {3, true}} {
		nw := cfg.nw
		p, c := randomSetup(5, 6, 30, 60, 20)
		st, err := newState(p, c, Options{FreeTopics: 4, Seed: 1, Workers: nw, Sampler: SamplerMH, Anchor: cfg.anchor})
		if err != nil {
			t.Fatal(err)
		}
		st.initAssign()
		for s := 0; s < 5; s++ {
			st.sweepOnce()
		}
		nk := slices.Clone(st.nk)
		wt := make([][]tc, st.W)
		for w := range wt {
			wt[w] = slices.Clone(st.wt[w])
		}
		if err := st.rebuildCounts(); err != nil {
			t.Fatal(err)
		}
		if !slices.Equal(nk, st.nk) {
			t.Errorf("workers %d: n_k %v, recomputed %v", nw, nk, st.nk)
		}
		for w := range wt {
			a, b := wt[w], st.wt[w]
			sortTC := func(l []tc) {
				slices.SortFunc(l, func(x, y tc) int { return int(x.k - y.k) })
			}
			a, b = slices.Clone(a), slices.Clone(b)
			sortTC(a)
			sortTC(b)
			if !slices.Equal(a, b) {
				t.Errorf("workers %d word %d: %v, recomputed %v", nw, w, wt[w], st.wt[w])
			}
			for i := 1; i < len(wt[w]); i++ {
				if wt[w][i-1].n < wt[w][i].n {
					t.Errorf("workers %d word %d: list not sorted by count: %v", nw, w, wt[w])
					break
				}
			}
		}
	}
}

// TestMHReproducible: one worker and a seed give the same fit twice.
func TestMHReproducible(t *testing.T) {
	p, c := randomSetup(3, 6, 30, 60, 20)
	var first []int32
	for run := 0; run < 2; run++ {
		st, err := newState(p, c, Options{FreeTopics: 3, Seed: 9, Workers: 1, Sampler: SamplerMH})
		if err != nil {
			t.Fatal(err)
		}
		st.initAssign()
		for s := 0; s < 10; s++ {
			st.sweepOnce()
		}
		if run == 0 {
			first = slices.Clone(st.z)
		} else if !slices.Equal(first, st.z) {
			t.Error("two runs with the same seed differ")
		}
	}
}

// TestBarsMH is TestBars with the MH sampler (the same 300 sweeps).
// Source: Griffiths & Steyvers 2004, "Finding scientific topics" (the bars).
func TestBarsMH(t *testing.T) {
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
	res, err := RunContext(t.Context(), nil, c, Options{FreeTopics: 10, Sweeps: 300, Alpha: 1, FixedAlpha: true, Beta0: 0.1, Seed: 1, Workers: 1, Sampler: SamplerMH})
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

func TestSamplerOption(t *testing.T) {
	p, c := randomSetup(3, 4, 10, 10, 5)
	if _, err := newState(p, c, Options{FreeTopics: 1, Sampler: "gibbs"}); err == nil {
		t.Error("unknown sampler accepted")
	}
	for _, tc := range []struct {
		s    string
		k    int
		want bool
	}{{"", 100000, false}, {SamplerSparse, 100000, false}, {SamplerMH, 10, true}, {SamplerAuto, mhAutoK - 1, false}, {SamplerAuto, mhAutoK, true}} {
		o := Options{Sampler: tc.s}
		if got := o.useMH(tc.k); got != tc.want {
			t.Errorf("sampler %q K=%d: mh %v, want %v", tc.s, tc.k, got, tc.want)
		}
	}
}
