package fit

// The flat per-token path: a draw whose cost does not grow with the length
// of the word's topic list, for large K (issue 4).
//
// The sparse sampler's word bucket Σ_{k∈list(w)} (α_k+n_dk)·n_kw/(n_k+B_k)
// walks w's whole list, and lists grow with K (on the fitbench corpus 4.9
// entries per token at K = 100, 54 at K = 100,000) while a record keeps 8–17
// topics. The flat path splits the conditional
//
//	p(k) ∝ (α_k+n_dk)(n_kw+β0+λπ_kw)/(n_k+B_k)
//
// into
//
//	doc     n_dk·(n_kw+β0)/(n_k+B_k)      over the record's topics: n_kw from
//	                                      a per-word hash, O(K_d) look-ups
//	prior   (α_k+n_dk)·λπ_kw/(n_k+B_k)    over w's prior concepts, as before
//	smooth  α_k·β0/(n_k+B_k)              over all allowed topics, as before
//	word    α_k·n_kw/(n_k+B_k)            over w's list: not walked, drawn by
//	                                      rejection
//
// The word part is bounded by the envelope E_w = c·n_w with c = max_k α_k/B_k
// (fixed within a sweep, α_k/(n_k+B_k) ≤ α_k/B_k ≤ c) and n_w the number of
// w's training tokens: a proposal picks one of w's tokens uniformly (its
// current topic k has chance n_kw/n_w, the token being resampled counts as
// a rejection) and is accepted with α_k/((n_k+B_k)·c) (a topic the record
// may not use is rejected). A draw picks a part in proportion to
// doc + prior + smooth + E_w; a rejected proposal starts the whole draw
// again, which is plain rejection sampling from the full mixture and so
// exact. The acceptance is about B_k/(n_k+B_k): high at large K (topics hold
// few tokens), low at small K, where the walk stays (see flatUse).
//
// The smoothing part at large K is drawn by rejection too (drawSmoothingRej):
// propose k ∝ α_k·β0/B_k from an alias table built once per sweep, accept
// with B_k/(n_k+B_k); the Fenwick trees are then neither kept nor read.
//
// The word proposal reads the current topic of another token of w (st.z),
// and the hash holds the worker's n_kw: with several AD-LDA workers the
// other shards' topics are not the worker's view, so the flat path is used
// with one worker only (the per-core target of issue 4). Rejection smoothing
// reads only the worker's own n_k and works with any number of workers.
//
// What a token draws depends only on the state (counts, z, α) and the
// generator, never on whether a word's hash exists or on its layout, so a
// fit resumed from a checkpoint draws what the uninterrupted fit draws.

import (
	"math"
	"unsafe"
)

// Auto choice of the flat path (refresh).
const (
	// flatMinK is the smallest K at which a sweep may use the flat path and
	// rejection smoothing.
	flatMinK = 2048
	// flatMinAccept is the least mean acceptance (over the tokens) of the
	// word proposal, and of the smoothing proposal, for its rejection path.
	flatMinAccept = 0.3
	// flatMinList: a token takes the flat path when its word's list is
	// longer than this.
	flatMinList = 8
	// wmMinAccept is the least mean acceptance of the word-major sweep's
	// doc proposals (B_min/(n_k+B_k) over the tokens). Lower than
	// flatMinAccept: the doc part is a small share of a token's mass (on
	// the fitbench corpus 0.07–0.10 proposals per token at K = 2,048 to
	// 10,000, with 13–27 % accepted, and the sweep no slower than the
	// record-major one there).
	wmMinAccept = 0.1
)

// testFlat makes every sweep take the flat path (one worker) and rejection
// smoothing, for every token: tests only.
var testFlat bool

