package api

import (
	"reflect"
	"testing"

	"termgrove/annotate"
)

func TestResultToProtoRoundTrip(t *testing.T) {
	res := annotate.Result{
		ID: "r1", Uncovered: 0.25, Tokens: 12, Language: "en", Fallback: true, Invalid: 1, Unknown: 2,
		UnknownSubjects: []string{"http://ex.org/gone"},
		Concepts: []annotate.Concept{
			{IRI: "http://ex.org/c/cats", Label: "Cats", Score: 0.5,
				Path:    []annotate.PathNode{{IRI: "http://ex.org/c/animals", Label: "Animals", Score: 0.6}, {IRI: "http://ex.org/c/cats", Label: "Cats", Score: 0.5}},
				Support: []annotate.Support{{Term: "cat", Weight: 0.7}, {Term: "purr", Weight: 0.3}}},
			{IRI: "http://ex.org/c/lone", Label: "Lone", Score: 0.2,
				Path: []annotate.PathNode{{IRI: "http://ex.org/c/lone", Label: "Lone", Score: 0.2}}},
			{IRI: "http://ex.org/c/dogs", Label: "Dogs", Score: 0.1,
				Path:    []annotate.PathNode{{IRI: "http://ex.org/c/animals", Label: "Animals", Score: 0.6}, {IRI: "http://ex.org/c/dogs", Label: "Dogs", Score: 0.1}},
				Support: []annotate.Support{{Term: "bark", Weight: 1}}},
		},
		Words: []annotate.Word{{Start: 0, End: 3, Text: "Cat", Term: "cat", Concept: "http://ex.org/c/cats", P: 0.9}, {Start: 4, End: 8, Text: "rain", Term: "rain", P: 0.5}},
	}
	p := ResultToProto(&res)
	back := ResultFromProto(p)
	if !reflect.DeepEqual(back, res) {
		t.Fatalf("round trip:\n got %+v\nwant %+v", back, res)
	}
	// Each message is its own: the shared arrays do not alias across concepts.
	if p.Concepts[0].Path[0] == p.Concepts[2].Path[0] || &p.Concepts[0].Support[1] == &p.Concepts[2].Support[0] {
		t.Fatal("messages shared between concepts")
	}
	if got := p.Concepts[1].GetSupport(); len(got) != 0 {
		t.Fatalf("support of a concept without any: %v", got)
	}
	// Appending to one concept's slice must not overwrite the next one's.
	p.Concepts[0].Path = append(p.Concepts[0].Path, p.Concepts[0].Path[0])
	if p.Concepts[1].Path[0].GetIri() != "http://ex.org/c/lone" {
		t.Fatal("append to one concept's path overwrote the next concept's")
	}
	empty := ResultToProto(&annotate.Result{ID: "e"})
	if empty.GetId() != "e" || len(empty.GetConcepts()) != 0 || len(empty.GetWords()) != 0 {
		t.Fatalf("empty result: %v", empty)
	}
}
