package model_test

import (
	"errors"
	"math"
	"math/rand/v2"
	"path/filepath"
	"reflect"
	"testing"

	"termgrove/model"
)

// randomNet returns a network of H hidden units over D features and C
// concepts with weights from N(0, 1).
func randomNet(r *rand.Rand, H, D, C int) *model.WordNet {
	n := &model.WordNet{Hidden: H, In: make([]float32, D*H), InBias: make([]float32, H), Out: make([]float32, H*C), OutBias: make([]float32, C),
		Weight: 0.05, Epochs: 3, Batch: 16, Rate: 0.01, Seed: 2}
	for _, s := range [][]float32{n.In, n.InBias, n.Out, n.OutBias} {
		for i := range s {
			s[i] = float32(r.NormFloat64())
		}
	}
	return n
}

// TestWordNetLogProb: LogProb equals ln softmax of the logits computed
// with dense loops (h = max(0, b1 + W1ᵀx), z = b2 + W2ᵀh), its
// probabilities sum to 1, and features beyond the inputs are ignored.
// LogSoftmax stays finite for logits near the float limit.
// Common practice, no source: the definition in model.WordNet.
func TestWordNetLogProb(t *testing.T) {
	const H, D, C = 7, 30, 9
	r := rand.New(rand.NewPCG(6, 6))
	n := randomNet(r, H, D, C)
	var sc model.NetScratch
	for trial := 0; trial < 20; trial++ {
		x := make([]float64, D)
		var idx []int32
		var val []float32
		for f := 0; f < D; f++ {
			if r.IntN(4) == 0 {
				x[f] = r.Float64()
				idx, val = append(idx, int32(f)), append(val, float32(x[f]))
				x[f] = float64(float32(x[f]))
			}
		}
		got := make([]float64, C)
		n.LogProb(append(idx, D+3), append(val, 5), &sc, got)
		h := make([]float64, H)
		for j := range h {
			h[j] = float64(n.InBias[j])
			for f := 0; f < D; f++ {
				h[j] += x[f] * float64(n.In[f*H+j])
			}
			h[j] = math.Max(h[j], 0)
		}
		var sum, psum float64
		z := make([]float64, C)
		for k := range z {
			z[k] = float64(n.OutBias[k])
			for j := range h {
				z[k] += h[j] * float64(n.Out[j*C+k])
			}
			sum += math.Exp(z[k])
		}
		for k := range z {
			if want := z[k] - math.Log(sum); math.Abs(got[k]-want) > 1e-9 {
				t.Fatalf("trial %d, concept %d: %v, dense %v", trial, k, got[k], want)
			}
			psum += math.Exp(got[k])
		}
		if math.Abs(psum-1) > 1e-12 {
			t.Fatalf("trial %d: probabilities sum to %v", trial, psum)
		}
	}
	z := []float64{1e308, 1e308, 0}
	model.LogSoftmax(z)
	if math.Abs(z[0]-(-math.Ln2)) > 1e-12 || !math.IsInf(z[2], -1) && z[2] > -1e300 {
		t.Errorf("log-softmax of huge logits: %v", z)
	}
}

// TestWordNetRoundTrip: a version 5 layer's network survives Save and
// Load; a network of the wrong shape, with non-finite or negative weights,
// or in a layer of version 4 is refused; a version 4 layer without one
// still loads; a version above this build's is refused with ErrVersion
// (as builds before version 5 refuse this one's files).
// Common practice, no source.
func TestWordNetRoundTrip(t *testing.T) {
	m := small()
	W := len(m.Words)
	m.Calibration = &model.Calibration{A: make([]float64, m.C), B: make([]float64, m.C)}
	l := &model.WordLayer{Version: model.WordLayerVersion, Lead: 0.5, IDF: make([]float32, 2*W), Start: make([]int32, 2*W+1),
		Bias: make([]float32, m.C), LnFreq: make([]float32, m.C), ScaleA: 1}
	r := rand.New(rand.NewPCG(2, 2))
	l.Net = randomNet(r, 4, l.Dim(W), m.C)
	m.WordLayer = l
	got := saveLoad(t, m)
	if !reflect.DeepEqual(got.WordLayer.Net, l.Net) {
		t.Error("network changed by Save and Load")
	}
	p := filepath.Join(t.TempDir(), "m.grove")
	for name, bad := range map[string]func(n *model.WordNet, l *model.WordLayer){
		"version 4":       func(n *model.WordNet, l *model.WordLayer) { l.Version = 4 },
		"no hidden units": func(n *model.WordNet, l *model.WordLayer) { n.Hidden = 0 },
		"short inputs":    func(n *model.WordNet, l *model.WordLayer) { n.In = n.In[n.Hidden:] },
		"short outputs":   func(n *model.WordNet, l *model.WordLayer) { n.Out = n.Out[1:] },
		"short biases":    func(n *model.WordNet, l *model.WordLayer) { n.OutBias = n.OutBias[1:] },
		"NaN input":       func(n *model.WordNet, l *model.WordLayer) { n.In[3] = float32(math.NaN()) },
		"Inf output":      func(n *model.WordNet, l *model.WordLayer) { n.Out[2] = float32(math.Inf(1)) },
		"negative weight": func(n *model.WordNet, l *model.WordLayer) { n.Weight = -0.1 },
	} {
		c, n := *l, *l.Net
		n.In, n.Out = append([]float32(nil), n.In...), append([]float32(nil), n.Out...)
		c.Net = &n
		bad(&n, &c)
		m.WordLayer = &c
		if err := model.Save(p, m); err == nil {
			t.Errorf("%s: bad network saved", name)
		}
	}
	v4 := *l
	v4.Version, v4.Net = 4, nil // before the network: still read
	m.WordLayer = &v4
	if err := model.Save(p, m); err != nil {
		t.Errorf("version 4 layer: %v", err)
	} else if got, err := model.Load(p); err != nil || got.WordLayer.Version != 4 || got.WordLayer.Net != nil {
		t.Errorf("version 4 layer loaded: %v", err)
	}
	next := *l
	next.Version = model.WordLayerVersion + 1
	m.WordLayer = &next
	if err := model.Save(p, m); !errors.Is(err, model.ErrVersion) {
		t.Errorf("layer version %d: %v, want ErrVersion", next.Version, err)
	}
}
