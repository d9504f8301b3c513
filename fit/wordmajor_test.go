package fit

import (
	"math"
	"math/rand/v2"
	"reflect"
	"testing"
)

// wmConditional lays the word-major parts out per topic for the current
// token (word w, record list at slab offset o, the token still counted on
// its topic old, taken out by wmParts arithmetically): the
// "both" terms wmParts computed, the word part α_k·n_kw/(n_k+B_k) over the
// word's topics, the prior terms, the doc part n_dk·β0/(n_k+B_k) that the
// rejection step targets and the smoothing terms. It checks the cached
// totals (word part, smoothing), that the record list holds the record's
// topic counts with the token and n_kw those of z with it, that the "both" terms are exactly the
// record's topics holding w, and that the doc envelope bounds the doc part
// topic by topic. di is the record, i the token's position.
func wmConditional(t *testing.T, wk *worker, w, o, old int32, di int, i int64) []float64 {
	t.Helper()
	st, m := wk.st, wk.wm
	both, qw, qp, denv, s0, ds := wk.wmParts(w, o, old)
	s := s0 + ds
	p := make([]float64, st.K)

	// The record list against z.
	d := &st.docs[di]
	ndk := make([]int32, st.K)
	for x := d.start; x < d.end; x++ {
		if x != i {
			ndk[st.z[x]]++
		}
	}
	l := m.slab[o+1 : o+1+m.slab[o].k]
	seen := 0
	for j, e := range l {
		if j > 0 && l[j-1].k >= e.k {
			t.Fatalf("record list %v not sorted by topic", l)
		}
		if e.n <= 0 || ndk[e.k] != e.n-b2i(e.k == old) {
			t.Fatalf("record list %v: topic %d holds %d other tokens in z (token on %d)", l, e.k, ndk[e.k], old)
		}
		if ndk[e.k] > 0 {
			seen++
		}
	}
	for _, n := range ndk {
		if n > 0 {
			seen--
		}
	}
	if seen != 0 || m.slab[o].n != int32(d.end-d.start) {
		t.Fatalf("record list %v against z, header %v", l, m.slab[o])
	}

	// n_kw of the word from z.
	nkw := make([]float64, st.K)
	for j := st.occStart[w]; j < st.occStart[w+1]; j++ {
		if pos := st.occ[j]; pos != i {
			nkw[st.z[pos]]++
		}
	}
	var sb, sw, sd, ss float64
	hit := map[int32]bool{}
	for j, k := range m.hits {
		// A topic the word left during the pass stays in its bitset: its
		// term is then 0.
		// The token's own topic stays in the record's list while the
		// token is drawn: its term is then 0 if the record has no other.
		if (ndk[k] == 0 && (k != old || m.hbuf[j] != 0)) || (nkw[k] == 0 && m.hbuf[j] != 0) || hit[k] {
			t.Fatalf("both term %v at topic %d: n_dk %d, n_kw %v", m.hbuf[j], k, ndk[k], nkw[k])
		}
		hit[k] = true
		p[k] += m.hbuf[j]
		sb += m.hbuf[j]
	}
	for k := range nkw {
		if nkw[k] > 0 && ndk[k] > 0 && !hit[int32(k)] {
			t.Fatalf("topic %d holds the word and the record but has no both term", k)
		}
		if float64(m.cnt[k]-b2i(int32(k) == old)) != nkw[k] {
			t.Fatalf("topic %d: n_kw %d cached, %v in z", k, m.cnt[k], nkw[k])
		}
		if nkw[k] > 0 && m.wbits[k>>6]>>(k&63)&1 == 0 {
			t.Fatalf("topic %d holds the word but is not in its bitset", k)
		}
	}
	for k := 0; k < st.K; k++ {
		inv := 1 / (float64(wk.nk[k]-b2i(int32(k) == old)) + st.B[k])
		v := st.alpha[k] * nkw[k] * inv
		p[k] += v
		sw += v
		dv := float64(ndk[k]) * st.beta0 * inv
		if env := float64(ndk[k]) * st.beta0 / m.bmin; dv > env*(1+1e-12) {
			t.Fatalf("topic %d: doc term %v above its envelope %v", k, dv, env)
		}
		p[k] += dv
		sd += float64(ndk[k]) * st.beta0 / m.bmin
		v = st.alpha[k] * st.beta0 * inv
		p[k] += v
		ss += v
	}
	for j := st.pStart[w]; j < st.pStart[w+1]; j++ {
		p[st.pTopic[j]] += wk.pbuf[j-st.pStart[w]]
	}
	for _, c := range []struct {
		name          string
		cached, exact float64
	}{{"both", both, sb}, {"word", qw, sw}, {"doc envelope", denv, sd}, {"smoothing", s, ss}} {
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

// wmRecordOf maps each training token to its record.
func wmRecordOf(st *state) []int {
	rec := make([]int, len(st.words))
	for di := range st.docs {
		for i := st.docs[di].start; i < st.docs[di].end; i++ {
			rec[i] = di
		}
	}
	return rec
}

// checkCountsFromZ checks that n_k and the word lists are those of z.
func checkCountsFromZ(t *testing.T, st *state) {
	t.Helper()
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
			t.Fatalf("word %d: list %v, from z %v", w, wt[w], st.wt[w])
		}
	}
	if !reflect.DeepEqual(nk, st.nk) {
		t.Fatalf("n_k %v, from z %v", nk, st.nk)
	}
}

