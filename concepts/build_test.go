package concepts

import (
	"errors"
	"reflect"
	"strings"
	"testing"
)

// A scheme that uses every construct the loader maps. Expected values
// follow the SKOS Reference's semantics (cited per assertion).
const richGraph = `
ex:s a skos:ConceptScheme
ex:s dct:title "Test scheme"@en
ex:s skos:hasTopConcept ex:top
ex:top a skos:Concept
ex:top skos:prefLabel "top"@en
ex:top skos:narrower ex:mid
ex:mid a skos:Concept
ex:mid skos:prefLabel "mid"@en
ex:mid skos:prefLabel "milieu"@fr
ex:mid skos:altLabel "middle"@en
ex:mid skos:hiddenLabel "midd"@en
ex:mid skos:notation "M1"^^ex:code
ex:mid skos:definition "in between"@en
ex:mid skos:scopeNote "use for middles"@en
ex:leaf a skos:Concept
ex:leaf skos:broader ex:mid
ex:leaf skos:broader ex:other
ex:leaf skosxl:prefLabel ex:lbl
ex:lbl a skosxl:Label
ex:lbl skosxl:literalForm "leaf"@en
ex:leaf skosxl:altLabel _:alt
_:alt skosxl:literalForm "foliole"@fr
ex:other a skos:Concept
ex:other skos:prefLabel "other"@en
ex:other skos:topConceptOf ex:s
ex:deep a skos:Concept
ex:deep skos:prefLabel "deep"@en
ex:deep skos:broaderTransitive ex:leaf
ex:deep skos:broaderTransitive ex:mid
ex:old a skos:Concept
ex:old skos:prefLabel "old"@en
ex:old owl:deprecated "true"^^xsd:boolean
ex:old skos:related ex:top
ex:col a skos:OrderedCollection
ex:col skos:prefLabel "a collection"@en
ex:col skos:memberList _:l1
_:l1 rdf:first ex:leaf
_:l1 rdf:rest _:l2
_:l2 rdf:first ex:mid
_:l2 rdf:rest rdf:nil
ex:col skos:member ex:top
ex:bag a skos:Collection
ex:bag skos:member ex:other
`

func TestBuildMapsSKOS(t *testing.T) {
	s := mustBuild(t, richGraph)
	if s.IRI != testPrefixes["ex"]+"s" {
		t.Errorf("scheme IRI = %q", s.IRI)
	}
	if want := []Label{{"en", "Test scheme"}}; !reflect.DeepEqual(s.Title, want) {
		t.Errorf("title = %v, want %v", s.Title, want)
	}
	// Concepts sorted by IRI; collections, labels and schemes are not concepts.
	got := make([]string, len(s.Concepts))
	for i := range s.Concepts {
		got[i] = strings.TrimPrefix(s.Concepts[i].IRI, testPrefixes["ex"])
	}
	if want := []string{"deep", "leaf", "mid", "old", "other", "top"}; !reflect.DeepEqual(got, want) {
		t.Fatalf("concepts = %v, want %v", got, want)
	}
	mid := s.Concepts[idx(t, s, "mid")]
	if want := []Label{{"en", "mid"}, {"fr", "milieu"}}; !reflect.DeepEqual(mid.Pref, want) {
		t.Errorf("mid pref = %v", mid.Pref)
	}
	if !reflect.DeepEqual(mid.Alt, []Label{{"en", "middle"}}) || !reflect.DeepEqual(mid.Hidden, []Label{{"en", "midd"}}) {
		t.Errorf("mid alt/hidden = %v / %v", mid.Alt, mid.Hidden)
	}
	// Notation keeps typed literals (SKOS Reference §6: notations are typed literals).
	if !reflect.DeepEqual(mid.Notation, []string{"M1"}) {
		t.Errorf("notation = %v", mid.Notation)
	}
	if mid.Definition[0].Text != "in between" || mid.ScopeNote[0].Text != "use for middles" {
		t.Errorf("notes = %v / %v", mid.Definition, mid.ScopeNote)
	}
	// SKOS-XL: literalForm of skosxl:prefLabel/altLabel is a prefLabel/altLabel (SKOS Reference Appendix B, S55–S57).
	leaf := s.Concepts[idx(t, s, "leaf")]
	if !reflect.DeepEqual(leaf.Pref, []Label{{"en", "leaf"}}) || !reflect.DeepEqual(leaf.Alt, []Label{{"fr", "foliole"}}) {
		t.Errorf("leaf XL labels = %v / %v", leaf.Pref, leaf.Alt)
	}
	// broader and narrower merged both ways (S25: narrower is the inverse of broader).
	if got := iris(s, leaf.Broader); !reflect.DeepEqual(got, []string{"mid", "other"}) {
		t.Errorf("leaf broader = %v", got)
	}
	if got := iris(s, mid.Broader); !reflect.DeepEqual(got, []string{"top"}) {
		t.Errorf("mid broader (from top's narrower) = %v", got)
	}
	if got := iris(s, mid.Narrower); !reflect.DeepEqual(got, []string{"leaf"}) {
		t.Errorf("mid narrower = %v", got)
	}
	// deep has only broaderTransitive to leaf and mid; mid is reached through leaf, so only leaf stays.
	if got := iris(s, s.Concepts[idx(t, s, "deep")].Broader); !reflect.DeepEqual(got, []string{"leaf"}) {
		t.Errorf("deep broader = %v, want [leaf]", got)
	}
	// Top from hasTopConcept (top) and topConceptOf (other).
	var tops []string
	for i, c := range s.Concepts {
		if c.Top {
			tops = append(tops, iris(s, []int{i})[0])
		}
	}
	if !reflect.DeepEqual(tops, []string{"other", "top"}) {
		t.Errorf("top concepts = %v", tops)
	}
	old := s.Concepts[idx(t, s, "old")]
	if !old.Deprecated || s.Concepts[idx(t, s, "top")].Deprecated {
		t.Errorf("deprecated flags wrong")
	}
	// related is symmetric (S23).
	if got := iris(s, s.Concepts[idx(t, s, "top")].Related); !reflect.DeepEqual(got, []string{"old"}) {
		t.Errorf("top related = %v", got)
	}
	if len(s.Collections) != 2 {
		t.Fatalf("collections = %+v", s.Collections)
	}
	bag, col := s.Collections[0], s.Collections[1]
	ex := testPrefixes["ex"]
	if bag.Ordered || !reflect.DeepEqual(bag.Members, []string{ex + "other"}) {
		t.Errorf("bag = %+v", bag)
	}
	// memberList order first, then skos:member.
	if !col.Ordered || !reflect.DeepEqual(col.Members, []string{ex + "leaf", ex + "mid", ex + "top"}) {
		t.Errorf("ordered collection = %+v", col)
	}
	if !reflect.DeepEqual(col.Labels, []Label{{"en", "a collection"}}) {
		t.Errorf("collection labels = %v", col.Labels)
	}
}

