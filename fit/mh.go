package fit

// The Metropolis–Hastings sampler (Options.Sampler "mh"): cheap proposals
// corrected by the exact conditional, after LightLDA (Yuan et al. 2015,
// "LightLDA: big topic models on modest computer clusters", §3: cycling a
// word and a doc proposal) and AliasLDA (Li, Ahmed, Ravi & Smola 2014).
//
// For a token i of word w in record d, with its own count removed, the
// target is the exact conditional
//
//	p(k) ∝ (n_dk + α_k)·(n_kw + β_kw)/(n_k + B_k)
//
// Each MH step proposes t and accepts it with min(1, p(t)q(s)/(p(s)q(t))),
// s the chain's current topic. The two proposals are
//
//	word  q_w(k) ∝ n_kw + β0 + λπ_kw    the topic of a random token of w, or a uniform topic (β0), or a prior alias draw (λπ)
//	doc   q_d(k) ∝ n_dk + α_k           the topic of a random other token of d, or an α alias draw
//
// so the ratio keeps (n_dk+α_k)/(n_k+B_k) for the word proposal and
// (n_kw+β_kw)/(n_k+B_k) for the doc proposal: O(1) per step, one hash
// lookup of n_kw for the doc proposal.
//
// Both proposals are functions of the current counts (they read the
// current topics of other tokens), not of counts taken at the start of the
// sweep: tables built from earlier counts depend on past values of tokens
// already resampled, which biases the chain (TestMHGeweke caught it on a
// tiny model when this sampler first used LightLDA's stale word tables).
// The only tables are the α alias (rebuilt per sweep: α is fixed within a
// sweep) and the per-word prior alias (fixed).
//
// With several workers a worker's counts are its AD-LDA view: the shared
// counts of the last merge plus its own changes. Its word proposal then
// reads the other shards' topics from the snapshot taken at the merge, so
// that the proposal matches the counts it is corrected with.
//
// Records that are restricted (subjects or anchors) keep the exact sparse
// sampler: a sweep first samples them, then the unrestricted records.

import (
	"math/bits"
	"slices"
	"unsafe"
)

// Sampler names for Options.Sampler.
const (
	SamplerSparse = "sparse"
	SamplerMH     = "mh"
	SamplerAuto   = "auto"
)

// mhAutoK is the smallest K at which "auto" uses the MH sampler. On the
// fitbench corpus (bench/fit-mh.md) MH was slower per token than the sparse
// sampler at K = 100 to 10,000, only ~1.2× faster at K = 100,000 under load
// and never at low load, and it mixes less per sweep at every K: so "auto"
// keeps the sparse sampler at every K measured.
const mhAutoK = 1 << 30

// mhSteps is the number of (word, doc) proposal pairs per token.
const mhSteps = 2

// useMH reports whether the sweeps use the MH sampler.
func (o *Options) useMH(k int) bool {
	switch o.Sampler {
	case SamplerMH:
		return true
	case SamplerAuto:
		return k >= mhAutoK
	}
	return false
}

// hent is one word–topic count of a word's hash.
type hent struct{ k, n int32 }

// aent is one alias-table entry: keep topic k with chance prob, else alt.
type aent struct {
	prob   float64
	k, alt int32
}

// mword is one word's MH data: its count hash and its prior alias table.
type mword struct {
	tab    []hent  // open addressing, len a power of two, k = −1 empty
	used   int32   // filled slots
	lo, hi int32   // prior alias entries are m.walias[lo:hi]
	psum   float64 // Σ_k λπ_kw
}

// mtopic is what an MH step reads of one topic, in half a cache line.
type mtopic struct {
	alpha, B float64 // α_k, B_k
	nk, ndk  int32   // n_k and the current record's n_dk
	_        [8]byte
}

