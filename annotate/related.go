package annotate

import (
	"math"
	"slices"

	"termgrove/model"
)

// relatedFloor sets which candidates bestRelated adds to their
// neighbours for its bounds: those with γ·s_j at least relatedFloor·γ·s_n,
// s_n the n-th best candidate's own score. Any value ≥ 0 gives the same
// result, only the work moves: on 500 debtags texts of 150 tokens (Top
// 10) 0.01 adds 103 rows a text and gathers 1,437 row entries, 0.05 37
// and 1,910, 0.2 19 and 2,708 (bench/annotate.md, annot5).
const relatedFloor = 0.05

// boundSlack widens bestRelated's bounds: they are summed in another
// order than the exact boosts, so their last bits may differ.
const boundSlack = 1e-9

// negZero is −0, the boost of a concept no pair has reached (x + −0 = x).
var negZero = math.Copysign(0, -1)

// invertRelated fills inOff, inJ, inL and inSum from the model's related
// rows.
func (a *Annotator) invertRelated() {
	C := a.C
	a.inOff = make([]int32, C+1)
	for _, row := range a.m.Related {
		for _, r := range row {
			a.inOff[r.Concept+1]++
		}
	}
	for k := 0; k < C; k++ {
		a.inOff[k+1] += a.inOff[k]
	}
	a.inJ = make([]int32, a.inOff[C])
	a.inL = make([]float64, a.inOff[C])
	a.inSum = make([]float64, C)
	fill := slices.Clone(a.inOff[:C])
	for j, row := range a.m.Related { // j increasing: each list is sorted
		for _, r := range row {
			i := fill[r.Concept]
			fill[r.Concept]++
			a.inJ[i], a.inL[i] = int32(j), r.Weight
			a.inSum[r.Concept] += r.Weight
		}
	}
}

// setRelC sets st.relC[j] = γ·s_j for the candidates j (0 elsewhere; the
// caller clears them with clearRelC) and marks them with a new
// generation.
func (a *Annotator) setRelC(st *state, cand []int32, score func(int32) float64) {
	if len(st.relC) < a.C {
		st.relC = make([]float64, a.C)
	}
	st.nextGen()
	c, mark, gen := st.relC, st.mark, st.gen
	for _, j := range cand {
		c[j] = relatedWeight * score(j)
		mark[j] = gen
	}
}

// clearRelC puts st.relC back to 0.
func clearRelC(st *state, cand []int32) {
	for _, j := range cand {
		st.relC[j] = 0
	}
}

// boost returns concept k's related boost γ·Σ_j s_j·L_jk over the
// candidates j (c[j] = γ·s_j, 0 for the others), summed in increasing j.
func (a *Annotator) boost(k int32, c []float64) float64 {
	lo, hi := a.inOff[k], a.inOff[k+1]
	return gather(a.inJ[lo:hi], a.inL[lo:hi], c)
}

// gather returns Σ_i c[js[i]]·ls[i], in order, from +0: the non-candidates'
// terms are +0 and leave the sum as it is. A leaf function, so that the
// loop keeps its variables in registers.
//
//go:noinline
func gather(js []int32, ls []float64, c []float64) float64 {
	ls = ls[:len(js)]
	r := 0.0
	for i, j := range js {
		r += c[j] * ls[i]
	}
	return r
}

// addRelated sets st.relS[k] to γ·Σ_j s_j·L_jk for every concept k, the
// sum over the candidates j whose rows hold k (−0 where none does), and
// appends to cand the concepts it reaches that are not candidates, by
// concept. Scores then no longer sum to 1 with Uncovered; they rank.
//
// The rows are added in increasing j, whatever order the candidates
// come in: each boost is then the sum bestRelated gathers for one
// concept alone through the rows turned round, the same bits.
func (a *Annotator) addRelated(st *state, cand []int32, score func(int32) float64) []int32 {
	a.setRelC(st, cand, score)
	C, n := a.C, len(cand)
	relS, all := st.relSList(C)
	c, mark, gen, related := st.relC[:C], st.mark[:C], st.gen, a.m.Related
	m := 0
	for j := range c {
		if mark[j] == gen && len(related[j]) > 0 {
			m = boostRow(related[j], c[j], relS, all, m)
		}
	}
	st.relT = all[:m]
	for k := range relS {
		if !math.Signbit(relS[k]) && mark[k] != gen {
			cand = append(cand, int32(k))
		}
	}
	clearRelC(st, cand[:n])
	return cand
}

