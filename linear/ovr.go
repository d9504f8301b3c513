package linear

import (
	"math"
	"sync"
)

// Sparse is one label's pruned weight vector and intercept.
type Sparse struct {
	Index  []int32
	Weight []float32
	Bias   float64
}

// OneVsRestOptions tune OneVsRest; zero values mean the defaults.
type OneVsRestOptions struct {
	SVM SVMOptions
	// Prune drops weights of magnitude below it (default 0: keep all
	// non-zero weights).
	Prune float64
	// Workers train labels in parallel (default 1).
	Workers int
	// LabelC, when set, holds per label the C its SVM is trained with
	// (len L; values ≤ 0 mean SVM.C).
	LabelC []float64
}

// OneVsRest trains one SVM per label l in [0, L) that some case carries,
// every case without l being a negative one (the one-vs-rest scheme of
// LinearSVC). labels[i] lists case i's labels; dim is the dimension.
// Labels no case carries get no weights and intercept −1, below every
// case (an SVM trained on negatives alone would come near it).
func OneVsRest(xs []Vector, labels [][]int32, L, dim int, opt OneVsRestOptions) ([]Sparse, error) {
	if len(xs) != len(labels) || opt.LabelC != nil && len(opt.LabelC) != L {
		return nil, ErrInput
	}
	pos := make([]int, L)
	for _, ls := range labels {
		for _, l := range ls {
			if l < 0 || int(l) >= L {
				return nil, ErrInput
			}
			pos[l]++
		}
	}
	if opt.Workers < 1 {
		opt.Workers = 1
	}
	out := make([]Sparse, L)
	errs := make([]error, opt.Workers)
	next := make(chan int)
	var wg sync.WaitGroup
	for wk := 0; wk < opt.Workers; wk++ {
		wg.Add(1)
		go func(wk int) {
			defer wg.Done()
			w := make([]float64, dim)
			ys := make([]bool, len(xs))
			var sc svmScratch
			for l := range next {
				for i, ls := range labels {
					ys[i] = false
					for _, x := range ls {
						if int(x) == l {
							ys[i] = true
							break
						}
					}
				}
				o := opt.SVM
				o.Seed += uint64(l)
				if opt.LabelC != nil && opt.LabelC[l] > 0 {
					o.C = opt.LabelC[l]
				}
				b, _, err := trainSVM(xs, ys, o, w, &sc)
				if err != nil {
					errs[wk] = err
					continue
				}
				s := Sparse{Bias: b}
				for j, v := range w {
					if v != 0 && math.Abs(v) >= opt.Prune {
						s.Index = append(s.Index, int32(j))
						s.Weight = append(s.Weight, float32(v))
					}
				}
				out[l] = s
			}
		}(wk)
	}
	for l := 0; l < L; l++ {
		if pos[l] == 0 {
			out[l] = Sparse{Bias: -1}
			continue
		}
		next <- l
	}
	close(next)
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			return nil, err
		}
	}
	return out, nil
}
