package concepts

import (
	"fmt"
	"strings"
	"testing"
)

// clean is a valid two-level scheme every case below starts from.
const clean = `
ex:s a skos:ConceptScheme
ex:s skos:hasTopConcept ex:top
ex:top a skos:Concept
ex:top skos:topConceptOf ex:s
ex:top skos:prefLabel "top"@en
ex:top skos:prefLabel "haut"@fr
ex:a a skos:Concept
ex:a skos:inScheme ex:s
ex:a skos:broader ex:top
ex:a skos:prefLabel "alpha"@en
ex:a skos:prefLabel "alpha"@fr
ex:a skos:altLabel "first"@en
ex:b a skos:Concept
ex:b skos:inScheme ex:s
ex:b skos:broader ex:top
ex:b skos:prefLabel "beta"@en
ex:b skos:prefLabel "bêta"@fr
ex:b skos:related ex:a
`

func TestCheckRules(t *testing.T) {
	tests := []struct {
		name, extra string
		opt         CheckOptions
		code        string // "" = no problem
		concept     string // local name of the concept at fault
		msg         string // part of the message
	}{
		{"clean", "", CheckOptions{}, "", "", ""},
		{"clean with langs", "", CheckOptions{Langs: []string{"en", "fr"}}, "", "", ""},
		// Source: SKOS Reference §4.4, S9 — ConceptScheme disjoint with Concept.
		{"S9 explicit", "ex:a a skos:ConceptScheme", CheckOptions{}, "S9", "a", "both a skos:Concept and a skos:ConceptScheme"},
		// S9 through the range of inScheme (S6): ex:top becomes a scheme.
		{"S9 implied", "ex:b skos:inScheme ex:top", CheckOptions{}, "S9", "top", "ConceptScheme"},
		// Source: SKOS Reference §5.3, S12 — labels are plain literals.
		{"S12 IRI label", "ex:a skos:altLabel ex:b", CheckOptions{}, "S12", "a", "skos:altLabel value <https://example.org/t/b>"},
		{"S12 typed label", `ex:a skos:hiddenLabel "5"^^xsd:integer`, CheckOptions{}, "S12", "a", "not a plain literal"},
		// Source: SKOS Reference §5.4, S13 — pref/alt/hidden pairwise disjoint.
		{"S13 pref=alt", `ex:a skos:altLabel "alpha"@en`, CheckOptions{}, "S13", "a", `"alpha"@en is both prefLabel and altLabel`},
		{"S13 alt=hidden", `ex:a skos:hiddenLabel "first"@en`, CheckOptions{}, "S13", "a", "altLabel and hiddenLabel"},
		{"S13 other language is fine", `ex:a skos:altLabel "alpha"@de`, CheckOptions{}, "", "", ""},
		// Source: SKOS Reference §5.4, S14 — one prefLabel per language tag.
		{"S14", `ex:b skos:prefLabel "bee"@en`, CheckOptions{}, "S14", "b", `2 prefLabels in language "en": "beta", "bee"`},
		// Source: SKOS Reference §8.4, S27 — related disjoint with broaderTransitive.
		{"S27 direct", "ex:a skos:related ex:top", CheckOptions{}, "S27", "a", "<https://example.org/t/top>"},
		{"S27 from the broader side", "ex:top skos:related ex:b", CheckOptions{}, "S27", "b", "<https://example.org/t/top>"},
		{"S27 via broaderTransitive", "ex:c a skos:Concept\nex:c skos:prefLabel \"c\"@en\nex:c skos:broaderTransitive ex:a\nex:c skos:broader ex:b\nex:c skos:related ex:a", CheckOptions{}, "S27", "c", "<https://example.org/t/a>"},
		// Source: SKOS Reference §9.4, S37 — Collection disjoint with Concept and ConceptScheme.
		{"S37", "ex:a a skos:Collection", CheckOptions{}, "S37", "a", "skos:Collection and a skos:Concept"},
		{"S37 via member domain", "ex:s skos:member ex:a", CheckOptions{}, "S37", "s", "skos:ConceptScheme"},
		// Source: SKOS Reference §10.4, S46 — exactMatch disjoint with broadMatch and relatedMatch.
		{"S46 broadMatch", "ex:a skos:exactMatch <http://other.org/x>\nex:a skos:broadMatch <http://other.org/x>", CheckOptions{}, "S46", "a", "skos:broadMatch <http://other.org/x>"},
		{"S46 through symmetry and transitivity", "ex:a skos:exactMatch <http://o.org/x>\n<http://o.org/y> skos:exactMatch <http://o.org/x>\n<http://o.org/y> skos:relatedMatch ex:a", CheckOptions{}, "S46", "http://o.org/y", "skos:relatedMatch"},
		{"closeMatch with broadMatch is fine", "ex:a skos:closeMatch <http://o.org/x>\nex:a skos:broadMatch <http://o.org/x>", CheckOptions{}, "", "", ""},
		// Common practice, no source: the remaining rules are termgrove's.
		{"cycle", "ex:top skos:broader ex:b", CheckOptions{}, "cycle", "b", "broader cycle: https://example.org/t/b → https://example.org/t/top → https://example.org/t/b"},
		{"no prefLabel at all", "ex:c a skos:Concept\nex:c skos:broader ex:a", CheckOptions{}, "no-preflabel", "c", "has no prefLabel"},
		{"no prefLabel in a language", `ex:c a skos:Concept
ex:c skos:broader ex:a
ex:c skos:prefLabel "gamma"@en`, CheckOptions{Langs: []string{"en", "fr"}}, "no-preflabel", "c", `no prefLabel in "fr"`},
		{"orphan", `ex:c a skos:Concept
ex:c skos:prefLabel "gamma"@en`, CheckOptions{}, "orphan", "c", "no broader concept and is not a top concept"},
		{"deprecated is no orphan", `ex:c a skos:Concept
ex:c skos:prefLabel "gamma"@en
ex:c owl:deprecated "true"^^xsd:boolean`, CheckOptions{}, "", "", ""},
		{"shared prefLabel", `ex:c a skos:Concept
ex:c skos:broader ex:b
ex:c skos:prefLabel "Alpha"@en`, CheckOptions{}, "shared-preflabel", "a", `prefLabel "alpha"@en is shared with <https://example.org/t/c>`},
		{"shared prefLabel outside the chosen languages", `ex:c a skos:Concept
ex:c skos:broader ex:b
ex:c skos:prefLabel "alpha"@fr
ex:c skos:prefLabel "gamma"@en`, CheckOptions{Langs: []string{"en"}}, "", "", ""},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			s, err := build(t, graph(t, clean+tt.extra), testPrefixes["ex"]+"s")
			if err != nil {
				t.Fatal(err)
			}
			ps := s.Check(tt.opt)
			if tt.code == "" {
				if len(ps) != 0 {
					t.Fatalf("want no problem, got %v", ps)
				}
				return
			}
			want := tt.concept
			if !strings.Contains(want, ":") {
				want = testPrefixes["ex"] + want
			}
			for _, p := range ps {
				if p.Code == tt.code && p.Concept == want && strings.Contains(p.Message, tt.msg) {
					if p.Section == "" {
						t.Errorf("problem %v names no section", p)
					}
					return
				}
			}
			t.Fatalf("want %s on %s with %q, got %v", tt.code, want, tt.msg, ps)
		})
	}
}

func TestCheckOrderIsStable(t *testing.T) {
	src := clean + "ex:top skos:broader ex:b\nex:x a skos:Concept\nex:y a skos:Concept\nex:a skos:altLabel \"alpha\"@en"
	s := mustBuild(t, src)
	first := fmt.Sprint(s.Check(CheckOptions{}))
	for i := 0; i < 20; i++ {
		if got := fmt.Sprint(mustBuild(t, src).Check(CheckOptions{})); got != first {
			t.Fatalf("Check order changes between runs:\n%s\n%s", first, got)
		}
	}
	ps := s.Check(CheckOptions{})
	for i := 1; i < len(ps); i++ {
		if codeOrder[ps[i-1].Code] > codeOrder[ps[i].Code] {
			t.Errorf("problems not sorted by rule: %v", ps)
		}
	}
}
