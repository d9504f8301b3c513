package fit

import (
	"math"
	"math/rand/v2"
	"reflect"
	"slices"
	"strconv"
	"testing"

	"termgrove/prior"
)

// randomSetup builds a prior of C concepts over W words (each row naming a
// few words, some rows empty) and D random records, a third of them
// restricted to one or two subjects.
func randomSetup(seed uint64, C, W, D, maxLen int) (*prior.Prior, *Corpus) {
	r := rand.New(rand.NewPCG(seed, 7))
	p := &prior.Prior{Rows: make([][]prior.Entry, C), Lambda: 3, Beta0: 0.05}
	for k := 0; k < C; k++ {
		if k%4 == 3 {
			continue // no terms
		}
		n := 1 + r.IntN(3)
		used := map[int32]bool{}
		var sum float64
		for len(used) < n {
			used[int32(r.IntN(W))] = true
		}
		for w := int32(0); w < int32(W); w++ {
			if used[w] {
				v := 0.2 + r.Float64()
				p.Rows[k] = append(p.Rows[k], prior.Entry{Word: w, Weight: v})
				sum += v
			}
		}
		for i := range p.Rows[k] {
			p.Rows[k][i].Weight /= sum
		}
	}
	c := &Corpus{W: W}
	for d := 0; d < D; d++ {
		doc := Doc{ID: "d" + string(rune('a'+d%26)) + string(rune('a'+d/26))}
		n := 1 + r.IntN(maxLen)
		for i := 0; i < n; i++ {
			doc.Words = append(doc.Words, int32(r.IntN(W)))
		}
		if d%3 == 1 && C > 0 {
			doc.Subjects = append(doc.Subjects, int32(r.IntN(C)))
			if r.IntN(2) == 0 {
				doc.Subjects = append(doc.Subjects, int32(r.IntN(C)))
			}
		}
		c.Docs = append(c.Docs, doc)
	}
	return p, c
}

// denseConditional is the plain formula p(k) ∝ (n_dk+α_k)(n_kw+β_kw)/(n_k+B_k)
// over the allowed topics, from counts recomputed from z without token skip.
func denseConditional(st *state, di int, skip int64) []float64 {
	d := &st.docs[di]
	K := st.K
	nk := make([]float64, K)
	nkw := make([]float64, K)
	ndk := make([]float64, K)
	w := st.words[skip]
	for ddi := range st.docs {
		dd := &st.docs[ddi]
		for i := dd.start; i < dd.end; i++ {
			if i == skip {
				continue
			}
			k := st.z[i]
			nk[k]++
			if st.words[i] == w {
				nkw[k]++
			}
			if ddi == di {
				ndk[k]++
			}
		}
	}
	p := make([]float64, K)
	var tot float64
	for k := 0; k < K; k++ {
		if d.subjects != nil && k < st.C {
			ok := false
			for _, s := range d.subjects {
				ok = ok || int(s) == k
			}
			if !ok {
				continue
			}
		}
		// β_kw and B_k straight from the prior rows, not from the index.
		b := st.beta0
		B := float64(st.W) * st.beta0
		if k < st.C {
			for _, e := range st.prior.Rows[k] {
				B += st.lambda * e.Weight
				if e.Word == w {
					b += st.lambda * e.Weight
				}
			}
		}
		p[k] = (ndk[k] + st.alpha[k]) * (nkw[k] + b) / (nk[k] + B)
		tot += p[k]
	}
	for k := range p {
		p[k] /= tot
	}
	return p
}

