package fit

import (
	"math"
	"math/rand/v2"
	"testing"

	"termgrove/prior"
)

// gewekeModel is a tiny concept model: K = 2 concepts + 1 free topic, W = 4,
// three records, the second restricted to concept 1.
type gewekeModel struct {
	K, C, W int
	alpha   []float64
	beta    [][]float64 // β_kw = β0 + λπ_kw
	lens    []int
	allowed [][]int
	p       *prior.Prior
}

func newGewekeModel() *gewekeModel {
	g := &gewekeModel{K: 3, C: 2, W: 4, alpha: []float64{0.5, 0.8, 0.4}, lens: []int{4, 3, 5}}
	g.p = &prior.Prior{
		Rows: [][]prior.Entry{
			{{Word: 0, Weight: 0.7}, {Word: 1, Weight: 0.3}},
			{{Word: 2, Weight: 1}},
		},
		Lambda: 2, Beta0: 0.3,
	}
	g.beta = make([][]float64, g.K)
	for k := range g.beta {
		g.beta[k] = []float64{0.3, 0.3, 0.3, 0.3}
		if k < g.C {
			for _, e := range g.p.Rows[k] {
				g.beta[k][e.Word] += 2 * e.Weight
			}
		}
	}
	g.allowed = [][]int{{0, 1, 2}, {1, 2}, {0, 1, 2}}
	return g
}

func drawFrom(r *rand.Rand, p []float64) int {
	var t float64
	for _, v := range p {
		t += v
	}
	u := r.Float64() * t
	for i, v := range p {
		u -= v
		if u < 0 {
			return i
		}
	}
	return len(p) - 1
}

// forward draws (z, w) from the model's joint distribution with θ and φ
// integrated out (Pólya urns: the marginal-conditional simulator).
func (g *gewekeModel) forward(r *rand.Rand, z, w []int32) {
	nkw := make([][]float64, g.K)
	for k := range nkw {
		nkw[k] = make([]float64, g.W)
	}
	i := 0
	pk := make([]float64, g.K)
	pw := make([]float64, g.W)
	for d, n := range g.lens {
		ndk := make([]float64, g.K)
		for j := 0; j < n; j++ {
			clear(pk)
			for _, k := range g.allowed[d] {
				pk[k] = ndk[k] + g.alpha[k]
			}
			k := drawFrom(r, pk)
			for v := range pw {
				pw[v] = nkw[k][v] + g.beta[k][v]
			}
			x := drawFrom(r, pw)
			ndk[k]++
			nkw[k][x]++
			z[i], w[i] = int32(k), int32(x)
			i++
		}
	}
}

// resampleWords draws w | z exactly (one Pólya urn per topic).
func (g *gewekeModel) resampleWords(r *rand.Rand, z, w []int32) {
	nkw := make([][]float64, g.K)
	for k := range nkw {
		nkw[k] = make([]float64, g.W)
	}
	pw := make([]float64, g.W)
	for i, k := range z {
		for v := range pw {
			pw[v] = nkw[k][v] + g.beta[k][v]
		}
		x := drawFrom(r, pw)
		nkw[k][x]++
		w[i] = int32(x)
	}
}

// stats are the test functions g(z, w) whose means are compared.
func (g *gewekeModel) stats(z, w []int32, dst []float64) {
	clear(dst)
	for i, k := range z {
		dst[k]++ // 0..2: n_k
		if k == 0 && w[i] == 0 {
			dst[3]++ // n_{0,w0}
		}
		if k == 2 && w[i] == 3 {
			dst[4]++ // n_{2,w3}
		}
		if i >= 7 && k == 2 {
			dst[5]++ // n_{d2,free}
		}
		if i >= 4 && i < 7 && k == 1 {
			dst[6]++ // n_{d1,concept 1}
		}
	}
	if z[0] == z[1] {
		dst[7] = 1
	}
	if w[0] == w[1] {
		dst[8] = 1
	}
	dst[9] = dst[0] * dst[0]
	if z[7] == z[8] && w[7] == w[8] {
		dst[10] = 1
	}
}

