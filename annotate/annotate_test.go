package annotate

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"reflect"
	"slices"
	"strings"
	"sync"
	"testing"

	"termgrove/concepts"
	"termgrove/model"
	"termgrove/model/modeltest"
	"termgrove/terms"
)

// barsModel builds a model whose topics are the ten "bars" of a 5×5 word
// grid (Griffiths & Steyvers 2004, PNAS 101, "Finding scientific topics"),
// given directly as counts of the true distributions: each bar topic holds
// scale tokens spread evenly over its 5 words. The first C bars are
// concepts (a small tree: concept 0 on top, 1..C-1 below it, concept C-1
// below 1 and 2 instead), the rest free topics. Word i is "w<i>".
func barsModel(C int, scale int32) (*model.Model, [][]float64) {
	var bars [][]float64
	for i := 0; i < 5; i++ {
		h, v := make([]float64, 25), make([]float64, 25)
		for j := 0; j < 5; j++ {
			h[i*5+j] = 0.2
			v[j*5+i] = 0.2
		}
		bars = append(bars, h, v)
	}
	return topicsModel(C, bars, scale), bars
}

// blocksModel is barsModel with ten disjoint topics of 5 words each
// (topic k owns words 5k..5k+4), so that only the record's length limits
// how well proportions can be recovered.
func blocksModel(C int, scale int32) (*model.Model, [][]float64) {
	var blocks [][]float64
	for k := 0; k < 10; k++ {
		b := make([]float64, 50)
		for j := 0; j < 5; j++ {
			b[5*k+j] = 0.2
		}
		blocks = append(blocks, b)
	}
	return topicsModel(C, blocks, scale), blocks
}

func topicsModel(C int, bars [][]float64, scale int32) *model.Model {
	K, W := len(bars), len(bars[0])
	m := &model.Model{C: C, F: K - C, Beta0: 0.01, Lambda: 0, Analyzer: terms.Options{Languages: []string{"en"}}}
	for w := 0; w < W; w++ {
		m.Words = append(m.Words, fmt.Sprintf("w%d", w))
	}
	s := &concepts.Scheme{IRI: "http://example.org/bars"}
	for k := 0; k < C; k++ {
		c := concepts.Concept{IRI: fmt.Sprintf("http://example.org/bar/%d", k),
			Pref: []concepts.Label{{Lang: "en", Text: fmt.Sprintf("bar %d", k)}}}
		if k == 0 {
			c.Top = true
		} else {
			c.Broader = []int{0}
		}
		s.Concepts = append(s.Concepts, c)
	}
	if C > 3 {
		s.Concepts[C-1].Broader = []int{1, 2}
	}
	for i := range s.Concepts {
		for _, p := range s.Concepts[i].Broader {
			s.Concepts[p].Narrower = append(s.Concepts[p].Narrower, i)
		}
	}
	m.Scheme = s
	m.Prior = make([][]model.WordWeight, C)
	for _, b := range bars {
		var row []model.WordCount
		for w, p := range b {
			if p > 0 {
				row = append(row, model.WordCount{Word: int32(w), Count: int32(float64(scale) * p)})
			}
		}
		m.Counts = append(m.Counts, row)
		m.Totals = append(m.Totals, int64(scale))
		m.Alpha = append(m.Alpha, 0.1)
		m.DocCounts = append(m.DocCounts, 1)
	}
	return m
}

// tokens turns word ids into tokens over a text "w3 w7 ...".
func tokens(ids []int32, words []string) (string, []terms.Token) {
	var b strings.Builder
	var toks []terms.Token
	for _, id := range ids {
		if b.Len() > 0 {
			b.WriteByte(' ')
		}
		start := b.Len()
		term := "zzz"
		if id >= 0 {
			term = words[id]
		}
		b.WriteString(term)
		toks = append(toks, terms.Token{Start: start, End: b.Len(), Term: term, ID: id})
	}
	return b.String(), toks
}

// conditional returns the distribution draw samples from for word type u in
// the current state, from the alias tables' exact probabilities.
func (a *Annotator) conditional(st *state, u int32) []float64 {
	w := int(st.uw[u])
	p := make([]float64, a.K)
	bt := 0.0
	for _, s := range st.act {
		k := st.slotTopic[s]
		v := (float64(st.ndk[k]) + st.ext[k]) * (a.phi0[k] + a.sOf(st, s, u))
		if c := st.cs[s]; c != float64(st.ndk[k])+st.ext[k] {
			panic(fmt.Sprintf("slot weight %v, n_dk + extra = %v", c, float64(st.ndk[k])+st.ext[k]))
		}
		p[k] += v
		bt += v
	}
	aw := 0.0
	if !st.allow {
		aw = a.wh[w].aw
		for k, d := range a.dense.pmf() {
			p[k] += a.q * d
		}
		lo, hi := a.off[w], a.off[w+1]
		for i, e := range a.ent[lo:hi] {
			n := float64(hi - lo)
			pk := a.entP[int(lo)+i]
			p[e.k] += (aw - a.q) * pk / n
			p[e.alt] += (aw - a.q) * (1 - pk) / n
		}
	}
	for k := range p {
		p[k] /= bt + aw
	}
	return p
}

// pmf returns the exact distribution an alias table draws from.
func (t alias) pmf() []float64 {
	n := float64(len(t.prob))
	p := make([]float64, len(t.prob))
	for i, q := range t.prob {
		p[i] += q / n
		p[t.alias[i]] += (1 - q) / n
	}
	return p
}

func TestAliasExact(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	for _, n := range []int{1, 2, 7, 100} {
		w := make([]float64, n)
		sum := 0.0
		for i := range w {
			w[i] = r.ExpFloat64()
			if i%5 == 3 {
				w[i] = 0
			}
			sum += w[i]
		}
		if sum == 0 {
			w[0], sum = 1, 1
		}
		for i, p := range newAlias(w, nil, nil).pmf() {
			// The alias method is exact by construction (Walker 1977).
			if math.Abs(p-w[i]/sum) > 1e-12 {
				t.Errorf("n=%d: p[%d] = %v, want %v", n, i, p, w[i]/sum)
			}
		}
	}
}

// TestConditionalEqualsDense: the split sampler draws from exactly
// p(k) ∝ (n_dk + α_k)·φ_kw, with φ from model.Phi (DESIGN.md, "The model").
func TestConditionalEqualsDense(t *testing.T) { bothModes(t, testConditionalEqualsDense) }

