package fit

import (
	"math"
	"sort"
	"sync"

	"termgrove/model"
)

// Phi is a fitted topic–word distribution φ.
type Phi interface {
	Topics() int
	// Column sets dst[k] = φ_kw for every topic k; len(dst) = Topics().
	Column(w int32, dst []float64)
}

// DensePhi is φ as a row-major Topics×Words matrix: P[k*Words+w] = φ_kw.
type DensePhi struct {
	NumTopics, Words int
	P                []float64
}

// Topics is K.
func (d *DensePhi) Topics() int { return d.NumTopics }

// Column copies φ_·w.
func (d *DensePhi) Column(w int32, dst []float64) {
	for k := 0; k < d.NumTopics; k++ {
		dst[k] = d.P[k*d.Words+int(w)]
	}
}

// modelPhi is φ_kw = (n_kw + β0 + λπ_kw)/(n_k + B_k) over word-major lists.
type modelPhi struct {
	K      int
	beta0  float64
	invD   []float64 // 1/(n_k+B_k)
	start  []int32   // word w's entries are top[start[w]:start[w+1]]
	top    []int32
	extra  []float64 // n_kw + λπ_kw for those entries
	nwords int
}

func (p *modelPhi) Topics() int { return p.K }

func (p *modelPhi) Column(w int32, dst []float64) {
	for k := range dst[:p.K] {
		dst[k] = p.beta0 * p.invD[k]
	}
	if int(w) >= p.nwords {
		return
	}
	for j := p.start[w]; j < p.start[w+1]; j++ {
		k := p.top[j]
		dst[k] += p.extra[j] * p.invD[k]
	}
}

// ModelPhi returns the posterior-mean φ of a fitted model,
// φ_kw = (n_kw + β0 + λπ_kw) / (n_k + B_k).
func ModelPhi(m *model.Model) Phi {
	K := m.K()
	W := len(m.Words)
	for k := range m.Counts {
		for _, e := range m.Counts[k] {
			W = max(W, int(e.Word)+1)
		}
	}
	for k := range m.Prior {
		for _, e := range m.Prior[k] {
			W = max(W, int(e.Word)+1)
		}
	}
	type kv struct {
		k int32
		v float64
	}
	byWord := make([][]kv, W)
	B := make([]float64, K)
	for k := 0; k < K; k++ {
		B[k] = float64(W) * m.Beta0
	}
	for k := range m.Prior {
		for _, e := range m.Prior[k] {
			byWord[e.Word] = append(byWord[e.Word], kv{int32(k), m.Lambda * e.Weight})
			B[k] += m.Lambda * e.Weight
		}
	}
	for k := range m.Counts {
		for _, e := range m.Counts[k] {
			byWord[e.Word] = append(byWord[e.Word], kv{int32(k), float64(e.Count)})
		}
	}
	p := &modelPhi{K: K, beta0: m.Beta0, invD: make([]float64, K), start: make([]int32, W+1), nwords: W}
	for k := 0; k < K; k++ {
		var nk float64
		if k < len(m.Totals) {
			nk = float64(m.Totals[k])
		}
		p.invD[k] = 1 / (nk + B[k])
	}
	for w, l := range byWord {
		for _, e := range l {
			p.top = append(p.top, e.k)
			p.extra = append(p.extra, e.v)
		}
		p.start[w+1] = int32(len(p.top))
	}
	return p
}

// LROptions configure LeftToRight.
type LROptions struct {
	Particles int    // R (default 10)
	Seed      uint64 // the same seed gives the same estimate
	Workers   int    // records scored in parallel (default 1)
}

// LeftToRight estimates Σ_d log p(w_d | φ, α) of records under a fixed φ
// and α with the left-to-right particle algorithm of Wallach, Murray,
// Salakhutdinov & Mimno (2009, "Evaluation methods for topic models",
// Algorithm 3), and returns it with the number of tokens scored. Each record
// draws from its own random stream, so the result does not depend on
// Workers. Word ids must be valid for phi.
func LeftToRight(phi Phi, alpha []float64, docs [][]int32, opt LROptions) (logLik float64, tokens int64) {
	if opt.Particles <= 0 {
		opt.Particles = 10
	}
	if opt.Workers <= 0 {
		opt.Workers = 1
	}
	res := make([]float64, len(docs))
	var wg sync.WaitGroup
	next := make(chan int)
	for w := 0; w < opt.Workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			lr := newLR(phi, alpha, opt.Particles)
			for i := range next {
				r := newRNG(int64(opt.Seed), uint64(i)+1<<40)
				res[i] = lr.doc(docs[i], r)
			}
		}()
	}
	for i := range docs {
		next <- i
	}
	close(next)
	wg.Wait()
	for i, v := range res {
		logLik += v
		tokens += int64(len(docs[i]))
	}
	return logLik, tokens
}

