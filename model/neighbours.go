package model

import (
	"container/heap"
	"fmt"
	"math"
)

// Neighbours is the word layer's nearest-neighbour vote (WordLayer.KNN,
// version 4): the whole-text part of the vectors of the records the layer
// was trained on, stored feature-major, and the concepts people indexed
// each with. For a record with whole-text vector x, its N most similar
// training records r (cosine x·x_r, both unit length; records sharing no
// feature with x do not take part) vote
//
//	K_k = Σ_r sim_r^Power·[k ∈ subjects(r)] / Σ_r sim_r^Power
//
// (the similarity-weighted share of them people gave k), and annotation
// adds Weight·K_k to the decision value d_k. It is the classic kNN
// classifier of text categorisation (Yang 1999, "An evaluation of
// statistical approaches to text categorization"), as a third term of the
// word layer's combination: it brings in which concepts people assign
// together, which one SVM per concept cannot see.
type Neighbours struct {
	N      int     // records that vote
	Power  float64 // similarities are raised to it
	Weight float64 // of K_k in v_k (tuned; 0: the vote is not used)
	// Start[f]..Start[f+1] index Record and Value: the training records
	// with feature f of the whole-text part (features below W + Bigrams),
	// records ascending, and their x_f.
	Start  []int32
	Record []int32
	Value  []float32
	// SubjectStart[r]..SubjectStart[r+1] index Subject: record r's
	// concepts, ascending.
	SubjectStart []int32
	Subject      []int32
}

// Records is the number of training records the vote searches.
func (n *Neighbours) Records() int { return len(n.SubjectStart) - 1 }

// NeighbourScratch holds Vote's buffers for reuse; one per goroutine.
type NeighbourScratch struct {
	acc     []float32
	touched []int32
	top     simHeap
}

// Vote writes K_k (Neighbours) into dst (len C): idx and val are a
// record's vector (WordLayer.Vector, indices ascending); only its
// features below parts (W + Bigrams, the whole-text part) count. A
// record that shares no feature with any training record gets K = 0.
func (n *Neighbours) Vote(idx []int32, val []float32, parts int, sc *NeighbourScratch, dst []float64) {
	clear(dst)
	R := n.Records()
	if len(sc.acc) < R {
		sc.acc = make([]float32, R)
	}
	acc := sc.acc
	sc.touched = sc.touched[:0]
	for i, f := range idx {
		if int(f) >= parts || int(f)+1 >= len(n.Start) {
			break
		}
		x := val[i]
		for j := n.Start[f]; j < n.Start[f+1]; j++ {
			r := n.Record[j]
			if acc[r] == 0 {
				sc.touched = append(sc.touched, r)
			}
			acc[r] += x * n.Value[j]
		}
	}
	// The N most similar, by a min-heap on (similarity, −record): ties go
	// to the lower record, so the vote does not depend on visiting order.
	sc.top = sc.top[:0]
	for _, r := range sc.touched {
		s := acc[r]
		acc[r] = 0
		if !(s > 0) {
			continue
		}
		e := simRecord{s, r}
		if len(sc.top) < n.N {
			heap.Push(&sc.top, e)
		} else if e.above(sc.top[0]) {
			sc.top[0] = e
			heap.Fix(&sc.top, 0)
		}
	}
	var total float64
	for _, e := range sc.top {
		w := math.Pow(float64(e.sim), n.Power)
		total += w
		for j := n.SubjectStart[e.rec]; j < n.SubjectStart[e.rec+1]; j++ {
			if k := n.Subject[j]; int(k) < len(dst) {
				dst[k] += w
			}
		}
	}
	if total > 0 {
		for k := range dst {
			dst[k] /= total
		}
	}
}

// simRecord is a training record and its similarity to the query.
type simRecord struct {
	sim float32
	rec int32
}

// above orders by similarity, then by lower record.
func (a simRecord) above(b simRecord) bool {
	return a.sim > b.sim || (a.sim == b.sim && a.rec < b.rec)
}

// simHeap is a min-heap: its root is the least of the kept records.
type simHeap []simRecord

func (h simHeap) Len() int           { return len(h) }
func (h simHeap) Less(i, j int) bool { return h[j].above(h[i]) }
func (h simHeap) Swap(i, j int)      { h[i], h[j] = h[j], h[i] }
func (h *simHeap) Push(x any)        { *h = append(*h, x.(simRecord)) }
func (h *simHeap) Pop() any {
	old := *h
	e := old[len(old)-1]
	*h = old[:len(old)-1]
	return e
}

// validate checks the vote's shape against C concepts and parts features.
func (n *Neighbours) validate(C, parts int) error {
	switch {
	case n.N < 1 || n.N > 1<<20:
		return fmt.Errorf("%d voting neighbours", n.N)
	case !finite(n.Power) || n.Power <= 0 || n.Power > 100 || !finite(n.Weight) || n.Weight < 0:
		return fmt.Errorf("power %v, weight %v", n.Power, n.Weight)
	case len(n.Start) != parts+1 || n.Start[0] != 0 || int(n.Start[parts]) != len(n.Record) || len(n.Record) != len(n.Value):
		return fmt.Errorf("%d feature starts for %d features, %d records, %d values", len(n.Start), parts, len(n.Record), len(n.Value))
	case len(n.SubjectStart) < 1 || n.SubjectStart[0] != 0 || int(n.SubjectStart[len(n.SubjectStart)-1]) != len(n.Subject):
		return fmt.Errorf("%d subject starts for %d subjects", len(n.SubjectStart), len(n.Subject))
	}
	R := n.Records()
	for f := 0; f < parts; f++ {
		if n.Start[f+1] < n.Start[f] {
			return fmt.Errorf("feature %d: start %d..%d", f, n.Start[f], n.Start[f+1])
		}
		for j := n.Start[f]; j < n.Start[f+1]; j++ {
			if r := n.Record[j]; r < 0 || int(r) >= R || (j > n.Start[f] && r <= n.Record[j-1]) || !finite(float64(n.Value[j])) {
				return fmt.Errorf("feature %d: entry %d (record %d, value %v) out of range or order", f, j, r, n.Value[j])
			}
		}
	}
	for r := 0; r < R; r++ {
		if n.SubjectStart[r+1] < n.SubjectStart[r] {
			return fmt.Errorf("record %d: subjects %d..%d", r, n.SubjectStart[r], n.SubjectStart[r+1])
		}
		for j := n.SubjectStart[r]; j < n.SubjectStart[r+1]; j++ {
			if k := n.Subject[j]; k < 0 || int(k) >= C || (j > n.SubjectStart[r] && k <= n.Subject[j-1]) {
				return fmt.Errorf("record %d: subject %d out of range or order", r, k)
			}
		}
	}
	return nil
}