func testConditionalEqualsDense(t *testing.T, maxList int) {
	m := modeltest.Synthetic(modeltest.Options{Concepts: 60, Free: 5, Words: 300, WordsPerConcept: 20, Seed: 5})
	a, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	a.maxList = maxList
	r := rand.New(rand.NewPCG(3, 4))
	for _, mode := range []string{"plain", "restrict", "boost"} {
		st := a.get()
		ids := make([]int32, 40)
		for i := range ids {
			ids[i] = int32(r.IntN(m.W()))
		}
		_, toks := tokens(ids, m.Words)
		opt := Options{}
		switch mode {
		case "restrict":
			opt = Options{Subjects: []string{m.Scheme.Concepts[3].IRI, m.Scheme.Concepts[9].IRI}, SubjectMode: Restrict}
		case "boost":
			opt = Options{Subjects: []string{m.Scheme.Concepts[3].IRI}, SubjectMode: Boost, BoostFactor: 7}
		}
		res := &Result{}
		if _, err := a.infer(res, "", toks, opt, st); err != nil {
			t.Fatal(err)
		}
		// The sweeps left counts, weights and the bucket total in step.
		cnt := map[int32]int32{}
		for _, k := range st.z {
			cnt[k]++
		}
		dsum := 0.0
		for s, k := range st.slotTopic {
			if st.ndk[k] != cnt[k] || st.cs[s] != float64(st.ndk[k])+st.ext[k] {
				t.Fatalf("%s: topic %d: n_dk %d, tokens %d, weight %v", mode, k, st.ndk[k], cnt[k], st.cs[s])
			}
			if (st.cs[s] > 0) != (st.pos[s] >= 0) {
				t.Fatalf("%s: topic %d: weight %v, active position %d", mode, k, st.cs[s], st.pos[s])
			}
			dsum += st.cs[s] * st.phi0s[s]
		}
		if math.Abs(dsum-st.d) > 1e-12*dsum {
			t.Fatalf("%s: smoothing bucket %v, sum %v", mode, st.d, dsum)
		}
		// Take one token out, as the sweeps do, and compare.
		for i := 0; i < 5; i++ {
			k := st.z[i]
			st.commitOut(k, st.takeOut(k))
			u := st.tu[i]
			w := int(st.uw[u])
			got := a.conditional(st, u)
			want := make([]float64, a.K)
			sum := 0.0
			for k := 0; k < a.K; k++ {
				al := m.Alpha[k]
				switch {
				case mode == "restrict" && k < m.C && k != 3 && k != 9:
					al = 0
				case mode == "boost" && k == 3:
					al *= 7
				}
				want[k] = (float64(st.ndk[k]) + al) * m.Phi(k, w)
				sum += want[k]
			}
			for k := range want {
				if d := math.Abs(got[k] - want[k]/sum); d > 1e-9 {
					t.Fatalf("%s: token %d topic %d: sampler %v, dense %v", mode, i, k, got[k], want[k]/sum)
				}
			}
			a.add(st, k, 1)
		}
		a.put(st)
	}
}

// TestDrawFrequencies: draw itself (word bucket, smoothing bucket, alias
// tables) samples from the dense conditional: 300,000 draws from frozen
// states, each topic's frequency within 5 standard errors of its
// probability. Source: the binomial standard error, no outside source.
func TestDrawFrequencies(t *testing.T) { bothModes(t, testDrawFrequencies) }

func testDrawFrequencies(t *testing.T, maxList int) {
	m := modeltest.Synthetic(modeltest.Options{Concepts: 30, Free: 4, Words: 200, WordsPerConcept: 15, Seed: 6})
	a, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	a.maxList = maxList
	r := rand.New(rand.NewPCG(5, 6))
	pcg := &splitMix{65}
	for _, opt := range []Options{{}, {Subjects: []string{m.Scheme.Concepts[3].IRI}, SubjectMode: Restrict},
		{Subjects: []string{m.Scheme.Concepts[3].IRI}, SubjectMode: Boost}} {
		ids := make([]int32, 30)
		for i := range ids {
			ids[i] = int32(r.IntN(m.W()))
		}
		_, toks := tokens(ids, m.Words)
		st := a.get()
		if _, err := a.infer(&Result{}, "", toks, opt, st); err != nil {
			t.Fatal(err)
		}
		st.commitOut(st.z[0], st.takeOut(st.z[0])) // token 0 out, as draw sees it
		u := st.tu[0]
		want := a.conditional(st, u)
		const n = 300000
		got := make([]float64, a.K)
		for i := 0; i < n; i++ {
			got[a.draw(st, u, pcg, false)]++
		}
		for k := range got {
			p := want[k]
			se := math.Sqrt(p * (1 - p) / n)
			if d := math.Abs(got[k]/n - p); d > 5*se+1e-5 {
				t.Errorf("%+v: topic %d drawn %.5f, want %.5f (se %.5f)", opt, k, got[k]/n, p, se)
			}
		}
		// A recorded draw adds the conditional itself to the accumulators:
		// the word bucket per slot, the smoothing bucket's total (split
		// over slots by c_k·φ⁰_k) and the α·φ part's (split by α_k·φ_kw/A_w).
		acc0 := slotAcc(st, u)
		d0, c0 := st.dacc[u], st.cacc[u]
		a.draw(st, u, pcg, true)
		acc1 := slotAcc(st, u)
		dd, dc := st.dacc[u]-d0, st.cacc[u]-c0
		bucket := 0.0
		for _, s := range st.act {
			bucket += st.cs[s] * st.phi0s[s]
		}
		w := int(st.uw[u])
		for k := range want {
			p := 0.0
			if s := st.slot[k]; s >= 0 {
				p += acc1[s] - acc0[s]
				if st.pos[s] >= 0 {
					p += dd * st.cs[s] * st.phi0s[s] / bucket
				}
			}
			if !st.allow {
				p += dc * a.alpha[k] * (a.phi0[k] + a.sv(w, int32(k))) / a.wh[w].aw
			}
			if math.Abs(p-want[k]) > 1e-12 {
				t.Errorf("%+v: topic %d accumulated %v, conditional %v", opt, k, p, want[k])
			}
		}
		a.put(st)
	}
}

// slotAcc returns word type u's word-bucket accumulators by slot.
func slotAcc(st *state, u int32) []float64 {
	acc := make([]float64, len(st.slotTopic))
	for j, e := range st.nz[u] {
		acc[e.s] = st.wacc[u][j]
	}
	return acc
}

// TestDistributions (outside check b): concept scores plus the uncovered
// share sum to 1, and so does each word type's posterior over all topics.
// Source: definition of θ and of a posterior (DESIGN.md "Annotation result").
func TestDistributions(t *testing.T) { bothModes(t, testDistributions) }

