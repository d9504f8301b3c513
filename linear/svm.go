// Package linear trains L2-regularised linear support vector machines on
// sparse vectors by dual coordinate descent (Hsieh, Chang, Lin, Keerthi &
// Sundararajan 2008, "A dual coordinate descent method for large-scale
// linear SVM", ICML, Algorithm 1), the solver of LIBLINEAR and of
// scikit-learn's LinearSVC.
//
// TrainSVM minimises the primal of LinearSVC's defaults (squared hinge
// loss, the intercept a regularised feature of value 1):
//
//	½‖w‖² + ½b² + C·Σ_i c_i·max(0, 1 − y_i·(w·x_i + b))²
//
// with case weights c_i (SVMOptions.Weight; 1 by default, scikit-learn's
// sample_weight).
//
// Example:
//
//	xs := []linear.Vector{{Index: []int32{0}, Value: []float32{1}}, {Index: []int32{1}, Value: []float32{1}}}
//	w := make([]float64, 2)
//	b, _, err := linear.TrainSVM(xs, []bool{true, false}, linear.SVMOptions{C: 1}, w)
package linear

import (
	"errors"
	"math"
	"math/rand/v2"
)

// Vector is a sparse vector: Value[i] at Index[i]. Indices need not be
// sorted but must not repeat.
type Vector struct {
	Index []int32
	Value []float32
}

// Dot returns w·x.
func (x Vector) Dot(w []float64) float64 {
	var s float64
	for i, j := range x.Index {
		s += w[j] * float64(x.Value[i])
	}
	return s
}

// SVMOptions tune TrainSVM; zero values mean the defaults.
type SVMOptions struct {
	// C is the loss weight (default 1).
	C float64
	// Epsilon stops the descent when the projected gradients of an epoch
	// span less than it (default 0.1, LIBLINEAR's default for this solver).
	Epsilon float64
	// MaxEpochs bounds the passes over the data (default 1000).
	MaxEpochs int
	// Seed orders each epoch's visits.
	Seed uint64
	// Weight, when set, holds each case's weight c_i (len(xs) values, each
	// > 0): case i's loss counts c_i times, as c_i copies of it would.
	Weight []float64
}

// ErrInput: the vectors and labels do not match, or an index is out of w.
var ErrInput = errors.New("linear: bad input")

// TrainSVM fits w (len(w) is the dimension; its contents are overwritten)
// and returns the intercept b and the epochs run. ys[i] says whether
// xs[i] is a positive case.
func TrainSVM(xs []Vector, ys []bool, opt SVMOptions, w []float64) (b float64, epochs int, err error) {
	return trainSVM(xs, ys, opt, w, nil)
}

func trainSVM(xs []Vector, ys []bool, opt SVMOptions, w []float64, scratch *svmScratch) (float64, int, error) {
	if len(xs) != len(ys) {
		return 0, 0, ErrInput
	}
	if opt.C == 0 {
		opt.C = 1
	}
	if opt.Epsilon == 0 {
		opt.Epsilon = 0.1
	}
	if opt.MaxEpochs == 0 {
		opt.MaxEpochs = 1000
	}
	if !(opt.C > 0) || math.IsInf(opt.C, 0) || !(opt.Epsilon > 0) {
		return 0, 0, ErrInput
	}
	if opt.Weight != nil {
		if len(opt.Weight) != len(xs) {
			return 0, 0, ErrInput
		}
		for _, c := range opt.Weight {
			if !(c > 0) || math.IsInf(c, 0) {
				return 0, 0, ErrInput
			}
		}
	}
	for i := range w {
		w[i] = 0
	}
	n := len(xs)
	if scratch == nil {
		scratch = &svmScratch{}
	}
	scratch.grow(n)
	alpha, qd, order, diag := scratch.alpha[:n], scratch.qd[:n], scratch.order[:n], scratch.diag[:n]
	for i, x := range xs {
		alpha[i] = 0
		diag[i] = 0.5 / opt.C // D_ii of the squared hinge loss
		if opt.Weight != nil {
			diag[i] /= opt.Weight[i]
		}
		q := 1 + diag[i] // the intercept's feature, 1
		for k, j := range x.Index {
			if j < 0 || int(j) >= len(w) {
				return 0, 0, ErrInput
			}
			v := float64(x.Value[k])
			q += v * v
		}
		qd[i] = q
		order[i] = int32(i)
	}
	rng := rand.New(rand.NewPCG(opt.Seed, 0x73766d))
	var b float64
	epoch := 0
	for epoch < opt.MaxEpochs {
		epoch++
		rng.Shuffle(n, func(i, j int) { order[i], order[j] = order[j], order[i] })
		maxPG, minPG := math.Inf(-1), math.Inf(1)
		for _, i := range order {
			x := xs[i]
			y := -1.0
			if ys[i] {
				y = 1
			}
			g := y*(x.Dot(w)+b) - 1 + diag[i]*alpha[i]
			pg := g
			if alpha[i] == 0 && g > 0 {
				pg = 0
			}
			maxPG = max(maxPG, pg)
			minPG = min(minPG, pg)
			if pg == 0 {
				continue
			}
			old := alpha[i]
			alpha[i] = max(old-g/qd[i], 0)
			d := (alpha[i] - old) * y
			for k, j := range x.Index {
				w[j] += d * float64(x.Value[k])
			}
			b += d
		}
		if maxPG-minPG < opt.Epsilon {
			break
		}
	}
	return b, epoch, nil
}

// svmScratch is TrainSVM's per-case scratch, reused by Trainer's workers.
type svmScratch struct {
	alpha, qd, diag []float64
	order           []int32
}

func (s *svmScratch) grow(n int) {
	if cap(s.alpha) < n {
		s.alpha = make([]float64, n)
		s.qd = make([]float64, n)
		s.diag = make([]float64, n)
		s.order = make([]int32, n)
	}
}

// Objective is the primal objective TrainSVM minimises, for tests; weight
// as SVMOptions.Weight (nil: every case 1).
func Objective(xs []Vector, ys []bool, C float64, weight, w []float64, b float64) float64 {
	o := 0.5 * b * b
	for _, v := range w {
		o += 0.5 * v * v
	}
	for i, x := range xs {
		y := -1.0
		if ys[i] {
			y = 1
		}
		if m := 1 - y*(x.Dot(w)+b); m > 0 {
			c := C
			if weight != nil {
				c *= weight[i]
			}
			o += c * m * m
		}
	}
	return o
}