// bucketConditional lays the four buckets of the sparse sampler out per
// topic, using the worker's own bucket values, and checks its cached totals.
// old is the topic of a token unassigned but still in w's list (−1: none).
func bucketConditional(t *testing.T, wk *worker, w, old int32) []float64 {
	t.Helper()
	st := wk.st
	qw := wk.wordBucket(w, old)
	qp := wk.priorBucket(w)
	r, s := wk.rsum, wk.smoothTotal()
	p := make([]float64, st.K)
	var sq, sp, sr, ss float64
	for i, e := range wk.wt[w] {
		if e.k == old && wk.oldPos != i {
			t.Fatalf("old topic %d at index %d, oldPos %d", old, i, wk.oldPos)
		}
		p[e.k] += wk.qbuf[i]
		sq += wk.qbuf[i]
	}
	for j := st.pStart[w]; j < st.pStart[w+1]; j++ {
		v := wk.pbuf[j-st.pStart[w]]
		p[st.pTopic[j]] += v
		sp += v
	}
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
	}{{"word", qw, sq}, {"prior", qp, sp}, {"doc", r, sr}, {"smoothing", s, ss}} {
		if math.Abs(c.cached-c.exact) > 1e-9*math.Max(1e-12, math.Abs(c.exact)) {
			t.Fatalf("%s bucket: cached total %.17g, sum of terms %.17g", c.name, c.cached, c.exact)
		}
	}
	tot := qw + qp + r + s
	for k := range p {
		p[k] /= tot
	}
	return p
}

// TestBucketsEqualDense checks that the sparse sampler's four buckets, laid
// out per topic, give exactly the dense collapsed-Gibbs conditional, for
// random states, unrestricted and restricted records, and concept rows with
// and without terms. Common practice, no source: the identity
// (a+n)(c+π+m) = aβ0 + nβ0 + (a+n)π + (a+n)m term by term.
func TestBucketsEqualDense(t *testing.T) {
	for trial := 0; trial < 12; trial++ {
		C, F := 6+trial, trial%3
		if trial == 5 {
			F = 0
		}
		p, c := randomSetup(uint64(trial), C, 9+trial, 30, 15)
		// Anchored records (every other trial with free topics) are
		// restricted to label-matched concepts, some to none at all.
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
		checked := 0
		for di := range st.docs {
			d := &st.docs[di]
			wk.begin(d, true)
			for i := d.start; i < d.end; i++ {
				// Every other token as the sweep does it (the old topic still
				// in the word list), the others fully removed.
				w, old := st.words[i], st.z[i]
				lazy := i%2 == 0
				if lazy {
					wk.unassign(w, old)
				} else {
					wk.remove(w, old)
					old = -1
				}
				got := bucketConditional(t, wk, w, old)
				want := denseConditional(st, di, i)
				for k := range want {
					if math.Abs(got[k]-want[k]) > 1e-9 {
						t.Fatalf("trial %d record %d token %d topic %d: buckets %.15g, dense %.15g", trial, di, i, k, got[k], want[k])
					}
				}
				checked++
				k := wk.draw(w, old) // move on, so the cached sums evolve
				if lazy {
					wk.reassign(w, old, k)
				} else {
					wk.add(w, k)
				}
				st.z[i] = k
			}
			wk.end()
		}
		if checked == 0 {
			t.Fatal("no tokens checked")
		}
	}
}

// TestDrawMatchesConditional draws many times from one frozen conditional and
// compares the frequencies with the dense formula (each within 5 standard
// errors). Common practice, no source.
func TestDrawMatchesConditional(t *testing.T) {
	for _, restricted := range []bool{false, true} {
		p, c := randomSetup(42, 8, 6, 40, 12)
		st, err := newState(p, c, Options{FreeTopics: 3, Seed: 3, Workers: 1, Alpha: 0.4})
		if err != nil {
			t.Fatal(err)
		}
		st.initAssign()
		st.sweepOnce()
		wk := st.workers[0]
		wk.refresh()
		di := 0
		for di < len(st.docs) && (st.docs[di].subjects != nil) != restricted {
			di++
		}
		d := &st.docs[di]
		i := d.start
		w := st.words[i]
		wk.begin(d, true)
		wk.unassign(w, st.z[i])
		want := denseConditional(st, di, i)
		const n = 400000
		counts := make([]float64, st.K)
		for j := 0; j < n; j++ {
			counts[wk.draw(w, st.z[i])]++
		}
		for k := range want {
			se := math.Sqrt(n * want[k] * (1 - want[k]))
			if want[k] == 0 && counts[k] > 0 {
				t.Fatalf("restricted=%v: topic %d has zero probability but was drawn %v times", restricted, k, counts[k])
			}
			if math.Abs(counts[k]-n*want[k]) > 5*se+1e-9 {
				t.Errorf("restricted=%v topic %d: drawn %v times, expected %.1f ± %.1f", restricted, k, counts[k], n*want[k], se)
			}
		}
	}
}

