package fit

import (
	"math"
	"slices"
)

// Digamma is ψ(x) = d/dx ln Γ(x) for x > 0: the recurrence
// ψ(x) = ψ(x+1) − 1/x up to x ≥ 10, then the asymptotic series
// ψ(x) ≈ ln x − 1/(2x) − Σ B_2n/(2n x^2n) (Abramowitz & Stegun 6.3.18).
func Digamma(x float64) float64 {
	if x <= 0 || math.IsNaN(x) {
		return math.NaN()
	}
	var acc float64
	for x < 10 {
		acc -= 1 / x
		x++
	}
	f := 1 / (x * x)
	t := f * (-1.0/12 + f*(1.0/120+f*(-1.0/252+f*(1.0/240+f*(-1.0/132+f*(691.0/32760))))))
	return acc + math.Log(x) - 0.5/x + t
}

// Lgamma is ln Γ(x) for x > 0.
func Lgamma(x float64) float64 {
	v, _ := math.Lgamma(x)
	return v
}

// run is n_dk = value for count documents.
type hist struct {
	value int32
	count int32
}

// alphaStats is what the Minka update needs from the assignments: for each
// topic the histogram of its nonzero record counts, the histogram of the
// lengths of unrestricted records, and the restricted records.
type alphaStats struct {
	topic    [][]hist // K
	lengths  []hist   // unrestricted records
	restLen  []int32  // restricted records: length
	restSubj [][]int32
}

// collectAlphaStats builds the histograms from z.
func (st *state) collectAlphaStats() *alphaStats {
	as := &alphaStats{topic: make([][]hist, st.K)}
	ndk := make([]int32, st.K)
	var seen []int32
	perTopic := make([][]int32, st.K)
	var lens []int32
	for di := range st.docs {
		d := &st.docs[di]
		for i := d.start; i < d.end; i++ {
			k := st.z[i]
			if ndk[k] == 0 {
				seen = append(seen, k)
			}
			ndk[k]++
		}
		for _, k := range seen {
			perTopic[k] = append(perTopic[k], ndk[k])
			ndk[k] = 0
		}
		seen = seen[:0]
		n := int32(d.end - d.start)
		if d.subjects != nil {
			as.restLen = append(as.restLen, n)
			as.restSubj = append(as.restSubj, d.subjects)
		} else {
			lens = append(lens, n)
		}
	}
	for k, v := range perTopic {
		as.topic[k] = toHist(v)
	}
	as.lengths = toHist(lens)
	return as
}

func toHist(v []int32) []hist {
	slices.Sort(v)
	var h []hist
	for i := 0; i < len(v); {
		j := i
		for j < len(v) && v[j] == v[i] {
			j++
		}
		h = append(h, hist{v[i], int32(j - i)})
		i = j
	}
	return h
}

// minAlpha keeps a topic that lost all its tokens from collapsing to α = 0.
const minAlpha = 1e-6

// minkaAlpha runs Minka's fixed-point iteration for an asymmetric Dirichlet
// over record–topic counts (Minka 2000, "Estimating a Dirichlet
// distribution", eq. 55; as used by Wallach, Mimno & McCallum 2009):
//
//	α_k ← α_k · Σ_d [ψ(n_dk+α_k) − ψ(α_k)] / Σ_d [ψ(n_d+α_A(d)) − ψ(α_A(d))]
//
// where a restricted record d only draws from its allowed set A(d) and only
// counts in the sums of the topics it allows (α_A(d) = Σ_{k∈A(d)} α_k).
// It updates alpha in place and returns the number of iterations.
func minkaAlpha(alpha []float64, C int, as *alphaStats, iters int, tol float64) int {
	K := len(alpha)
	den := make([]float64, K)
	it := 0
	for it = 0; it < iters; it++ {
		var a0 float64
		for _, a := range alpha {
			a0 += a
		}
		var all float64
		for _, h := range as.lengths {
			all += float64(h.count) * (Digamma(float64(h.value)+a0) - Digamma(a0))
		}
		for k := range den {
			den[k] = all
		}
		var aFree float64
		for k := C; k < K; k++ {
			aFree += alpha[k]
		}
		var free float64
		for i, n := range as.restLen {
			aA := aFree
			for _, k := range as.restSubj[i] {
				aA += alpha[k]
			}
			g := Digamma(float64(n)+aA) - Digamma(aA)
			free += g
			for _, k := range as.restSubj[i] {
				den[k] += g
			}
		}
		for k := C; k < K; k++ {
			den[k] += free
		}
		change := 0.0
		for k := range alpha {
			var num float64
			dk := Digamma(alpha[k])
			for _, h := range as.topic[k] {
				num += float64(h.count) * (Digamma(float64(h.value)+alpha[k]) - dk)
			}
			na := alpha[k]
			if den[k] > 0 {
				na = alpha[k] * num / den[k]
			}
			if na < minAlpha || math.IsNaN(na) {
				na = minAlpha
			}
			change = max(change, math.Abs(na-alpha[k])/alpha[k])
			alpha[k] = na
		}
		if change < tol {
			it++
			break
		}
	}
	return it
}

// optimizeAlpha learns α from the current assignments.
func (st *state) optimizeAlpha() {
	as := st.collectAlphaStats()
	minkaAlpha(st.alpha, st.C, as, 50, 1e-5)
}