// mhState is a worker's MH data.
type mhState struct {
	words  []mword // W
	walias []aent  // prior alias tables, built once
	top    []mtopic
	alpha  []aent // K: alias of α_k
	aSum   float64
	kb0    float64 // K·β0

	// Occurrences: the positions in st.words of word w's tokens are
	// occ[occStart[w]:occStart[w+1]] (built once, shared by the workers).
	occStart []int64
	occ      []int64
	// Own shard's tokens [zlo, zhi) read z; others read st.zSnap.
	zlo, zhi int64

	ring [mhRing]mhSlot

	scratch []float64
	small   []int32
	large   []int32
}

// Lookahead of the token pipeline (see mhDoc).
const (
	mhRing  = 16
	mhAhead = 4 // tokens between drawing proposals and reading them
)

// mhSlot holds the proposals of one token drawn ahead of its turn: a
// token position (≥ 0, its topic read when used) or a topic (−1−k).
type mhSlot struct {
	wp [mhSteps]int64
	dp [mhSteps]int64
}

// hslot returns the slot of k in t (len a power of two): the slot holding
// k, or the empty slot where it would go.
func hslot(t []hent, k int32) int {
	m := len(t) - 1
	// Fibonacci hashing: the product's top bits index the table.
	i := int(uint32(k) * 0x9e3779b1 >> (32 - bits.Len(uint(m))))
	for {
		e := t[i].k
		if e == k || e < 0 {
			return i
		}
		i = (i + 1) & m
	}
}

// hfirst is the first slot hslot probes for k.
func hfirst(t []hent, k int32) *hent {
	m := len(t) - 1
	return &t[int(uint32(k)*0x9e3779b1>>(32-bits.Len(uint(m))))]
}

func newTable(n int) []hent {
	size := 4
	for size < 2*n+2 {
		size <<= 1
	}
	t := make([]hent, size)
	for i := range t {
		t[i].k = -1
	}
	return t
}

// hinc adds one to the count of k in word mw, inserting it if absent.
func (mw *mword) hinc(k int32) {
	t := mw.tab
	if t == nil || int(mw.used+1)*2 > len(t) {
		nt := newTable(int(mw.used) + 1)
		for _, e := range t {
			if e.k >= 0 {
				nt[hslot(nt, e.k)] = e
			}
		}
		mw.tab = nt
		t = nt
	}
	i := hslot(t, k)
	if t[i].k < 0 {
		t[i] = hent{k: k}
		mw.used++
	}
	t[i].n++
}

// hget returns the count of k in word mw.
func (mw *mword) hget(k int32) int32 {
	t := mw.tab
	if t == nil {
		return 0
	}
	e := &t[hslot(t, k)]
	if e.k < 0 {
		return 0
	}
	return e.n
}

// buildAlias fills tab (Vose's method) for the weights ws, whose total is
// sum > 0, over the topics ks (nil: the indices).
func (m *mhState) buildAlias(ws []float64, ks []int32, sum float64, tab []aent) {
	m.small, m.large = buildAlias(ws, ks, sum, tab, m.small, m.large)
}

// buildAlias fills tab[:len(ws)] with Walker's alias table (Walker 1977)
// by Vose's stable construction (Vose 1991) for the weights ws, whose total
// is sum > 0, over the topics ks (nil: the indices). small and large are
// scratch, returned for reuse.
func buildAlias(ws []float64, ks []int32, sum float64, tab []aent, small, large []int32) ([]int32, []int32) {
	small, large = small[:0], large[:0]
	scale := float64(len(ws)) / sum
	for j, v := range ws {
		k := int32(j)
		if ks != nil {
			k = ks[j]
		}
		tab[j] = aent{prob: v * scale, k: k, alt: k}
		if tab[j].prob < 1 {
			small = append(small, int32(j))
		} else {
			large = append(large, int32(j))
		}
	}
	for len(small) > 0 && len(large) > 0 {
		s := small[len(small)-1]
		small = small[:len(small)-1]
		l := large[len(large)-1]
		tab[s].alt = tab[l].k
		tab[l].prob -= 1 - tab[s].prob
		if tab[l].prob < 1 {
			large = large[:len(large)-1]
			small = append(small, l)
		}
	}
	for _, j := range large {
		tab[j].prob = 1
	}
	for _, j := range small { // rounding leftovers
		tab[j].prob = 1
	}
	return small, large
}