// flatPrepare decides, at the start of a sweep, whether the sweep uses the
// flat path and rejection smoothing, and builds what they need. The choice
// depends on the state only.
func (wk *worker) flatPrepare() {
	st := wk.st
	wk.flat, wk.smoothRej = false, false
	wk.wm = nil
	force := testFlat
	if st.opt.useMH(st.K) || (!force && st.K < flatMinK) {
		return
	}
	// Smoothing: acceptance s / Σ_k α_k β0/B_k.
	var env, cmax, accW, accD, n float64
	bmin := math.Inf(1)
	for k := 0; k < st.K; k++ {
		g := st.alpha[k] / st.B[k]
		env += g
		cmax = max(cmax, g)
		bmin = min(bmin, st.B[k])
	}
	smooth := (wk.sCon + wk.sFree) / (env * st.beta0)
	for k := 0; k < st.K; k++ {
		nk := float64(wk.nk[k])
		accW += nk * st.alpha[k] * wk.tp[k].inv
		accD += nk * wk.tp[k].inv
		n += nk
	}
	if n > 0 {
		accW /= n * cmax
		accD *= bmin / n
	}
	one := len(st.workers) == 1 && !wk.local
	wk.smoothRej = force || smooth >= flatMinAccept
	wk.flat = (force || accW >= flatMinAccept) && one
	if wk.smoothRej {
		wk.buildSmoothAlias()
	}
	// The word-major sweep: its doc part's acceptance is B_min/(n_k+B_k).
	if one && !testNoWordMajor && (force || accD >= wmMinAccept) {
		wk.wm = st.wmIndexBuild()
	}
	if !wk.flat {
		return
	}
	wk.cmax = cmax
	st.mhIndex()
	if wk.dbits == nil {
		wk.dbits = make([]uint64, (st.K+63)/64)
		wk.mbuf = make([]float64, st.K)
		wk.match = make([]int32, 0, st.K)
	}
}

// dbitSet and dbitClear keep the record's topic bitset (flat path only).
func (wk *worker) dbitSet(k int32) { wk.dbits[uint32(k)>>6] |= 1 << (uint32(k) & 63) }

func (wk *worker) dbitClear(k int32) { wk.dbits[uint32(k)>>6] &^= 1 << (uint32(k) & 63) }

// flatUse reports whether the token of word w takes the flat path.
func (wk *worker) flatUse(w int32) bool {
	return testFlat || len(wk.wt[w]) > flatMinList
}

// flatBuckets fills mbuf with the terms n_dk·n_kw/(n_k+B_k) of the entries
// of w's list whose topic the record holds (their list indices in match),
// pbuf with the prior terms, and returns the totals of the doc, prior and
// smoothing parts and the word envelope. Topic old (−1: none) is the
// token's own, unassigned from the counts but still in w's list; its index
// is kept in oldPos. The walk over the list reads nothing but the list and
// the record's topic bitset; the document's β0 part n_dk·β0/(n_k+B_k) is
// the cached rsum.
func (wk *worker) flatBuckets(w, old int32) (d, qp, s, env float64) {
	st := wk.st
	list := wk.wt[w]
	m := wk.match[:len(list)]
	c, op := scanList(list, wk.dbits, m, old)
	if op >= 0 {
		wk.oldPos = op
	}
	m = m[:c]
	wk.match = m
	mb := wk.mbuf[:len(m)]
	for j, i := range m {
		e := list[i]
		n := e.n
		if e.k == old {
			n--
		}
		v := float64(wk.tp[e.k].ndk) * float64(n) * wk.tp[e.k].inv
		mb[j] = v
		d += v
	}
	if len(st.pTopic) > 0 {
		qp = wk.priorBucket(w)
	}
	s = wk.smoothTotal()
	env = wk.cmax * float64(st.occStart[w+1]-st.occStart[w])
	return d, qp, s, env
}

// scanList stores in m the indices of the entries of list whose topic is
// set in the bitset bs and returns their number, and the index of topic old
// (−1: absent). m must be as long as list, bs must cover every topic. Not
// inlined: on its own the loop keeps every value in a register.
//
//go:noinline
func scanList(list []tc, bs []uint64, m []int32, old int32) (c, op int) {
	op = -1
	_ = m[:len(list)]
	mp := unsafe.Pointer(unsafe.SliceData(m))
	bp := unsafe.Pointer(unsafe.SliceData(bs))
	for i, e := range list {
		if e.k == old {
			op = i
		}
		*(*int32)(unsafe.Add(mp, 4*c)) = int32(i) // c ≤ i < len(m)
		k := uint32(e.k)
		c += int(*(*uint64)(unsafe.Add(bp, 8*(k>>6))) >> (k & 63) & 1)
	}
	return c, op
}