const gewekeStats = 11

// runGeweke returns the z-scores of the differences between the means of the
// marginal-conditional and successive-conditional simulators. samplerAlpha,
// when not nil, is the (wrong) α the sampler is given.
func runGeweke(t *testing.T, m int, samplerAlpha []float64) []float64 {
	return runGewekeSampler(t, m, samplerAlpha, "")
}

// runGewekeSampler is runGeweke with the sampler of Options.Sampler.
func runGewekeSampler(t *testing.T, m int, samplerAlpha []float64, sampler string) []float64 {
	g := newGewekeModel()
	r := rand.New(rand.NewPCG(2024, 1))
	n := 0
	for _, l := range g.lens {
		n += l
	}
	z := make([]int32, n)
	w := make([]int32, n)
	s := make([]float64, gewekeStats)

	// Marginal-conditional: independent forward draws.
	var sum1, sq1 [gewekeStats]float64
	for i := 0; i < m; i++ {
		g.forward(r, z, w)
		g.stats(z, w, s)
		for j, v := range s {
			sum1[j] += v
			sq1[j] += v * v
		}
	}

	// Successive-conditional: Gibbs sweep of the real sampler on z | w, then
	// an exact draw of w | z.
	g.forward(r, z, w)
	c := &Corpus{W: g.W}
	at := 0
	for d, l := range g.lens {
		doc := Doc{ID: string(rune('a' + d)), Words: append([]int32(nil), w[at:at+l]...)}
		if d == 1 {
			doc.Subjects = []int32{1}
		}
		c.Docs = append(c.Docs, doc)
		at += l
	}
	st, err := newState(g.p, c, Options{FreeTopics: 1, Workers: 1, Seed: 5, FixedAlpha: true, Sampler: sampler})
	if err != nil {
		t.Fatal(err)
	}
	copy(st.alpha, g.alpha)
	if samplerAlpha != nil {
		copy(st.alpha, samplerAlpha)
	}
	for k := range st.B {
		var b float64
		for _, v := range g.beta[k] {
			b += v
		}
		if math.Abs(b-st.B[k]) > 1e-12 {
			t.Fatalf("B_%d = %v, want %v", k, st.B[k], b)
		}
	}
	copy(st.z, z)
	copy(st.words, w)
	st.workers[0].attachGlobal()
	const batches = 50
	bsize := m / batches
	var batch [batches][gewekeStats]float64
	var sum2 [gewekeStats]float64
	for i := 0; i < bsize*batches; i++ {
		if err := st.rebuildCounts(); err != nil {
			t.Fatal(err)
		}
		st.sweepOnce()
		g.resampleWords(r, st.z, st.words)
		g.stats(st.z, st.words, s)
		for j, v := range s {
			batch[i/bsize][j] += v / float64(bsize)
			sum2[j] += v
		}
	}
	zs := make([]float64, gewekeStats)
	m2 := float64(bsize * batches)
	for j := range zs {
		mean1 := sum1[j] / float64(m)
		var1 := (sq1[j]/float64(m) - mean1*mean1) / float64(m)
		mean2 := sum2[j] / m2
		var bv float64
		for b := range batch {
			d := batch[b][j] - mean2
			bv += d * d
		}
		var2 := bv / (batches - 1) / batches // batch-means variance of the mean
		zs[j] = (mean1 - mean2) / math.Sqrt(var1+var2)
	}
	return zs
}

// TestGeweke is the joint-distribution test of Geweke (2004, "Getting it
// right: joint distribution tests of posterior simulators", JASA 99): the
// means of test functions of (z, w) under forward simulation must agree with
// those of a chain alternating the sampler's sweep over z and an exact draw
// of w | z. A sampler that draws from the wrong conditional (here: given the
// wrong α) must be caught.
// Source: Geweke 2004, the marginal- vs successive-conditional simulators.
func TestGeweke(t *testing.T) {
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
	t.Logf("wrong-α z-scores: %.2f", bad)
}