// aliasDraw draws a topic from an alias table with one random word: the
// high half picks the entry, the low half the coin.
func aliasDraw(r *rng, tab []aent) int32 {
	x := r.p.Uint64()
	e := &tab[(x>>32)*uint64(len(tab))>>32]
	if float64(uint32(x))*(1.0/(1<<32)) < e.prob {
		return e.k
	}
	return e.alt
}

// mhIndex builds the occurrence index once. With several workers
// sweepOnce calls it before they start, so they only read it.
func (st *state) mhIndex() {
	if st.occStart != nil {
		return
	}
	occStart := make([]int64, st.W+1)
	for _, w := range st.words {
		occStart[w+1]++
	}
	for w := 0; w < st.W; w++ {
		occStart[w+1] += occStart[w]
	}
	st.occ = make([]int64, len(st.words))
	fill := slices.Clone(occStart[:st.W])
	for i, w := range st.words {
		st.occ[fill[w]] = int64(i)
		fill[w]++
	}
	st.occStart = occStart
}

// mhInit builds what never changes: the occurrence index (shared) and the
// prior alias tables.
func (wk *worker) mhInit() {
	st := wk.st
	m := &mhState{
		words: make([]mword, st.W),
		top:   make([]mtopic, st.K),
		alpha: make([]aent, st.K),
	}
	m.scratch = make([]float64, st.K)
	wk.mh = m
	st.mhIndex()
	m.occStart, m.occ = st.occStart, st.occ
	n := st.pStart[st.W]
	m.walias = make([]aent, n)
	for w := 0; w < st.W; w++ {
		mw := &m.words[w]
		mw.lo, mw.hi = st.pStart[w], st.pStart[w+1]
		if mw.lo == mw.hi {
			continue
		}
		ws := st.pMass[mw.lo:mw.hi]
		for _, v := range ws {
			mw.psum += v
		}
		m.buildAlias(ws, st.pTopic[mw.lo:mw.hi], mw.psum, m.walias[mw.lo:mw.hi])
	}
}

// mhPrepare builds the count hashes from the worker's word lists and the
// topic and α tables from its counts.
func (wk *worker) mhPrepare(lo, hi int) {
	st := wk.st
	if wk.mh == nil {
		wk.mhInit()
	}
	m := wk.mh
	m.zlo, m.zhi = 0, int64(len(st.z))
	if wk.local {
		m.zlo, m.zhi = st.docs[lo].start, st.docs[hi-1].end
	}
	m.aSum = 0
	for k := 0; k < st.K; k++ {
		m.top[k] = mtopic{alpha: st.alpha[k], B: st.B[k], nk: wk.nk[k]}
		m.aSum += st.alpha[k]
	}
	m.kb0 = float64(st.K) * st.beta0
	m.buildAlias(st.alpha, nil, m.aSum, m.alpha)
	for w := 0; w < st.W; w++ {
		mw := &m.words[w]
		list := wk.wt[w]
		t := mw.tab
		need := len(list)
		if t != nil && len(t) >= 2*need+2 && len(t) <= 8*need+8 {
			for i := range t {
				t[i] = hent{k: -1}
			}
		} else if need > 0 {
			t = newTable(need)
		} else {
			t = nil
		}
		for _, e := range list {
			t[hslot(t, e.k)] = hent{k: e.k, n: e.n}
		}
		mw.tab = t
		mw.used = int32(need)
	}
}

// mhFinish writes the counts back: n_k always, the word lists (sorted by
// count descending) when the worker samples on the shared counts.
func (wk *worker) mhFinish() {
	m := wk.mh
	for k := range wk.nk {
		wk.nk[k] = m.top[k].nk
	}
	if wk.local {
		return // the merge replays the logged changes instead
	}
	for w := range wk.wt {
		l := wk.wt[w][:0]
		for _, e := range m.words[w].tab {
			if e.k >= 0 && e.n > 0 {
				l = append(l, tc{e.k, e.n})
			}
		}
		if len(l) > 1 {
			slices.SortFunc(l, func(a, b tc) int {
				if a.n != b.n {
					return int(b.n - a.n)
				}
				return int(a.k - b.k)
			})
		}
		wk.wt[w] = l
	}
}

