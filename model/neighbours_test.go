package model_test

import (
	"math"
	"math/rand/v2"
	"path/filepath"
	"reflect"
	"sort"
	"testing"

	"termgrove/model"
)

// randomRecords returns R unit vectors over features below parts (a few
// features each, values > 0, some records copies of the one before with
// other subjects, so that similarities tie and the tie-break matters) and
// their subjects among C concepts.
func randomRecords(r *rand.Rand, R, parts, C int) ([]map[int32]float64, [][]int32) {
	vecs := make([]map[int32]float64, R)
	subj := make([][]int32, R)
	for i := range vecs {
		if i > 0 && r.IntN(4) == 0 {
			vecs[i] = vecs[i-1] // a copy: ties
		} else {
			vecs[i] = randomQuery(r, parts)
		}
		seen := map[int32]bool{}
		for j := 0; j < 1+r.IntN(3); j++ {
			seen[int32(r.IntN(C))] = true
		}
		for k := range seen {
			subj[i] = append(subj[i], k)
		}
		sort.Slice(subj[i], func(a, b int) bool { return subj[i][a] < subj[i][b] })
	}
	return vecs, subj
}

// indexOf lays records out feature-major as model.Neighbours stores them.
func indexOf(vecs []map[int32]float64, subj [][]int32, parts, n int, power float64) *model.Neighbours {
	nb := &model.Neighbours{N: n, Power: power, Start: make([]int32, parts+1), SubjectStart: []int32{0}}
	recs := make([][]int32, parts)
	for r, v := range vecs {
		for f := range v {
			recs[f] = append(recs[f], int32(r))
		}
	}
	for f, rs := range recs {
		for _, r := range rs {
			nb.Record = append(nb.Record, r)
			nb.Value = append(nb.Value, float32(vecs[r][int32(f)]))
		}
		nb.Start[f+1] = int32(len(nb.Record))
	}
	for _, s := range subj {
		nb.Subject = append(nb.Subject, s...)
		nb.SubjectStart = append(nb.SubjectStart, int32(len(nb.Subject)))
	}
	return nb
}

// TestNeighbourVote: Vote equals the kNN vote computed by brute force —
// every training record's cosine with the query from dense dot products,
// all of them sorted (ties to the lower record), the first N with
// similarity > 0 voting sim^p for each of their concepts, divided by the
// sum of sim^p — and features at or above parts (the lead part) do not
// count. Common practice, no source: the definition in model.Neighbours
// (Yang 1999's kNN), recomputed here.
func TestNeighbourVote(t *testing.T) {
	const R, parts, C = 300, 40, 12
	r := rand.New(rand.NewPCG(11, 12))
	vecs, subj := randomRecords(r, R, parts, C)
	var sc model.NeighbourScratch
	for _, c := range []struct {
		n     int
		power float64
	}{{1, 1}, {5, 2}, {30, 2}, {1000, 0.5}} {
		nb := indexOf(vecs, subj, parts, c.n, c.power)
		for trial := 0; trial < 40; trial++ {
			q := vecs[r.IntN(R)]
			if trial%2 == 1 {
				q = randomQuery(r, parts) // not a training record
			}
			idx, val := sparseOf(q, parts)
			idx = append(idx, parts, parts+3) // a lead part: ignored
			val = append(val, 0.5, 0.5)
			got := make([]float64, C)
			got[0] = 99 // Vote clears dst
			nb.Vote(idx, val, parts, &sc, got)
			// Brute force.
			type rs struct {
				sim float64
				rec int
			}
			var all []rs
			for i, v := range vecs {
				var s float64
				for f, x := range q {
					s += float64(float32(x)) * float64(float32(v[f]))
				}
				if s > 1e-12 {
					all = append(all, rs{s, i})
				}
			}
			sort.Slice(all, func(a, b int) bool {
				if math.Abs(all[a].sim-all[b].sim) > 1e-6 {
					return all[a].sim > all[b].sim
				}
				return all[a].rec < all[b].rec
			})
			want := make([]float64, C)
			var total float64
			for _, e := range all[:min(c.n, len(all))] {
				w := math.Pow(e.sim, c.power)
				total += w
				for _, k := range subj[e.rec] {
					want[k] += w
				}
			}
			for k := range want {
				if total > 0 {
					want[k] /= total
				}
				if math.Abs(got[k]-want[k]) > 1e-5 {
					t.Fatalf("N %d, power %v, trial %d: K_%d = %v, brute force %v", c.n, c.power, trial, k, got[k], want[k])
				}
			}
		}
	}
	// A query sharing no feature with any record votes for nothing.
	nb := indexOf(vecs, subj, parts+1, 5, 2)
	got := make([]float64, C)
	nb.Vote([]int32{parts}, []float32{1}, parts+1, &sc, got)
	for k, v := range got {
		if v != 0 {
			t.Fatalf("no shared feature: K_%d = %v", k, v)
		}
	}
}

