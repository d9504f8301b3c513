package fit

import (
	"math"
	"math/rand/v2"
	"reflect"
	"testing"
	"unsafe"
)

// withFlat makes every state built during a test take the flat path and
// rejection smoothing at every sweep, for every token, and with one worker
// the word-major sweep (wordmajor.go) for the records without subjects.
func withFlat(t *testing.T) {
	t.Helper()
	testFlat = true
	t.Cleanup(func() { testFlat = false })
}

// withRecordMajor keeps the record-major sweep under withFlat, so that the
// flat path draws every token.
func withRecordMajor(t *testing.T) {
	t.Helper()
	testNoWordMajor = true
	t.Cleanup(func() { testNoWordMajor = false })
}

// flatConditional lays the flat path's parts out per topic: the doc terms
// the worker computed (matched list entries and the cached n_dk·β0 part),
// its prior terms, the smoothing terms and the word part α_k·n_kw/(n_k+B_k)
// the rejection step targets, computed here from w's list. It checks the
// cached totals, that the match set is exactly the list entries of the
// record's topics, and that the envelope bounds the word part topic by
// topic. old is the topic of a token unassigned but still in w's list
// (−1: none).
func flatConditional(t *testing.T, wk *worker, w, old int32) []float64 {
	t.Helper()
	st := wk.st
	d, qp, s, env := wk.flatBuckets(w, old)
	p := make([]float64, st.K)
	list := wk.wt[w]
	var sd float64
	matched := map[int32]bool{}
	for j, i := range wk.match {
		e := list[i]
		matched[e.k] = true
		p[e.k] += wk.mbuf[j]
		sd += wk.mbuf[j]
	}
	var nw float64
	for i, e := range list {
		if e.k == old && wk.oldPos != i {
			t.Fatalf("old topic %d at index %d, oldPos %d", old, i, wk.oldPos)
		}
		if matched[e.k] != (wk.tp[e.k].ndk > 0) {
			t.Fatalf("topic %d: matched %v, n_dk %d", e.k, matched[e.k], wk.tp[e.k].ndk)
		}
		n := float64(e.n)
		if e.k == old {
			n--
		}
		nw += n
		if wk.restricted && !wk.tp[e.k].allowed {
			continue
		}
		v := st.alpha[e.k] * n * wk.tp[e.k].inv
		if v > wk.cmax*n*(1+1e-12) {
			t.Fatalf("topic %d: word term %v above its envelope %v", e.k, v, wk.cmax*n)
		}
		p[e.k] += v
	}
	if want := float64(st.occStart[w+1] - st.occStart[w]); math.Abs(env-wk.cmax*want) > 1e-12*env || nw > want {
		t.Fatalf("envelope %v for %v tokens of the word (%v in the list), cmax %v", env, want, nw, wk.cmax)
	}
	for j := st.pStart[w]; j < st.pStart[w+1]; j++ {
		p[st.pTopic[j]] += wk.pbuf[j-st.pStart[w]]
	}
	var sr, ss float64
	for _, k := range wk.dtopics {
		v := float64(wk.tp[k].ndk) * st.beta0 * wk.tp[k].inv
		p[k] += v
		sr += v
	}
	for k := 0; k < st.K; k++ {
		if wk.restricted && !wk.tp[k].allowed {
			continue
		}
		v := st.alpha[k] * st.beta0 * wk.tp[k].inv
		p[k] += v
		ss += v
	}
	for _, c := range []struct {
		name          string
		cached, exact float64
	}{{"doc", d, sd}, {"rsum", wk.rsum, sr}, {"smoothing", s, ss}} {
		if math.Abs(c.cached-c.exact) > 1e-9*math.Max(1e-12, math.Abs(c.exact)) {
			t.Fatalf("%s: cached total %.17g, sum of terms %.17g", c.name, c.cached, c.exact)
		}
	}
	_ = qp
	var tot float64
	for _, v := range p {
		tot += v
	}
	for k := range p {
		p[k] /= tot
	}
	return p
}