// mhShard runs one sweep over records [lo, hi) of the worker's shard.
func (wk *worker) mhShard(lo, hi int) {
	st := wk.st
	free := false
	for i := lo; i < hi; i++ {
		if st.docs[i].subjects != nil {
			wk.doc(&st.docs[i], false)
		} else {
			free = true
		}
	}
	if !free {
		return
	}
	wk.mhPrepare(lo, hi)
	for i := lo; i < hi; i++ {
		if st.docs[i].subjects == nil {
			wk.mhDoc(&st.docs[i])
		}
	}
	wk.mhFinish()
}

// zAt is the topic of token j in the worker's view.
func (wk *worker) zAt(j int64) int32 {
	m := wk.mh
	if j >= m.zlo && j < m.zhi {
		return wk.st.z[j]
	}
	return wk.st.zSnap[j]
}

func (wk *worker) zAddr(j int64) unsafe.Pointer {
	m := wk.mh
	if j >= m.zlo && j < m.zhi {
		return unsafe.Pointer(&wk.st.z[j])
	}
	return unsafe.Pointer(&wk.st.zSnap[j])
}

// mhDraw draws the proposals of token i (global position g, word w) of a
// record of L tokens ahead of its turn. A proposal that is another token
// is stored as its position and read when used, so drawing early changes
// nothing but lets memory be fetched meanwhile.
func (wk *worker) mhDraw(sl *mhSlot, w int32, g int64, i, L int) {
	m := wk.mh
	r := wk.r
	mw := &m.words[w]
	olo := m.occStart[w]
	nw := float64(m.occStart[w+1] - olo)
	for s := 0; s < mhSteps; s++ {
		// Word: n_kw (a token of w; itself counts as a null move) + β0 + λπ_kw.
		u := r.Float64() * (nw + m.kb0 + mw.psum)
		switch {
		case u < nw:
			o := olo + int64(u) // an occurrence, read by mhFetch
			sl.wp[s] = o
			prefetch(unsafe.Pointer(&m.occ[o]))
		case u < nw+m.kb0 || mw.psum == 0:
			k := int32(r.IntN(len(m.top)))
			sl.wp[s] = -1 - int64(k)
			prefetch(unsafe.Pointer(&m.top[k]))
		default:
			k := aliasDraw(r, m.walias[mw.lo:mw.hi])
			sl.wp[s] = -1 - int64(k)
			prefetch(unsafe.Pointer(&m.top[k]))
		}
		// Doc: n_dk without the token, + α_k.
		if u := r.Float64() * (float64(L-1) + m.aSum); u < float64(L-1) {
			j := int(u)
			if j >= i {
				j++
			}
			sl.dp[s] = g - int64(i) + int64(j)
		} else {
			k := aliasDraw(r, m.alpha)
			sl.dp[s] = -1 - int64(k)
			prefetch(unsafe.Pointer(&m.top[k]))
			if t := mw.tab; t != nil {
				prefetch(unsafe.Pointer(hfirst(t, k)))
			}
		}
	}
}

// mhFetch turns the drawn occurrences of token slot sl (word w) into token
// positions and fetches their topics, and the counts the doc proposals
// will likely read.
func (wk *worker) mhFetch(sl *mhSlot, w int32) {
	m := wk.mh
	t := m.words[w].tab
	for s := 0; s < mhSteps; s++ {
		if o := sl.wp[s]; o >= 0 {
			j := m.occ[o]
			sl.wp[s] = j
			prefetch(wk.zAddr(j))
		}
		if j := sl.dp[s]; j >= 0 && t != nil {
			k := wk.st.z[j] // may still change before use: only a hint
			prefetch(unsafe.Pointer(&m.top[k]))
			prefetch(unsafe.Pointer(hfirst(t, k)))
		}
	}
}

