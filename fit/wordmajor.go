package fit

// The word-major sweep: at large K with one worker, the tokens of records
// without subjects are visited word by word (all tokens of word 0, then of
// word 1, ...), as LightLDA does (Yuan et al. 2015, "LightLDA: Big topic
// models on modest computer clusters", WWW); records with subjects (people's
// or anchored) are swept record by record first, as before. Any fixed scan
// order is a systematic-scan Gibbs sampler, and every token below is still
// drawn from its exact conditional, so the sampler stays exact.
//
// Why: record by record, every token reads its word's topic list (54
// entries at K = 100,000 on the fitbench corpus, lists spread over the
// heap) cold. Word by word, the word's counts and its topics' lines stay in
// cache for all its tokens, and a token's cold data are its own topic in z
// and its record's topic list, both known ahead and prefetched.
//
// The conditional p(k) ∝ (α_k+n_dk)(n_kw+β0+λπ_kw)/(n_k+B_k) is drawn as a
// mixture of
//
//	both    n_dk·n_kw/(n_k+B_k)        the record's topics that hold w: the
//	                                   record's list against a bitset of w's
//	                                   topics; n_kw and the topic line are hot
//	word    α_k·n_kw/(n_k+B_k)         over w's topics: its total is kept
//	                                   from move to move within w's pass
//	                                   (recomputed at w's start), drawn by a
//	                                   walk over w's topics (hot)
//	prior   (α_k+n_dk)·λπ_kw/(n_k+B_k) over w's prior concepts, exact
//	doc     n_dk·β0/(n_k+B_k)          by rejection: envelope
//	                                   n_dk·β0/B_min, proposal the topic of a
//	                                   random other token of the record,
//	                                   accepted with B_min/(n_k+B_k)
//	smooth  α_k·β0/(n_k+B_k)           as in the record-major sweep
//
// A rejected doc proposal restarts the whole draw (plain rejection sampling
// from the full mixture, so exact). During w's pass only w's own tokens
// move (one worker), so n_kw and n_k of w's topics change only where the
// pass changes them.
//
// A record's topic list (topic, n_dk), sorted by topic, lives in one slab:
// a header entry {entries, tokens} and room for min(tokens, K) entries. The
// lists are rebuilt from z at the start of every word-major sweep, so what a
// sweep draws depends on the state only (a resumed fit draws what the
// uninterrupted one draws).

import (
	"math"
	"slices"
	"unsafe"
)

// wmIndex is what the word-major sweep keeps besides the counts.
type wmIndex struct {
	rec   []int32  // per occurrence (st.occ order): slab offset of the record's list, −1: record with subjects
	zw    []int32  // per occurrence: its topic during the sweep (z in word order)
	zwOK  bool     // zw equals z (set by a word-major sweep, cleared by anything else that changes z)
	moved []int32  // occurrences whose topic changed in this sweep (in z at its end)
	doff  []int32  // per record: slab offset of its list, −1: record with subjects
	slab  []tc     // record lists (see above)
	cnt   []int32  // K: n_kw of the word being swept (0 between words)
	wbits []uint64 // K bits: topics of the word being swept (set since its start)
	touch []int32  // those topics, in the order they were met
	hits  []int32  // topics of the "both" terms of the current token
	hbuf  []float64
	kbuf  []int32 // scratch for rebuilding the record lists
	bmin  float64 // min_k B_k
	bU    float64 // B_k when equal for all k, else 0
	aU    float64 // α_k when equal for all k (set per sweep), else 0
	units int     // tokens of records without subjects

	// The current token stays in the counts while its topic is drawn: its
	// own topic old's terms are computed with n_dk−1, n_kw−1, n_k−1.
	old    int32   // the current token's topic
	invIn  float64 // 1/(n_old+B_old), the token counted
	invOut float64 // 1/(n_old−1+B_old), the token taken out
}

// wmAhead is the prefetch distance of the word-major sweep, in occurrences.
const wmAhead = 10

// testNoWordMajor keeps the record-major sweep even where the word-major
// one would be taken: tests only.
var testNoWordMajor bool

