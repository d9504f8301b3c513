package fit

import (
	"slices"
	"sync"
	"time"
	"unsafe"
)

// change is one token that moved from topic old to topic new in a sweep,
// replayed on the shared counts by the AD-LDA merge.
type change struct{ w, old, new int32 }

// topic is a worker's per-topic data, one cache line per topic, so that a
// token touching a topic at large K misses the cache once, not once per
// array. The record fields (ndk, dpos, allowed) are reset after each
// record; alpha and B are copies of the state's for the sweep.
type topic struct {
	inv     float64 // 1/(n_k + B_k)
	coef    float64 // (α_k + n_dk)/(n_k + B_k)
	alpha   float64 // α_k
	B       float64 // B_k
	ndk     int32   // n_dk of the current record
	dpos    int32   // position of k in dtopics, valid when ndk > 0
	allowed bool    // allowed in the current record (free topics always)
	_       [23]byte
}

// worker samples a shard of records. With several workers it owns copies of
// n_k and n_kw taken after the last merge; alone it samples on the shared
// counts directly.
type worker struct {
	_     [64]byte // the hot fields below share no cache line with other data
	st    *state
	r     *rng
	local bool // counts are a private copy; mark (or log) changes

	nk []int32
	wt [][]tc

	tp      []topic // K: what a token reads and writes of each topic
	dtopics []int32 // topics with n_dk > 0 in the current record

	sCon  float64  // Σ_k α_k β0/(n_k+B_k) over concept topics
	sFree float64  // the same over free topics
	fenC  *fenwick // the same terms, per concept topic
	fenF  *fenwick // per free topic (index k−C)
	sSubj float64  // the same over the current record's subjects
	rsum  float64  // Σ_{k in record} n_dk β0/(n_k+B_k)

	restricted bool
	subj       []int32

	qbuf []float64 // word bucket terms, parallel to wt[w]
	pbuf []float64 // prior bucket terms, parallel to the prior list of w

	oldPos int // index in wt[w] of the unassigned token's topic (see wordBucket)
	newPos int // index in wt[w] of the drawn topic, or −1

	changes [][]change // mh sampler: moves, per merge partition (word mod workers)
	dirty   []bool     // W, sparse sampler: the word's list changed since the merge

	mh *mhState // tables of the MH sampler (mh.go); nil until used

	// Flat path (flat.go), chosen per sweep by flatPrepare.
	flat      bool       // word bucket split: record topics exact, the rest by rejection
	smoothRej bool       // smoothing bucket by rejection; Fenwick trees not kept
	cmax      float64    // max_k α_k/B_k: the word envelope's rate
	dbits     []uint64   // K bits: the record's topics (kept with flat only)
	match     []int32    // list indices of the word's entries the record holds
	mbuf      []float64  // their terms n_dk·n_kw/(n_k+B_k)
	aliasC    aliasTable // smoothing proposals over the concepts
	aliasF    aliasTable // and over the free topics
	fst       FlatStats  // counts of the flat path's draws

	// Word-major sweep (wordmajor.go), chosen per sweep by flatPrepare.
	wm     *wmIndex // nil: record-major sweep
	qword  float64  // Σ_k α_k·n_kw/(n_k+B_k) of the word being swept
	wmList []tc     // scratch for the word's list
	_      [64]byte
}

func newWorker(st *state, r *rng, local bool) *worker {
	K := st.K
	maxP := int32(0)
	for w := 0; w < st.W; w++ {
		maxP = max(maxP, st.pStart[w+1]-st.pStart[w])
	}
	wk := &worker{
		st:      st,
		r:       r,
		local:   local,
		tp:      make([]topic, K),
		dtopics: make([]int32, 0, K), // never reallocated, never shared
		qbuf:    make([]float64, K),
		pbuf:    make([]float64, maxP),
	}
	for k := st.C; k < K; k++ {
		wk.tp[k].allowed = true
	}
	wk.fenC = newFenwick(st.C)
	wk.fenF = newFenwick(st.F)
	return wk
}

func (wk *worker) attachGlobal() { wk.nk, wk.wt = wk.st.nk, wk.st.wt }

