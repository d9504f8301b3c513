package fit

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/floats"

	"termgrove/linear"
	"termgrove/model"
)

// WordNetOptions tune TrainWordNet; zero values mean the defaults.
type WordNetOptions struct {
	Hidden int     // hidden units (default DefaultWordNetHidden)
	Epochs int     // passes over the records (default DefaultWordNetEpochs)
	Batch  int     // records per step (default 256)
	Rate   float64 // Adam's step size (default 0.01)
	Seed   uint64
}

// DefaultWordNetHidden and DefaultWordNetEpochs: on a validation slice of
// debtags' train split (grouped by source package, bench/quality.md,
// seventh round) networks of 64, 128 and 256 hidden units added to the
// SVMs' decision values raised micro + macro F1@5 alike (0.873 to
// 0.881–0.884); 64 keeps the model smallest. Twelve epochs: F1@5 of the
// network alone on a tenth of the training records, grouped and left out,
// had stopped rising by then.
const (
	DefaultWordNetHidden = 64
	DefaultWordNetEpochs = 12
)

// TrainWordNet trains the word layer's network (model.WordNet) on the
// vectors xs (each of dim D features) of records with the concepts
// labels[i] (of C), each record weighing weight[i] (nil: 1): softmax
// cross-entropy against each record's subjects as equal shares, by Adam
// (Kingma and Ba 2015) on minibatches in an order drawn from Seed. It is
// deterministic: one goroutine, a fixed order of every sum. Records with
// no subject in range are left out.
func TrainWordNet(xs []linear.Vector, labels [][]int32, weight []float64, C, D int, opt WordNetOptions) (*model.WordNet, error) {
	if opt.Hidden <= 0 {
		opt.Hidden = DefaultWordNetHidden
	}
	if opt.Epochs <= 0 {
		opt.Epochs = DefaultWordNetEpochs
	}
	if opt.Batch <= 0 {
		opt.Batch = 256
	}
	if !(opt.Rate > 0) || math.IsInf(opt.Rate, 0) {
		opt.Rate = 0.01
	}
	if len(labels) != len(xs) || (weight != nil && len(weight) != len(xs)) {
		return nil, fmt.Errorf("word network: %d vectors, %d label sets, %d weights", len(xs), len(labels), len(weight))
	}
	if C < 1 || D < 1 {
		return nil, fmt.Errorf("word network: %d concepts, %d features", C, D)
	}
	var recs []int
	active := make([]bool, D)
	for i, x := range xs {
		ok := false
		for _, k := range labels[i] {
			ok = ok || (k >= 0 && int(k) < C)
		}
		if !ok || (weight != nil && !(weight[i] > 0)) {
			continue
		}
		for _, f := range x.Index {
			if f < 0 || int(f) >= D {
				return nil, fmt.Errorf("word network: record %d has feature %d of %d", i, f, D)
			}
			active[f] = true
		}
		recs = append(recs, i)
	}
	if len(recs) == 0 {
		return nil, errors.New("word network: no record with a subject to learn")
	}
	t := newNetTrainer(C, D, opt, active)
	rng := rand.New(rand.NewPCG(opt.Seed, 0x6e6574))
	for ep := 0; ep < opt.Epochs; ep++ {
		order := rng.Perm(len(recs))
		for s := 0; s < len(order); s += opt.Batch {
			batch := order[s:min(s+opt.Batch, len(order))]
			for b, o := range batch {
				batch[b] = recs[o]
			}
			t.step(xs, labels, weight, batch)
		}
	}
	return t.network(opt), nil
}

// netTrainer holds the network's parameters, their Adam moments, and one
// minibatch's activations and gradients, all in float64.
type netTrainer struct {
	C, D, H     int
	rate        float64
	t           int
	active      []int32 // features some record has, ascending: the only rows of In that learn
	p, g, m, v  netParams
	a, dz       []float64 // batch × H pre-activations, batch × C logit gradients
	touched     []int32
	touchedSeen []bool
	zero        []float64 // H zeros: the gradient of a row no record of the batch has
}

// netParams is the network's parameters (or their gradients or moments).
type netParams struct {
	in, inBias, out, outBias []float64
}

func newNetParams(C, D, H int) netParams {
	return netParams{in: make([]float64, D*H), inBias: make([]float64, H), out: make([]float64, H*C), outBias: make([]float64, C)}
}

// newNetTrainer draws the initial weights: the rows of active features
// from N(0, (4·√(2/n))²), n the number of active features (He et al.
// 2015's scale for ReLU, times 4 as a record's vector has few non-zero,
// unit-length entries), the output weights from N(0, 1/H), biases 0.
func newNetTrainer(C, D int, opt WordNetOptions, active []bool) *netTrainer {
	H := opt.Hidden
	t := &netTrainer{C: C, D: D, H: H, rate: opt.Rate, touchedSeen: make([]bool, D), zero: make([]float64, H)}
	for f, ok := range active {
		if ok {
			t.active = append(t.active, int32(f))
		}
	}
	t.p, t.g, t.m, t.v = newNetParams(C, D, H), newNetParams(C, D, H), newNetParams(C, D, H), newNetParams(C, D, H)
	rng := rand.New(rand.NewPCG(opt.Seed, 0x696e6974))
	sd := 4 * math.Sqrt(2/float64(len(t.active)))
	for _, f := range t.active {
		for j := 0; j < H; j++ {
			t.p.in[int(f)*H+j] = sd * rng.NormFloat64()
		}
	}
	sd = 1 / math.Sqrt(float64(H))
	for i := range t.p.out {
		t.p.out[i] = sd * rng.NormFloat64()
	}
	return t
}