// mhDoc runs the MH chain of every token of an unrestricted record, as a
// software pipeline: token i+3·mhAhead has its word data fetched, token
// i+2·mhAhead its proposals drawn, token i+mhAhead the topics of the
// proposed tokens fetched, token i is sampled.
func (wk *worker) mhDoc(d *sdoc) {
	st := wk.st
	m := wk.mh
	z := st.z[d.start:d.end]
	words := st.words[d.start:d.end]
	top := m.top
	for _, k := range z {
		top[k].ndk++
	}
	L := len(z)
	for i := -3 * mhAhead; i < L; i++ {
		if a := i + 3*mhAhead; a < L {
			w := words[a]
			prefetch(unsafe.Pointer(&m.words[w]))
			prefetch(unsafe.Pointer(&m.occStart[w]))
		}
		if a := i + mhAhead; a >= 0 && a < L {
			wk.mhFetch(&m.ring[a%mhRing], words[a])
		}
		if a := i + 2*mhAhead; a >= 0 && a < L {
			wk.mhDraw(&m.ring[a%mhRing], words[a], d.start+int64(a), a, L)
			if t := m.words[words[a]].tab; t != nil {
				prefetch(unsafe.Pointer(hfirst(t, z[a])))
			}
		}
		if i >= 0 {
			wk.mhToken(&m.ring[i%mhRing], z, words[i], d.start+int64(i), i)
		}
	}
	for _, k := range z {
		top[k].ndk = 0
	}
}

// mhToken runs the MH chain of token i (word w, global position g) of the
// record whose topics are z, with the proposals in sl, and records its new
// topic. The record's n_dk are in the topic table.
func (wk *worker) mhToken(sl *mhSlot, z []int32, w int32, g int64, i int) {
	st := wk.st
	m := wk.mh
	r := wk.r
	top := m.top
	mw := &m.words[w]
	old := z[i]
	hasPrior := mw.lo != mw.hi
	// Remove the token.
	top[old].ndk--
	top[old].nk--
	mw.tab[hslot(mw.tab, old)].n--
	beta := func(k int32) float64 {
		if hasPrior {
			return st.beta0 + st.priorMass(k, w)
		}
		return st.beta0
	}
	s := old
	// Word factor (n_sw+β_sw) and document factor (n_ds+α_s) of s, each
	// over n_s+B_s.
	ts := &top[s]
	invS := 1 / (float64(ts.nk) + ts.B)
	ws := (float64(mw.hget(s)) + beta(s)) * invS
	ds := (float64(ts.ndk) + ts.alpha) * invS
	for step := 0; step < mhSteps; step++ {
		// Word proposal: p(t)q(s)/(p(s)q(t)) = d_t/d_s.
		var t int32
		if j := sl.wp[step]; j >= 0 {
			if j == g {
				t = s // the token itself: a null move
			} else {
				t = wk.zAt(j)
			}
		} else {
			t = int32(-1 - j)
		}
		if t != s {
			tt := &top[t]
			invT := 1 / (float64(tt.nk) + tt.B)
			dt := (float64(tt.ndk) + tt.alpha) * invT
			if r.Float64()*ds < dt {
				s, ds, invS = t, dt, invT
				ws = (float64(mw.hget(s)) + beta(s)) * invS
			}
		}
		// Doc proposal: p(t)q(s)/(p(s)q(t)) = w_t/w_s.
		if j := sl.dp[step]; j >= 0 {
			t = z[j-(g-int64(i))]
		} else {
			t = int32(-1 - j)
		}
		if t != s {
			tt := &top[t]
			invT := 1 / (float64(tt.nk) + tt.B)
			wt := (float64(mw.hget(t)) + beta(t)) * invT
			if r.Float64()*ws < wt {
				s, ws, invS = t, wt, invT
				ds = (float64(tt.ndk) + tt.alpha) * invS
			}
		}
	}
	// Add it back with its new topic.
	top[s].ndk++
	top[s].nk++
	mw.hinc(s)
	z[i] = s
	if wk.local && s != old {
		p := int(w) % len(wk.changes)
		wk.changes[p] = append(wk.changes[p], change{w, old, s})
	}
}
