package fit

import (
	"math"
	"math/rand/v2"
	"reflect"
	"testing"

	"termgrove/model"
)

// TestWordLayerLead: people assign concept 0 to the records whose lead
// paragraph (title) holds a marker word, concept 1 to the others, and every
// record holds the marker once. Over the whole text's words the two are
// alike; the lead part tells them apart. Source: the purpose of the lead
// features, on synthetic data.
func TestWordLayerLead(t *testing.T) {
	const W, marker = 50, 49
	r := rand.New(rand.NewPCG(7, 8))
	doc := func(i int) Doc {
		d := Doc{Lead: 3}
		for j := 0; j < 12; j++ {
			d.Words = append(d.Words, int32(r.IntN(W-1)))
		}
		inLead := i%2 == 0
		if inLead {
			d.Words[r.IntN(3)] = marker
			d.Subjects = []int32{0}
		} else {
			d.Words[3+r.IntN(9)] = marker
			d.Subjects = []int32{1}
		}
		return d
	}
	c := &Corpus{W: W}
	for i := 0; i < 400; i++ {
		c.Docs = append(c.Docs, doc(i))
	}
	var test []Doc
	for i := 0; i < 200; i++ {
		test = append(test, doc(i))
	}
	accuracy := func(lead float64) float64 {
		l, err := TrainWordLayer(c, 2, WordLayerOptions{Lead: lead, Workers: 2})
		if err != nil {
			t.Fatal(err)
		}
		if lead > 0 && (l.Lead != lead || len(l.IDF) != 2*W) || lead < 0 && (l.Lead != 0 || len(l.IDF) != W) {
			t.Fatalf("lead %v: layer lead %v, %d IDF values", lead, l.Lead, len(l.IDF))
		}
		var sc model.VectorScratch
		right := 0
		d := make([]float64, 2)
		for _, doc := range test {
			idx, val := l.Vector(doc.Words, int(doc.Lead), W, &sc, nil, nil)
			l.Decision(idx, val, d)
			if (d[0] > d[1]) == (doc.Subjects[0] == 0) {
				right++
			}
		}
		return float64(right) / float64(len(test))
	}
	if a := accuracy(0.5); a < 0.95 {
		t.Errorf("with the lead part: accuracy %.2f, want ≥ 0.95", a)
	}
	if a := accuracy(-1); a > 0.75 {
		t.Errorf("without the lead part: accuracy %.2f, want about one half", a)
	}
}

// TestWordLayerLabels: concept 2 has no record people indexed, only its
// label term (word 55, which records of the other concepts use too).
// Learning the label as a record of concept 2 gives the concept weight on
// that word; without label records it gets none. Concept 3's label (word
// 59) is in no record, so it has no IDF and no label record. Source: the
// purpose of the label records, on synthetic data.
func TestWordLayerLabels(t *testing.T) {
	const W = 60
	r := rand.New(rand.NewPCG(3, 4))
	c := &Corpus{W: W}
	for i := 0; i < 300; i++ {
		d := Doc{Subjects: []int32{int32(i % 2)}}
		d.Words = append(d.Words, int32(50+i%2))
		for j := 0; j < 10; j++ {
			d.Words = append(d.Words, int32(r.IntN(40)))
		}
		if i%10 == 0 {
			d.Words = append(d.Words, 55)
		}
		c.Docs = append(c.Docs, d)
	}
	labels := [][]int32{{50}, {51}, {55}, {59}}
	with, err := TrainWordLayer(c, 4, WordLayerOptions{Labels: labels, LabelWeight: 2, Lead: -1})
	if err != nil {
		t.Fatal(err)
	}
	without, err := TrainWordLayer(c, 4, WordLayerOptions{Labels: labels, LabelWeight: -1, Lead: -1})
	if err != nil {
		t.Fatal(err)
	}
	if with.Labels != 3 || with.LabelWeight != 2 || without.Labels != 0 || without.LabelWeight != 0 {
		t.Fatalf("label records %d (weight %v) with, %d (weight %v) without; want 3 (2), 0 (0)",
			with.Labels, with.LabelWeight, without.Labels, without.LabelWeight)
	}
	if with.LnFreq[2] != 0 {
		t.Errorf("ln frequency of concept 2 %v: label records are not indexed records", with.LnFreq[2])
	}
	lift := func(l *model.WordLayer) float64 {
		var sc model.VectorScratch
		d1, d0 := make([]float64, 4), make([]float64, 4)
		seq := []int32{3, 7, 11, 55}
		idx, val := l.Vector(seq, 0, W, &sc, nil, nil)
		l.Decision(idx, val, d1)
		idx, val = l.Vector(seq[:3], 0, W, &sc, nil, nil)
		l.Decision(idx, val, d0)
		return d1[2] - d0[2]
	}
	if got := lift(with); got < 0.1 {
		t.Errorf("with label records word 55 raises concept 2 by %v, want ≥ 0.1", got)
	}
	if got := lift(without); got != 0 {
		t.Errorf("without label records word 55 raises concept 2 by %v, want 0", got)
	}
}

// LabelTerms keeps label words and phrases, not the words of notes.
// Weights as prior.Build's defaults give them (pref 1, its two words 0.5
// each, a note word 0.1, before normalising).
func TestLabelTerms(t *testing.T) {
	rows := [][]model.WordWeight{
		{{Word: 1, Weight: 0.25}, {Word: 4, Weight: 0.05}, {Word: 7, Weight: 0.5}, {Word: 9, Weight: 0.25}},
		nil,
		{{Word: 2, Weight: 1}},
	}
	got := LabelTerms(rows)
	want := [][]int32{{1, 7, 9}, nil, {2}}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("LabelTerms = %v, want %v", got, want)
	}
}