func testDistributions(t *testing.T, maxList int) {
	m := modeltest.Synthetic(modeltest.Options{Concepts: 80, Free: 6, Words: 400, WordsPerConcept: 25, Seed: 9})
	a, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	a.maxList = maxList
	r := rand.New(rand.NewPCG(8, 8))
	for _, opt := range []Options{
		{Top: -1, IncludeWords: true},
		{Top: -1, IncludeWords: true, Subjects: []string{m.Scheme.Concepts[2].IRI}, SubjectMode: Restrict},
		{Top: -1, IncludeWords: true, Subjects: []string{m.Scheme.Concepts[2].IRI}, SubjectMode: Boost},
	} {
		ids := make([]int32, 150)
		for i := range ids {
			ids[i] = int32(r.IntN(m.W()))
		}
		text, toks := tokens(ids, m.Words)
		st := a.get()
		res, err := a.infer(&Result{Concepts: []Concept{}}, text, toks, opt, st)
		if err != nil {
			t.Fatal(err)
		}
		sum := res.Uncovered
		for _, c := range res.Concepts {
			sum += c.Score
		}
		if len(res.Concepts) != m.C && opt.SubjectMode != Restrict {
			t.Errorf("Top -1 gave %d of %d concepts", len(res.Concepts), m.C)
		}
		if math.Abs(sum-1) > 1e-9 {
			t.Errorf("%+v: scores + uncovered = %.15f", opt, sum)
		}
		samples := float64(st.samples)
		// The sparse θ of summarise equals the dense sum of the word types'
		// posteriors over all K topics.
		var start [][]float64
		if !st.rows && len(opt.Subjects) == 0 { // began with startExpected
			start, _ = a.startDense(st)
		}
		th := a.thetaDense(st, samples, start)
		for _, c := range res.Concepts {
			k, _ := m.ConceptIndex(c.IRI)
			if d := math.Abs(c.Score - th[k]); d > 1e-12 {
				t.Errorf("%+v: concept %d score %v, dense θ %v", opt, k, c.Score, th[k])
			}
		}
		// Supports and word attributions equal their definitions computed
		// from post over all topics.
		for _, c := range res.Concepts {
			k, _ := m.ConceptIndex(c.IRI)
			mass := 0.0
			wt := make([]float64, len(st.uw))
			for u := range st.uw {
				wt[u] = float64(st.ucnt[u]) * a.post(st, int32(u), int32(k), samples)
				mass += wt[u]
			}
			var want []Support
			for u, w := range st.uw {
				if wt[u] >= minSupportPost*float64(st.ucnt[u]) && wt[u]/mass >= minSupport {
					want = append(want, Support{Term: m.Words[w], Weight: wt[u] / mass})
				}
			}
			if len(want) > maxSupport {
				want = nil // ranked and cut: compare the listed ones only
				for _, sp := range c.Support {
					u := st.uOf[slices.Index(m.Words, sp.Term)]
					want = append(want, Support{Term: sp.Term, Weight: wt[u] / mass})
				}
			}
			got := map[string]float64{}
			for _, sp := range c.Support {
				got[sp.Term] = sp.Weight
			}
			if len(got) != len(want) {
				t.Errorf("%+v: concept %d support %v, want %v", opt, k, c.Support, want)
			}
			for _, sp := range want {
				if g, ok := got[sp.Term]; !ok || math.Abs(g-sp.Weight) > 1e-12 {
					t.Errorf("%+v: concept %d support %s %v, want %v", opt, k, sp.Term, g, sp.Weight)
				}
			}
		}
		checkWords(t, a, st, res, samples, fmt.Sprintf("%+v", opt))
		unc := 0.0
		for k := m.C; k < m.K(); k++ {
			unc += th[k]
		}
		if d := math.Abs(unc - res.Uncovered); d > 1e-12 {
			t.Errorf("%+v: uncovered %v, dense %v", opt, res.Uncovered, unc)
		}
		for u := range st.uw {
			p := 0.0
			for k := 0; k < a.K; k++ {
				p += a.post(st, int32(u), int32(k), samples)
			}
			if math.Abs(p-1) > 1e-9 {
				t.Errorf("word type %d: posterior sums to %.15f", u, p)
			}
			// The free share used for "" attributions is the free topics' sum.
			pf := 0.0
			for k := a.C; k < a.K; k++ {
				pf += a.post(st, int32(u), int32(k), samples)
			}
			if d := math.Abs(pf - a.freePost(st, int32(u), samples)); d > 1e-12 {
				t.Errorf("free share off by %v", d)
			}
		}
		a.put(st)
	}
}

// TestKnownProportions (outside check a): 100 documents generated from
// known topics with known proportions θ ~ Dirichlet(1), 150 words each
// (six concept topics, four free ones compared by their total); the mean L1
// distance between inferred and true proportions (concepts + uncovered) is
// within the stated tolerance.
//
// bars: every word is shared by two topics, so even the exact posterior
// mean stays about 0.26 from θ (measured: 0.256 with 100 + 2,000 sweeps);
// the default 3 + 6 sweeps give 0.22 (the short chain from each word's own
// posterior stays a little nearer the words' independent posteriors, which
// suits bars); tolerance 0.32. blocks (disjoint topics):
// the tokens' own topic shares are about 0.13 from θ; tolerance 0.18.
// Source: Griffiths & Steyvers 2004, PNAS 101, synthetic "bars" data.
func TestKnownProportions(t *testing.T) {
	for _, c := range []struct {
		name  string
		build func(int, int32) (*model.Model, [][]float64)
		tol   float64
	}{{"bars", barsModel, 0.32}, {"blocks", blocksModel, 0.18}} {
		t.Run(c.name, func(t *testing.T) {
			m, topics := c.build(6, 10000)
			knownProportions(t, m, topics, c.tol)
		})
	}
}

func knownProportions(t *testing.T, m *model.Model, bars [][]float64, tol float64) {
	a, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	r := rand.New(rand.NewPCG(11, 12))
	const docs, n = 100, 150
	var l1, l1emp, worst float64
	for d := 0; d < docs; d++ {
		theta := make([]float64, len(bars))
		s := 0.0
		for k := range theta {
			theta[k] = r.ExpFloat64() // Dirichlet(1) by normalised Exp(1)
			s += theta[k]
		}
		for k := range theta {
			theta[k] /= s
		}
		ids := make([]int32, n)
		emp := make([]float64, len(bars))
		for i := range ids {
			k := pick(r, theta)
			emp[k] += 1.0 / n
			ids[i] = int32(pick(r, bars[k]))
		}
		text, toks := tokens(ids, m.Words)
		res, err := a.AnnotateTokens(fmt.Sprint(d), text, toks, Options{Top: -1})
		if err != nil {
			t.Fatal(err)
		}
		got := make([]float64, len(bars))
		free := 0.0
		for _, c := range res.Concepts {
			k, _ := m.ConceptIndex(c.IRI)
			got[k] = c.Score
		}
		// Free topics are exchangeable, so compare their total.
		for k := m.C; k < m.K(); k++ {
			free += theta[k]
		}
		e, ee := math.Abs(free-res.Uncovered), 0.0
		fe := 0.0
		for k := 0; k < m.C; k++ {
			e += math.Abs(got[k] - theta[k])
			ee += math.Abs(emp[k] - theta[k])
		}
		for k := m.C; k < m.K(); k++ {
			fe += emp[k]
		}
		ee += math.Abs(fe - free)
		l1 += e / docs
		l1emp += ee / docs
		worst = max(worst, e)
	}
	t.Logf("mean L1 %.3f (empirical shares %.3f), worst %.3f", l1, l1emp, worst)
	if l1 > tol {
		t.Errorf("mean L1 error %.3f > %.2f", l1, tol)
	}
}