func TestBuildDeduplicates(t *testing.T) {
	s := mustBuild(t, `
ex:a a skos:Concept
ex:a skos:prefLabel "a"@en
ex:a skos:prefLabel "a"@en
ex:b a skos:Concept
ex:b skos:broader ex:a
ex:a skos:narrower ex:b
`)
	a := s.Concepts[idx(t, s, "a")]
	if len(a.Pref) != 1 || len(a.Narrower) != 1 || len(s.Concepts[idx(t, s, "b")].Broader) != 1 {
		t.Errorf("duplicates kept: pref %v narrower %v", a.Pref, a.Narrower)
	}
}

func TestBuildSchemeChoice(t *testing.T) {
	const two = `
ex:s1 a skos:ConceptScheme
ex:s2 a skos:ConceptScheme
ex:a a skos:Concept
ex:a skos:inScheme ex:s1
ex:b a skos:Concept
ex:b skos:topConceptOf ex:s2
ex:c a skos:Concept
ex:c skos:broader ex:a
ex:s1 skos:hasTopConcept ex:d
ex:d a skos:Concept
`
	ts := graph(t, two)
	tests := []struct {
		scheme string
		want   []string
		err    string
	}{
		{"", nil, "2 schemes: https://example.org/t/s1, https://example.org/t/s2"},
		{"https://example.org/t/nope", nil, "not found"},
		// c has no inScheme while others do: it belongs to neither scheme.
		{"https://example.org/t/s1", []string{"a", "d"}, ""},
		{"https://example.org/t/s2", []string{"b"}, ""},
	}
	for _, tt := range tests {
		s, err := build(t, ts, tt.scheme)
		if tt.err != "" {
			if !errors.Is(err, ErrScheme) || !strings.Contains(err.Error(), tt.err) {
				t.Errorf("scheme %q: err = %v, want ErrScheme with %q", tt.scheme, err, tt.err)
			}
			continue
		}
		if err != nil {
			t.Fatalf("scheme %q: %v", tt.scheme, err)
		}
		all := make([]int, len(s.Concepts))
		for i := range all {
			all[i] = i
		}
		if got := iris(s, all); !reflect.DeepEqual(got, tt.want) {
			t.Errorf("scheme %q: concepts %v, want %v", tt.scheme, got, tt.want)
		}
	}

	// No inScheme anywhere: every concept belongs to the one scheme, or to
	// none when there is no scheme at all.
	for _, src := range []string{
		"ex:s a skos:ConceptScheme\nex:a a skos:Concept\nex:b a skos:Concept",
		"ex:a a skos:Concept\nex:b a skos:Concept",
	} {
		s := mustBuild(t, src)
		if len(s.Concepts) != 2 {
			t.Errorf("%q: %d concepts, want 2", src, len(s.Concepts))
		}
	}
}