// TestFlatEqualsDense checks that the parts of the flat path (flat.go),
// laid out per topic, give exactly the dense collapsed-Gibbs conditional
// for random states, unrestricted and restricted records, concept rows
// with and without terms, and that the envelope bounds the word part.
// Moving on draws with the flat path, so its list and bitset updates are
// checked along the way. Common practice, no source: the identity
// (a+n)(c+π+m) = n·m + n·β0 + a·m + aβ0 + (a+n)π term by term.
func TestFlatEqualsDense(t *testing.T) {
	withFlat(t)
	for trial := 0; trial < 12; trial++ {
		C, F := 6+trial, trial%3
		if trial == 5 {
			F = 0
		}
		p, c := randomSetup(uint64(trial), C, 9+trial, 30, 15)
		st, err := newState(p, c, Options{FreeTopics: F, Seed: int64(trial), Workers: 1, Alpha: 0.3, Anchor: F > 0 && trial%2 == 0})
		if err != nil {
			t.Fatal(err)
		}
		r := rand.New(rand.NewPCG(uint64(trial), 99))
		for k := range st.alpha { // asymmetric α
			st.alpha[k] = 0.05 + r.Float64()
		}
		st.initAssign()
		st.sweepOnce()
		st.sweepOnce()
		wk := st.workers[0]
		wk.refresh()
		if !wk.flat || !wk.smoothRej {
			t.Fatal("flat path not on")
		}
		checked := 0
		for di := range st.docs {
			d := &st.docs[di]
			wk.begin(d, true)
			for i := d.start; i < d.end; i++ {
				w, old := st.words[i], st.z[i]
				wk.unassign(w, old)
				got := flatConditional(t, wk, w, old)
				want := denseConditional(st, di, i)
				for k := range want {
					if math.Abs(got[k]-want[k]) > 1e-9 {
						t.Fatalf("trial %d record %d token %d topic %d: flat parts %.15g, dense %.15g", trial, di, i, k, got[k], want[k])
					}
				}
				checked++
				k := wk.drawFlat(w, old, i)
				wk.reassign(w, old, k)
				st.z[i] = k
			}
			wk.end()
		}
		if checked == 0 {
			t.Fatal("no tokens checked")
		}
		// The lists and counts the flat draws left are those of z.
		nk := append([]int32(nil), st.nk...)
		wt := make([][]tc, len(st.wt))
		for w, l := range st.wt {
			wt[w] = append([]tc(nil), l...)
		}
		if err := st.rebuildCounts(); err != nil {
			t.Fatal(err)
		}
		for w := range wt {
			if len(wt[w]) == 0 && len(st.wt[w]) == 0 {
				continue
			}
			if !reflect.DeepEqual(wt[w], st.wt[w]) {
				t.Fatalf("trial %d word %d: list %v, from z %v", trial, w, wt[w], st.wt[w])
			}
		}
		if !reflect.DeepEqual(nk, st.nk) {
			t.Fatalf("trial %d: n_k %v, from z %v", trial, nk, st.nk)
		}
		for _, b := range wk.dbits {
			if b != 0 {
				t.Fatal("record topic bits left set after the record")
			}
		}
	}
}