func (wk *worker) attachLocal() {
	wk.nk = make([]int32, wk.st.K)
	wk.wt = make([][]tc, wk.st.W)
	wk.syncFromGlobal(0, 1)
}

// syncFromGlobal copies the shared counts of words w ≡ part (mod parts).
func (wk *worker) syncFromGlobal(part, parts int) {
	st := wk.st
	if part == 0 {
		copy(wk.nk, st.nk)
	}
	for w := part; w < st.W; w += parts {
		setList(&wk.wt[w], st.wt[w])
	}
}

// refresh recomputes the cached sums from n_k and α.
func (wk *worker) refresh() {
	st := wk.st
	wk.sCon, wk.sFree = 0, 0
	for k := 0; k < st.K; k++ {
		tk := &wk.tp[k]
		tk.alpha, tk.B = st.alpha[k], st.B[k]
		inv := 1 / (float64(wk.nk[k]) + tk.B)
		tk.inv = inv
		tk.coef = tk.alpha * inv
		t := tk.alpha * st.beta0 * inv
		if k >= st.C {
			wk.sFree += t
		} else {
			wk.sCon += t
		}
	}
	wk.flatPrepare()
	if wk.smoothRej {
		return
	}
	smooth := func(k int) float64 { return st.alpha[k] * st.beta0 * wk.tp[k].inv }
	wk.fenC.build(smooth)
	wk.fenF.build(func(i int) float64 { return smooth(st.C + i) })
}

// begin loads the counts of record d (its tokens already assigned).
func (wk *worker) begin(d *sdoc, assigned bool) {
	st := wk.st
	wk.rsum = 0
	if assigned {
		for i := d.start; i < d.end; i++ {
			k := st.z[i]
			if k < 0 { // not assigned yet (initAssign)
				continue
			}
			t := &wk.tp[k]
			if t.ndk == 0 {
				t.dpos = int32(len(wk.dtopics))
				wk.dtopics = append(wk.dtopics, k)
				if wk.flat {
					wk.dbitSet(k)
				}
			}
			t.ndk++
		}
		for _, k := range wk.dtopics {
			t := &wk.tp[k]
			t.coef = (t.alpha + float64(t.ndk)) * t.inv
			wk.rsum += float64(t.ndk) * st.beta0 * t.inv
		}
	}
	wk.restricted = d.subjects != nil
	wk.subj = d.subjects
	wk.sSubj = 0
	if wk.restricted {
		for _, k := range d.subjects {
			t := &wk.tp[k]
			t.allowed = true
			wk.sSubj += t.alpha * st.beta0 * t.inv
		}
	}
}

// end clears the record scratch.
func (wk *worker) end() {
	for _, k := range wk.dtopics {
		t := &wk.tp[k]
		t.ndk = 0
		t.coef = t.alpha * t.inv
		if wk.flat {
			wk.dbitClear(k)
		}
	}
	wk.dtopics = wk.dtopics[:0]
	if wk.restricted {
		for _, k := range wk.subj {
			wk.tp[k].allowed = false
		}
	}
	wk.restricted, wk.subj = false, nil
}

