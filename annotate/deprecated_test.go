package annotate

import "testing"

// A deprecated concept keeps its topic but is never suggested. Common
// practice in indexing, no source: a retired heading must not be assigned.
func TestDeprecatedNotSuggested(t *testing.T) {
	m, _ := barsModel(6, 10000)
	var ids []int32
	for i := 0; i < 30; i++ {
		ids = append(ids, int32(5*(1+i%4))) // bar 1
	}
	text, toks := tokens(ids, m.Words)
	a, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	res, err := a.AnnotateTokens("r", text, toks, Options{Top: 3})
	if err != nil || len(res.Concepts) == 0 {
		t.Fatalf("annotate: %v %+v", err, res)
	}
	best := res.Concepts[0].IRI
	k, ok := m.ConceptIndex(best)
	if !ok {
		t.Fatalf("%s not in the scheme", best)
	}
	m.Scheme.Concepts[k].Deprecated = true
	a, err = New(m)
	if err != nil {
		t.Fatal(err)
	}
	res, err = a.AnnotateTokens("r", text, toks, Options{Top: 3})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Concepts) != 3 {
		t.Errorf("%d concepts returned for Top 3: the next concept must take the deprecated one's place", len(res.Concepts))
	}
	for _, c := range res.Concepts {
		if c.IRI == best {
			t.Errorf("deprecated %s still suggested with %v", best, c.Score)
		}
	}
}
