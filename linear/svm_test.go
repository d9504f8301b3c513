package linear

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os/exec"
	"strings"
	"testing"
)

// randomCase draws n sparse vectors of dimension d with about nnz
// non-zeros each, labelled by a noisy linear rule so that neither class is
// separable.
func randomCase(seed uint64, n, d, nnz int) ([]Vector, []bool) {
	rng := rand.New(rand.NewPCG(seed, 1))
	truth := make([]float64, d)
	for j := range truth {
		truth[j] = rng.NormFloat64()
	}
	xs := make([]Vector, n)
	ys := make([]bool, n)
	for i := range xs {
		seen := map[int32]bool{}
		var s float64
		for k := 0; k < nnz; k++ {
			j := int32(rng.IntN(d))
			if seen[j] {
				continue
			}
			seen[j] = true
			v := float32(rng.Float64())
			xs[i].Index = append(xs[i].Index, j)
			xs[i].Value = append(xs[i].Value, v)
			s += truth[j] * float64(v)
		}
		ys[i] = s+0.5*rng.NormFloat64() > 0.3
	}
	return xs, ys
}

// The dual descent reaches the primal minimum: no random perturbation of
// (w, b) lowers the objective. Common practice, no source: a convex
// objective's minimum is below its neighbourhood.
func TestSVMIsMinimum(t *testing.T) {
	xs, ys := randomCase(3, 200, 30, 6)
	w := make([]float64, 30)
	b, epochs, err := TrainSVM(xs, ys, SVMOptions{C: 0.5, Epsilon: 1e-7, MaxEpochs: 100000}, w)
	if err != nil {
		t.Fatal(err)
	}
	if epochs >= 100000 {
		t.Fatalf("did not converge in %d epochs", epochs)
	}
	best := Objective(xs, ys, 0.5, nil, w, b)
	rng := rand.New(rand.NewPCG(9, 9))
	for trial := 0; trial < 200; trial++ {
		w2 := append([]float64(nil), w...)
		step := 1e-3 * float64(1+trial%3)
		for j := range w2 {
			w2[j] += step * rng.NormFloat64()
		}
		b2 := b + step*rng.NormFloat64()
		if o := Objective(xs, ys, 0.5, nil, w2, b2); o < best-1e-9 {
			t.Fatalf("perturbation %d lowers the objective: %v < %v", trial, o, best)
		}
	}
}

// A case of weight 3 counts as three copies of it: the primal objectives
// are the same function, so the minima are. Common practice, no source.
func TestSVMWeightIsCopies(t *testing.T) {
	xs, ys := randomCase(7, 120, 20, 5)
	weight := make([]float64, len(xs))
	cx, cy := append([]Vector(nil), xs...), append([]bool(nil), ys...)
	for i := range xs {
		weight[i] = 1
		if i%5 == 0 {
			weight[i] = 3
			cx, cy = append(cx, xs[i], xs[i]), append(cy, ys[i], ys[i])
		}
	}
	opt := SVMOptions{C: 0.3, Epsilon: 1e-9, MaxEpochs: 1000000}
	w1, w2, w0 := make([]float64, 20), make([]float64, 20), make([]float64, 20)
	b2, _, err := TrainSVM(cx, cy, opt, w2)
	if err != nil {
		t.Fatal(err)
	}
	b0, _, _ := TrainSVM(xs, ys, opt, w0)
	opt.Weight = weight
	b1, _, err := TrainSVM(xs, ys, opt, w1)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(b1-b2) > 1e-5 {
		t.Errorf("bias %v weighted, %v with copies", b1, b2)
	}
	moved := math.Abs(b1 - b0)
	for j := range w1 {
		if math.Abs(w1[j]-w2[j]) > 1e-5 {
			t.Errorf("w[%d] = %v weighted, %v with copies", j, w1[j], w2[j])
		}
		moved = max(moved, math.Abs(w1[j]-w0[j]))
	}
	if moved < 1e-3 {
		t.Errorf("weights moved the solution by only %v", moved)
	}
	if _, _, err := TrainSVM(xs, ys, SVMOptions{Weight: weight[:3]}, w1); err == nil {
		t.Error("3 weights for 120 cases: no error")
	}
	if _, _, err := TrainSVM(xs[:1], ys[:1], SVMOptions{Weight: []float64{0}}, w1); err == nil {
		t.Error("weight 0: no error")
	}
}

