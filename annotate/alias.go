package annotate

// alias draws index i of a fixed weight vector with probability w_i/Σw in
// O(1): Walker's alias method (Walker 1977, ACM TOMS 3(3)) built with Vose's
// stable construction (Vose 1991, IEEE TSE 17(9)). Slot i keeps itself with
// probability prob[i] and otherwise yields alias[i].
type alias struct {
	prob  []float64
	alias []int32
}

// newAlias builds the table for weights (non-negative, not all zero unless
// empty) into prob and al when they have len(weights), else into new slices.
func newAlias(weights []float64, prob []float64, al []int32) alias {
	n := len(weights)
	if len(prob) != n {
		prob = make([]float64, n)
	}
	if len(al) != n {
		al = make([]int32, n)
	}
	if n == 0 {
		return alias{prob, al}
	}
	sum := 0.0
	for _, w := range weights {
		sum += w
	}
	small := make([]int32, 0, n)
	large := make([]int32, 0, n)
	for i, w := range weights {
		prob[i] = w * float64(n) / sum
		al[i] = int32(i)
		if prob[i] < 1 {
			small = append(small, int32(i))
		} else {
			large = append(large, int32(i))
		}
	}
	for len(small) > 0 && len(large) > 0 {
		s := small[len(small)-1]
		small = small[:len(small)-1]
		l := large[len(large)-1]
		al[s] = l
		prob[l] -= 1 - prob[s]
		if prob[l] < 1 {
			large = large[:len(large)-1]
			small = append(small, l)
		}
	}
	// What is left is 1 up to rounding.
	for _, i := range large {
		prob[i] = 1
	}
	for _, i := range small {
		prob[i] = 1
	}
	return alias{prob, al}
}

// draw returns an index; the table must not be empty.
func (t alias) draw(r *splitMix) int32 {
	x := uniform(r) * float64(len(t.prob))
	i := int(x)
	if i >= len(t.prob) {
		i = len(t.prob) - 1
	}
	if x-float64(i) < t.prob[i] {
		return int32(i)
	}
	return t.alias[i]
}