// forward writes record x's hidden pre-activations into a (len H) and its
// logits into z (len C).
func (t *netTrainer) forward(x linear.Vector, a, z []float64) {
	H := t.H
	copy(a, t.p.inBias)
	for i, f := range x.Index {
		floats.AddScaled(a, float64(x.Value[i]), t.p.in[int(f)*H:int(f)*H+H])
	}
	copy(z, t.p.outBias)
	for j, v := range a {
		if v > 0 {
			floats.AddScaled(z, v, t.p.out[j*t.C:(j+1)*t.C])
		}
	}
}

// step takes one Adam step on the batch's loss (gradient).
func (t *netTrainer) step(xs []linear.Vector, labels [][]int32, weight []float64, batch []int) {
	t.gradient(xs, labels, weight, batch)
	t.adam()
}

// gradient sets t.g to the gradient of the batch's loss, the mean over its
// records of w_i·(−Σ_k target_ik·ln softmax(z_i)_k), and returns the loss.
// Rows of g.in are set for the features in the batch (t.touched) only.
func (t *netTrainer) gradient(xs []linear.Vector, labels [][]int32, weight []float64, batch []int) float64 {
	C, H, B := t.C, t.H, len(batch)
	var loss float64
	if len(t.a) < B*H {
		t.a, t.dz = make([]float64, B*H), make([]float64, B*C)
	}
	clear(t.g.inBias)
	clear(t.g.out)
	clear(t.g.outBias)
	dh := make([]float64, H)
	for b, i := range batch {
		a, dz := t.a[b*H:(b+1)*H], t.dz[b*C:(b+1)*C]
		t.forward(xs[i], a, dz)
		// dz = w·(softmax(z) − target)/B, target the subjects' equal shares.
		model.LogSoftmax(dz)
		n := 0
		for _, k := range labels[i] {
			if k >= 0 && int(k) < C {
				n++
			}
		}
		w := 1.0
		if weight != nil {
			w = weight[i]
		}
		for _, k := range labels[i] {
			if k >= 0 && int(k) < C {
				loss -= w * dz[k] / float64(n*B)
			}
		}
		for k := range dz {
			dz[k] = math.Exp(dz[k])
		}
		for _, k := range labels[i] {
			if k >= 0 && int(k) < C {
				dz[k] -= 1 / float64(n)
			}
		}
		floats.Scale(w/float64(B), dz)
		floats.Add(t.g.outBias, dz)
		for j, v := range a {
			if v > 0 {
				floats.AddScaled(t.g.out[j*C:(j+1)*C], v, dz)
			}
		}
		// Back through the hidden layer: dh_j = [a_j > 0]·Σ_k Out[j][k]·dz_k.
		for j, v := range a {
			dh[j] = 0
			if v > 0 {
				dh[j] = floats.Dot(t.p.out[j*C:(j+1)*C], dz)
			}
		}
		floats.Add(t.g.inBias, dh)
		x := xs[i]
		for e, f := range x.Index {
			if !t.touchedSeen[f] {
				t.touchedSeen[f] = true
				t.touched = append(t.touched, f)
				clear(t.g.in[int(f)*H : int(f)*H+H])
			}
			floats.AddScaled(t.g.in[int(f)*H:int(f)*H+H], float64(x.Value[e]), dh)
		}
	}
	return loss
}

// adam moves the parameters one Adam step along t.g.
func (t *netTrainer) adam() {
	H := t.H
	t.t++
	b1, b2 := 0.9, 0.999
	lr := t.rate * math.Sqrt(1-math.Pow(b2, float64(t.t))) / (1 - math.Pow(b1, float64(t.t)))
	adam := func(p, g, m, v []float64) {
		for i, gi := range g {
			m[i] = b1*m[i] + (1-b1)*gi
			v[i] = b2*v[i] + (1-b2)*gi*gi
			p[i] -= lr * m[i] / (math.Sqrt(v[i]) + 1e-8)
		}
	}
	adam(t.p.inBias, t.g.inBias, t.m.inBias, t.v.inBias)
	adam(t.p.out, t.g.out, t.m.out, t.v.out)
	adam(t.p.outBias, t.g.outBias, t.m.outBias, t.v.outBias)
	// Every active row moves (its moments carry on when this batch does
	// not touch it); rows this batch did not touch have gradient 0.
	for _, f := range t.active {
		r := int(f) * H
		g := t.g.in[r : r+H]
		if !t.touchedSeen[f] {
			g = t.zero
		}
		adam(t.p.in[r:r+H], g, t.m.in[r:r+H], t.v.in[r:r+H])
	}
	for _, f := range t.touched {
		t.touchedSeen[f] = false
	}
	t.touched = t.touched[:0]
}

// network returns the trained parameters as a model.WordNet.
func (t *netTrainer) network(opt WordNetOptions) *model.WordNet {
	f32 := func(s []float64) []float32 {
		out := make([]float32, len(s))
		for i, v := range s {
			out[i] = float32(v)
		}
		return out
	}
	return &model.WordNet{Hidden: t.H, In: f32(t.p.in), InBias: f32(t.p.inBias), Out: f32(t.p.out), OutBias: f32(t.p.outBias),
		Epochs: opt.Epochs, Batch: opt.Batch, Rate: opt.Rate, Seed: opt.Seed}
}