func TestSVMBadInput(t *testing.T) {
	w := make([]float64, 2)
	if _, _, err := TrainSVM([]Vector{{Index: []int32{2}, Value: []float32{1}}}, []bool{true}, SVMOptions{}, w); err == nil {
		t.Error("index out of range: no error")
	}
	if _, _, err := TrainSVM(nil, []bool{true}, SVMOptions{}, w); err == nil {
		t.Error("lengths differ: no error")
	}
	if _, _, err := TrainSVM(nil, nil, SVMOptions{C: math.NaN()}, w); err == nil {
		t.Error("C NaN: no error")
	}
	if _, err := OneVsRest([]Vector{{}}, [][]int32{{5}}, 2, 2, OneVsRestOptions{}); err == nil {
		t.Error("label out of range: no error")
	}
}

// Source: scikit-learn's LinearSVC (Debian python3-sklearn; squared hinge,
// L2, intercept_scaling 1: the same primal), trained on the same random
// cases to a tight tolerance. Skipped when Debian's python3 has no sklearn
// (CI installs it).
func TestSVMAgreesWithSklearn(t *testing.T) {
	py := "/usr/bin/python3"
	if err := exec.Command(py, "-c", "import sklearn").Run(); err != nil {
		t.Skip("Debian python3-sklearn not installed (apt-get install python3-sklearn): skipping the scikit-learn comparison")
	}
	const script = `
import json, sys
import numpy as np, scipy.sparse as sp
from sklearn.svm import LinearSVC
c = json.load(sys.stdin)
rows, cols, vals = [], [], []
for i, (ix, vs) in enumerate(zip(c["index"], c["value"])):
    rows += [i] * len(ix); cols += ix; vals += vs
X = sp.csr_matrix((vals, (rows, cols)), shape=(len(c["y"]), c["d"]))
m = LinearSVC(C=c["C"], tol=1e-10, max_iter=1000000).fit(X, np.array(c["y"]), sample_weight=c.get("weight"))
json.dump({"w": m.coef_[0].tolist(), "b": float(m.intercept_[0])}, sys.stdout)
`
	for trial, tc := range []struct {
		seed     uint64
		n, d, nz int
		C        float64
		weighted bool
	}{{1, 150, 20, 5, 1, false}, {2, 300, 50, 8, 0.3, false}, {3, 80, 10, 3, 3, false}, {4, 200, 30, 6, 0.3, true}} {
		xs, ys := randomCase(tc.seed, tc.n, tc.d, tc.nz)
		in := map[string]any{"d": tc.d, "C": tc.C}
		var weight []float64
		if tc.weighted {
			for i := range xs {
				weight = append(weight, 0.5+float64(i%4))
			}
			in["weight"] = weight
		}
		var ix [][]int32
		var vs [][]float32
		var y []int
		for i, x := range xs {
			ix = append(ix, x.Index)
			vs = append(vs, x.Value)
			if ys[i] {
				y = append(y, 1)
			} else {
				y = append(y, 0)
			}
		}
		in["index"], in["value"], in["y"] = ix, vs, y
		raw, _ := json.Marshal(in)
		cmd := exec.Command(py, "-c", script)
		cmd.Stdin = strings.NewReader(string(raw))
		out, err := cmd.Output()
		if err != nil {
			t.Fatalf("python: %v", err)
		}
		var want struct {
			W []float64
			B float64
		}
		if err := json.Unmarshal(out, &want); err != nil {
			t.Fatalf("python output %q: %v", out, err)
		}
		w := make([]float64, tc.d)
		b, _, err := TrainSVM(xs, ys, SVMOptions{C: tc.C, Epsilon: 1e-8, MaxEpochs: 1000000, Weight: weight}, w)
		if err != nil {
			t.Fatal(err)
		}
		for j := range w {
			if math.Abs(w[j]-want.W[j]) > 1e-4*(1+math.Abs(want.W[j])) {
				t.Errorf("case %d: w[%d] = %v, scikit-learn %v", trial, j, w[j], want.W[j])
			}
		}
		if math.Abs(b-want.B) > 1e-4*(1+math.Abs(want.B)) {
			t.Errorf("case %d: b = %v, scikit-learn %v", trial, b, want.B)
		}
	}
}