// wmIndexBuild builds the word-major index once (with the occurrence
// index). It returns nil when the slab would not fit int32 offsets or no
// record is without subjects.
func (st *state) wmIndexBuild() *wmIndex {
	if st.wm != nil {
		return st.wm
	}
	st.mhIndex()
	m := &wmIndex{doff: make([]int32, len(st.docs))}
	size := int64(0)
	for di := range st.docs {
		d := &st.docs[di]
		if d.subjects != nil {
			m.doff[di] = -1
			continue
		}
		n := d.end - d.start
		m.doff[di] = int32(size)
		size += 1 + min(n, int64(st.K))
		m.units += int(n)
		if size > math.MaxInt32 {
			return nil
		}
	}
	if m.units == 0 {
		return nil
	}
	m.slab = make([]tc, size)
	tokRec := make([]int32, len(st.words))
	for di := range st.docs {
		d := &st.docs[di]
		for i := d.start; i < d.end; i++ {
			tokRec[i] = m.doff[di]
		}
		if o := m.doff[di]; o >= 0 {
			m.slab[o].n = int32(d.end - d.start)
		}
	}
	if len(st.occ) > math.MaxInt32 {
		return nil
	}
	m.rec = make([]int32, len(st.occ))
	m.zw = make([]int32, len(st.occ))
	for j, p := range st.occ {
		m.rec[j] = tokRec[p]
	}
	m.wbits = make([]uint64, (st.K+63)/64)
	m.cnt = make([]int32, st.K)
	maxL := int64(0)
	for di := range st.docs {
		if m.doff[di] >= 0 {
			maxL = max(maxL, min(st.docs[di].end-st.docs[di].start, int64(st.K)))
		}
	}
	m.hits = make([]int32, maxL)
	m.hbuf = make([]float64, maxL)
	m.bmin = math.Inf(1)
	m.bU = st.B[0]
	for _, b := range st.B {
		m.bmin = min(m.bmin, b)
		if b != m.bU {
			m.bU = 0
		}
	}
	st.wm = m
	return m
}

// wmBuildLists rebuilds every record list from z.
func (wk *worker) wmBuildLists() {
	st, m := wk.st, wk.wm
	for di := range st.docs {
		o := m.doff[di]
		if o < 0 {
			continue
		}
		d := &st.docs[di]
		ks := m.kbuf[:0]
		for _, k := range st.z[d.start:d.end] {
			if m.cnt[k] == 0 {
				ks = append(ks, k)
			}
			m.cnt[k]++
		}
		slices.Sort(ks)
		l := m.slab[o+1 : o+1+int32(len(ks))]
		for j, k := range ks {
			l[j] = tc{k, m.cnt[k]}
			m.cnt[k] = 0
		}
		m.slab[o].k = int32(len(ks))
		m.kbuf = ks
	}
}

// wordMajor sweeps the tokens of the records without subjects word by word.
func (wk *worker) wordMajor() {
	st, m := wk.st, wk.wm
	m.aU = st.alpha[0]
	for _, a := range st.alpha {
		if a != m.aU {
			m.aU = 0
		}
	}
	wk.wmBuildLists()
	if !m.zwOK { // z in word order
		for j, o := range m.rec {
			if o >= 0 {
				m.zw[j] = st.z[st.occ[j]]
			}
		}
	}
	for w := int32(0); w < int32(st.W); w++ {
		lo, hi := st.occStart[w], st.occStart[w+1]
		free := false
		for j := lo; j < hi && !free; j++ {
			free = m.rec[j] >= 0
		}
		if !free {
			continue
		}
		wk.wmBeginWord(w)
		for j := lo; j < hi; j++ {
			// Ahead: the token's z and its record's list, the likely
			// misses.
			if a := j + wmAhead; a < int64(len(st.occ)) {
				if o := m.rec[a]; o >= 0 {
					p := unsafe.Pointer(&m.slab[o])
					prefetch(p)
					prefetch(unsafe.Add(p, 64))
					prefetch(unsafe.Add(p, 128))
					prefetch(unsafe.Add(p, 192))
				}
			}
			o := m.rec[j]
			if o < 0 {
				continue
			}
			// A token that keeps its topic writes nothing (wmToken).
			old := m.zw[j]
			if k := wk.wmToken(w, o, old); k != old {
				m.zw[j] = k
				m.moved = append(m.moved, int32(j)) // j < len(st.occ) ≤ MaxInt32
			}
		}
		wk.wmEndWord(w)
	}
	for _, j := range m.moved { // back into z: the topics that changed
		st.z[st.occ[j]] = m.zw[j]
	}
	m.moved = m.moved[:0]
	m.zwOK = true
}