// TestMergeKeepsCounts checks that after AD-LDA sweeps with several workers
// the shared counts equal the counts recomputed from the assignments, every
// list is in the order of before, and every worker holds the shared counts.
// With W = 400 many words are changed by one worker only in a sweep (the
// merge's shortcut), with W = 12 by all. Common practice, no source.
func TestMergeKeepsCounts(t *testing.T) {
	for _, W := range []int{12, 400} {
		p, c := randomSetup(5, 10, W, 60, 20)
		st, err := newState(p, c, Options{FreeTopics: 2, Seed: 1, Workers: 3})
		if err != nil {
			t.Fatal(err)
		}
		if len(st.workers) != 3 {
			t.Fatalf("workers = %d", len(st.workers))
		}
		st.initAssign()
		for i := 0; i < 5; i++ {
			st.sweepOnce()
		}
		for w, l := range st.wt {
			for i := 1; i < len(l); i++ {
				if !before(l[i-1], l[i]) {
					t.Fatalf("W=%d: word %d: merged list %v out of order", W, w, l)
				}
			}
			for _, wk := range st.workers {
				if !slices.Equal(wk.wt[w], l) {
					t.Fatalf("W=%d: word %d: a worker's list %v, shared %v", W, w, wk.wt[w], l)
				}
			}
		}
		nk := append([]int32(nil), st.nk...)
		wt := make(map[[2]int32]int32)
		for w, l := range st.wt {
			for _, e := range l {
				wt[[2]int32{int32(w), e.k}] = e.n
			}
		}
		if err := st.rebuildCounts(); err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(nk, st.nk) {
			t.Fatalf("W=%d: n_k after merge %v, from z %v", W, nk, st.nk)
		}
		wt2 := make(map[[2]int32]int32)
		for w, l := range st.wt {
			for _, e := range l {
				wt2[[2]int32{int32(w), e.k}] = e.n
			}
		}
		if !reflect.DeepEqual(wt, wt2) {
			t.Fatalf("W=%d: n_kw after merge differ from counts recomputed from z", W)
		}
		for _, wk := range st.workers {
			if !reflect.DeepEqual(wk.nk, st.nk) {
				t.Fatalf("W=%d: a worker's copy of n_k differs from the shared counts", W)
			}
		}
	}
}

// TestReproducible: one worker and a seed give the same model bit for bit,
// and so do two or three workers (AD-LDA with fixed shards); another seed
// gives another model.
func TestReproducible(t *testing.T) {
	p, c := randomSetup(9, 12, 30, 80, 30)
	for _, workers := range []int{1, 2, 3} {
		fitOnce := func(seed int64) *Result {
			res, err := RunContext(t.Context(), p, c, Options{FreeTopics: 3, Sweeps: 30, BurnIn: 5, OptimizeEvery: 5, Seed: seed, Workers: workers, HoldoutFraction: 0.1, HoldoutParticles: 3})
			if err != nil {
				t.Fatal(err)
			}
			return res
		}
		a, b, other := fitOnce(11), fitOnce(11), fitOnce(12)
		if !reflect.DeepEqual(a.Model.Counts, b.Model.Counts) || !reflect.DeepEqual(a.Model.Alpha, b.Model.Alpha) || a.HeldOutLLPerWord != b.HeldOutLLPerWord {
			t.Fatalf("same seed, %d workers: models differ", workers)
		}
		if reflect.DeepEqual(a.Model.Counts, other.Model.Counts) {
			t.Fatalf("%d workers: different seeds gave identical models", workers)
		}
		for k, a := range a.Model.Alpha {
			if !(a > 0) {
				t.Fatalf("α_%d = %v", k, a)
			}
		}
	}
}

