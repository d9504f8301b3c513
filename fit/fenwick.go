package fit

// fenwick is a binary indexed tree of non-negative weights (Fenwick 1994,
// "A new data structure for cumulative frequency tables"): O(log n) update
// and O(log n) draw of an index with probability proportional to its
// weight. It holds the smoothing terms α_k·β0/(n_k+B_k), so that a draw
// from the smoothing bucket does not cost O(K).
type fenwick struct {
	t    []float64 // 1-based tree; t[i] sums weights (i − lowbit(i), i]
	step int       // highest power of two ≤ n
}

func newFenwick(n int) *fenwick {
	f := &fenwick{t: make([]float64, n+1), step: 1}
	for f.step*2 <= n {
		f.step *= 2
	}
	if n == 0 {
		f.step = 0
	}
	return f
}

// build sets the weights to w(0..n-1) in O(n).
func (f *fenwick) build(w func(i int) float64) {
	n := len(f.t) - 1
	for i := 1; i <= n; i++ {
		f.t[i] = w(i - 1)
	}
	for i := 1; i <= n; i++ {
		if j := i + i&-i; j <= n {
			f.t[j] += f.t[i]
		}
	}
}

// add adds d to the weight of index i.
func (f *fenwick) add(i int, d float64) {
	n := len(f.t) - 1
	for i++; i <= n; i += i & -i {
		f.t[i] += d
	}
}

// find returns the index whose cumulative interval holds u (0 ≤ u < total);
// a u past the total, from rounding, gives the last index.
func (f *fenwick) find(u float64) int {
	n := len(f.t) - 1
	pos := 0
	for s := f.step; s > 0; s >>= 1 {
		if p := pos + s; p <= n && f.t[p] <= u {
			pos = p
			u -= f.t[p]
		}
	}
	if pos >= n {
		pos = n - 1
	}
	return pos
}