// TestWordMajorEqualsDense runs word-major passes token by token on random
// states (records with and without subjects, concept rows with and without
// terms, asymmetric α) and checks at every token that the parts of the
// word-major draw, laid out per topic, give exactly the dense collapsed
// Gibbs conditional, with the cached totals and the record lists checked
// against z; after the pass the counts must be those of z. Common
// practice, no source: the identity (a+n)(c+π+m) = n·m + a·m + (a+n)π +
// n·β0 + a·β0 term by term.
func TestWordMajorEqualsDense(t *testing.T) {
	withFlat(t)
	trials := 0
	defer func() {
		if trials < 8 && !t.Failed() {
			t.Errorf("only %d trials ran the word-major pass", trials)
		}
	}()
	for trial := 0; trial < 12; trial++ {
		C, F := 6+trial, trial%3
		if trial == 5 {
			F = 0
		}
		p, c := randomSetup(uint64(trial), C, 9+trial, 30, 15)
		st, err := newState(p, c, Options{FreeTopics: F, Seed: int64(trial), Workers: 1, Alpha: 0.3, Anchor: F > 0 && trial%4 == 0})
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
		checkCountsFromZ(t, st)
		wk := st.workers[0]
		wk.refresh()
		free := 0
		for _, d := range st.docs {
			if d.subjects == nil {
				free++
			}
		}
		if wk.wm == nil {
			if free == 0 { // anchored: every record has subjects
				continue
			}
			t.Fatalf("trial %d: word-major sweep not on", trial)
		}
		if trial%2 == 1 { // smoothing by the Fenwick trees
			wk.smoothRej = false
			smooth := func(k int) float64 { return st.alpha[k] * st.beta0 * wk.tp[k].inv }
			wk.fenC.build(smooth)
			wk.fenF.build(func(i int) float64 { return smooth(st.C + i) })
		}
		m := wk.wm
		recOf := wmRecordOf(st)
		m.aU = 0 // asymmetric α
		wk.wmBuildLists()
		checked := 0
		for w := int32(0); w < int32(st.W); w++ {
			wk.wmBeginWord(w)
			for j := st.occStart[w]; j < st.occStart[w+1]; j++ {
				o := m.rec[j]
				if o < 0 {
					continue
				}
				i := st.occ[j]
				old := st.z[i]
				got := wmConditional(t, wk, w, o, old, recOf[i], i)
				want := denseConditional(st, recOf[i], i)
				for k := range want {
					if math.Abs(got[k]-want[k]) > 1e-9 {
						t.Fatalf("trial %d record %d token %d topic %d: word-major parts %.15g, dense %.15g", trial, recOf[i], i, k, got[k], want[k])
					}
				}
				checked++
				st.z[i] = wk.wmToken(w, o, old)
			}
			wk.wmEndWord(w)
		}
		if checked == 0 {
			t.Fatal("no tokens checked")
		}
		trials++
		checkCountsFromZ(t, st)
		for _, b := range m.wbits {
			if b != 0 {
				t.Fatal("word topic bits left set after the pass")
			}
		}
		for _, n := range m.cnt {
			if n != 0 {
				t.Fatal("word counts left after the pass")
			}
		}
		// Whole word-major sweeps keep the counts those of z too, and their
		// copy of z in word order.
		for sw := 0; sw < 3; sw++ {
			st.sweepOnce()
			if wk.wm == nil || !st.wm.zwOK {
				t.Fatal("word-major sweep not on")
			}
			for j, o := range st.wm.rec {
				if o >= 0 && st.wm.zw[j] != st.z[st.occ[j]] {
					t.Fatalf("occurrence %d: topic %d in word order, %d in z", j, st.wm.zw[j], st.z[st.occ[j]])
				}
			}
		}
		checkCountsFromZ(t, st)
	}
}