// TestHoldoutShare: the id hash keeps about the asked share of records out,
// also for ids that differ only in their last digits.
// Common practice, no source.
func TestHoldoutShare(t *testing.T) {
	n := 0
	for i := 0; i < 10000; i++ {
		if holdout("hv-"+strconv.Itoa(i), 0.1) {
			n++
		}
	}
	if n < 900 || n > 1100 {
		t.Fatalf("%d of 10000 ids held out at 0.1", n)
	}
}

// TestReproducibleHeldOut checks the held-out figure is computed and finite.
func TestHeldOutComputed(t *testing.T) {
	p, c := randomSetup(9, 12, 30, 120, 30)
	res, err := RunContext(t.Context(), p, c, Options{FreeTopics: 3, Sweeps: 20, Seed: 1, Workers: 1, HoldoutFraction: 0.2, HoldoutParticles: 3})
	if err != nil {
		t.Fatal(err)
	}
	if res.HeldOutDocs == 0 || !(res.HeldOutLLPerWord < 0) || math.IsInf(res.HeldOutLLPerWord, 0) {
		t.Fatalf("held-out: %d records, %v per token", res.HeldOutDocs, res.HeldOutLLPerWord)
	}
	// A uniform model over 30 words scores log(1/30); the fitted one must not be far worse.
	if res.HeldOutLLPerWord < math.Log(1.0/30)-0.5 {
		t.Fatalf("held-out %v per token, uniform %v", res.HeldOutLLPerWord, math.Log(1.0/30))
	}
}

// TestMarginalAlpha: the model's α of a concept is the learned α scaled by
// the share of records allowed to use it without a person choosing it, plus
// the share of records whose subjects name it (Prior-LDA's label-frequency
// prior, Rubin et al. 2012, §4.1). Common practice for the first part, no
// source.
func TestMarginalAlpha(t *testing.T) {
	for _, anchor := range []bool{false, true} {
		p, c := randomSetup(3, 6, 20, 30, 10)
		st, err := newState(p, c, Options{FreeTopics: 2, Workers: 1, Alpha: 0.5, Anchor: anchor})
		if err != nil {
			t.Fatal(err)
		}
		a := st.marginalAlpha()
		for k := 0; k < st.K; k++ {
			free, human := 0, 0
			for i, d := range st.docs {
				named := false
				for _, s := range d.subjects {
					named = named || int(s) == k
				}
				switch {
				case d.subjects == nil || k >= st.C:
					free++
				case !named:
				case len(c.Docs[i].Subjects) > 0: // ids and docs align: no holdout
					human++
				default:
					free++
				}
			}
			D := float64(len(st.docs))
			want := 0.5*float64(free)/D + float64(human)/D
			if k >= st.C {
				want = 0.5
			}
			if math.Abs(a[k]-want) > 1e-12 {
				t.Errorf("anchor %v: α_%d = %v, want %v", anchor, k, a[k], want)
			}
		}
	}
}

// TestWordListOrder: after random increments and decrements a word's list
// holds exactly the nonzero counts, in the order of before (count
// descending, ties by topic), whatever the order of the operations.
// Common practice, no source.
func TestWordListOrder(t *testing.T) {
	r := rand.New(rand.NewPCG(4, 4))
	for trial := 0; trial < 200; trial++ {
		K := 1 + r.IntN(40)
		want := make([]int32, K)
		var l []tc
		for op := 0; op < 300; op++ {
			k := int32(r.IntN(K))
			switch {
			case want[k] > 0 && r.IntN(2) == 0:
				want[k]--
				if r.IntN(2) == 0 {
					decList(&l, k)
				} else {
					j := decListAt(&l, findList(l, k))
					if want[k] > 0 && l[j].k != k || want[k] == 0 && j != len(l) {
						t.Fatalf("trial %d: decListAt of %d returned %d in %v", trial, k, j, l)
					}
				}
			case want[k] > 0 && r.IntN(3) == 0:
				k2 := int32(r.IntN(K))
				if k2 == k {
					continue
				}
				want[k]--
				want[k2]++
				moveList(&l, k, k2)
			default:
				want[k]++
				if r.IntN(2) == 0 {
					incList(&l, k)
				} else { // with a guess, right or wrong
					incListAt(&l, k, r.IntN(len(l)+2)-1)
				}
			}
			got := make([]int32, K)
			for i, e := range l {
				if e.n <= 0 || got[e.k] != 0 {
					t.Fatalf("trial %d: bad entry %v in %v", trial, e, l)
				}
				got[e.k] = e.n
				if i > 0 && !before(l[i-1], e) {
					t.Fatalf("trial %d: %v out of order", trial, l)
				}
			}
			if !reflect.DeepEqual(got, want) {
				t.Fatalf("trial %d: counts %v, want %v", trial, got, want)
			}
		}
	}
}

