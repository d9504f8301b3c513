package fit

import (
	"math"
	"reflect"
	"testing"

	"termgrove/model"
	"termgrove/prior"
)

// TestAnchorSubjects: with Options.Anchor a record without subjects may use
// the concepts whose label terms it contains (not those named only by
// note-weight terms), a record naming none only the free topics, and an
// indexed record keeps its subjects. Common practice, no source.
func TestAnchorSubjects(t *testing.T) {
	p := &prior.Prior{Lambda: 5, Beta0: 0.01, Rows: [][]prior.Entry{
		{{Word: 0, Weight: 0.5}, {Word: 1, Weight: 0.45}, {Word: 2, Weight: 0.05}}, // label words 0, 1; note word 2
		{{Word: 1, Weight: 1}},
		{},
	}}
	c := &Corpus{W: 5, Docs: []Doc{
		{ID: "a", Words: []int32{0, 3}},
		{ID: "b", Words: []int32{1, 1}},
		{ID: "c", Words: []int32{2, 3, 4}},
		{ID: "d", Words: []int32{4}, Subjects: []int32{2}},
	}}
	st, err := newState(p, c, Options{FreeTopics: 2, Workers: 1, Anchor: true})
	if err != nil {
		t.Fatal(err)
	}
	want := [][]int32{{0}, {0, 1}, {}, {2}}
	for i, d := range st.docs {
		if d.subjects == nil || !reflect.DeepEqual(d.subjects, want[i]) {
			t.Errorf("record %s: allowed concepts %v, want %v", st.ids[i], d.subjects, want[i])
		}
	}
	st.initAssign()
	for i := 0; i < 3; i++ {
		st.sweepOnce()
	}
	for di, d := range st.docs {
		for i := d.start; i < d.end; i++ {
			if k := st.z[i]; int(k) < st.C && !contains32(d.subjects, k) {
				t.Fatalf("record %s: token on concept %d outside %v", st.ids[di], k, d.subjects)
			}
		}
	}
	if _, err := newState(p, c, Options{Anchor: true}); err == nil {
		t.Error("Anchor without free topics accepted")
	}
	st, err = newState(p, c, Options{FreeTopics: 2, Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	if st.docs[0].subjects != nil {
		t.Error("record restricted without Anchor")
	}
}

func contains32(s []int32, k int32) bool {
	for _, v := range s {
		if v == k {
			return true
		}
	}
	return false
}

// TestRelated: the related rows hold the positive lifts P(k|j) − P(k) over
// the records people indexed (anchored records left out), worked by hand.
// Source: Rubin et al. 2012 (Dependency-LDA) for the idea; the figures are
// this test's own arithmetic.
func TestRelated(t *testing.T) {
	p := &prior.Prior{Lambda: 5, Beta0: 0.01, Rows: [][]prior.Entry{
		{{Word: 0, Weight: 1}}, {{Word: 1, Weight: 1}}, {{Word: 2, Weight: 1}},
	}}
	c := &Corpus{W: 4, Docs: []Doc{
		{ID: "a", Words: []int32{0, 1}, Subjects: []int32{0, 1}},
		{ID: "b", Words: []int32{0, 3}, Subjects: []int32{1, 0}},
		{ID: "c", Words: []int32{2}, Subjects: []int32{2}},
		{ID: "d", Words: []int32{0}, Subjects: []int32{0}},
		{ID: "e", Words: []int32{0, 2}}, // anchored to 0 and 2: not a person's choice
	}}
	st, err := newState(p, c, Options{FreeTopics: 1, Workers: 1, Anchor: true})
	if err != nil {
		t.Fatal(err)
	}
	// D = 4 indexed records; df = 3, 2, 1.
	want := [][]model.ConceptWeight{
		{{Concept: 0, Weight: 1 - 0.75}, {Concept: 1, Weight: 2.0/3 - 0.5}},
		{{Concept: 0, Weight: 1 - 0.75}, {Concept: 1, Weight: 1 - 0.5}},
		{{Concept: 2, Weight: 1 - 0.25}},
	}
	got := st.related()
	for j := range want {
		if len(got[j]) != len(want[j]) {
			t.Fatalf("row %d = %v, want %v", j, got[j], want[j])
		}
		for i := range want[j] {
			if got[j][i].Concept != want[j][i].Concept || math.Abs(got[j][i].Weight-want[j][i].Weight) > 1e-12 {
				t.Errorf("row %d = %v, want %v", j, got[j], want[j])
			}
		}
	}
	c.Docs = c.Docs[4:]
	st, err = newState(p, c, Options{FreeTopics: 1, Workers: 1, Anchor: true})
	if err != nil {
		t.Fatal(err)
	}
	if r := st.related(); r != nil {
		t.Errorf("related rows without indexed records: %v", r)
	}
}