// The word-major sweep reads and writes the counts of a topic in the
// compact arrays n_k (wk.nk), n_kw (cnt), α and B (one value when all are
// equal), which the L2 cache holds at K = 100,000, never in the worker's
// 64-byte topic lines; those are out of date after the sweep and rebuilt by
// the next refresh.

// wmAlpha is α_k.
func (wk *worker) wmAlpha(k int32) float64 {
	if a := wk.wm.aU; a > 0 {
		return a
	}
	return wk.st.alpha[k]
}

// wmB is B_k.
func (wk *worker) wmB(k int32) float64 {
	if b := wk.wm.bU; b > 0 {
		return b
	}
	return wk.st.B[k]
}

// wmInv is 1/(n_k+B_k).
func (wk *worker) wmInv(k int32) float64 { return 1 / (float64(wk.nk[k]) + wk.wmB(k)) }

// wmInvX is 1/(n_k+B_k) with the current token taken out of n_k.
func (wk *worker) wmInvX(k int32) float64 {
	if k == wk.wm.old {
		return wk.wm.invOut
	}
	return wk.wmInv(k)
}

// b2i is 1 for true, 0 for false.
func b2i(b bool) int32 {
	if b {
		return 1
	}
	return 0
}

// wmBeginWord loads word w's counts into cnt and the bitset and computes
// the word part's total.
func (wk *worker) wmBeginWord(w int32) {
	m := wk.wm
	list := wk.wt[w]
	q := 0.0
	for _, e := range list {
		m.cnt[e.k] = e.n
		q += wk.wmAlpha(e.k) * float64(e.n) * wk.wmInv(e.k)
		m.wbits[uint32(e.k)>>6] |= 1 << (uint32(e.k) & 63)
		m.touch = append(m.touch, e.k)
	}
	wk.qword = q
}

// wmEndWord writes word w's counts back into its list (in the canonical
// order) and clears cnt and the bitset.
func (wk *worker) wmEndWord(w int32) {
	m := wk.wm
	buf := wk.wmList[:0]
	for _, k := range m.touch {
		if c := m.cnt[k]; c > 0 {
			buf = append(buf, tc{k, c})
		}
		m.cnt[k] = 0
		m.wbits[uint32(k)>>6] = 0
	}
	m.touch = m.touch[:0]
	sortList(buf)
	setList(&wk.wt[w], buf)
	wk.wmList = buf
}

// wmMove adds dn (±1) tokens of the current word to topic k: n_k, n_kw, the
// smoothing sums and the word part's total.
func (wk *worker) wmMove(k int32, dn int32) {
	st, m := wk.st, wk.wm
	a, b := wk.wmAlpha(k), wk.wmB(k)
	n, c := wk.nk[k], m.cnt[k]
	if c == 0 {
		if bw := &m.wbits[uint32(k)>>6]; *bw&(1<<(uint32(k)&63)) == 0 {
			*bw |= 1 << (uint32(k) & 63)
			m.touch = append(m.touch, k)
		}
	}
	invOld := 1 / (float64(n) + b)
	wk.nk[k], m.cnt[k] = n+dn, c+dn
	inv := 1 / (float64(n+dn) + b)
	wk.moveSmoothing(k, a*st.beta0*(inv-invOld))
	wk.qword += a * (float64(c+dn)*inv - float64(c)*invOld)
}

// wmToken draws a topic for a token of word w (record list at slab offset
// o, topic old) and moves the counts when the topic changes; it returns the
// new topic. The token stays in the counts while it is drawn (wmParts takes
// it out arithmetically), so a token that keeps its topic writes nothing.
func (wk *worker) wmToken(w, o, old int32) int32 {
	k := wk.wmDraw(w, o, old)
	if k != old {
		wk.wmRemove(o, old)
		wk.wmAssign(o, k)
	}
	return k
}

