package fit

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestFenwick checks find against a linear walk over the cumulative weights
// after random updates. Common practice, no source.
func TestFenwick(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 1))
	for _, n := range []int{1, 2, 3, 7, 8, 9, 100, 1000} {
		w := make([]float64, n)
		for i := range w {
			w[i] = r.Float64()
		}
		f := newFenwick(n)
		f.build(func(i int) float64 { return w[i] })
		for it := 0; it < 200; it++ {
			i := r.IntN(n)
			d := r.Float64() - w[i]*0.5
			w[i] += d
			f.add(i, d)
			var tot float64
			for _, v := range w {
				tot += v
			}
			u := r.Float64() * tot
			want, acc := n-1, 0.0
			for j, v := range w {
				acc += v
				if u < acc {
					want = j
					break
				}
			}
			got := f.find(u)
			if got != want {
				// Accept a neighbour only when u sits on a boundary within rounding.
				var pre float64
				for _, v := range w[:min(got, want)+1] {
					pre += v
				}
				if math.Abs(pre-u) > 1e-12 {
					t.Fatalf("n=%d: find(%v) = %d, want %d", n, u, got, want)
				}
			}
		}
	}
}
