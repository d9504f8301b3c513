package model

import (
	"fmt"
	"math"
)

// WordNet is the word layer's network (WordLayer.Net, version 5): one
// hidden layer of rectified linear units over the layer's record vector
// (WordLayer.Vector) and a softmax over the concepts,
//
//	h = max(0, InBias + Σ_f x_f·In[f]),  z_k = OutBias[k] + Σ_j h_j·Out[j][k],
//	g_k = ln softmax(z)_k,
//
// trained so that softmax(z) is the record's subjects, each the same share
// (fit.TrainWordNet). Annotation adds Weight·g_k to the decision value d_k.
// One linear SVM per concept sees neither which words go together nor
// which concepts compete for a record; the shared hidden layer and the
// normalisation over concepts see both.
type WordNet struct {
	Hidden int
	// In is feature-major: In[f*Hidden : (f+1)*Hidden] are feature f's
	// weights into the hidden units, for every feature of the layer
	// (WordLayer.Dim).
	In     []float32
	InBias []float32 // Hidden
	// Out is hidden-unit-major: Out[j*C : (j+1)*C] are unit j's weights
	// into the concepts' logits.
	Out     []float32
	OutBias []float32 // C
	Weight  float64   // of g_k in v_k (tuned; 0: not used)

	// How it was trained (fit.WordNetOptions).
	Epochs int
	Batch  int
	Rate   float64
	Seed   uint64
}

// NetScratch holds LogProb's buffers for reuse; one per goroutine.
type NetScratch struct {
	h []float64
}

// LogProb writes g_k = ln softmax(z)_k into dst (len C) for the vector
// (idx, val) (WordLayer.Vector); features at or beyond the network's
// inputs are ignored.
func (n *WordNet) LogProb(idx []int32, val []float32, sc *NetScratch, dst []float64) {
	H := n.Hidden
	if len(sc.h) < H {
		sc.h = make([]float64, H)
	}
	h := sc.h[:H]
	for j, b := range n.InBias {
		h[j] = float64(b)
	}
	D := len(n.In) / max(H, 1)
	for i, f := range idx {
		if int(f) >= D {
			continue
		}
		x := float64(val[i])
		row := n.In[int(f)*H : int(f)*H+H]
		for j, w := range row {
			h[j] += x * float64(w)
		}
	}
	for k, b := range n.OutBias {
		dst[k] = float64(b)
	}
	C := len(n.OutBias)
	for j, v := range h {
		if v <= 0 {
			continue
		}
		row := n.Out[j*C : j*C+C]
		for k, w := range row {
			dst[k] += v * float64(w)
		}
	}
	LogSoftmax(dst)
}

// LogSoftmax replaces z by ln softmax(z), computed stably (the largest
// entry subtracted first).
func LogSoftmax(z []float64) {
	if len(z) == 0 {
		return
	}
	top := math.Inf(-1)
	for _, v := range z {
		top = max(top, v)
	}
	var s float64
	for _, v := range z {
		s += math.Exp(v - top)
	}
	ls := math.Log(s)
	for k := range z {
		z[k] = (z[k] - top) - ls
	}
}

// validate checks the network's shape against C concepts and D features.
func (n *WordNet) validate(C, D int) error {
	switch {
	case n.Hidden < 1 || n.Hidden > 1<<14:
		return fmt.Errorf("%d hidden units", n.Hidden)
	case len(n.In) != D*n.Hidden || len(n.InBias) != n.Hidden:
		return fmt.Errorf("%d input weights and %d hidden biases for %d features and %d hidden units", len(n.In), len(n.InBias), D, n.Hidden)
	case len(n.Out) != n.Hidden*C || len(n.OutBias) != C:
		return fmt.Errorf("%d output weights and %d biases for %d hidden units and %d concepts", len(n.Out), len(n.OutBias), n.Hidden, C)
	case !finite(n.Weight) || n.Weight < 0 || !finite(n.Rate):
		return fmt.Errorf("weight %v, rate %v", n.Weight, n.Rate)
	}
	for _, s := range [][]float32{n.In, n.InBias, n.Out, n.OutBias} {
		for i, v := range s {
			if !finite(float64(v)) {
				return fmt.Errorf("parameter %d is %v", i, v)
			}
		}
	}
	return nil
}