// wmRemove takes the current token (topic old) off the counts and its
// record's list at slab offset o.
func (wk *worker) wmRemove(o int32, old int32) {
	wk.wmMove(old, -1)
	s := wk.wm.slab
	n := s[o].k
	l := s[o+1 : o+1+n]
	for i := range l {
		if l[i].k == old {
			if l[i].n--; l[i].n == 0 {
				for ; i+1 < len(l); i++ {
					l[i] = l[i+1]
				}
				s[o].k = n - 1
			}
			return
		}
	}
	panic("fit: internal error: record topic count underflow")
}

// wmAssign puts the current token on topic k.
func (wk *worker) wmAssign(o int32, k int32) {
	wk.wmMove(k, 1)
	s := wk.wm.slab
	n := s[o].k
	l := s[o+1 : o+1+n]
	i := int32(0)
	for i < n && l[i].k < k {
		i++
	}
	if i < n && l[i].k == k {
		l[i].n++
		return
	}
	l = s[o+1 : o+2+n] // room: n < min(tokens, K) here
	for x := n; x > i; x-- {
		l[x] = l[x-1]
	}
	l[i] = tc{k, 1}
	s[o].k = n + 1
}

// wmParts computes the exact parts' totals for the current token of word w
// (record list at slab offset o, the token still counted on its topic old,
// which is taken out arithmetically: only old's terms change, to n_dk−1,
// n_kw−1, n_k−1): the "both" terms (in hits, hbuf), the prior terms (in
// pbuf), and returns their totals with the word part's, the doc envelope
// and the smoothing total. The smoothing total is that of the counts as
// they are (s0, drawn by wmSmoothing) plus ds, the extra smoothing mass of
// old once the token is out (n_k−1 makes its term larger), drawn as old.
func (wk *worker) wmParts(w, o, old int32) (both, qw, qp, denv, s0, ds float64) {
	st, m := wk.st, wk.wm
	a, b, nOld, cOld := wk.wmAlpha(old), wk.wmB(old), float64(wk.nk[old]), float64(m.cnt[old])
	m.old, m.invIn, m.invOut = old, 1/(nOld+b), 1/(nOld-1+b)
	qw = wk.qword + a*((cOld-1)*m.invOut-cOld*m.invIn)
	ds = a * st.beta0 * (m.invOut - m.invIn)
	n := m.slab[o].k
	l := m.slab[o+1 : o+1+n]
	hits := m.hits[:len(l)]
	c := scanRecord(l, m.wbits, hits)
	hits = hits[:c]
	hb := m.hbuf[:c]
	for i, x := range hits {
		e := l[x]
		var v float64
		if e.k == old {
			v = float64(e.n-1) * (cOld - 1) * m.invOut
		} else {
			v = float64(e.n) * float64(m.cnt[e.k]) * wk.wmInv(e.k)
		}
		hits[i] = e.k
		hb[i] = v
		both += v
	}
	m.hits, m.hbuf = hits, hb
	if len(st.pTopic) > 0 {
		qp = wk.wmPrior(w, l)
	}
	denv = st.beta0 * float64(m.slab[o].n-1) / m.bmin
	return both, qw, qp, denv, wk.sCon + wk.sFree, ds
}

// scanRecord stores in m the indices of the entries of the record list l
// whose topic is set in the bitset bs and returns their number (without a
// branch per entry: the record's topics rarely hold the word). m must be as
// long as l.
//
//go:noinline
func scanRecord(l []tc, bs []uint64, m []int32) (c int) {
	_ = m[:len(l)]
	mp := unsafe.Pointer(unsafe.SliceData(m))
	bp := unsafe.Pointer(unsafe.SliceData(bs))
	for i, e := range l {
		*(*int32)(unsafe.Add(mp, 4*c)) = int32(i) // c ≤ i < len(m)
		k := uint32(e.k)
		c += int(*(*uint64)(unsafe.Add(bp, 8*(k>>6))) >> (k & 63) & 1)
	}
	return c
}