// doc runs one Gibbs pass over record d; with first, its tokens have no
// topic yet and are added one by one.
func (wk *worker) doc(d *sdoc, first bool) {
	st := wk.st
	wk.begin(d, !first)
	prior := len(st.pTopic) > 0
	for i := d.start; i < d.end; i++ {
		w := st.words[i]
		old := st.z[i]
		// Prefetch the word lists of tokens ahead (the list header four
		// tokens ahead, its entries two ahead, up to eight cache lines of
		// them): at large K the sampler waits mostly on these cache misses.
		if i+4 < d.end {
			prefetch(unsafe.Pointer(&wk.wt[st.words[i+4]]))
		}
		if i+2 < d.end {
			w2 := st.words[i+2]
			if nl := wk.wt[w2]; len(nl) > 0 {
				p := unsafe.Pointer(unsafe.SliceData(nl))
				prefetch(p)
				for off := 64; off < 512 && off < 8*len(nl); off += 64 {
					prefetch(unsafe.Add(p, off))
				}
			}
			if prior {
				prefetch(unsafe.Pointer(&st.pStart[w2]))
			}
			if wk.flat {
				prefetch(unsafe.Pointer(&st.occStart[w2]))
			}
		}
		if first {
			k := wk.draw(w, -1)
			wk.add(w, k)
			st.z[i] = k
			continue
		}
		// The old topic leaves the counts but stays in the word's list until
		// the new one is known (draw reads its count there less one): the
		// list is searched once, and not changed at all when the token keeps
		// its topic.
		wk.unassign(w, old)
		var k int32
		if wk.flat && wk.flatUse(w) {
			k = wk.drawFlat(w, old, i)
		} else {
			k = wk.draw(w, old)
		}
		wk.reassign(w, old, k)
		st.z[i] = k
		if wk.local && k != old {
			if wk.dirty != nil {
				wk.dirty[w] = true // for the merge
			} else { // the mh sampler's merge replays the moves
				p := int(w) % len(wk.changes)
				wk.changes[p] = append(wk.changes[p], change{w, old, k})
			}
		}
	}
	wk.end()
}

// moveSmoothing adds ds to topic k's smoothing mass α_k·β0/(n_k+B_k): to
// the free or concept total, and to its Fenwick tree unless the smoothing
// bucket is drawn by rejection.
func (wk *worker) moveSmoothing(k int32, ds float64) {
	if c := wk.st.C; int(k) >= c {
		wk.sFree += ds
		if !wk.smoothRej {
			wk.fenF.add(int(k)-c, ds)
		}
	} else {
		wk.sCon += ds
		if !wk.smoothRej {
			wk.fenC.add(int(k), ds)
		}
	}
}

// update moves topic k's cached terms from before to after a count change.
func (wk *worker) update(k int32, ndBefore int32) {
	st := wk.st
	t := &wk.tp[k]
	invOld := t.inv
	inv := 1 / (float64(wk.nk[k]) + t.B)
	t.inv = inv
	a := t.alpha
	ds := a * st.beta0 * (inv - invOld)
	wk.moveSmoothing(k, ds)
	if wk.restricted && int(k) < st.C {
		wk.sSubj += ds
	}
	nd := t.ndk
	wk.rsum += st.beta0 * (float64(nd)*inv - float64(ndBefore)*invOld)
	t.coef = (a + float64(nd)) * inv
}

// remove takes a token of word w off topic k.
func (wk *worker) remove(w, k int32) {
	wk.unassign(w, k)
	decList(&wk.wt[w], k)
}

// unassign takes a token of word w off topic k in every count but the word
// list (n_k, n_dk and the cached sums).
func (wk *worker) unassign(w, k int32) {
	t := &wk.tp[k]
	nd := t.ndk
	t.ndk = nd - 1
	wk.nk[k]--
	if nd == 1 { // drop k from the record's topic list
		p := t.dpos
		last := wk.dtopics[len(wk.dtopics)-1]
		wk.dtopics[p] = last
		wk.tp[last].dpos = p
		wk.dtopics = wk.dtopics[:len(wk.dtopics)-1]
		if wk.flat {
			wk.dbitClear(k)
		}
	}
	wk.update(k, nd)
}

// reassign finishes moving a token of word w from topic old (unassigned,
// still in the word list, found there by draw at wk.oldPos) to topic k
// (found there at wk.newPos, if drawn from the word bucket).
func (wk *worker) reassign(w, old, k int32) {
	if k == old {
		wk.assign(k)
		return
	}
	j := decListAt(&wk.wt[w], wk.oldPos)
	p := wk.newPos
	if p > wk.oldPos && p <= j {
		p--
	}
	wk.assign(k)
	incListAt(&wk.wt[w], k, p)
}

// add puts a token of word w on topic k.
func (wk *worker) add(w, k int32) {
	wk.assign(k)
	incList(&wk.wt[w], k)
}