func pick(r *rand.Rand, p []float64) int {
	x := r.Float64()
	for i, v := range p {
		if x < v {
			return i
		}
		x -= v
	}
	return len(p) - 1
}

// TestWordsAndSupport: a text of bar-1 words and bar-3 words attributes each
// word to its bar and lists its words as support.
func TestWordsAndSupport(t *testing.T) {
	m, bars := barsModel(6, 10000)
	a, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	var ids []int32
	for i := 0; i < 20; i++ {
		// Words of bar 1 (column 0: 0,5,10,15,20) and bar 3 (column 1: 1,6,...),
		// avoiding the crossing cells shared with row bars.
		ids = append(ids, int32(5*(1+i%4)), int32(5*(1+i%4)+1))
	}
	_ = bars
	text, toks := tokens(ids, m.Words)
	res, err := a.AnnotateTokens("r", text, toks, Options{IncludeWords: true, Top: 3})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Concepts) < 2 {
		t.Fatalf("concepts %+v", res.Concepts)
	}
	top := map[string]bool{res.Concepts[0].IRI: true, res.Concepts[1].IRI: true}
	if !top["http://example.org/bar/1"] || !top["http://example.org/bar/3"] {
		t.Errorf("top concepts %s, %s", res.Concepts[0].IRI, res.Concepts[1].IRI)
	}
	if len(res.Words) != len(ids) {
		t.Fatalf("%d words", len(res.Words))
	}
	for i, w := range res.Words {
		want := "http://example.org/bar/1"
		if ids[i]%5 == 1 {
			want = "http://example.org/bar/3"
		}
		if w.Concept != want || w.P < 0.9 || text[w.Start:w.End] != w.Text || w.Term != m.Words[ids[i]] {
			t.Errorf("word %d: %+v, want %s", i, w, want)
		}
	}
	for _, c := range res.Concepts[:2] {
		sum := 0.0
		for _, s := range c.Support {
			sum += s.Weight
		}
		if len(c.Support) != 4 || sum < 0.99 || sum > 1+1e-9 {
			t.Errorf("%s support %+v", c.IRI, c.Support)
		}
	}
}

// TestPaths: concept 5 sits below 1 and below 2 (bars 0..5 are concepts);
// with bar 1 and bar 5 in the text, 5's path runs through 1, the broader
// concept carrying more of the record.
func TestPaths(t *testing.T) {
	m, _ := barsModel(6, 10000)
	a, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	var ids []int32
	for i := 0; i < 15; i++ {
		ids = append(ids, int32(5*(1+i%4)), int32(20+i%4)) // bar 1: column 0; bar 5: row 4 (minus the crossing)
	}
	text, toks := tokens(ids, m.Words)
	res, err := a.AnnotateTokens("r", text, toks, Options{})
	if err != nil {
		t.Fatal(err)
	}
	var c5 *Concept
	for i := range res.Concepts {
		if res.Concepts[i].IRI == "http://example.org/bar/5" {
			c5 = &res.Concepts[i]
		}
	}
	if c5 == nil {
		t.Fatalf("bar 5 not found: %+v", res.Concepts)
	}
	var iris []string
	for _, p := range c5.Path {
		iris = append(iris, p.IRI)
	}
	want := []string{"http://example.org/bar/0", "http://example.org/bar/1", "http://example.org/bar/5"}
	if !reflect.DeepEqual(iris, want) {
		t.Errorf("path %v, want %v", iris, want)
	}
	// Aggregated scores grow towards the top.
	for i := 1; i < len(c5.Path); i++ {
		if c5.Path[i].Score > c5.Path[i-1].Score+1e-12 {
			t.Errorf("path scores %+v", c5.Path)
		}
	}
	if c5.Path[2].Score != c5.Score {
		t.Errorf("leaf aggregated %v, own %v", c5.Path[2].Score, c5.Score)
	}
}

func TestSubjects(t *testing.T) {
	m, _ := barsModel(6, 10000)
	a, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	var ids []int32
	for i := 0; i < 30; i++ {
		ids = append(ids, int32(5*(1+i%4))) // bar 1
	}
	text, toks := tokens(ids, m.Words)
	b2 := "http://example.org/bar/2"
	res, err := a.AnnotateTokens("r", text, toks, Options{Top: -1, Subjects: []string{b2, "http://nowhere/x"}, SubjectMode: Restrict})
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(res.UnknownSubjects, []string{"http://nowhere/x"}) {
		t.Errorf("unknown subjects %v", res.UnknownSubjects)
	}
	for _, c := range res.Concepts {
		if c.IRI != b2 && c.Score != 0 {
			t.Errorf("restricted result scores %s = %v", c.IRI, c.Score)
		}
	}
	plain, _ := a.AnnotateTokens("r", text, toks, Options{Top: -1})
	boost, _ := a.AnnotateTokens("r", text, toks, Options{Top: -1, Subjects: []string{b2}, SubjectMode: Boost})
	score := func(r *Result, iri string) float64 {
		for _, c := range r.Concepts {
			if c.IRI == iri {
				return c.Score
			}
		}
		return 0
	}
	if !(score(boost, b2) > score(plain, b2)) || plain.Concepts[0].IRI != "http://example.org/bar/1" {
		t.Errorf("boost %v, plain %v (top %s)", score(boost, b2), score(plain, b2), plain.Concepts[0].IRI)
	}
}

func TestDeterministicAndConcurrent(t *testing.T) { bothModes(t, testDeterministicAndConcurrent) }

