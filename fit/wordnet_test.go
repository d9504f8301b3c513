package fit

import (
	"math"
	"math/rand/v2"
	"reflect"
	"testing"

	"termgrove/linear"
	"termgrove/model"
)

// randomNetData returns n sparse unit vectors over D features (3–6
// non-zero) with 1–3 subjects each of C, from seed.
func randomNetData(n, C, D int, seed uint64) ([]linear.Vector, [][]int32) {
	r := rand.New(rand.NewPCG(seed, 1))
	xs := make([]linear.Vector, n)
	labels := make([][]int32, n)
	for i := range xs {
		perm := r.Perm(D)[:3+r.IntN(4)]
		var ss float64
		for f := 0; f < D; f++ {
			for _, p := range perm {
				if p == f {
					v := 0.2 + r.Float64()
					xs[i].Index = append(xs[i].Index, int32(f))
					xs[i].Value = append(xs[i].Value, float32(v))
					ss += v * v
				}
			}
		}
		for j := range xs[i].Value {
			xs[i].Value[j] = float32(float64(xs[i].Value[j]) / math.Sqrt(ss))
		}
		for _, k := range r.Perm(C)[:1+r.IntN(3)] {
			labels[i] = append(labels[i], int32(k))
		}
	}
	return xs, labels
}

// denseNetLoss is the batch loss recomputed with plain loops over dense
// parameters: h = relu(b1 + W1ᵀx), z = b2 + W2ᵀh, mean of
// w·(−Σ_k t_k ln softmax(z)_k) with t the subjects' equal shares.
func denseNetLoss(p netParams, C, D, H int, xs []linear.Vector, labels [][]int32, weight []float64, batch []int) float64 {
	var loss float64
	for _, i := range batch {
		x := make([]float64, D)
		for e, f := range xs[i].Index {
			x[f] = float64(xs[i].Value[e])
		}
		h := make([]float64, H)
		for j := 0; j < H; j++ {
			h[j] = p.inBias[j]
			for f := 0; f < D; f++ {
				h[j] += x[f] * p.in[f*H+j]
			}
			h[j] = math.Max(0, h[j])
		}
		z := make([]float64, C)
		var sum float64
		for k := 0; k < C; k++ {
			z[k] = p.outBias[k]
			for j := 0; j < H; j++ {
				z[k] += h[j] * p.out[j*C+k]
			}
			sum += math.Exp(z[k])
		}
		w := 1.0
		if weight != nil {
			w = weight[i]
		}
		for _, k := range labels[i] {
			loss -= w * (z[k] - math.Log(sum)) / float64(len(labels[i]))
		}
	}
	return loss / float64(len(batch))
}

// TestWordNetGradient: the trainer's gradient of the batch loss agrees
// with central finite differences of the loss recomputed densely, for
// every parameter of a small network, and its loss with the dense one.
// Common practice, no source: gradient checking by finite differences.
func TestWordNetGradient(t *testing.T) {
	const C, D, H = 5, 12, 6
	xs, labels := randomNetData(20, C, D, 3)
	weight := make([]float64, len(xs))
	for i := range weight {
		weight[i] = 1 + float64(i%3)
	}
	active := make([]bool, D)
	for _, x := range xs {
		for _, f := range x.Index {
			active[f] = true
		}
	}
	tr := newNetTrainer(C, D, WordNetOptions{Hidden: H, Seed: 9}, active)
	r := rand.New(rand.NewPCG(4, 4))
	for _, s := range [][]float64{tr.p.inBias, tr.p.outBias} {
		for i := range s {
			s[i] = 0.3 * r.NormFloat64()
		}
	}
	batch := []int{0, 3, 4, 7, 8, 11, 15, 19}
	loss := tr.gradient(xs, labels, weight, batch)
	if want := denseNetLoss(tr.p, C, D, H, xs, labels, weight, batch); math.Abs(loss-want) > 1e-10 {
		t.Fatalf("loss %v, dense %v", loss, want)
	}
	inBatch := make([]bool, D)
	for _, i := range batch {
		for _, f := range xs[i].Index {
			inBatch[f] = true
		}
	}
	const eps = 1e-6
	check := func(name string, p, g []float64, row func(i int) bool) {
		for i := range p {
			old := p[i]
			p[i] = old + eps
			up := denseNetLoss(tr.p, C, D, H, xs, labels, weight, batch)
			p[i] = old - eps
			down := denseNetLoss(tr.p, C, D, H, xs, labels, weight, batch)
			p[i] = old
			num := (up - down) / (2 * eps)
			got := 0.0
			if row(i) {
				got = g[i]
			}
			if math.Abs(got-num) > 1e-6*math.Max(1, math.Abs(num)) {
				t.Errorf("%s[%d]: gradient %v, finite difference %v", name, i, got, num)
			}
		}
	}
	all := func(int) bool { return true }
	check("in", tr.p.in, tr.g.in, func(i int) bool { return inBatch[i/H] })
	check("inBias", tr.p.inBias, tr.g.inBias, all)
	check("out", tr.p.out, tr.g.out, all)
	check("outBias", tr.p.outBias, tr.g.outBias, all)
}