// TestLabelSeededStart: after initAssign every token of a record without
// subjects whose word is a prior term sits in one of that word's concepts,
// the share of each concept among a shared label word's tokens follows the
// prior's mean of φ_kw, (β0+λπ_kw)/B_k, restricted records keep their
// subjects, and the counts match z. Common practice, no source.
func TestLabelSeededStart(t *testing.T) {
	p, c := randomSetup(21, 8, 15, 200, 25)
	// Word 0 is a term of concepts 0 (weight 0.8 of its row) and 1 (0.2)
	// at least.
	p.Rows[0] = []prior.Entry{{Word: 0, Weight: 0.8}, {Word: 5, Weight: 0.2}}
	p.Rows[1] = []prior.Entry{{Word: 0, Weight: 0.2}, {Word: 6, Weight: 0.8}}
	for i := range c.Docs {
		if i%3 != 1 {
			c.Docs[i].Words = append(c.Docs[i].Words, 0, 0, 0)
		}
	}
	st, err := newState(p, c, Options{FreeTopics: 3, Seed: 2, Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	st.initAssign()
	n0, n01 := 0, 0
	for di := range st.docs {
		d := &st.docs[di]
		for i := d.start; i < d.end; i++ {
			w, k := st.words[i], st.z[i]
			if d.subjects != nil {
				if int(k) < st.C && !slices.Contains(d.subjects, k) {
					t.Fatalf("record %d: token in concept %d, not one of its subjects %v", di, k, d.subjects)
				}
				continue
			}
			labels := st.pTopic[st.pStart[w]:st.pStart[w+1]]
			if len(labels) > 0 && !slices.Contains(labels, k) {
				t.Fatalf("record %d: token of word %d in topic %d, not in its labelled concepts %v", di, w, k, labels)
			}
			if w == 0 && d.subjects == nil {
				n01++
				if k == 0 {
					n0++
				}
			}
		}
	}
	// Other random rows may name word 0 too: the share is over all of them.
	var m0, mAll float64
	for j := st.pStart[0]; j < st.pStart[1]; j++ {
		m := (st.beta0 + st.pMass[j]) / st.B[st.pTopic[j]]
		mAll += m
		if st.pTopic[j] == 0 {
			m0 = m
		}
	}
	if st.pStart[1]-st.pStart[0] < 2 || m0 == 0 {
		t.Fatal("setup: word 0 should be a term of concept 0 and of another")
	}
	want := m0 / mAll
	got := float64(n0) / float64(n01)
	if sd := math.Sqrt(want * (1 - want) / float64(n01)); math.Abs(got-want) > 4*sd {
		t.Fatalf("word 0 in concept 0: %.3f of %d tokens, want %.3f ± %.3f", got, n01, want, sd)
	}
	nk := slices.Clone(st.nk)
	wt := make([][]tc, len(st.wt))
	for w := range st.wt {
		wt[w] = slices.Clone(st.wt[w])
	}
	if err := st.rebuildCounts(); err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(nk, st.nk) || !reflect.DeepEqual(wt, st.wt) {
		t.Fatal("counts after initAssign differ from counts recomputed from z")
	}
}