func testDeterministicAndConcurrent(t *testing.T, maxList int) {
	m := modeltest.Synthetic(modeltest.Options{Concepts: 200, Free: 10, Words: 2000, Seed: 2})
	a, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	a.maxList = maxList
	r := rand.New(rand.NewPCG(1, 1))
	type in struct {
		text string
		toks []terms.Token
	}
	var ins []in
	for d := 0; d < 12; d++ {
		ids := make([]int32, 50+r.IntN(100))
		for i := range ids {
			ids[i] = int32(r.IntN(m.W()))
		}
		text, toks := tokens(ids, m.Words)
		ins = append(ins, in{text, toks})
	}
	opt := Options{IncludeWords: true}
	want := make([]*Result, len(ins))
	for i, x := range ins {
		want[i], _ = a.AnnotateTokens("r", x.text, x.toks, opt)
	}
	// A second annotator over the same model, many goroutines, shuffled order.
	b, _ := New(m)
	b.maxList = maxList
	var wg sync.WaitGroup
	errs := make(chan string, 100)
	for g := 0; g < 4; g++ {
		wg.Add(1)
		go func(g int) {
			defer wg.Done()
			for j := range ins {
				i := (j*7 + g*5) % len(ins)
				got, _ := b.AnnotateTokens("r", ins[i].text, ins[i].toks, opt)
				if !reflect.DeepEqual(got, want[i]) {
					errs <- fmt.Sprintf("goroutine %d text %d differs", g, i)
				}
			}
		}(g)
	}
	wg.Wait()
	close(errs)
	for e := range errs {
		t.Error(e)
	}
	// The same tables under another provenance (a refit at another date,
	// by another build, from another path): the same results, since the
	// seed comes from the content checksum.
	m2 := *m
	m2.Provenance = model.Provenance{TermgroveVersion: "other", Created: "2030-01-01T00:00:00Z", CorpusFile: "x.jsonl", Options: map[string]string{"workers": "9"}}
	if s1, _ := m.Sum(); func() bool { s2, _ := m2.Sum(); return s1 == s2 }() {
		t.Fatal("the copy's checksum did not change: the test cannot tell the two sums apart")
	}
	c, err := New(&m2)
	if err != nil {
		t.Fatal(err)
	}
	c.maxList = maxList
	for i, x := range ins {
		if got, _ := c.AnnotateTokens("r", x.text, x.toks, opt); !reflect.DeepEqual(got, want[i]) {
			t.Errorf("text %d: another provenance gave another result", i)
		}
	}
}

func TestEdgeCases(t *testing.T) {
	m, _ := barsModel(6, 10000)
	a, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	res, err := a.Annotate("e", "", Options{})
	if err != nil || len(res.Concepts) != 0 || res.Tokens != 0 || res.Uncovered != 0 {
		t.Errorf("empty text: %+v %v", res, err)
	}
	text, toks := tokens([]int32{-1, 3, -1, 3}, m.Words)
	res, err = a.AnnotateTokens("u", text, toks, Options{IncludeWords: true})
	if err != nil || res.Unknown != 2 || res.Tokens != 2 || len(res.Words) != 2 {
		t.Errorf("unknown words: %+v %v", res, err)
	}
	text, toks = tokens([]int32{-1}, m.Words)
	res, err = a.AnnotateTokens("u", text, toks, Options{})
	if err != nil || res.Unknown != 1 || len(res.Concepts) != 0 {
		t.Errorf("only unknown words: %+v %v", res, err)
	}
	_, err = a.Annotate("big", strings.Repeat("w1 ", 1<<20), Options{})
	if !errors.Is(err, ErrTooLarge) || !strings.HasPrefix(err.Error(), "big: ") {
		t.Errorf("10 MB: %v", err)
	}
	res, err = a.Annotate("fr", "w1 w2", Options{Language: "xx-notalanguage"})
	if err != nil || !res.Fallback || res.Language != "xx-notalanguage" {
		t.Errorf("unknown language: %+v %v", res, err)
	}
	// MinScore and Top cut.
	text, toks = tokens([]int32{5, 10, 15, 20, 1, 6}, m.Words)
	res, _ = a.AnnotateTokens("c", text, toks, Options{Top: 2, MinScore: 0.5})
	if len(res.Concepts) > 1 || (len(res.Concepts) == 1 && res.Concepts[0].Score < 0.5) {
		t.Errorf("cut: %+v", res.Concepts)
	}
}

// TestAnnotateText goes through the model's analyzer: words of the model's
// vocabulary made from analysed English text.
func TestAnnotateText(t *testing.T) {
	an, err := terms.New(terms.Options{Languages: []string{"en"}}, terms.NewDictionary())
	if err != nil {
		t.Fatal(err)
	}
	const text = "Rivers and bridges. The river flooded the bridge; libraries keep catalogues and library records."
	toks, _ := an.Analyze(text, nil, true)
	if len(toks) == 0 {
		t.Skip("the terms analyzer is a stub")
	}
	words := an.Dict().Terms()
	// Concept 0 "water" holds the river/flood terms, concept 1 the rest.
	m := topicsModel(2, [][]float64{make([]float64, len(words)), make([]float64, len(words))}, 0)
	m.Words = slicesClone(words)
	m.Counts = make([][]model.WordCount, m.K())
	m.Totals = make([]int64, m.K())
	for id := range words {
		k := 1
		if strings.HasPrefix(words[id], "river") || strings.HasPrefix(words[id], "flood") || strings.HasPrefix(words[id], "bridg") {
			k = 0
		}
		m.Counts[k] = append(m.Counts[k], model.WordCount{Word: int32(id), Count: 50})
		m.Totals[k] += 50
	}
	a, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	res, err := a.Annotate("t", text, Options{IncludeWords: true})
	if err != nil {
		t.Fatal(err)
	}
	if res.Tokens != len(toks) || len(res.Words) != len(toks) {
		t.Fatalf("tokens %d words %d, analysed %d", res.Tokens, len(res.Words), len(toks))
	}
	for _, w := range res.Words {
		if text[w.Start:w.End] != w.Text {
			t.Errorf("span %d:%d %q", w.Start, w.End, w.Text)
		}
		if strings.HasPrefix(strings.ToLower(w.Text), "river") && w.Concept != "http://example.org/bar/0" {
			t.Errorf("%q → %q", w.Text, w.Concept)
		}
	}
}

func slicesClone(s []string) []string { return append([]string(nil), s...) }

// FuzzAnnotate: no text makes Annotate fail or panic, spans stay inside the
// text, and scores plus uncovered sum to 1.
func FuzzAnnotate(f *testing.F) {
	m, _ := barsModel(6, 1000)
	a, err := New(m)
	if err != nil {
		f.Fatal(err)
	}
	for _, s := range []string{"", "w1 w2 w3", "w5 w5 w5 \xff w10", "W1, w2; w24!", strings.Repeat("w7 ", 100)} {
		f.Add(s)
	}
	rows, _ := New(m) // topic rows read per visited topic (row mode)
	rows.maxList = 0
	// The same model with related rows: concepts-only (bestRelated)
	// must rank as the full annotation (addRelated) does.
	mr := *m
	mr.Related = make([][]model.ConceptWeight, mr.C)
	for j := range mr.Related {
		for k := range int32(mr.C) {
			if (int(k)+j)%3 != 1 {
				mr.Related[j] = append(mr.Related[j], model.ConceptWeight{Concept: k, Weight: 0.1 + 0.1*float64((int(k)*7+j)%9)})
			}
		}
	}
	related, err := New(&mr)
	if err != nil {
		f.Fatal(err)
	}
	f.Fuzz(func(t *testing.T, text string) {
		for _, top := range []int{1, 3} {
			full, err := related.Annotate("f", text, Options{Top: top})
			if err != nil {
				t.Fatal(err)
			}
			quick, err := related.Annotate("f", text, Options{Top: top, ConceptsOnly: true})
			if err != nil {
				t.Fatal(err)
			}
			if len(quick.Concepts) != len(full.Concepts) {
				t.Fatalf("Top %d: concepts only gives %d concepts, full %d", top, len(quick.Concepts), len(full.Concepts))
			}
			for i, c := range quick.Concepts {
				if c.IRI != full.Concepts[i].IRI || c.Score != full.Concepts[i].Score {
					t.Fatalf("Top %d rank %d: concepts only %s %v, full %s %v", top, i, c.IRI, c.Score, full.Concepts[i].IRI, full.Concepts[i].Score)
				}
			}
		}
		for _, a := range []*Annotator{a, rows} {
			res, err := a.Annotate("f", text, Options{Top: -1, IncludeWords: true})
			if err != nil {
				t.Fatal(err)
			}
			sum := res.Uncovered
			for _, c := range res.Concepts {
				sum += c.Score
			}
			if res.Tokens > 0 && math.Abs(sum-1) > 1e-9 {
				t.Fatalf("scores + uncovered = %v", sum)
			}
			for _, w := range res.Words {
				if w.Start < 0 || w.End > len(text) || w.Start > w.End || text[w.Start:w.End] != w.Text {
					t.Fatalf("word %+v outside the text", w)
				}
			}
		}
	})
}