// TestFlatDrawMatchesConditional draws many times from one frozen
// conditional with the flat path and compares the frequencies with the
// dense formula (each within 5 standard errors). The state is chosen so
// that the rejection steps matter: topics hold many tokens against small
// B_k, so the word and smoothing proposals are far from their targets. The
// same draws must be far from what a sampler that always accepted would
// give, so the test would catch such a bug. Common practice, no source.
func TestFlatDrawMatchesConditional(t *testing.T) {
	withFlat(t)
	for _, restricted := range []bool{false, true} {
		p, c := randomSetup(42, 8, 6, 40, 12)
		st, err := newState(p, c, Options{FreeTopics: 3, Seed: 3, Workers: 1, Alpha: 1.5, Beta0: 0.4})
		if err != nil {
			t.Fatal(err)
		}
		r := rand.New(rand.NewPCG(7, 7))
		for k := range st.alpha {
			st.alpha[k] = 0.5 + 2*r.Float64()
		}
		st.initAssign()
		st.sweepOnce()
		wk := st.workers[0]
		wk.refresh()
		di := 0
		for di < len(st.docs) && ((st.docs[di].subjects != nil) != restricted || st.docs[di].end-st.docs[di].start < 3) {
			di++
		}
		d := &st.docs[di]
		i := d.start
		w := st.words[i]
		wk.begin(d, true)
		old := st.z[i]
		wk.unassign(w, old)
		want := denseConditional(st, di, i)

		// What always accepting both proposals would draw: the word
		// envelope cmax per token of w (the token itself included) spread
		// on the tokens' topics, and the smoothing proposal α_k·β0/B_k
		// scaled to the smoothing total, on top of the exact parts.
		naive := make([]float64, st.K)
		for j := st.occStart[w]; j < st.occStart[w+1]; j++ {
			if pos := st.occ[j]; pos != i {
				naive[st.z[pos]] += wk.cmax
			}
		}
		// Smoothing groups drawn by proposal: concepts of an unrestricted
		// record, free topics; a restricted record's subjects are walked.
		group := func(k int) int {
			switch {
			case k >= st.C:
				return 1
			case restricted:
				return 2
			}
			return 0
		}
		var sProp, sTrue [3]float64
		for k := 0; k < st.K; k++ {
			if !restricted || wk.tp[k].allowed {
				sProp[group(k)] += st.alpha[k] * st.beta0 / st.B[k]
				sTrue[group(k)] += st.alpha[k] * st.beta0 * wk.tp[k].inv
			}
		}
		var tot float64
		for k := 0; k < st.K; k++ {
			if restricted && !wk.tp[k].allowed {
				naive[k] = 0
				continue
			}
			pm := st.priorMass(int32(k), w)
			naive[k] += (float64(wk.tp[k].ndk) + st.alpha[k]) * pm * wk.tp[k].inv
			if g := group(k); g == 2 {
				naive[k] += st.alpha[k] * st.beta0 * wk.tp[k].inv
			} else {
				naive[k] += st.alpha[k] * st.beta0 / st.B[k] * sTrue[g] / sProp[g]
			}
			for _, e := range wk.wt[w] {
				if int(e.k) == k && wk.tp[k].ndk > 0 {
					n := e.n
					if e.k == old {
						n--
					}
					naive[k] += float64(wk.tp[k].ndk) * float64(n) * wk.tp[k].inv
				}
			}
			naive[k] += float64(wk.tp[k].ndk) * st.beta0 * wk.tp[k].inv
			tot += naive[k]
		}
		for k := range naive {
			naive[k] /= tot
		}

		const n = 400000
		counts := make([]float64, st.K)
		for j := 0; j < n; j++ {
			counts[wk.drawFlat(w, old, i)]++
		}
		worstNaive := 0.0
		for k := range want {
			se := math.Sqrt(n * want[k] * (1 - want[k]))
			if want[k] == 0 && counts[k] > 0 {
				t.Fatalf("restricted=%v: topic %d has zero probability but was drawn %v times", restricted, k, counts[k])
			}
			if math.Abs(counts[k]-n*want[k]) > 5*se+1e-9 {
				t.Errorf("restricted=%v topic %d: drawn %v times, expected %.1f ± %.1f", restricted, k, counts[k], n*want[k], se)
			}
			if naive[k] > 0 {
				seN := math.Sqrt(n * naive[k] * (1 - naive[k]))
				worstNaive = max(worstNaive, math.Abs(counts[k]-n*naive[k])/seN)
			}
		}
		if worstNaive < 20 {
			t.Errorf("restricted=%v: the draws are within %.1f standard errors of an always-accepting sampler: the test has no power", restricted, worstNaive)
		}
		t.Logf("restricted=%v: always-accept distribution off by up to %.0f standard errors", restricted, worstNaive)
	}
}