// assign puts a token on topic k in n_k, n_dk and the cached sums.
func (wk *worker) assign(k int32) {
	t := &wk.tp[k]
	nd := t.ndk
	if nd == 0 {
		t.dpos = int32(len(wk.dtopics))
		wk.dtopics = append(wk.dtopics, k)
		if wk.flat {
			wk.dbitSet(k)
		}
	}
	t.ndk = nd + 1
	wk.nk[k]++
	wk.update(k, nd)
}

// wordBucket fills qbuf with the word bucket terms (α_k+n_dk)·n_kw/(n_k+B_k)
// of w's list (0 at disallowed topics) and returns their total. Topic old
// (−1: none) is the unassigned token's: its list count is one too high
// (the list is changed once the new topic is known), and its index is kept
// in oldPos.
func (wk *worker) wordBucket(w, old int32) float64 {
	list := wk.wt[w]
	qb := wk.qbuf[:len(list)]
	tp := wk.tp
	q := 0.0
	if !wk.restricted {
		for i, e := range list {
			n := e.n
			if e.k == old {
				n--
				wk.oldPos = i
			}
			v := tp[e.k].coef * float64(n)
			qb[i] = v
			q += v
		}
		return q
	}
	for i, e := range list {
		n := e.n
		if e.k == old {
			n--
			wk.oldPos = i
		}
		v := 0.0
		if t := &tp[e.k]; t.allowed {
			v = t.coef * float64(n)
		}
		qb[i] = v
		q += v
	}
	return q
}

// priorBucket fills pbuf with the prior terms of w and returns their total.
func (wk *worker) priorBucket(w int32) float64 {
	st := wk.st
	lo, hi := st.pStart[w], st.pStart[w+1]
	if lo == hi {
		return 0
	}
	pt := st.pTopic[lo:hi]
	pm := st.pMass[lo:hi]
	pb := wk.pbuf[:len(pt)]
	tp := wk.tp
	q := 0.0
	if !wk.restricted {
		for j, k := range pt {
			v := tp[k].coef * pm[j]
			pb[j] = v
			q += v
		}
		return q
	}
	for j, k := range pt {
		v := 0.0
		if t := &tp[k]; t.allowed {
			v = t.coef * pm[j]
		}
		pb[j] = v
		q += v
	}
	return q
}

// smoothTotal is the smoothing bucket's total over the allowed topics.
func (wk *worker) smoothTotal() float64 {
	if wk.restricted {
		return wk.sFree + wk.sSubj
	}
	return wk.sCon + wk.sFree
}

// draw samples a topic for one token of word w from the conditional, the
// token unassigned; old is its former topic while still in w's list (see
// wordBucket), else −1.
func (wk *worker) draw(w, old int32) int32 {
	wk.newPos = -1
	qw := wk.wordBucket(w, old)
	qp := 0.0
	if len(wk.st.pTopic) > 0 { // else not even the index is read
		qp = wk.priorBucket(w)
	}
	r, s := wk.rsum, wk.smoothTotal()
	u := wk.r.Float64() * (qw + qp + r + s)
	if u < qw {
		list := wk.wt[w]
		last := -1
		for i, v := range wk.qbuf[:len(list)] {
			if v > 0 {
				last = i
				u -= v
				if u < 0 {
					break
				}
			}
		}
		if last >= 0 {
			wk.newPos = last
			return list[last].k
		}
	}
	return wk.pickOther(w, u-qw, qp, r)
}

// pickPrior returns the topic at offset u of word w's prior bucket, whose
// per-term masses are in pbuf; when rounding leaves u past the end, the
// last term with mass, and -1 when no term has any.
func (wk *worker) pickPrior(w int32, u float64) int32 {
	st := wk.st
	pt := st.pTopic[st.pStart[w]:st.pStart[w+1]]
	last := int32(-1)
	for j, v := range wk.pbuf[:len(pt)] {
		if v > 0 {
			last = pt[j]
			if u -= v; u < 0 {
				break
			}
		}
	}
	return last
}

