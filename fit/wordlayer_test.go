package fit

import (
	"math/rand/v2"
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