// TestSelectBest: selectBest leaves exactly the n best (by score, then
// topic) in front, for random inputs with many ties.
func TestSelectBest(t *testing.T) {
	r := rand.New(rand.NewPCG(9, 9))
	for trial := 0; trial < 2000; trial++ {
		m := 2 + r.IntN(60)
		x := make([]scored, m)
		for i := range x {
			x[i] = scored{int32(r.IntN(m)), float64(r.IntN(1 + trial%7))}
		}
		n := 1 + r.IntN(m-1)
		want := slices.Clone(x)
		slices.SortFunc(want, func(a, b scored) int {
			if a.better(b) {
				return -1
			}
			if b.better(a) {
				return 1
			}
			return 0
		})
		selectBest(x, n)
		got := slices.Clone(x[:n])
		slices.SortFunc(got, func(a, b scored) int {
			if a.better(b) {
				return -1
			}
			if b.better(a) {
				return 1
			}
			return 0
		})
		if !slices.Equal(got, want[:n]) {
			t.Fatalf("trial %d: n=%d got %v want %v", trial, n, got, want[:n])
		}
	}
}

// bothModes runs test with the record's topic entries grouped up front
// (the default for short word lists) and found per topic row (row mode).
func bothModes(t *testing.T, test func(*testing.T, int)) {
	t.Run("grouped", func(t *testing.T) { test(t, 1<<30) })
	t.Run("rows", func(t *testing.T) { test(t, 0) })
}

// checkWords: each word's attribution is the argmax of post over all
// concepts, or "" when the free topics' summed posterior is larger. Then
// the same with the accumulators cut down to one part of the conditional
// (only the α·φ part, only the smoothing bucket), where the candidates
// outside the record's word lists decide.
func checkWords(t *testing.T, a *Annotator, st *state, res *Result, samples float64, name string) {
	t.Helper()
	m := a.m
	check := func(words []Word, what string) {
		for _, wd := range words {
			u := st.uOf[slices.Index(m.Words, wd.Term)]
			bk, bp := "", a.freePost(st, u, samples)
			for k := 0; k < m.C; k++ {
				if p := a.post(st, u, int32(k), samples); p > bp {
					bk, bp = m.Scheme.Concepts[k].IRI, p
				}
			}
			if wd.Concept != bk || math.Abs(wd.P-bp) > 1e-12 {
				t.Errorf("%s%s: word %s: %s %v, want %s %v", name, what, wd.Term, wd.Concept, wd.P, bk, bp)
			}
		}
	}
	check(res.Words, "")
	if st.allow || len(res.Words) == 0 {
		return
	}
	toks := make([]terms.Token, len(res.Words))
	for i, wd := range res.Words {
		toks[i] = terms.Token{Start: wd.Start, End: wd.End, Term: wd.Term, ID: int32(slices.Index(m.Words, wd.Term))}
	}
	text := strings.Repeat(" ", res.Words[len(res.Words)-1].End)
	wacc := make([][]float64, len(st.wacc))
	for u := range st.wacc {
		wacc[u] = slices.Clone(st.wacc[u])
		clear(st.wacc[u])
	}
	dacc, cacc := slices.Clone(st.dacc), slices.Clone(st.cacc)
	clear(st.dacc) // only α·φ: best decides
	r := &Result{}
	a.words(r, text, toks, st, samples)
	check(r.Words, " (α·φ part only)")
	copy(st.dacc, dacc)
	clear(st.cacc) // only the smoothing bucket, no free topics: dk decides
	dsm := slices.Clone(st.dsm)
	for s, k := range st.slotTopic {
		if int(k) >= a.C {
			st.dsm[s] = 0
		}
	}
	r = &Result{}
	a.words(r, text, toks, st, samples)
	check(r.Words, " (smoothing bucket only)")
	copy(st.cacc, cacc)
	copy(st.dsm, dsm)
	for u := range st.wacc {
		copy(st.wacc[u], wacc[u])
	}
}

// TestConceptsOnly: ConceptsOnly returns the same concepts, in the same
// order with the same scores, and the same uncovered share as the full
// annotation, without paths, supports or words: with and without
// deprecated concepts, known subjects, a calibration and related rows.
func TestConceptsOnly(t *testing.T) { bothModes(t, testConceptsOnly) }