// randomQuery is a unit vector over a few features below parts.
func randomQuery(r *rand.Rand, parts int) map[int32]float64 {
	q := map[int32]float64{}
	var ss float64
	for j := 0; j < 1+r.IntN(6); j++ {
		q[int32(r.IntN(parts))] = 0.1 + r.Float64()
	}
	for _, x := range q {
		ss += x * x
	}
	for f := range q {
		q[f] /= math.Sqrt(ss)
	}
	return q
}

// TestNeighboursRoundTrip: a version 4 layer keeps its vote through Save
// and Load; a version 3 layer may not carry one; broken votes are not
// saved. Common practice, no source.
func TestNeighboursRoundTrip(t *testing.T) {
	m := small()
	W := len(m.Words)
	m.Calibration = &model.Calibration{A: make([]float64, m.C), B: make([]float64, m.C)}
	l := &model.WordLayer{Version: model.WordLayerVersion, IDF: make([]float32, W), Start: make([]int32, W+1),
		Bias: make([]float32, m.C), LnFreq: make([]float32, m.C), ScaleA: 1}
	r := rand.New(rand.NewPCG(1, 1))
	vecs, subj := randomRecords(r, 20, W, m.C)
	l.KNN = indexOf(vecs, subj, W, 3, 2)
	l.KNN.Weight = 0.3
	m.WordLayer = l
	got := saveLoad(t, m)
	p := filepath.Join(t.TempDir(), "m.grove")
	if !reflect.DeepEqual(got.WordLayer.KNN, l.KNN) {
		t.Error("neighbour vote changed by Save and Load")
	}
	for name, bad := range map[string]func(n *model.Neighbours, l *model.WordLayer){
		"version 3":       func(n *model.Neighbours, l *model.WordLayer) { l.Version = 3 },
		"no neighbours":   func(n *model.Neighbours, l *model.WordLayer) { n.N = 0 },
		"NaN power":       func(n *model.Neighbours, l *model.WordLayer) { n.Power = math.NaN() },
		"negative weight": func(n *model.Neighbours, l *model.WordLayer) { n.Weight = -1 },
		"short starts":    func(n *model.Neighbours, l *model.WordLayer) { n.Start = n.Start[1:] },
		"record":          func(n *model.Neighbours, l *model.WordLayer) { n.Record[0] = 20 },
		"subject":         func(n *model.Neighbours, l *model.WordLayer) { n.Subject[0] = int32(m.C) },
		"subject starts":  func(n *model.Neighbours, l *model.WordLayer) { n.SubjectStart[3] = 1000 },
	} {
		c, n := *l, *l.KNN
		n.Start, n.Record, n.Subject, n.SubjectStart = clone(n.Start), clone(n.Record), clone(n.Subject), clone(n.SubjectStart)
		c.KNN = &n
		bad(&n, &c)
		m.WordLayer = &c
		if err := model.Save(p, m); err == nil {
			t.Errorf("%s: bad neighbour vote saved", name)
		}
	}
	v3 := *l
	v3.Version, v3.KNN = 3, nil // before the vote: still read
	m.WordLayer = &v3
	if err := model.Save(p, m); err != nil {
		t.Errorf("version 3 layer: %v", err)
	} else if got, err := model.Load(p); err != nil || got.WordLayer.Version != 3 || got.WordLayer.KNN != nil {
		t.Errorf("version 3 layer loaded: %v", err)
	}
}

func clone(s []int32) []int32 { return append([]int32(nil), s...) }

// BenchmarkNeighbourVote: one vote over 24,000 random records of 40
// features among 30,000 with Zipf-like feature frequencies (about the
// debtags train split's size), query of 40 features.
func BenchmarkNeighbourVote(b *testing.B) {
	const R, parts, C = 24000, 30000, 640
	r := rand.New(rand.NewPCG(3, 3))
	z := rand.NewZipf(rand.New(rand.NewPCG(4, 4)), 1.1, 10, parts-1)
	draw := func() map[int32]float64 {
		v := map[int32]float64{}
		for len(v) < 40 {
			v[int32(z.Uint64())] = 0.1 + r.Float64()
		}
		return v
	}
	vecs := make([]map[int32]float64, R)
	subj := make([][]int32, R)
	for i := range vecs {
		vecs[i] = draw()
		k := int32(r.IntN(C - 3))
		subj[i] = []int32{k, k + 1, k + 3}
	}
	nb := indexOf(vecs, subj, parts, 30, 2)
	q := draw()
	idx, val := sparseOf(q, parts)
	var sc model.NeighbourScratch
	dst := make([]float64, C)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		nb.Vote(idx, val, parts, &sc, dst)
	}
}

// sparseOf lists q's features in increasing order with their values.
func sparseOf(q map[int32]float64, parts int) ([]int32, []float32) {
	var idx []int32
	var val []float32
	for f := int32(0); f < int32(parts); f++ {
		if x, ok := q[f]; ok {
			idx = append(idx, f)
			val = append(val, float32(x))
		}
	}
	return idx, val
}