// TestFlatGeweke is TestGeweke with the flat path and rejection smoothing
// at every token (record-major sweeps). Source: Geweke 2004 (see TestGeweke).
func TestFlatGeweke(t *testing.T) {
	withFlat(t)
	withRecordMajor(t)
	const m = 200000
	zs := runGeweke(t, m, nil)
	for j, z := range zs {
		if math.Abs(z) > 4.5 {
			t.Errorf("test function %d: z = %.2f", j, z)
		}
	}
	t.Logf("z-scores: %.2f", zs)
	bad := runGeweke(t, m, []float64{1.5, 0.8, 0.4})
	worst := 0.0
	for _, z := range bad {
		worst = max(worst, math.Abs(z))
	}
	if worst < 6 {
		t.Errorf("a sampler given the wrong α went unnoticed (max |z| = %.2f)", worst)
	}
}

// TestFlatResumeAndReproducible: with the flat path, one worker and a seed
// give the same model bit for bit, and a fit resumed from a checkpoint ends
// where the uninterrupted one does (TestResumeSameAsUninterrupted's setup);
// with word-major sweeps (one worker) and with record-major ones.
func TestFlatResumeAndReproducible(t *testing.T) {
	withFlat(t)
	TestReproducible(t)
	TestResumeSameAsUninterrupted(t)
	withRecordMajor(t)
	TestReproducible(t)
	TestResumeSameAsUninterrupted(t)
}

// TestFlatOneWorkerOnly: with several workers the flat path is off (the
// word proposal reads other shards' topics), rejection smoothing is not.
func TestFlatOneWorkerOnly(t *testing.T) {
	withFlat(t)
	p, c := randomSetup(5, 10, 12, 60, 20)
	st, err := newState(p, c, Options{FreeTopics: 2, Seed: 1, Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	st.initAssign()
	st.sweepOnce()
	for _, wk := range st.workers {
		if wk.flat || !wk.smoothRej {
			t.Fatalf("two workers: flat %v, rejection smoothing %v", wk.flat, wk.smoothRej)
		}
	}
	TestMergeKeepsCounts(t)
}

// TestTopicLine: a worker's per-topic data fills one cache line exactly.
func TestTopicLine(t *testing.T) {
	if s := unsafe.Sizeof(topic{}); s != 64 {
		t.Fatalf("topic is %d bytes, want 64", s)
	}
}

// TestAliasTable: draws from an alias table match its weights (each within
// 5 standard errors), for uneven weights and for equal ones (which take
// the table-free path). Common practice, no source.
func TestAliasTable(t *testing.T) {
	r := newRNG(1, 1)
	for _, ws := range [][]float64{{0.1, 3, 0.5, 0.5, 2, 0.01, 7}, {2, 2, 2, 2, 2}, {1}} {
		var a aliasTable
		var sum float64
		for _, v := range ws {
			sum += v
		}
		a.build(len(ws), sum, func(i int) float64 { return ws[i] })
		if a.uniform != (len(ws) < 7) {
			t.Fatalf("weights %v: uniform %v", ws, a.uniform)
		}
		const n = 200000
		counts := make([]float64, len(ws))
		for j := 0; j < n; j++ {
			counts[a.draw(r)]++
		}
		for i, v := range ws {
			p := v / sum
			if se := math.Sqrt(n * p * (1 - p)); math.Abs(counts[i]-n*p) > 5*se+1e-9 {
				t.Errorf("weights %v: index %d drawn %v times, expected %.0f ± %.0f", ws, i, counts[i], n*p, se)
			}
		}
	}
}