func testConceptsOnly(t *testing.T, maxList int) {
	m := modeltest.Synthetic(modeltest.Options{Concepts: 300, Free: 5, Words: 2000, WordsPerConcept: 20, Seed: 11})
	r := rand.New(rand.NewPCG(3, 4))
	for k := 0; k < m.C; k += 13 {
		m.Scheme.Concepts[k].Deprecated = true
	}
	cal := &model.Calibration{A: make([]float64, m.C), B: make([]float64, m.C)}
	for k := range cal.A {
		cal.A[k] = 0.2 + 1.5*r.Float64()
		cal.B[k] = 4*r.Float64() - 1
	}
	related := make([][]model.ConceptWeight, m.C)
	for k := range related {
		for j := 0; j < 3; j++ {
			related[k] = append(related[k], model.ConceptWeight{Concept: int32(r.IntN(m.C)), Weight: r.Float64()})
		}
	}
	for _, variant := range []string{"plain", "calibrated", "related"} {
		m.Calibration, m.Related = nil, nil
		switch variant {
		case "calibrated":
			m.Calibration = cal
		case "related":
			m.Related = related
		}
		a, err := New(m)
		if err != nil {
			t.Fatal(err)
		}
		a.maxList = maxList
		nonEmpty := 0
		for trial := 0; trial < 30; trial++ {
			var words []string
			for c := 0; c < 1+trial%4*3; c++ {
				for _, ww := range m.TopWords(r.IntN(m.C), 6) {
					words = append(words, m.Words[ww.Word])
				}
			}
			text := strings.Join(words, " ")
			opt := Options{Top: []int{1, 5, 10, 150, -1}[trial%5], IncludeWords: trial%2 == 0}
			if trial%3 == 0 {
				opt.Subjects = []string{m.Scheme.Concepts[r.IntN(m.C)].IRI}
				opt.SubjectMode = SubjectMode(trial % 2)
			}
			if trial%7 == 0 {
				opt.MinScore = 0.01
			}
			want, err := a.Annotate("t", text, opt)
			if err != nil {
				t.Fatal(err)
			}
			opt.ConceptsOnly = true
			got, err := a.Annotate("t", text, opt)
			if err != nil {
				t.Fatal(err)
			}
			if got.Uncovered != want.Uncovered || got.Tokens != want.Tokens || got.Words != nil {
				t.Fatalf("%s trial %d: uncovered %v tokens %d words %d, full %v %d", variant, trial,
					got.Uncovered, got.Tokens, len(got.Words), want.Uncovered, want.Tokens)
			}
			if len(want.Concepts) > 0 {
				nonEmpty++
			}
			if len(got.Concepts) != len(want.Concepts) {
				t.Fatalf("%s trial %d: %d concepts, full %d", variant, trial, len(got.Concepts), len(want.Concepts))
			}
			for i, g := range got.Concepts {
				w := want.Concepts[i]
				if g.IRI != w.IRI || g.Label != w.Label || g.Score != w.Score || g.Path != nil || g.Support != nil {
					t.Fatalf("%s trial %d rank %d: %s %v (%d path nodes), full %s %v", variant, trial, i,
						g.IRI, g.Score, len(g.Path), w.IRI, w.Score)
				}
			}
		}
		if nonEmpty < 20 {
			t.Errorf("%s: only %d of 30 texts had concepts", variant, nonEmpty)
		}
	}
}

// TestStartExpected: startExpected draws each token's first topic from the
// two CVB0 steps of the package comment (Start), computed here densely over
// all K topics from the model: 20,000 starts of a frozen record, each
// word type's topic frequencies within 5 standard errors of the formula,
// and group's E⁰ equal to its definition within 1e-12. Source: the
// binomial standard error, no outside source.
func TestStartExpected(t *testing.T) {
	m := modeltest.Synthetic(modeltest.Options{Concepts: 30, Free: 4, Words: 200, WordsPerConcept: 15, Seed: 8})
	a, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	r := rand.New(rand.NewPCG(9, 10))
	ids := make([]int32, 30)
	for i := range ids {
		ids[i] = int32(r.IntN(40)) // repeats: word types with several tokens
	}
	_, toks := tokens(ids, m.Words)
	st := a.get()
	defer a.put(st)
	if _, err := a.infer(&Result{}, "", toks, Options{}, st); err != nil {
		t.Fatal(err)
	}
	if st.rows {
		t.Fatal("want the grouped path")
	}
	K, U := a.K, len(st.uw)
	// Dense: E⁰, the two steps, the start's pmf.
	want, e0 := a.startDense(st)
	for _, k := range st.bT {
		if got := st.tl[k].e0 - m.Alpha[k]; math.Abs(got-e0[k]) > 1e-12*(e0[k]+m.Alpha[k]) { // e0 holds α_k + E⁰_k
			t.Errorf("E⁰ of topic %d: %v, want %v", k, got, e0[k])
		}
	}
	// The start's sample for theta: th gets n_u·v²_k/Z² on the lists'
	// concepts, thetaStart returns it for their free topics as a whole,
	// and its α_k·φ⁰_k part is startF = Σ_u n_u/Z² (n_u·q/Z² summed), so that
	// th_k + α_k·φ⁰_k·startF = Σ_u n_u·p_u(k) exactly for a concept, and
	// the same summed over the free topics plus what thetaStart returned.
	for k := range st.th {
		st.th[k] = 0
	}
	for j := range st.tl {
		st.tl[j].e1 = st.tl[j].alpha
	}
	a.startExpected(st, &splitMix{5})
	if !st.startOn {
		t.Fatal("startExpected did not mark its sample")
	}
	free, startF := 0.0, 0.0
	for u, w := range st.uw { // theta's pass, without the sweeps' part (f = 0)
		h := &a.wh[w]
		o := int(st.uo[u])
		fs := float64(st.ucnt[u]) / st.startZ[u]
		free += thetaStart(st.th, a.alpha, a.ent[h.lo:h.hi], int(h.hiC-h.lo), st.startW[o:o+int(h.hi-h.lo)], 0, fs)
		startF += fs
	}
	total, gotFree, wantFree := free, free, 0.0
	for k := 0; k < K; k++ {
		w := 0.0
		for u := range want {
			w += float64(st.ucnt[u]) * want[u][k]
		}
		got := st.th[k] + m.Alpha[k]*a.phi0[k]*startF
		total += got
		if k >= a.C {
			gotFree += got
			wantFree += w
			continue
		}
		if math.Abs(got-w) > 1e-12*w {
			t.Errorf("start's sample, concept %d: %v, want %v", k, got, w)
		}
	}
	if math.Abs(gotFree-wantFree) > 1e-12*wantFree {
		t.Errorf("start's sample, free topics: %v, want %v", gotFree, wantFree)
	}
	if math.Abs(total-float64(len(st.tu))) > 1e-9 {
		t.Errorf("start's sample sums to %v, want the %d tokens", total, len(st.tu))
	}
	st.startOn = false
	const n = 20000
	got := make([][]float64, U)
	for u := range got {
		got[u] = make([]float64, K)
	}
	rng := &splitMix{77}
	for i := 0; i < n; i++ {
		for j := range st.tl {
			st.tl[j].e1 = st.tl[j].alpha // startExpected adds E¹ to α_k
		}
		a.startExpected(st, rng)
		for j, u := range st.tu {
			got[u][st.z[j]]++
		}
	}
	for u := range got {
		draws := float64(n) * float64(st.ucnt[u])
		for k := range got[u] {
			p := want[u][k]
			// The weights do not depend on the draws: every token's
			// draw is independent.
			se := math.Sqrt(p * (1 - p) / draws)
			if d := math.Abs(got[u][k]/draws - p); d > 5*se+1e-4 {
				t.Errorf("word type %d topic %d: drawn %.5f, want %.5f (se %.5f)", u, k, got[u][k]/draws, p, se)
			}
		}
	}
}