// TestWordNetXOR: concept 0 goes with exactly one of features 0 and 1
// (exclusive or), concept 1 with both or neither; other features are
// noise. The trained network ranks the right concept first for nearly
// every record of the four patterns, which no linear model can (a linear
// SVM, trained on the same records, gets about half).
// Source: the textbook case for a hidden layer (Minsky and Papert 1969).
func TestWordNetXOR(t *testing.T) {
	const C, D = 2, 10
	r := rand.New(rand.NewPCG(5, 5))
	var xs []linear.Vector
	var labels [][]int32
	for i := 0; i < 400; i++ {
		a, b := i%2 == 1, i/2%2 == 1
		var x linear.Vector
		if a {
			x.Index, x.Value = append(x.Index, 0), append(x.Value, 1)
		}
		if b {
			x.Index, x.Value = append(x.Index, 1), append(x.Value, 1)
		}
		noise := 2 + r.IntN(D-2)
		x.Index, x.Value = append(x.Index, int32(noise)), append(x.Value, 0.5)
		var k int32 = 1
		if a != b {
			k = 0
		}
		xs = append(xs, x)
		labels = append(labels, []int32{k})
	}
	net, err := TrainWordNet(xs, labels, nil, C, D, WordNetOptions{Hidden: 8, Epochs: 200, Batch: 16, Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	svms, err := linear.OneVsRest(xs, labels, C, D, linear.OneVsRestOptions{SVM: linear.SVMOptions{C: 1}})
	if err != nil {
		t.Fatal(err)
	}
	var sc model.NetScratch
	g := make([]float64, C)
	netRight, svmRight := 0, 0
	for i, x := range xs {
		net.LogProb(x.Index, x.Value, &sc, g)
		if (g[0] > g[1]) == (labels[i][0] == 0) {
			netRight++
		}
		var d [C]float64
		for k, sv := range svms {
			d[k] = sv.Bias
			for e, f := range sv.Index {
				for j, xf := range x.Index {
					if xf == f {
						d[k] += float64(sv.Weight[e]) * float64(x.Value[j])
					}
				}
			}
		}
		if (d[0] > d[1]) == (labels[i][0] == 0) {
			svmRight++
		}
	}
	if netRight < 390 || svmRight > 320 {
		t.Errorf("right in %d of 400 by the network, %d by linear SVMs", netRight, svmRight)
	}
}

// TestWordNetDeterministic: the same records and seed give the same
// network, another seed another one.
// Common practice, no source.
func TestWordNetDeterministic(t *testing.T) {
	xs, labels := randomNetData(300, 7, 40, 8)
	train := func(seed uint64) *model.WordNet {
		n, err := TrainWordNet(xs, labels, nil, 7, 40, WordNetOptions{Hidden: 5, Epochs: 3, Batch: 32, Seed: seed})
		if err != nil {
			t.Fatal(err)
		}
		return n
	}
	a, b, c := train(1), train(1), train(2)
	if !reflect.DeepEqual(a, b) {
		t.Error("two trainings with one seed differ")
	}
	if reflect.DeepEqual(a.In, c.In) {
		t.Error("two seeds gave the same network")
	}
	if _, err := TrainWordNet(xs, labels[:3], nil, 7, 40, WordNetOptions{}); err == nil {
		t.Error("mismatched labels accepted")
	}
	if _, err := TrainWordNet(xs, make([][]int32, len(xs)), nil, 7, 40, WordNetOptions{}); err == nil {
		t.Error("records without subjects accepted")
	}
	if _, err := TrainWordNet(xs, labels, nil, 7, 10, WordNetOptions{}); err == nil {
		t.Error("features beyond D accepted")
	}
}