// drawFlat draws a topic for token i (word w, former topic old, unassigned
// from the counts but still in w's list, −1: none) from the conditional.
// Like draw it leaves the list index of old in oldPos and that of the drawn
// topic, when known, in newPos.
func (wk *worker) drawFlat(w, old int32, i int64) int32 {
	st := wk.st
	wk.newPos = -1
	d, qp, s, env := wk.flatBuckets(w, old)
	wk.fst.Tokens++
	r := wk.rsum
	tot := d + qp + r + s + env
	lo := st.occStart[w]
	nw := int(st.occStart[w+1] - lo)
	g := wk.r
	for {
		u := g.Float64() * tot
		if u < d {
			last := -1
			for j, v := range wk.mbuf[:len(wk.match)] {
				if v > 0 {
					last = j
					u -= v
					if u < 0 {
						break
					}
				}
			}
			if last >= 0 {
				wk.newPos = int(wk.match[last])
				return wk.wt[w][wk.newPos].k
			}
			continue // no mass after all (rounding): draw again
		}
		u -= d
		if u < qp+r+s {
			return wk.pickOther(w, u, qp, r)
		}
		// Word part: a uniform token of w, its topic accepted with
		// α_k/((n_k+B_k)·cmax).
		wk.fst.WordProposals++
		pos := st.occ[lo+int64(g.IntN(nw))]
		if pos == i {
			continue
		}
		k := st.z[pos]
		if wk.restricted && !wk.tp[k].allowed {
			continue
		}
		if t := &wk.tp[k]; g.Float64()*wk.cmax < t.alpha*t.inv {
			wk.fst.WordAccepted++
			return k
		}
	}
}

// aliasTable is a Walker/Vose alias table over n indices.
type aliasTable struct {
	tab          []aent
	small, large []int32
	ws           []float64 // the weights, scratch for buildAlias
	uniform      bool      // all weights equal: draw reads no table
}

// build fills the table for the weights w(0..n-1), whose total is sum > 0.
func (a *aliasTable) build(n int, sum float64, w func(i int) float64) {
	if cap(a.tab) < n {
		a.tab = make([]aent, n)
		a.ws = make([]float64, n)
	}
	a.tab, a.ws = a.tab[:n], a.ws[:n]
	a.uniform = true
	w0 := w(0)
	for i := range a.ws {
		wi := w(i)
		a.uniform = a.uniform && wi == w0
		a.ws[i] = wi
	}
	a.small, a.large = buildAlias(a.ws, nil, sum, a.tab, a.small, a.large)
}

// draw returns an index with chance proportional to its weight.
func (a *aliasTable) draw(r *rng) int32 {
	if a.uniform {
		return int32(r.IntN(len(a.tab)))
	}
	x := r.Float64() * float64(len(a.tab))
	i := int(x)
	if i >= len(a.tab) {
		i = len(a.tab) - 1
	}
	e := &a.tab[i]
	if x-float64(i) < e.prob {
		return e.k
	}
	return e.alt
}

// buildSmoothAlias builds the smoothing proposals α_k·β0/B_k, over the
// concepts and over the free topics.
func (wk *worker) buildSmoothAlias() {
	st := wk.st
	g := func(k int) float64 { return st.alpha[k] * st.beta0 / st.B[k] }
	if st.C > 0 {
		sum := 0.0
		for k := 0; k < st.C; k++ {
			sum += g(k)
		}
		wk.aliasC.build(st.C, sum, g)
	}
	if st.F > 0 {
		sum := 0.0
		for k := st.C; k < st.K; k++ {
			sum += g(k)
		}
		wk.aliasF.build(st.F, sum, func(i int) float64 { return g(st.C + i) })
	}
}

// drawSmoothingRej is drawSmoothing by rejection: the part (subjects,
// concepts or free topics) is chosen by u as there; within the concepts or
// the free topics a topic is proposed ∝ α_k·β0/B_k and accepted with
// B_k/(n_k+B_k).
func (wk *worker) drawSmoothingRej(u float64) int32 {
	st := wk.st
	b0 := st.beta0
	if wk.restricted {
		for _, k := range wk.subj {
			t := &wk.tp[k]
			u -= t.alpha * b0 * t.inv
			if u < 0 {
				return k
			}
		}
		if st.F == 0 {
			return wk.subj[len(wk.subj)-1]
		}
	} else if u < wk.sCon || st.F == 0 {
		for {
			wk.fst.SmoothProposals++
			k := wk.aliasC.draw(wk.r)
			if t := &wk.tp[k]; wk.r.Float64() < t.B*t.inv {
				wk.fst.SmoothAccepted++
				return k
			}
		}
	}
	for {
		wk.fst.SmoothProposals++
		k := int32(st.C) + wk.aliasF.draw(wk.r)
		if t := &wk.tp[k]; wk.r.Float64() < t.B*t.inv {
			wk.fst.SmoothAccepted++
			return k
		}
	}
}

// FlatStats counts the draws of the flat path and of rejection smoothing.
type FlatStats struct {
	Tokens          int64 // tokens drawn by the flat path
	WordProposals   int64 // word-part proposals (the token itself included)
	WordAccepted    int64
	SmoothProposals int64 // smoothing proposals
	SmoothAccepted  int64
	WordMajorTokens int64 // tokens drawn by the word-major sweep (wordmajor.go)
	DocProposals    int64 // its doc-part proposals
	DocAccepted     int64
}