// TestWordLayerCRecords: with CRecords 100, concept 0 (300 records) is
// trained with C·√(100/300) and concept 1 (100 records) with C, so each
// decides as in a layer trained with that C for every concept.
func TestWordLayerCRecords(t *testing.T) {
	const W = 40
	r := rand.New(rand.NewPCG(5, 6))
	c := &Corpus{W: W}
	for i := 0; i < 400; i++ {
		d := Doc{Subjects: []int32{0}}
		if i%4 == 0 {
			d.Subjects[0] = 1
			d.Words = append(d.Words, int32(30+r.IntN(10)))
		}
		for j := 0; j < 8; j++ {
			d.Words = append(d.Words, int32(r.IntN(35)))
		}
		c.Docs = append(c.Docs, d)
	}
	train := func(C float64, cr int) *model.WordLayer {
		l, err := TrainWordLayer(c, 2, WordLayerOptions{C: C, CRecords: cr, Prune: -1, Lead: -1})
		if err != nil {
			t.Fatal(err)
		}
		return l
	}
	sched, one, small := train(0.3, 100), train(0.3, -1), train(0.3*math.Sqrt(100.0/300), -1)
	if sched.CRecords != 100 || one.CRecords != 0 {
		t.Fatalf("CRecords %d and %d, want 100 and 0", sched.CRecords, one.CRecords)
	}
	var sc model.VectorScratch
	got, wantOne, wantSmall := make([]float64, 2), make([]float64, 2), make([]float64, 2)
	var moved float64
	for _, d := range c.Docs[:50] {
		idx, val := sched.Vector(d.Words, 0, W, &sc, nil, nil)
		sched.Decision(idx, val, got)
		one.Decision(idx, val, wantOne)
		small.Decision(idx, val, wantSmall)
		if math.Abs(got[0]-wantSmall[0]) > 1e-9 || math.Abs(got[1]-wantOne[1]) > 1e-9 {
			t.Fatalf("decisions %v, want concept 0 %v (small C), concept 1 %v (C)", got, wantSmall[0], wantOne[1])
		}
		moved = max(moved, math.Abs(got[0]-wantOne[0]))
	}
	if moved < 1e-3 {
		t.Errorf("the smaller C moved concept 0's decisions by only %v", moved)
	}
}

// TestWordLayerNeighbours: the layer's neighbour vote stores each indexed
// record's whole-text vector (the first part of WordLayer.Vector, lead
// part left out) and its subjects, records in corpus order without the
// unindexed and skipped ones; a record's own vote then ranks it first (its
// similarity to itself is 1); Neighbours 0 stores none. Common practice,
// no source: the definition in model.Neighbours, recomputed here.
func TestWordLayerNeighbours(t *testing.T) {
	const W = 30
	r := rand.New(rand.NewPCG(9, 10))
	c := &Corpus{W: W}
	for i := 0; i < 60; i++ {
		d := Doc{Lead: 2}
		for j := 0; j < 6; j++ {
			d.Words = append(d.Words, int32(r.IntN(W)))
		}
		if i%5 != 0 { // every fifth unindexed
			d.Subjects = []int32{int32(r.IntN(4)), int32(4 + r.IntN(2))}
		}
		c.Docs = append(c.Docs, d)
	}
	skip := func(i int) bool { return i%7 == 0 }
	l, err := TrainWordLayer(c, 6, WordLayerOptions{Skip: skip, Neighbours: 30})
	if err != nil {
		t.Fatal(err)
	}
	nb := l.KNN
	if nb == nil || nb.N != 30 || nb.Power != DefaultWordNeighbourPower || nb.Weight != 0 {
		t.Fatalf("vote %+v, want N 30, power %v, weight 0", nb, DefaultWordNeighbourPower)
	}
	// Rebuild each stored record's vector from the postings.
	stored := make([]map[int32]float32, nb.Records())
	for i := range stored {
		stored[i] = map[int32]float32{}
	}
	for f := 0; f < W; f++ {
		for j := nb.Start[f]; j < nb.Start[f+1]; j++ {
			stored[nb.Record[j]][int32(f)] = nb.Value[j]
		}
	}
	var sc model.VectorScratch
	var nsc model.NeighbourScratch
	K := make([]float64, 6)
	n := 0
	for i, d := range c.Docs {
		if len(d.Subjects) == 0 || skip(i) {
			continue
		}
		idx, val := l.Vector(d.Words, int(d.Lead), W, &sc, nil, nil)
		want := map[int32]float32{}
		for j, f := range idx {
			if f < W {
				want[f] = val[j]
			}
		}
		if !reflect.DeepEqual(stored[n], want) {
			t.Fatalf("record %d (stored %d): vector %v, want %v", i, n, stored[n], want)
		}
		subj := nb.Subject[nb.SubjectStart[n]:nb.SubjectStart[n+1]]
		if !reflect.DeepEqual(subj, d.Subjects) {
			t.Fatalf("record %d: subjects %v, want %v", i, subj, d.Subjects)
		}
		one := *nb
		one.N = 1
		one.Vote(idx, val, W, &nsc, K)
		for _, k := range d.Subjects {
			if math.Abs(K[k]-1) > 1e-6 {
				t.Fatalf("record %d: its own vote K_%d = %v, want 1", i, k, K[k])
			}
		}
		n++
	}
	if n != nb.Records() {
		t.Fatalf("%d records stored, want %d", nb.Records(), n)
	}
	if l, err := TrainWordLayer(c, 6, WordLayerOptions{}); err != nil || l.KNN != nil {
		t.Errorf("Neighbours 0: vote %v, %v", l.KNN, err)
	}
}