// TestSearchSorted: searchSorted counts the entries at most x, as a
// linear scan does, on running sums with flat runs (empty entries), zeros
// and x on an entry. Common practice, no source.
func TestSearchSorted(t *testing.T) {
	r := rand.New(rand.NewPCG(21, 22))
	for trial := 0; trial < 2000; trial++ {
		n := r.IntN(40)
		cum := make([]float64, n)
		c := 0.0
		for j := range cum {
			if r.IntN(3) > 0 {
				c += r.Float64() * math.Pow(10, float64(r.IntN(12)-6))
			}
			cum[j] = c
		}
		xs := []float64{0, c, c * 2, r.Float64() * c}
		if n > 0 {
			xs = append(xs, cum[r.IntN(n)])
		}
		for _, x := range xs {
			want := 0
			for want < n && cum[want] <= x {
				want++
			}
			if got := searchSorted(cum, x); got != want {
				t.Fatalf("cum %v, x %v: got %d, want %d", cum, x, got, want)
			}
		}
	}
}

// TestWordHeads: each word's packed header bounds its list, splits it
// where the concepts' entries end (theta reads only those) and holds
// A_w = q + Σ_k α_k·s_kw and the free topics' Σ α_k·φ_kw, computed here
// from the model's φ. Source: the definitions in the package comment.
func TestWordHeads(t *testing.T) {
	m := modeltest.Synthetic(modeltest.Options{Concepts: 60, Free: 5, Words: 400, WordsPerConcept: 12, Seed: 21})
	a, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	mixed := 0
	for w, h := range a.wh {
		if h.lo != a.off[w] || h.hi != a.off[w+1] || h.hiC < h.lo || h.hiC > h.hi {
			t.Fatalf("word %d: head %+v, list [%d, %d)", w, h, a.off[w], a.off[w+1])
		}
		for i := h.lo; i < h.hi; i++ {
			if isConcept := int(a.ent[i].k) < a.C; isConcept != (i < h.hiC) {
				t.Fatalf("word %d: entry %d (topic %d) on the wrong side of %d", w, i, a.ent[i].k, h.hiC)
			}
		}
		if h.lo < h.hiC && h.hiC < h.hi {
			mixed++
		}
		aw, awF := 0.0, 0.0
		for k := 0; k < a.K; k++ {
			v := a.alpha[k] * m.Phi(k, w)
			aw += v
			if k >= a.C {
				awF += v
			}
		}
		if math.Abs(h.aw-aw) > 1e-12*aw || math.Abs(h.awF-awF) > 1e-12*aw {
			t.Fatalf("word %d: A_w %v free %v, want %v and %v", w, h.aw, h.awF, aw, awF)
		}
	}
	if mixed == 0 {
		t.Error("no word is held by both concepts and free topics: the split was not tried")
	}
}

// TestGroupLists: group's linked lists hold, for every topic, exactly the
// record's word types whose s_kw > 0 (from the model's φ, not the word
// lists), each once with its s_kw; bT lists each such topic once, in the
// order the words' lists first meet it; E⁰ is summed for the start only.
// With and without the start, on records with repeated words. Common
// practice, no source.
func TestGroupLists(t *testing.T) {
	m := modeltest.Synthetic(modeltest.Options{Concepts: 40, Free: 5, Words: 300, WordsPerConcept: 12, Seed: 31})
	a, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	r := rand.New(rand.NewPCG(32, 33))
	for trial := 0; trial < 40; trial++ {
		ids := make([]int32, 1+r.IntN(60))
		for i := range ids {
			ids[i] = int32(r.IntN(80))
		}
		_, toks := tokens(ids, m.Words)
		st := a.get()
		opt := Options{}
		if trial%2 == 1 { // known subjects: the own-posterior start, no E⁰
			opt.Subjects = []string{m.Scheme.Concepts[trial%40].IRI}
			opt.SubjectMode = Boost
		}
		if _, err := a.infer(&Result{}, "", toks, opt, st); err != nil {
			t.Fatal(err)
		}
		if st.rows {
			t.Fatal("want the grouped path")
		}
		var order []int32 // topics as the words' lists first meet them
		seen := map[int32]bool{}
		for _, w := range st.uw {
			for k := 0; k < a.K; k++ {
				if m.Phi(k, int(w))-a.phi0[k] > 1e-15 && !seen[int32(k)] {
					seen[int32(k)] = true
					order = append(order, int32(k))
				}
			}
		}
		if !slices.Equal(st.bT, order) {
			t.Fatalf("trial %d: bT %v, want %v", trial, st.bT, order)
		}
		for k := int32(0); k < int32(a.K); k++ {
			got := map[int32]float64{}
			for i := st.bh[k] - 1; i >= 0; i = st.bent[i].next {
				e := st.bent[i]
				if e.k != k {
					t.Fatalf("trial %d: topic %d's list holds an entry of topic %d", trial, k, e.k)
				}
				if _, dup := got[e.u]; dup {
					t.Fatalf("trial %d: topic %d lists word type %d twice", trial, k, e.u)
				}
				got[e.u] = e.s
			}
			for u, w := range st.uw {
				want := m.Phi(int(k), int(w)) - a.phi0[k]
				s, ok := got[int32(u)]
				if want > 1e-15 != ok || (ok && math.Abs(s-want) > 1e-12*want) {
					t.Fatalf("trial %d: topic %d word type %d: listed %v with %v, want s_kw %v", trial, k, u, ok, s, want)
				}
			}
		}
		for k, v := range st.e0k {
			if v != 0 {
				t.Fatalf("trial %d: e0k[%d] = %v left after the record", trial, k, v)
			}
		}
		a.put(st)
	}
}

// TestPriorOnly: priorOnly keeps the first n concepts in order with
// slot < 0 and bh = 0, after what cand held, as the plain loop does.
// Common practice, no source.
func TestPriorOnly(t *testing.T) {
	r := rand.New(rand.NewPCG(31, 32))
	for trial := 0; trial < 500; trial++ {
		C := 1 + r.IntN(60)
		order := make([]int32, C)
		for i := range order {
			order[i] = int32(i)
		}
		r.Shuffle(C, func(i, j int) { order[i], order[j] = order[j], order[i] })
		slot, bh := make([]int32, C), make([]int32, C)
		for k := range slot {
			slot[k], bh[k] = -1, 0
			if r.IntN(3) == 0 {
				slot[k] = int32(r.IntN(10))
			}
			if r.IntN(3) == 0 {
				bh[k] = int32(1 + r.IntN(1000))
			}
		}
		head := []int32{int32(r.IntN(5)), 7}[:r.IntN(3)]
		n := r.IntN(C + 2)
		want := slices.Clone(head)
		for _, k := range order {
			if len(want)-len(head) >= n {
				break
			}
			if slot[k] < 0 && bh[k] == 0 {
				want = append(want, k)
			}
		}
		if got := priorOnly(order, slot, bh, slices.Clone(head), n); !slices.Equal(got, want) {
			t.Fatalf("trial %d: %v, want %v", trial, got, want)
		}
	}
}