// TestWordMajorDrawMatchesConditional draws many times from one frozen
// conditional with the word-major draw and compares the frequencies with
// the dense formula (each within 5 standard errors). Topics hold many
// tokens against small B_k, so the doc proposals (accepted with
// B_min/(n_k+B_k)) and the smoothing proposals are far from their targets;
// the same draws must be far from what always accepting them would give,
// so the test would catch that bug. Common practice, no source.
func TestWordMajorDrawMatchesConditional(t *testing.T) {
	withFlat(t)
	// small: the token's own topic holds only it and one other token of
	// its record, so taking the token out (n_k−1, n_dk−1) changes that
	// topic's terms and its doc acceptance B_min/(n_k−1+B_k) a lot.
	for _, tc := range []struct{ prior, small bool }{{false, false}, {true, false}, {true, true}} {
		prior := tc.prior
		p, c := randomSetup(42, 8, 6, 40, 12)
		if !prior {
			p.Lambda = 0
		}
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
		var small *sdoc
		if tc.small {
			// The last free topic's tokens go to the one before; the first
			// two tokens of a record without subjects (≥ 3 tokens) take it.
			kx := int32(st.K - 1)
			for x, k := range st.z {
				if k == kx {
					st.z[x] = kx - 1
				}
			}
			for di := range st.docs {
				if d := &st.docs[di]; d.subjects == nil && d.end-d.start >= 3 {
					small = d
					break
				}
			}
			st.z[small.start], st.z[small.start+1] = kx, kx
			if err := st.rebuildCounts(); err != nil {
				t.Fatal(err)
			}
		}
		wk := st.workers[0]
		wk.refresh()
		if wk.wm == nil {
			t.Fatal("word-major sweep not on")
		}
		m := wk.wm
		m.aU = 0
		wk.wmBuildLists()
		recOf := wmRecordOf(st)
		// An unrestricted record's token whose record has ≥ 3 tokens.
		j := int64(0)
		for ; j < int64(len(st.occ)); j++ {
			if o := m.rec[j]; o >= 0 && m.slab[o].n >= 3 {
				break
			}
		}
		if small != nil {
			for j = 0; st.occ[j] != small.start; j++ {
			}
			if wk.nk[st.K-1] != 2 {
				t.Fatalf("small: n_k %d", wk.nk[st.K-1])
			}
		}
		i := st.occ[j]
		w := st.words[i]
		wk.wmBeginWord(w)
		o := m.rec[j]
		old := st.z[i]
		want := denseConditional(st, recOf[i], i)

		// Always accepting: the doc envelope n_dk·β0/B_min, the smoothing
		// proposal α_k·β0/B_k scaled to the smoothing total of its group
		// (concepts, free topics), on top of the exact parts.
		d := &st.docs[recOf[i]]
		ndk := make([]float64, st.K)
		for x := d.start; x < d.end; x++ {
			if x != i {
				ndk[st.z[x]]++
			}
		}
		var sProp, sTrue [2]float64
		group := func(k int) int {
			if k >= st.C {
				return 1
			}
			return 0
		}
		nkX := func(k int) float64 { return float64(wk.nk[k] - b2i(int32(k) == old)) }
		for k := 0; k < st.K; k++ {
			inv := 1 / (nkX(k) + st.B[k])
			sProp[group(k)] += st.alpha[k] * st.beta0 / st.B[k]
			sTrue[group(k)] += st.alpha[k] * st.beta0 * inv
		}
		naive := make([]float64, st.K)
		var tot float64
		for k := 0; k < st.K; k++ {
			inv := 1 / (nkX(k) + st.B[k])
			nkw := float64(m.cnt[k] - b2i(int32(k) == old))
			pm := st.priorMass(int32(k), w)
			naive[k] = (ndk[k]+st.alpha[k])*(nkw+pm)*inv + ndk[k]*st.beta0/m.bmin +
				st.alpha[k]*st.beta0/st.B[k]*sTrue[group(k)]/sProp[group(k)]
			tot += naive[k]
		}
		for k := range naive {
			naive[k] /= tot
		}

		const n = 400000
		counts := make([]float64, st.K)
		for x := 0; x < n; x++ {
			counts[wk.wmDraw(w, o, old)]++
		}
		worstNaive := 0.0
		for k := range want {
			se := math.Sqrt(n * want[k] * (1 - want[k]))
			if want[k] == 0 && counts[k] > 0 {
				t.Fatalf("prior=%v: topic %d has zero probability but was drawn %v times", prior, k, counts[k])
			}
			if math.Abs(counts[k]-n*want[k]) > 5*se+1e-9 {
				t.Errorf("prior=%v topic %d: drawn %v times, expected %.1f ± %.1f", prior, k, counts[k], n*want[k], se)
			}
			if naive[k] > 0 {
				seN := math.Sqrt(n * naive[k] * (1 - naive[k]))
				worstNaive = max(worstNaive, math.Abs(counts[k]-n*naive[k])/seN)
			}
		}
		if worstNaive < 20 {
			t.Errorf("prior=%v small=%v: the draws are within %.1f standard errors of an always-accepting sampler: the test has no power", prior, tc.small, worstNaive)
		}
		t.Logf("prior=%v small=%v: always-accept distribution off by up to %.0f standard errors; doc proposals %d, %d accepted",
			prior, tc.small, worstNaive, wk.fst.DocProposals, wk.fst.DocAccepted)
	}
}