// lrScratch is the reusable state of one left-to-right scorer.
type lrScratch struct {
	phi    Phi
	alpha  []float64
	a0     float64
	R      int
	K      int
	cols   [][]float64 // per distinct word of the record: φ_·w
	cums   [][]float64 // cumulative α_k φ_kw
	index  map[int32]int
	nk     [][]int32 // per particle: counts
	nz     [][]int32 // per particle: topics with counts
	pos    [][]int32
	z      [][]int32 // per particle: assignments
	weight []float64
}

func newLR(phi Phi, alpha []float64, R int) *lrScratch {
	K := phi.Topics()
	s := &lrScratch{phi: phi, alpha: alpha, R: R, K: K, index: map[int32]int{}}
	for _, a := range alpha {
		s.a0 += a
	}
	s.nk = make([][]int32, R)
	s.nz = make([][]int32, R)
	s.pos = make([][]int32, R)
	s.z = make([][]int32, R)
	for r := 0; r < R; r++ {
		s.nk[r] = make([]int32, K)
		s.pos[r] = make([]int32, K)
	}
	return s
}

func (s *lrScratch) doc(words []int32, rg *rng) float64 {
	K := s.K
	clear(s.index)
	ids := make([]int, len(words))
	for i, w := range words {
		j, ok := s.index[w]
		if !ok {
			j = len(s.index)
			s.index[w] = j
			if j == len(s.cols) {
				s.cols = append(s.cols, make([]float64, K))
				s.cums = append(s.cums, make([]float64, K))
			}
			col := s.cols[j]
			s.phi.Column(w, col)
			cum := s.cums[j]
			var t float64
			for k, v := range col {
				t += s.alpha[k] * v
				cum[k] = t
			}
		}
		ids[i] = j
	}
	for r := 0; r < s.R; r++ {
		s.z[r] = s.z[r][:0]
	}
	// sample draws a topic for word slot j of particle r given its counts.
	sample := func(r, j int) int32 {
		col, cum := s.cols[j], s.cums[j]
		aw := cum[K-1]
		var m float64
		for _, k := range s.nz[r] {
			m += float64(s.nk[r][k]) * col[k]
		}
		u := rg.Float64() * (aw + m)
		if u < aw {
			k := sort.Search(K, func(i int) bool { return cum[i] > u })
			if k >= K {
				k = K - 1
			}
			return int32(k)
		}
		u -= aw
		for _, k := range s.nz[r] {
			u -= float64(s.nk[r][k]) * col[k]
			if u < 0 {
				return k
			}
		}
		return s.nz[r][len(s.nz[r])-1]
	}
	inc := func(r int, k int32) {
		if s.nk[r][k] == 0 {
			s.pos[r][k] = int32(len(s.nz[r]))
			s.nz[r] = append(s.nz[r], k)
		}
		s.nk[r][k]++
	}
	dec := func(r int, k int32) {
		s.nk[r][k]--
		if s.nk[r][k] == 0 {
			p := s.pos[r][k]
			last := s.nz[r][len(s.nz[r])-1]
			s.nz[r][p] = last
			s.pos[r][last] = p
			s.nz[r] = s.nz[r][:len(s.nz[r])-1]
		}
	}
	var ll float64
	for n := range words {
		var pn float64
		j := ids[n]
		for r := 0; r < s.R; r++ {
			for m := 0; m < n; m++ {
				dec(r, s.z[r][m])
				k := sample(r, ids[m])
				s.z[r][m] = k
				inc(r, k)
			}
			col := s.cols[j]
			v := s.cums[j][K-1]
			for _, k := range s.nz[r] {
				v += float64(s.nk[r][k]) * col[k]
			}
			pn += v / (float64(n) + s.a0)
		}
		ll += math.Log(pn / float64(s.R))
		for r := 0; r < s.R; r++ {
			k := sample(r, j)
			s.z[r] = append(s.z[r], k)
			inc(r, k)
		}
	}
	for r := 0; r < s.R; r++ {
		for _, k := range s.nz[r] {
			s.nk[r][k] = 0
		}
		s.nz[r] = s.nz[r][:0]
	}
	return ll
}