// OneVsRest trains each label as TrainSVM would alone.
func TestOneVsRestMatchesSingle(t *testing.T) {
	xs, ys := randomCase(5, 120, 15, 4)
	labels := make([][]int32, len(xs))
	for i := range xs {
		if ys[i] {
			labels[i] = []int32{1}
		}
		if i%3 == 0 {
			labels[i] = append(labels[i], 0)
		}
	}
	opt := OneVsRestOptions{SVM: SVMOptions{C: 1, Epsilon: 1e-8, MaxEpochs: 100000}, Workers: 2}
	got, err := OneVsRest(xs, labels, 3, 15, opt)
	if err != nil {
		t.Fatal(err)
	}
	w := make([]float64, 15)
	b, _, _ := TrainSVM(xs, ys, SVMOptions{C: 1, Epsilon: 1e-8, MaxEpochs: 100000}, w)
	if math.Abs(got[1].Bias-b) > 1e-5 {
		t.Errorf("label 1 bias %v, alone %v", got[1].Bias, b)
	}
	for i, j := range got[1].Index {
		if math.Abs(float64(got[1].Weight[i])-w[j]) > 1e-5 {
			t.Errorf("label 1 w[%d] = %v, alone %v", j, got[1].Weight[i], w[j])
		}
	}
	if got[2].Index != nil || got[2].Bias != -1 {
		t.Errorf("label 2 (no case) = %+v, want no weights and bias −1", got[2])
	}
}

// OneVsRestOptions.LabelC trains a label with its own C, as TrainSVM with
// that C alone; the other labels keep SVM.C.
func TestOneVsRestLabelC(t *testing.T) {
	xs, ys := randomCase(6, 120, 15, 4)
	labels := make([][]int32, len(xs))
	for i := range xs {
		if ys[i] {
			labels[i] = []int32{0, 1}
		}
	}
	opt := OneVsRestOptions{SVM: SVMOptions{C: 1, Epsilon: 1e-8, MaxEpochs: 100000}, LabelC: []float64{0, 0.05}}
	got, err := OneVsRest(xs, labels, 2, 15, opt)
	if err != nil {
		t.Fatal(err)
	}
	for l, C := range []float64{1, 0.05} {
		w := make([]float64, 15)
		b, _, _ := TrainSVM(xs, ys, SVMOptions{C: C, Epsilon: 1e-8, MaxEpochs: 100000}, w)
		if math.Abs(got[l].Bias-b) > 1e-5 {
			t.Errorf("label %d (C %v): bias %v, alone %v", l, C, got[l].Bias, b)
		}
	}
	if math.Abs(got[0].Bias-got[1].Bias) < 1e-3 {
		t.Errorf("labels 0 and 1 have the same cases and biases %v, %v: C 0.05 not used", got[0].Bias, got[1].Bias)
	}
	if _, err := OneVsRest(xs, labels, 2, 15, OneVsRestOptions{LabelC: []float64{1}}); err == nil {
		t.Error("one C for two labels: no error")
	}
}