// pickOther returns the topic at offset u of the prior, document and
// smoothing buckets, in that order.
func (wk *worker) pickOther(w int32, u, qp, r float64) int32 {
	st := wk.st
	if u < qp {
		if k := wk.pickPrior(w, u); k >= 0 {
			return k
		}
	}
	u -= qp
	if u < r && len(wk.dtopics) > 0 {
		b0 := st.beta0
		for _, k := range wk.dtopics {
			u -= float64(wk.tp[k].ndk) * b0 * wk.tp[k].inv
			if u < 0 {
				return k
			}
		}
		return wk.dtopics[len(wk.dtopics)-1]
	}
	u -= r
	return wk.drawSmoothing(u)
}

// drawSmoothing draws from α_k β0/(n_k+B_k) over the allowed topics: the
// few subjects of a restricted record by a walk, the rest with the trees.
func (wk *worker) drawSmoothing(u float64) int32 {
	if wk.smoothRej {
		return wk.drawSmoothingRej(u)
	}
	st := wk.st
	b0 := st.beta0
	if wk.restricted {
		for _, k := range wk.subj {
			u -= st.alpha[k] * b0 * wk.tp[k].inv
			if u < 0 {
				return k
			}
		}
		if st.F > 0 {
			return int32(st.C + wk.fenF.find(u))
		}
		return wk.subj[len(wk.subj)-1]
	}
	if u < wk.sCon || st.F == 0 {
		return int32(wk.fenC.find(u))
	}
	return int32(st.C + wk.fenF.find(u-wk.sCon))
}

// sweep runs one Gibbs sweep over all training records.
func (st *state) sweepOnce() {
	if len(st.workers) == 1 {
		wk := st.workers[0]
		wk.refresh()
		if wk.wm != nil {
			// Records with subjects record by record, then the others
			// word by word: a fixed scan order (wordmajor.go).
			for i := range st.docs {
				if d := &st.docs[i]; d.subjects != nil {
					wk.doc(d, false)
				}
			}
			wk.wordMajor()
			return
		}
	}
	if st.wm != nil {
		st.wm.zwOK = false // z changes outside the word-major sweep
	}
	if len(st.workers) == 1 {
		st.workers[0].shard(0, len(st.docs))
		return
	}
	if st.opt.useMH(st.K) {
		st.sweepReplay()
		return
	}
	st.sweepMerge()
}

// sweepMerge is an AD-LDA sweep of the sparse sampler (Newman et al. 2009):
// every worker samples its shard on its own copy of the counts, marking the
// words whose list it changed; once all are done (a barrier), each merges a
// range of topics of n_k and a range of words into the shared counts and
// hands the merged lists to every worker (mergePart). All on the same
// goroutines, so the merge runs on every core.
func (st *state) sweepMerge() {
	P := len(st.workers)
	st.mergeSetup()
	var sampled, done sync.WaitGroup
	sampled.Add(P)
	done.Add(P)
	t0 := time.Now()
	ends := st.phaseEnds[:2*P]
	for wi, wk := range st.workers {
		go func(wi int, wk *worker, sh [2]int) {
			defer done.Done()
			wk.refresh()
			wk.shard(sh[0], sh[1])
			ends[wi] = time.Since(t0)
			sampled.Done()
			sampled.Wait()
			st.mergePart(wi, &st.mscratch[wi])
			ends[P+wi] = time.Since(t0)
		}(wi, wk, st.shards[wi])
	}
	done.Wait()
	st.phase.add(ends, time.Since(t0))
}

// sweepReplay is an AD-LDA sweep of the mh sampler, whose workers keep their
// word counts in their own tables and log every move: the merge replays the
// logs on the shared lists, then copies them to every worker.
func (st *state) sweepReplay() {
	st.zSnap = append(st.zSnap[:0], st.z...) // the topics of the workers' shared view
	st.mhIndex()
	var wg sync.WaitGroup
	for wi, wk := range st.workers {
		wg.Add(1)
		go func(wk *worker, sh [2]int) {
			defer wg.Done()
			for p := range wk.changes {
				wk.changes[p] = wk.changes[p][:0]
			}
			wk.refresh()
			wk.shard(sh[0], sh[1])
		}(wk, st.shards[wi])
	}
	wg.Wait()
	st.mergeNK()
	P := len(st.workers)
	for p := 0; p < P; p++ {
		wg.Add(1)
		go func(p int) {
			defer wg.Done()
			for _, wk := range st.workers {
				cs := wk.changes[p]
				for i, c := range cs {
					if i+4 < len(cs) {
						prefetch(unsafe.Pointer(&st.wt[cs[i+4].w]))
					}
					if i+2 < len(cs) {
						if l := st.wt[cs[i+2].w]; cap(l) > 0 {
							prefetch(unsafe.Pointer(unsafe.SliceData(l)))
						}
					}
					moveList(&st.wt[c.w], c.old, c.new)
				}
			}
		}(p)
	}
	wg.Wait()
	for p := 0; p < P; p++ {
		wg.Add(1)
		go func(p int) {
			defer wg.Done()
			for _, wk := range st.workers {
				wk.syncFromGlobal(p, P)
			}
		}(p)
	}
	wg.Wait()
}