// TestWordMajorGeweke is TestGeweke with the word-major sweep for the
// records without subjects (records 0 and 2; record 1 has subjects and is
// swept record by record with the flat path). Source: Geweke 2004 (see
// TestGeweke).
func TestWordMajorGeweke(t *testing.T) {
	withFlat(t)
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

// TestWordMajorOn: with the flat path forced and one worker, sweeps are word
// major (so the resume and reproducibility tests under withFlat run it);
// with two workers they are not.
func TestWordMajorOn(t *testing.T) {
	withFlat(t)
	for _, workers := range []int{1, 2} {
		p, c := randomSetup(9, 12, 30, 80, 30)
		st, err := newState(p, c, Options{FreeTopics: 3, Seed: 1, Workers: workers})
		if err != nil {
			t.Fatal(err)
		}
		st.initAssign()
		st.sweepOnce()
		for _, wk := range st.workers {
			if (wk.wm != nil) != (workers == 1) {
				t.Fatalf("%d workers: word-major %v", workers, wk.wm != nil)
			}
		}
		free := 0
		for _, d := range st.docs {
			if d.subjects == nil {
				free += int(d.end - d.start)
			}
		}
		if got := st.workers[0].fst.WordMajorTokens; workers == 1 && (got != int64(free) || free == 0) {
			t.Fatalf("word-major sweep drew %d tokens, the records without subjects hold %d", got, free)
		}
	}
}