// reached reports whether a candidate's row holds concept k (r > 0 says
// so unless every such pair's γ·s_j·L_jk rounded to 0).
func (a *Annotator) reached(k int32, mark []uint32, gen uint32) bool {
	for _, j := range a.inJ[a.inOff[k]:a.inOff[k+1]] {
		if mark[j] == gen {
			return true
		}
	}
	return false
}

// relSList returns st.relS, −0 for every concept, and room for the list
// of the concepts boostRow reaches (st.relT, by which put clears relS).
func (st *state) relSList(C int) (relS []float64, all []int32) {
	if len(st.relS) < C {
		st.relS = make([]float64, C)
		for k := range st.relS {
			st.relS[k] = negZero
		}
	}
	if cap(st.relT) < C+1 {
		st.relT = make([]int32, 0, C+1)
	}
	return st.relS[:C], st.relT[:C+1]
}

// boostRow adds c·L_jk to rel[k] for the pairs of one related row, with
// c = γ·s_j, and lists each k at all[n] the first time (rel[k] still −0:
// its sign bit moves n on, without a branch); it returns n. A leaf
// function of its own, so that the loop keeps its variables in
// registers.
//
//go:noinline
func boostRow(row []model.ConceptWeight, c float64, rel []float64, all []int32, n int) int {
	for _, r := range row {
		k := r.Concept
		v := rel[k]
		all[n] = k
		n += int(math.Float64bits(v) >> 63)
		rel[k] = v + c*r.Weight
	}
	return n
}

