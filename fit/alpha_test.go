package fit

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mathext"
	"gonum.org/v1/gonum/optimize"
)

// TestDigammaLgamma compares Digamma with gonum's mathext.Digamma and Lgamma
// with the standard library over a wide range.
// Source: gonum.org/v1/gonum/mathext (Digamma) and Go's math.Lgamma.
func TestDigammaLgamma(t *testing.T) {
	for _, x := range []float64{1e-6, 1e-3, 0.01, 0.1, 0.5, 1, 1.5, 2, 3.7, 5.99, 6, 9.99, 10, 123.4, 1e4, 1e7} {
		got, want := Digamma(x), mathext.Digamma(x)
		// gonum's own accuracy is about 1e-10 near 1.
		if math.Abs(got-want) > 1e-9*math.Max(1, math.Abs(want)) {
			t.Errorf("Digamma(%g) = %.17g, gonum %.17g", x, got, want)
		}
		lg, _ := math.Lgamma(x)
		if Lgamma(x) != lg {
			t.Errorf("Lgamma(%g) = %v, want %v", x, Lgamma(x), lg)
		}
	}
	// Source: Abramowitz & Stegun 6.3.2: ψ(1) = −γ (Euler–Mascheroni constant).
	if g := Digamma(1); math.Abs(g+0.5772156649015329) > 1e-14 {
		t.Errorf("ψ(1) = %.17g", g)
	}
	if !math.IsNaN(Digamma(0)) || !math.IsNaN(Digamma(-1)) {
		t.Error("Digamma of a non-positive number must be NaN")
	}
}

// dmData is record–topic counts with optional allowed sets.
type dmData struct {
	counts  [][]int32 // per record, K
	allowed [][]int32 // per record: nil = all, else concept subset (free topics always allowed)
}

func (dm *dmData) logLik(alpha []float64, C int) float64 {
	var ll float64
	for d, c := range dm.counts {
		var aA, n float64
		for k, a := range alpha {
			if !dm.allows(d, k, C) {
				continue
			}
			aA += a
			n += float64(c[k])
			ll += Lgamma(float64(c[k])+a) - Lgamma(a)
		}
		ll += Lgamma(aA) - Lgamma(n+aA)
	}
	return ll
}

func (dm *dmData) allows(d, k, C int) bool {
	if dm.allowed[d] == nil || k >= C {
		return true
	}
	for _, s := range dm.allowed[d] {
		if int(s) == k {
			return true
		}
	}
	return false
}

func (dm *dmData) stats() *alphaStats {
	K := len(dm.counts[0])
	as := &alphaStats{topic: make([][]hist, K)}
	per := make([][]int32, K)
	var lens []int32
	for d, c := range dm.counts {
		var n int32
		for k, v := range c {
			if v > 0 {
				per[k] = append(per[k], v)
			}
			n += v
		}
		if dm.allowed[d] != nil {
			as.restLen = append(as.restLen, n)
			as.restSubj = append(as.restSubj, dm.allowed[d])
		} else {
			lens = append(lens, n)
		}
	}
	for k := range per {
		as.topic[k] = toHist(per[k])
	}
	as.lengths = toHist(lens)
	return as
}

// TestMinkaMatchesDirectMaximum checks the fixed-point update against a
// direct maximisation (BFGS on log α) of the Dirichlet-multinomial
// likelihood, with and without restricted records.
// Source: Minka 2000, "Estimating a Dirichlet distribution" — the fixed
// point is the maximum of that likelihood; gonum.org/v1/gonum/optimize finds
// it independently.
func TestMinkaMatchesDirectMaximum(t *testing.T) {
	for _, restricted := range []bool{false, true} {
		r := rand.New(rand.NewPCG(77, 1))
		trueAlpha := []float64{0.3, 1.2, 0.05, 2.5, 0.7}
		K, C := len(trueAlpha), 3
		dm := &dmData{}
		for d := 0; d < 300; d++ {
			var allowed []int32
			if restricted && d%2 == 0 {
				allowed = []int32{int32(d % C)}
			}
			dm.allowed = append(dm.allowed, allowed)
			c := make([]int32, K)
			n := 5 + r.IntN(40)
			p := make([]float64, K)
			for i := 0; i < n; i++ { // Pólya urn = Dirichlet-multinomial draw
				for k := range p {
					p[k] = 0
					if dm.allows(d, k, C) {
						p[k] = float64(c[k]) + trueAlpha[k]
					}
				}
				c[drawFrom(r, p)]++
			}
			dm.counts = append(dm.counts, c)
		}
		alpha := []float64{1, 1, 1, 1, 1}
		minkaAlpha(alpha, C, dm.stats(), 5000, 1e-13)

		prob := optimize.Problem{
			Func: func(x []float64) float64 {
				a := make([]float64, K)
				for k := range a {
					a[k] = math.Exp(x[k])
				}
				return -dm.logLik(a, C)
			},
			Grad: func(g, x []float64) {
				a := make([]float64, K)
				for k := range a {
					a[k] = math.Exp(x[k])
				}
				clear(g)
				for d, c := range dm.counts {
					var aA, n float64
					for k := range a {
						if dm.allows(d, k, C) {
							aA += a[k]
							n += float64(c[k])
						}
					}
					common := Digamma(aA) - Digamma(n+aA)
					for k := range a {
						if dm.allows(d, k, C) {
							g[k] -= a[k] * (common + Digamma(float64(c[k])+a[k]) - Digamma(a[k]))
						}
					}
				}
			},
		}
		x0 := make([]float64, K)
		res, err := optimize.Minimize(prob, x0, &optimize.Settings{GradientThreshold: 1e-8}, &optimize.BFGS{})
		if err != nil && res == nil {
			t.Fatal(err)
		}
		if g := floats.Norm(res.Gradient, math.Inf(1)); g > 1e-5 {
			t.Fatalf("direct maximisation did not converge (|∇| = %g): %v", g, err)
		}
		for k := range alpha {
			direct := math.Exp(res.X[k])
			if math.Abs(alpha[k]-direct) > 1e-5*direct {
				t.Errorf("restricted=%v α_%d: Minka %.8g, direct maximum %.8g", restricted, k, alpha[k], direct)
			}
		}
		t.Logf("restricted=%v true %v, Minka %.4f", restricted, trueAlpha, alpha)
	}
}