// mergeNK sets n_k to shared + Σ_workers (worker − shared) and copies it to
// every worker.
func (st *state) mergeNK() {
	for k := range st.nk {
		s := st.nk[k]
		n := s
		for _, wk := range st.workers {
			n += wk.nk[k] - s
		}
		st.nk[k] = n
	}
	for _, wk := range st.workers {
		copy(wk.nk, st.nk)
	}
}

// Phases holds the wall time of the multi-worker sweeps' phases (sparse
// sampler), summed over sweeps: each worker's sampling, the time workers
// waited at the barrier for the last one (summed over workers), and the
// merge (from the barrier to the last worker's end).
type Phases struct {
	Sweeps int
	Sample []float64 // per worker
	Wait   float64
	Merge  float64
}

// add records one sweep: ends holds each worker's end of sampling, then
// each worker's end of merging, as times since the sweep's start.
func (ph *Phases) add(ends []time.Duration, total time.Duration) {
	P := len(ends) / 2
	last := time.Duration(0)
	for _, e := range ends[:P] {
		last = max(last, e)
	}
	if len(ph.Sample) != P {
		ph.Sample = make([]float64, P)
	}
	for wi, e := range ends[:P] {
		ph.Sample[wi] += e.Seconds()
		ph.Wait += (last - e).Seconds()
	}
	ph.Merge += (total - last).Seconds()
	ph.Sweeps++
}

// shard samples records [lo, hi) with the sampler Options.Sampler selects.
func (wk *worker) shard(lo, hi int) {
	st := wk.st
	if st.opt.useMH(st.K) {
		wk.mhShard(lo, hi)
		return
	}
	for i := lo; i < hi; i++ {
		wk.doc(&st.docs[i], false)
	}
}

// mergeScratch is the reusable state of one merge partition.
type mergeScratch struct {
	inK []bool  // K: topic already in ks
	cnt []int32 // K: merged count
	ks  []int32
	buf []tc
}

// mergeSetup sizes the merge's scratch and splits the words into one range
// per worker holding about equal numbers of tokens (the merge's work per
// word grows with its list; ranges, unlike interleaved words, keep the
// workers' writes to the list headers on separate cache lines).
func (st *state) mergeSetup() {
	P := len(st.workers)
	if len(st.mscratch) == P {
		return
	}
	st.mscratch = make([]mergeScratch, P)
	for p := range st.mscratch {
		st.mscratch[p] = mergeScratch{inK: make([]bool, st.K), cnt: make([]int32, st.K)}
	}
	st.phaseEnds = make([]time.Duration, 2*P)
	perWord := make([]int64, st.W)
	for _, w := range st.words {
		perWord[w]++
	}
	st.wparts = make([]int, P+1)
	total, acc, p := int64(len(st.words)), int64(0), 1
	for w := 0; w < st.W && p < P; w++ {
		acc += perWord[w]
		for p < P && acc >= total*int64(p)/int64(P) {
			st.wparts[p] = w + 1
			p++
		}
	}
	for ; p <= P; p++ {
		st.wparts[p] = st.W
	}
}