// bestRelated is bestConcepts with the related boosts: the n best of the
// candidates and the concepts they reach, not deprecated, scored
// s_k + boost_k as summarise scores them after addRelated — the same
// concepts with the same scores, bit for bit, in the same order — while
// gathering only the boosts of the concepts that can be among them.
//
// The candidates with γ·s_j ≥ τ (the strong ones, τ from relatedFloor)
// are first added to their neighbours; every other candidate adds less
// than τ·L_jk, so concept k's score lies between
//
//	lower_k = s_k + Σ_strong γ·s_j·L_jk   and   upper_k = lower_k + τ·Σ_j L_jk.
//
// Any n concepts in the ranking (candidates and concepts the strong rows
// reach) score at least their lower bounds, so the n-th best score is at
// least the n-th best lower bound L, and a concept whose upper bound is
// below L cannot be among the n best: only the others have their boosts
// gathered. On a debtags record the strong candidates are about one in
// ten, and about 13 of the 643 concepts are gathered.
func (a *Annotator) bestRelated(st *state, cand []int32, n int, norm, rbF float64) []scored {
	best := st.ranked[:0]
	if n <= 0 {
		return best
	}
	C := a.C
	// Every concept's own score, as score(k) in summarise before the boost.
	sc := slices.Grow(st.sc[:0], C)[:C]
	st.sc = sc
	a.ownScores(st, sc, norm, rbF)
	dep := a.dep[:C]
	if len(st.relC) < C {
		st.relC = make([]float64, C)
	}
	st.nextGen()
	c, mark, gen := st.relC[:C], st.mark[:C], st.gen
	// The n best own scores; and the candidates that may be strong: τ
	// from the n best so far is at most the final τ, so every strong
	// candidate passes it.
	top, maybe := st.own[:0], st.maybe[:0]
	tauSoFar := 0.0
	for _, k := range cand {
		s := sc[k]
		c[k], mark[k] = relatedWeight*s, gen // as setRelC
		if c[k] >= tauSoFar {
			maybe = append(maybe, k)
		}
		// Most candidates fall below the n-th at once: no call for them.
		if x := (scored{k, s}); !dep[k] && (len(top) < n || x.better(top[n-1])) {
			top = insertBest(top, x, n)
			if len(top) == n {
				tauSoFar = relatedFloor * relatedWeight * top[n-1].v
			}
		}
	}
	st.own, st.maybe = top, maybe
	tau := 0.0
	if len(top) == n {
		tau = relatedFloor * relatedWeight * top[n-1].v
	}

	// The strong candidates' rows, in any order: for the bounds only.
	relS, all := st.relSList(C)
	m := 0
	related := a.m.Related
	for _, j := range maybe {
		if row := related[j]; len(row) > 0 && c[j] >= tau {
			m = boostRow(row, c[j], relS, all, m)
		}
	}
	st.relT = all[:m]

	// L: the n-th best lower bound of the concepts in the ranking. Those
	// the strong rows reach, and the n best candidates by own score they
	// do not: every other candidate's bound, its own score, is at most
	// those n candidates'.
	low := st.low[:0]
	for _, k := range st.relT {
		if !dep[k] {
			low = insertLow(low, sc[k]+relS[k], n)
		}
	}
	for _, x := range top {
		if math.Signbit(relS[x.k]) {
			low = insertLow(low, x.v, n)
		}
	}
	st.low = low
	cut := math.Inf(-1)
	if len(low) == n {
		cut = low[n-1] * (1 - boundSlack)
	}

	// The exact boosts of the concepts whose upper bound reaches L.
	inSum := a.inSum[:C]
	for k, s := range sc {
		// relS[k] is −0 where no strong row reached k: s + −0 = s.
		if (s+relS[k]+tau*inSum[k])*(1+boundSlack) < cut || dep[k] {
			continue
		}
		r := a.boost(int32(k), c)
		if !(r > 0) && mark[k] != gen && !a.reached(int32(k), mark, gen) {
			continue // neither a candidate nor reached: not ranked
		}
		best = insertBest(best, scored{int32(k), s + r}, n)
	}
	clearRelC(st, cand)
	st.ranked = best
	return best
}

// ownScores sets sc[k] to concept k's score before the related boost,
// (θ part + α'_k)·norm, as summarise's score(k) computes it.
func (a *Annotator) ownScores(st *state, sc []float64, norm, rbF float64) {
	n := len(sc)
	th, alpha, phi0, ext := st.th[:n], a.alpha[:n], a.phi0[:n], st.ext[:n]
	if st.allow {
		for k := range sc {
			sc[k] = (th[k] + alpha[k]*phi0[k]*rbF + ext[k]) * norm
		}
		return
	}
	for k := range sc {
		ap := alpha[k] + ext[k]
		sc[k] = (th[k] + alpha[k]*phi0[k]*rbF + ap) * norm
	}
}

// insertBest adds x to best, kept sorted best first and at most n long.
func insertBest(best []scored, x scored, n int) []scored {
	if len(best) == n {
		if !x.better(best[n-1]) {
			return best
		}
		best = best[:n-1]
	}
	i := len(best)
	best = append(best, x)
	for i > 0 && x.better(best[i-1]) {
		best[i] = best[i-1]
		i--
	}
	best[i] = x
	return best
}

// insertLow adds v to low, kept in decreasing order and at most n long.
func insertLow(low []float64, v float64, n int) []float64 {
	if len(low) == n {
		if !(v > low[n-1]) {
			return low
		}
		low = low[:n-1]
	}
	i := len(low)
	low = append(low, v)
	for i > 0 && v > low[i-1] {
		low[i] = low[i-1]
		i--
	}
	low[i] = v
	return low
}
