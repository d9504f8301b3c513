// Package concepts holds a SKOS concept scheme (W3C SKOS Reference, 2009):
// concepts with labels per language, notes, and a broader/narrower DAG.
//
//	s, err := concepts.Load("vocab.ttl", concepts.LoadOptions{})
//	i, _ := s.Lookup("http://ex.org/c/42")
//	fmt.Println(s.Concepts[i].PrefLabel("en"), s.Depth(i))
//
// Load reads Turtle, N-Triples, N-Quads, RDF/XML or JSON-LD, telling them
// apart by their first bytes (the file extension only breaks ties):
//
//	@prefix skos: <http://www.w3.org/2004/02/skos/core#> .   → Turtle
//	<http://ex.org/c/1> <http://...#prefLabel> "cat"@en .     → N-Triples
//	<?xml version="1.0"?> <rdf:RDF ...>                       → RDF/XML
//	{"@context": ...}                                         → JSON-LD
//
// It keeps only the SKOS facts it needs per subject while the triples
// stream past: skos:prefLabel/altLabel/hiddenLabel and their SKOS-XL forms
// (skosxl:prefLabel → skosxl:Label → skosxl:literalForm), notation,
// definition, scopeNote, broader/narrower merged in both directions (and
// broaderTransitive for concepts with no direct link), topConceptOf/hasTopConcept,
// inScheme, owl:deprecated and collections. Check then
// reports what breaks the SKOS integrity conditions:
//
//	for _, p := range s.Check(concepts.CheckOptions{Langs: []string{"en"}}) {
//		fmt.Println(p.Code, p.Concept, p.Message) // S14 http://ex.org/c/7 2 prefLabels in language "en": ...
//	}
//
// Concepts are addressed by their dense index in Scheme.Concepts; the model
// uses the same index as the concept's topic number. A loaded Scheme is
// safe for concurrent reads; after decoding one, call Reindex first.
package concepts

// Label is a literal with its (lower-case BCP 47) language tag; "" when untagged.
type Label struct {
	Lang string
	Text string
}

// Concept is one skos:Concept of the scheme. Broader and Narrower hold
// indices into Scheme.Concepts, merged from both directions of the links.
type Concept struct {
	IRI        string
	Pref       []Label // skos:prefLabel and skosxl:prefLabel/skosxl:literalForm
	Alt        []Label
	Hidden     []Label
	Notation   []string
	Definition []Label
	ScopeNote  []Label
	Broader    []int
	Narrower   []int
	Top        bool  // skos:topConceptOf / skos:hasTopConcept of this scheme
	Deprecated bool  // owl:deprecated true
	Related    []int // skos:related, both directions merged, sorted
}

// Scheme is one skos:ConceptScheme and its concepts, in a stable order
// (sorted by IRI). Fields are exported so that a model file can store it;
// call Reindex after decoding one.
type Scheme struct {
	IRI         string
	Title       []Label
	Concepts    []Concept
	Collections []Collection
	index       map[string]int // IRI -> index in Concepts, e.g. "http://ex.org/c/42" -> 17

	depth       []int32  // longest broader chain to a root per concept; built by Reindex
	reachesRoot []bool   // some broader chain from the concept ends at a root; built by Reindex
	info        LoadInfo // what Load read; zero for a decoded scheme
	facts       *facts   // raw facts Check needs beyond the fields above; nil when decoded
}

// facts keeps what Load saw that the Scheme's fields do not carry.
type facts struct {
	problems []Problem  // S9, S12, S37, S46 found while loading
	broaderT [][2]int32 // skos:broaderTransitive links between concepts, {narrower, broader}
}

// Collection is a skos:Collection, kept apart from concepts.
type Collection struct {
	IRI     string
	Labels  []Label
	Members []string // member IRIs (concepts or collections)
	Ordered bool     // skos:OrderedCollection: Members is in list order
}

// PrefLabel returns the prefLabel in lang, falling back to an untagged one,
// then any, then the IRI.
func (c *Concept) PrefLabel(lang string) string {
	for _, l := range c.Pref {
		if l.Lang == lang {
			return l.Text
		}
	}
	for _, l := range c.Pref {
		if l.Lang == "" {
			return l.Text
		}
	}
	if len(c.Pref) > 0 {
		return c.Pref[0].Text
	}
	return c.IRI
}

// Reindex rebuilds the IRI lookup table (after decoding a stored Scheme).
func (s *Scheme) Reindex() {
	s.index = make(map[string]int, len(s.Concepts))
	for i := range s.Concepts {
		s.index[s.Concepts[i].IRI] = i
	}
	s.depth = s.computeDepth()
	s.reachesRoot = s.computeReachesRoot()
}

// Lookup returns the index of the concept with this IRI.
func (s *Scheme) Lookup(iri string) (int, bool) {
	if s.index == nil {
		s.Reindex()
	}
	i, ok := s.index[iri]
	return i, ok
}