// mergePart merges part p of every worker's counts into the shared ones
// (AD-LDA): n_k of topics [pK/P, (p+1)K/P), and the lists of words
// [wparts[p], wparts[p+1]) that some worker changed in the sweep. Each
// becomes shared + Σ_workers (worker − shared) and is copied to every
// worker. A word no worker changed is the same everywhere already; a word
// only one worker changed takes that worker's list.
func (st *state) mergePart(p int, ms *mergeScratch) {
	P := len(st.workers)
	for k := p * st.K / P; k < (p+1)*st.K/P; k++ {
		s := st.nk[k]
		n := s
		for _, wk := range st.workers {
			n += wk.nk[k] - s
		}
		st.nk[k] = n
		for _, wk := range st.workers {
			wk.nk[k] = n
		}
	}
	lo, hi := st.wparts[p], st.wparts[p+1]
	for w := lo; w < hi; w++ {
		// The lists of a word three ahead, the shared one first: it was
		// last touched a sweep ago and is the likeliest cache miss.
		if a := w + 3; a < hi {
			if l := st.wt[a]; len(l) > 0 {
				prefetch(unsafe.Pointer(unsafe.SliceData(l)))
			}
			for _, wk := range st.workers {
				if l := wk.wt[a]; len(l) > 0 && wk.dirty[a] {
					prefetch(unsafe.Pointer(unsafe.SliceData(l)))
				}
			}
		}
		changed, by := 0, -1
		for i, wk := range st.workers {
			if wk.dirty[w] {
				wk.dirty[w] = false
				changed++
				by = i
			}
		}
		switch changed {
		case 0:
			continue
		case 1:
			l := st.workers[by].wt[w]
			setList(&st.wt[w], l)
			for i, wk := range st.workers {
				if i != by {
					setList(&wk.wt[w], l)
				}
			}
		default:
			st.mergeWord(int32(w), ms)
		}
	}
}

// mergeWord sets word w's shared list to shared + Σ_workers (worker −
// shared), sorted into the order of before (so the result is the one
// replaying the changes one by one would give), and copies it to every
// worker.
func (st *state) mergeWord(w int32, ms *mergeScratch) {
	P := int32(len(st.workers))
	ks := ms.ks[:0]
	for _, e := range st.wt[w] {
		ms.cnt[e.k] -= (P - 1) * e.n
		if !ms.inK[e.k] {
			ms.inK[e.k] = true
			ks = append(ks, e.k)
		}
	}
	for _, wk := range st.workers {
		for _, e := range wk.wt[w] {
			ms.cnt[e.k] += e.n
			if !ms.inK[e.k] {
				ms.inK[e.k] = true
				ks = append(ks, e.k)
			}
		}
	}
	buf := ms.buf[:0]
	for _, k := range ks {
		n := ms.cnt[k]
		if n < 0 {
			panic("fit: internal error: negative word-topic count after merge")
		}
		if n > 0 {
			buf = append(buf, tc{k, n})
		}
		ms.cnt[k] = 0
		ms.inK[k] = false
	}
	sortList(buf)
	ms.ks, ms.buf = ks, buf
	setList(&st.wt[w], buf)
	for _, wk := range st.workers {
		setList(&wk.wt[w], buf)
	}
}

// sortList sorts a word list into the order of before. A merged list starts
// out nearly in order (the shared list's order, a few counts moved, new
// topics at the end): insertion sort, unless it is long.
func sortList(l []tc) {
	if len(l) > 48 {
		slices.SortFunc(l, func(a, b tc) int {
			if before(a, b) {
				return -1
			}
			return 1
		})
		return
	}
	for i := 1; i < len(l); i++ {
		e := l[i]
		j := i
		for j > 0 && before(e, l[j-1]) {
			l[j] = l[j-1]
			j--
		}
		l[j] = e
	}
}

// setList copies a word list into *l. A new backing array holds a multiple
// of eight entries: 64-byte multiples, which the allocator lays on cache
// lines of their own, so that the copies of one word's list the merge
// allocates side by side for every worker share no line (each worker
// writes its own for every changed token).
func setList(l *[]tc, src []tc) {
	if cap(*l) < len(src) {
		*l = make([]tc, len(src), (len(src)+8)&^7)
	} else {
		*l = (*l)[:len(src)]
	}
	copy(*l, src)
}