// wmPrior fills pbuf with the prior terms (α_k+n_dk)·λπ_kw/(n_k+B_k) of w's
// prior concepts, n_dk from the record's list l (both sorted by topic), the
// current token taken out of its topic's counts.
func (wk *worker) wmPrior(w int32, l []tc) float64 {
	st := wk.st
	lo, hi := st.pStart[w], st.pStart[w+1]
	pt, pm := st.pTopic[lo:hi], st.pMass[lo:hi]
	pb := wk.pbuf[:len(pt)]
	q, i := 0.0, 0
	for j, k := range pt {
		for i < len(l) && l[i].k < k {
			i++
		}
		nd := 0.0
		if i < len(l) && l[i].k == k {
			nd = float64(l[i].n - b2i(k == wk.wm.old))
		}
		v := (wk.wmAlpha(k) + nd) * pm[j] * wk.wmInvX(k)
		pb[j] = v
		q += v
	}
	return q
}

// wmDraw draws a topic for the current token (of word w, its record list
// at slab offset o, its topic old, still in the counts).
func (wk *worker) wmDraw(w, o, old int32) int32 {
	both, qw, qp, denv, s0, ds := wk.wmParts(w, o, old)
	return wk.wmPick(w, o, both, qw, qp, denv, s0, ds)
}

// wmSmoothing is drawSmoothing (unrestricted) from the compact counts.
func (wk *worker) wmSmoothing(u float64) int32 {
	if !wk.smoothRej {
		return wk.drawSmoothing(u) // the Fenwick trees, kept by wmMove
	}
	st := wk.st
	for {
		wk.fst.SmoothProposals++
		var k int32
		if u < wk.sCon || st.F == 0 {
			k = wk.aliasC.draw(wk.r)
		} else {
			k = int32(st.C) + wk.aliasF.draw(wk.r)
		}
		if b := wk.wmB(k); wk.r.Float64()*(float64(wk.nk[k])+b) < b {
			wk.fst.SmoothAccepted++
			return k
		}
	}
}

// wmPick draws from the parts wmParts computed (the current token taken
// out of its topic m.old's counts).
func (wk *worker) wmPick(w, o int32, both, qw, qp, denv, s0, ds float64) int32 {
	m := wk.wm
	wk.fst.WordMajorTokens++
	g := wk.r
	old := m.old
	tot := both + qw + qp + denv + s0 + ds
	for {
		u := g.Float64() * tot
		if u < both {
			last := -1
			for i, v := range m.hbuf {
				if v > 0 {
					last = i
					if u -= v; u < 0 {
						break
					}
				}
			}
			if last >= 0 {
				return m.hits[last]
			}
			continue // no mass after all (rounding): draw again
		}
		u -= both
		if u < qw {
			last := int32(-1)
			for _, k := range m.touch {
				if c := m.cnt[k] - b2i(k == old); c > 0 {
					last = k
					if u -= wk.wmAlpha(k) * float64(c) * wk.wmInvX(k); u < 0 {
						break
					}
				}
			}
			if last >= 0 {
				return last
			}
			continue
		}
		u -= qw
		if u < qp {
			if k := wk.pickPrior(w, u); k >= 0 {
				return k
			}
			continue
		}
		u -= qp
		if u < denv {
			// A uniform other token of the record: its topic.
			wk.fst.DocProposals++
			n := m.slab[o].k
			r := int32(g.IntN(int(m.slab[o].n - 1)))
			var k int32
			for _, e := range m.slab[o+1 : o+1+n] {
				k = e.k
				if r -= e.n - b2i(k == old); r < 0 {
					break
				}
			}
			if g.Float64()*(float64(wk.nk[k]-b2i(k == old))+wk.wmB(k)) < m.bmin {
				wk.fst.DocAccepted++
				return k
			}
			continue
		}
		u -= denv
		if u < s0 {
			return wk.wmSmoothing(u)
		}
		if u-s0 < ds {
			return old
		}
		// Rounding ran past the total: draw again.
	}
}
